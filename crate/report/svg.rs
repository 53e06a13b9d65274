//! SVG primitives every analysis's figures share: the canvas, escaping, axes in percent and in counts, round tick
//! steps, legends laid out in rows that fit, and a histogram with named markers.
//!
//! Figures are drawn by the core as SVG text, so that the page, the offline file and the CLI show the same picture
//! byte for byte. Plain SVG written here rather than a plotting crate: the figures are simple, SVG needs no font
//! metrics from the DOM, and nothing depends on a library's layout. Every string from the user's file is escaped.
//! Information never rides on colour alone: bars and lines are labelled, heatmap cells carry their value as text.

use std::fmt::Write;

pub const W: f64 = 560.0;
pub const H: f64 = 340.0;
pub const LEFT: f64 = 56.0;
pub const RIGHT: f64 = 20.0;
pub const TOP: f64 = 44.0;
pub const BOTTOM: f64 = 52.0;
pub const INK: &str = "#1f2933";
pub const BAR: &str = "#5b7fa6";
pub const NULL_BAR: &str = "#a7a9ac";

/// Escape text for SVG content and attribute values.
pub fn esc(s: &str) -> String {
    let mut out = String::with_capacity(s.len());
    for ch in s.chars() {
        match ch {
            '&' => out.push_str("&amp;"),
            '<' => out.push_str("&lt;"),
            '>' => out.push_str("&gt;"),
            '"' => out.push_str("&quot;"),
            '\'' => out.push_str("&#39;"),
            c => out.push(c),
        }
    }
    out
}

/// Start an SVG of `w` × `h` with a white background and the title at the top.
pub fn open(svg: &mut String, title: &str, w: f64, h: f64) {
    write!(
        svg,
        r#"<svg xmlns="http://www.w3.org/2000/svg" width="{w}" height="{h}" viewBox="0 0 {w} {h}" font-family="system-ui, sans-serif" font-size="12" role="img"><title>{t}</title><rect width="{w}" height="{h}" fill="white"/><text x="{x}" y="22" font-size="14" font-weight="600" fill="{INK}">{t}</text>"#,
        t = esc(title),
        x = LEFT
    )
    .unwrap();
}

/// Ticks and labels in percent on a vertical axis at `LEFT`, every 10 points (5 when the range is narrow).
pub fn percent_ticks(svg: &mut String, lo: f64, hi: f64, y: &dyn Fn(f64) -> f64) {
    let step = if hi - lo > 0.5 { 0.1 } else { 0.05 };
    let mut v = (lo / step).ceil() * step;
    while v <= hi + 1e-9 {
        write!(
            svg,
            r#"<path d="M{LEFT} {vy:.2} h-5" stroke="{INK}"/><text x="{tx}" y="{ty:.2}" text-anchor="end" fill="{INK}">{p:.0} %</text>"#,
            vy = y(v),
            tx = LEFT - 8.0,
            ty = y(v) + 4.0,
            p = v * 100.0
        )
        .unwrap();
        v += step;
    }
}

/// A vertical marker line with its label.
pub struct Marker {
    pub at: f64,
    pub label: String,
    pub dash: &'static str,
    pub colour: &'static str,
}

/// Estimated width of `text` at `size` px. SVG text has no metrics before it is rendered, so layouts that must not
/// overlap (legends, wrapped labels) use a generous average advance: 0.64 em per character, a little over DejaVu
/// Sans's digits (0.636 em), the widest common fallback for `system-ui` (from its font tables, from memory).
pub fn text_width(text: &str, size: f64) -> f64 {
    text.chars().count() as f64 * size * 0.64
}

