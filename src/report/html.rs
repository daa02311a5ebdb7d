//! The HTML report: one self-contained page (inline CSS and SVG, no scripts, no external
//! resources) that can be mailed, archived or opened offline. Every piece of text from the
//! results is escaped.

use std::fmt::Write;

use crate::assess::results::{AssessResults, DiagnosticRow};
use crate::assess::{MAX_SCATTER_CLASSES as MAX_CLASSES, SCATTER_RIVALS as RIVALS};
use crate::eval::Metric;

use super::CAUTION;
use super::charts;
use super::escape::escape;
use super::figures::{self, class_names, compared_pairs, find_summary, pairs, summary_cell};

const STYLE: &str = "
body { font-family: system-ui, -apple-system, 'Segoe UI', sans-serif; color: #222; margin: 0 auto;
       max-width: 1440px; padding: 1.5rem 2rem 3rem; line-height: 1.45; }
h1 { font-size: 1.6rem; margin-bottom: 0.2rem; }
h2 { font-size: 1.2rem; margin-top: 2.2rem; border-bottom: 1px solid #ddd; padding-bottom: 0.2rem; }
table { border-collapse: collapse; font-size: 0.9rem; margin: 0.6rem 0; }
/* A table wider than the page (many methods) scrolls inside its own box, not the page. */
table { display: block; max-width: 100%; overflow-x: auto; }
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
.p { color: #555; font-size: 0.8rem; }
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
    per_class_section(&mut out, r);
    confusion_section(&mut out, r);
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
    // Largest first, as in every table and chart below.
    let classes: Vec<String> = class_names(r)
        .iter()
        .take(r.input.classes.len())
        .map(|c| {
            let count = figures::class_size(r, c)
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
         interval excludes zero (blue up, red down); under it, the p-value of \"no difference\".</p>"
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
            let p_text = row
                .filter(|s| !p.is_baseline() && s.applies)
                .map(|s| p_line(s.p_value))
                .unwrap_or_default();
            let _ = write!(
                out,
                "<td class=\"{class}\">{}{p_text}</td>",
                escape(&summary_cell(row))
            );
        }
        out.push_str("</tr>\n");
    }
    out.push_str("</tbody>\n</table>\n</section>\n");
}

/// A p-value on its own line under a figure.
fn p_line(p: f64) -> String {
    format!(
        "<br><span class=\"p\">{}</span>",
        escape(&figures::p_label(p))
    )
}

/// One per-class figure cell: the mean and its Δ with interval, shaded when the interval
/// excludes zero, the p-value under it; the baseline shows its mean only.
fn class_cell(out: &mut String, baseline: bool, mean: f64, d: Paired) {
    let class = if baseline {
        "num"
    } else if d.lo > 0.0 {
        "num up"
    } else if d.hi < 0.0 {
        "num down"
    } else {
        "num"
    };
    let interval = d.lo.is_finite() && d.hi.is_finite();
    let text = if baseline {
        figures::value(mean)
    } else if interval || !d.mean.is_finite() {
        figures::interval_cell(mean, d.mean, d.lo, d.hi)
    } else {
        format!("{} (Δ {})", figures::value(mean), figures::signed(d.mean))
    };
    let p = match (baseline, interval) {
        (true, _) => String::new(),
        (false, true) => p_line(d.p),
        (false, false) => "<br><span class=\"p\">no interval</span>".to_string(),
    };
    let _ = write!(out, "<td class=\"{class}\">{}{p}</td>", escape(&text));
}

/// A paired difference as the per-class table shows it.
#[derive(Clone, Copy)]
struct Paired {
    mean: f64,
    lo: f64,
    hi: f64,
    p: f64,
}

/// At most this many classes get rows in the per-class table; beyond it only the grown ones
/// do (per_class.csv has every class).
const TABLE_CLASSES: usize = 40;

fn per_class_section(out: &mut String, r: &AssessResults) {
    out.push_str("<section id=\"per-class\">\n<h2>Per class: recall, precision and F1</h2>\n");
    let names = class_names(r);
    let shown: Vec<&String> = if names.len() <= TABLE_CLASSES {
        names.iter().collect()
    } else {
        names
            .iter()
            .filter(|c| r.grown_classes.contains(*c))
            .take(TABLE_CLASSES)
            .collect()
    };
    let _ = writeln!(
        out,
        "<p class=\"note\">Classes largest first (real rows in brackets; ★ grown). Figures are \
         computed as in the summary: from the test rows pooled over each repeat's folds under \
         a row-level interval, as fold averages under <code>corrected-t</code>. Each figure: \
         its value, Δ against <code>none</code> with the 95% interval (shaded when it excludes \
         zero), and the p-value. {}</p>",
        if shown.len() < names.len() {
            format!(
                "Only the {} grown classes are listed; <code>per_class.csv</code> has all {}.",
                shown.len(),
                names.len()
            )
        } else {
            String::new()
        }
    );
    if r.per_class.is_empty() || shown.is_empty() {
        out.push_str("<p>No per-class results to show.</p>\n</section>\n");
        return;
    }
    out.push_str(
        "<table>\n<thead><tr><th>probe</th><th>class</th><th>method</th><th>recall</th>\
         <th>precision</th><th>F1</th></tr></thead>\n<tbody>\n",
    );
    let methods = pairs(r);
    let index = figures::class_rows(r);
    for &probe in &r.probes {
        for class in &shown {
            let rows: Vec<_> = methods
                .iter()
                .filter(|p| p.probe == probe)
                .filter_map(|p| index.get(&(class.as_str(), p.method.name().into_owned(), probe)))
                .collect();
            for (i, c) in rows.iter().enumerate() {
                out.push_str("<tr>");
                if i == 0 {
                    let star = if c.grown { " ★" } else { "" };
                    let size = figures::class_size(r, class)
                        .map(|n| format!(" ({n})"))
                        .unwrap_or_default();
                    let _ = write!(
                        out,
                        "<td rowspan=\"{n}\">{}</td><td class=\"name\" rowspan=\"{n}\">{}{size}{star}</td>",
                        escape(probe.name()),
                        escape(class),
                        n = rows.len()
                    );
                }
                let _ = write!(out, "<td class=\"name\">{}</td>", escape(&c.method.name()));
                let base = c.method.is_baseline();
                let recall = Paired {
                    mean: c.delta_mean,
                    lo: c.delta_ci_low,
                    hi: c.delta_ci_high,
                    p: c.p_value,
                };
                let precision = Paired {
                    mean: c.precision_delta_mean,
                    lo: c.precision_delta_ci_low,
                    hi: c.precision_delta_ci_high,
                    p: c.precision_p_value,
                };
                let f1 = Paired {
                    mean: c.f1_delta_mean,
                    lo: c.f1_delta_ci_low,
                    hi: c.f1_delta_ci_high,
                    p: c.f1_p_value,
                };
                class_cell(out, base, c.recall_mean, recall);
                class_cell(out, base, c.precision_pooled, precision);
                class_cell(out, base, c.f1_pooled, f1);
                out.push_str("</tr>\n");
            }
        }
    }
    out.push_str("</tbody>\n</table>\n</section>\n");
}

/// Per method × probe, at most this many rises and falls are shown (confusion_changes.csv
/// and results.json list more).
const SHOWN_CHANGES: usize = 5;

fn confusion_section(out: &mut String, r: &AssessResults) {
    out.push_str("<section id=\"confusion\">\n<h2>Which classes are taken for which</h2>\n");
    out.push_str(
        "<p class=\"note\">Test rows of a true class predicted as another class, counted over \
         every test fold of every repeat, under <code>none</code> and under the method. Rises \
         (red) are new mistakes the method brought, falls (blue) mistakes it removed; a class \
         grown towards a look-alike class shows up here as a rise. The largest changes per \
         method and probe; <code>confusion_changes.csv</code> lists more.</p>\n",
    );
    if r.confusion_changes.is_empty() {
        out.push_str("<p>No confusion count changed against none.</p>\n</section>\n");
        return;
    }
    out.push_str(
        "<table>\n<thead><tr><th>probe</th><th>method</th><th>true class</th>\
         <th>predicted as</th><th>rows, none</th><th>rows, method</th><th>change</th></tr></thead>\n<tbody>\n",
    );
    for p in compared_pairs(r) {
        let mine: Vec<_> = r
            .confusion_changes
            .iter()
            .filter(|c| c.method == p.method && c.probe == p.probe)
            .collect();
        let rises = mine.iter().filter(|c| c.change > 0).take(SHOWN_CHANGES);
        let falls = mine.iter().filter(|c| c.change < 0).take(SHOWN_CHANGES);
        for c in rises.chain(falls) {
            let class = if c.change > 0 { "num down" } else { "num up" };
            let _ = writeln!(
                out,
                "<tr><td>{}</td><td class=\"name\">{}</td><td class=\"name\">{}</td>\
                 <td class=\"name\">{}</td><td class=\"num\">{}</td><td class=\"num\">{}</td>\
                 <td class=\"{class}\">{:+}</td></tr>",
                escape(c.probe.name()),
                escape(&c.method.name()),
                escape(&c.true_class),
                escape(&c.predicted_class),
                c.baseline_count,
                c.count,
                c.change
            );
        }
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
    let _ = writeln!(
        out,
        "<p class=\"note\">Training rows of the first fold: the grown class's real rows, its \
         synthetic rows, and rows of its {RIVALS} nearest rival classes (those whose nearest \
         row lies closest to the class's mean), projected on the first two principal components of the class and its \
         rivals together, so the directions that tell them apart are the ones drawn. Both axes \
         share one scale. At most {MAX_CLASSES} grown classes per method, largest first.</p>"
    );
    let rank = figures::class_rank(r);
    if r.scatter.is_empty() {
        out.push_str("<p>No projections were recorded.</p>\n");
    } else {
        out.push_str("<div class=\"scatters\">\n");
        let mut views: Vec<_> = r.scatter.iter().collect();
        views.sort_by_key(|s| (method_index(r, &s.method), rank(&s.class)));
        for s in views {
            out.push_str("<div class=\"chart\">");
            out.push_str(&charts::scatter_plot(s));
            out.push_str("</div>\n");
        }
        out.push_str("</div>\n");
    }
    let drawn: std::collections::HashSet<&str> =
        r.scatter.iter().map(|s| s.class.as_str()).collect();
    let mut rest: Vec<&String> = r
        .grown_classes
        .iter()
        .filter(|c| !drawn.contains(c.as_str()))
        .collect();
    rest.sort_by_key(|c| rank(c.as_str()));
    if !r.scatter.is_empty() && !rest.is_empty() {
        let names: Vec<String> = rest.iter().map(|c| escape(c)).collect();
        let _ = writeln!(
            out,
            "<p class=\"note\" id=\"scatter-rest\">Grown classes not drawn ({}; beyond the first \
             {MAX_CLASSES}, or with fewer than 3 real training rows): {}.</p>",
            rest.len(),
            names.join(", ")
        );
    }
    out.push_str("</section>\n");
}

/// Where a method stands in the run's order (unknown methods last), for sorting rows.
fn method_index(r: &AssessResults, m: &crate::assess::MethodId) -> usize {
    r.methods.iter().position(|x| x == m).unwrap_or(usize::MAX)
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
        let rank = figures::class_rank(r);
        let mut rows: Vec<&DiagnosticRow> = r.diagnostics.iter().collect();
        rows.sort_by_key(|d| (method_index(r, &d.method), rank(&d.class)));
        for d in rows {
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
