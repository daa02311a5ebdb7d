#![no_main]
//! Arbitrary bytes as an .h5 file (build with --features hdf5). libhdf5 itself is known to
//! crash on some corrupt files; such crashes are the C library's, not embloom's.
mod common;

libfuzzer_sys::fuzz_target!(|data: &[u8]| {
    let opts = embloom::io::ReadOptions {
        embeddings_key: "feats/emb".into(),
        labels_key: "meta/labels".into(),
        ..Default::default()
    };
    common::check("input.h5", data, None, opts);
});
