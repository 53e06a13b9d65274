//! Figures of generalization across conditions: the score of every assignment beside its within-condition score,
//! the score over repeats, the shuffle null, and over time the curves and the train × test matrix.

use super::report::{AcrossReport, AcrossTimeReport};
use super::text::arrow;
use crate::report::figures::{curve, matrix, Axis, Curve, Series};
use crate::report::svg::{esc, histogram, open, Marker, BAR, INK, LEFT, NULL_BAR, W};
use crate::report::text::{clip, p_phrase, pct, per_permutation, seconds};
use crate::resample::Headline;
use std::fmt::Write;

const WITHIN: &str = "#b5651d";

fn percent(v: f64) -> String {
    format!("{:.0} %", 100.0 * v)
}

/// One row per assignment: generalization mean ± SD over repeats (filled), the within-condition mean (open), the
/// null's 95th percentile (grey tick) and chance (dashed).
pub fn assignments(r: &AcrossReport) -> String {
    let rows: Vec<(String, f64, f64, f64, Option<f64>)> = r
        .assignments
        .iter()
        .map(|a| {
            let (m, sd, w) = match r.design.headline {
                Headline::Accuracy => (a.accuracy.mean, a.accuracy.sd, a.within.accuracy.mean),
                Headline::BalancedAccuracy => (
                    a.balanced_accuracy.mean,
                    a.balanced_accuracy.sd,
                    a.within.balanced_accuracy.mean,
                ),
            };
            (arrow(&a.train, &a.test), m, sd, w, a.null_p95)
        })
        .collect();
    let axis = Axis::fit(
        rows.iter()
            .flat_map(|(_, m, sd, w, n)| [m - sd, m + sd, *w, n.unwrap_or(*m)])
            .chain([r.chance.level]),
        percent,
        Some((0.0, 1.0)),
    );
    let label_w = 190.0;
    let row_h = 26.0;
    let plot_w = 300.0;
    let (x0, y0) = (label_w, 56.0);
    let (w, h) = (W, y0 + row_h * rows.len() as f64 + 104.0);
    let x = |v: f64| x0 + (v.clamp(axis.lo, axis.hi) - axis.lo) / (axis.hi - axis.lo) * plot_w;
    let mut svg = String::new();
    open(
        &mut svg,
        &format!(
            "'{}' trained at some levels of '{}', tested at others",
            r.input.label_column, r.input.across_column
        ),
        w,
        h,
    );
    let bottom = y0 + row_h * rows.len() as f64;
    write!(
        svg,
        r#"<path d="M{c:.2} {y0} V{bottom}" stroke="{INK}" stroke-dasharray="2 3"/>"#,
        c = x(r.chance.level)
    )
    .unwrap();
    for (i, (label, m, sd, within, null)) in rows.iter().enumerate() {
        let cy = y0 + row_h * (i as f64 + 0.5);
        write!(
            svg,
            r#"<text x="{:.1}" y="{:.1}" text-anchor="end" fill="{INK}"><title>{full}</title>{}</text>"#,
            x0 - 10.0,
            cy + 4.0,
            esc(&clip(label, 30)),
            full = esc(label)
        )
        .unwrap();
        if let Some(n) = null {
            write!(
                svg,
                r#"<path d="M{:.2} {:.2} v12" stroke="{NULL_BAR}" stroke-width="3"/>"#,
                x(*n),
                cy - 6.0
            )
            .unwrap();
        }
        write!(
            svg,
            r#"<path d="M{:.2} {cy:.2} H{:.2}" stroke="{BAR}" stroke-width="2"/><circle cx="{:.2}" cy="{cy:.2}" r="5" fill="{BAR}"><title>generalization {} ± {}</title></circle><circle cx="{:.2}" cy="{cy:.2}" r="5" fill="white" stroke="{WITHIN}" stroke-width="2"><title>within {}</title></circle>"#,
            x(m - sd),
            x(m + sd),
            x(*m),
            pct(*m),
            pct(*sd),
            x(*within),
            pct(*within)
        )
        .unwrap();
    }
    write!(
        svg,
        r#"<path d="M{x0} {bottom} H{}" stroke="{INK}"/>"#,
        x0 + plot_w
    )
    .unwrap();
    let step = axis.step;
    let mut k = (axis.lo / step).ceil();
    while k * step <= axis.hi + 1e-9 {
        let t = k * step;
        write!(
            svg,
            r#"<path d="M{tx:.2} {bottom} v5" stroke="{INK}"/><text x="{tx:.2}" y="{ty}" text-anchor="middle" fill="{INK}">{l}</text>"#,
            tx = x(t),
            ty = bottom + 18.0,
            l = percent(t)
        )
        .unwrap();
        k += 1.0;
    }
    write!(
        svg,
        r#"<text x="{:.1}" y="{:.1}" text-anchor="middle" fill="{INK}">{}</text>"#,
        x0 + plot_w / 2.0,
        bottom + 32.0,
        r.design.headline.name()
    )
    .unwrap();
    // The legend in words, two rows. A bar of ± SD is named only when one is drawn.
    let (ly, ly2) = (bottom + 56.0, bottom + 76.0);
    let spread = if rows.iter().any(|(_, _, sd, _, _)| *sd > 0.0) {
        "mean ± SD over repeats"
    } else {
        "the same in every repeat"
    };
    write!(
        svg,
        r#"<circle cx="{l}" cy="{ly}" r="5" fill="{BAR}"/><text x="{t}" y="{a}" fill="{INK}">generalization, {spread}</text><circle cx="{m}" cy="{ly}" r="5" fill="white" stroke="{WITHIN}" stroke-width="2"/><text x="{n}" y="{a}" fill="{INK}">within the testing levels</text><path d="M{l} {b} v12" stroke="{NULL_BAR}" stroke-width="3"/><text x="{t}" y="{c}" fill="{INK}">null 95th percentile (labels permuted within levels)</text><path d="M{m2} {ly2} h22" stroke="{INK}" stroke-dasharray="2 3"/><text x="{n2}" y="{c}" fill="{INK}">chance</text>"#,
        l = LEFT,
        t = LEFT + 12.0,
        a = ly + 4.0,
        m = LEFT + 290.0,
        n = LEFT + 302.0,
        b = ly2 - 6.0,
        c = ly2 + 4.0,
        m2 = LEFT + 360.0,
        n2 = LEFT + 388.0
    )
    .unwrap();
    svg.push_str("</svg>");
    svg
}

