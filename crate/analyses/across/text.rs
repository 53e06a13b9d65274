//! Generalization across conditions in words and tables.

use super::report::{AcrossReport, AcrossTimeReport, AssignmentResult};
use crate::analyses::time_course::text::matrix_lines;
use crate::report::text::{clip, p_cell, p_phrase, pct, seconds as s, tuning_line};
use std::fmt::Write;

/// "'citral' → 'hexanal'": an assignment's levels.
pub fn arrow(train: &[String], test: &[String]) -> String {
    let q = |v: &[String]| {
        v.iter()
            .map(|l| format!("'{l}'"))
            .collect::<Vec<_>>()
            .join(" + ")
    };
    format!("{} → {}", q(train), q(test))
}

/// What was generalized: one named assignment, several, or the balanced dichotomies.
fn what(
    dichotomies: bool,
    assignments: usize,
    levels: usize,
    first: (&[String], &[String]),
) -> String {
    if dichotomies && levels == 2 {
        "in both directions between its 2 levels".to_string()
    } else if dichotomies {
        format!(
            "over all {assignments} balanced dichotomies of its {levels} levels (cross-condition generalization \
             performance)"
        )
    } else if assignments == 1 {
        format!(
            "trained {}",
            arrow(first.0, first.1).replacen(" → ", ", tested ", 1)
        )
    } else {
        format!("over {assignments} assignments of training and testing levels")
    }
}

/// The one sentence a reader needs first.
pub fn headline_sentence(r: &AcrossReport) -> String {
    let h = r.headline();
    let a = &r.assignments[0];
    let mut out = format!(
        "'{}' generalized across '{}' {}: {} ± {} {} (mean ± SD over {} repeats; within the testing levels {}; chance \
         {})",
        r.input.label_column,
        r.input.across_column,
        what(r.design.assignments == "balanced_dichotomies", r.assignments.len(), r.levels.len(), (&a.train, &a.test)),
        pct(h.mean),
        pct(h.sd),
        r.design.headline.name(),
        r.repeats.len(),
        pct(r.within_headline().mean),
        pct(r.chance.level)
    );
    match r.shuffle.p_value {
        Some(p) => write!(
            out,
            ", {} over {} shuffles.",
            p_phrase(p, r.shuffle.count),
            r.shuffle.count
        )
        .unwrap(),
        None => out.push_str(", no shuffle control run."),
    }
    out
}

fn headline_of(r: &AcrossReport, a: &AssignmentResult) -> (f64, f64, f64) {
    match r.design.headline {
        crate::resample::Headline::Accuracy => {
            (a.accuracy.mean, a.accuracy.sd, a.within.accuracy.mean)
        }
        crate::resample::Headline::BalancedAccuracy => (
            a.balanced_accuracy.mean,
            a.balanced_accuracy.sd,
            a.within.balanced_accuracy.mean,
        ),
    }
}

/// Headline, one row per assignment, the null, the balancing and the warnings.
pub fn render(r: &AcrossReport) -> String {
    let mut out = String::new();
    writeln!(out, "{}\n", headline_sentence(r)).unwrap();
    writeln!(
        out,
        "{:<40} {:>16} {:>10} {:>10} {:>8} {:>16}",
        "trained → tested", "generalization", "within", "null 95th", "p", "trials per repeat"
    )
    .unwrap();
    for a in &r.assignments {
        let (m, sd, within) = headline_of(r, a);
        writeln!(
            out,
            "{:<40} {:>16} {:>10} {:>10} {:>8} {:>16}",
            clip(&arrow(&a.train, &a.test), 40),
            format!("{} ± {}", pct(m), pct(sd)),
            pct(within),
            a.null_p95.map_or("–".into(), pct),
            a.p_value.map_or("–".into(), |p| p_cell(p, r.shuffle.count)),
            format!("{} / {}", a.balance.train_trials, a.balance.test_trials)
        )
        .unwrap();
    }
    if let (Some(mean), Some(p95), Some(p)) =
        (r.shuffle.null_mean, r.shuffle.null_p95, r.shuffle.p_value)
    {
        writeln!(
            out,
            "\nlabels permuted within {}: null mean {}, 95th pct {}, {} ({} shuffles × {} repeats)",
            r.shuffle.permuted_within,
            pct(mean),
            pct(p95),
            p_phrase(p, r.shuffle.count),
            r.shuffle.count,
            r.shuffle.repeats_each
        )
        .unwrap();
    }
    out.push_str(&balance_line(
        r.design.balance,
        r.assignments.iter().map(|a| &a.balance),
    ));
    if let Some(t) = &r.tuning {
        out.push_str(&tuning_line(t));
    }
    for w in &r.warnings {
        writeln!(out, "\nnote: {w}").unwrap();
    }
    out
}

