//! Hostile inputs that must be refused or read exactly, without unbounded memory: npz members
//! that inflate past what their header implies, headers claiming 10^12 rows, NULs inside
//! numpy unicode labels. (numpy's .npy format: NEP 1 / numpy.lib.format; the zip format:
//! PKWARE APPNOTE. Expected behaviour otherwise common practice, no source.)

use crate::common;

use std::io::Write;
use std::path::Path;

use common::{embloom, stderr};
use zip::write::SimpleFileOptions;

/// A version-1 .npy image: the header text padded to a multiple of 64, then `data`.
fn npy(descr: &str, shape: &str, data: &[u8]) -> Vec<u8> {
    let mut header = format!("{{'descr': '{descr}', 'fortran_order': False, 'shape': {shape}, }}");
    while (10 + header.len() + 1) % 64 != 0 {
        header.push(' ');
    }
    header.push('\n');
    let mut out = b"\x93NUMPY\x01\x00".to_vec();
    out.extend_from_slice(&(header.len() as u16).to_le_bytes());
    out.extend_from_slice(header.as_bytes());
    out.extend_from_slice(data);
    out
}

fn write_npz(path: &Path, members: &[(&str, Vec<u8>)], deflate: bool) {
    let mut z = zip::ZipWriter::new(std::fs::File::create(path).unwrap());
    let method = if deflate {
        zip::CompressionMethod::Deflated
    } else {
        zip::CompressionMethod::Stored
    };
    let opts = SimpleFileOptions::default()
        .compression_method(method)
        .large_file(true);
    for (name, bytes) in members {
        z.start_file(format!("{name}.npy"), opts).unwrap();
        z.write_all(bytes).unwrap();
    }
    z.finish().unwrap();
}

fn f32_bytes(n: usize) -> Vec<u8> {
    (0..n).flat_map(|i| (i as f32).to_le_bytes()).collect()
}

fn i64_labels(labels: &[i64]) -> Vec<u8> {
    npy(
        "<i8",
        &format!("({},)", labels.len()),
        &labels
            .iter()
            .flat_map(|l| l.to_le_bytes())
            .collect::<Vec<u8>>(),
    )
}

#[test]
fn a_member_inflating_past_its_header_is_refused_before_inflating() {
    let dir = common::tempdir();
    let path = dir.path().join("bomb.npz");
    // Header says 4 × 64 float32 (1,024 bytes); the member inflates to 64 MiB of zeros.
    let mut data = f32_bytes(256);
    data.resize(64 << 20, 0);
    write_npz(
        &path,
        &[
            ("embeddings", npy("<f4", "(4, 64)", &data)),
            ("labels", i64_labels(&[0, 0, 1, 1])),
        ],
        true,
    );
    let o = embloom(&["inspect", path.to_str().unwrap()], &[]);
    assert!(!o.status.success());
    let e = stderr(&o);
    assert!(
        e.contains("decompression bomb") && e.contains("(4, 64)"),
        "{e}"
    );
    assert!(!e.contains("panicked"), "{e}");
}

#[test]
fn a_header_claiming_a_trillion_rows_is_refused() {
    let dir = common::tempdir();
    let path = dir.path().join("huge.npz");
    write_npz(
        &path,
        &[
            (
                "embeddings",
                npy("<f4", "(1000000000000, 64)", &f32_bytes(256)),
            ),
            ("labels", i64_labels(&[0, 0, 1, 1])),
        ],
        false,
    );
    let o = embloom(&["inspect", path.to_str().unwrap()], &[]);
    assert!(!o.status.success());
    let e = stderr(&o);
    assert!(
        e.contains("(1000000000000, 64)") && e.contains("truncated"),
        "{e}"
    );
    assert!(!e.contains("panicked"), "{e}");
}

#[test]
fn nul_inside_a_unicode_label_is_kept() {
    let dir = common::tempdir();
    let path = dir.path().join("nul.npz");
    // '<U3' labels 'x\0a', 'x\0b' (and numpy's trailing padding on 'y').
    let names = ["x\0a", "x\0b", "x\0a", "x\0b", "y"];
    let mut lab = Vec::new();
    for n in names {
        let mut cps: Vec<u32> = n.chars().map(|c| c as u32).collect();
        cps.resize(3, 0);
        lab.extend(cps.iter().flat_map(|c| c.to_le_bytes()));
    }
    write_npz(
        &path,
        &[
            ("embeddings", npy("<f4", "(5, 2)", &f32_bytes(10))),
            ("labels", npy("<U3", "(5,)", &lab)),
        ],
        false,
    );
    let read = embloom::io::read(&path, &embloom::io::ReadOptions::default()).unwrap();
    let mut classes = read.dataset.classes.clone();
    classes.sort();
    assert_eq!(classes, vec!["x\0a", "x\0b", "y"]);
}
