//! The power figures as SVG: for each axis (trials per class, neurons kept, noise neurons added) accuracy above
//! (mean ± SD over subsamples, chance) and power below (with the rate expected without information and the 80 %
//! mark); on the trials figure the extrapolation, dashed, labelled and drawn beside the measured curve, never
//! joined to it. And the three axes as one CSV table.

use super::report::{Extrapolation, PowerReport, Summary};
use super::text::TARGET_POWER;
use crate::report::svg::{esc, open, percent_ticks, BAR, INK, LEFT, RIGHT, TOP, W};
use crate::report::text::pct;
use std::fmt::Write;

const EXTRA: &str = "#b5651d";
const ACC_H: f64 = 190.0;
const GAP: f64 = 46.0;
const POWER_H: f64 = 130.0;
const FOOT: f64 = 52.0;

/// Accuracy and power against trials per class, with the extrapolation.
pub fn trials(r: &PowerReport) -> String {
    let pts: Vec<(usize, &Summary)> = r.trials.iter().map(|t| (t.per_class, &t.summary)).collect();
    figure(
        r,
        "Trials per class: accuracy and power",
        "trials per class (log scale); bars: ± SD over subsamples",
        &pts,
        true,
        r.extrapolation.as_ref(),
    )
}

/// Accuracy and power against the number of recorded neurons kept.
pub fn neurons(r: &PowerReport) -> String {
    let pts: Vec<(usize, &Summary)> = r.neurons.iter().map(|t| (t.size, &t.summary)).collect();
    figure(
        r,
        "Neurons kept: accuracy and power",
        "recorded neurons kept (log scale); bars: ± SD over random subsets",
        &pts,
        true,
        None,
    )
}

/// Accuracy and power against the number of noise neurons added.
pub fn noise(r: &PowerReport) -> String {
    let pts: Vec<(usize, &Summary)> = r.noise.iter().map(|t| (t.added, &t.summary)).collect();
    figure(
        r,
        "Noise neurons added: accuracy and power",
        &format!(
            "noise neurons added to the {} recorded (permuted copies); bars: ± SD over draws",
            r.recorded_neurons
        ),
        &pts,
        false,
        None,
    )
}

/// The three axes as one table.
pub fn table(r: &PowerReport) -> String {
    let mut out =
        String::from("axis,size,subsamples,accuracy_mean,accuracy_sd,significant,power\n");
    let rows = r
        .trials
        .iter()
        .map(|t| ("trials_per_class", t.per_class, &t.summary))
        .chain(r.neurons.iter().map(|t| ("neurons", t.size, &t.summary)))
        .chain(r.noise.iter().map(|t| ("noise_added", t.added, &t.summary)));
    for (axis, size, s) in rows {
        writeln!(
            out,
            "{axis},{size},{},{},{},{},{}",
            s.subsamples, s.accuracy.mean, s.accuracy.sd, s.significant, s.power
        )
        .unwrap();
    }
    if let Some(e) = &r.extrapolation {
        out.push_str("\nextrapolated (not measured),per_class,accuracy,low,high\n");
        for p in &e.points {
            writeln!(
                out,
                "extrapolation,{},{},{},{}",
                p.per_class, p.accuracy, p.low, p.high
            )
            .unwrap();
        }
    }
    out
}

