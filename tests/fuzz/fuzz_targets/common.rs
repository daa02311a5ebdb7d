//! Shared by the fuzz targets: write the input where the reader expects a file, read it, and
//! check the contract (an error naming the file, or a dataset whose parts agree).

use embloom::io::{ReadOptions, read};

/// Reads `bytes` as `name` (its extension picks the format), with an optional labels file.
pub fn check(name: &str, bytes: &[u8], labels: Option<&[u8]>, opts: ReadOptions) {
    thread_local! {
        static DIR: tempfile::TempDir = tempfile::tempdir().expect("a temp dir");
    }
    DIR.with(|dir| {
        let path = dir.path().join(name);
        std::fs::write(&path, bytes).expect("write the input");
        let mut opts = opts;
        if let Some(l) = labels {
            let lp = dir.path().join("labels.npy");
            std::fs::write(&lp, l).expect("write the labels");
            opts.labels_file = Some(lp);
        }
        match read(&path, &opts) {
            Ok(loaded) => {
                let d = loaded.dataset;
                assert_eq!(d.labels.len(), d.n_rows());
                assert!(d.n_rows() > 0 && d.dims() > 0);
                assert!(d.labels.iter().all(|&l| (l as usize) < d.classes.len()));
                assert!(d.x.iter().all(|v| v.is_finite()));
            }
            Err(e) => {
                let msg = e.to_string();
                assert!(msg.contains(name) || msg.contains("labels.npy"), "{msg}");
            }
        }
    });
}

/// Splits one fuzz input in two at a position taken from its first byte.
pub fn split(data: &[u8]) -> (&[u8], &[u8]) {
    match data.split_first() {
        Some((&k, rest)) => {
            let at = (k as usize * rest.len()) / 255;
            rest.split_at(at.min(rest.len()))
        }
        None => (&[], &[]),
    }
}
