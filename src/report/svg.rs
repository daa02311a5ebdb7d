//! Small SVG building blocks for the report's charts: a linear scale, tick choice, axes, a
//! mean-with-interval mark, a heatmap cell with its diverging colour, scatter markers and
//! legend entries.
//!
//! Every function that takes coordinates returns an empty string when any of them is not
//! finite, so a NaN in the results can never reach an attribute and make the SVG invalid;
//! callers show "n/a" where a mark is missing. All text goes through [`escape`].

use std::fmt::Write;

use super::escape::escape;

/// Text colour used for axes and labels.
pub const INK: &str = "#222";
/// Colour of grid lines.
pub const GRID: &str = "#e3e3e3";
/// Colour for cells and marks without a value.
pub const MISSING_FILL: &str = "#d9d9d9";

/// A coordinate for an attribute; callers have checked it is finite.
fn n(v: f64) -> String {
    let s = format!("{v:.2}");
    let s = s.trim_end_matches('0').trim_end_matches('.');
    if s == "-0" {
        "0".to_string()
    } else {
        s.to_string()
    }
}

fn finite(vs: &[f64]) -> bool {
    vs.iter().all(|v| v.is_finite())
}

/// Maps a data interval onto a pixel interval.
#[derive(Debug, Clone, Copy)]
pub struct Scale {
    d0: f64,
    d1: f64,
    r0: f64,
    r1: f64,
}

impl Scale {
    /// A scale from `domain` to `range`. An empty or non-finite domain is widened to a unit
    /// interval around its centre so every finite value still maps to a finite pixel.
    pub fn new(domain: (f64, f64), range: (f64, f64)) -> Self {
        let (mut d0, mut d1) = domain;
        if !finite(&[d0, d1]) {
            (d0, d1) = (-1.0, 1.0);
        }
        if d1 - d0 <= f64::EPSILON * d0.abs().max(1.0) {
            let c = (d0 + d1) / 2.0;
            (d0, d1) = (c - 0.5, c + 0.5);
        }
        Scale {
            d0,
            d1,
            r0: range.0,
            r1: range.1,
        }
    }

    /// Pixel position of `v` (NaN stays NaN, and the primitives then draw nothing).
    pub fn at(&self, v: f64) -> f64 {
        self.r0 + (v - self.d0) / (self.d1 - self.d0) * (self.r1 - self.r0)
    }

    pub fn domain(&self) -> (f64, f64) {
        (self.d0, self.d1)
    }
}

/// About `target` round tick values (steps of 1, 2 or 5 × 10ᵏ) covering `[lo, hi]`; the
/// domain should then be widened to the first and last tick.
pub fn nice_ticks(lo: f64, hi: f64, target: usize) -> Vec<f64> {
    if !finite(&[lo, hi]) || hi <= lo || target == 0 {
        return Vec::new();
    }
    let raw = (hi - lo) / target as f64;
    let mag = 10f64.powf(raw.log10().floor());
    let step = [1.0, 2.0, 5.0, 10.0]
        .iter()
        .map(|m| m * mag)
        .find(|s| *s >= raw)
        .unwrap_or(10.0 * mag);
    let first = (lo / step).floor() as i64;
    let last = (hi / step).ceil() as i64;
    (first..=last)
        .map(|i| {
            let v = i as f64 * step;
            if v.abs() < step * 1e-9 { 0.0 } else { v }
        })
        .collect()
}

/// A tick label with as many decimals as the step needs.
pub fn tick_label(v: f64, ticks: &[f64]) -> String {
    let step = ticks
        .windows(2)
        .map(|w| w[1] - w[0])
        .fold(f64::INFINITY, f64::min);
    let decimals = if step.is_finite() && step > 0.0 {
        (-step.log10().floor()).clamp(0.0, 6.0) as usize
    } else {
        2
    };
    let s = format!("{v:.decimals$}");
    if s.starts_with('-') && s.trim_start_matches(['-', '0', '.']).is_empty() {
        s[1..].to_string()
    } else {
        s
    }
}

/// Opening tag of a standalone SVG with an accessible name.
pub fn open(width: f64, height: f64, label: &str) -> String {
    if !finite(&[width, height]) {
        return String::new();
    }
    format!(
        r#"<svg xmlns="http://www.w3.org/2000/svg" width="{w}" height="{h}" viewBox="0 0 {w} {h}" role="img" aria-label="{l}" font-family="system-ui, sans-serif">"#,
        w = n(width),
        h = n(height),
        l = escape(label)
    )
}

pub fn close() -> &'static str {
    "</svg>"
}

