//! The methods paragraph of a study decoded session by session. (A pooled study's paragraph is the pooled
//! population's own, after one sentence on the study: see `mod.rs`.)

use super::report::StudyReport;
use super::text::{as_shuffled, prevalence_statement};
use crate::input::study::SessionKind;
use crate::recipe::{Across, Folds, Recipe, TimeInput};
use crate::report::methods::{cautions, fitting};
use crate::report::text::{p_phrase, p_text, pct, seconds as s};

/// The paragraph: data, the per-session protocol, the group test, prevalence, the t-test's caution, and clusters.
pub fn paragraph(r: &StudyReport) -> String {
    let rc = &r.recipe;
    let mut out = Vec::new();
    let from = r
        .study
        .subjects
        .map_or(String::new(), |n| format!(" from {n} subjects"));
    out.push(format!(
        "Population decoding was performed with {} {} on a study of {} sessions{from} ({}) listed in {} (SHA-256 \
         {}; every session's files and their SHA-256 are listed in the result), decoding the {} conditions of '{}' \
         ({}).",
        r.software.name,
        r.software.version,
        r.sessions.len(),
        match r.study.kind {
            SessionKind::TrialTable => "trial tables",
            SessionKind::Binned => "binned tables",
            SessionKind::Events => "spike events with trial tables",
            SessionKind::Nwb => "NWB files",
        },
        r.study.file,
        r.study.sha256,
        r.classes.len(),
        rc.columns.label,
        r.classes.join(", ")
    ));
    if !r.left_out.is_empty() {
        let list: Vec<String> = r
            .left_out
            .iter()
            .map(|l| format!("'{}' ({})", l.session, l.reason))
            .collect();
        out.push(format!(
            "{} listed session{} left out: {}.",
            r.left_out.len(),
            if r.left_out.len() == 1 {
                " was"
            } else {
                "s were"
            },
            list.join("; ")
        ));
    }
    if let Some(w) = windows_sentence(r) {
        out.push(w);
    }
    let group = rc
        .columns
        .group
        .as_deref()
        .map(|g| format!(" that never divided a level of '{g}'"))
        .unwrap_or_default();
    let split = match rc.folds {
        Folds::K(k) => format!(
            "trials were split into {k} {}folds{group}",
            if group.is_empty() { "stratified " } else { "" }
        ),
        Folds::LeaveOneOut => "each trial was held out in turn (leave-one-out)".into(),
    };
    // Sessions differ in their neurons; the decoder's sentence is the one of the smallest session.
    let neurons = r.sessions.iter().map(|s| s.neurons).min().unwrap_or(0);
    match &rc.across {
        Some(a) => {
            out.push(across_protocol(rc, a));
            out.push(
                fitting(rc, neurons)
                    .replace("Within each training fold,", "Within each training set,"),
            );
        }
        None => {
            out.push(format!(
                "Each session was decoded on its own with the same protocol and a seed of its own (derived from \
                 the study's seed and the session's name, and given in the result): in each of {} repeats, \
                 {}{split}.",
                rc.repeats,
                if rc.balance {
                    "classes were balanced by randomly undersampling every class to the size of that session's \
                     smallest, and "
                } else {
                    ""
                }
            ));
            out.push(fitting(rc, neurons));
        }
    }
    out.push(format!(
        "A session's score was its {}, mean over repeats.",
        r.score
    ));
    if rc.shuffles > 0 {
        out.push(format!(
            "Each session's null distribution came from {} label permutations{}, each analysed with {} repeats, \
             and its p-value was (b + 1)/(m + 1), b of the m permutations scoring at least the observed score \
             (Phipson & Smyth 2010).",
            rc.shuffles,
            match (&rc.across, &rc.columns.group) {
                (Some(a), _) => format!(" within each level of '{}'", a.column),
                (None, Some(_)) => " within groups".to_string(),
                (None, None) => String::new(),
            },
            rc.shuffle_repeats()
        ));
    }
    let g = r.group.as_ref().expect("a study decoded per session");
    let level = &r.study.level;
    let within = if r.study.subjects.is_some() {
        "Each subject's sessions were averaged first, so the second level counts subjects. "
    } else {
        ""
    };
    if let Some(p) = g.p_value {
        out.push(format!(
            "{within}The group mean across the {} {level}s was tested with a permutation test built from the \
             sessions' own permutation results (Stelzer, Chen & Turner 2013): in each of {} draws one score was \
             drawn at random from every session's pool of its permutation scores and its observed score (the \
             observed labelling counting as one of the permutations, as in Allefeld, Görgen & Haynes 2016){} and \
             the mean taken across {level}s, and \
             p = (b + 1)/(B + 1), b of the B draws reaching the observed group mean (Phipson & Smyth 2010). The \
             group mean was {} (SD {} across {level}s; chance {}), {}.",
            g.units,
            g.draws,
            if r.study.subjects.is_some() {
                ", averaged within subject,"
            } else {
                ","
            },
            pct(g.mean),
            pct(g.sd),
            pct(g.chance),
            p_phrase(p, g.draws)
        ));
    } else {
        out.push(format!(
            "{within}The group mean across the {} {level}s was {} (SD {}; chance {}); no shuffles were run, so it \
             was not tested.",
            g.units,
            pct(g.mean),
            pct(g.sd),
            pct(g.chance)
        ));
    }
    if let (Some(p), Some(words)) = (&r.prevalence, prevalence_statement(r)) {
        out.push(format!(
            "Prevalence was inferred by permutation with the minimum statistic (Allefeld, Görgen & Haynes 2016) on \
             the same draws: the smallest {level} score ({}{}) was compared with the smallest of every draw, giving \
             the p-value of the global null (no {level} carries information), {}, and the largest prevalence \
             γ₀ whose null (the information is present in at most a fraction γ₀ of the population) is rejected at \
             α = {}, γ₀ = (α^(1/N) − p^(1/N)) / (1 − p^(1/N)) with N = {}: {words}.",
            pct(p.minimum),
            as_shuffled(r),
            p_phrase(p.global_p, g.draws),
            p.alpha,
            p.units
        ));
    }
    if let Some(t) = &r.t_test {
        out.push(format!(
            "For comparison only, a one-sided t-test of the {level} scores against chance gave t({}) = {:.2}, \
             p = {}; {}.",
            t.df,
            t.t,
            p_text(t.p_value),
            t.caution
        ));
    }
    if let Some(t) = &r.time {
        if g.p_value.is_some() {
            out.push(format!(
                "Over time, the group curve (the mean across {level}s at each window) was tested with a \
                 cluster-based permutation test (Maris & Oostenveld 2007) on the same draws, each a whole null \
                 curve per session (Stelzer et al. 2013): windows whose group mean exceeded the {:.0}th percentile \
                 of the draws at that window formed clusters of adjacent windows, and each cluster's summed excess \
                 was compared with the largest cluster of every draw; clusters with p < {} were significant{}.",
                t.cluster_percentile,
                t.alpha,
                significant_spans(r)
            ));
        }
    }
    let text = out.join(" ");
    match cautions(&r.warnings, &text) {
        Some(notes) => format!("{text} {notes}"),
        None => text,
    }
}

