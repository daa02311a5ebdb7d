//! The shipped demo file is exactly what the generator makes (invented data; see data/README.md).

use embloom::io::{self, ReadOptions};

#[test]
fn shipped_demo_file_is_the_generators_output() {
    let dir = tempfile::tempdir().unwrap();
    let fresh = dir.path().join("street-signs.npz");
    io::write(&fresh, &embloom::demo::demo_set(), false).unwrap();
    let shipped = std::path::Path::new(env!("CARGO_MANIFEST_DIR")).join("data/street-signs.npz");
    assert_eq!(
        std::fs::read(&fresh).unwrap(),
        std::fs::read(&shipped).unwrap(),
        "data/street-signs.npz is stale: regenerate it with `cargo run --release -- demo` and copy street-signs.npz"
    );
    let ds = io::read(&shipped, &ReadOptions::default()).unwrap().dataset;
    // The invented counts of data/README.md.
    assert_eq!(ds.n_rows(), 1280);
    assert_eq!(ds.dims(), 256);
    assert!(ds.groups.is_some());
}