/// A straight line; `dash` draws it dashed.
pub fn line(x1: f64, y1: f64, x2: f64, y2: f64, stroke: &str, width: f64, dash: bool) -> String {
    if !finite(&[x1, y1, x2, y2, width]) {
        return String::new();
    }
    format!(
        r#"<line x1="{}" y1="{}" x2="{}" y2="{}" stroke="{}" stroke-width="{}"{}/>"#,
        n(x1),
        n(y1),
        n(x2),
        n(y2),
        stroke,
        n(width),
        if dash {
            r#" stroke-dasharray="4 3""#
        } else {
            ""
        }
    )
}

/// A filled rectangle, optionally outlined, with an optional hover title.
pub fn rect(
    x: f64,
    y: f64,
    w: f64,
    h: f64,
    fill: &str,
    stroke: Option<&str>,
    title: Option<&str>,
) -> String {
    if !finite(&[x, y, w, h]) || w < 0.0 || h < 0.0 {
        return String::new();
    }
    let stroke = stroke
        .map(|s| format!(r#" stroke="{s}" stroke-width="1""#))
        .unwrap_or_default();
    match title {
        Some(t) => format!(
            r#"<rect x="{}" y="{}" width="{}" height="{}" fill="{fill}"{stroke}><title>{}</title></rect>"#,
            n(x),
            n(y),
            n(w),
            n(h),
            escape(t)
        ),
        None => format!(
            r#"<rect x="{}" y="{}" width="{}" height="{}" fill="{fill}"{stroke}/>"#,
            n(x),
            n(y),
            n(w),
            n(h)
        ),
    }
}

/// Horizontal alignment of a text label.
#[derive(Debug, Clone, Copy)]
pub enum Anchor {
    Start,
    Middle,
    End,
}

impl Anchor {
    fn as_str(self) -> &'static str {
        match self {
            Anchor::Start => "start",
            Anchor::Middle => "middle",
            Anchor::End => "end",
        }
    }
}

/// Text style: size in px, fill colour, bold or not.
#[derive(Debug, Clone, Copy)]
pub struct Font<'a> {
    pub size: f64,
    pub fill: &'a str,
    pub bold: bool,
}

impl Font<'_> {
    pub const LABEL: Font<'static> = Font {
        size: 12.0,
        fill: INK,
        bold: false,
    };
    pub const SMALL: Font<'static> = Font {
        size: 11.0,
        fill: INK,
        bold: false,
    };
    pub const TITLE: Font<'static> = Font {
        size: 13.0,
        fill: INK,
        bold: true,
    };
}

/// A text label at (x, y) (y is the baseline), escaped.
pub fn text(x: f64, y: f64, anchor: Anchor, font: Font, content: &str) -> String {
    rotated_text(x, y, anchor, font, 0.0, content)
}

