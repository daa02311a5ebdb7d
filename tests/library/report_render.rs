//! Rendering tests for the report: terminal table, CSV, HTML and the report folder.
//!
//! All figures in `results()` are INVENTED TEST DATA, chosen only to exercise the renderers
//! (signs, NaN, awkward class names); they are not measurements. The expected strings follow
//! the output formats the renderers define (task brief for `embloom report`), and the CSV
//! parser below follows RFC 4180.

use embloom::assess::results::{
    AssessResults, ClassRow, ConfusionChange, DiagnosticRow, FoldRecord, InputInfo, Scatter,
    SummaryRow,
};
use embloom::assess::{AssessConfig, MethodId, ResultsConfig};
use embloom::augment::{AugmentParams, MethodKind, Target, UnitNorm};
use embloom::eval::{IntervalKind, Metric, SplitKind};
use embloom::probe::{KnnParams, LinearParams, ProbeKind};
use embloom::report::{
    CAUTION, confusion_changes_csv, diagnostics_csv, folds_csv, html_report, per_class_csv,
    summary_csv, terminal_table, write_report_dir,
};

const METHODS: [&str; 4] = ["none", "interpolate", "extrapolate", "principal-noise"];
const PROBES: [&str; 2] = ["knn", "linear"];
/// Awkward names on purpose: a comma, markup, and a quote.
const CLASSES: [&str; 4] = ["cat", "dog, large", "<b>&", "say \"hi\""];
const GROWN: [&str; 2] = ["dog, large", "<b>&"];
const METRICS: [&str; 4] = [
    "accuracy",
    "balanced_accuracy",
    "macro_f1",
    "grown_class_recall",
];

/// A deterministic wiggle in [-1, 1] so the invented figures differ from cell to cell.
fn wiggle(i: usize) -> f64 {
    ((i as f64) * 1.618_034).sin()
}

/// A configuration as run, with markup in a class name the page must escape.
fn config() -> ResultsConfig {
    ResultsConfig::of(&AssessConfig {
        methods: vec![MethodKind::None, MethodKind::Interpolate],
        probes: vec![ProbeKind::Knn],
        folds: 5,
        repeats: 1,
        target: Target::Median,
        classes: Some(vec!["<script>".into()]),
        augment: AugmentParams::default(),
        unit_norm: UnitNorm::Auto,
        knn: KnnParams::default(),
        linear: LinearParams::default(),
        interval: IntervalKind::default(),
        seed: 7,
        diagnostics: true,
    })
}

