//! A study in words and tables: the headline sentence, the per-session table and the group statistics, and the
//! sessions (and the group curve) as CSV.

use super::report::StudyReport;
use crate::report::text::{clip, p_cell, p_phrase, p_text, pct, seconds as s};
use std::fmt::Write;

/// "subject", "session".
fn level(r: &StudyReport) -> &str {
    &r.study.level
}

/// What the prevalence bound says, in words.
pub fn prevalence_statement(r: &StudyReport) -> Option<String> {
    let p = r.prevalence.as_ref()?;
    Some(match p.gamma0 {
        Some(g) if g > 0.0 => format!(
            "the information is present in more than {} of the population of {}s (prevalence bound γ₀ at α = {})",
            pct(g),
            level(r),
            p.alpha
        ),
        Some(_) => format!(
            "the information is present in some {}s of the population (global null rejected at α = {}), with no \
             bound on how many",
            level(r),
            p.alpha
        ),
        None => "no prevalence above 0 can be claimed".to_string(),
    })
}

/// How the prevalence test scores each session when shuffles average fewer repeats than the observed score: as a
/// shuffle is (the report's `prevalence.minimum` then differs from the sessions' table, which a reader checks).
pub fn as_shuffled(r: &StudyReport) -> String {
    let (each, all) = (r.recipe.shuffle_repeats(), r.recipe.repeats);
    if each < all {
        format!("; each session scored over its first {each} of {all} repeats, as every shuffle is")
    } else {
        String::new()
    }
}

/// The one sentence a reader needs first.
pub fn headline_sentence(r: &StudyReport) -> String {
    let label = &r.recipe.columns.label;
    if r.pooled.is_some() {
        return format!(
            "'{label}' decoded from {} sessions pooled into one pseudo-population (see the pooled result; noise \
             correlations between sessions are removed, which can overstate information).",
            r.sessions.len()
        );
    }
    let g = r
        .group
        .as_ref()
        .expect("a study decoded per session has a group result");
    let subjects = match r.study.subjects {
        Some(n) => format!("{n} subjects ({} sessions)", r.sessions.len()),
        None => format!("{} sessions", r.sessions.len()),
    };
    let mut out = format!(
        "'{label}' across {subjects}: {} mean {} (chance {})",
        pct(g.mean),
        r.score,
        pct(r.chance)
    );
    match g.p_value {
        Some(p) => write!(
            out,
            "; group permutation test {} ({} draws from the sessions' shuffles)",
            p_phrase(p, g.draws),
            g.draws
        )
        .unwrap(),
        None => out.push_str("; no shuffles, so no group test"),
    }
    if let (Some(p), Some(words)) = (&r.prevalence, prevalence_statement(r)) {
        write!(
            out,
            "; {words} (prevalence test of the global null {})",
            p_phrase(p.global_p, g.draws)
        )
        .unwrap();
    }
    if let Some(t) = &r.time {
        let sig: Vec<String> = t
            .clusters
            .iter()
            .filter(|c| c.significant)
            .map(|c| {
                format!(
                    "{} to {} s ({})",
                    s(c.start),
                    s(c.end),
                    p_phrase(c.p_value, g.draws)
                )
            })
            .collect();
        if !sig.is_empty() {
            write!(out, "; group curve significant from {}", sig.join(", ")).unwrap();
        }
    }
    out.push('.');
    out
}

