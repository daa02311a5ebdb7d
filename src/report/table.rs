//! The plain-text summary printed after `assess`: one row per method × probe, one column per
//! headline metric, then the plain sentences, the warnings and the caution. No colour codes,
//! so it reads the same in a terminal, a log file or a pasted issue.

use crate::assess::results::AssessResults;
use crate::assess::{MethodId, SweepResults, SweepValue};
use crate::eval::Metric;
use crate::probe::ProbeKind;

use super::CAUTION;
use super::figures::{self, find_summary, pairs, summary_cell};

/// Lines are kept within this many columns; metric columns that do not fit move to a second
/// table that repeats the row labels.
const MAX_WIDTH: usize = 100;

/// Space between columns.
const GAP: usize = 2;

/// Render the summary table, sentences, warnings and caution as plain text.
pub fn terminal_table(r: &AssessResults) -> String {
    let mut out = String::new();
    out.push_str(&wrap(&heading(r), MAX_WIDTH, ""));
    let folds = r.summary.iter().map(|s| s.folds).max().unwrap_or(0);
    out.push_str(&wrap(
        &format!(
            "Δ is the mean paired difference against `{}` over {folds} folds, with its 95% \
             interval in brackets.",
            MethodId::BASELINE
        ),
        MAX_WIDTH,
        "",
    ));
    out.push('\n');

    let rows = pairs(r);
    let label_header = ["probe", "method"];
    let labels: Vec<[String; 2]> = rows
        .iter()
        .map(|p| [p.probe.to_string(), p.method.to_string()])
        .collect();
    let metric_cols: Vec<Column> = Metric::HEADLINE
        .iter()
        .map(|&metric| Column {
            header: metric.label().to_string(),
            cells: rows
                .iter()
                .map(|p| summary_cell(find_summary(r, &p.method, p.probe, metric)))
                .collect(),
        })
        .collect();
    let label_cols: Vec<Column> = (0..2)
        .map(|i| Column {
            header: label_header[i].to_string(),
            cells: labels.iter().map(|l| l[i].clone()).collect(),
        })
        .collect();

    for (i, group) in pack(&label_cols, &metric_cols).iter().enumerate() {
        if i > 0 {
            out.push('\n');
        }
        let cols: Vec<&Column> = label_cols.iter().chain(group.iter().copied()).collect();
        out.push_str(&render(&cols, rows.len()));
    }

    if !r.sentences.is_empty() {
        out.push('\n');
        for s in r.sentences.iter().filter(|s| *s != CAUTION) {
            out.push_str(&wrap(s, MAX_WIDTH, ""));
        }
    }
    if !r.warnings.is_empty() {
        out.push('\n');
        for w in &r.warnings {
            out.push_str(&wrap(&format!("warning: {w}"), MAX_WIDTH, "  "));
        }
    }
    out.push('\n');
    out.push_str(&wrap(CAUTION, MAX_WIDTH, ""));
    out
}

/// The plain-text table printed after `sweep`: one row per knob value and probe.
pub fn sweep_table(r: &SweepResults) -> String {
    let mut out = wrap(
        &format!(
            "sweep of {} over {} (seed {}), Δ against `{}` with 95% intervals",
            r.method,
            r.knob,
            r.seed,
            MethodId::BASELINE
        ),
        MAX_WIDTH,
        "",
    );
    out.push('\n');
    let mut keys: Vec<(&SweepValue, ProbeKind)> = Vec::new();
    for p in &r.points {
        if !keys.contains(&(&p.value, p.probe)) {
            keys.push((&p.value, p.probe));
        }
    }
    let mut cols = vec![
        Column {
            header: "value".into(),
            cells: keys.iter().map(|k| k.0.to_string()).collect(),
        },
        Column {
            header: "probe".into(),
            cells: keys.iter().map(|k| k.1.to_string()).collect(),
        },
    ];
    for metric in [Metric::BalancedAccuracy, Metric::GrownClassRecall] {
        cols.push(Column {
            header: metric.label().to_string(),
            cells: keys
                .iter()
                .map(|&(value, probe)| {
                    r.points
                        .iter()
                        .find(|p| p.value == *value && p.probe == probe && p.metric == metric)
                        .map_or(figures::MISSING.to_string(), |p| {
                            if p.value == SweepValue::Baseline {
                                return crate::rounding::value(p.mean);
                            }
                            figures::interval_cell(
                                p.mean,
                                p.delta_mean,
                                p.delta_ci_low,
                                p.delta_ci_high,
                            )
                        })
                })
                .collect(),
        });
    }
    out.push_str(&render(&cols.iter().collect::<Vec<_>>(), keys.len()));
    for w in &r.warnings {
        out.push_str(&wrap(&format!("warning: {w}"), MAX_WIDTH, "  "));
    }
    out.push('\n');
    out.push_str(&wrap(CAUTION, MAX_WIDTH, ""));
    out
}

