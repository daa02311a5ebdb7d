//! One function per command; the binary parses arguments into these options and calls them.
