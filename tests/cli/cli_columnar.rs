//! Parquet and Arrow outputs and inputs through the binary. With the `columnar` feature a
//! grown table holds the same rows whatever the output format; without it, the formats are
//! refused with the rebuild to make.

use crate::common::{embloom, p, stderr, tempdir, write_csv};

#[cfg(feature = "columnar")]
#[test]
fn grow_writes_and_reads_parquet_and_arrow() {
    use embloom::io::{ReadOptions, read};
    let dir = tempdir();
    let d = dir.path();
    let csv = p(d, "in.csv");
    write_csv(&csv, &[30, 8, 5], 6, 11);
    let grow = |input: &str, output: &str| {
        let o = embloom(
            &[
                "grow",
                input,
                "--method",
                "interpolate",
                "--target",
                "largest",
                "--seed",
                "4",
                "-o",
                output,
            ],
            &[],
        );
        assert!(o.status.success(), "{}", stderr(&o));
    };
    let (pq, npz, arrow) = (p(d, "out.parquet"), p(d, "out.npz"), p(d, "again.arrow"));
    grow(csv.to_str().unwrap(), pq.to_str().unwrap());
    grow(csv.to_str().unwrap(), npz.to_str().unwrap());
    // Common practice, no source: the format changes how rows are stored, never which rows.
    let a = read(&pq, &ReadOptions::default()).unwrap();
    let b = read(&npz, &ReadOptions::default()).unwrap();
    assert_eq!(a.dataset.x, b.dataset.x);
    assert_eq!(a.dataset.labels, b.dataset.labels);
    assert_eq!(a.origin, b.origin);
    assert_eq!(a.parent, b.parent);
    assert_eq!(a.partner, b.partner);
    assert_eq!(a.dataset.n_rows(), 90);
    // A grown Parquet file is an input like any other (its provenance is not a feature).
    grow(pq.to_str().unwrap(), arrow.to_str().unwrap());
    let c = read(&arrow, &ReadOptions::default()).unwrap();
    assert_eq!(c.dataset.dims(), 6);
    assert_eq!(c.dataset.n_rows(), 90);
    let o = embloom(&["inspect", "--json", pq.to_str().unwrap()], &[]);
    assert!(o.status.success(), "{}", stderr(&o));
}

#[cfg(not(feature = "columnar"))]
#[test]
fn columnar_formats_need_the_feature() {
    let dir = tempdir();
    let d = dir.path();
    let csv = p(d, "in.csv");
    write_csv(&csv, &[10, 5], 3, 2);
    let pq = p(d, "in.parquet");
    std::fs::write(&pq, b"PAR1").unwrap();
    let o = embloom(&["inspect", pq.to_str().unwrap()], &[]);
    assert!(!o.status.success());
    let e = stderr(&o);
    assert!(
        e.contains("no Parquet or Arrow support") && e.contains("--features columnar"),
        "{e}"
    );
    let out = p(d, "out.arrow");
    let o = embloom(
        &[
            "grow",
            csv.to_str().unwrap(),
            "--method",
            "duplicate",
            "-o",
            out.to_str().unwrap(),
        ],
        &[],
    );
    assert!(!o.status.success());
    assert!(stderr(&o).contains("--features columnar"), "{}", stderr(&o));
    assert!(!out.exists());
}