/// A text label turned by `degrees` about its anchor point (for vertical axis titles).
pub fn rotated_text(
    x: f64,
    y: f64,
    anchor: Anchor,
    font: Font,
    degrees: f64,
    content: &str,
) -> String {
    if !finite(&[x, y, font.size, degrees]) {
        return String::new();
    }
    let rotate = if degrees != 0.0 {
        format!(r#" transform="rotate({} {} {})""#, n(degrees), n(x), n(y))
    } else {
        String::new()
    };
    format!(
        r#"<text x="{}" y="{}" text-anchor="{}" font-size="{}" fill="{}"{}{}>{}</text>"#,
        n(x),
        n(y),
        anchor.as_str(),
        n(font.size),
        font.fill,
        if font.bold {
            r#" font-weight="bold""#
        } else {
            ""
        },
        rotate,
        escape(content)
    )
}

/// A horizontal axis at pixel row `y`: the axis line, a tick and a label at each tick value,
/// faint grid lines up to `grid_top`, and the axis title centred below.
pub fn x_axis(scale: &Scale, ticks: &[f64], y: f64, grid_top: f64, title: &str) -> String {
    let mut out = String::new();
    let (d0, d1) = scale.domain();
    let (x0, x1) = (scale.at(d0), scale.at(d1));
    for &t in ticks
        .iter()
        .filter(|t| **t >= d0 - 1e-12 && **t <= d1 + 1e-12)
    {
        let x = scale.at(t);
        out.push_str(&line(x, grid_top, x, y, GRID, 1.0, false));
        out.push_str(&line(x, y, x, y + 4.0, INK, 1.0, false));
        out.push_str(&text(
            x,
            y + 16.0,
            Anchor::Middle,
            Font::SMALL,
            &tick_label(t, ticks),
        ));
    }
    out.push_str(&line(x0, y, x1, y, INK, 1.0, false));
    out.push_str(&text(
        (x0 + x1) / 2.0,
        y + 34.0,
        Anchor::Middle,
        Font::LABEL,
        title,
    ));
    out
}

/// Tick marks and values on the bottom and left edges of a square scatter plot (the two
/// scales share one span, so one set of round steps suits both).
pub fn scatter_ticks(sx: &Scale, sy: &Scale) -> String {
    let mut out = String::new();
    let (x0, x1) = sx.domain();
    let (y0, y1) = sy.domain();
    let bottom = sy.at(y0);
    let left = sx.at(x0);
    let xt = inner_ticks(x0, x1);
    for &t in &xt {
        let x = sx.at(t);
        out.push_str(&line(x, bottom, x, bottom + 4.0, INK, 1.0, false));
        out.push_str(&text(
            x,
            bottom + 15.0,
            Anchor::Middle,
            Font::SMALL,
            &tick_label(t, &xt),
        ));
    }
    let yt = inner_ticks(y0, y1);
    for &t in &yt {
        let y = sy.at(t);
        out.push_str(&line(left - 4.0, y, left, y, INK, 1.0, false));
        out.push_str(&text(
            left - 6.0,
            y + 4.0,
            Anchor::End,
            Font::SMALL,
            &tick_label(t, &yt),
        ));
    }
    out
}

/// Round tick values inside `[lo, hi]`, at least three when a finer round step allows it:
/// the domain is not widened to the ticks here (the plot keeps its square frame), so a coarse
/// step may leave a single tick inside.
fn inner_ticks(lo: f64, hi: f64) -> Vec<f64> {
    let mut best = Vec::new();
    for target in 4..=12 {
        best = nice_ticks(lo, hi, target)
            .into_iter()
            .filter(|t| (lo..=hi).contains(t))
            .collect();
        if best.len() >= 3 {
            break;
        }
    }
    best
}

/// A line at data value 0 across a vertical span, drawn only when 0 is inside the domain.
pub fn zero_line(scale: &Scale, y0: f64, y1: f64) -> String {
    let (d0, d1) = scale.domain();
    if !(d0..=d1).contains(&0.0) {
        return String::new();
    }
    let x = scale.at(0.0);
    line(x, y0, x, y1, "#555", 1.5, false)
}

/// A mean and its interval, as summary rows carry them (any may be NaN).
#[derive(Debug, Clone, Copy)]
pub struct Estimate {
    pub mean: f64,
    pub lo: f64,
    pub hi: f64,
}

/// A mean with its interval: a horizontal bar from `lo` to `hi` with end caps and a dot at the
/// mean. Without a finite mean it writes "n/a" at `na_x`; without a finite interval it draws
/// the dot alone. Marks are clipped to the scale's domain so an extreme interval cannot run
/// into the neighbouring panel.
pub fn interval_mark(
    scale: &Scale,
    y: f64,
    est: Estimate,
    colour: &str,
    na_x: f64,
    title: &str,
) -> String {
    let Estimate { mean, lo, hi } = est;
    if !mean.is_finite() {
        return text(na_x + 4.0, y + 4.0, Anchor::Start, Font::SMALL, "n/a");
    }
    let (d0, d1) = scale.domain();
    let clip = |v: f64| v.clamp(d0, d1);
    let mut out = String::from("<g>");
    let _ = write!(out, "<title>{}</title>", escape(title));
    if finite(&[lo, hi]) {
        let (xl, xh) = (scale.at(clip(lo.min(hi))), scale.at(clip(lo.max(hi))));
        out.push_str(&line(xl, y, xh, y, colour, 2.0, false));
        out.push_str(&line(xl, y - 5.0, xl, y + 5.0, colour, 2.0, false));
        out.push_str(&line(xh, y - 5.0, xh, y + 5.0, colour, 2.0, false));
    }
    out.push_str(&marker(Marker::Dot, scale.at(clip(mean)), y, 4.5, colour));
    out.push_str("</g>");
    out
}

/// Diverging colour for `v` on a scale symmetric about 0: red for losses, white at 0, blue
/// for gains (ColorBrewer RdBu end points, readable with the common colour-vision
/// deficiencies); grey when `v` is not a number.
pub fn diverging(v: f64, max_abs: f64) -> String {
    if !v.is_finite() || !max_abs.is_finite() || max_abs <= 0.0 {
        return MISSING_FILL.to_string();
    }
    let t = (v / max_abs).clamp(-1.0, 1.0);
    const WHITE: [f64; 3] = [247.0, 247.0, 247.0];
    const BLUE: [f64; 3] = [33.0, 102.0, 172.0];
    const RED: [f64; 3] = [178.0, 24.0, 43.0];
    let end = if t >= 0.0 { BLUE } else { RED };
    let a = t.abs();
    let c: Vec<u8> = (0..3)
        .map(|i| {
            (WHITE[i] + (end[i] - WHITE[i]) * a)
                .round()
                .clamp(0.0, 255.0) as u8
        })
        .collect();
    format!("#{:02x}{:02x}{:02x}", c[0], c[1], c[2])
}

/// Dark text on light cells, white text on strongly coloured ones.
fn ink_on(v: f64, max_abs: f64) -> &'static str {
    if v.is_finite() && max_abs > 0.0 && (v / max_abs).abs() > 0.6 {
        "#fff"
    } else {
        INK
    }
}

