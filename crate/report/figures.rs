//! Figures for scores on any scale (R², angles in degrees, accuracies): a histogram, a scatter of predicted against
//! actual values, a curve over time and a train × test matrix. The trial-table and time-course figures predate
//! these and draw accuracies only; these take an [`Axis`] that says how values are written.
//!
//! Same rules as [`super::svg`]: plain SVG text, every string from a file escaped, information never on colour
//! alone (lines carry a legend in words, significant spans are a labelled bar, significant cells are outlined).

use super::svg::{esc, open, tick_step, Marker, BAR, BOTTOM, H, INK, LEFT, RIGHT, TOP, W};
use super::text::seconds;
use std::fmt::Write;

/// A value axis: its range and how a tick is written.
#[derive(Clone, Copy)]
pub struct Axis {
    pub lo: f64,
    pub hi: f64,
    /// Distance between ticks; `lo` and `hi` are multiples of it unless a bound cut them.
    pub step: f64,
    pub format: fn(f64) -> String,
}

impl Axis {
    /// A range holding every finite value with a little room, on round ticks, within `bounds` when given.
    pub fn fit(
        values: impl IntoIterator<Item = f64>,
        format: fn(f64) -> String,
        bounds: Option<(f64, f64)>,
    ) -> Axis {
        let (mut lo, mut hi) = (f64::INFINITY, f64::NEG_INFINITY);
        for v in values.into_iter().filter(|v| v.is_finite()) {
            lo = lo.min(v);
            hi = hi.max(v);
        }
        if !lo.is_finite() {
            (lo, hi) = (0.0, 1.0);
        }
        if hi - lo < 1e-9 {
            (lo, hi) = (lo - 0.5 * lo.abs().max(1e-3), hi + 0.5 * hi.abs().max(1e-3));
        }
        let pad = (hi - lo) * 0.04;
        let step = tick_step(hi - lo + 2.0 * pad, 6.0);
        let (mut lo, mut hi) = (
            ((lo - pad) / step).floor() * step,
            ((hi + pad) / step).ceil() * step,
        );
        if let Some((a, b)) = bounds {
            lo = lo.max(a);
            hi = hi.min(b);
        }
        Axis {
            lo,
            hi,
            step,
            format,
        }
    }

    /// [`Axis::fit`] with tick labels as precise as the tick step needs (whole numbers for steps of 1 or more).
    pub fn auto(values: impl IntoIterator<Item = f64>, bounds: Option<(f64, f64)>) -> Axis {
        let mut a = Axis::fit(values, plain, bounds);
        a.format = if a.step >= 1.0 {
            plain
        } else if a.step >= 0.01 {
            decimals
        } else {
            thousandths
        };
        a
    }

    fn ticks(&self) -> Vec<f64> {
        let step = self.step;
        let mut out = Vec::new();
        let mut k = (self.lo / step).ceil();
        while k * step <= self.hi + step * 1e-6 {
            out.push(k * step);
            k += 1.0;
        }
        out
    }
}

/// Two decimals ("0.62").
pub fn decimals(v: f64) -> String {
    let t = format!("{v:.2}");
    if t == "-0.00" {
        "0.00".into()
    } else {
        t
    }
}

/// Three decimals ("0.005").
pub fn thousandths(v: f64) -> String {
    let t = format!("{v:.3}");
    if t == "-0.000" {
        "0.000".into()
    } else {
        t
    }
}

/// Whole numbers, or one decimal for small spans.
pub fn plain(v: f64) -> String {
    let t = if (v - v.round()).abs() < 1e-9 {
        format!("{v:.0}")
    } else {
        format!("{v:.1}")
    };
    if t == "-0" {
        "0".into()
    } else {
        t
    }
}