/// How a legend entry is drawn: a line (with its dash pattern and width), a translucent band, or a filled bar.
pub enum Key {
    Line {
        colour: &'static str,
        dash: &'static str,
        width: f64,
    },
    Band(&'static str),
    Bar(&'static str),
}

/// A legend laid out in rows that fit between `left` and `right`, each entry a key and its words.
pub struct Legend {
    entries: Vec<(Key, String, f64, usize)>,
    rows: usize,
}

/// Height of one legend row.
pub const LEGEND_ROW: f64 = 18.0;

impl Legend {
    pub fn new(items: Vec<(Key, String)>, left: f64, right: f64) -> Legend {
        let (mut x, mut row) = (left, 0usize);
        let mut entries = Vec::new();
        for (key, label) in items {
            let advance = 28.0 + text_width(&label, 12.0) + 18.0;
            if x > left && x + advance - 18.0 > right {
                (x, row) = (left, row + 1);
            }
            entries.push((key, label, x, row));
            x += advance;
        }
        let rows = entries.last().map_or(0, |e| e.3 + 1);
        Legend { entries, rows }
    }

    /// The height the legend takes.
    pub fn height(&self) -> f64 {
        self.rows as f64 * LEGEND_ROW
    }

    /// Draw with the first row's text baseline at `y`.
    pub fn draw(&self, svg: &mut String, y: f64) {
        for (key, label, x, row) in &self.entries {
            let ly = y + LEGEND_ROW * *row as f64;
            match key {
                Key::Line {
                    colour,
                    dash,
                    width,
                } => write!(
                    svg,
                    r#"<path d="M{x} {my} h22" stroke="{colour}" stroke-width="{width}" stroke-dasharray="{dash}"/>"#,
                    my = ly - 4.0
                ),
                Key::Band(colour) => write!(
                    svg,
                    r#"<rect x="{x}" y="{ry}" width="22" height="10" fill="{colour}" fill-opacity="0.25"/>"#,
                    ry = ly - 9.0
                ),
                Key::Bar(colour) => write!(
                    svg,
                    r#"<rect x="{x}" y="{ry}" width="22" height="6" fill="{colour}"/>"#,
                    ry = ly - 7.0
                ),
            }
            .unwrap();
            write!(
                svg,
                r#"<text x="{tx}" y="{ly}" fill="{INK}">{l}</text>"#,
                tx = x + 28.0,
                l = esc(label)
            )
            .unwrap();
        }
    }
}

/// A count axis from 0 to at least `top` with whole-number ticks: returns the axis's upper end and draws ticks
/// and labels on a vertical axis at `LEFT` for the plot's `y` mapping of counts.
pub fn count_ticks(svg: &mut String, top: usize, y: &dyn Fn(f64) -> f64) {
    let step = tick_step(top as f64, 4.0).max(1.0).round();
    let mut c = 0.0;
    while c <= top as f64 + 1e-9 {
        write!(
            svg,
            r#"<path d="M{LEFT} {vy:.2} h-5" stroke="{INK}"/><text x="{tx}" y="{ty:.2}" text-anchor="end" fill="{INK}">{c}</text>"#,
            vy = y(c),
            tx = LEFT - 8.0,
            ty = y(c) + 4.0
        )
        .unwrap();
        c += step;
    }
}

/// The upper end of a count axis: `top` rounded up to the tick step [`count_ticks`] uses.
pub fn count_axis_top(top: usize) -> usize {
    let step = tick_step(top as f64, 4.0).max(1.0).round() as usize;
    top.div_ceil(step) * step
}

/// Histogram of scores in [0, 1] with vertical marker lines, named in a legend above the plot (so no label sits
/// on the bars or crosses another marker, however close the markers are). The marker lines carry
/// `class="marker"` so tests can check that no text crosses them.
pub fn histogram(
    title: &str,
    x_label: &str,
    values: &[f64],
    markers: &[Marker],
    bar: &str,
) -> String {
    let mut lo = markers
        .iter()
        .map(|m| m.at)
        .chain(values.iter().copied())
        .fold(f64::INFINITY, f64::min);
    let mut hi = markers
        .iter()
        .map(|m| m.at)
        .chain(values.iter().copied())
        .fold(f64::NEG_INFINITY, f64::max);
    if !lo.is_finite() {
        (lo, hi) = (0.0, 1.0);
    }
    let pad = ((hi - lo) * 0.08).max(0.02);
    lo = ((lo - pad) * 20.0).floor() / 20.0;
    hi = ((hi + pad) * 20.0).ceil() / 20.0;
    let (lo, hi) = (lo.max(0.0), hi.min(1.0));
    let bins = 30usize;
    let width = (hi - lo) / bins as f64;
    let mut counts = vec![0usize; bins];
    for &v in values {
        let b = (((v - lo) / width).floor() as isize).clamp(0, bins as isize - 1) as usize;
        counts[b] += 1;
    }
    let legend = Legend::new(
        markers
            .iter()
            .map(|m| {
                (
                    Key::Line {
                        colour: m.colour,
                        dash: m.dash,
                        width: 2.0,
                    },
                    m.label.clone(),
                )
            })
            .collect(),
        LEFT,
        W - RIGHT,
    );
    let top_edge = TOP + legend.height();
    let axis_top = count_axis_top(counts.iter().copied().max().unwrap_or(1).max(1)) as f64;
    let (pw, ph) = (W - LEFT - RIGHT, H - TOP - BOTTOM);
    let x = |v: f64| LEFT + (v - lo) / (hi - lo) * pw;
    let y = |c: f64| top_edge + ph - c / axis_top * ph;
    let mut svg = String::new();
    open(&mut svg, title, W, H + legend.height());
    legend.draw(&mut svg, TOP - 4.0);
    for (b, &c) in counts.iter().enumerate() {
        if c > 0 {
            let x0 = x(lo + b as f64 * width);
            write!(
                svg,
                r#"<rect x="{:.2}" y="{:.2}" width="{:.2}" height="{:.2}" fill="{bar}"/>"#,
                x0 + 0.5,
                y(c as f64),
                (pw / bins as f64 - 1.0).max(0.5),
                top_edge + ph - y(c as f64)
            )
            .unwrap();
        }
    }
    // Axes and ticks every 5 or 10 percentage points.
    let step = if hi - lo > 0.5 { 0.1 } else { 0.05 };
    write!(
        svg,
        r#"<path d="M{LEFT} {b} H{r} M{LEFT} {b} V{top_edge}" stroke="{INK}" fill="none"/>"#,
        b = top_edge + ph,
        r = LEFT + pw
    )
    .unwrap();
    let mut t = (lo / step).ceil() * step;
    while t <= hi + 1e-9 {
        write!(
            svg,
            r#"<path d="M{x:.2} {b} v5" stroke="{INK}"/><text x="{x:.2}" y="{ty}" text-anchor="middle" fill="{INK}">{l:.0} %</text>"#,
            x = x(t),
            b = top_edge + ph,
            ty = top_edge + ph + 18.0,
            l = t * 100.0
        )
        .unwrap();
        t += step;
    }
    count_ticks(&mut svg, axis_top as usize, &y);
    write!(
        svg,
        r#"<text x="{cx}" y="{ly}" text-anchor="middle" fill="{INK}">{xl}</text><text transform="translate(14 {cy}) rotate(-90)" text-anchor="middle" fill="{INK}">count</text>"#,
        cx = LEFT + pw / 2.0,
        ly = H + legend.height() - 12.0,
        xl = esc(x_label),
        cy = top_edge + ph / 2.0,
    )
    .unwrap();
    for m in markers {
        write!(
            svg,
            r#"<path class="marker" d="M{mx:.2} {top_edge} V{b}" stroke="{c}" stroke-width="2" stroke-dasharray="{d}"/>"#,
            mx = x(m.at),
            b = top_edge + ph,
            c = m.colour,
            d = m.dash,
        )
        .unwrap();
    }
    svg.push_str("</svg>");
    svg
}

/// Round tick step for a span: 1, 2 or 5 times a power of ten, about `target` ticks.
pub fn tick_step(span: f64, target: f64) -> f64 {
    let raw = (span / target).max(1e-9);
    let mag = 10f64.powf(raw.log10().floor());
    [1.0, 2.0, 5.0, 10.0]
        .iter()
        .map(|m| m * mag)
        .find(|&s| s >= raw)
        .unwrap_or(10.0 * mag)
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn escapes_markup() {
        assert_eq!(
            esc(r#"<img src=x onerror="a('b')">&"#),
            "&lt;img src=x onerror=&quot;a(&#39;b&#39;)&quot;&gt;&amp;"
        );
    }

    #[test]
    fn ticks_are_round() {
        assert_eq!(tick_step(1.0, 6.0), 0.2);
        assert_eq!(tick_step(2.6, 6.0), 0.5);
    }
}