/// A rectangle in pixels.
#[derive(Debug, Clone, Copy)]
pub struct Area {
    pub x: f64,
    pub y: f64,
    pub w: f64,
    pub h: f64,
}

/// What a heatmap cell says: its lines of text (centred, one under the other) and whether the
/// estimate it shows is clearly away from zero.
#[derive(Debug, Clone, Copy)]
pub struct CellText<'a> {
    pub lines: &'a [&'a str],
    /// Drawn with a heavy dark outline and its last line in bold: the interval excludes zero.
    pub marked: bool,
}

/// Class attribute of the outline on cells whose interval excludes zero (a test and a reader
/// of the SVG can find them by it).
pub const MARK_CLASS: &str = "excludes-zero";

/// One heatmap cell: coloured by `v` on the diverging scale, with its text in the middle and a
/// hover title.
pub fn heat_cell(area: Area, v: f64, max_abs: f64, cell: CellText, title: &str) -> String {
    let Area { x, y, w, h } = area;
    let mut out = rect(
        x,
        y,
        w,
        h,
        &diverging(v, max_abs),
        Some("#fff"),
        Some(title),
    );
    if cell.marked && finite(&[x, y, w, h]) {
        out.push_str(&format!(
            r#"<rect class="{MARK_CLASS}" x="{}" y="{}" width="{}" height="{}" fill="none" stroke="{INK}" stroke-width="2.5"/>"#,
            n(x + 2.0),
            n(y + 2.0),
            n((w - 4.0).max(0.0)),
            n((h - 4.0).max(0.0))
        ));
    }
    const LINE_H: f64 = 13.0;
    let count = cell.lines.len() as f64;
    let first = y + h / 2.0 + 4.0 - (count - 1.0) * LINE_H / 2.0;
    for (i, line) in cell.lines.iter().enumerate() {
        let font = Font {
            size: 11.0,
            fill: ink_on(v, max_abs),
            bold: cell.marked && i + 1 == cell.lines.len(),
        };
        out.push_str(&text(
            x + w / 2.0,
            first + i as f64 * LINE_H,
            Anchor::Middle,
            font,
            line,
        ));
    }
    out
}

/// A horizontal colour bar for the diverging scale from −max_abs to +max_abs, with ticks at
/// both ends, the midpoints and zero, and a caption above.
pub fn colour_legend(x: f64, y: f64, w: f64, h: f64, max_abs: f64, caption: &str) -> String {
    const STEPS: usize = 21;
    let mut out = text(x, y - 6.0, Anchor::Start, Font::SMALL, caption);
    let sw = w / STEPS as f64;
    for i in 0..STEPS {
        let v = -max_abs + (i as f64 + 0.5) / STEPS as f64 * 2.0 * max_abs;
        out.push_str(&rect(
            x + i as f64 * sw,
            y,
            sw + 0.5,
            h,
            &diverging(v, max_abs),
            None,
            None,
        ));
    }
    out.push_str(&rect(x, y, w, h, "none", Some("#999"), None));
    let scale = Scale::new((-max_abs, max_abs), (x, x + w));
    let ticks = [-max_abs, -max_abs / 2.0, 0.0, max_abs / 2.0, max_abs];
    for t in ticks {
        let tx = scale.at(t);
        out.push_str(&line(tx, y + h, tx, y + h + 4.0, INK, 1.0, false));
        out.push_str(&text(
            tx,
            y + h + 16.0,
            Anchor::Middle,
            Font::SMALL,
            &legend_tick(t),
        ));
    }
    out
}