/// Histogram of `values` on `axis`, with labelled vertical markers.
pub fn histogram(
    title: &str,
    x_label: &str,
    values: &[f64],
    markers: &[Marker],
    bar: &str,
    axis: Axis,
) -> String {
    let bins = 30usize;
    let (lo, hi) = (axis.lo, axis.hi);
    let width = (hi - lo) / bins as f64;
    let mut counts = vec![0usize; bins];
    for &v in values.iter().filter(|v| v.is_finite()) {
        let b = (((v - lo) / width).floor() as isize).clamp(0, bins as isize - 1) as usize;
        counts[b] += 1;
    }
    let top = counts.iter().copied().max().unwrap_or(1).max(1) as f64;
    let (pw, ph) = (W - LEFT - RIGHT, H - TOP - BOTTOM);
    let x = |v: f64| LEFT + (v - lo) / (hi - lo) * pw;
    let y = |c: f64| TOP + ph - c / top * ph;
    let mut svg = String::new();
    open(&mut svg, title, W, H);
    for (b, &c) in counts.iter().enumerate() {
        if c > 0 {
            write!(
                svg,
                r#"<rect x="{:.2}" y="{:.2}" width="{:.2}" height="{:.2}" fill="{bar}"/>"#,
                x(lo + b as f64 * width) + 0.5,
                y(c as f64),
                (pw / bins as f64 - 1.0).max(0.5),
                TOP + ph - y(c as f64)
            )
            .unwrap();
        }
    }
    let base = TOP + ph;
    write!(
        svg,
        r#"<path d="M{LEFT} {base} H{r} M{LEFT} {base} V{TOP}" stroke="{INK}" fill="none"/>"#,
        r = LEFT + pw
    )
    .unwrap();
    for t in axis.ticks() {
        write!(
            svg,
            r#"<path d="M{tx:.2} {base} v5" stroke="{INK}"/><text x="{tx:.2}" y="{ty}" text-anchor="middle" fill="{INK}">{l}</text>"#,
            tx = x(t),
            ty = base + 18.0,
            l = esc(&(axis.format)(t))
        )
        .unwrap();
    }
    write!(
        svg,
        r#"<text x="{cx}" y="{ly}" text-anchor="middle" fill="{INK}">{xl}</text><text transform="translate(16 {cy}) rotate(-90)" text-anchor="middle" fill="{INK}">count</text><text x="{tx}" y="{ty}" text-anchor="end" fill="{INK}">{top}</text>"#,
        cx = LEFT + pw / 2.0,
        ly = H - 12.0,
        xl = esc(x_label),
        cy = TOP + ph / 2.0,
        tx = LEFT - 6.0,
        ty = TOP + 4.0,
        top = top as usize
    )
    .unwrap();
    for (i, m) in markers.iter().enumerate().filter(|(_, m)| m.at.is_finite()) {
        let mx = x(m.at.clamp(lo, hi));
        let right = mx > LEFT + pw * 0.7;
        write!(
            svg,
            r#"<path d="M{mx:.2} {TOP} V{base}" stroke="{c}" stroke-width="2" stroke-dasharray="{d}"/><text x="{tx:.2}" y="{ty}" fill="{c}" text-anchor="{a}">{l}</text>"#,
            c = m.colour,
            d = m.dash,
            tx = if right { mx - 4.0 } else { mx + 4.0 },
            a = if right { "end" } else { "start" },
            ty = TOP + 12.0 + 14.0 * i as f64,
            l = esc(&m.label)
        )
        .unwrap();
    }
    svg.push_str("</svg>");
    svg
}

/// One point per (actual, predicted) pair, with the identity line (a perfect decoder's points lie on it), and a
/// note under the title saying what the points are.
pub fn scatter(
    title: &str,
    note: &str,
    labels: (&str, &str),
    actual: &[f64],
    predicted: &[f64],
    axis: Axis,
) -> String {
    let (x_label, y_label) = labels;
    let size = 300.0;
    let (x0, y0) = (LEFT + 10.0, TOP + 12.0);
    let (w, h) = (W, y0 + size + 56.0);
    let (lo, hi) = (axis.lo, axis.hi);
    let px = |v: f64| x0 + (v - lo) / (hi - lo) * size;
    let py = |v: f64| y0 + size - (v - lo) / (hi - lo) * size;
    let mut svg = String::new();
    open(&mut svg, title, w, h);
    write!(
        svg,
        r#"<text x="{LEFT}" y="38" fill="{INK}">{}</text>"#,
        esc(note)
    )
    .unwrap();
    write!(
        svg,
        r#"<rect x="{x0}" y="{y0}" width="{size}" height="{size}" fill="none" stroke="{INK}"/><path d="M{x0} {b} L{r} {y0}" stroke="{INK}" stroke-opacity="0.6" stroke-dasharray="4 3"/>"#,
        b = y0 + size,
        r = x0 + size
    )
    .unwrap();
    for (&a, &p) in actual.iter().zip(predicted) {
        if a.is_finite() && p.is_finite() {
            write!(
                svg,
                r#"<circle cx="{:.2}" cy="{:.2}" r="2.2" fill="{BAR}" fill-opacity="0.55"/>"#,
                px(a.clamp(lo, hi)),
                py(p.clamp(lo, hi))
            )
            .unwrap();
        }
    }
    for t in axis.ticks() {
        let l = esc(&(axis.format)(t));
        write!(
            svg,
            r#"<path d="M{tx:.2} {b} v5" stroke="{INK}"/><text x="{tx:.2}" y="{by}" text-anchor="middle" fill="{INK}">{l}</text><path d="M{x0} {ty:.2} h-5" stroke="{INK}"/><text x="{lx}" y="{tty:.2}" text-anchor="end" fill="{INK}">{l}</text>"#,
            tx = px(t),
            b = y0 + size,
            by = y0 + size + 18.0,
            ty = py(t),
            lx = x0 - 8.0,
            tty = py(t) + 4.0
        )
        .unwrap();
    }
    write!(
        svg,
        r#"<text x="{:.1}" y="{:.1}" text-anchor="middle" fill="{INK}">{}</text><text transform="translate(14 {:.1}) rotate(-90)" text-anchor="middle" fill="{INK}">{}</text></svg>"#,
        x0 + size / 2.0,
        y0 + size + 40.0,
        esc(x_label),
        y0 + size / 2.0,
        esc(y_label)
    )
    .unwrap();
    svg
}

