#![no_main]
//! Arbitrary bytes as a .csv file and as a .tsv file.
mod common;

libfuzzer_sys::fuzz_target!(|data: &[u8]| {
    common::check("input.csv", data, None, embloom::io::ReadOptions::default());
    common::check("input.tsv", data, None, embloom::io::ReadOptions::default());
});
