#![no_main]
//! Arbitrary bytes split into a .npy embeddings file and its .npy labels file.
mod common;

libfuzzer_sys::fuzz_target!(|data: &[u8]| {
    let (x, labels) = common::split(data);
    common::check(
        "input.npy",
        x,
        Some(labels),
        embloom::io::ReadOptions::default(),
    );
});
