#![no_main]
//! Arbitrary bytes as a .safetensors file.
mod common;

libfuzzer_sys::fuzz_target!(|data: &[u8]| {
    common::check(
        "input.safetensors",
        data,
        None,
        embloom::io::ReadOptions::default(),
    );
});