/// Invented test data (see the module comment).
fn results() -> AssessResults {
    let mut folds = Vec::new();
    let mut summary = Vec::new();
    let mut per_class = Vec::new();
    let mut k = 0usize;
    for (mi, method) in METHODS.iter().enumerate() {
        for probe in PROBES {
            for fold in 0..5 {
                k += 1;
                let mut metrics: Vec<(Metric, f64)> = METRICS
                    .iter()
                    .map(|m| (m.parse().unwrap(), 0.7 + 0.05 * wiggle(k + m.len())))
                    .collect();
                if probe == "linear" {
                    metrics.push((Metric::LogLoss, 0.6 + 0.1 * wiggle(k)));
                    metrics.push((Metric::Ece, 0.04));
                }
                let mut class_recall: Vec<f64> = (0..CLASSES.len())
                    .map(|c| 0.6 + 0.2 * wiggle(k * 7 + c))
                    .collect();
                if fold == 3 {
                    class_recall[3] = f64::NAN; // no test rows of that class in this fold
                }
                folds.push(FoldRecord {
                    repeat: 0,
                    fold,
                    method: method.parse().unwrap(),
                    probe: probe.parse().unwrap(),
                    train_real: 400,
                    train_synthetic: if mi == 0 { 0 } else { 120 },
                    test: 100,
                    metrics,
                    class_recall,
                    converged: (probe == "linear").then_some(fold != 2),
                    outcome: Default::default(),
                });
            }
            for (j, metric) in METRICS.iter().enumerate() {
                k += 1;
                let base = mi == 0;
                let d = if base { 0.0 } else { 0.03 * wiggle(k) + 0.01 };
                summary.push(SummaryRow {
                    method: method.parse().unwrap(),
                    probe: probe.parse().unwrap(),
                    metric: metric.parse().unwrap(),
                    mean: 0.7 + 0.02 * j as f64 + d,
                    delta_mean: d,
                    delta_ci_low: if base { 0.0 } else { d - 0.02 },
                    delta_ci_high: if base { 0.0 } else { d + 0.02 },
                    p_value: if base { f64::NAN } else { 0.04 },
                    folds: 5,
                    no_interval: None,
                    applies: true,
                });
            }
            for (c, class) in CLASSES.iter().enumerate() {
                k += 1;
                let base = mi == 0;
                let grown = GROWN.contains(class);
                let d = if base {
                    0.0
                } else if grown {
                    0.08 + 0.05 * wiggle(k)
                } else {
                    -0.03 + 0.02 * wiggle(k)
                };
                per_class.push(ClassRow {
                    method: method.parse().unwrap(),
                    probe: probe.parse().unwrap(),
                    class: class.to_string(),
                    grown,
                    recall_mean: 0.6 + 0.05 * c as f64 + d,
                    precision_pooled: f64::NAN,
                    f1_pooled: f64::NAN,
                    precision_delta_mean: d / 2.0,
                    precision_delta_ci_low: d / 2.0 - 0.03,
                    precision_delta_ci_high: d / 2.0 + 0.03,
                    precision_p_value: 0.3,
                    f1_delta_mean: d / 3.0,
                    f1_delta_ci_low: d / 3.0 - 0.03,
                    f1_delta_ci_high: d / 3.0 + 0.03,
                    f1_p_value: 0.4,
                    delta_mean: d,
                    delta_ci_low: d - 0.03,
                    delta_ci_high: d + 0.03,
                    p_value: 0.2,
                    folds: 5,
                    no_interval: None,
                });
            }
        }
    }
    // Pin two rows to known values the tests look for, and blank one out.
    let pinned = summary
        .iter_mut()
        .find(|s| s.method == "interpolate" && s.probe == "knn" && s.metric == "macro_f1")
        .unwrap();
    pinned.mean = 0.8123;
    pinned.delta_mean = 0.0341;
    pinned.delta_ci_low = -0.0102;
    pinned.delta_ci_high = 0.0562;
    let base = summary
        .iter_mut()
        .find(|s| s.method == "none" && s.probe == "knn" && s.metric == "macro_f1")
        .unwrap();
    base.mean = 0.7782;
    let blank = summary
        .iter_mut()
        .find(|s| {
            s.method == "extrapolate" && s.probe == "linear" && s.metric == "grown_class_recall"
        })
        .unwrap();
    blank.delta_mean = f64::NAN;
    blank.delta_ci_low = f64::NAN;
    blank.delta_ci_high = f64::NAN;
    per_class
        .iter_mut()
        .find(|c| c.method == "principal-noise" && c.probe == "linear" && c.class == "cat")
        .unwrap()
        .delta_mean = f64::NAN;

    let mut diagnostics = Vec::new();
    let mut scatter = Vec::new();
    for (mi, method) in METHODS.iter().enumerate().skip(1) {
        for (gi, class) in GROWN.iter().enumerate() {
            diagnostics.push(DiagnosticRow {
                method: method.parse().unwrap(),
                class: class.to_string(),
                synthetic_rows: 60.0,
                intrusion_synthetic: 0.05 * mi as f64,
                intrusion_real: 0.04,
                distance_ratio: if mi == 2 && gi == 1 {
                    f64::NAN
                } else {
                    0.8 + 0.2 * mi as f64
                },
                distance_measure: "euclidean distance".into(),
                prdc_k: 5.0,
                precision: 0.9,
                recall: 0.5,
                density: 1.1,
                coverage: 0.7,
            });
            let pt = |i: usize, cx: f32, s: f32| -> [f32; 2] {
                [cx + s * wiggle(i) as f32, s * wiggle(i * 3 + 1) as f32]
            };
            let mut synthetic: Vec<[f32; 2]> = (0..40)
                .map(|i| pt(i + 100, 0.3, 0.6 + 0.3 * mi as f32))
                .collect();
            synthetic.push([f32::NAN, 0.0]); // must be skipped, not drawn
            scatter.push(Scatter {
                method: method.parse().unwrap(),
                class: class.to_string(),
                real: (0..30).map(|i| pt(i, 0.0, 1.0)).collect(),
                synthetic,
                others: (0..50).map(|i| pt(i + 500, 3.0, 1.2)).collect(),
                rivals: vec!["cat".into(), "say \"hi\"".into()],
                others_rival: (0..50).map(|i| i % 2).collect(),
            });
        }
    }

    AssessResults {
        embloom_version: "0.1.0".into(),
        command_line: "embloom assess 'data/test <scenario>.npz'".into(),
        input: InputInfo {
            path: "data/test <scenario>.npz".into(),
            sha256: "ab".repeat(32),
            rows: 500,
            dims: 64,
            classes: CLASSES.iter().map(|c| c.to_string()).collect(),
            class_counts: vec![250, 40, 30, 180],
            labels_file: None,
        },
        config: config(),
        seed: 7,
        split: SplitKind::Stratified,
        methods: METHODS.iter().map(|m| m.parse().unwrap()).collect(),
        probes: PROBES.iter().map(|p| p.parse().unwrap()).collect(),
        grown_classes: GROWN.iter().map(|c| c.to_string()).collect(),
        folds,
        summary,
        per_class,
        confusion: Vec::new(),
        confusion_changes: confusion_changes(),
        diagnostics,
        scatter,
        sentences: vec![
            "interpolate with the knn probe raised macro-F1 by 0.034 (test data sentence).".into(),
        ],
        warnings: vec!["class \"<b>&\" has only 30 rows (test data warning).".into()],
        work: Default::default(),
        elapsed_seconds: 1.5,
    }
}