/// Each session's protocol when its score is the generalization across the levels of a second column.
fn across_protocol(rc: &Recipe, a: &Across) -> String {
    let col = &a.column;
    let assignments = if a.assignments.is_empty() {
        format!(
            "half of the levels of '{col}' and tested on the trials at the other half, for every balanced \
             dichotomy of the levels (the mean over them is the cross-condition generalization performance, \
             Bernardi et al., 2020)"
        )
    } else {
        let list: Vec<String> = a
            .assignments
            .iter()
            .map(|x| format!("{} → {}", x.train.join(", "), x.test.join(", ")))
            .collect();
        format!(
            "some levels of '{col}' and tested on the trials at others (trained → tested: {}{})",
            list.join("; "),
            if list.len() > 1 {
                "; the score is the mean over these assignments"
            } else {
                ""
            }
        )
    };
    format!(
        "Each session was analysed on its own with the same protocol and a seed of its own (derived from the \
         study's seed and the session's name, and given in the result): in each of {} repeats, {}the decoder \
         was trained on the trials at {assignments}, {}; standardisation and decoder were fitted on the training set \
         only.",
        rc.repeats,
        if rc.time.is_some() {
            "at every window, "
        } else {
            ""
        },
        if rc.balance {
            "the training and the testing set each balanced by the label (every combination of a level and a class \
             randomly undersampled to the smallest such combination in its set)"
        } else {
            "every trial at the training and testing levels used without balancing"
        }
    )
}

fn significant_spans(r: &StudyReport) -> String {
    let Some(t) = &r.time else {
        return String::new();
    };
    let draws = r.group.as_ref().map_or(0, |g| g.draws);
    let spans: Vec<String> = t
        .clusters
        .iter()
        .filter(|c| c.significant)
        .map(|c| {
            format!(
                "{} to {} s ({})",
                s(c.start),
                s(c.end),
                p_phrase(c.p_value, draws)
            )
        })
        .collect();
    if spans.is_empty() {
        " (none was)".into()
    } else {
        format!(" ({})", spans.join(", "))
    }
}

/// How the windows were made, for studies over time.
fn windows_sentence(r: &StudyReport) -> Option<String> {
    let t = r.time.as_ref()?;
    let n = t.windows.len();
    let (first, last) = (&t.windows[0], &t.windows[n - 1]);
    Some(match r.recipe.time.as_ref().map(|t| &t.input) {
        Some(TimeInput::Events {
            width, step, align, ..
        }) => format!(
            "Spikes were counted in windows of {} s stepped by {} s ([start, start + width), {n} windows from {} s \
             to {} s relative to {}) and converted to rates in Hz.",
            s(*width),
            s(*step),
            s(first.start),
            s(last.end),
            align
                .as_deref()
                .map_or("the alignment event the spike times were given relative to".into(), |a| {
                    format!("each trial's '{a}' time")
                })
        ),
        Some(TimeInput::Nwb {
            width, step, align, ..
        }) => format!(
            "Spikes of the units tables were counted in windows of {} s stepped by {} s ([start, start + width), \
             {n} windows from {} s to {} s relative to each trial's '{}') and converted to rates in Hz.",
            s(*width),
            s(*step),
            s(first.start),
            s(last.end),
            align.as_deref().unwrap_or("start_time")
        ),
        _ => format!(
            "Each bin of the binned tables was one window ({n} windows centred from {} s to {} s).",
            s(first.time),
            s(last.time)
        ),
    })
}
