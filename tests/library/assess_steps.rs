//! The assessment as separate (fold, method) steps: the parts of every step, combined in any
//! order, give the results of the whole fold loop (source: `assess_observed` on the same data
//! and configuration; every figure, not only the summary, must match).

use embloom::assess::{
    AssessConfig, InputInfo, RowSets, StepPart, assess_observed, assess_step, combine_steps,
    step_plan,
};
use embloom::augment::MethodKind;

use crate::assess_from_file::{config, dataset};

/// results.json's text without the wall-clock time, the one field that may differ.
fn json_without_time(r: &embloom::assess::AssessResults) -> serde_json::Value {
    let mut v = serde_json::to_value(r).unwrap();
    v.as_object_mut().unwrap().remove("elapsed_seconds");
    v
}

fn steps_config() -> AssessConfig {
    AssessConfig {
        // logit-adjust reads the fold's `none` linear fit: its step must refit `none` alone.
        methods: vec![
            MethodKind::None,
            MethodKind::Interpolate,
            MethodKind::PrincipalNoise,
            MethodKind::LogitAdjust,
        ],
        ..config(3, 2)
    }
}

#[test]
fn steps_combined_in_any_order_equal_the_whole_loop() {
    let ds = dataset();
    let cfg = steps_config();
    let info = InputInfo::in_memory("test", &ds);
    let whole = assess_observed(&ds, &cfg, info.clone(), &mut |_| {}).unwrap();

    let sets = RowSets::files(&[]);
    let plan = step_plan(&ds, &cfg, sets).unwrap();
    assert_eq!((plan.folds, plan.methods.len()), (6, 4));
    // Backwards, through bytes, with one step run twice (as a retried task would be).
    let mut parts: Vec<StepPart> = Vec::new();
    let mut items = plan.items();
    items.reverse();
    items.push(items[3]);
    for item in items {
        let part = assess_step(&ds, &cfg, &info, sets, item).unwrap();
        parts.push(StepPart::from_bytes(&part.to_bytes().unwrap()).unwrap());
    }
    let combined = combine_steps(&ds, &cfg, info, sets, &parts).unwrap();
    assert_eq!(json_without_time(&combined), json_without_time(&whole));
    // The row-level outcomes (not in results.json) feed the intervals: equal too.
    for (a, b) in combined.folds.iter().zip(&whole.folds) {
        assert_eq!(a.outcome.pred, b.outcome.pred);
        assert_eq!(a.outcome.rows, b.outcome.rows);
    }
}

#[test]
fn a_missing_step_is_named() {
    let ds = dataset();
    let cfg = steps_config();
    let info = InputInfo::in_memory("test", &ds);
    let sets = RowSets::files(&[]);
    let plan = step_plan(&ds, &cfg, sets).unwrap();
    let parts: Vec<StepPart> = plan
        .items()
        .into_iter()
        .filter(|i| !(i.fold == 2 && i.method == 1))
        .map(|i| assess_step(&ds, &cfg, &info, sets, i).unwrap())
        .collect();
    let err = combine_steps(&ds, &cfg, info, sets, &parts)
        .unwrap_err()
        .to_string();
    assert!(err.contains("step (fold 2, method 1) has no part"), "{err}");
}
