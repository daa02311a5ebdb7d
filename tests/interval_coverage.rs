//! A statistical test of the default interval: a small version of the coverage study of
//! `cargo bench --bench intervals` (the model and the truth are in tests/bench/intervals_sim.rs).
//!
//! Asserted per world (150 data sets, 5 folds): the default (`corrected-t`) covers at least
//! 88% and `cv-clt-folds` at least 82% with a width ratio at most 1.5. False-failure rate: in
//! the full study the default covers 95–100% and cv-clt-folds 89–97% in these worlds, so the
//! binomial chance of falling below the floors is under 1e-4 each (3.6 or more standard
//! deviations); the width ratio's relative standard error over 150 data sets is about 6%, so
//! a measured 1.1 exceeds 1.5 with chance below 1e-6. Together: below 1 in 2,000 runs fail by
//! chance. The Monte Carlo truth's standard error (under 0.003) is small against the widths.

#[path = "bench/intervals_sim.rs"]
mod sim;

use embloom::eval::IntervalKind;

#[test]
fn default_interval_covers_the_truth() {
    let default = IntervalKind::default();
    for w in sim::worlds().into_iter().take(2) {
        let truth = sim::truth(&w, 5, 80, 500, 11);
        let tallies = sim::run(&w, truth, 150, 5, 1, 29);
        let t = tallies.iter().find(|t| t.kind == default).unwrap();
        let (lo, hi) = t.coverage_interval();
        assert!(
            t.coverage() >= 0.88,
            "{} {default}: coverage {:.3} [{lo:.3}, {hi:.3}] of truth {:+.4}",
            w.name,
            t.coverage(),
            truth.delta
        );
        let t = tallies
            .iter()
            .find(|t| t.kind == IntervalKind::CvCltFolds)
            .unwrap();
        assert!(
            t.coverage() >= 0.82,
            "{} cv-clt-folds: coverage {:.3} of truth {:+.4}",
            w.name,
            t.coverage(),
            truth.delta
        );
        assert!(
            t.width_ratio() <= 1.5,
            "{} cv-clt-folds: width ratio {:.2}",
            w.name,
            t.width_ratio()
        );
        // Deterministic, not statistical: no zero-width interval, no p of 0, ever.
        for t in &tallies {
            assert_eq!(t.degenerate_printed, 0, "{} {}", w.name, t.kind);
        }
    }
}
