//! The neuron figures as SVG: the dropping curve and the single-neuron ranking.

use super::report::{NeuronsReport, SingleResult};
use crate::report::svg::{
    esc, open, percent_ticks, text_width, BAR, BOTTOM, H, INK, LEFT, RIGHT, TOP, W,
};
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

/// Each neuron alone, best first, as horizontal bars with the scores written in a column right of the longest bar
/// (so the chance line, which runs through the bars, crosses no text).
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
    let pw = W - label_w - RIGHT - 60.0;
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
            r#"<text x="{lx}" y="{ty:.1}" text-anchor="end" fill="{INK}">{name}</text><rect x="{label_w}" y="{yy:.1}" width="{bw:.2}" height="{bh}" fill="{BAR}"/><text x="{vx:.2}" y="{ty:.1}" text-anchor="end" fill="{INK}">{p:.1} %</text>"#,
            lx = label_w - 6.0,
            ty = yy + row * 0.7,
            name = esc(&s.neuron),
            bw = (x(v) - label_w).max(0.5),
            bh = row - 3.0,
            vx = W - RIGHT,
            p = v * 100.0
        )
        .unwrap();
    }
    let bottom = TOP + 10.0 + row * shown.len() as f64;
    write!(
        svg,
        r#"<path class="marker" d="M{c:.2} {t} V{bottom:.1}" stroke="{INK}" stroke-dasharray="2 3"/><text x="{c:.2}" y="{ly:.1}" text-anchor="middle" fill="{INK}">chance {cp:.1} %</text>"#,
        c = x(r.chance),
        t = TOP + 6.0,
        ly = bottom + 16.0,
        cp = r.chance * 100.0
    )
    .unwrap();
    svg.push_str("</svg>");
    svg
}

/// A name cut to `max` characters (with an ellipsis), so a long one cannot run out of the figure.
fn short(s: &str, max: usize) -> String {
    if s.chars().count() > max {
        format!("{}…", s.chars().take(max - 1).collect::<String>())
    } else {
        s.to_string()
    }
}

/// A round value at or below `max` (1, 2 or 5 times a power of ten) for the ticks of a signed axis, and its text.
fn signed_tick(max: f64) -> (f64, String) {
    let mag = 10f64.powf(max.log10().floor());
    let m = [5.0, 2.0, 1.0]
        .into_iter()
        .find(|m| m * mag <= max * (1.0 + 1e-9))
        .unwrap_or(1.0);
    let decimals = (-mag.log10().floor()).max(0.0) as usize;
    (m * mag, format!("{:.*}", decimals, m * mag))
}

