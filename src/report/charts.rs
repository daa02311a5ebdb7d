//! The report's three charts, each composed from the primitives in [`svg`]:
//! 1. [`delta_chart`] — Δ against `none` with 95% intervals, per method × probe, one panel per
//!    headline metric;
//! 2. [`class_heatmap`] — Δ recall per class (rows) and method × probe (columns);
//! 3. [`scatter_plot`] — one small 2-D projection of a grown class's real and synthetic rows.

use crate::assess::results::{AssessResults, Scatter};
use crate::eval::Metric;
use crate::probe::ProbeKind;

use super::figures::{self, Pair, class_names, compared_pairs, find_summary};
use super::svg::{self, Anchor, Area, CellText, Estimate, Font, Marker, Scale};

/// Colours per probe (Okabe–Ito palette, distinguishable with colour-vision deficiencies).
const PROBE_COLOURS: [&str; 6] = [
    "#0072B2", "#D55E00", "#009E73", "#CC79A7", "#E69F00", "#56B4E9",
];

fn probe_colour(r: &AssessResults, probe: ProbeKind) -> &'static str {
    let i = r
        .probes
        .iter()
        .position(|p| *p == probe)
        .unwrap_or(r.probes.len());
    PROBE_COLOURS[i % PROBE_COLOURS.len()]
}

fn pair_label(p: &Pair) -> String {
    format!("{} · {}", p.method, p.probe)
}

/// Chart 1: one panel per headline metric, rows = method × probe, x = Δ against `none`, with
/// a zero line. Each panel has its own x scale (the metrics move by different amounts), and
/// every scale includes zero.
pub fn delta_chart(r: &AssessResults) -> Option<String> {
    let rows = compared_pairs(r);
    if rows.is_empty() {
        return None;
    }
    const PANEL_W: f64 = 250.0;
    const PANEL_GAP: f64 = 54.0;
    const ROW_H: f64 = 26.0;
    const TOP: f64 = 56.0;
    const BOTTOM: f64 = 50.0;
    let label_w = rows
        .iter()
        .map(|p| svg::text_width(&pair_label(p), Font::LABEL.size))
        .fold(80.0, f64::max)
        .min(260.0)
        + 16.0;
    let plot_h = rows.len() as f64 * ROW_H;
    let width = label_w + Metric::HEADLINE.len() as f64 * (PANEL_W + PANEL_GAP);
    let height = TOP + plot_h + BOTTOM;

    let mut out = svg::open(width, height, "Difference against none with 95% intervals");
    // Legend: one entry per probe, plus how to read a mark.
    let mut lx = 8.0;
    for &probe in r.probes.iter() {
        let (entry, w) =
            svg::legend_entry(lx, 16.0, Marker::Dot, probe_colour(r, probe), probe.name());
        out.push_str(&entry);
        lx += w;
    }
    out.push_str(&svg::text(
        lx + 10.0,
        16.0,
        Anchor::Start,
        Font::SMALL,
        "dot = mean Δ over folds, bar = 95% interval, vertical line = no change",
    ));

    for (i, y) in (0..rows.len()).map(|i| (i, TOP + (i as f64 + 0.5) * ROW_H)) {
        if i % 2 == 1 {
            out.push_str(&svg::rect(
                0.0,
                y - ROW_H / 2.0,
                width,
                ROW_H,
                "#f6f6f6",
                None,
                None,
            ));
        }
        out.push_str(&svg::text(
            label_w - 10.0,
            y + 4.0,
            Anchor::End,
            Font::LABEL,
            &pair_label(&rows[i]),
        ));
    }

    for (m, &metric) in Metric::HEADLINE.iter().enumerate() {
        let label = metric.label();
        let x0 = label_w + m as f64 * (PANEL_W + PANEL_GAP);
        let cells: Vec<_> = rows
            .iter()
            .map(|p| find_summary(r, &p.method, p.probe, metric))
            .collect();
        let (lo, hi) = cells
            .iter()
            .flatten()
            .flat_map(|s| [s.delta_mean, s.delta_ci_low, s.delta_ci_high])
            .filter(|v| v.is_finite())
            .fold((0.0f64, 0.0f64), |(a, b), v| (a.min(v), b.max(v)));
        let (lo, hi) = if hi - lo < 1e-6 {
            (lo - 0.01, hi + 0.01)
        } else {
            (lo, hi)
        };
        let ticks = svg::nice_ticks(lo, hi, 4);
        let domain = match (ticks.first(), ticks.last()) {
            (Some(a), Some(b)) => (*a, *b),
            _ => (lo, hi),
        };
        let scale = Scale::new(domain, (x0, x0 + PANEL_W));
        out.push_str(&svg::text(
            x0 + PANEL_W / 2.0,
            TOP - 12.0,
            Anchor::Middle,
            Font::TITLE,
            label,
        ));
        out.push_str(&svg::x_axis(
            &scale,
            &ticks,
            TOP + plot_h,
            TOP,
            &format!("Δ {label} vs none"),
        ));
        out.push_str(&svg::zero_line(&scale, TOP, TOP + plot_h));
        for (i, (p, cell)) in rows.iter().zip(&cells).enumerate() {
            let y = TOP + (i as f64 + 0.5) * ROW_H;
            let colour = probe_colour(r, p.probe);
            let (mean, l, h) = cell
                .map(|s| (s.delta_mean, s.delta_ci_low, s.delta_ci_high))
                .unwrap_or((f64::NAN, f64::NAN, f64::NAN));
            let title = format!(
                "{} — {label}: Δ {} [{}, {}]",
                pair_label(p),
                figures::signed(mean),
                figures::signed(l),
                figures::signed(h)
            );
            let est = Estimate { mean, lo: l, hi: h };
            out.push_str(&svg::interval_mark(&scale, y, est, colour, x0, &title));
        }
    }
    out.push_str(svg::close());
    Some(out)
}