/// Invented test data (see the module comment): two rises and one fall for interpolate · knn.
fn confusion_changes() -> Vec<ConfusionChange> {
    [
        ("dog, large", "<b>&", 3, 9, 6),
        ("<b>&", "dog, large", 1, 4, 3),
        ("cat", "<b>&", 5, 2, -3),
    ]
    .into_iter()
    .map(|(t, p, b, n, d)| ConfusionChange {
        method: "interpolate".parse().unwrap(),
        probe: ProbeKind::Knn,
        true_class: t.into(),
        predicted_class: p.into(),
        baseline_count: b,
        count: n,
        change: d,
    })
    .collect()
}

fn squash(s: &str) -> String {
    s.split_whitespace().collect::<Vec<_>>().join(" ")
}

/// A small RFC 4180 reader: quoted fields may hold commas, doubled quotes and line breaks.
fn parse_csv(text: &str) -> Vec<Vec<String>> {
    let mut rows = Vec::new();
    let mut row = Vec::new();
    let mut field = String::new();
    let mut quoted = false;
    let mut chars = text.chars().peekable();
    while let Some(c) = chars.next() {
        if quoted {
            match c {
                '"' if chars.peek() == Some(&'"') => {
                    chars.next();
                    field.push('"');
                }
                '"' => quoted = false,
                c => field.push(c),
            }
        } else {
            match c {
                '"' => quoted = true,
                ',' => row.push(std::mem::take(&mut field)),
                '\n' => {
                    row.push(std::mem::take(&mut field));
                    rows.push(std::mem::take(&mut row));
                }
                c => field.push(c),
            }
        }
    }
    assert!(!quoted, "unterminated quoted field");
    assert!(
        field.is_empty() && row.is_empty(),
        "last line lacks a line end"
    );
    rows
}

#[test]
fn table_shows_every_method_and_formatted_deltas() {
    let r = results();
    let t = terminal_table(&r);
    for m in METHODS {
        assert!(t.contains(m), "method {m} missing");
    }
    // Format "mean (Δ +d.ddd [lo, hi])" from the brief, applied to the pinned row.
    assert!(t.contains("0.812 (Δ +0.034 [-0.010, +0.056])"), "{t}");
    // The baseline shows its mean only.
    let none_line = t
        .lines()
        .find(|l| l.starts_with("knn") && l.contains(" none ") && l.contains("0.778"))
        .expect("a knn · none row with its macro-F1 mean");
    assert!(!none_line.contains('Δ'), "{none_line}");
    // NaN deltas read as n/a, never as NaN.
    assert!(t.contains("n/a"));
    assert!(!t.contains("NaN"));
    // Readable at 100 columns (counted in characters, not bytes).
    for line in t.lines() {
        assert!(line.chars().count() <= 100, "too wide: {line:?}");
    }
    // One row per method × probe in each table: 8 rows, and the three metric headers.
    for h in ["balanced accuracy", "macro-F1", "grown-class recall"] {
        assert!(t.contains(h), "header {h} missing");
    }
    let flat = squash(&t);
    assert!(flat.contains(&squash(CAUTION)));
    assert!(flat.contains("raised macro-F1 by 0.034"));
    assert!(flat.contains("warning: class \"<b>&\" has only 30 rows"));
    assert!(!t.contains('\x1b'), "no colour codes");
}

