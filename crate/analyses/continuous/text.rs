//! A continuous decoding result in words and tables: the headline sentence, the score table, and (over time) the
//! clusters and the curve as CSV.

use super::report::{ContinuousReport, ContinuousTimeReport, TargetInfo};
use crate::recipe::AngleUnit;
use crate::report::text::{p_phrase, seconds as s};
use std::fmt::Write;

/// An angle in the target's unit: "31.2°" or "0.545 rad".
pub fn angle(v: f64, unit: Option<AngleUnit>) -> String {
    match unit {
        Some(AngleUnit::Radians) => format!("{v:.3} rad"),
        _ => format!("{v:.1}°"),
    }
}

/// A score with three decimals; one that rounds to zero is "0.000", not "-0.000" (an R² of −0.00007 is none).
pub fn num(v: f64) -> String {
    let s = format!("{v:.3}");
    if s == "-0.000" {
        "0.000".into()
    } else {
        s
    }
}

/// A value of the decoded variable in its own units, to four significant digits and without an exponent: a
/// variable in small units keeps its digits ("0.0004120", where three decimals would say "0.000"), a large one
/// loses its meaningless decimals ("12346").
pub fn quantity(v: f64) -> String {
    if v == 0.0 {
        return "0".into();
    }
    let decimals = (3 - v.abs().log10().floor() as i32).clamp(0, 12) as usize;
    format!("{v:.decimals$}")
}

/// "out-of-sample R²" or "mean absolute angular error": the headline's name.
pub fn headline_name(t: &TargetInfo) -> &'static str {
    if t.unit.is_some() {
        "mean absolute angular error"
    } else {
        "out-of-sample R²"
    }
}

/// A headline value as written (an angle in its unit, R² as a number).
pub fn headline_value(t: &TargetInfo, v: f64) -> String {
    if t.unit.is_some() {
        angle(v, t.unit)
    } else {
        num(v)
    }
}

/// The name of the correlation reported.
pub fn correlation_name(t: &TargetInfo) -> &'static str {
    if t.unit.is_some() {
        "circular correlation"
    } else {
        "Pearson correlation"
    }
}

/// The one sentence a reader needs first.
pub fn headline_sentence(r: &ContinuousReport) -> String {
    let h = r.headline();
    let t = &r.target;
    let mut out = format!(
        "'{}' decoded with {} {} ± {} (mean ± SD over {} repeats; {} {}",
        t.column,
        if t.unit.is_some() {
            "a mean absolute angular error of"
        } else {
            "out-of-sample R² ="
        },
        headline_value(t, h.mean),
        headline_value(t, h.sd),
        r.repeats.len(),
        correlation_name(t),
        num(r.summary.correlation.mean)
    );
    match (r.shuffle.p_value, r.shuffle.null_mean) {
        (Some(p), Some(null)) => write!(
            out,
            "; shuffled values {}), {} over {} shuffles.",
            headline_value(t, null),
            p_phrase(p, r.shuffle.count),
            r.shuffle.count
        )
        .unwrap(),
        _ => out.push_str("), no shuffle control run."),
    }
    out
}

/// Headline, score table, penalties chosen and warnings.
pub fn render(r: &ContinuousReport) -> String {
    let t = &r.target;
    let mut out = String::new();
    writeln!(out, "{}\n", headline_sentence(r)).unwrap();
    writeln!(
        out,
        "{:<30} {:>10} {:>10} {:>21}",
        "score", "mean", "SD", "2.5–97.5 pct"
    )
    .unwrap();
    let mut rows = vec![
        (
            if t.unit.is_some() {
                "R² of (cosine, sine)"
            } else {
                "out-of-sample R²"
            },
            &r.summary.r2,
            false,
        ),
        (correlation_name(t), &r.summary.correlation, false),
    ];
    if let Some(e) = &r.summary.angular_error {
        rows.insert(0, ("mean absolute angular error", e, true));
    }
    for (name, sp, is_angle) in rows {
        let f = |v: f64| if is_angle { angle(v, t.unit) } else { num(v) };
        writeln!(
            out,
            "{name:<30} {:>10} {:>10} {:>10}–{:<10}",
            f(sp.mean),
            f(sp.sd),
            f(sp.p2_5),
            f(sp.p97_5)
        )
        .unwrap();
    }
    if let (Some(mean), Some(sd), Some(p)) =
        (r.shuffle.null_mean, r.shuffle.null_sd, r.shuffle.p_value)
    {
        let (cut, which) = if t.unit.is_some() {
            (r.shuffle.null_p5, "5th")
        } else {
            (r.shuffle.null_p95, "95th")
        };
        writeln!(
            out,
            "{:<30} {:>10} {:>10}   {which} pct {}, {} ({} shuffles × {} repeats{})",
            "shuffled values",
            headline_value(t, mean),
            headline_value(t, sd),
            headline_value(t, cut.unwrap_or(f64::NAN)),
            p_phrase(p, r.shuffle.count),
            r.shuffle.count,
            r.shuffle.repeats_each,
            if r.shuffle.within_groups {
                ", within groups"
            } else {
                ""
            }
        )
        .unwrap();
    }
    out.push_str(&penalty_line(&r.penalty));
    for w in &r.warnings {
        writeln!(out, "\nnote: {w}").unwrap();
    }
    out
}

