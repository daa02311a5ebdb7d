#![no_main]
//! Arbitrary bytes as a .npz file.
mod common;

libfuzzer_sys::fuzz_target!(|data: &[u8]| {
    common::check("input.npz", data, None, embloom::io::ReadOptions::default());
});
