//! The CSV tables written beside the HTML report, for spreadsheets, pandas and R.
//!
//! Conventions, the same in every file:
//! - one header row, then one row per record; fields separated by `,`, lines ended by `\n`;
//! - fields are quoted by the `csv` crate, as the data export is (RFC 4180: `"…"` with inner
//!   quotes doubled, when a field holds a comma, a quote or a line break), so there is one
//!   quoting rule for every CSV embloom writes;
//! - numbers use Rust's shortest round-trip `Display` for f64 (e.g. `0.1`, `0.8125`), so no
//!   digits are lost; infinities are written `inf` / `-inf`;
//! - NaN (a figure that could not be computed, e.g. the recall of a class with no test rows
//!   in a fold) is written as an **empty field**, which pandas and R both read as missing;
//! - booleans are `true` / `false`; an absent optional value is an empty field;
//! - a text cell that a spreadsheet would run as a formula (it starts with `=`, `+`, `-`,
//!   `@`, a tab or a carriage return) gets a leading `'`, the usual defence against formula
//!   injection: a class name from someone else's file must not run when the report is opened.
//!   Numbers are not text cells, so `-0.5` stays a number. The data export (`grow -o x.csv`)
//!   keeps names exact, since it is read back as data.

use std::borrow::Cow;

use crate::assess::SweepResults;
use crate::assess::results::AssessResults;
use crate::eval::Metric;

/// `summary.csv`: one row per method × probe × metric.
pub fn summary_csv(r: &AssessResults) -> String {
    let mut out = String::new();
    row(
        &mut out,
        [
            "method",
            "probe",
            "metric",
            "mean",
            "delta_mean",
            "delta_ci_low",
            "delta_ci_high",
            "p_value",
            "folds",
            "no_interval",
        ]
        .map(Cow::from),
    );
    for s in &r.summary {
        row(
            &mut out,
            [
                text(&s.method.name()),
                text(s.probe.name()),
                text(s.metric.key()),
                num(s.mean),
                num(s.delta_mean),
                num(s.delta_ci_low),
                num(s.delta_ci_high),
                num(s.p_value),
                s.folds.to_string().into(),
                text(s.no_interval.as_deref().unwrap_or_default()),
            ],
        );
    }
    out
}

/// `per_class.csv`: one row per method × probe × class: recall, precision and F1, each with
/// its delta against `none` (the unprefixed `delta_*` columns are recall's; the precision and
/// F1 columns come last so the earlier columns keep their positions).
pub fn per_class_csv(r: &AssessResults) -> String {
    let mut out = String::new();
    row(
        &mut out,
        [
            "method",
            "probe",
            "class",
            "grown",
            "recall_mean",
            "precision_pooled",
            "f1_pooled",
            "delta_mean",
            "delta_ci_low",
            "delta_ci_high",
            "p_value",
            "folds",
            "no_interval",
            "precision_delta_mean",
            "precision_delta_ci_low",
            "precision_delta_ci_high",
            "precision_p_value",
            "f1_delta_mean",
            "f1_delta_ci_low",
            "f1_delta_ci_high",
            "f1_p_value",
        ]
        .map(Cow::from),
    );
    for c in &r.per_class {
        row(
            &mut out,
            [
                text(&c.method.name()),
                text(c.probe.name()),
                text(&c.class),
                c.grown.to_string().into(),
                num(c.recall_mean),
                num(c.precision_pooled),
                num(c.f1_pooled),
                num(c.delta_mean),
                num(c.delta_ci_low),
                num(c.delta_ci_high),
                num(c.p_value),
                c.folds.to_string().into(),
                text(c.no_interval.as_deref().unwrap_or_default()),
                num(c.precision_delta_mean),
                num(c.precision_delta_ci_low),
                num(c.precision_delta_ci_high),
                num(c.precision_p_value),
                num(c.f1_delta_mean),
                num(c.f1_delta_ci_low),
                num(c.f1_delta_ci_high),
                num(c.f1_p_value),
            ],
        );
    }
    out
}

/// `confusion_changes.csv`: per method × probe, the (true class, predicted class) pairs whose
/// count over all test folds moved most against `none`, rises first, then falls.
pub fn confusion_changes_csv(r: &AssessResults) -> String {
    let mut out = String::new();
    row(
        &mut out,
        [
            "method",
            "probe",
            "true_class",
            "predicted_class",
            "baseline_count",
            "count",
            "change",
        ]
        .map(Cow::from),
    );
    for c in &r.confusion_changes {
        row(
            &mut out,
            [
                text(&c.method.name()),
                text(c.probe.name()),
                text(&c.true_class),
                text(&c.predicted_class),
                c.baseline_count.to_string().into(),
                c.count.to_string().into(),
                c.change.to_string().into(),
            ],
        );
    }
    out
}

/// `diagnostics.csv`: one row per method × grown class, where the synthetic rows sit.
pub fn diagnostics_csv(r: &AssessResults) -> String {
    let mut out = String::new();
    row(
        &mut out,
        [
            "method",
            "class",
            "synthetic_rows",
            "intrusion_synthetic",
            "intrusion_real",
            "distance_ratio",
            "precision",
            "recall",
            "density",
            "coverage",
        ]
        .map(Cow::from),
    );
    for d in &r.diagnostics {
        row(
            &mut out,
            [
                text(&d.method.name()),
                text(&d.class),
                num(d.synthetic_rows),
                num(d.intrusion_synthetic),
                num(d.intrusion_real),
                num(d.distance_ratio),
                num(d.precision),
                num(d.recall),
                num(d.density),
                num(d.coverage),
            ],
        );
    }
    out
}