/// "penalty α chosen by nested cross-validation: 10 in 312 fits, 100 in 188 fits".
fn penalty_line(p: &super::report::Penalty) -> String {
    let parts: Vec<String> = p
        .chosen
        .iter()
        .filter(|c| c.fits > 0)
        .map(|c| {
            format!(
                "{} in {} fit{}",
                c.alpha,
                c.fits,
                if c.fits == 1 { "" } else { "s" }
            )
        })
        .collect();
    format!(
        "\npenalty α chosen by nested cross-validation: {}\n",
        parts.join(", ")
    )
}

/// The one sentence a reader needs first, over time.
pub fn time_headline(r: &ContinuousTimeReport) -> String {
    let t = &r.target;
    let curve = r.curve();
    let angles = t.unit.is_some();
    let best = (0..curve.len()).fold(0, |b, w| {
        let better = if angles {
            curve[w] < curve[b]
        } else {
            curve[w] > curve[b]
        };
        if better {
            w
        } else {
            b
        }
    });
    let mut out = format!(
        "'{}' decoded with {} {} at {} s at best (mean over {} repeats)",
        t.column,
        if angles {
            "a mean absolute angular error of"
        } else {
            "out-of-sample R² ="
        },
        headline_value(t, curve[best]),
        s(r.windows[best].time),
        r.repeats.len()
    );
    let sig: Vec<String> = r
        .clusters
        .iter()
        .filter(|c| c.significant)
        .map(|c| {
            format!(
                "{} to {} s ({})",
                s(c.start),
                s(c.end),
                p_phrase(c.p_value, r.shuffle.count)
            )
        })
        .collect();
    if r.shuffle.count == 0 {
        out.push_str("; no shuffle control run, so no significance.");
    } else if sig.is_empty() {
        write!(
            out,
            "; no cluster of windows is significant ({} shuffles).",
            r.shuffle.count
        )
        .unwrap();
    } else {
        write!(
            out,
            "; significant from {} ({} shuffles, cluster-corrected).",
            sig.join(", "),
            r.shuffle.count
        )
        .unwrap();
    }
    out
}

/// Headline, clusters, onset and the per-window table.
pub fn time_render(r: &ContinuousTimeReport) -> String {
    let t = &r.target;
    let mut out = String::new();
    writeln!(out, "{}\n", time_headline(r)).unwrap();
    if let Some(o) = &r.onset {
        writeln!(
            out,
            "onset: {} s (first window of the earliest significant cluster); {}.\n",
            s(o.time),
            crate::analyses::time_course::report::ONSET_CAVEAT
        )
        .unwrap();
    }
    writeln!(
        out,
        "{:>8} {:>14} {:>12} {:>16} {:>4}",
        "time (s)",
        if t.unit.is_some() {
            "angular error"
        } else {
            "R²"
        },
        if t.unit.is_some() { "circ. corr." } else { "r" },
        "null threshold",
        "sig"
    )
    .unwrap();
    for w in &r.windows {
        let head = w.angular_error.as_ref().unwrap_or(&w.r2).mean;
        writeln!(
            out,
            "{:>8} {:>14} {:>12} {:>16} {:>4}",
            s(w.time),
            headline_value(t, head),
            num(w.correlation.mean),
            w.null_threshold
                .map_or("–".into(), |v| headline_value(t, v)),
            if w.significant { "*" } else { "" }
        )
        .unwrap();
    }
    out.push_str(&penalty_line(&r.penalty));
    for w in &r.warnings {
        writeln!(out, "\nnote: {w}").unwrap();
    }
    out
}

/// The curve as CSV: one row per window.
pub fn curve_csv(r: &ContinuousTimeReport) -> String {
    let mut out = String::from(
        "time,start,end,r2_mean,r2_sd,correlation_mean,correlation_sd,angular_error_mean,angular_error_sd,\
         null_mean,null_threshold,significant\n",
    );
    let opt = |v: Option<f64>| v.map_or(String::new(), |x| x.to_string());
    for w in &r.windows {
        writeln!(
            out,
            "{},{},{},{},{},{},{},{},{},{},{},{}",
            w.time,
            w.start,
            w.end,
            w.r2.mean,
            w.r2.sd,
            w.correlation.mean,
            w.correlation.sd,
            opt(w.angular_error.as_ref().map(|a| a.mean)),
            opt(w.angular_error.as_ref().map(|a| a.sd)),
            opt(w.null_mean),
            opt(w.null_threshold),
            w.significant
        )
        .unwrap();
    }
    out
}

/// The predictions of repeat 0 as CSV: one row per trial.
pub fn predictions_csv(p: &super::report::PredictionTable) -> String {
    let mut out = String::from("trial,fold,actual,predicted\n");
    for (i, ((f, a), q)) in p.fold.iter().zip(&p.actual).zip(&p.predicted).enumerate() {
        writeln!(out, "{i},{f},{a},{q}").unwrap();
    }
    out
}

#[cfg(test)]
mod tests {
    use super::{num, quantity};

    #[test]
    fn a_score_that_rounds_to_zero_has_no_sign() {
        assert_eq!(num(-0.0000716), "0.000");
        assert_eq!(num(-0.0006), "-0.001");
        assert_eq!(num(0.25), "0.250");
    }

    #[test]
    fn a_quantity_keeps_four_significant_digits_whatever_its_units() {
        assert_eq!(quantity(21.3456), "21.35");
        assert_eq!(quantity(0.000412), "0.0004120");
        assert_eq!(quantity(12345.6), "12346");
        assert_eq!(quantity(-2.5), "-2.500");
        assert_eq!(quantity(0.0), "0");
    }
}