/// A line over time, optionally with a ± SD band over repeats.
pub struct Series<'a> {
    pub values: &'a [f64],
    /// The SD over repeats at each time. The legend adds "± SD" to the label when the band has a width, and says
    /// the repeats were all the same when it has none (nothing is drawn then, and a legend naming a band that is
    /// not there would leave the reader looking for it).
    pub band: Option<&'a [f64]>,
    pub colour: &'static str,
    pub dash: &'static str,
    pub label: &'static str,
}

/// What a curve over time shows: lines, a horizontal reference (chance), and significant spans under the axis.
pub struct Curve<'a> {
    pub title: String,
    pub y_label: &'a str,
    pub times: &'a [f64],
    pub series: Vec<Series<'a>>,
    pub reference: Option<(f64, &'static str)>,
    /// Significant spans (first and last window centre) with their tooltip.
    pub spans: Vec<(f64, f64, String)>,
    pub span_label: String,
    pub axis: Axis,
}

/// A series' words in the legend: its label, with what its band shows.
fn legend_label(s: &Series) -> String {
    match s.band {
        Some(band) if band.iter().any(|&b| b > 0.0) => format!("{} ± SD", s.label),
        Some(_) => format!("{} (the same in every repeat)", s.label),
        None => s.label.to_string(),
    }
}

