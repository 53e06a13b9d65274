//! Figures as SVG text, drawn by the core so that the page, the offline file and the CLI show the same picture.
//!
//! Plain SVG written here rather than a plotting crate: the figures are three simple kinds (a histogram with marker
//! lines, and a heatmap), SVG needs no font metrics from the DOM, and the output is byte-identical on every face.
//! Every string from the user's file is escaped. Information never rides on colour alone: bars and lines are
//! labelled, heatmap cells carry their percentage as text.

use super::text::{p_text, pct};
use super::Report;
use crate::protocol::Headline;
use std::fmt::Write;

pub(crate) const W: f64 = 560.0;
pub(crate) const H: f64 = 340.0;
pub(crate) const LEFT: f64 = 56.0;
pub(crate) const RIGHT: f64 = 20.0;
pub(crate) const TOP: f64 = 44.0;
pub(crate) const BOTTOM: f64 = 52.0;
pub(crate) const INK: &str = "#1f2933";
pub(crate) const BAR: &str = "#5b7fa6";
pub(crate) const NULL_BAR: &str = "#a7a9ac";

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

pub(crate) fn open(svg: &mut String, title: &str, w: f64, h: f64) {
    write!(
        svg,
        r#"<svg xmlns="http://www.w3.org/2000/svg" width="{w}" height="{h}" viewBox="0 0 {w} {h}" font-family="system-ui, sans-serif" font-size="12" role="img"><title>{t}</title><rect width="{w}" height="{h}" fill="white"/><text x="{x}" y="22" font-size="14" font-weight="600" fill="{INK}">{t}</text>"#,
        t = esc(title),
        x = LEFT
    )
    .unwrap();
}