#[test]
fn table_columns_are_aligned() {
    let t = terminal_table(&results());
    // Each table's rule line marks the column starts; every data row must have its cells start
    // at the same character positions.
    let lines: Vec<&str> = t.lines().collect();
    let mut tables = 0;
    for (i, rule) in lines.iter().enumerate() {
        if !rule.starts_with("---") {
            continue;
        }
        tables += 1;
        let starts: Vec<usize> = rule
            .char_indices()
            .filter(|(j, c)| *c == '-' && (*j == 0 || rule.as_bytes()[j - 1] == b' '))
            .map(|(j, _)| j)
            .collect();
        for row in lines[i + 1..].iter().take_while(|l| !l.is_empty()) {
            let chars: Vec<char> = row.chars().collect();
            for s in starts.iter().skip(1) {
                assert!(chars.len() > *s, "short row {row:?}");
                assert_eq!(chars[s - 1], ' ', "misaligned before col {s}: {row:?}");
                assert_ne!(chars[*s], ' ', "misaligned at col {s}: {row:?}");
            }
        }
    }
    assert!(tables >= 1);
}

#[test]
fn csv_files_parse_back_with_consistent_shape() {
    let r = results();
    for (text, records, cols) in [
        (summary_csv(&r), r.summary.len(), 10),
        (per_class_csv(&r), r.per_class.len(), 21),
        (confusion_changes_csv(&r), r.confusion_changes.len(), 7),
        (diagnostics_csv(&r), r.diagnostics.len(), 10),
        // 8 fixed columns + 6 metrics (4 shared, log_loss and ece for linear) + 4 classes.
        (folds_csv(&r), r.folds.len(), 8 + 6 + 4),
    ] {
        let rows = parse_csv(&text);
        assert_eq!(rows.len(), records + 1, "header + one line per record");
        for row in &rows {
            assert_eq!(row.len(), cols, "{row:?}");
        }
    }

    let rows = parse_csv(&per_class_csv(&r));
    let class_col = rows[0].iter().position(|h| h == "class").unwrap();
    let names: Vec<&str> = rows[1..].iter().map(|r| r[class_col].as_str()).collect();
    for c in CLASSES {
        assert!(names.contains(&c), "class {c:?} did not round-trip");
    }
    // NaN is an empty field; other numbers parse back exactly.
    let delta_col = rows[0].iter().position(|h| h == "delta_mean").unwrap();
    let nan_row = r
        .per_class
        .iter()
        .position(|c| c.delta_mean.is_nan())
        .unwrap();
    assert_eq!(rows[nan_row + 1][delta_col], "");
    for (row, rec) in rows[1..].iter().zip(&r.per_class) {
        if rec.delta_mean.is_finite() {
            assert_eq!(row[delta_col].parse::<f64>().unwrap(), rec.delta_mean);
        }
    }

    let folds = parse_csv(&folds_csv(&r));
    let header = &folds[0];
    assert!(header.contains(&"recall:dog, large".to_string()));
    assert!(header.contains(&"log_loss".to_string()));
    let ll = header.iter().position(|h| h == "log_loss").unwrap();
    let probe = header.iter().position(|h| h == "probe").unwrap();
    let conv = header.iter().position(|h| h == "converged").unwrap();
    for row in &folds[1..] {
        // k-NN records have no log loss and no convergence flag: empty fields.
        assert_eq!(row[ll].is_empty(), row[probe] == "knn");
        assert_eq!(row[conv].is_empty(), row[probe] == "knn");
    }
}

