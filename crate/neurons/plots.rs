//! The neuron figures as SVG: the dropping curve and the single-neuron ranking.

use super::NeuronsReport;
use crate::report::plots::{esc, open, BAR, BOTTOM, H, INK, LEFT, RIGHT, TOP, W};
use std::fmt::Write;

fn lead(r: &NeuronsReport, accuracy: f64, balanced: f64) -> f64 {
    if r.headline == "accuracy" {
        accuracy
    } else {
        balanced
    }
}

/// Score against population size (log axis), mean ± SD over random subsets, with chance.
pub fn dropping(r: &NeuronsReport) -> String {
    let pts: Vec<(f64, f64, f64)> = r
        .dropping
        .iter()
        .map(|d| {
            let s = if r.headline == "accuracy" {
                &d.accuracy
            } else {
                &d.balanced_accuracy
            };
            (d.size as f64, s.mean, s.sd)
        })
        .collect();
    let top = pts.iter().map(|p| p.1 + p.2).fold(r.chance, f64::max);
    let bottom = pts.iter().map(|p| p.1 - p.2).fold(r.chance, f64::min);
    let (lo, hi) = (
        ((bottom - 0.02) * 20.0).floor().max(0.0) / 20.0,
        ((top + 0.02) * 20.0).ceil().min(20.0) / 20.0,
    );
    let max_size = pts.last().map_or(1.0, |p| p.0).max(2.0);
    let (pw, ph) = (W - LEFT - RIGHT, H - TOP - BOTTOM);
    let x = |s: f64| LEFT + s.log2() / max_size.log2() * pw;
    let y = |v: f64| TOP + ph - (v - lo) / (hi - lo) * ph;
    let mut svg = String::new();
    open(&mut svg, "Neuron-dropping curve", W, H);
    write!(
        svg,
        r#"<path d="M{LEFT} {c:.2} H{r}" stroke="{INK}" stroke-dasharray="2 3"/><text x="{r}" y="{t:.2}" text-anchor="end" fill="{INK}">chance</text>"#,
        c = y(r.chance),
        r = LEFT + pw,
        t = y(r.chance) - 4.0
    )
    .unwrap();
    let mut line = String::new();
    for (i, &(s, m, sd)) in pts.iter().enumerate() {
        write!(
            line,
            "{}{:.2} {:.2} ",
            if i == 0 { "M" } else { "L" },
            x(s),
            y(m)
        )
        .unwrap();
        write!(
            svg,
            r#"<path d="M{px:.2} {a:.2} V{b:.2}" stroke="{BAR}" stroke-width="2"/><circle cx="{px:.2}" cy="{py:.2}" r="3.5" fill="{BAR}"/><path d="M{px:.2} {base} v5" stroke="{INK}"/><text x="{px:.2}" y="{ty}" text-anchor="middle" fill="{INK}">{s}</text>"#,
            px = x(s),
            py = y(m),
            a = y(m + sd),
            b = y(m - sd),
            base = TOP + ph,
            ty = TOP + ph + 18.0
        )
        .unwrap();
    }
    write!(
        svg,
        r#"<path d="{line}" fill="none" stroke="{BAR}" stroke-width="2"/>"#
    )
    .unwrap();
    axes(
        &mut svg,
        lo,
        hi,
        &y,
        pw,
        ph,
        "neurons in the decoder (log scale); bars: ± SD over random subsets",
    );
    svg.push_str("</svg>");
    svg
}

/// The y axis in percent, the x axis line and its label.
fn axes(
    svg: &mut String,
    lo: f64,
    hi: f64,
    y: &dyn Fn(f64) -> f64,
    pw: f64,
    ph: f64,
    x_label: &str,
) {
    write!(
        svg,
        r#"<path d="M{LEFT} {b} H{r} M{LEFT} {b} V{TOP}" stroke="{INK}" fill="none"/><text x="{cx}" y="{ly}" text-anchor="middle" fill="{INK}">{l}</text>"#,
        b = TOP + ph,
        r = LEFT + pw,
        cx = LEFT + pw / 2.0,
        ly = H - 12.0,
        l = esc(x_label)
    )
    .unwrap();
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

/// Each neuron alone, best first, as horizontal bars with the score written beside each.
pub fn single(r: &NeuronsReport) -> String {
    let shown = &r.single[..r.single.len().min(40)];
    let row = 16.0;
    let label_w = 150.0;
    let h = TOP + 20.0 + row * shown.len() as f64 + 30.0;
    let top = shown
        .iter()
        .map(|s| lead(r, s.accuracy, s.balanced_accuracy))
        .fold(r.chance, f64::max)
        .min(1.0);
    let pw = W - label_w - RIGHT - 50.0;
    let x = |v: f64| label_w + v / top * pw;
    let mut svg = String::new();
    let title = if r.single.len() > shown.len() {
        format!(
            "Each neuron alone (best {} of {})",
            shown.len(),
            r.single.len()
        )
    } else {
        "Each neuron alone".to_string()
    };
    open(&mut svg, &title, W, h);
    for (i, s) in shown.iter().enumerate() {
        let v = lead(r, s.accuracy, s.balanced_accuracy);
        let yy = TOP + 10.0 + row * i as f64;
        write!(
            svg,
            r#"<text x="{lx}" y="{ty:.1}" text-anchor="end" fill="{INK}">{name}</text><rect x="{label_w}" y="{yy:.1}" width="{bw:.2}" height="{bh}" fill="{BAR}"/><text x="{vx:.2}" y="{ty:.1}" fill="{INK}">{p:.1} %</text>"#,
            lx = label_w - 6.0,
            ty = yy + row * 0.7,
            name = esc(&s.neuron),
            bw = (x(v) - label_w).max(0.5),
            bh = row - 3.0,
            vx = x(v) + 4.0,
            p = v * 100.0
        )
        .unwrap();
    }
    let bottom = TOP + 10.0 + row * shown.len() as f64;
    write!(
        svg,
        r#"<path d="M{c:.2} {t} V{bottom:.1}" stroke="{INK}" stroke-dasharray="2 3"/><text x="{c:.2}" y="{ly:.1}" text-anchor="middle" fill="{INK}">chance {cp:.1} %</text>"#,
        c = x(r.chance),
        t = TOP + 6.0,
        ly = bottom + 16.0,
        cp = r.chance * 100.0
    )
    .unwrap();
    svg.push_str("</svg>");
    svg
}
