//! The shipped demo files are exactly what the generator makes (invented data; see
//! data/README.md).

use embloom::io::{self, ReadOptions};

fn shipped(name: &str) -> std::path::PathBuf {
    std::path::Path::new(env!("CARGO_MANIFEST_DIR"))
        .join("data")
        .join(name)
}

fn assert_same_bytes(fresh: &std::path::Path, name: &str) {
    assert_eq!(
        std::fs::read(fresh).unwrap(),
        std::fs::read(shipped(name)).unwrap(),
        "data/{name} is stale: regenerate it with `cargo run --release -- demo` and copy {name}"
    );
}

#[test]
fn shipped_demo_file_is_the_generators_output() {
    let dir = tempfile::tempdir().unwrap();
    let fresh = dir.path().join("street-signs.npz");
    io::write(&fresh, &embloom::demo::demo_set(), false).unwrap();
    assert_same_bytes(&fresh, "street-signs.npz");
    let ds = io::read(&shipped("street-signs.npz"), &ReadOptions::default())
        .unwrap()
        .dataset;
    // The invented counts of data/README.md.
    assert_eq!(ds.n_rows(), 1280);
    assert_eq!(ds.dims(), 256);
    assert!(ds.groups.is_some());
}

#[test]
fn shipped_input_space_sets_are_the_generators_output_and_read_as_external_sets() {
    let dir = tempfile::tempdir().unwrap();
    let real = io::read(&shipped("street-signs.npz"), &ReadOptions::default())
        .unwrap()
        .dataset;
    // The invented sizes of data/README.md: 700 mirrored crops, 8 jittered copies of each
    // of the 40 rare crops.
    for ((name, file, set), rows) in embloom::demo::demo_input_space_sets()
        .into_iter()
        .zip([700, 320])
    {
        let fresh = dir.path().join(file);
        set.write(&fresh, false).unwrap();
        assert_same_bytes(&fresh, file);
        let (read, info) =
            embloom::assess::read_external(name, &shipped(file), &ReadOptions::default(), &real)
                .unwrap();
        assert_eq!((read.n_rows(), info.rows), (rows, rows));
    }
}