/// Lines over time with a legend in words under the axis.
pub fn curve(c: &Curve) -> String {
    let times = c.times;
    let (t0, t1) = (times[0], *times.last().expect("windows"));
    let (t0, t1) = if t1 > t0 {
        (t0, t1)
    } else {
        (t0 - 0.5, t0 + 0.5)
    };
    let (lo, hi) = (c.axis.lo, c.axis.hi);
    let (pw, ph) = (W - LEFT - RIGHT, H - TOP - BOTTOM - 18.0);
    let x = |t: f64| LEFT + (t - t0) / (t1 - t0) * pw;
    let y = |v: f64| TOP + ph - (v.clamp(lo, hi) - lo) / (hi - lo) * ph;
    // The legend in words under the axis label, wrapped onto more rows when it does not fit in one.
    let reference = c
        .reference
        .map(|(_, label)| (INK, "2 3", label.to_string()));
    let mut items: Vec<(&str, &str, String, bool)> = c
        .series
        .iter()
        .map(|s| (s.colour, s.dash, legend_label(s), false))
        .chain(reference.map(|(a, b, l)| (a, b, l, false)))
        .collect();
    if !c.spans.is_empty() {
        items.push((INK, "", c.span_label.clone(), true));
    }
    let mut placed = Vec::new();
    let (mut lx, mut row) = (LEFT, 0usize);
    for (colour, dash, label, bar) in items {
        let advance = 48.0 + 7.0 * label.chars().count() as f64;
        if lx > LEFT && lx + advance > W - RIGHT {
            lx = LEFT;
            row += 1;
        }
        placed.push((lx, row, colour, dash, label, bar));
        lx += advance;
    }
    let height = H + 28.0 + 18.0 * row as f64;
    let mut svg = String::new();
    open(&mut svg, &c.title, W, height);
    let path = |values: &[f64]| {
        let mut d = String::new();
        for (i, (&t, &v)) in times.iter().zip(values).enumerate() {
            write!(
                d,
                "{}{:.2} {:.2} ",
                if i == 0 { "M" } else { "L" },
                x(t),
                y(v)
            )
            .unwrap();
        }
        d
    };
    for s in &c.series {
        if let Some(band) = s.band {
            let upper: Vec<f64> = s.values.iter().zip(band).map(|(m, b)| m + b).collect();
            let mut d = path(&upper);
            for (i, &t) in times.iter().enumerate().rev() {
                write!(d, "L{:.2} {:.2} ", x(t), y(s.values[i] - band[i])).unwrap();
            }
            write!(
                svg,
                r#"<path d="{d}Z" fill="{}" fill-opacity="0.2" stroke="none"/>"#,
                s.colour
            )
            .unwrap();
        }
    }
    if let Some((v, _)) = c.reference {
        write!(
            svg,
            r#"<path d="M{LEFT} {:.2} H{}" stroke="{INK}" stroke-dasharray="2 3"/>"#,
            y(v),
            LEFT + pw
        )
        .unwrap();
    }
    for s in &c.series {
        write!(
            svg,
            r#"<path d="{}" fill="none" stroke="{}" stroke-width="2.2" stroke-dasharray="{}"/>"#,
            path(s.values),
            s.colour,
            s.dash
        )
        .unwrap();
    }
    if t0 < 0.0 && t1 > 0.0 {
        write!(
            svg,
            r#"<path d="M{:.2} {TOP} V{}" stroke="{INK}" stroke-opacity="0.5"/>"#,
            x(0.0),
            TOP + ph
        )
        .unwrap();
    }
    let bar_y = TOP + ph + 8.0;
    for (a, b, tip) in &c.spans {
        let (xa, xb) = (x(*a), x(*b).max(x(*a) + 3.0));
        write!(
            svg,
            r#"<rect x="{xa:.2}" y="{bar_y:.2}" width="{:.2}" height="6" fill="{INK}"><title>{}</title></rect>"#,
            xb - xa,
            esc(tip)
        )
        .unwrap();
    }
    let base = TOP + ph + 18.0;
    write!(
        svg,
        r#"<path d="M{LEFT} {base} H{} M{LEFT} {TOP} V{}" stroke="{INK}" fill="none"/>"#,
        LEFT + pw,
        TOP + ph
    )
    .unwrap();
    let step = tick_step(t1 - t0, 8.0);
    let mut k = (t0 / step).ceil();
    while k * step <= t1 + step * 1e-6 {
        let t = k * step;
        write!(
            svg,
            r#"<path d="M{tx:.2} {base} v5" stroke="{INK}"/><text x="{tx:.2}" y="{ty}" text-anchor="middle" fill="{INK}">{l}</text>"#,
            tx = x(t),
            ty = base + 18.0,
            l = seconds(t)
        )
        .unwrap();
        k += 1.0;
    }
    for t in c.axis.ticks() {
        write!(
            svg,
            r#"<path d="M{LEFT} {vy:.2} h-5" stroke="{INK}"/><text x="{tx}" y="{ty:.2}" text-anchor="end" fill="{INK}">{l}</text>"#,
            vy = y(t),
            tx = LEFT - 8.0,
            ty = y(t) + 4.0,
            l = esc(&(c.axis.format)(t))
        )
        .unwrap();
    }
    write!(
        svg,
        r#"<text x="{cx}" y="{ly}" text-anchor="middle" fill="{INK}">time from alignment (s), window centres</text><text transform="translate(14 {cy}) rotate(-90)" text-anchor="middle" fill="{INK}">{yl}</text>"#,
        cx = LEFT + pw / 2.0,
        ly = H - 10.0,
        cy = TOP + ph / 2.0,
        yl = esc(c.y_label)
    )
    .unwrap();
    for (lx, row, colour, dash, label, bar) in placed {
        let ly = H + 16.0 + 18.0 * row as f64;
        if bar {
            write!(
                svg,
                r#"<rect x="{lx}" y="{}" width="22" height="6" fill="{colour}"/>"#,
                ly - 3.0
            )
            .unwrap();
        } else {
            write!(
                svg,
                r#"<path d="M{lx} {ly} h22" stroke="{colour}" stroke-width="2" stroke-dasharray="{dash}"/>"#
            )
            .unwrap();
        }
        write!(
            svg,
            r#"<text x="{}" y="{}" fill="{INK}">{}</text>"#,
            lx + 28.0,
            ly + 4.0,
            esc(&label)
        )
        .unwrap();
    }
    svg.push_str("</svg>");
    svg
}