/// The SVG fragments of a page (each `<svg …>…</svg>`).
fn svg_blocks(html: &str) -> Vec<&str> {
    let mut out = Vec::new();
    let mut rest = html;
    while let Some(start) = rest.find("<svg") {
        let end = rest[start..].find("</svg>").expect("unclosed <svg>") + start + 6;
        out.push(&rest[start..end]);
        rest = &rest[end..];
    }
    out
}

/// Every attribute value of every tag in `svg`, as (name, value).
fn attributes(svg: &str) -> Vec<(String, String)> {
    let mut out = Vec::new();
    for tag in svg.split('<').skip(1) {
        let tag = tag.split('>').next().unwrap_or("");
        let mut rest = tag;
        while let Some(eq) = rest.find("=\"") {
            let name = rest[..eq].rsplit(' ').next().unwrap_or("").to_string();
            let after = &rest[eq + 2..];
            let close = after.find('"').expect("unterminated attribute");
            out.push((name, after[..close].to_string()));
            rest = &after[close + 1..];
        }
    }
    out
}

#[test]
fn html_is_self_contained_well_formed_and_escaped() {
    let r = results();
    let html = html_report(&r);
    assert!(html.starts_with("<!DOCTYPE html>"));
    assert_eq!(html.matches("<svg").count(), html.matches("</svg>").count());
    // One delta chart, one heatmap, one scatter per entry.
    assert_eq!(svg_blocks(&html).len(), 2 + r.scatter.len());
    for id in [
        "header",
        "caution",
        "summary",
        "chart-deltas",
        "chart-class-recall",
        "chart-scatter",
        "per-class",
        "confusion",
        "diagnostics",
        "notes",
    ] {
        assert!(
            html.contains(&format!("id=\"{id}\"")),
            "section {id} missing"
        );
    }
    // No scripts and no external resources.
    assert!(!html.contains("<script"));
    assert!(!html.contains("src="));
    assert!(!html.contains("href="));
    // Text is escaped: the class `<b>&` and the path's `<scenario>` never appear raw.
    assert!(html.contains("&lt;b&gt;&amp;"));
    assert!(!html.contains("<b>&"));
    assert!(!html.contains("<scenario>"));
    assert!(html.contains("&lt;script&gt;"), "config JSON escaped");
    assert!(squash(&html).contains(&squash(CAUTION)));
    // Every class name (escaped) is in the heatmap; every scatter has its "class — method" title.
    let heatmap = svg_blocks(&html)[1];
    assert!(heatmap.contains("dog, large") && heatmap.contains("say &quot;hi&quot;"));
    assert!(html.contains("&lt;b&gt;&amp; — extrapolate"));

    let numeric = [
        "x",
        "y",
        "x1",
        "y1",
        "x2",
        "y2",
        "cx",
        "cy",
        "r",
        "width",
        "height",
        "font-size",
        "stroke-width",
        "opacity",
    ];
    for svg in svg_blocks(&html) {
        for (name, value) in attributes(svg) {
            let lower = value.to_ascii_lowercase();
            assert!(
                !lower.contains("nan") && !lower.contains("inf"),
                "{name}=\"{value}\""
            );
            if numeric.contains(&name.as_str()) {
                let v: f64 = value
                    .parse()
                    .unwrap_or_else(|_| panic!("{name}=\"{value}\""));
                assert!(v.is_finite());
            }
            if name == "points" || name == "viewBox" {
                for part in value.split([' ', ',']) {
                    assert!(part.parse::<f64>().is_ok(), "{name}=\"{value}\"");
                }
            }
        }
    }
    // The NaN synthetic point is skipped: 40 finite triangles per scatter.
    let first = svg_blocks(&html)[2];
    assert_eq!(
        first.matches("<polygon").count(),
        40 + 1,
        "40 points + 1 legend marker"
    );
}