/// Two panels sharing the x axis: accuracy (mean ± SD, chance) and power (with the rate without information and
/// the 80 % mark).
fn figure(
    r: &PowerReport,
    title: &str,
    x_label: &str,
    pts: &[(usize, &Summary)],
    log_x: bool,
    extra: Option<&Extrapolation>,
) -> String {
    let h = TOP + ACC_H + GAP + POWER_H + FOOT;
    let pw = W - LEFT - RIGHT;
    let sizes = pts.iter().map(|p| p.0);
    let last_extra = extra.and_then(|e| e.points.last()).map(|p| p.per_class);
    let lo_size = sizes.clone().min().unwrap_or(0) as f64;
    let hi_size = sizes.max().into_iter().chain(last_extra).max().unwrap_or(1) as f64;
    let x = |s: f64| -> f64 {
        if log_x {
            let (a, b) = (libm::log(lo_size.max(1.0)), libm::log(hi_size.max(2.0)));
            if b > a {
                LEFT + 10.0 + (libm::log(s.max(1.0)) - a) / (b - a) * (pw - 20.0)
            } else {
                LEFT + pw / 2.0
            }
        } else if hi_size > lo_size {
            LEFT + 10.0 + (s - lo_size) / (hi_size - lo_size) * (pw - 20.0)
        } else {
            LEFT + pw / 2.0
        }
    };
    // Accuracy range: every mean ± SD, chance and the extrapolation's interval, to the next 5 points.
    let values = pts
        .iter()
        .flat_map(|(_, s)| {
            [
                s.accuracy.mean - s.accuracy.sd,
                s.accuracy.mean + s.accuracy.sd,
            ]
        })
        .chain(
            extra
                .into_iter()
                .flat_map(|e| e.points.iter().flat_map(|p| [p.low, p.high])),
        )
        .chain([r.chance])
        .filter(|v| v.is_finite());
    let (lo, hi) = values.fold((f64::INFINITY, f64::NEG_INFINITY), |(a, b), v| {
        (a.min(v), b.max(v))
    });
    let lo = (((lo - 0.02) * 20.0).floor() / 20.0).max(0.0);
    let hi = (((hi + 0.02) * 20.0).ceil() / 20.0).min(1.0).max(lo + 0.05);
    let ya = |v: f64| TOP + ACC_H - (v - lo) / (hi - lo) * ACC_H;
    let power_top = TOP + ACC_H + GAP;
    let yp = |v: f64| power_top + POWER_H - v * POWER_H;

    let mut svg = String::new();
    open(&mut svg, title, W, h);
    // Frames of both panels.
    for (top, height, name) in [
        (TOP, ACC_H, r.headline.replace('_', " ")),
        (power_top, POWER_H, "power".to_string()),
    ] {
        write!(
            svg,
            r#"<path d="M{LEFT} {b} H{r} M{LEFT} {b} V{top}" stroke="{INK}" fill="none"/><text transform="translate(14 {cy}) rotate(-90)" text-anchor="middle" fill="{INK}">{n}</text>"#,
            b = top + height,
            r = LEFT + pw,
            cy = top + height / 2.0,
            n = esc(&name)
        )
        .unwrap();
    }
    percent_ticks(&mut svg, lo, hi, &ya);
    for v in [0.0, 0.25, 0.5, 0.75, 1.0] {
        write!(
            svg,
            r#"<path d="M{LEFT} {vy:.2} h-5" stroke="{INK}"/><text x="{tx}" y="{ty:.2}" text-anchor="end" fill="{INK}">{p:.0} %</text>"#,
            vy = yp(v),
            tx = LEFT - 8.0,
            ty = yp(v) + 4.0,
            p = v * 100.0
        )
        .unwrap();
    }
    // Reference lines: chance; the rate without information and the 80 % mark.
    let reference = |svg: &mut String, y: f64, label: &str| {
        write!(
            svg,
            r#"<path d="M{LEFT} {y:.2} H{r}" stroke="{INK}" stroke-dasharray="2 3"/><text x="{r}" y="{t:.2}" text-anchor="end" fill="{INK}" font-size="11">{l}</text>"#,
            r = LEFT + pw,
            t = y - 4.0,
            l = esc(label)
        )
        .unwrap();
    };
    reference(&mut svg, ya(r.chance), &format!("chance {}", pct(r.chance)));
    reference(
        &mut svg,
        yp(r.test_size),
        &format!("without information {}", pct(r.test_size)),
    );
    reference(
        &mut svg,
        yp(TARGET_POWER),
        &format!("{:.0} % power", TARGET_POWER * 100.0),
    );
    // The measured curves.
    let mut acc_line = String::new();
    let mut power_line = String::new();
    for (i, &(size, s)) in pts.iter().enumerate() {
        let px = x(size as f64);
        let (m, sd) = (s.accuracy.mean, s.accuracy.sd);
        let step = if i == 0 { "M" } else { "L" };
        write!(acc_line, "{step}{px:.2} {:.2} ", ya(m)).unwrap();
        write!(power_line, "{step}{px:.2} {:.2} ", yp(s.power)).unwrap();
        write!(
            svg,
            r#"<path d="M{px:.2} {a:.2} V{b:.2}" stroke="{BAR}" stroke-width="2"/><circle cx="{px:.2}" cy="{py:.2}" r="3.5" fill="{BAR}"/><circle cx="{px:.2}" cy="{pp:.2}" r="3.5" fill="{BAR}"/><path d="M{px:.2} {base} v5" stroke="{INK}"/><text x="{px:.2}" y="{ty}" text-anchor="middle" fill="{INK}">{size}</text>"#,
            a = ya((m + sd).min(hi)),
            b = ya((m - sd).max(lo)),
            py = ya(m),
            pp = yp(s.power),
            base = power_top + POWER_H,
            ty = power_top + POWER_H + 18.0
        )
        .unwrap();
    }
    for line in [&acc_line, &power_line] {
        write!(
            svg,
            r#"<path d="{line}" fill="none" stroke="{BAR}" stroke-width="2"/>"#
        )
        .unwrap();
    }
    if let Some(e) = extra {
        extrapolation(&mut svg, e, &x, &ya, power_top + POWER_H);
        // The legend, above the panel: what is measured and what is not.
        write!(
            svg,
            r#"<path d="M{LEFT} {y} h22" stroke="{BAR}" stroke-width="2"/><text x="{t1}" y="{ty}" fill="{INK}" font-size="11">measured</text><path d="M{l2} {y} h22" stroke="{EXTRA}" stroke-width="2" stroke-dasharray="6 4"/><text x="{t2}" y="{ty}" fill="{EXTRA}" font-size="11">extrapolation, not measured (dotted: {level:.0} % interval)</text>"#,
            y = TOP - 10.0,
            ty = TOP - 6.0,
            t1 = LEFT + 26.0,
            l2 = LEFT + 90.0,
            t2 = LEFT + 116.0,
            level = e.level * 100.0
        )
        .unwrap();
    }
    write!(
        svg,
        r#"<text x="{cx}" y="{ly}" text-anchor="middle" fill="{INK}">{l}</text>"#,
        cx = LEFT + pw / 2.0,
        ly = h - 12.0,
        l = esc(x_label)
    )
    .unwrap();
    svg.push_str("</svg>");
    svg
}

