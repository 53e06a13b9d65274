//! The neuron figures as SVG: the dropping curve and the single-neuron ranking.

use super::report::{NeuronsReport, SingleResult};
use crate::report::svg::{esc, open, percent_ticks, BAR, BOTTOM, H, INK, LEFT, RIGHT, TOP, W};
use std::fmt::Write;

/// The headline mean of a single-neuron result.
fn lead(r: &NeuronsReport, s: &SingleResult) -> f64 {
    if r.headline == "accuracy" {
        s.accuracy.mean
    } else {
        s.balanced_accuracy.mean
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
    percent_ticks(svg, lo, hi, y);
}

/// Each neuron alone, best first, as horizontal bars with the score written beside each.
pub fn single(r: &NeuronsReport) -> String {
    let shown = &r.single[..r.single.len().min(40)];
    let row = 16.0;
    let label_w = 150.0;
    let h = TOP + 20.0 + row * shown.len() as f64 + 30.0;
    let top = shown
        .iter()
        .map(|s| lead(r, s))
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
        let v = lead(r, s);
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

/// Weight and activation pattern of every neuron for the first output, side by side, scaled to the largest of
/// each, with the note on which to read written beside them.
pub fn weights(r: &NeuronsReport) -> Option<String> {
    let (outputs, weights, patterns) = (
        r.outputs.as_ref()?,
        r.weights.as_ref()?,
        r.patterns.as_ref()?,
    );
    let shown = r.neurons.len().min(40);
    let row = 16.0;
    let label_w = 120.0;
    let col = 150.0;
    let note_x = label_w + 2.0 * col + 40.0;
    let w_total = note_x + 260.0;
    let h = (TOP + 40.0 + row * shown as f64 + 20.0).max(TOP + 200.0);
    let mut svg = String::new();
    open(
        &mut svg,
        &format!("Weights and activation patterns ({})", outputs[0]),
        w_total,
        h,
    );
    let scale = |values: &[Vec<f64>]| {
        values
            .iter()
            .map(|v| v[0].abs())
            .fold(0.0, f64::max)
            .max(f64::MIN_POSITIVE)
    };
    let (ws, ps) = (scale(weights), scale(patterns));
    for (c, (heading, values, s)) in [
        ("weight", weights, ws),
        ("activation pattern", patterns, ps),
    ]
    .iter()
    .enumerate()
    {
        let centre = label_w + col * c as f64 + col / 2.0 + 10.0 * c as f64;
        write!(
            svg,
            r#"<text x="{centre:.1}" y="{y:.1}" text-anchor="middle" font-weight="600" fill="{INK}">{heading}</text><path d="M{centre:.1} {t:.1} V{b:.1}" stroke="{INK}"/>"#,
            y = TOP + 12.0,
            t = TOP + 20.0,
            b = TOP + 24.0 + row * shown as f64
        )
        .unwrap();
        for j in 0..shown {
            let v = values[j][0] / s * (col / 2.0 - 6.0);
            let yy = TOP + 24.0 + row * j as f64;
            write!(
                svg,
                r#"<rect x="{x:.2}" y="{yy:.1}" width="{w:.2}" height="{bh}" fill="{BAR}"/>"#,
                x = centre + v.min(0.0),
                w = v.abs().max(0.5),
                bh = row - 4.0
            )
            .unwrap();
        }
    }
    for (j, name) in r.neurons.iter().take(shown).enumerate() {
        write!(
            svg,
            r#"<text x="{x}" y="{y:.1}" text-anchor="end" fill="{INK}">{n}</text>"#,
            x = label_w - 6.0,
            y = TOP + 24.0 + row * j as f64 + row * 0.65,
            n = esc(name)
        )
        .unwrap();
    }
    // The note, wrapped by hand at about 40 characters.
    let mut lines = vec![String::new()];
    for word in r.patterns_note.split(' ') {
        if lines.last().is_some_and(|l| l.len() + word.len() > 40) {
            lines.push(String::new());
        }
        let last = lines.last_mut().expect("a line");
        if !last.is_empty() {
            last.push(' ');
        }
        last.push_str(word);
    }
    for (i, line) in lines.iter().enumerate() {
        write!(
            svg,
            r#"<text x="{note_x}" y="{y:.1}" fill="{INK}">{l}</text>"#,
            y = TOP + 12.0 + 15.0 * i as f64,
            l = esc(line)
        )
        .unwrap();
    }
    svg.push_str("</svg>");
    Some(svg)
}