/// Headline, sessions, group statistics and notes, as the CLI prints them.
pub fn render(r: &StudyReport) -> String {
    let mut out = String::new();
    writeln!(out, "{}\n", headline_sentence(r)).unwrap();
    writeln!(
        out,
        "study {}: {} sessions of {}{}; classes {}",
        r.study.file,
        r.sessions.len(),
        kind_words(r),
        r.study
            .subjects
            .map_or(String::new(), |n| format!(" from {n} subjects")),
        r.classes.join(", ")
    )
    .unwrap();
    for l in &r.left_out {
        writeln!(
            out,
            "left out with your agreement: '{}': {}",
            l.session, l.reason
        )
        .unwrap();
    }
    let width = r
        .sessions
        .iter()
        .map(|x| x.session.chars().count())
        .max()
        .unwrap_or(7)
        .clamp(7, 24);
    let sw = r
        .sessions
        .iter()
        .filter_map(|x| x.subject.as_ref().map(|s| s.chars().count()))
        .max()
        .unwrap_or(7)
        .clamp(7, 16);
    writeln!(
        out,
        "\n{:<width$} {:<sw$} {:>7} {:>8} {:>18} {:>9}",
        "session", "subject", "trials", "neurons", "score ± SD", "p"
    )
    .unwrap();
    for x in &r.sessions {
        let spread = match r.headline {
            crate::resample::Headline::Accuracy => &x.accuracy,
            crate::resample::Headline::BalancedAccuracy => &x.balanced_accuracy,
        };
        writeln!(
            out,
            "{:<width$} {:<sw$} {:>7} {:>8} {:>18} {:>9}",
            clip(&x.session, width),
            clip(x.subject.as_deref().unwrap_or("-"), sw),
            x.trials,
            x.neurons,
            spread
                .as_ref()
                .map_or("-".into(), |a| format!("{} ± {}", pct(a.mean), pct(a.sd))),
            x.p_value
                .map_or("-".into(), |p| p_cell(p, r.recipe.shuffles))
        )
        .unwrap();
    }
    writeln!(
        out,
        "(score: {}; ± SD over repeats, which is not a confidence interval)",
        r.score
    )
    .unwrap();
    if let Some(g) = &r.group {
        writeln!(
            out,
            "\ngroup of {} {}s{}: mean {}, SD {} across {}s; chance {}",
            g.units,
            g.level,
            if r.study.subjects.is_some() {
                " (each subject's sessions averaged first)"
            } else {
                ""
            },
            pct(g.mean),
            pct(g.sd),
            g.level,
            pct(g.chance)
        )
        .unwrap();
        if let Some(i) = &g.interval {
            writeln!(
                out,
                "  {:.0} % interval of the mean: {} to {}; {}",
                100.0 * i.level,
                pct(i.low),
                pct(i.high),
                i.kind
            )
            .unwrap();
        }
        if let (Some(p), Some(m), Some(q)) = (g.p_value, g.null_mean, g.null_p95) {
            writeln!(
                out,
                "  permutation test of the group mean (Stelzer, Chen & Turner 2013; {} draws of one pool score per \
                 session): null mean {}, 95th pct {}, {}",
                g.draws,
                pct(m),
                pct(q),
                p_phrase(p, g.draws)
            )
            .unwrap();
        }
    }
    // The second level's draws, which bound its p-values from below (`p_phrase`).
    let draws = r.group.as_ref().map_or(0, |g| g.draws);
    if let (Some(p), Some(words)) = (&r.prevalence, prevalence_statement(r)) {
        writeln!(
            out,
            "  prevalence (Allefeld, Görgen & Haynes 2016; minimum over {} {}s = {}{}): global null {}; {}; the \
             largest bound these draws allow is {}",
            p.units,
            level(r),
            pct(p.minimum),
            as_shuffled(r),
            p_phrase(p.global_p, draws),
            words,
            pct(p.gamma0_limit)
        )
        .unwrap();
    }
    if let Some(t) = &r.t_test {
        writeln!(
            out,
            "  t-test against chance (for comparison only): t({}) = {:.2}, p = {}; caution: {}",
            t.df,
            t.t,
            p_text(t.p_value),
            t.caution
        )
        .unwrap();
    }
    if let Some(t) = &r.time {
        writeln!(
            out,
            "\ngroup curve over {} windows: clusters above the group null's {:.0}th percentile",
            t.windows.len(),
            t.cluster_percentile
        )
        .unwrap();
        if t.clusters.is_empty() {
            writeln!(out, "  none").unwrap();
        }
        for c in &t.clusters {
            writeln!(
                out,
                "  {} to {} s (windows [{}, {}) s), mass {:.3}, {}{}",
                s(c.start),
                s(c.end),
                s(c.window_start),
                s(c.window_end),
                c.mass,
                p_phrase(c.p_value, draws),
                if c.significant { ", significant" } else { "" }
            )
            .unwrap();
        }
    }
    for w in &r.warnings {
        writeln!(out, "\nnote: {w}").unwrap();
    }
    out
}

fn kind_words(r: &StudyReport) -> &'static str {
    use crate::input::study::SessionKind;
    match r.study.kind {
        SessionKind::TrialTable => "trial tables",
        SessionKind::Binned => "binned tables",
        SessionKind::Events => "spike events",
        SessionKind::Nwb => "NWB files",
    }
}

/// A CSV text field: quoted, quotes doubled.
fn field(s: &str) -> String {
    format!("\"{}\"", s.replace('"', "\"\""))
}

/// One row per session: who, how much data, its score and its p-value.
pub fn sessions_csv(r: &StudyReport) -> String {
    let mut out = String::from(
        "session,subject,trials,neurons,accuracy_mean,accuracy_sd,balanced_accuracy_mean,balanced_accuracy_sd,\
         p_value,seed\n",
    );
    let opt = |v: Option<f64>| v.map_or(String::new(), |v| v.to_string());
    for x in &r.sessions {
        writeln!(
            out,
            "{},{},{},{},{},{},{},{},{},{}",
            field(&x.session),
            x.subject.as_deref().map_or(String::new(), field),
            x.trials,
            x.neurons,
            opt(x.accuracy.as_ref().map(|a| a.mean)),
            opt(x.accuracy.as_ref().map(|a| a.sd)),
            opt(x.balanced_accuracy.as_ref().map(|a| a.mean)),
            opt(x.balanced_accuracy.as_ref().map(|a| a.sd)),
            opt(x.p_value),
            x.seed
        )
        .unwrap();
    }
    out
}

/// The group curve over time: one row per window, the group's mean, SD, null threshold and significance, then each
/// session's curve.
pub fn group_curve_csv(r: &StudyReport) -> Option<String> {
    let t = r.time.as_ref()?;
    let mut out =
        String::from("window,start_s,end_s,time_s,group_mean,group_sd,group_null_p95,significant");
    for x in &r.sessions {
        write!(out, ",{}", field(&x.session)).unwrap();
    }
    out.push('\n');
    for w in &t.windows {
        write!(
            out,
            "{},{},{},{},{},{},{},{}",
            w.index,
            w.start,
            w.end,
            w.time,
            w.mean,
            w.sd,
            w.null_p95.map_or(String::new(), |v| v.to_string()),
            w.significant
        )
        .unwrap();
        for x in &r.sessions {
            let v = x.curve.as_ref().map(|c| c[w.index]);
            write!(out, ",{}", v.map_or(String::new(), |v| v.to_string())).unwrap();
        }
        out.push('\n');
    }
    Some(out)
}