/// The extrapolated curve (dashed) and its interval (dotted) in the accuracy panel, a line marking the largest
/// measured size, and the farthest size on the axis (the legend says what the lines are). Power is not
/// extrapolated.
fn extrapolation(
    svg: &mut String,
    e: &Extrapolation,
    x: &dyn Fn(f64) -> f64,
    ya: &dyn Fn(f64) -> f64,
    axis: f64,
) {
    let path = |value: &dyn Fn(&super::report::ExtrapolatedPoint) -> f64| -> String {
        e.points
            .iter()
            .enumerate()
            .map(|(i, p)| {
                format!(
                    "{}{:.2} {:.2}",
                    if i == 0 { "M" } else { "L" },
                    x(p.per_class as f64),
                    ya(value(p))
                )
            })
            .collect::<Vec<_>>()
            .join(" ")
    };
    let first = e.points.first().expect("an extrapolation has points");
    let last = e.points.last().expect("an extrapolation has points");
    let (x0, x1) = (x(first.per_class as f64), x(last.per_class as f64));
    write!(
        svg,
        r#"<path d="M{x0:.2} {TOP} V{axis}" stroke="{INK}" stroke-dasharray="1 3"/><text x="{tx:.2}" y="{ty}" text-anchor="end" fill="{INK}" font-size="11">recorded</text><path d="{interval_low}" fill="none" stroke="{EXTRA}" stroke-dasharray="1 3"/><path d="{interval_high}" fill="none" stroke="{EXTRA}" stroke-dasharray="1 3"/><path d="{fit}" fill="none" stroke="{EXTRA}" stroke-width="2" stroke-dasharray="6 4"/><path d="M{x1:.2} {axis} v5" stroke="{INK}"/><text x="{x1:.2}" y="{tl}" text-anchor="middle" fill="{EXTRA}">{n}</text>"#,
        tx = x0 - 3.0,
        ty = TOP + 12.0,
        interval_low = path(&|p| p.low),
        interval_high = path(&|p| p.high),
        fit = path(&|p| p.accuracy),
        tl = axis + 18.0,
        n = last.per_class,
    )
    .unwrap();
}