/// Weights and activation patterns of every neuron for every output (one column per output in each panel), each
/// panel on one numeric scale with ticks at ± a round value, and the note on which to read written under them.
/// The figure grows with the neurons and the outputs rather than leaving any out.
pub fn weights(r: &NeuronsReport) -> Option<String> {
    let (outputs, weights, patterns) = (
        r.outputs.as_ref()?,
        r.weights.as_ref()?,
        r.patterns.as_ref()?,
    );
    let n = r.neurons.len();
    let k = outputs.len();
    let row = 16.0;
    let label_w = 14.0
        + r.neurons
            .iter()
            .map(|s| text_width(&short(s, 26), 12.0))
            .fold(60.0, f64::max);
    let (col, half) = (130.0, 52.0);
    let panel_gap = 30.0;
    let panel_w = col * k as f64;
    let plot_w = label_w + 2.0 * panel_w + panel_gap;
    let title = if k == 1 {
        format!("Weights and activation patterns ({})", outputs[0])
    } else {
        format!("Weights and activation patterns ({k} outputs)")
    };
    let w_total = (plot_w + RIGHT).max(LEFT + text_width(&title, 14.0) + RIGHT);
    // The note, wrapped to the figure's width.
    let per_line = ((w_total - LEFT - RIGHT) / text_width("m", 12.0)).floor() as usize;
    let mut lines = vec![String::new()];
    for word in r.patterns_note.split(' ') {
        if lines.last().is_some_and(|l| {
            !l.is_empty() && l.chars().count() + 1 + word.chars().count() > per_line
        }) {
            lines.push(String::new());
        }
        let last = lines.last_mut().expect("a line");
        if !last.is_empty() {
            last.push(' ');
        }
        last.push_str(word);
    }
    let rows_top = TOP + 40.0;
    let rows_bottom = rows_top + row * n as f64;
    let note_top = rows_bottom + 44.0;
    let h = note_top + 15.0 * lines.len() as f64 + 8.0;
    let mut svg = String::new();
    open(&mut svg, &title, w_total, h);
    for (p, (heading, values)) in [("weight", weights), ("activation pattern", patterns)]
        .iter()
        .enumerate()
    {
        let left = label_w + p as f64 * (panel_w + panel_gap);
        let max = values
            .iter()
            .flatten()
            .map(|v| v.abs())
            .fold(0.0, f64::max)
            .max(f64::MIN_POSITIVE);
        let (tick, tick_text) = signed_tick(max);
        write!(
            svg,
            r#"<text x="{c:.1}" y="{y:.1}" text-anchor="middle" font-weight="600" fill="{INK}">{heading}</text>"#,
            c = left + panel_w / 2.0,
            y = TOP + 8.0,
        )
        .unwrap();
        for (o, output) in outputs.iter().enumerate() {
            let centre = left + col * (o as f64 + 0.5);
            let x = |v: f64| centre + v / max * half;
            write!(
                svg,
                r#"<text x="{centre:.1}" y="{y:.1}" text-anchor="middle" fill="{INK}"><title>{full}</title>{name}</text><path d="M{centre:.1} {t:.1} V{b:.1}" stroke="{INK}"/>"#,
                y = TOP + 26.0,
                full = esc(output),
                name = esc(&short(output, 16)),
                t = rows_top - 4.0,
                b = rows_bottom + 2.0
            )
            .unwrap();
            for (j, v) in values.iter().enumerate() {
                let (a, b) = (x(v[o].min(0.0)), x(v[o].max(0.0)));
                write!(
                    svg,
                    r#"<rect x="{a:.2}" y="{yy:.1}" width="{w:.2}" height="{bh}" fill="{BAR}"/>"#,
                    yy = rows_top + row * j as f64,
                    w = (b - a).max(0.5),
                    bh = row - 4.0
                )
                .unwrap();
            }
            // The numeric axis: a baseline with ticks at -tick, 0 and +tick.
            write!(
                svg,
                r#"<path d="M{l:.2} {b:.1} H{r:.2}" stroke="{INK}"/>"#,
                l = x(-max),
                r = x(max),
                b = rows_bottom + 2.0
            )
            .unwrap();
            for (v, text) in [(-tick, format!("−{tick_text}")), (tick, tick_text.clone())] {
                write!(
                    svg,
                    r#"<path d="M{tx:.2} {b:.1} v5" stroke="{INK}"/><text x="{tx:.2}" y="{ty:.1}" text-anchor="middle" fill="{INK}">{text}</text>"#,
                    tx = x(v),
                    b = rows_bottom + 2.0,
                    ty = rows_bottom + 20.0
                )
                .unwrap();
            }
        }
    }
    for (j, name) in r.neurons.iter().enumerate() {
        write!(
            svg,
            r#"<text x="{x}" y="{y:.1}" text-anchor="end" fill="{INK}"><title>{full}</title>{n}</text>"#,
            x = label_w - 6.0,
            y = rows_top + row * j as f64 + row * 0.65,
            full = esc(name),
            n = esc(&short(name, 26))
        )
        .unwrap();
    }
    for (i, line) in lines.iter().enumerate() {
        write!(
            svg,
            r#"<text x="{LEFT}" y="{y:.1}" fill="{INK}">{l}</text>"#,
            y = note_top + 15.0 * i as f64,
            l = esc(line)
        )
        .unwrap();
    }
    svg.push_str("</svg>");
    Some(svg)
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn signed_ticks_are_round_and_within_reach() {
        assert_eq!(signed_tick(0.37), (0.2, "0.2".to_string()));
        assert_eq!(signed_tick(1.0), (1.0, "1".to_string()));
        assert_eq!(signed_tick(7.9), (5.0, "5".to_string()));
        assert_eq!(signed_tick(0.00012), (0.0001, "0.0001".to_string()));
    }
}