/// One line saying what was assessed.
fn heading(r: &AssessResults) -> String {
    format!(
        "embloom {} assessment of {} ({} rows × {} dims, {} classes), seed {}, split {}",
        r.embloom_version,
        r.input.path,
        r.input.rows,
        r.input.dims,
        r.input.classes.len(),
        r.seed,
        r.split
    )
}

/// A column of text: its header and one cell per row.
struct Column {
    header: String,
    cells: Vec<String>,
}

impl Column {
    /// Width in characters (not bytes: `Δ` is two bytes but one column).
    fn width(&self) -> usize {
        self.cells
            .iter()
            .map(|c| c.chars().count())
            .chain(std::iter::once(self.header.chars().count()))
            .max()
            .unwrap_or(0)
    }
}

/// Split the metric columns into tables that each fit in [`MAX_WIDTH`] next to the label
/// columns; every table gets at least one metric, even one too wide to fit.
fn pack<'a>(labels: &[Column], metrics: &'a [Column]) -> Vec<Vec<&'a Column>> {
    let base: usize = labels.iter().map(|c| c.width() + GAP).sum();
    let mut groups: Vec<Vec<&Column>> = Vec::new();
    let mut used = base;
    for col in metrics {
        let w = col.width();
        let extra = if used == base { w } else { GAP + w };
        match groups.last_mut() {
            Some(g) if used + extra <= MAX_WIDTH => {
                g.push(col);
                used += extra;
            }
            _ => {
                groups.push(vec![col]);
                used = base + w;
            }
        }
    }
    groups
}

/// Left-aligned columns with a rule under the header; trailing spaces trimmed.
fn render(cols: &[&Column], n_rows: usize) -> String {
    let widths: Vec<usize> = cols.iter().map(|c| c.width()).collect();
    let mut out = String::new();
    let line = |cells: Vec<&str>| -> String {
        let mut s = String::new();
        for (i, (cell, w)) in cells.iter().zip(&widths).enumerate() {
            if i > 0 {
                s.push_str(&" ".repeat(GAP));
            }
            s.push_str(cell);
            s.push_str(&" ".repeat(w.saturating_sub(cell.chars().count())));
        }
        let mut s = s.trim_end().to_string();
        s.push('\n');
        s
    };
    out.push_str(&line(cols.iter().map(|c| c.header.as_str()).collect()));
    let rule: Vec<String> = widths.iter().map(|w| "-".repeat(*w)).collect();
    out.push_str(&line(rule.iter().map(String::as_str).collect()));
    for row in 0..n_rows {
        out.push_str(&line(
            cols.iter()
                .map(|c| c.cells.get(row).map(String::as_str).unwrap_or(""))
                .collect(),
        ));
    }
    out
}

/// Greedy word wrap at `width` columns; continuation lines start with `indent`. A single word
/// longer than the width (a long path) stays whole rather than being cut.
fn wrap(text: &str, width: usize, indent: &str) -> String {
    let mut out = String::new();
    let mut line = String::new();
    let mut len = 0usize;
    let mut empty = true;
    for word in text.split_whitespace() {
        let wlen = word.chars().count();
        if !empty && len + 1 + wlen > width {
            out.push_str(&line);
            out.push('\n');
            line = indent.to_string();
            len = indent.chars().count();
            empty = true;
        }
        if !empty {
            line.push(' ');
            len += 1;
        }
        line.push_str(word);
        len += wlen;
        empty = false;
    }
    if !line.is_empty() {
        out.push_str(&line);
        out.push('\n');
    }
    out
}

#[cfg(test)]
mod tests {
    use super::wrap;

    #[test]
    fn wrap_keeps_lines_within_width() {
        // Greedy word wrap (common practice, no source).
        let text = "one two three four five six seven eight nine ten eleven twelve";
        let wrapped = wrap(text, 20, "  ");
        for line in wrapped.lines() {
            assert!(line.chars().count() <= 20, "{line:?}");
        }
        assert_eq!(
            wrapped.split_whitespace().collect::<Vec<_>>(),
            text.split_whitespace().collect::<Vec<_>>()
        );
        // "one two three four" fills 18 of 20 columns; "five" starts the indented second line.
        assert!(wrapped.lines().nth(1).unwrap().starts_with("  five"));
        assert_eq!(wrap("a b", 20, ""), "a b\n");
    }
}
