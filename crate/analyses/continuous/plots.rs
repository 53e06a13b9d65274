//! Figures of a continuous decoding result: predicted against actual values (one repeat), the headline score over
//! repeats, the shuffle null with the observed score, and (over time) the curve.

use super::report::{ContinuousReport, ContinuousTimeReport, PredictionTable, TargetInfo};
use super::text::{headline_name, headline_value};
use crate::recipe::AngleUnit;
use crate::report::figures::{curve, decimals, histogram, plain, scatter, Axis, Curve, Series};
use crate::report::svg::{Marker, BAR, INK, NULL_BAR};
use crate::report::text::{p_phrase, per_permutation, seconds};

fn value_format(t: &TargetInfo) -> fn(f64) -> String {
    match t.unit {
        Some(AngleUnit::Radians) => decimals,
        Some(AngleUnit::Degrees) | None => plain,
    }
}

/// Predicted against actual values of every trial in repeat 0, pooled over folds, with the identity line.
pub fn predicted_vs_actual(t: &TargetInfo, p: &PredictionTable, when: &str) -> Option<String> {
    if p.predicted.is_empty() {
        return None;
    }
    let values = p.actual.iter().chain(&p.predicted).copied();
    let axis = match t.unit {
        Some(u) => Axis::fit(
            values,
            value_format(t),
            Some((0.0f64.min(t.min), u.turn().max(t.max))),
        ),
        None => Axis::auto(values, None),
    };
    let unit = t.unit.map_or(String::new(), |u| format!(" ({})", u.name()));
    Some(scatter(
        &format!("Predicted against actual '{}'", t.column),
        &format!("one point per trial, each predicted by its test fold, repeat 1{when}"),
        (&format!("actual{unit}"), &format!("predicted{unit}")),
        &p.actual,
        &p.predicted,
        axis,
    ))
}

/// An axis for the headline score: angles in their unit, R² as precise as its ticks need.
fn headline_axis(t: &TargetInfo, values: impl IntoIterator<Item = f64>) -> Axis {
    match t.unit {
        Some(_) => Axis::fit(values, value_format(t), None),
        None => Axis::auto(values, None),
    }
}

/// The headline score over repeats, with its mean and the shuffles' mean.
pub fn score_distribution(r: &ContinuousReport) -> String {
    let t = &r.target;
    let values: Vec<f64> = r
        .repeats
        .iter()
        .map(|x| x.angular_error.unwrap_or(x.r2))
        .collect();
    let h = r.headline();
    let mut markers = vec![Marker {
        at: h.mean,
        label: format!("mean {}", headline_value(t, h.mean)),
        dash: "none",
        colour: "#1d4e89",
    }];
    if let Some(null) = r.shuffle.null_mean {
        markers.push(Marker {
            at: null,
            label: format!("shuffled mean {}", headline_value(t, null)),
            dash: "6 4",
            colour: INK,
        });
    }
    let axis = headline_axis(
        t,
        values.iter().copied().chain(markers.iter().map(|m| m.at)),
    );
    histogram(
        &format!(
            "{} over {} repeats",
            capitalised(headline_name(t)),
            values.len()
        ),
        headline_name(t),
        &values,
        &markers,
        BAR,
        axis,
    )
}

/// The shuffle null with the observed score marked, or `None` without shuffles.
pub fn null_distribution(r: &ContinuousReport) -> Option<String> {
    let p = r.shuffle.p_value?;
    let t = &r.target;
    let (cut, which) = if t.unit.is_some() {
        (r.shuffle.null_p5?, "5th")
    } else {
        (r.shuffle.null_p95?, "95th")
    };
    let markers = [
        Marker {
            at: r.shuffle.observed,
            label: format!(
                "observed {} ({})",
                headline_value(t, r.shuffle.observed),
                p_phrase(p, r.shuffle.count)
            ),
            dash: "none",
            colour: "#1d4e89",
        },
        Marker {
            at: cut,
            label: format!("null {which} pct {}", headline_value(t, cut)),
            dash: "2 3",
            colour: INK,
        },
    ];
    let axis = headline_axis(
        t,
        r.shuffle
            .null
            .iter()
            .copied()
            .chain([r.shuffle.observed, cut]),
    );
    Some(histogram(
        &format!("Shuffled values: {} permutations", r.shuffle.count),
        &per_permutation(headline_name(t), r.shuffle.repeats_each),
        &r.shuffle.null,
        &markers,
        NULL_BAR,
        axis,
    ))
}

/// The headline score over time (mean ± SD over repeats), the null threshold, and significant clusters.
pub fn time_curve(r: &ContinuousTimeReport) -> String {
    let t = &r.target;
    let times: Vec<f64> = r.windows.iter().map(|w| w.time).collect();
    let mean = r.curve();
    let sd: Vec<f64> = r
        .windows
        .iter()
        .map(|w| w.angular_error.as_ref().unwrap_or(&w.r2).sd)
        .collect();
    let threshold: Vec<f64> = r.windows.iter().filter_map(|w| w.null_threshold).collect();
    let mut series = vec![Series {
        values: &mean,
        band: Some(&sd),
        colour: BAR,
        dash: "none",
        label: "mean",
    }];
    if threshold.len() == times.len() {
        series.push(Series {
            values: &threshold,
            band: None,
            colour: NULL_BAR,
            dash: "6 3",
            label: if t.unit.is_some() {
                "null 5th percentile"
            } else {
                "null 95th percentile"
            },
        });
    }
    let extent = mean
        .iter()
        .zip(&sd)
        .flat_map(|(m, s)| [m + s, m - s])
        .chain(threshold.iter().copied())
        .chain(t.unit.is_none().then_some(0.0));
    let axis = headline_axis(t, extent);
    let alpha = r.recipe.time.as_ref().map_or(0.05, |t| t.alpha);
    curve(&Curve {
        title: format!(
            "Decoding '{}' over time ({} per window)",
            t.column,
            headline_name(t)
        ),
        y_label: headline_name(t),
        times: &times,
        series,
        reference: t.unit.is_none().then_some((0.0, "R² = 0 (training mean)")),
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
        span_label: format!("significant cluster (p < {alpha})"),
        axis,
    })
}

fn capitalised(s: &str) -> String {
    let mut c = s.chars();
    c.next()
        .map_or(String::new(), |f| f.to_uppercase().chain(c).collect())
}
