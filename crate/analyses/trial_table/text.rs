//! The plain-text summary printed by the CLI: one headline sentence, then tables.

use super::report::Report;
use crate::report::text::{
    at_floor, clip, floor_note, p_cell, p_phrase, p_text, pct, pct_range, tuning_line,
};
use std::fmt::Write;

/// "mean over 100 cross-validation repeats", or "one cross-validation run".
pub(super) fn over_repeats(n: usize) -> String {
    if n == 1 {
        "one cross-validation run".to_string()
    } else {
        format!("mean over {n} cross-validation repeats")
    }
}

/// The one sentence a reader needs first.
pub fn headline_sentence(r: &Report) -> String {
    let h = r.headline();
    let what = r.design.headline.name();
    let ci =
        h.ci.map_or(String::new(), |ci| format!("95 % CI {}; ", pct_range(ci)));
    let mut s = format!(
        "'{}' decoded at {} {what} ({ci}{}; chance {})",
        r.input.label_column,
        pct(h.mean),
        over_repeats(r.repeats.len()),
        pct(r.chance.level)
    );
    match r.shuffle.p_value {
        Some(p) if at_floor(p, r.shuffle.count) => write!(
            s,
            ", {} over {} shuffles (none reached the observed score)",
            p_phrase(p, r.shuffle.count),
            r.shuffle.count
        )
        .unwrap(),
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
        "{:<20} {:>8} {:>15}   {:>8} {:>17}",
        "score", "mean", "95 % CI", "SD", "2.5–97.5 pct"
    )
    .unwrap();
    for (name, s) in [
        ("accuracy", &r.summary.accuracy),
        ("balanced accuracy", &r.summary.balanced_accuracy),
    ] {
        writeln!(
            out,
            "{name:<20} {:>8} {:>15}   {:>8} {:>8}–{:<8}",
            pct(s.mean),
            s.ci.map_or("–".into(), pct_range),
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
            "{:<20} {:>8} {:>15}   {:>8}   95th pct {}, {} ({} shuffles × {} repeats{})",
            "shuffled labels",
            pct(mean),
            "",
            pct(sd),
            pct(p95),
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
    writeln!(
        out,
        "(95 % CI: {}. SD and percentiles: variability over cross-validation repeats, which shows how much the \
         score depends on how the trials were split; it is not a confidence interval.)",
        r.summary
            .accuracy
            .ci_method
            .as_deref()
            .unwrap_or("none")
    )
    .unwrap();
    if let Some(e) = &r.summary.effect_size {
        writeln!(
            out,
            "above chance: {:+.1} percentage points (95 % CI {:+.1} to {:+.1}); chance-corrected {} (κ) {:.2}, 95 % \
             CI {:.2} to {:.2}",
            100.0 * e.above_chance,
            100.0 * e.above_chance_ci[0],
            100.0 * e.above_chance_ci[1],
            e.score.name(),
            e.kappa,
            e.kappa_ci[0],
            e.kappa_ci[1]
        )
        .unwrap();
    }
    if let Some(a) = &r.summary.auc {
        writeln!(
            out,
            "area under the ROC curve: {:.3} (mean over repeats; SD {:.3}; {})",
            a.mean,
            a.sd,
            r.summary.auc_pooling.as_deref().unwrap_or("")
        )
        .unwrap();
    }
    if let Some(p) = r.shuffle.p_value.filter(|&p| at_floor(p, r.shuffle.count)) {
        writeln!(
            out,
            "{}: {}",
            p_phrase(p, r.shuffle.count),
            floor_note(r.shuffle.count)
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
    let recall_p = r.shuffle.recall_p_values.as_ref();
    writeln!(
        out,
        "\nper-class recall{} and confusion (rows = true class, % of the row, mean over repeats):",
        if recall_p.is_some() {
            " with its shuffle p-value (per class, uncorrected)"
        } else {
            ""
        }
    )
    .unwrap();
    write!(out, "{:<width$} {:>8}", "class", "recall").unwrap();
    if recall_p.is_some() {
        write!(out, " {:>9}", "p").unwrap();
    }
    out.push_str(" |");
    // Confusion columns as wide as the longest class name, from 7 up to 12 characters (longer names are cut).
    let col = r
        .classes
        .iter()
        .map(|c| c.chars().count())
        .max()
        .unwrap_or(0)
        .clamp(7, 12);
    for c in &r.classes {
        write!(out, " {:>col$}", clip(c, col)).unwrap();
    }
    out.push('\n');
    for (i, c) in r.classes.iter().enumerate() {
        write!(
            out,
            "{:<width$} {:>8}",
            clip(c, width),
            pct(r.summary.recall[i])
        )
        .unwrap();
        if let Some(ps) = recall_p {
            write!(out, " {:>9}", p_cell(ps[i], r.shuffle.count)).unwrap();
        }
        out.push_str(" |");
        for v in &r.summary.confusion[i] {
            write!(out, " {:>col$}", format!("{:.1}", 100.0 * v)).unwrap();
        }
        out.push('\n');
    }
    if let Some(pw) = &r.pairwise {
        out.push_str(&pairwise_table(r, pw));
    }
    if let Some(t) = &r.tuning {
        out.push_str(&tuning_line(t));
    }
    for w in &r.warnings {
        writeln!(out, "\nnote: {w}").unwrap();
    }
    out
}

/// The pairwise table: each pair's headline mean with its interval, and its p and q with shuffles.
fn pairwise_table(r: &Report, pw: &super::report::Pairwise) -> String {
    let mut out = format!(
        "\npairwise decoding (each pair of classes decoded on its own, same protocol; mean over cross-validation \
         repeats, chance 50 %{}):\n",
        match pw.fdr {
            Some(q) => format!(
                "; p from the pair's own shuffles, q adjusted across pairs (Benjamini & Hochberg, 1995), * = \
                 discovery at a false-discovery rate of {q}"
            ),
            None => String::new(),
        }
    );
    let width = r
        .classes
        .iter()
        .map(|c| c.chars().count())
        .max()
        .unwrap_or(5)
        .clamp(5, 24);
    for p in &pw.pairs {
        let s = match p.headline {
            crate::resample::Headline::Accuracy => &p.accuracy,
            crate::resample::Headline::BalancedAccuracy => &p.balanced_accuracy,
        };
        write!(
            out,
            "  {:<width$} vs {:<width$} {:>8} {:>15}",
            clip(&p.classes[0], width),
            clip(&p.classes[1], width),
            pct(s.mean),
            s.ci.map_or(String::new(), pct_range)
        )
        .unwrap();
        if let Some(a) = &p.auc {
            write!(out, "   AUC {:.3}", a.mean).unwrap();
        }
        if let (Some(pv), Some(q)) = (p.p_value, p.q_value) {
            write!(
                out,
                "   {} q = {}{}",
                p_phrase(pv, r.shuffle.count),
                p_text(q),
                if p.discovery == Some(true) { " *" } else { "" }
            )
            .unwrap();
        }
        out.push('\n');
    }
    out
}
