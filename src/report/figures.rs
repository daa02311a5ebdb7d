//! How a figure reads as text, and which method × probe rows a report shows. Shared by the
//! terminal table and the HTML page so both put the same numbers in the same order.

use crate::assess::MethodId;
use crate::assess::results::{AssessResults, ClassRow, SummaryRow};
use crate::eval::Metric;
use crate::probe::ProbeKind;

pub use crate::rounding::{MISSING, signed, value};

/// Shown where a method does not apply to a probe (logit-adjust with k-NN): nothing was
/// measured, which is not the same as a figure that could not be computed (`n/a`).
pub const NOT_APPLICABLE: &str = "—";

/// One summary cell: `mean (Δ +d.ddd [lo, hi])`, only the mean for the baseline, `n/a` when
/// the assessment produced no row, `—` when the method does not apply to the probe.
pub fn summary_cell(row: Option<&SummaryRow>) -> String {
    match row {
        None => MISSING.to_string(),
        Some(s) if !s.applies => NOT_APPLICABLE.to_string(),
        Some(s) if s.method.is_baseline() => value(s.mean),
        Some(s) if s.delta_mean.is_finite() && s.no_interval.is_some() => format!(
            "{} (Δ {} {})",
            value(s.mean),
            signed(s.delta_mean),
            s.no_interval.as_deref().unwrap_or_default()
        ),
        Some(s) => interval_cell(s.mean, s.delta_mean, s.delta_ci_low, s.delta_ci_high),
    }
}

/// `mean (Δ +d.ddd [lo, hi])`, or `mean (Δ n/a)` when there is no difference to show.
pub fn interval_cell(mean: f64, delta: f64, low: f64, high: f64) -> String {
    if delta.is_finite() {
        format!(
            "{} (Δ {} [{}, {}])",
            value(mean),
            signed(delta),
            signed(low),
            signed(high)
        )
    } else {
        format!("{} (Δ {MISSING})", value(mean))
    }
}

/// The summary row for one method, probe and metric, if the assessment produced it.
pub fn find_summary<'a>(
    r: &'a AssessResults,
    method: &MethodId,
    probe: ProbeKind,
    metric: Metric,
) -> Option<&'a SummaryRow> {
    r.summary
        .iter()
        .find(|s| s.method == *method && s.probe == probe && s.metric == metric)
}

/// A method × probe combination as the report lists it.
#[derive(Debug, Clone, PartialEq, Eq)]
pub struct Pair {
    pub method: MethodId,
    pub probe: ProbeKind,
}

impl Pair {
    pub fn is_baseline(&self) -> bool {
        self.method.is_baseline()
    }
}

/// Every method × probe to show, probe by probe (so each block shares one baseline), methods in
/// the order they were run; then any combination that appears only in the rows, so nothing the
/// assessment measured is silently dropped.
pub fn pairs(r: &AssessResults) -> Vec<Pair> {
    let mut out: Vec<Pair> = Vec::new();
    let mut push = |method: &MethodId, probe: ProbeKind| {
        if !out.iter().any(|p| p.method == *method && p.probe == probe) {
            out.push(Pair {
                method: method.clone(),
                probe,
            });
        }
    };
    for &probe in &r.probes {
        for method in &r.methods {
            push(method, probe);
        }
    }
    for s in &r.summary {
        push(&s.method, s.probe);
    }
    for c in &r.per_class {
        push(&c.method, c.probe);
    }
    out
}

/// The pairs that have a delta to show (everything except the baseline).
pub fn compared_pairs(r: &AssessResults) -> Vec<Pair> {
    pairs(r).into_iter().filter(|p| !p.is_baseline()).collect()
}

/// The class names, largest class first (by real rows in the input; ties in data order), so
/// every table and the heatmap read from the well-measured classes down to the rare ones;
/// then any class named only in the per-class or diagnostic rows.
pub fn class_names(r: &AssessResults) -> Vec<String> {
    let mut order: Vec<usize> = (0..r.input.classes.len()).collect();
    let size = |i: usize| r.input.class_counts.get(i).copied().unwrap_or(0);
    order.sort_by(|&a, &b| size(b).cmp(&size(a)).then(a.cmp(&b)));
    let mut out: Vec<String> = order.iter().map(|&i| r.input.classes[i].clone()).collect();
    for name in r
        .per_class
        .iter()
        .map(|c| &c.class)
        .chain(r.diagnostics.iter().map(|d| &d.class))
    {
        if !out.contains(name) {
            out.push(name.clone());
        }
    }
    out
}

/// Position of each class in [`class_names`]' order, for sorting rows that name a class.
pub fn class_rank(r: &AssessResults) -> impl Fn(&str) -> usize {
    let rank: std::collections::HashMap<String, usize> = class_names(r)
        .into_iter()
        .enumerate()
        .map(|(i, n)| (n, i))
        .collect();
    move |c: &str| rank.get(c).copied().unwrap_or(usize::MAX)
}

/// Per-class rows by (class, method name, probe), for tables and charts that look up many.
pub type ClassRows<'a> = std::collections::HashMap<(&'a str, String, ProbeKind), &'a ClassRow>;

/// Index the per-class rows of `r` (see [`ClassRows`]).
pub fn class_rows(r: &AssessResults) -> ClassRows<'_> {
    r.per_class
        .iter()
        .map(|c| ((c.class.as_str(), c.method.name().into_owned(), c.probe), c))
        .collect()
}

/// Real rows of a class in the input, when the input names it.
pub fn class_size(r: &AssessResults, class: &str) -> Option<usize> {
    let i = r.input.classes.iter().position(|c| c == class)?;
    r.input.class_counts.get(i).copied()
}

/// A p-value as the tables print it: three decimals, `< 0.001` below that, `n/a` when there
/// is no interval.
pub fn p_label(p: f64) -> String {
    if !p.is_finite() {
        format!("p {MISSING}")
    } else if p < 0.001 {
        "p < 0.001".to_string()
    } else {
        format!("p = {p:.3}")
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn rounding_never_prints_negative_zero() {
        // Three-decimal fixed notation with an explicit sign (common practice, no source).
        assert_eq!(signed(-0.0001), "+0.000");
        assert_eq!(signed(-0.0), "+0.000");
        assert_eq!(signed(0.0346), "+0.035");
        assert_eq!(signed(-0.0124), "-0.012");
        assert_eq!(value(0.81249), "0.812");
        assert_eq!(value(f64::NAN), "n/a");
        assert_eq!(signed(f64::INFINITY), "n/a");
    }
}
