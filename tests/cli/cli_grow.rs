//! `embloom grow` end to end: output layout, provenance, determinism, warnings and refusals.

use crate::common;

use common::*;

fn read_csv(path: &std::path::Path) -> (Vec<String>, Vec<Vec<String>>) {
    let text = std::fs::read_to_string(path).expect("output reads");
    let mut lines = text.lines();
    let header = lines
        .next()
        .expect("header")
        .split(',')
        .map(str::to_string)
        .collect();
    (
        header,
        lines
            .map(|l| l.split(',').map(str::to_string).collect())
            .collect(),
    )
}

#[test]
fn real_rows_first_and_bit_identical_then_synthetic_with_provenance() {
    let dir = tempdir();
    let input = p(dir.path(), "in.csv");
    write_csv(&input, &[30, 6, 12], 4, 1);
    let out = p(dir.path(), "out.csv");
    let o = grow_file(
        &input,
        &out,
        &[
            "--method",
            "interpolate",
            "--target",
            "largest",
            "--seed",
            "3",
        ],
    );
    assert!(o.status.success(), "{}", stderr(&o));
    let (_, in_rows) = read_csv(&input);
    let (header, rows) = read_csv(&out);
    // Target largest: 30 + 30 + 30 rows (--target largest brings every class up to the largest class's count).
    assert_eq!(rows.len(), 90);
    let col = |name: &str| {
        header
            .iter()
            .position(|h| h == name)
            .unwrap_or_else(|| panic!("column {name} in {header:?}"))
    };
    let (origin, parent, partner, weight) =
        (col("origin"), col("parent"), col("partner"), col("weight"));
    for (i, r) in in_rows.iter().enumerate() {
        assert_eq!(rows[i][origin], "real");
        assert_eq!(rows[i][parent], i.to_string());
        assert_eq!(rows[i][partner], "-1");
        for j in 0..4 {
            let a: f32 = r[1 + j].parse().unwrap();
            let b: f32 = rows[i][col(&format!("f{j}"))].parse().unwrap();
            assert_eq!(a.to_bits(), b.to_bits(), "real row {i} changed");
        }
    }
    let n_real = in_rows.len();
    assert_eq!(n_real, 48);
    for r in &rows[n_real..] {
        assert_eq!(r[origin], "interpolate");
        let par: usize = r[parent].parse().unwrap();
        let pa: i64 = r[partner].parse().unwrap();
        let u: f32 = r[weight].parse().unwrap();
        assert!(par < n_real && pa >= 0 && (0.0..=1.0).contains(&u));
        // The parent and partner are real rows of the synthetic row's class.
        assert_eq!(rows[par][col("label")], r[col("label")]);
        assert_eq!(rows[pa as usize][col("label")], r[col("label")]);
    }
    assert!(
        stderr(&o).contains("added"),
        "summary on stderr: {}",
        stderr(&o)
    );
}

#[test]
fn same_seed_same_bytes_on_one_and_two_threads() {
    let dir = tempdir();
    let input = p(dir.path(), "in.csv");
    write_csv(&input, &[40, 7, 9, 15], 8, 2);
    let mut outputs = Vec::new();
    for (i, threads) in ["1", "2", "2"].iter().enumerate() {
        for method in [
            "interpolate",
            "extrapolate",
            "principal-noise",
            "gaussian-noise",
        ] {
            let out = p(dir.path(), &format!("out-{method}-{i}.npz"));
            let o = embloom(
                &[
                    "grow",
                    input.to_str().unwrap(),
                    "-o",
                    out.to_str().unwrap(),
                    "--method",
                    method,
                    "--seed",
                    "11",
                ],
                &[("RAYON_NUM_THREADS", threads)],
            );
            assert!(o.status.success(), "{}", stderr(&o));
            outputs.push((method, std::fs::read(&out).unwrap()));
        }
    }
    for m in 0..4 {
        assert_eq!(
            outputs[m].1,
            outputs[4 + m].1,
            "{} differs between 1 and 2 threads",
            outputs[m].0
        );
        assert_eq!(
            outputs[m].1,
            outputs[8 + m].1,
            "{} differs between runs",
            outputs[m].0
        );
    }
}

