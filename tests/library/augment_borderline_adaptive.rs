//! `borderline` and `adaptive` against numpy transcriptions of their papers' rules
//! (tests/reference/borderline_adaptive.py: Borderline-SMOTE1's danger set, Han, Wang & Mao
//! 2005; ADASYN's shares gᵢ = rᵢ/Σr·G, He, Bai, Garcia & Li 2008) on scikit-learn's wine set,
//! standardised, as float32.

use std::collections::BTreeSet;
use std::path::Path;

use embloom::Dataset;
use embloom::augment::{AugmentParams, FitNote, MethodKind, Plan, build, grow};
use serde_json::Value;

use crate::common::json_matrix;

fn fixture() -> Value {
    let path = Path::new(env!("CARGO_MANIFEST_DIR"))
        .join("tests/fixtures/augment/borderline_adaptive.json");
    serde_json::from_str(&std::fs::read_to_string(path).unwrap()).unwrap()
}

fn ints(v: &Value) -> Vec<usize> {
    v.as_array()
        .unwrap()
        .iter()
        .map(|i| i.as_u64().unwrap() as usize)
        .collect()
}

fn floats(v: &Value) -> Vec<f64> {
    v.as_array()
        .unwrap()
        .iter()
        .map(|x| x.as_f64().unwrap())
        .collect()
}

fn wine(fx: &Value) -> Dataset {
    let x = json_matrix(&fx["x"]);
    let y: Vec<u32> = ints(&fx["y"]).into_iter().map(|c| c as u32).collect();
    let n = fx["classes"].as_u64().unwrap() as usize;
    Dataset::new(x, y, (0..n).map(|c| format!("class{c}")).collect())
}

fn plan_for_class(classes: usize, class: usize, n: usize) -> Plan {
    let mut add = vec![0; classes];
    add[class] = n;
    Plan { add }
}

#[test]
fn borderline_bases_are_the_papers_danger_set() {
    // Reference: tests/reference/borderline_adaptive.py (Borderline-SMOTE1, steps 1-3: a row
    // is in danger when m/2 ≤ m′ < m of its m nearest training rows are of other classes),
    // for m = 10 and 6 and every class. Bases are drawn uniformly among the danger rows, so
    // 3000 rows reach every one of them (a base missing has probability below 1e-10).
    let fx = fixture();
    let ds = wine(&fx);
    for case in fx["borderline"].as_array().unwrap() {
        let m = case["m"].as_u64().unwrap() as usize;
        let class = case["class"].as_u64().unwrap() as usize;
        let rows: BTreeSet<usize> = ints(&case["rows"]).into_iter().collect();
        let danger: BTreeSet<usize> = ints(&case["danger"]).into_iter().collect();
        let fragile: BTreeSet<usize> = ints(&case["fragile"]).into_iter().collect();
        let method = build(
            MethodKind::Borderline,
            &AugmentParams {
                danger_neighbours: m,
                ..AugmentParams::default()
            },
        )
        .unwrap();
        let plan = plan_for_class(ds.n_classes(), class, 3000);
        let g = grow(&ds, method.as_ref(), &plan, false, 1, &[m as u64]).unwrap();
        let bases: BTreeSet<usize> = g.provenance.iter().map(|p| p.parent).collect();
        let settled =
            |s: &BTreeSet<usize>| -> BTreeSet<usize> { s.difference(&fragile).copied().collect() };
        if danger.is_empty() {
            // No row in danger: every row is a base, with a note (the documented fallback).
            assert_eq!(bases, rows, "m = {m}, class {class}");
            assert!(
                g.notes
                    .iter()
                    .any(|n| matches!(n, FitNote::Adjusted { .. })),
                "m = {m}, class {class}: no note"
            );
        } else {
            assert_eq!(settled(&bases), settled(&danger), "m = {m}, class {class}");
        }
    }
}

#[test]
fn adaptive_counts_are_the_papers_shares_made_whole() {
    // Reference: tests/reference/borderline_adaptive.py (ADASYN, steps (a)-(d): rᵢ = Δᵢ/K,
    // gᵢ = rᵢ/Σr·G with G = 50), for K = 5 and 3 and every class. embloom makes each share
    // whole by the largest-remainder rule, so a row's count is ⌊gᵢ⌋ or ⌈gᵢ⌉ and the counts
    // sum to G; recomputed here from the reference gᵢ, the counts match exactly.
    let fx = fixture();
    let ds = wine(&fx);
    for case in fx["adaptive"].as_array().unwrap() {
        let k = case["k"].as_u64().unwrap() as usize;
        let class = case["class"].as_u64().unwrap() as usize;
        let total = case["g_total"].as_u64().unwrap() as usize;
        let rows = ints(&case["rows"]);
        let r = floats(&case["r"]);
        assert!(case["fragile"].as_array().unwrap().is_empty());
        let method = build(
            MethodKind::Adaptive,
            &AugmentParams {
                neighbours: k,
                ..AugmentParams::default()
            },
        )
        .unwrap();
        let plan = plan_for_class(ds.n_classes(), class, total);
        let g = grow(&ds, method.as_ref(), &plan, false, 1, &[k as u64]).unwrap();
        let mut counts = vec![0usize; rows.len()];
        for p in &g.provenance {
            let at = rows.binary_search(&p.parent).expect("a base of the class");
            counts[at] += 1;
        }
        assert_eq!(counts.iter().sum::<usize>(), total);
        if r.iter().all(|&v| v == 0.0) {
            // No row near another class: the shares are 0/0, so every row is a base drawn
            // uniformly, as in interpolate, with a note (the documented fallback).
            assert!(
                g.notes
                    .iter()
                    .any(|n| matches!(n, FitNote::Adjusted { .. })),
                "K = {k}, class {class}: no note"
            );
            continue;
        }
        let shares = case["g"]
            .as_array()
            .unwrap()
            .iter()
            .map(|v| v.as_f64().unwrap())
            .collect::<Vec<_>>();
        for (i, (&c, &s)) in counts.iter().zip(&shares).enumerate() {
            assert!(
                c == s.floor() as usize || c == s.ceil() as usize,
                "K = {k}, class {class}, row {}: {c} rows for a share of {s}",
                rows[i]
            );
        }
        // Largest remainder, ties to the earlier row.
        let mut whole: Vec<usize> = shares.iter().map(|s| s.floor() as usize).collect();
        let left = total - whole.iter().sum::<usize>();
        let mut order: Vec<usize> = (0..shares.len()).collect();
        order.sort_by(|&a, &b| {
            let (fa, fb) = (shares[a] - shares[a].floor(), shares[b] - shares[b].floor());
            fb.total_cmp(&fa).then(a.cmp(&b))
        });
        for &i in &order[..left] {
            whole[i] += 1;
        }
        assert_eq!(counts, whole, "K = {k}, class {class}");
    }
}