/// The generalization score (mean over assignments) over repeats, with chance and the within-condition mean.
pub fn score_distribution(r: &AcrossReport) -> String {
    let values: Vec<f64> = r
        .repeats
        .iter()
        .map(|x| match r.design.headline {
            Headline::Accuracy => x.accuracy,
            Headline::BalancedAccuracy => x.balanced_accuracy,
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
            at: r.within_headline().mean,
            label: format!("within mean {}", pct(r.within_headline().mean)),
            dash: "2 3",
            colour: WITHIN,
        },
        Marker {
            at: r.headline().mean,
            label: format!("generalization mean {}", pct(r.headline().mean)),
            dash: "none",
            colour: "#1d4e89",
        },
    ];
    histogram(
        &format!(
            "Generalization {} over {} repeats",
            r.design.headline.name(),
            values.len()
        ),
        r.design.headline.name(),
        &values,
        &markers,
        BAR,
    )
}

/// The null of labels permuted within levels, with the observed score, or `None` without shuffles.
pub fn null_distribution(r: &AcrossReport) -> Option<String> {
    let p = r.shuffle.p_value?;
    let p95 = r.shuffle.null_p95?;
    let markers = [
        Marker {
            at: r.shuffle.observed,
            label: format!(
                "observed {} ({})",
                pct(r.shuffle.observed),
                p_phrase(p, r.shuffle.count)
            ),
            dash: "none",
            colour: "#1d4e89",
        },
        Marker {
            at: p95,
            label: format!("null 95th pct {}", pct(p95)),
            dash: "2 3",
            colour: INK,
        },
    ];
    Some(histogram(
        &format!(
            "Labels permuted within levels: {} permutations",
            r.shuffle.count
        ),
        &per_permutation(r.design.headline.name(), r.shuffle.repeats_each),
        &r.shuffle.null,
        &markers,
        NULL_BAR,
    ))
}

/// Generalization and within-condition scores over time, the null's 95th percentile, chance and clusters.
pub fn time_curve(r: &AcrossTimeReport) -> String {
    let times: Vec<f64> = r.windows.iter().map(|w| w.time).collect();
    let (mean, within) = (r.curve(), r.within_curve());
    let sd: Vec<f64> = r
        .windows
        .iter()
        .map(|w| match r.design.headline {
            Headline::Accuracy => w.accuracy.sd,
            Headline::BalancedAccuracy => w.balanced_accuracy.sd,
        })
        .collect();
    let null: Vec<f64> = r.windows.iter().filter_map(|w| w.null_p95).collect();
    let mut series = vec![
        Series {
            values: &mean,
            band: Some(&sd),
            colour: BAR,
            dash: "none",
            label: "generalization",
        },
        Series {
            values: &within,
            band: None,
            colour: WITHIN,
            dash: "5 3",
            label: "within",
        },
    ];
    if null.len() == times.len() {
        series.push(Series {
            values: &null,
            band: None,
            colour: NULL_BAR,
            dash: "6 3",
            label: "null 95th pct",
        });
    }
    let extent = mean
        .iter()
        .zip(&sd)
        .flat_map(|(m, s)| [m + s, m - s])
        .chain(within.iter().copied())
        .chain(null.iter().copied())
        .chain([r.chance.level]);
    let alpha = r.recipe.time.as_ref().map_or(0.05, |t| t.alpha);
    curve(&Curve {
        title: format!(
            "'{}' across '{}' over time",
            r.input.label_column, r.input.across_column
        ),
        y_label: r.design.headline.name(),
        times: &times,
        series,
        reference: Some((r.chance.level, "chance")),
        spans: r
            .clusters
            .iter()
            .filter(|c| c.significant)
            .map(|c| {
                (
                    c.start,
                    c.end,
                    format!(
                        "cluster {} s to {} s, {}",
                        seconds(c.start),
                        seconds(c.end),
                        p_phrase(c.p_value, r.shuffle.count)
                    ),
                )
            })
            .collect(),
        span_label: format!("significant (p < {alpha})"),
        axis: Axis::fit(extent, percent, Some((0.0, 1.0))),
    })
}

/// The train × test matrix across conditions, when asked.
pub fn time_matrix(r: &AcrossTimeReport) -> Option<String> {
    let g = r.generalization.as_ref()?;
    let times: Vec<f64> = r.windows.iter().map(|w| w.time).collect();
    Some(matrix(
        &format!(
            "Temporal generalization across '{}' ({})",
            r.input.across_column,
            r.design.headline.name()
        ),
        &times,
        &g.scores,
        &g.significant,
        (r.chance.level, "chance"),
        percent,
    ))
}
