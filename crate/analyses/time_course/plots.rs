//! Figures of a time course as SVG text: the decoding curve and the temporal generalization matrix.
//!
//! Drawn by the core like the trial-table figures, so every face shows the same picture. Information never rides on
//! colour alone: the curve's significant spans are also a labelled bar under the axis, and the matrix's significant
//! cells are outlined.

use super::report::TimeReport;
use crate::report::svg::{
    esc, open, percent_ticks, tick_step, Key, Legend, BAR, BOTTOM, H, INK, LEFT, NULL_BAR, RIGHT,
    TOP, W,
};
use crate::report::text::{p_phrase, seconds};
use crate::resample::Headline;
use std::fmt::Write;

fn score_name(r: &TimeReport) -> &'static str {
    r.design.headline.name()
}

/// Mean score over time with its variability over cross-validation repeats (± SD, a band that shows how much the
/// score depends on the split, not a confidence interval), the null's 95th percentile, chance, and the
/// significant clusters.
pub fn curve(r: &TimeReport) -> String {
    let times: Vec<f64> = r.windows.iter().map(|w| w.time).collect();
    let mean = r.curve();
    let sd: Vec<f64> = r
        .windows
        .iter()
        .map(|w| match r.design.headline {
            Headline::Accuracy => w.accuracy.sd,
            Headline::BalancedAccuracy => w.balanced_accuracy.sd,
        })
        .collect();
    let (t0, t1) = (times[0], *times.last().expect("windows"));
    let (t0, t1) = if t1 > t0 {
        (t0, t1)
    } else {
        (t0 - 0.5, t0 + 0.5)
    };
    let hi_data = mean
        .iter()
        .zip(&sd)
        .map(|(m, s)| m + s)
        .chain(r.windows.iter().filter_map(|w| w.null_p95))
        .fold(r.chance.level, f64::max);
    let lo_data = mean
        .iter()
        .zip(&sd)
        .map(|(m, s)| m - s)
        .fold(r.chance.level, f64::min);
    let lo = ((lo_data - 0.02) * 20.0).floor().max(0.0) / 20.0;
    let hi = ((hi_data + 0.02) * 20.0).ceil().min(20.0) / 20.0;
    let (pw, ph) = (W - LEFT - RIGHT, H - TOP - BOTTOM - 18.0);
    let x = |t: f64| LEFT + (t - t0) / (t1 - t0) * pw;
    let y = |v: f64| TOP + ph - (v - lo) / (hi - lo) * ph;
    // The legend names only what is drawn: the band when some window's SD is above zero, the null line when every
    // window has one, the cluster bar when a cluster is significant. It sits under the axis label, in as many rows
    // as its words need, so it never covers the curve and never runs past the figure's right edge.
    let repeats = r.repeats.len();
    let band = repeats > 1 && sd.iter().any(|&s| s > 0.0);
    let null_p95: Vec<f64> = r.windows.iter().filter_map(|w| w.null_p95).collect();
    let mut items = vec![(
        Key::Line {
            colour: BAR,
            dash: "",
            width: 2.5,
        },
        match repeats {
            1 => "score (1 repeat)".to_string(),
            n if band => format!("mean of {n} repeats"),
            n => format!("mean of {n} repeats (SD 0: the repeats agree)"),
        },
    )];
    if band {
        items.push((
            Key::Band(BAR),
            "± 1 SD over cross-validation repeats".to_string(),
        ));
    }
    if null_p95.len() == times.len() {
        items.push((
            Key::Line {
                colour: NULL_BAR,
                dash: "6 3",
                width: 2.0,
            },
            "shuffle null, 95th percentile".to_string(),
        ));
    }
    items.push((
        Key::Line {
            colour: INK,
            dash: "2 3",
            width: 1.0,
        },
        "chance".to_string(),
    ));
    if r.clusters.iter().any(|c| c.significant) {
        items.push((
            Key::Bar(INK),
            format!(
                "significant cluster (p < {})",
                r.recipe.time.as_ref().map_or(0.05, |t| t.alpha)
            ),
        ));
    }
    let legend = Legend::new(items, LEFT, W - RIGHT);
    let height = H + 10.0 + legend.height();
    let mut svg = String::new();
    open(
        &mut svg,
        &format!("Decoding over time ({} per window)", score_name(r)),
        W,
        height,
    );
    // ± SD band, then the mean line.
    let mut path = String::new();
    for (i, &t) in times.iter().enumerate() {
        write!(
            path,
            "{}{:.2} {:.2} ",
            if i == 0 { "M" } else { "L" },
            x(t),
            y(mean[i] + sd[i])
        )
        .unwrap();
    }
    for (i, &t) in times.iter().enumerate().rev() {
        write!(path, "L{:.2} {:.2} ", x(t), y(mean[i] - sd[i])).unwrap();
    }
    if band {
        write!(
            svg,
            r#"<path d="{path}Z" fill="{BAR}" fill-opacity="0.25" stroke="none"/>"#
        )
        .unwrap();
    }
    let line = |values: &[f64]| {
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
    if null_p95.len() == times.len() {
        write!(
            svg,
            r#"<path d="{}" fill="none" stroke="{NULL_BAR}" stroke-width="2" stroke-dasharray="6 3"/>"#,
            line(&null_p95)
        )
        .unwrap();
    }
    write!(
        svg,
        r#"<path class="marker" d="M{LEFT} {c:.2} H{r}" stroke="{INK}" stroke-dasharray="2 3"/>"#,
        c = y(r.chance.level),
        r = LEFT + pw
    )
    .unwrap();
    write!(
        svg,
        r#"<path d="{}" fill="none" stroke="{BAR}" stroke-width="2.5"/>"#,
        line(&mean)
    )
    .unwrap();
    // Alignment (time 0) when inside the span.
    if t0 < 0.0 && t1 > 0.0 {
        write!(
            svg,
            r#"<path d="M{z:.2} {TOP} V{b}" stroke="{INK}" stroke-opacity="0.5"/>"#,
            z = x(0.0),
            b = TOP + ph
        )
        .unwrap();
    }
    // Significant clusters: a bar under the plot, from the first to the last window centre.
    let bar_y = TOP + ph + 8.0;
    for c in r.clusters.iter().filter(|c| c.significant) {
        let (a, b) = (x(c.start), x(c.end).max(x(c.start) + 3.0));
        write!(
            svg,
            r#"<rect x="{a:.2}" y="{bar_y:.2}" width="{:.2}" height="6" fill="{INK}"><title>cluster {} s to {} s, {}</title></rect>"#,
            b - a,
            seconds(c.start),
            seconds(c.end),
            p_phrase(c.p_value, r.shuffle.count)
        )
        .unwrap();
    }
    // Axes and ticks.
    let base = TOP + ph + 18.0;
    write!(
        svg,
        r#"<path d="M{LEFT} {base} H{r} M{LEFT} {TOP} V{b}" stroke="{INK}" fill="none"/>"#,
        r = LEFT + pw,
        b = TOP + ph
    )
    .unwrap();
    let step = tick_step(t1 - t0, 8.0);
    let mut t = (t0 / step).ceil() * step;
    while t <= t1 + step * 1e-6 {
        write!(
            svg,
            r#"<path d="M{tx:.2} {base} v5" stroke="{INK}"/><text x="{tx:.2}" y="{ty}" text-anchor="middle" fill="{INK}">{l}</text>"#,
            tx = x(t),
            ty = base + 18.0,
            l = seconds(t)
        )
        .unwrap();
        t += step;
    }
    percent_ticks(&mut svg, lo, hi, &y);
    write!(
        svg,
        r#"<text x="{cx}" y="{ly}" text-anchor="middle" fill="{INK}">time from alignment (s), window centres</text>"#,
        cx = LEFT + pw / 2.0,
        ly = H - 10.0
    )
    .unwrap();
    legend.draw(&mut svg, H + 8.0);
    svg.push_str("</svg>");
    svg
}

/// Diverging colour: teal below chance, white at chance, dark orange at the top of the scale.
fn diverging(v: f64, chance: f64, top: f64, bottom: f64) -> String {
    let (white, warm, cool) = (
        [255.0, 255.0, 255.0],
        [166.0, 54.0, 3.0],
        [1.0, 102.0, 94.0],
    );
    let (to, f) = if v >= chance {
        (
            warm,
            ((v - chance) / (top - chance).max(1e-9)).clamp(0.0, 1.0),
        )
    } else {
        (
            cool,
            ((chance - v) / (chance - bottom).max(1e-9)).clamp(0.0, 1.0),
        )
    };
    let c: Vec<u8> = (0..3)
        .map(|i| (white[i] + f * (to[i] - white[i])).round() as u8)
        .collect();
    format!("#{:02x}{:02x}{:02x}", c[0], c[1], c[2])
}

/// The train × test matrix, coloured around chance, with significant cells outlined and the diagonal marked.
pub fn generalization(r: &TimeReport) -> Option<String> {
    let g = r.generalization.as_ref()?;
    let n = g.scores.len();
    let chance = r.chance.level;
    let top = g.scores.iter().flatten().fold(chance, |a, &b| a.max(b));
    let bottom = g.scores.iter().flatten().fold(chance, |a, &b| a.min(b));
    // Symmetric scale around chance, so equal distances look equally strong on both sides.
    let reach = (top - chance).max(chance - bottom).max(0.01);
    let size = 340.0;
    let cell = size / n as f64;
    let (x0, y0) = (LEFT + 24.0, TOP + 10.0);
    let (w, h) = (x0 + size + 170.0, y0 + size + 56.0);
    let mut svg = String::new();
    open(
        &mut svg,
        &format!("Temporal generalization ({})", score_name(r)),
        w,
        h,
    );
    // Row 0 (first training window) at the bottom, so time runs upwards like the curve's axis.
    let cy = |i: usize| y0 + (n - 1 - i) as f64 * cell;
    for (i, row) in g.scores.iter().enumerate() {
        for (j, &v) in row.iter().enumerate() {
            write!(
                svg,
                r#"<rect x="{:.2}" y="{:.2}" width="{c:.2}" height="{c:.2}" fill="{}"><title>train {} s, test {} s: {:.1} %</title></rect>"#,
                x0 + j as f64 * cell,
                cy(i),
                diverging(v, chance, chance + reach, chance - reach),
                seconds(r.windows[i].time),
                seconds(r.windows[j].time),
                v * 100.0,
                c = cell + 0.05
            )
            .unwrap();
        }
    }
    // Outline significant cells on every side that borders a non-significant cell.
    let sig = &g.significant;
    let mut d = String::new();
    for i in 0..n {
        for j in 0..n {
            if !sig[i][j] {
                continue;
            }
            let (x, y) = (x0 + j as f64 * cell, cy(i));
            if i + 1 == n || !sig[i + 1][j] {
                write!(d, "M{x:.2} {y:.2} h{cell:.2} ").unwrap();
            }
            if i == 0 || !sig[i - 1][j] {
                write!(d, "M{x:.2} {:.2} h{cell:.2} ", y + cell).unwrap();
            }
            if j == 0 || !sig[i][j - 1] {
                write!(d, "M{x:.2} {y:.2} v{cell:.2} ").unwrap();
            }
            if j + 1 == n || !sig[i][j + 1] {
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
    // Ticks at about five times on both axes.
    let every = (n / 5).max(1);
    for k in (0..n).step_by(every) {
        let t = seconds(r.windows[k].time);
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
    // Colour bar with chance in the middle.
    let (bx, bh) = (x0 + size + 24.0, size * 0.8);
    let steps = 40;
    for s in 0..steps {
        let f = s as f64 / (steps - 1) as f64;
        let v = chance - reach + 2.0 * reach * f;
        write!(
            svg,
            r#"<rect x="{bx}" y="{:.2}" width="16" height="{:.2}" fill="{}"/>"#,
            y0 + bh * (1.0 - f) - bh / steps as f64,
            bh / steps as f64 + 0.3,
            diverging(v, chance, chance + reach, chance - reach)
        )
        .unwrap();
    }
    for (f, label) in [
        (1.0, format!("{:.0} %", (chance + reach) * 100.0)),
        (0.5, format!("chance {:.0} %", chance * 100.0)),
        (0.0, format!("{:.0} %", (chance - reach).max(0.0) * 100.0)),
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
    Some(svg)
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn diverging_scale_is_white_at_chance() {
        assert_eq!(diverging(0.25, 0.25, 0.5, 0.0), "#ffffff");
        assert_eq!(diverging(0.5, 0.25, 0.5, 0.0), "#a63603");
        assert_eq!(diverging(0.0, 0.25, 0.5, 0.0), "#01665e");
    }

    #[test]
    fn seconds_are_short() {
        assert_eq!(seconds(-0.0), "0");
        assert_eq!(seconds(0.25), "0.25");
    }
}
