//! `mix` (mixup with soft labels, Zhang et al. 2018) and borderline's `--danger-neighbours`
//! through the binary: grow writes the partner label, assess and sweep run, a grown file with
//! mix rows is refused by assess, outputs repeat on any thread count.

use crate::common;

use common::*;

fn run(args: &[&str], threads: &str) -> std::process::Output {
    let mut argv = vec!["--threads", threads];
    argv.extend_from_slice(args);
    embloom(&argv, &[("RAYON_NUM_THREADS", threads)])
}

#[test]
fn grow_with_mix_writes_partner_labels_the_same_on_any_thread_count() {
    let dir = tempdir();
    let input = p(dir.path(), "in.csv");
    write_csv(&input, &[20, 6, 8], 4, 2);
    let f = input.to_str().unwrap();
    for ext in ["csv", "npz"] {
        let one = p(dir.path(), &format!("one.{ext}"));
        let two = p(dir.path(), &format!("two.{ext}"));
        for (out, threads) in [(&one, "1"), (&two, "2")] {
            let o = run(
                &[
                    "grow",
                    f,
                    "-o",
                    out.to_str().unwrap(),
                    "--method",
                    "mix",
                    "--seed",
                    "4",
                    "--quiet",
                ],
                threads,
            );
            assert!(o.status.success(), "{}", stderr(&o));
        }
        // Common practice, no source: the same seed gives the same bytes on 1 and 2 threads.
        assert_eq!(
            std::fs::read(&one).unwrap(),
            std::fs::read(&two).unwrap(),
            "{ext}"
        );
        // The grown file reads back (the partner label is provenance, not a feature).
        let o = embloom(&["inspect", one.to_str().unwrap(), "--json"], &[]);
        assert!(o.status.success(), "{ext}: {}", stderr(&o));
        // assess refuses its mix rows, naming them.
        let o = assess_file(&one, &["--quiet"]);
        assert!(!o.status.success(), "{ext}");
        assert!(stderr(&o).contains("mix rows"), "{ext}: {}", stderr(&o));
    }
    // In the table: the partner label is the class of the partner row and differs from the
    // row's own label; the weight (λ) is in [½, 1].
    let text = std::fs::read_to_string(p(dir.path(), "one.csv")).unwrap();
    let mut lines = text.lines();
    let header: Vec<&str> = lines.next().unwrap().split(',').collect();
    let col = |name: &str| header.iter().position(|h| *h == name).unwrap();
    let (label, origin, partner, weight, plabel) = (
        col("label"),
        col("origin"),
        col("partner"),
        col("weight"),
        col("partner_label"),
    );
    let rows: Vec<Vec<&str>> = lines.map(|l| l.split(',').collect()).collect();
    let mixed: Vec<&Vec<&str>> = rows.iter().filter(|r| r[origin] == "mix").collect();
    // Median target 8: class c1 grows by 2 rows.
    assert_eq!(mixed.len(), 2, "{text}");
    for r in mixed {
        let j: usize = r[partner].parse().unwrap();
        assert_eq!(r[plabel], rows[j][label]);
        assert_ne!(r[plabel], r[label]);
        let w: f32 = r[weight].parse().unwrap();
        assert!((0.5..=1.0).contains(&w), "{w}");
    }
    assert!(
        rows.iter()
            .filter(|r| r[origin] == "real")
            .all(|r| r[plabel].is_empty())
    );
}

#[test]
fn assess_and_sweep_run_mix_and_borderline_m() {
    let dir = tempdir();
    let input = p(dir.path(), "in.csv");
    write_csv(&input, &[40, 30, 6, 8], 5, 4);
    let f = input.to_str().unwrap();
    let common = ["--folds", "3", "--seed", "1", "--json", "--quiet"];
    let mut args = vec![
        "assess",
        f,
        "--methods",
        "mix,borderline",
        "--probes",
        "knn,linear,centroid",
        "--danger-neighbours",
        "6",
    ];
    args.extend(common);
    let v = run_json(&args);
    assert_finite_summary(&v, "mix");
    assert_eq!(v["config"]["augment"]["danger_neighbours"], 6);
    for (method, knob, values) in [
        ("mix", "magnitude", "0.2,1"),
        ("borderline", "danger-neighbours", "4,10"),
    ] {
        let mut args = vec![
            "sweep", f, "--method", method, "--knob", knob, "--values", values,
        ];
        args.extend(common);
        let s = run_json(&args);
        assert!(s["points"].as_array().unwrap().len() >= 2, "{knob}");
    }
    // Bad values are refused by their flags.
    let out = p(dir.path(), "out.csv");
    let o = embloom(
        &[
            "grow",
            f,
            "-o",
            out.to_str().unwrap(),
            "--method",
            "borderline",
            "--danger-neighbours",
            "0",
        ],
        &[],
    );
    assert!(
        stderr(&o).contains("invalid --danger-neighbours"),
        "{}",
        stderr(&o)
    );
    let o = embloom(
        &[
            "grow",
            f,
            "-o",
            out.to_str().unwrap(),
            "--method",
            "mix",
            "--magnitude",
            "0",
        ],
        &[],
    );
    assert!(stderr(&o).contains("invalid --magnitude"), "{}", stderr(&o));
}