#[test]
fn existing_output_is_refused_without_force_and_left_intact() {
    let dir = tempdir();
    let input = p(dir.path(), "in.csv");
    write_csv(&input, &[20, 5], 3, 3);
    let out = p(dir.path(), "out.csv");
    std::fs::write(&out, "precious").unwrap();
    let args = [
        "grow",
        input.to_str().unwrap(),
        "-o",
        out.to_str().unwrap(),
        "--method",
        "interpolate",
    ];
    let o = embloom(&args, &[]);
    assert!(!o.status.success());
    assert!(stderr(&o).contains("--force"), "{}", stderr(&o));
    assert_eq!(std::fs::read_to_string(&out).unwrap(), "precious");
    let mut forced = args.to_vec();
    forced.push("--force");
    assert!(embloom(&forced, &[]).status.success());
    assert_ne!(std::fs::read_to_string(&out).unwrap(), "precious");
}

#[test]
fn single_row_class_is_skipped_with_a_warning_or_refused_with_strict() {
    let dir = tempdir();
    let input = p(dir.path(), "in.csv");
    write_csv(&input, &[20, 1, 3], 3, 4);
    let out = p(dir.path(), "out.csv");
    let o = embloom(
        &[
            "grow",
            input.to_str().unwrap(),
            "-o",
            out.to_str().unwrap(),
            "--method",
            "interpolate",
            "--target",
            "20",
        ],
        &[],
    );
    assert!(o.status.success(), "{}", stderr(&o));
    let err = stderr(&o);
    assert!(err.contains("'c1'") && err.contains("--strict"), "{err}");
    // c2 has 3 rows: K = 5 is clamped to 2.
    assert!(err.contains("K = 2"), "{err}");
    let out2 = p(dir.path(), "strict.csv");
    let o = grow_file(&input, &out2, &["--method", "interpolate", "--strict"]);
    assert!(!o.status.success());
    assert!(stderr(&o).contains("c1"), "{}", stderr(&o));
    assert!(!out2.exists());
    assert!(!stderr(&o).contains("panicked"));
}

#[test]
fn classes_option_limits_growth_and_unknown_class_is_named() {
    let dir = tempdir();
    let input = p(dir.path(), "in.csv");
    write_csv(&input, &[20, 5, 6], 3, 5);
    let out = p(dir.path(), "out.csv");
    let o = grow_file(
        &input,
        &out,
        &[
            "--method",
            "extrapolate",
            "--classes",
            "c2",
            "--target",
            "largest",
            "--json",
        ],
    );
    assert!(o.status.success(), "{}", stderr(&o));
    let summary: serde_json::Value = serde_json::from_str(&stdout(&o)).unwrap();
    let classes = summary["classes"].as_array().unwrap();
    let added: Vec<u64> = classes
        .iter()
        .map(|c| c["added"].as_u64().unwrap())
        .collect();
    assert_eq!(added, vec![0, 0, 14]);
    let o = embloom(
        &[
            "grow",
            input.to_str().unwrap(),
            "-o",
            p(dir.path(), "x.csv").to_str().unwrap(),
            "--method",
            "extrapolate",
            "--classes",
            "nope",
        ],
        &[],
    );
    assert!(!o.status.success());
    assert!(
        stderr(&o).contains("nope") && stderr(&o).contains("c0, c1, c2"),
        "{}",
        stderr(&o)
    );
}

#[test]
fn unit_norm_input_gives_unit_norm_synthetic_rows() {
    let dir = tempdir();
    let input = p(dir.path(), "in.csv");
    // Unit-norm rows: (cos t, sin t) on a circle (from memory: cos² + sin² = 1).
    let mut s = String::from("label,f0,f1\n");
    for i in 0..30 {
        let t = i as f32 * 0.05 + if i < 20 { 0.0 } else { 2.0 };
        s += &format!(
            "{},{},{}\n",
            if i < 20 { "a" } else { "b" },
            t.cos(),
            t.sin()
        );
    }
    std::fs::write(&input, s).unwrap();
    let out = p(dir.path(), "out.csv");
    let o = grow_file(
        &input,
        &out,
        &["--method", "extrapolate", "--magnitude", "1.5"],
    );
    assert!(o.status.success(), "{}", stderr(&o));
    assert!(stderr(&o).contains("renormalised"), "{}", stderr(&o));
    let (header, rows) = read_csv(&out);
    let f0 = header.iter().position(|h| h == "f0").unwrap();
    for r in &rows {
        let (a, b): (f32, f32) = (r[f0].parse().unwrap(), r[f0 + 1].parse().unwrap());
        assert!(((a * a + b * b).sqrt() - 1.0).abs() < 1e-5);
    }
}