/// Ticks and labels in percent on a vertical axis at `LEFT`, every 10 points (5 when the range is narrow).
pub(crate) fn percent_ticks(svg: &mut String, lo: f64, hi: f64, y: &dyn Fn(f64) -> f64) {
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
struct Marker {
    at: f64,
    label: String,
    dash: &'static str,
    colour: &'static str,
}

/// Histogram of scores in [0, 1] with labelled vertical markers.
fn histogram(title: &str, x_label: &str, values: &[f64], markers: &[Marker], bar: &str) -> String {
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
    let top = counts.iter().copied().max().unwrap_or(1).max(1) as f64;
    let (pw, ph) = (W - LEFT - RIGHT, H - TOP - BOTTOM);
    let x = |v: f64| LEFT + (v - lo) / (hi - lo) * pw;
    let y = |c: f64| TOP + ph - c / top * ph;
    let mut svg = String::new();
    open(&mut svg, title, W, H);
    for (b, &c) in counts.iter().enumerate() {
        if c > 0 {
            let x0 = x(lo + b as f64 * width);
            write!(
                svg,
                r#"<rect x="{:.2}" y="{:.2}" width="{:.2}" height="{:.2}" fill="{bar}"/>"#,
                x0 + 0.5,
                y(c as f64),
                (pw / bins as f64 - 1.0).max(0.5),
                TOP + ph - y(c as f64)
            )
            .unwrap();
        }
    }
    // Axes and ticks every 5 or 10 percentage points.
    let step = if hi - lo > 0.5 { 0.1 } else { 0.05 };
    write!(
        svg,
        r#"<path d="M{LEFT} {b} H{r} M{LEFT} {b} V{TOP}" stroke="{INK}" fill="none"/>"#,
        b = TOP + ph,
        r = LEFT + pw
    )
    .unwrap();
    let mut t = (lo / step).ceil() * step;
    while t <= hi + 1e-9 {
        write!(
            svg,
            r#"<path d="M{x:.2} {b} v5" stroke="{INK}"/><text x="{x:.2}" y="{ty}" text-anchor="middle" fill="{INK}">{l:.0} %</text>"#,
            x = x(t),
            b = TOP + ph,
            ty = TOP + ph + 18.0,
            l = t * 100.0
        )
        .unwrap();
        t += step;
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
    for (i, m) in markers.iter().enumerate() {
        let mx = x(m.at);
        write!(
            svg,
            r#"<path d="M{mx:.2} {TOP} V{b}" stroke="{c}" stroke-width="2" stroke-dasharray="{d}"/><text x="{tx:.2}" y="{ty}" fill="{c}" text-anchor="{a}">{l}</text>"#,
            b = TOP + ph,
            c = m.colour,
            d = m.dash,
            tx = if mx > LEFT + pw * 0.7 { mx - 4.0 } else { mx + 4.0 },
            a = if mx > LEFT + pw * 0.7 { "end" } else { "start" },
            ty = TOP + 12.0 + 14.0 * i as f64,
            l = esc(&m.label)
        )
        .unwrap();
    }
    svg.push_str("</svg>");
    svg
}

fn headline_name(r: &Report) -> &'static str {
    match r.design.headline {
        Headline::Accuracy => "accuracy",
        Headline::BalancedAccuracy => "balanced accuracy",
    }
}

/// Distribution of the headline score over repeats, with chance and the binomial threshold.
pub fn score_distribution(r: &Report) -> String {
    let values: Vec<f64> = r
        .repeats
        .iter()
        .map(|x| {
            if r.design.headline == Headline::Accuracy {
                x.accuracy
            } else {
                x.balanced_accuracy
            }
        })
        .collect();
    let markers = [
        Marker {
            at: r.chance.level,
            label: format!("chance {}", pct(r.chance.level)),
            dash: "6 4",
            colour: INK,
        },
        Marker {
            at: r.chance.threshold,
            label: format!(
                "binomial α = {} threshold {}",
                r.chance.alpha,
                pct(r.chance.threshold)
            ),
            dash: "2 3",
            colour: "#7a4f9a",
        },
        Marker {
            at: r.headline().mean,
            label: format!("mean {}", pct(r.headline().mean)),
            dash: "none",
            colour: "#1d4e89",
        },
    ];
    let name = headline_name(r);
    histogram(
        &format!("Decoding {name} over {} repeats", values.len()),
        name,
        &values,
        &markers,
        BAR,
    )
}

/// The shuffle null distribution with the observed score marked, or `None` without shuffles.
pub fn null_distribution(r: &Report) -> Option<String> {
    let p = r.shuffle.p_value?;
    let markers = [
        Marker {
            at: r.shuffle.observed,
            label: format!("observed {} (p = {})", pct(r.shuffle.observed), p_text(p)),
            dash: "none",
            colour: "#1d4e89",
        },
        Marker {
            at: r.shuffle.null_p95.unwrap_or(f64::NAN),
            label: format!(
                "null 95th pct {}",
                pct(r.shuffle.null_p95.unwrap_or(f64::NAN))
            ),
            dash: "2 3",
            colour: INK,
        },
    ];
    let title = format!(
        "Shuffled labels: {} permutations × {} repeats",
        r.shuffle.count, r.shuffle.repeats_each
    );
    Some(histogram(
        &title,
        headline_name(r),
        &r.shuffle.null,
        &markers,
        NULL_BAR,
    ))
}

/// Sequential light-to-dark blue (ColorBrewer "Blues" end points, Brewer 2003), readable by colour-blind viewers.
fn blue(v: f64) -> (String, &'static str) {
    let (a, b) = ([247.0, 251.0, 255.0], [8.0, 48.0, 107.0]);
    let t = v.clamp(0.0, 1.0);
    let c: Vec<u8> = (0..3)
        .map(|i| (a[i] + (b[i] - a[i]) * t).round() as u8)
        .collect();
    (
        format!("#{:02x}{:02x}{:02x}", c[0], c[1], c[2]),
        if t > 0.55 { "#ffffff" } else { INK },
    )
}

/// Row-normalised confusion matrix as a heatmap with percentages in the cells.
pub fn confusion(r: &Report) -> String {
    let k = r.classes.len();
    let cell = (360.0 / k as f64).clamp(28.0, 72.0);
    let label_w = 130.0;
    let (w, h) = (
        (label_w + cell * k as f64 + 30.0).max(400.0), // at least as wide as the title
        TOP + 30.0 + cell * k as f64 + 40.0,
    );
    let x0 = label_w;
    let y0 = TOP + 30.0;
    let mut svg = String::new();
    open(&mut svg, "Confusion matrix (% of each true class)", w, h);
    let short = |s: &str| {
        if s.chars().count() > 16 {
            format!("{}…", s.chars().take(15).collect::<String>())
        } else {
            s.to_string()
        }
    };
    for (j, c) in r.classes.iter().enumerate() {
        write!(
            svg,
            r#"<text x="{:.1}" y="{:.1}" text-anchor="middle" fill="{INK}"><title>{full}</title>{}</text>"#,
            x0 + cell * (j as f64 + 0.5),
            y0 - 8.0,
            esc(&short(c)),
            full = esc(c)
        )
        .unwrap();
    }
    for (i, row) in r.summary.confusion.iter().enumerate() {
        write!(
            svg,
            r#"<text x="{:.1}" y="{:.1}" text-anchor="end" fill="{INK}"><title>{full}</title>{}</text>"#,
            x0 - 8.0,
            y0 + cell * (i as f64 + 0.5) + 4.0,
            esc(&short(&r.classes[i])),
            full = esc(&r.classes[i])
        )
        .unwrap();
        for (j, &v) in row.iter().enumerate() {
            let (fill, ink) = blue(v);
            write!(
                svg,
                r#"<rect x="{:.1}" y="{:.1}" width="{cell:.1}" height="{cell:.1}" fill="{fill}" stroke="white"/><text x="{:.1}" y="{:.1}" text-anchor="middle" fill="{ink}"{bold}>{:.0}</text>"#,
                x0 + cell * j as f64,
                y0 + cell * i as f64,
                x0 + cell * (j as f64 + 0.5),
                y0 + cell * (i as f64 + 0.5) + 4.0,
                100.0 * v,
                bold = if i == j { r#" font-weight="700""# } else { "" }
            )
            .unwrap();
        }
    }
    write!(
        svg,
        r#"<text x="{:.1}" y="{:.1}" text-anchor="middle" fill="{INK}">predicted class</text><text transform="translate(14 {:.1}) rotate(-90)" text-anchor="middle" fill="{INK}">true class</text></svg>"#,
        x0 + cell * k as f64 / 2.0,
        h - 10.0,
        y0 + cell * k as f64 / 2.0
    )
    .unwrap();
    svg
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
    fn colour_scale_runs_light_to_dark() {
        assert_eq!(blue(0.0).0, "#f7fbff");
        assert_eq!(blue(1.0).0, "#08306b");
    }
}