/// How to read a heatmap cell, printed beside its colour legend.
const HEATMAP_KEY: &str = "★ grown class, (n) real rows; cell: recall, then Δ; outlined: 95% interval excludes 0; grey: n/a";

/// Chart 2: per-class recall and its Δ against `none`; rows are classes, largest first (grown
/// ones marked ★ and bold), columns are method × probe; colour on a diverging scale centred at
/// 0, and an outline where the interval excludes zero.
pub fn class_heatmap(r: &AssessResults) -> Option<String> {
    let cols = compared_pairs(r);
    let classes = class_names(r);
    if cols.is_empty() || classes.is_empty() || r.per_class.is_empty() {
        return None;
    }
    const ROW_H: f64 = 36.0;
    const TOP: f64 = 48.0;
    let grown = |c: &str| r.grown_classes.iter().any(|g| g == c);
    let row_label = |c: &str| {
        let star = if grown(c) { "★ " } else { "" };
        match figures::class_size(r, c) {
            Some(n) => format!("{star}{c} ({n})"),
            None => format!("{star}{c}"),
        }
    };
    let label_w = classes
        .iter()
        .map(|c| svg::text_width(&row_label(c), Font::LABEL.size))
        .fold(60.0, f64::max)
        .min(260.0)
        + 16.0;
    let cell_w = cols
        .iter()
        .flat_map(|p| [p.method.to_string(), p.probe.to_string()])
        .map(|s| svg::text_width(&s, Font::SMALL.size))
        .fold(56.0, f64::max)
        + 12.0;
    let grid_h = classes.len() as f64 * ROW_H;
    let width = (label_w + cols.len() as f64 * cell_w + 10.0)
        .max(label_w + 340.0 + svg::text_width(HEATMAP_KEY, Font::SMALL.size));
    let height = TOP + grid_h + 76.0;

    let rows = figures::class_rows(r);
    let lookup = |class: &str, p: &Pair| {
        rows.get(&(class, p.method.name().into_owned(), p.probe))
            .copied()
    };
    let max_abs = r
        .per_class
        .iter()
        .filter(|c| !c.method.is_baseline())
        .map(|c| c.delta_mean.abs())
        .filter(|v| v.is_finite())
        .fold(0.0f64, f64::max);
    // Round the colour range up to a step of 0.05 (at least 0.05) so the legend reads cleanly.
    let max_abs = ((max_abs / 0.05).ceil() * 0.05).max(0.05);

    let mut out = svg::open(width, height, "Per-class difference in recall against none");
    for (j, p) in cols.iter().enumerate() {
        let cx = label_w + (j as f64 + 0.5) * cell_w;
        out.push_str(&svg::text(
            cx,
            TOP - 22.0,
            Anchor::Middle,
            Font::SMALL,
            &p.method.name(),
        ));
        out.push_str(&svg::text(
            cx,
            TOP - 8.0,
            Anchor::Middle,
            Font::SMALL,
            p.probe.name(),
        ));
    }
    for (i, class) in classes.iter().enumerate() {
        let y = TOP + i as f64 * ROW_H;
        let font = Font {
            bold: grown(class),
            ..Font::LABEL
        };
        out.push_str(&svg::text(
            label_w - 10.0,
            y + ROW_H / 2.0 + 4.0,
            Anchor::End,
            font,
            &row_label(class),
        ));
        for (j, p) in cols.iter().enumerate() {
            let x = label_w + j as f64 * cell_w;
            let row = lookup(class, p);
            let v = row.map(|c| c.delta_mean).unwrap_or(f64::NAN);
            let title = match row {
                Some(c) => format!(
                    "{class} — {}: recall {} (Δ {} [{}, {}], {})",
                    pair_label(p),
                    figures::value(c.recall_mean),
                    figures::signed(c.delta_mean),
                    figures::signed(c.delta_ci_low),
                    figures::signed(c.delta_ci_high),
                    figures::p_label(c.p_value)
                ),
                None => format!("{class} — {}: n/a", pair_label(p)),
            };
            let recall = row.map_or(f64::NAN, |c| c.recall_mean);
            let lines = [figures::value(recall), format!("Δ {}", figures::signed(v))];
            let marked = row.is_some_and(|c| c.delta_ci_low > 0.0 || c.delta_ci_high < 0.0);
            out.push_str(&svg::heat_cell(
                Area {
                    x,
                    y,
                    w: cell_w,
                    h: ROW_H,
                },
                v,
                max_abs,
                CellText {
                    lines: &[&lines[0], &lines[1]],
                    marked,
                },
                &title,
            ));
        }
    }
    let ly = TOP + grid_h + 34.0;
    out.push_str(&svg::colour_legend(
        label_w,
        ly,
        300.0,
        12.0,
        max_abs,
        "Δ recall vs none (red = lower, blue = higher)",
    ));
    out.push_str(&svg::text(
        label_w + 330.0,
        ly + 10.0,
        Anchor::Start,
        Font::SMALL,
        HEATMAP_KEY,
    ));
    out.push_str(svg::close());
    Some(out)
}

