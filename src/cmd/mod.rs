//! One function per command; the binary parses arguments into these options and calls them.

pub mod assess;
pub mod demo;
pub mod grow;
pub mod inspect;
pub mod options;
pub mod sweep;
