//! Figures of a study as SVG text: every session's score with the group mean, and over time every session's curve
//! under the group curve.
//!
//! Information never rides on colour alone: sessions of one subject share a column of the figure and a marker
//! shape, and the subject's name is written under its column; the group curve is drawn thicker than the sessions'
//! and its significant clusters are a labelled bar under the axis.

use super::report::StudyReport;
use crate::report::svg::{
    esc, open, percent_ticks, tick_step, BAR, BOTTOM, H, INK, LEFT, NULL_BAR, RIGHT, TOP, W,
};
use crate::report::text::{clip, p_phrase, pct, seconds};
use crate::resample::Headline;
use std::fmt::Write;

/// A marker of shape `k` (circle, square, triangle, diamond, down-triangle, cross, in turn) centred at (x, y).
fn marker(svg: &mut String, k: usize, x: f64, y: f64, title: &str) {
    let r = 4.5;
    let shape = match k % 6 {
        0 => format!(r#"<circle cx="{x:.2}" cy="{y:.2}" r="{r}""#),
        1 => format!(
            r#"<rect x="{:.2}" y="{:.2}" width="{w}" height="{w}""#,
            x - r,
            y - r,
            w = 2.0 * r
        ),
        2 => format!(
            r#"<path d="M{x:.2} {:.2} L{:.2} {:.2} L{:.2} {:.2} Z""#,
            y - r - 1.0,
            x + r + 1.0,
            y + r,
            x - r - 1.0,
            y + r
        ),
        3 => format!(
            r#"<path d="M{x:.2} {:.2} L{:.2} {y:.2} L{x:.2} {:.2} L{:.2} {y:.2} Z""#,
            y - r - 1.0,
            x + r + 1.0,
            y + r + 1.0,
            x - r - 1.0
        ),
        4 => format!(
            r#"<path d="M{x:.2} {:.2} L{:.2} {:.2} L{:.2} {:.2} Z""#,
            y + r + 1.0,
            x + r + 1.0,
            y - r,
            x - r - 1.0,
            y - r
        ),
        _ => format!(
            r#"<path d="M{:.2} {:.2} L{:.2} {:.2} M{:.2} {:.2} L{:.2} {:.2}""#,
            x - r,
            y - r,
            x + r,
            y + r,
            x - r,
            y + r,
            x + r,
            y - r
        ),
    };
    write!(
        svg,
        r#"{shape} fill="white" stroke="{INK}" stroke-width="{}"><title>{}</title></{}>"#,
        if k % 6 == 5 { 2.5 } else { 1.5 },
        esc(title),
        match k % 6 {
            0 => "circle",
            1 => "rect",
            _ => "path",
        }
    )
    .unwrap();
}

/// One point per session (the mean over its repeats), in one column per subject (or one column for a study without
/// subjects), with the group mean and its interval across the second level, and chance.
pub fn sessions(r: &StudyReport) -> Option<String> {
    let g = r.group.as_ref()?;
    let score = |x: &super::report::SessionResult| {
        match r.headline {
            Headline::Accuracy => x.accuracy.as_ref(),
            Headline::BalancedAccuracy => x.balanced_accuracy.as_ref(),
        }
        .map(|a| a.mean)
    };
    // Columns: subjects in order of first appearance, or a single column.
    let mut columns: Vec<String> = Vec::new();
    let column_of: Vec<usize> = r
        .sessions
        .iter()
        .map(|x| {
            let key = match (&x.subject, r.study.subjects) {
                (Some(s), Some(_)) => s.clone(),
                _ => String::new(),
            };
            columns.iter().position(|c| *c == key).unwrap_or_else(|| {
                columns.push(key);
                columns.len() - 1
            })
        })
        .collect();
    let values: Vec<f64> = r.sessions.iter().filter_map(score).collect();
    let interval = g.interval.as_ref();
    let hi_data = values
        .iter()
        .copied()
        .chain(interval.map(|i| i.high))
        .fold(r.chance, f64::max);
    let lo_data = values
        .iter()
        .copied()
        .chain(interval.map(|i| i.low))
        .fold(r.chance, f64::min);
    let lo = ((lo_data - 0.02) * 20.0).floor().max(0.0) / 20.0;
    let hi = ((hi_data + 0.02) * 20.0).ceil().min(20.0) / 20.0;
    let height = H + 28.0;
    let (pw, ph) = (W - LEFT - RIGHT - 90.0, H - TOP - BOTTOM);
    let y = |v: f64| TOP + ph - (v - lo) / (hi - lo) * ph;
    let band = pw / columns.len() as f64;
    let mut svg = String::new();
    open(
        &mut svg,
        &format!("Sessions and the group ({} per session)", r.headline.name()),
        W,
        height,
    );
    // Chance, then the group's interval and mean to the right of the columns.
    write!(
        svg,
        r#"<path d="M{LEFT} {c:.2} H{e}" stroke="{INK}" stroke-dasharray="2 3"/>"#,
        c = y(r.chance),
        e = LEFT + pw + 80.0
    )
    .unwrap();
    let gx = LEFT + pw + 40.0;
    if let Some(i) = interval {
        write!(
            svg,
            r#"<path d="M{gx} {a:.2} V{b:.2} M{l} {a:.2} h12 M{l} {b:.2} h12" stroke="{BAR}" stroke-width="2"/>"#,
            a = y(i.high),
            b = y(i.low),
            l = gx - 6.0
        )
        .unwrap();
    }
    write!(
        svg,
        r#"<path d="M{a} {m:.2} h36" stroke="{BAR}" stroke-width="3.5"><title>group mean {}</title></path><text x="{gx}" y="{ty}" text-anchor="middle" fill="{INK}">group</text>"#,
        esc(&pct(g.mean)),
        a = gx - 18.0,
        m = y(g.mean),
        ty = TOP + ph + 18.0
    )
    .unwrap();
    // Sessions, spread across their column by position; each subject's mean as a short bar.
    for (c, name) in columns.iter().enumerate() {
        let members: Vec<usize> = (0..r.sessions.len())
            .filter(|&s| column_of[s] == c)
            .collect();
        let left = LEFT + band * c as f64;
        if c > 0 {
            write!(
                svg,
                r#"<path d="M{left:.2} {TOP} V{b}" stroke="{NULL_BAR}" stroke-opacity="0.5"/>"#,
                b = TOP + ph
            )
            .unwrap();
        }
        let scores: Vec<f64> = members
            .iter()
            .filter_map(|&s| score(&r.sessions[s]))
            .collect();
        if !name.is_empty() && !scores.is_empty() {
            let m = crate::stats::mean(&scores);
            write!(
                svg,
                r#"<path d="M{:.2} {:.2} h{:.2}" stroke="{INK}" stroke-width="2"><title>subject {} mean {}</title></path>"#,
                left + band * 0.2,
                y(m),
                band * 0.6,
                esc(name),
                esc(&pct(m))
            )
            .unwrap();
        }
        for (k, &s) in members.iter().enumerate() {
            let Some(v) = score(&r.sessions[s]) else {
                continue;
            };
            let x = left + band * (k as f64 + 1.0) / (members.len() as f64 + 1.0);
            let title = format!(
                "{}: {}{}",
                r.sessions[s].session,
                pct(v),
                r.sessions[s].p_value.map_or(String::new(), |p| {
                    format!(", {}", p_phrase(p, r.recipe.shuffles))
                })
            );
            marker(
                &mut svg,
                if name.is_empty() { 0 } else { c },
                x,
                y(v),
                &title,
            );
        }
        let label = if name.is_empty() {
            format!("{} sessions", members.len())
        } else {
            name.clone()
        };
        write!(
            svg,
            r#"<text x="{:.2}" y="{}" text-anchor="middle" fill="{INK}">{}</text>"#,
            left + band / 2.0,
            TOP + ph + 18.0,
            esc(&clip(&label, (band / 7.0).max(3.0) as usize))
        )
        .unwrap();
    }
    write!(
        svg,
        r#"<path d="M{LEFT} {b} H{r} M{LEFT} {TOP} V{b}" stroke="{INK}" fill="none"/>"#,
        b = TOP + ph,
        r = LEFT + pw + 80.0
    )
    .unwrap();
    percent_ticks(&mut svg, lo, hi, &y);
    write!(
        svg,
        r#"<text x="{cx}" y="{ly}" text-anchor="middle" fill="{INK}">{what}</text>"#,
        cx = LEFT + pw / 2.0,
        ly = H - 10.0,
        what = if r.study.subjects.is_some() {
            "subject (one marker shape per subject, one marker per session)"
        } else {
            "sessions (one marker per session)"
        }
    )
    .unwrap();
    let ly = height - 12.0;
    let interval_words = interval.map_or("group mean".to_string(), |i| {
        format!("group mean, {:.0} % t interval", 100.0 * i.level)
    });
    write!(
        svg,
        r#"<path d="M{LEFT} {ly} h22" stroke="{BAR}" stroke-width="3.5"/><text x="{tx}" y="{ty}" fill="{INK}">{}</text><path d="M{cx} {ly} h22" stroke="{INK}" stroke-dasharray="2 3"/><text x="{ctx}" y="{ty}" fill="{INK}">chance</text>"#,
        esc(&interval_words),
        tx = LEFT + 28.0,
        ty = ly + 4.0,
        cx = LEFT + 250.0,
        ctx = LEFT + 278.0
    )
    .unwrap();
    if r.study.subjects.is_some() {
        write!(
            svg,
            r#"<path d="M{x} {ly} h22" stroke="{INK}" stroke-width="2"/><text x="{tx}" y="{ty}" fill="{INK}">subject mean</text>"#,
            x = LEFT + 340.0,
            tx = LEFT + 368.0,
            ty = ly + 4.0
        )
        .unwrap();
    }
    svg.push_str("</svg>");
    Some(svg)
}

/// Over time: every session's curve (thin), the group curve (thick), the group null's 95th percentile, chance, and
/// the group curve's significant clusters as a bar under the axis.
pub fn group_curve(r: &StudyReport) -> Option<String> {
    let t = r.time.as_ref()?;
    let times: Vec<f64> = t.windows.iter().map(|w| w.time).collect();
    let mean: Vec<f64> = t.windows.iter().map(|w| w.mean).collect();
    let curves: Vec<&Vec<f64>> = r.sessions.iter().filter_map(|s| s.curve.as_ref()).collect();
    let (t0, t1) = (times[0], *times.last().expect("windows"));
    let (t0, t1) = if t1 > t0 {
        (t0, t1)
    } else {
        (t0 - 0.5, t0 + 0.5)
    };
    let all = curves
        .iter()
        .flat_map(|c| c.iter().copied())
        .chain(mean.iter().copied())
        .chain(t.windows.iter().filter_map(|w| w.null_p95));
    let (lo_data, hi_data) = all.fold((r.chance, r.chance), |(a, b), v| (a.min(v), b.max(v)));
    let lo = ((lo_data - 0.02) * 20.0).floor().max(0.0) / 20.0;
    let hi = ((hi_data + 0.02) * 20.0).ceil().min(20.0) / 20.0;
    let (pw, ph) = (W - LEFT - RIGHT, H - TOP - BOTTOM - 18.0);
    let x = |v: f64| LEFT + (v - t0) / (t1 - t0) * pw;
    let y = |v: f64| TOP + ph - (v - lo) / (hi - lo) * ph;
    let height = H + 28.0;
    let mut svg = String::new();
    open(
        &mut svg,
        &format!(
            "Group curve over time ({} per window, {} {}s)",
            r.headline.name(),
            r.units.len(),
            r.study.level
        ),
        W,
        height,
    );
    let line = |values: &[f64]| {
        let mut d = String::new();
        for (i, (&tt, &v)) in times.iter().zip(values).enumerate() {
            write!(
                d,
                "{}{:.2} {:.2} ",
                if i == 0 { "M" } else { "L" },
                x(tt),
                y(v)
            )
            .unwrap();
        }
        d
    };
    for (s, c) in r.sessions.iter().zip(&curves) {
        write!(
            svg,
            r#"<path d="{}" fill="none" stroke="{NULL_BAR}" stroke-width="1"><title>session {}</title></path>"#,
            line(c),
            esc(&s.session)
        )
        .unwrap();
    }
    let null_p95: Vec<f64> = t.windows.iter().filter_map(|w| w.null_p95).collect();
    if null_p95.len() == times.len() {
        write!(
            svg,
            r#"<path d="{}" fill="none" stroke="{INK}" stroke-width="1.5" stroke-dasharray="6 3"/>"#,
            line(&null_p95)
        )
        .unwrap();
    }
    write!(
        svg,
        r#"<path d="M{LEFT} {c:.2} H{e}" stroke="{INK}" stroke-dasharray="2 3"/><path d="{}" fill="none" stroke="{BAR}" stroke-width="3"/>"#,
        line(&mean),
        c = y(r.chance),
        e = LEFT + pw
    )
    .unwrap();
    if t0 < 0.0 && t1 > 0.0 {
        write!(
            svg,
            r#"<path d="M{z:.2} {TOP} V{b}" stroke="{INK}" stroke-opacity="0.5"/>"#,
            z = x(0.0),
            b = TOP + ph
        )
        .unwrap();
    }
    let bar_y = TOP + ph + 8.0;
    for c in t.clusters.iter().filter(|c| c.significant) {
        let (a, b) = (x(c.start), x(c.end).max(x(c.start) + 3.0));
        write!(
            svg,
            r#"<rect x="{a:.2}" y="{bar_y:.2}" width="{:.2}" height="6" fill="{INK}"><title>group cluster {} s to {} s, {}</title></rect>"#,
            b - a,
            seconds(c.start),
            seconds(c.end),
            p_phrase(c.p_value, r.group.as_ref().map_or(0, |g| g.draws))
        )
        .unwrap();
    }
    let base = TOP + ph + 18.0;
    write!(
        svg,
        r#"<path d="M{LEFT} {base} H{r} M{LEFT} {TOP} V{b}" stroke="{INK}" fill="none"/>"#,
        r = LEFT + pw,
        b = TOP + ph
    )
    .unwrap();
    let step = tick_step(t1 - t0, 8.0);
    let mut tick = (t0 / step).ceil() * step;
    while tick <= t1 + step * 1e-6 {
        write!(
            svg,
            r#"<path d="M{tx:.2} {base} v5" stroke="{INK}"/><text x="{tx:.2}" y="{ty}" text-anchor="middle" fill="{INK}">{l}</text>"#,
            tx = x(tick),
            ty = base + 18.0,
            l = seconds(tick)
        )
        .unwrap();
        tick += step;
    }
    percent_ticks(&mut svg, lo, hi, &y);
    write!(
        svg,
        r#"<text x="{cx}" y="{ly}" text-anchor="middle" fill="{INK}">time from alignment (s), window centres</text>"#,
        cx = LEFT + pw / 2.0,
        ly = H - 10.0
    )
    .unwrap();
    let ly = height - 12.0;
    let mut lx = LEFT;
    for (colour, width, dash, label, advance) in [
        (BAR, 3.0, "", "group mean", 105.0),
        (NULL_BAR, 1.0, "", "sessions", 85.0),
        (INK, 1.5, "6 3", "group null 95th pct", 155.0),
        (INK, 1.0, "2 3", "chance", 70.0),
    ] {
        write!(
            svg,
            r#"<path d="M{lx} {ly} h22" stroke="{colour}" stroke-width="{width}" stroke-dasharray="{dash}"/><text x="{tx}" y="{ty}" fill="{INK}">{label}</text>"#,
            tx = lx + 28.0,
            ty = ly + 4.0
        )
        .unwrap();
        lx += advance;
    }
    if t.clusters.iter().any(|c| c.significant) {
        write!(
            svg,
            r#"<rect x="{lx}" y="{ry}" width="16" height="6" fill="{INK}"/><text x="{tx}" y="{ty}" fill="{INK}">p &lt; {}</text>"#,
            esc(&t.alpha.to_string()),
            ry = ly - 3.0,
            tx = lx + 20.0,
            ty = ly + 4.0
        )
        .unwrap();
    }
    svg.push_str("</svg>");
    Some(svg)
}