/// A signed legend tick with at most three decimals and no trailing zeros or point: `+1`,
/// `-0.5`, `0`.
fn legend_tick(t: f64) -> String {
    if t == 0.0 {
        return "0".to_string();
    }
    let s = format!("{t:+.3}");
    s.trim_end_matches('0').trim_end_matches('.').to_string()
}

/// Marker shapes for scatter points, distinct without colour.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub enum Marker {
    /// A filled circle.
    Dot,
    /// A filled upward triangle.
    Triangle,
    /// A hollow square.
    Square,
}

/// One marker of radius `r` at (cx, cy).
pub fn marker(shape: Marker, cx: f64, cy: f64, r: f64, colour: &str) -> String {
    if !finite(&[cx, cy, r]) {
        return String::new();
    }
    match shape {
        Marker::Dot => format!(
            r#"<circle cx="{}" cy="{}" r="{}" fill="{colour}"/>"#,
            n(cx),
            n(cy),
            n(r)
        ),
        Marker::Triangle => {
            let h = r * 1.2;
            format!(
                r#"<polygon points="{},{} {},{} {},{}" fill="{colour}"/>"#,
                n(cx),
                n(cy - h),
                n(cx - h),
                n(cy + h * 0.75),
                n(cx + h),
                n(cy + h * 0.75)
            )
        }
        Marker::Square => format!(
            r#"<rect x="{}" y="{}" width="{}" height="{}" fill="none" stroke="{colour}" stroke-width="1"/>"#,
            n(cx - r),
            n(cy - r),
            n(2.0 * r),
            n(2.0 * r)
        ),
    }
}

/// A legend entry: a marker followed by its label; returns the entry and its width so entries
/// can be laid out in a row.
pub fn legend_entry(x: f64, y: f64, shape: Marker, colour: &str, label: &str) -> (String, f64) {
    let mut out = marker(shape, x + 5.0, y - 4.0, 4.0, colour);
    out.push_str(&text(x + 14.0, y, Anchor::Start, Font::SMALL, label));
    (out, 14.0 + text_width(label, Font::SMALL.size) + 14.0)
}

/// A rough width of `s` in px at `size` (average glyph ≈ 0.58 em for sans-serif), used only
/// for layout, never for clipping.
pub fn text_width(s: &str, size: f64) -> f64 {
    s.chars().count() as f64 * size * 0.58
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn legend_ticks_have_no_dangling_point() {
        // Common practice, no source: "+1", not "+1.".
        assert_eq!(legend_tick(1.0), "+1");
        assert_eq!(legend_tick(-1.0), "-1");
        assert_eq!(legend_tick(-0.5), "-0.5");
        assert_eq!(legend_tick(0.125), "+0.125");
        assert_eq!(legend_tick(0.0), "0");
    }

    #[test]
    fn nice_ticks_are_round_and_cover_the_range() {
        // 1-2-5 tick steps (common practice, no source).
        let t = nice_ticks(-0.013, 0.087, 4);
        // raw step 0.1 / 4 = 0.025 rounds up to the next 1-2-5 step, 0.05.
        assert_eq!(t, vec![-0.05, 0.0, 0.05, 0.1]);
        assert!(*t.last().unwrap() >= 0.087);
        assert!(t.contains(&0.0));
        assert!(nice_ticks(f64::NAN, 1.0, 4).is_empty());
    }

    #[test]
    fn non_finite_coordinates_draw_nothing() {
        // Guard for valid SVG: NaN never reaches an attribute (common practice, no source).
        assert_eq!(line(0.0, f64::NAN, 1.0, 1.0, INK, 1.0, false), "");
        assert_eq!(marker(Marker::Dot, f64::INFINITY, 0.0, 2.0, INK), "");
        assert_eq!(diverging(f64::NAN, 1.0), MISSING_FILL);
        let s = Scale::new((0.0, 1.0), (10.0, 110.0));
        let est = |mean, lo, hi| Estimate { mean, lo, hi };
        assert!(interval_mark(&s, 5.0, est(f64::NAN, 0.0, 1.0), INK, 10.0, "t").contains("n/a"));
        let mark = interval_mark(&s, 5.0, est(0.5, f64::NAN, 1.0), INK, 10.0, "t");
        assert!(mark.contains("<circle") && !mark.contains("<line") && !mark.contains("NaN"));
    }

    #[test]
    fn diverging_scale_is_centred() {
        // White at zero, the RdBu end colours at ±max (ColorBrewer RdBu, from memory).
        assert_eq!(diverging(0.0, 0.2), "#f7f7f7");
        assert_eq!(diverging(0.2, 0.2), "#2166ac");
        assert_eq!(diverging(-0.5, 0.2), "#b2182b");
    }
}