#[test]
fn kdtree_neighbour_index_gives_same_class_partners() {
    let dir = tempdir();
    let input = p(dir.path(), "in.csv");
    write_csv(&input, &[300, 40], 40, 6);
    let out = p(dir.path(), "out.csv");
    let o = grow_file(
        &input,
        &out,
        &[
            "--method",
            "interpolate",
            "--neighbour-index",
            "kdtree",
            "--target",
            "largest",
        ],
    );
    assert!(o.status.success(), "{}", stderr(&o));
    let (header, rows) = read_csv(&out);
    let col = |name: &str| header.iter().position(|h| h == name).unwrap();
    assert_eq!(rows.len(), 600);
    // Approximate neighbours are still real rows of the same class (the method's definition).
    for r in &rows[340..] {
        let partner: usize = r[col("partner")].parse().unwrap();
        assert!(partner < 340);
        assert_eq!(rows[partner][col("label")], r[col("label")]);
    }
}

#[test]
fn synthetic_rows_carry_no_fold_and_no_group() {
    // A synthetic row mixes a parent with a partner that may sit in another fold or group, so
    // it takes neither (fold -1, empty group); real rows keep theirs. Common practice, no source.
    let dir = tempdir();
    let input = p(dir.path(), "in.csv");
    let mut text = String::from("label,group,fold,f0,f1\n");
    for i in 0..12 {
        let label = if i < 8 { "a" } else { "b" };
        text.push_str(&format!(
            "{label},g{},{},{}.5,{}\n",
            i % 3,
            i % 2,
            i,
            12 - i
        ));
    }
    std::fs::write(&input, text).unwrap();
    let out = p(dir.path(), "out.csv");
    let o = grow_file(&input, &out, &["--method", "interpolate", "--seed", "1"]);
    assert!(o.status.success(), "{}", stderr(&o));
    let (header, rows) = read_csv(&out);
    let col = |name: &str| header.iter().position(|h| h == name).unwrap();
    let (origin, group, fold) = (col("origin"), col("group"), col("fold"));
    assert!(rows.len() > 12);
    for (i, r) in rows.iter().enumerate() {
        if i < 12 {
            assert_eq!(r[origin], "real");
            assert_eq!(r[fold], (i % 2).to_string());
            assert_eq!(r[group], format!("g{}", i % 3));
        } else {
            assert_ne!(r[origin], "real");
            assert_eq!(r[fold], "-1", "row {i}");
            // An empty field, written bare (RFC 4180 reads bare and quoted empty fields alike).
            assert_eq!(r[group], "", "row {i}");
        }
    }
    // The export reads back (an empty group is allowed on an export's synthetic rows).
    let o = embloom(&["inspect", out.to_str().unwrap()], &[]);
    assert!(o.status.success(), "{}", stderr(&o));
}

#[test]
fn assessing_a_grown_file_uses_only_its_real_rows() {
    // Synthetic rows are not observations: a grown file assessed with `--methods none` must
    // give the baseline of its real rows alone (common practice, no source); its synthetic
    // rows come back only as a method of their own, never as data.
    let dir = tempdir();
    let input = p(dir.path(), "in.csv");
    write_csv(&input, &[30, 6, 12], 4, 1);
    for ext in ["csv", "npz", "safetensors"] {
        let grown = p(dir.path(), &format!("grown.{ext}"));
        let o = grow_file(
            &input,
            &grown,
            &["--method", "interpolate", "--target", "largest"],
        );
        assert!(o.status.success(), "{}", stderr(&o));
        let assessed = |f: &std::path::Path| {
            let o = assess_file(
                f,
                &[
                    "--methods",
                    "none",
                    "--probes",
                    "knn",
                    "--folds",
                    "3",
                    "--no-diagnostics",
                    "--json",
                ],
            );
            assert!(o.status.success(), "{}", stderr(&o));
            let v: serde_json::Value = serde_json::from_str(&stdout(&o)).unwrap();
            let none: Vec<serde_json::Value> = v["summary"]
                .as_array()
                .unwrap()
                .iter()
                // Grown-class recall is over the classes some method grew: none for the
                // plain file, the file's classes for the grown one.
                .filter(|r| r["method"] == "none" && r["metric"] != "grown_class_recall")
                .cloned()
                .collect();
            (none, v["methods"].clone(), v["warnings"].to_string())
        };
        let (base, _, _) = assessed(&input);
        let (from_grown, methods, warnings) = assessed(&grown);
        assert!(!base.is_empty());
        assert_eq!(base, from_grown, "{ext}");
        assert_eq!(
            methods,
            serde_json::json!(["none", "interpolate (from file)"]),
            "{ext}"
        );
        assert!(
            warnings.contains("the input is a grown file"),
            "{ext}: {warnings}"
        );
    }
}