/// Diverging colour around `centre`: teal below, white at it, dark orange above, saturating at ± `reach`.
fn diverging(v: f64, centre: f64, reach: f64) -> String {
    let (white, warm, cool) = (
        [255.0, 255.0, 255.0],
        [166.0, 54.0, 3.0],
        [1.0, 102.0, 94.0],
    );
    let f = ((v - centre).abs() / reach.max(1e-9)).clamp(0.0, 1.0);
    let to = if v >= centre { warm } else { cool };
    let c: Vec<u8> = (0..3)
        .map(|i| (white[i] + f * (to[i] - white[i])).round() as u8)
        .collect();
    format!("#{:02x}{:02x}{:02x}", c[0], c[1], c[2])
}

/// A train × test time matrix (rows = training window, drawn bottom-up) coloured around `centre`, significant cells
/// outlined, the diagonal dashed, with a colour bar.
pub fn matrix(
    title: &str,
    times: &[f64],
    scores: &[Vec<f64>],
    significant: &[Vec<bool>],
    centre: (f64, &str),
    format: fn(f64) -> String,
) -> String {
    let n = scores.len();
    let reach = scores
        .iter()
        .flatten()
        .fold(0.01f64, |a, &b| a.max((b - centre.0).abs()));
    let size = 340.0;
    let cell = size / n as f64;
    let (x0, y0) = (LEFT + 24.0, TOP + 10.0);
    let (w, h) = (x0 + size + 170.0, y0 + size + 56.0);
    let mut svg = String::new();
    open(&mut svg, title, w, h);
    let cy = |i: usize| y0 + (n - 1 - i) as f64 * cell;
    for (i, row) in scores.iter().enumerate() {
        for (j, &v) in row.iter().enumerate() {
            write!(
                svg,
                r#"<rect x="{:.2}" y="{:.2}" width="{c:.2}" height="{c:.2}" fill="{}"><title>train {} s, test {} s: {}</title></rect>"#,
                x0 + j as f64 * cell,
                cy(i),
                diverging(v, centre.0, reach),
                seconds(times[i]),
                seconds(times[j]),
                esc(&format(v)),
                c = cell + 0.05
            )
            .unwrap();
        }
    }
    let mut d = String::new();
    for i in 0..n {
        for j in 0..n {
            if !significant[i][j] {
                continue;
            }
            let (x, y) = (x0 + j as f64 * cell, cy(i));
            if i + 1 == n || !significant[i + 1][j] {
                write!(d, "M{x:.2} {y:.2} h{cell:.2} ").unwrap();
            }
            if i == 0 || !significant[i - 1][j] {
                write!(d, "M{x:.2} {:.2} h{cell:.2} ", y + cell).unwrap();
            }
            if j == 0 || !significant[i][j - 1] {
                write!(d, "M{x:.2} {y:.2} v{cell:.2} ").unwrap();
            }
            if j + 1 == n || !significant[i][j + 1] {
                write!(d, "M{:.2} {y:.2} v{cell:.2} ", x + cell).unwrap();
            }
        }
    }
    if !d.is_empty() {
        write!(
            svg,
            r#"<path d="{d}" stroke="{INK}" stroke-width="1.5" fill="none"/>"#
        )
        .unwrap();
    }
    write!(
        svg,
        r#"<path d="M{x0} {b} L{r} {y0}" stroke="{INK}" stroke-opacity="0.6" stroke-dasharray="3 3"/><rect x="{x0}" y="{y0}" width="{size}" height="{size}" fill="none" stroke="{INK}"/>"#,
        b = y0 + size,
        r = x0 + size
    )
    .unwrap();
    let every = (n / 5).max(1);
    for k in (0..n).step_by(every) {
        let t = seconds(times[k]);
        write!(
            svg,
            r#"<text x="{:.2}" y="{:.2}" text-anchor="middle" fill="{INK}">{t}</text><text x="{:.2}" y="{:.2}" text-anchor="end" fill="{INK}">{t}</text>"#,
            x0 + (k as f64 + 0.5) * cell,
            y0 + size + 16.0,
            x0 - 6.0,
            cy(k) + cell / 2.0 + 4.0
        )
        .unwrap();
    }
    write!(
        svg,
        r#"<text x="{:.1}" y="{:.1}" text-anchor="middle" fill="{INK}">testing time (s)</text><text transform="translate(16 {:.1}) rotate(-90)" text-anchor="middle" fill="{INK}">training time (s)</text>"#,
        x0 + size / 2.0,
        y0 + size + 36.0,
        y0 + size / 2.0
    )
    .unwrap();
    let (bx, bh) = (x0 + size + 24.0, size * 0.8);
    let steps = 40;
    for s in 0..steps {
        let f = s as f64 / (steps - 1) as f64;
        let v = centre.0 - reach + 2.0 * reach * f;
        write!(
            svg,
            r#"<rect x="{bx}" y="{:.2}" width="16" height="{:.2}" fill="{}"/>"#,
            y0 + bh * (1.0 - f) - bh / steps as f64,
            bh / steps as f64 + 0.3,
            diverging(v, centre.0, reach)
        )
        .unwrap();
    }
    for (f, label) in [
        (1.0, format(centre.0 + reach)),
        (0.5, format!("{} {}", centre.1, format(centre.0))),
        (0.0, format(centre.0 - reach)),
    ] {
        write!(
            svg,
            r#"<text x="{:.1}" y="{:.1}" fill="{INK}">{}</text>"#,
            bx + 20.0,
            y0 + bh * (1.0 - f) + 4.0,
            esc(&label)
        )
        .unwrap();
    }
    write!(
        svg,
        r#"<text x="{bx}" y="{:.1}" fill="{INK}">outlined: significant</text><text x="{bx}" y="{:.1}" fill="{INK}">dashed: diagonal</text>"#,
        y0 + bh + 20.0,
        y0 + bh + 36.0
    )
    .unwrap();
    svg.push_str("</svg>");
    svg
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn axis_holds_its_values_on_round_ticks() {
        let a = Axis::fit([0.13, 0.71], decimals, None);
        assert!(a.lo <= 0.13 && a.hi >= 0.71, "{} {}", a.lo, a.hi);
        let t = a.ticks();
        // Span 0.58 plus 4 % padding each side is 0.63: the round step for about six ticks is 0.2 (0.63 / 6 > 0.1),
        // and the range is snapped to it, so the ticks run from lo to hi.
        assert!(
            t.windows(2).all(|w| ((w[1] - w[0]) - 0.2).abs() < 1e-9),
            "{t:?}"
        );
        assert!(
            (t[0] - a.lo).abs() < 1e-9 && (t[t.len() - 1] - a.hi).abs() < 1e-9,
            "{t:?}"
        );
        let bounded = Axis::fit([-3.0, 170.0], plain, Some((0.0, 180.0)));
        assert!(bounded.lo == 0.0 && bounded.hi <= 180.0);
    }

    /// The legend names the SD band only when there is one to see.
    #[test]
    fn the_legend_says_whether_repeats_spread() {
        let times = [0.0, 0.1, 0.2];
        let values = [0.5, 0.6, 0.7];
        let draw = |band: &[f64]| {
            curve(&Curve {
                title: "t".into(),
                y_label: "accuracy",
                times: &times,
                series: vec![Series {
                    values: &values,
                    band: Some(band),
                    colour: INK,
                    dash: "none",
                    label: "generalization",
                }],
                reference: None,
                spans: Vec::new(),
                span_label: String::new(),
                axis: Axis::fit([0.0, 1.0], decimals, None),
            })
        };
        let spread = draw(&[0.0, 0.02, 0.01]);
        assert!(spread.contains("generalization ± SD") && !spread.contains("every repeat"));
        let none = draw(&[0.0; 3]);
        assert!(
            none.contains("generalization (the same in every repeat)") && !none.contains("± SD")
        );
    }

    #[test]
    fn text_from_files_is_escaped() {
        let svg = scatter(
            "<b>",
            "<i>",
            ("x&y", "y"),
            &[1.0],
            &[1.0],
            Axis::fit([0.0, 1.0], decimals, None),
        );
        assert!(svg.contains("&lt;b&gt;") && svg.contains("&lt;i&gt;") && svg.contains("x&amp;y"));
        assert!(!svg.contains("<b>") && !svg.contains("<i>"));
    }
}