#[test]
fn report_dir_is_written_atomically() {
    let base = tempfile::tempdir().unwrap();
    let dir = base.path().join("run1");
    let r = results();
    let files = [
        "results.json",
        "summary.csv",
        "per_class.csv",
        "confusion_changes.csv",
        "diagnostics.csv",
        "folds.csv",
        "report.html",
    ];
    write_report_dir(&dir, &r, false).unwrap();
    for f in files {
        assert!(dir.join(f).is_file(), "{f} missing");
    }
    let listing = |p: &std::path::Path| -> Vec<String> {
        let mut v: Vec<String> = std::fs::read_dir(p)
            .unwrap()
            .map(|e| e.unwrap().file_name().to_string_lossy().into_owned())
            .collect();
        v.sort();
        v
    };
    // The seven files and embloom's manifest (which lets --force recognise the folder).
    assert_eq!(listing(&dir).len(), files.len() + 1);
    assert!(dir.join(".embloom-manifest").is_file());
    assert_eq!(
        listing(base.path()),
        vec!["run1".to_string()],
        "no temp folder left"
    );

    // results.json: serde_json writes NaN as null, so the file is valid JSON.
    let json: serde_json::Value =
        serde_json::from_str(&std::fs::read_to_string(dir.join("results.json")).unwrap()).unwrap();
    let p0 = &json["summary"][0]["p_value"];
    assert!(
        p0.is_null(),
        "NaN p-value of the baseline must be null, got {p0}"
    );
    assert_eq!(json["input"]["classes"][2], "<b>&");

    // An existing folder is refused without force, and left untouched.
    std::fs::write(dir.join("marker.txt"), "old").unwrap();
    let err = write_report_dir(&dir, &r, false).unwrap_err().to_string();
    assert!(err.contains("`force`"), "{err}");
    assert!(dir.join("marker.txt").exists());
    assert_eq!(listing(base.path()), vec!["run1".to_string()]);

    // With force, a folder holding a file embloom did not write is refused and kept ...
    let err = write_report_dir(&dir, &r, true).unwrap_err().to_string();
    assert!(err.contains("marker.txt"), "{err}");
    assert!(dir.join("marker.txt").exists());
    // ... and embloom's own report is replaced as a whole.
    std::fs::remove_file(dir.join("marker.txt")).unwrap();
    write_report_dir(&dir, &r, true).unwrap();
    // The seven files and embloom's manifest (which lets --force recognise the folder).
    assert_eq!(listing(&dir).len(), files.len() + 1);
    assert!(dir.join(".embloom-manifest").is_file());
    assert_eq!(
        listing(base.path()),
        vec!["run1".to_string()],
        "no temp or old folder left"
    );

    // A file in the way is not replaced, even with force.
    let file = base.path().join("plain.txt");
    std::fs::write(&file, "x").unwrap();
    assert!(write_report_dir(&file, &r, true).is_err());
    assert_eq!(std::fs::read_to_string(&file).unwrap(), "x");

    // A missing parent is created.
    let nested = base.path().join("a").join("b");
    write_report_dir(&nested, &r, false).unwrap();
    assert!(nested.join("report.html").is_file());
}

#[test]
fn empty_results_render_without_panicking() {
    // An assessment that produced no rows at all (e.g. only `none` and no folds) must still
    // give a readable table, header-only CSVs and a valid page (common practice, no source).
    let mut r = results();
    r.methods = vec![MethodId::BASELINE];
    r.folds.clear();
    r.summary.clear();
    r.per_class.clear();
    r.confusion_changes.clear();
    r.diagnostics.clear();
    r.scatter.clear();
    r.sentences.clear();
    r.warnings.clear();
    let t = terminal_table(&r);
    assert!(squash(&t).contains(&squash(CAUTION)));
    assert!(t.contains("none"));
    for csv in [
        summary_csv(&r),
        per_class_csv(&r),
        confusion_changes_csv(&r),
        diagnostics_csv(&r),
        folds_csv(&r),
    ] {
        assert_eq!(parse_csv(&csv).len(), 1, "header only");
    }
    let html = html_report(&r);
    assert_eq!(html.matches("<svg").count(), 0);
    assert!(html.contains("No method besides none was assessed."));
    assert!(html.contains("id=\"chart-scatter\""));
}

/// The text of the page's section `id`.
fn section<'a>(html: &'a str, id: &str) -> &'a str {
    let start = html
        .find(&format!("<section id=\"{id}\""))
        .unwrap_or_else(|| panic!("section {id} missing"));
    let end = html[start..].find("</section>").unwrap() + start;
    &html[start..end]
}

/// Byte positions of each needle in `hay`, in the order given (each must occur).
fn positions(hay: &str, needles: &[&str]) -> Vec<usize> {
    needles
        .iter()
        .map(|n| hay.find(n).unwrap_or_else(|| panic!("{n:?} missing")))
        .collect()
}