/// Colours and markers for the scatter's groups: the grown class's real and synthetic rows,
/// then one colour per rival class (greys and muted tones, so the grown class stands out).
const REAL: (Marker, &str) = (Marker::Dot, "#0072B2");
const SYNTHETIC: (Marker, &str) = (Marker::Triangle, "#E69F00");
const RIVAL_COLOURS: [&str; 3] = ["#7a7a7a", "#CC79A7", "#009E73"];

/// Chart 3 (one per entry): the class's real rows, its synthetic rows and rows of its nearest
/// rival classes, on principal components fitted to the class and its rivals. Both axes share
/// one scale, so distances look as they are, and both carry tick values.
pub fn scatter_plot(s: &Scatter) -> String {
    const W: f64 = 320.0;
    const PAD_L: f64 = 46.0;
    const PAD_T: f64 = 30.0;
    const PLOT: f64 = 256.0;
    let finite = |p: &&[f32; 2]| p[0].is_finite() && p[1].is_finite();
    let all: Vec<&[f32; 2]> = s
        .real
        .iter()
        .chain(&s.synthetic)
        .chain(&s.others)
        .filter(finite)
        .collect();
    let range = |k: usize| {
        all.iter()
            .map(|p| p[k] as f64)
            .fold((f64::INFINITY, f64::NEG_INFINITY), |(a, b), v| {
                (a.min(v), b.max(v))
            })
    };
    let (x_lo, x_hi) = range(0);
    let (y_lo, y_hi) = range(1);
    let span = ((x_hi - x_lo).max(y_hi - y_lo) * 1.08).max(1e-9);
    let (cx, cy) = ((x_lo + x_hi) / 2.0, (y_lo + y_hi) / 2.0);
    let sx = Scale::new((cx - span / 2.0, cx + span / 2.0), (PAD_L, PAD_L + PLOT));
    // SVG's y grows downwards; flip so PC 2 points up.
    let sy = Scale::new((cy - span / 2.0, cy + span / 2.0), (PAD_T + PLOT, PAD_T));
    let legend_rows = 2 + s.rivals.len();
    let h = PAD_T + PLOT + 40.0 + legend_rows as f64 * 16.0;

    let title = format!("{} — {}", s.class, s.method);
    let mut out = svg::open(W, h, &title);
    out.push_str(&svg::text(
        W / 2.0,
        18.0,
        Anchor::Middle,
        Font::TITLE,
        &title,
    ));
    out.push_str(&svg::rect(
        PAD_L,
        PAD_T,
        PLOT,
        PLOT,
        "#fcfcfc",
        Some("#bbb"),
        None,
    ));
    if all.is_empty() {
        out.push_str(&svg::text(
            PAD_L + PLOT / 2.0,
            PAD_T + PLOT / 2.0,
            Anchor::Middle,
            Font::SMALL,
            "n/a: no points",
        ));
    } else {
        out.push_str(&svg::scatter_ticks(&sx, &sy));
    }
    let rival_colour = |j: usize| RIVAL_COLOURS[j % RIVAL_COLOURS.len()];
    out.push_str(r#"<g opacity="0.7">"#);
    for (p, j) in s
        .others
        .iter()
        .zip(s.others_rival.iter().copied().chain(std::iter::repeat(0)))
    {
        if finite(&p) {
            out.push_str(&svg::marker(
                Marker::Square,
                sx.at(p[0] as f64),
                sy.at(p[1] as f64),
                2.5,
                rival_colour(j),
            ));
        }
    }
    out.push_str("</g>");
    for (points, (shape, colour), r) in [(&s.real, REAL, 3.0), (&s.synthetic, SYNTHETIC, 2.6)] {
        out.push_str(r#"<g opacity="0.8">"#);
        for p in points.iter().filter(finite) {
            out.push_str(&svg::marker(
                shape,
                sx.at(p[0] as f64),
                sy.at(p[1] as f64),
                r,
                colour,
            ));
        }
        out.push_str("</g>");
    }
    out.push_str(&svg::text(
        PAD_L + PLOT / 2.0,
        PAD_T + PLOT + 30.0,
        Anchor::Middle,
        Font::SMALL,
        "PC 1 (class and rivals)",
    ));
    out.push_str(&svg::rotated_text(
        12.0,
        PAD_T + PLOT / 2.0,
        Anchor::Middle,
        Font::SMALL,
        -90.0,
        "PC 2",
    ));
    // Legend, one entry a row so long class names fit the small panel.
    let count = |pts: &[[f32; 2]]| pts.iter().filter(finite).count();
    let mut y = PAD_T + PLOT + 54.0;
    let mut entry = |out: &mut String, shape: Marker, colour: &str, label: String| {
        out.push_str(&svg::legend_entry(12.0, y, shape, colour, &label).0);
        y += 16.0;
    };
    entry(
        &mut out,
        REAL.0,
        REAL.1,
        format!("{}, real ({})", s.class, count(&s.real)),
    );
    entry(
        &mut out,
        SYNTHETIC.0,
        SYNTHETIC.1,
        format!("{}, synthetic ({})", s.class, count(&s.synthetic)),
    );
    for (j, rival) in s.rivals.iter().enumerate() {
        let n = s
            .others
            .iter()
            .zip(&s.others_rival)
            .filter(|(p, k)| **k == j && finite(p))
            .count();
        entry(
            &mut out,
            Marker::Square,
            rival_colour(j),
            format!("rival: {rival} ({n})"),
        );
    }
    out.push_str(svg::close());
    out
}
