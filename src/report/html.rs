//! The HTML report: one self-contained page (inline CSS and SVG, no scripts, no external
//! resources) that can be mailed, archived or opened offline. Every piece of text from the
//! results is escaped.

use std::fmt::Write;

use crate::assess::results::{AssessResults, DiagnosticRow};
use crate::eval::Metric;

use super::CAUTION;
use super::charts;
use super::escape::escape;
use super::figures::{self, find_summary, pairs, summary_cell};

const STYLE: &str = "
body { font-family: system-ui, -apple-system, 'Segoe UI', sans-serif; color: #222; margin: 0 auto;
       max-width: 1150px; padding: 1.5rem 2rem 3rem; line-height: 1.45; }
h1 { font-size: 1.6rem; margin-bottom: 0.2rem; }
h2 { font-size: 1.2rem; margin-top: 2.2rem; border-bottom: 1px solid #ddd; padding-bottom: 0.2rem; }
table { border-collapse: collapse; font-size: 0.9rem; margin: 0.6rem 0; }
th, td { border-bottom: 1px solid #e4e4e4; padding: 0.3rem 0.7rem; text-align: left; vertical-align: top; }
th { background: #f3f3f3; }
td.num { font-variant-numeric: tabular-nums; white-space: nowrap; }
td.name { white-space: nowrap; }
td.up { background: #e8f0fa; }
td.down { background: #fbeaea; }
dl.meta { display: grid; grid-template-columns: max-content 1fr; gap: 0.15rem 1rem; margin: 0.8rem 0; }
dl.meta dt { font-weight: 600; }
dl.meta dd { margin: 0; overflow-wrap: anywhere; }
code, pre { font-family: ui-monospace, 'SFMono-Regular', Menlo, monospace; font-size: 0.85rem; }
pre { background: #f6f6f6; padding: 0.8rem; overflow-x: auto; }
.caution { border-left: 6px solid #c0392b; background: #fdf1ef; padding: 0.8rem 1rem; margin: 1.2rem 0;
           font-weight: 600; }
.chart { overflow-x: auto; margin: 0.6rem 0; }
.scatters { display: flex; flex-wrap: wrap; gap: 0.8rem; }
.note { color: #555; font-size: 0.9rem; }
.warnings li { color: #8a4b00; }
";

/// Render the whole report page.
pub fn html_report(r: &AssessResults) -> String {
    let mut out = String::new();
    out.push_str("<!DOCTYPE html>\n<html lang=\"en\">\n<head>\n<meta charset=\"utf-8\">\n");
    out.push_str("<meta name=\"viewport\" content=\"width=device-width, initial-scale=1\">\n");
    let _ = writeln!(
        out,
        "<title>embloom assessment — {}</title>",
        escape(&r.input.path)
    );
    let _ = writeln!(out, "<style>{STYLE}</style>\n</head>\n<body>");
    header(&mut out, r);
    let _ = writeln!(
        out,
        "<p class=\"caution\" id=\"caution\">{}</p>",
        escape(CAUTION)
    );
    summary_table(&mut out, r);
    delta_section(&mut out, r);
    heatmap_section(&mut out, r);
    scatter_section(&mut out, r);
    diagnostics_section(&mut out, r);
    notes_section(&mut out, r);
    out.push_str("</body>\n</html>\n");
    out
}

fn header(out: &mut String, r: &AssessResults) {
    let _ = writeln!(out, "<header id=\"header\">\n<h1>embloom assessment</h1>");
    out.push_str("<dl class=\"meta\">\n");
    let mut item = |k: &str, v: String| {
        let _ = writeln!(out, "<dt>{k}</dt><dd>{v}</dd>");
    };
    item(
        "input file",
        format!("<code>{}</code>", escape(&r.input.path)),
    );
    item(
        "sha256",
        format!("<code>{}</code>", escape(&r.input.sha256)),
    );
    if let Some(l) = &r.input.labels_file {
        item(
            "labels file",
            format!(
                "<code>{}</code> (sha256 <code>{}</code>)",
                escape(&l.path),
                escape(&l.sha256)
            ),
        );
    }
    item(
        "rows × dims",
        format!("{} × {}", r.input.rows, r.input.dims),
    );
    let classes: Vec<String> = r
        .input
        .classes
        .iter()
        .enumerate()
        .map(|(i, c)| {
            let count = r
                .input
                .class_counts
                .get(i)
                .map(|n| n.to_string())
                .unwrap_or_else(|| figures::MISSING.to_string());
            let grown = if r.grown_classes.contains(c) {
                " ★"
            } else {
                ""
            };
            format!("{} ({count}){grown}", escape(c))
        })
        .collect();
    item(
        "classes",
        format!(
            "{} — {} (★ grown)",
            r.input.classes.len(),
            classes.join(" · ")
        ),
    );
    item("methods", escape(&joined(&r.methods)));
    item("probes", escape(&joined(&r.probes)));
    item("seed", r.seed.to_string());
    item("split", escape(r.split.name()));
    item("embloom version", escape(&r.embloom_version));
    if !r.command_line.is_empty() {
        item(
            "command line",
            format!("<code>{}</code>", escape(&r.command_line)),
        );
    }
    if r.elapsed_seconds.is_finite() {
        item("elapsed", format!("{:.1} s", r.elapsed_seconds));
    }
    out.push_str("</dl>\n");
    let config =
        serde_json::to_string_pretty(&r.config).unwrap_or_else(|e| format!("(not shown: {e})"));
    let _ = writeln!(
        out,
        "<details><summary>Configuration as run</summary>\n<pre>{}</pre>\n</details>\n</header>",
        escape(&config)
    );
}

/// Names as a comma-separated list.
fn joined<T: std::fmt::Display>(items: &[T]) -> String {
    items
        .iter()
        .map(|i| i.to_string())
        .collect::<Vec<_>>()
        .join(", ")
}

fn summary_table(out: &mut String, r: &AssessResults) {
    out.push_str("<section id=\"summary\">\n<h2>Summary</h2>\n");
    let folds = r.summary.iter().map(|s| s.folds).max().unwrap_or(0);
    let _ = writeln!(
        out,
        "<p class=\"note\">Each cell: mean over {folds} folds, then Δ = mean paired difference \
         against <code>none</code> on the same folds, with its 95% interval. Shaded cells: the \
         interval excludes zero (blue up, red down). Hover a cell for its p-value.</p>"
    );
    out.push_str("<table>\n<thead><tr><th>probe</th><th>method</th>");
    for metric in Metric::HEADLINE {
        let _ = write!(out, "<th>{}</th>", metric.label());
    }
    out.push_str("</tr></thead>\n<tbody>\n");
    for p in pairs(r) {
        let _ = write!(
            out,
            "<tr><td>{}</td><td>{}</td>",
            escape(p.probe.name()),
            escape(&p.method.name())
        );
        for metric in Metric::HEADLINE {
            let row = find_summary(r, &p.method, p.probe, metric);
            let class = match row {
                Some(s) if !p.is_baseline() && s.delta_ci_low > 0.0 => "num up",
                Some(s) if !p.is_baseline() && s.delta_ci_high < 0.0 => "num down",
                _ => "num",
            };
            let title = row
                .filter(|_| !p.is_baseline())
                .map(|s| format!(" title=\"p = {}\"", escape(&figures::value(s.p_value))))
                .unwrap_or_default();
            let _ = write!(
                out,
                "<td class=\"{class}\"{title}>{}</td>",
                escape(&summary_cell(row))
            );
        }
        out.push_str("</tr>\n");
    }
    out.push_str("</tbody>\n</table>\n</section>\n");
}

fn delta_section(out: &mut String, r: &AssessResults) {
    out.push_str("<section id=\"chart-deltas\">\n<h2>Change against none</h2>\n");
    out.push_str(
        "<p class=\"note\">Per method and probe, the mean paired difference against \
         <code>none</code> with its 95% interval, for each headline metric. Intervals that \
         cross the vertical line are compatible with no change.</p>\n",
    );
    chart_or_note(
        out,
        charts::delta_chart(r),
        "No method besides none was assessed.",
    );
    out.push_str("</section>\n");
}

fn heatmap_section(out: &mut String, r: &AssessResults) {
    out.push_str("<section id=\"chart-class-recall\">\n<h2>Recall per class</h2>\n");
    out.push_str(
        "<p class=\"note\">Difference in recall against <code>none</code> for every class. \
         Gains on grown classes (★) often come with losses on their neighbours; look along \
         each column.</p>\n",
    );
    chart_or_note(
        out,
        charts::class_heatmap(r),
        "No per-class results to show.",
    );
    out.push_str("</section>\n");
}

fn scatter_section(out: &mut String, r: &AssessResults) {
    out.push_str("<section id=\"chart-scatter\">\n<h2>Where the synthetic rows sit</h2>\n");
    out.push_str(
        "<p class=\"note\">Training rows of the first fold projected on their first two \
         principal components: the grown class's real rows, its synthetic rows, and the \
         nearest rows of other classes. Both axes share one scale.</p>\n",
    );
    if r.scatter.is_empty() {
        out.push_str("<p>No projections were recorded.</p>\n");
    } else {
        out.push_str("<div class=\"scatters\">\n");
        for s in &r.scatter {
            out.push_str("<div class=\"chart\">");
            out.push_str(&charts::scatter_plot(s));
            out.push_str("</div>\n");
        }
        out.push_str("</div>\n");
    }
    out.push_str("</section>\n");
}

fn chart_or_note(out: &mut String, chart: Option<String>, note: &str) {
    match chart {
        Some(svg) => {
            out.push_str("<div class=\"chart\">");
            out.push_str(&svg);
            out.push_str("</div>\n");
        }
        None => {
            let _ = writeln!(out, "<p>{}</p>", escape(note));
        }
    }
}

/// Column name, explanation, and how to read a row's value.
type DiagColumn = (&'static str, &'static str, fn(&DiagnosticRow) -> String);

const DIAG_COLUMNS: [DiagColumn; 9] = [
    (
        "synthetic rows",
        "Synthetic rows added to the class per fold (mean).",
        |d| {
            if d.synthetic_rows.is_finite() {
                format!("{:.1}", d.synthetic_rows)
            } else {
                figures::MISSING.to_string()
            }
        },
    ),
    (
        "intrusion, synthetic",
        "Share of synthetic rows whose nearest real training row belongs to another class.",
        |d| figures::value(d.intrusion_synthetic),
    ),
    (
        "intrusion, real",
        "The same share for the class's own real rows: the baseline to compare the synthetic \
         share with. A synthetic share well above it means the method pushes rows into a \
         neighbour's region.",
        |d| figures::value(d.intrusion_real),
    ),
    (
        "distance ratio",
        "Median distance from a synthetic row to its nearest real row, divided by the same \
         median for real rows, in euclidean distance, or under the cosine metric in angles \
         (not 1 − cos, which grows with the square of the angle). Near 1: synthetic rows are \
         as close to the data as real ones; well below 1: near-copies; well above 1: off the \
         data.",
        |d| figures::value(d.distance_ratio),
    ),
    (
        "PRDC k",
        "The neighbours k of the PRDC balls: 5, or fewer when the class has few held-out rows \
         in a fold (the smallest k any fold used). Below 2 the PRDC figures are not available.",
        |d| {
            if d.prdc_k.is_finite() {
                format!("{}", d.prdc_k)
            } else {
                figures::MISSING.to_string()
            }
        },
    ),
    (
        "precision",
        "PRDC precision (Naeem et al. 2020): share of synthetic rows inside the real rows' \
         k-nearest-neighbour balls (fidelity).",
        |d| figures::value(d.precision),
    ),
    (
        "recall",
        "PRDC recall: share of real rows inside the synthetic rows' k-nearest-neighbour balls \
         (diversity).",
        |d| figures::value(d.recall),
    ),
    (
        "density",
        "PRDC density: how many real-row balls contain a synthetic row, averaged and divided \
         by k; about 1 when synthetic rows are spread like real ones.",
        |d| figures::value(d.density),
    ),
    (
        "coverage",
        "PRDC coverage: share of real rows whose ball contains at least one synthetic row.",
        |d| figures::value(d.coverage),
    ),
];

fn diagnostics_section(out: &mut String, r: &AssessResults) {
    out.push_str("<section id=\"diagnostics\">\n<h2>Diagnostics of the synthetic rows</h2>\n");
    let columns = &DIAG_COLUMNS;
    if r.diagnostics.is_empty() {
        out.push_str("<p>No diagnostics were recorded.</p>\n");
    } else {
        out.push_str("<table>\n<thead><tr><th>method</th><th>class</th>");
        for (name, _, _) in columns {
            let _ = write!(out, "<th>{name}</th>");
        }
        out.push_str("</tr></thead>\n<tbody>\n");
        for d in &r.diagnostics {
            let _ = write!(
                out,
                "<tr><td class=\"name\">{}</td><td class=\"name\">{}</td>",
                escape(&d.method.name()),
                escape(&d.class)
            );
            for (_, _, cell) in columns {
                let _ = write!(out, "<td class=\"num\">{}</td>", escape(&cell(d)));
            }
            out.push_str("</tr>\n");
        }
        out.push_str("</tbody>\n</table>\n");
    }
    out.push_str("<dl class=\"meta\">\n");
    for (name, explain, _) in columns {
        let _ = writeln!(out, "<dt>{name}</dt><dd>{}</dd>", escape(explain));
    }
    out.push_str("</dl>\n</section>\n");
}

fn notes_section(out: &mut String, r: &AssessResults) {
    out.push_str("<section id=\"notes\">\n<h2>In plain words</h2>\n");
    if r.sentences.is_empty() {
        out.push_str("<p>No sentences were produced.</p>\n");
    } else {
        out.push_str("<ul>\n");
        for s in r.sentences.iter().filter(|s| *s != CAUTION) {
            let _ = writeln!(out, "<li>{}</li>", escape(s));
        }
        out.push_str("</ul>\n");
    }
    if !r.warnings.is_empty() {
        out.push_str("<h3>Warnings</h3>\n<ul class=\"warnings\">\n");
        for w in &r.warnings {
            let _ = writeln!(out, "<li>{}</li>", escape(w));
        }
        out.push_str("</ul>\n");
    }
    let _ = writeln!(out, "<p class=\"caution\">{}</p>", escape(CAUTION));
    out.push_str("</section>\n");
}