#[test]
fn classes_read_largest_first_in_the_heatmap_and_the_tables() {
    // class_counts are [250, 40, 30, 180], so largest first is cat, say "hi", dog, large,
    // <b>& (the report's own rule: largest class first, sizes in brackets).
    let r = results();
    let html = html_report(&r);
    let heatmap = svg_blocks(&html)[1];
    let order = [
        "cat (250)",
        "say &quot;hi&quot; (180)",
        "dog, large (40)",
        "&lt;b&gt;&amp; (30)",
    ];
    let at = positions(heatmap, &order);
    assert!(at.windows(2).all(|w| w[0] < w[1]), "{at:?}");
    let table = section(&html, "per-class");
    let at = positions(table, &order);
    assert!(at.windows(2).all(|w| w[0] < w[1]), "{at:?}");
    // Diagnostics: within each method, the grown classes largest first (dog, large before <b>&).
    let diag = section(&html, "diagnostics");
    let at = positions(diag, &["dog, large", "&lt;b&gt;&amp;"]);
    assert!(at[0] < at[1]);
}

#[test]
fn heatmap_shows_recall_and_delta_and_outlines_clear_cells() {
    let r = results();
    let html = html_report(&r);
    let heatmap = svg_blocks(&html)[1];
    // Each cell's two lines: the recall (3 decimals) and its Δ.
    let c = r
        .per_class
        .iter()
        .find(|c| c.method == "interpolate" && c.probe == ProbeKind::Knn && c.class == "cat")
        .unwrap();
    assert!(heatmap.contains(&format!(">{:.3}</text>", c.recall_mean)));
    assert!(heatmap.contains(&format!(">Δ {:+.3}</text>", c.delta_mean)));
    // One outline per compared cell whose interval excludes zero (definition of a 95%
    // interval test at the 5% level).
    let clear = r
        .per_class
        .iter()
        .filter(|c| !c.method.is_baseline())
        .filter(|c| c.delta_ci_low > 0.0 || c.delta_ci_high < 0.0)
        .count();
    assert!(clear > 0 && clear < r.per_class.len());
    assert_eq!(heatmap.matches("class=\"excludes-zero\"").count(), clear);
}

#[test]
fn p_values_are_printed_in_the_tables() {
    let html = html_report(&results());
    // Invented p-values of the test data: 0.04 in the summary, 0.2 / 0.3 / 0.4 per class.
    let summary = section(&html, "summary");
    assert!(summary.contains("<span class=\"p\">p = 0.040</span>"));
    assert!(!summary.contains("title="), "not only on hover");
    let per_class = section(&html, "per-class");
    for p in ["p = 0.200", "p = 0.300", "p = 0.400"] {
        assert!(per_class.contains(p), "{p}");
    }
    // The confusion table lists the invented changes with their signs.
    let confusion = section(&html, "confusion");
    assert!(confusion.contains("dog, large") && confusion.contains(">+6<"));
    assert!(confusion.contains(">-3<"));
}

#[test]
fn scatters_have_axis_values_and_name_their_rivals_and_the_classes_left_out() {
    let mut r = results();
    let html = html_report(&r);
    let first = svg_blocks(&html)[2];
    // Tick values: numbers printed as text on both axes (at least two per axis).
    let numbers = first
        .split("</text>")
        .filter_map(|t| t.rsplit('>').next())
        .filter(|t| t.parse::<f64>().is_ok())
        .count();
    assert!(numbers >= 4, "{numbers} tick values");
    assert!(first.contains("rival: cat (25)") && first.contains("rival: say &quot;hi&quot; (25)"));
    // Every grown class here has a view, so nothing is listed ...
    assert!(!html.contains("id=\"scatter-rest\""));
    // ... and a grown class without one is named, largest first.
    r.grown_classes.push("cat".into());
    r.grown_classes.push("say \"hi\"".into());
    let html = html_report(&r);
    let rest = html.split("id=\"scatter-rest\"").nth(1).unwrap();
    let rest = &rest[..rest.find("</p>").unwrap()];
    let at = positions(rest, &["cat", "say &quot;hi&quot;"]);
    assert!(at[0] < at[1], "{rest}");
}
