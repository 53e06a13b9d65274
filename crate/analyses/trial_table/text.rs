//! The plain-text summary printed by the CLI: one headline sentence, then tables.

use super::report::Report;
use crate::report::text::{clip, p_text, pct, tuning_line};
use std::fmt::Write;

/// The one sentence a reader needs first.
pub fn headline_sentence(r: &Report) -> String {
    let h = r.headline();
    let what = r.design.headline.name();
    let mut s = format!(
        "'{}' decoded at {} ± {} {what} (mean ± SD over {} repeats; chance {})",
        r.input.label_column,
        pct(h.mean),
        pct(h.sd),
        r.repeats.len(),
        pct(r.chance.level)
    );
    match r.shuffle.p_value {
        Some(p) => write!(s, ", p = {} over {} shuffles", p_text(p), r.shuffle.count).unwrap(),
        None => s.push_str(", no shuffle control run"),
    }
    s.push('.');
    s
}

/// Headline, score table, per-class recall and confusion matrix.
pub fn render(r: &Report) -> String {
    let mut out = String::new();
    writeln!(out, "{}\n", headline_sentence(r)).unwrap();
    writeln!(
        out,
        "{:<20} {:>8} {:>8} {:>17}",
        "score", "mean", "SD", "2.5–97.5 pct"
    )
    .unwrap();
    for (name, s) in [
        ("accuracy", &r.summary.accuracy),
        ("balanced accuracy", &r.summary.balanced_accuracy),
    ] {
        writeln!(
            out,
            "{name:<20} {:>8} {:>8} {:>8}–{:<8}",
            pct(s.mean),
            pct(s.sd),
            pct(s.p2_5),
            pct(s.p97_5)
        )
        .unwrap();
    }
    writeln!(
        out,
        "{:<20} {:>8}   (binomial {} threshold for {} test trials: {})",
        "chance",
        pct(r.chance.level),
        r.chance.alpha,
        r.chance.test_trials,
        pct(r.chance.threshold)
    )
    .unwrap();
    if let (Some(mean), Some(sd), Some(p95), Some(p)) = (
        r.shuffle.null_mean,
        r.shuffle.null_sd,
        r.shuffle.null_p95,
        r.shuffle.p_value,
    ) {
        writeln!(
            out,
            "{:<20} {:>8} {:>8}   95th pct {}, p = {} ({} shuffles × {} repeats{})",
            "shuffled labels",
            pct(mean),
            pct(sd),
            pct(p95),
            p_text(p),
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
    let width = r
        .classes
        .iter()
        .map(|c| c.chars().count())
        .max()
        .unwrap_or(5)
        .clamp(5, 24);
    writeln!(
        out,
        "\nper-class recall and confusion (rows = true class, % of the row, mean over repeats):"
    )
    .unwrap();
    write!(out, "{:<width$} {:>8} |", "class", "recall").unwrap();
    for c in &r.classes {
        write!(out, " {:>7}", clip(c, 7)).unwrap();
    }
    out.push('\n');
    for (i, c) in r.classes.iter().enumerate() {
        write!(
            out,
            "{:<width$} {:>8} |",
            clip(c, width),
            pct(r.summary.recall[i])
        )
        .unwrap();
        for v in &r.summary.confusion[i] {
            write!(out, " {:>7}", format!("{:.1}", 100.0 * v)).unwrap();
        }
        out.push('\n');
    }
    if let Some(t) = &r.tuning {
        out.push_str(&tuning_line(t));
    }
    for w in &r.warnings {
        writeln!(out, "\nnote: {w}").unwrap();
    }
    out
}