/// How the sets were balanced, in a line.
fn balance_line<'a>(
    balance: bool,
    sets: impl Iterator<Item = &'a super::report::SetBalance>,
) -> String {
    if !balance {
        return "\nno balancing: every trial at the training and testing levels was used\n".into();
    }
    let parts: Vec<String> = sets
        .map(|b| {
            format!(
                "{} / {}",
                b.train_per_cell.unwrap_or(0),
                b.test_per_cell.unwrap_or(0)
            )
        })
        .collect();
    format!(
        "\nbalanced by the label within each set: trials kept per level × class cell (training / testing): {}\n",
        parts.join(", ")
    )
}

/// The one sentence a reader needs first, over time.
pub fn time_headline(r: &AcrossTimeReport) -> String {
    let curve = r.curve();
    let peak = (0..curve.len()).fold(0, |b, i| if curve[i] > curve[b] { i } else { b });
    let a = &r.assignments[0];
    let mut out = format!(
        "'{}' generalized across '{}' {} at up to {} {} at {} s (within the testing levels {} there; mean over {} \
         repeats; chance {})",
        r.input.label_column,
        r.input.across_column,
        what(r.design.assignments == "balanced_dichotomies", r.assignments.len(), r.levels.len(), (&a.train, &a.test)),
        pct(curve[peak]),
        r.design.headline.name(),
        s(r.windows[peak].time),
        pct(r.within_curve()[peak]),
        r.repeats.len(),
        pct(r.chance.level)
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

/// Headline, onset, assignments and the per-window table.
pub fn time_render(r: &AcrossTimeReport) -> String {
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
    writeln!(out, "assignments (trained → tested): {}", {
        let v: Vec<String> = r
            .assignments
            .iter()
            .map(|a| arrow(&a.train, &a.test))
            .collect();
        v.join("; ")
    })
    .unwrap();
    writeln!(
        out,
        "\n{:>8} {:>16} {:>10} {:>10} {:>4}",
        "time (s)", "generalization", "within", "null 95th", "sig"
    )
    .unwrap();
    let (curve, within) = (r.curve(), r.within_curve());
    for (i, w) in r.windows.iter().enumerate() {
        writeln!(
            out,
            "{:>8} {:>16} {:>10} {:>10} {:>4}",
            s(w.time),
            pct(curve[i]),
            pct(within[i]),
            w.null_p95.map_or("–".into(), pct),
            if w.significant { "*" } else { "" }
        )
        .unwrap();
    }
    if let Some(g) = &r.generalization {
        out.push('\n');
        out.push_str(&matrix_lines(g, r.shuffle.count));
    }
    out.push_str(&balance_line(
        r.design.balance,
        r.assignments.iter().map(|a| &a.balance),
    ));
    if let Some(t) = &r.tuning {
        out.push_str(&tuning_line(t));
    }
    for w in &r.warnings {
        writeln!(out, "\nnote: {w}").unwrap();
    }
    out
}

/// The curves as CSV: one row per window.
pub fn curve_csv(r: &AcrossTimeReport) -> String {
    let mut out = String::from("time,start,end,generalization_mean,generalization_sd,within_mean,within_sd,null_p95,significant\n");
    let (curve, within) = (r.curve(), r.within_curve());
    for (i, w) in r.windows.iter().enumerate() {
        let (sd, wsd) = match r.design.headline {
            crate::resample::Headline::Accuracy => (w.accuracy.sd, w.within_accuracy.sd),
            crate::resample::Headline::BalancedAccuracy => {
                (w.balanced_accuracy.sd, w.within_balanced_accuracy.sd)
            }
        };
        writeln!(
            out,
            "{},{},{},{},{sd},{},{wsd},{},{}",
            w.time,
            w.start,
            w.end,
            curve[i],
            within[i],
            w.null_p95.map_or(String::new(), |v| v.to_string()),
            w.significant
        )
        .unwrap();
    }
    out
}

/// The train × test matrix as CSV (rows = training window), when asked.
pub fn generalization_csv(r: &AcrossTimeReport) -> Option<String> {
    let g = r.generalization.as_ref()?;
    let mut out = String::from("train_time");
    for w in &r.windows {
        write!(out, ",{}", w.time).unwrap();
    }
    out.push('\n');
    for (i, row) in g.scores.iter().enumerate() {
        write!(out, "{}", r.windows[i].time).unwrap();
        for v in row {
            write!(out, ",{v}").unwrap();
        }
        out.push('\n');
    }
    Some(out)
}