/// `folds.csv`: one row per fold record. Every metric any record carries gets a column (in
/// first-seen order; empty where a record lacks it, e.g. `log_loss` for the k-NN probe), then
/// one `recall:<class>` column per class.
pub fn folds_csv(r: &AssessResults) -> String {
    let mut metrics: Vec<Metric> = Vec::new();
    for f in &r.folds {
        for (name, _) in &f.metrics {
            if !metrics.contains(name) {
                metrics.push(*name);
            }
        }
    }
    let n_recall = r
        .folds
        .iter()
        .map(|f| f.class_recall.len())
        .max()
        .unwrap_or(0)
        .max(r.input.classes.len());
    let recall_header = |i: usize| -> Cow<str> {
        match r.input.classes.get(i) {
            Some(name) => Cow::Owned(format!("recall:{name}")),
            None => Cow::Owned(format!("recall:class{i}")),
        }
    };

    let mut out = String::new();
    let mut header: Vec<Cow<str>> = [
        "repeat",
        "fold",
        "method",
        "probe",
        "train_real",
        "train_synthetic",
        "test",
        "converged",
    ]
    .map(Cow::from)
    .into_iter()
    .collect();
    header.extend(metrics.iter().map(|m| Cow::from(m.key())));
    header.extend((0..n_recall).map(recall_header));
    row(&mut out, header);

    for f in &r.folds {
        let method = f.method.name();
        let mut fields: Vec<Cow<str>> = vec![
            f.repeat.to_string().into(),
            f.fold.to_string().into(),
            text(&method),
            text(f.probe.name()),
            f.train_real.to_string().into(),
            f.train_synthetic.to_string().into(),
            f.test.to_string().into(),
            f.converged
                .map(|c| c.to_string())
                .unwrap_or_default()
                .into(),
        ];
        fields.extend(metrics.iter().map(|m| {
            f.metrics
                .iter()
                .find(|(name, _)| name == m)
                .map(|(_, v)| num(*v))
                .unwrap_or_default()
        }));
        fields.extend(
            (0..n_recall).map(|i| f.class_recall.get(i).map(|v| num(*v)).unwrap_or_default()),
        );
        row(&mut out, fields);
    }
    out
}

/// Append one CSV line.
/// One line per sweep value, probe and metric.
pub fn sweep_csv(r: &SweepResults) -> String {
    let mut out = String::new();
    row(
        &mut out,
        [
            "knob",
            "value",
            "probe",
            "metric",
            "mean",
            "delta_mean",
            "delta_ci_low",
            "delta_ci_high",
            "p_value",
        ]
        .map(Cow::from),
    );
    for p in &r.points {
        row(
            &mut out,
            [
                text(r.knob.name()),
                // A knob value is a number or a method name; a number stays a number.
                if p.value.text().parse::<f64>().is_ok() {
                    Cow::from(p.value.text())
                } else {
                    text(p.value.text())
                },
                text(p.probe.name()),
                text(p.metric.key()),
                num(p.mean),
                num(p.delta_mean),
                num(p.delta_ci_low),
                num(p.delta_ci_high),
                num(p.p_value),
            ],
        );
    }
    out
}

fn row<'a>(out: &mut String, fields: impl IntoIterator<Item = Cow<'a, str>>) {
    let fields: Vec<Cow<'a, str>> = fields.into_iter().collect();
    let mut w = csv::WriterBuilder::new()
        .buffer_capacity(256)
        .from_writer(Vec::new());
    // Writing to memory cannot fail, and every field is UTF-8 text.
    if w.write_record(fields.iter().map(|f| f.as_bytes())).is_ok()
        && let Ok(bytes) = w.into_inner()
    {
        out.push_str(&String::from_utf8_lossy(&bytes));
    }
}

/// A text field, quoted later by [`row`] if it needs it, with a leading `'` when a
/// spreadsheet would otherwise evaluate it as a formula.
fn text(s: &str) -> Cow<'_, str> {
    if s.starts_with(['=', '+', '-', '@', '\t', '\r']) {
        Cow::Owned(format!("'{s}"))
    } else {
        Cow::Borrowed(s)
    }
}

/// A number: shortest round-trip form, NaN as an empty field.
fn num(v: f64) -> Cow<'static, str> {
    if v.is_nan() {
        Cow::Borrowed("")
    } else {
        Cow::Owned(v.to_string())
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn quoting_follows_rfc4180() {
        // RFC 4180 §2 rules 6 and 7: quote fields with commas, quotes or line breaks; double
        // inner quotes.
        let line = |f: &str| {
            let mut out = String::new();
            row(&mut out, [Cow::Borrowed(f), text("=x")]);
            out
        };
        assert_eq!(line("plain"), "plain,'=x\n");
        assert_eq!(line("a,b"), "\"a,b\",'=x\n");
        assert_eq!(line("say \"hi\""), "\"say \"\"hi\"\"\",'=x\n");
        assert_eq!(line("two\nlines"), "\"two\nlines\",'=x\n");
    }

    #[test]
    fn formula_cells_get_a_leading_quote() {
        // OWASP "CSV Injection": prefix cells starting with = + - @ tab CR with a single quote
        // (from memory).
        for bad in ["=1+1", "+cmd", "-2+3", "@SUM(A1)", "\tx", "\rx"] {
            assert_eq!(text(bad), format!("'{bad}"));
        }
        assert_eq!(text("cat"), "cat");
        assert_eq!(text("a=b"), "a=b");
        assert_eq!(num(-0.5), "-0.5");
    }

    #[test]
    fn numbers_round_trip_and_nan_is_empty() {
        // Rust's f64 Display is the shortest string that parses back to the same value
        // (std documentation).
        for v in [0.1, 0.8125, 1.0 / 3.0, 1e-12, 123456.789] {
            assert_eq!(num(v).parse::<f64>().unwrap(), v);
        }
        assert_eq!(num(f64::NAN), "");
    }
}
