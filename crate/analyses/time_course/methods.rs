//! The methods paragraph of a time course.

use super::report::{generalization_caveat, TimeReport, ONSET_CAVEAT};
use super::text::matrix_sentence;
use super::text::span;
use crate::recipe::GeneralizationNull;
use crate::recipe::TimeInput;
use crate::report::methods::{cautions, class_counts, fitting, resampling};
use crate::report::text::{at_floor, floor_note, p_text, pct, seconds as s};
use crate::resample::Split;

fn score_name(r: &TimeReport) -> &'static str {
    r.design.headline.name()
}

/// A methods paragraph for a time course.
pub fn paragraph(r: &TimeReport) -> String {
    let rc = &r.recipe;
    let mut out = Vec::new();
    let files: Vec<String> = r
        .input
        .files
        .iter()
        .map(|f| format!("{} (SHA-256 {})", f.file, f.sha256))
        .collect();
    out.push(format!(
        "Time-resolved population decoding was performed with {} {} on {} trials of {} conditions of '{}' ({}) \
         recorded from {} neurons (data: {}).",
        r.software.name,
        r.software.version,
        r.input.trials,
        r.classes.len(),
        r.input.label_column,
        class_counts(&r.classes, &r.class_counts),
        r.input.neurons.len(),
        files.join("; ")
    ));
    let windows = &r.windows;
    match rc.time.as_ref().map(|t| &t.input) {
        Some(TimeInput::Events {
            width,
            step,
            start,
            end,
            align,
            ..
        }) => out.push(format!(
            "Spikes were counted in windows of {} s stepped by {} s from {} s to {} s relative to {} (each window \
             covering [start, start + width)), giving {} windows, and converted to rates in Hz.",
            s(*width),
            s(*step),
            s(*start),
            s(*end),
            match align {
                Some(a) => format!("each trial's '{a}' time"),
                None => "the alignment event the spike times were given relative to".to_string(),
            },
            windows.len()
        )),
        Some(TimeInput::Nwb {
            width,
            step,
            start,
            end,
            align,
            units,
        }) => out.push(format!(
            "Spike times of {} units{} were read from the NWB file's units table and counted in windows of {} s \
             stepped by {} s from {} s to {} s relative to each trial's '{}' time (trials table; each window \
             covering [start, start + width)), giving {} windows, and converted to rates in Hz.",
            r.input.neurons.len(),
            if units.is_empty() {
                String::new()
            } else {
                let rule: Vec<String> = units.iter().map(ToString::to_string).collect();
                format!(" (those with {})", rule.join(" and "))
            },
            s(*width),
            s(*step),
            s(*start),
            s(*end),
            align.as_deref().unwrap_or("start_time"),
            windows.len()
        )),
        _ => out.push(format!(
            "The activity was given in {} time bins from {} s to {} s, each decoded as one window.",
            windows.len(),
            s(windows[0].time),
            s(windows[windows.len() - 1].time)
        )),
    }
    let group = r.input.group_column.as_deref().unwrap_or("");
    out.push(format!(
        "{} The same balancing and folds were applied at every window.",
        resampling(rc, &r.design, r.classes.len(), group, r.input.groups.len())
    ));
    out.push(fitting(rc, r.input.neurons.len()).replace(
        "Within each training fold,",
        "Within each training fold and window,",
    ));
    if r.generalization.is_some() {
        out.push(
            "For temporal generalization (King & Dehaene, 2014), the decoder trained at each window was tested on \
             the same held-out trials at every window."
                .to_string(),
        );
    }
    // Inference over time rests on the cluster test below; a per-window binomial threshold would be an
    // uncorrected test at every window, so it is not given here.
    out.push(format!(
        "The {} of pooled test predictions was averaged over cross-validation repeats at each window; chance was \
         {}.",
        score_name(r),
        pct(r.chance.level)
    ));
    if r.shuffle.count > 0 {
        let alpha = rc.time.as_ref().map_or(0.05, |t| t.alpha);
        out.push(format!(
            "Significance was assessed by cluster-based permutation inference (Maris & Oostenveld, 2007): condition \
             labels were permuted{} {} times, each permutation analysed with the identical protocol at every window \
             over {} repeats; windows{} whose score exceeded the {}th percentile of their own null formed clusters \
             of adjacent windows, a cluster's mass was its summed excess over those thresholds, and its p = \
             (b + 1)/(m + 1), b the number of the m permutations whose largest cluster mass was at least as large \
             (Phipson & Smyth, 2010). Clusters with p < {alpha} are reported as significant.",
            if r.shuffle.within_groups {
                format!(" within levels of '{group}'")
            } else {
                String::new()
            },
            r.shuffle.count,
            r.shuffle.repeats_each,
            if r.generalization.is_some() {
                " (and cells of the generalization matrix, adjacent when sharing an edge)"
            } else {
                ""
            },
            r.shuffle.cluster_percentile
        ));
        if let Some(g) = &r.generalization {
            out.push(match g.null_method {
                GeneralizationNull::TrainingLabels if matches!(r.design.split, Split::Pseudo { .. }) => format!(
                    "For the generalization matrix, each of the {} permutations instead permuted only the training \
                     pseudo-trials' labels, within each training fold of one repeat (balancing and folds drawn from \
                     the observed labels, one permutation shared by every window), and tested on the held-out \
                     pseudo-trials with their observed labels, so that a cell's null is a decoder trained without \
                     information at its training window meeting the observed data at its testing window; one \
                     repeat per permutation, a conservative null for a mean over repeats.",
                    r.shuffle.count
                ),
                GeneralizationNull::TrainingLabels => format!(
                    "For the generalization matrix, each of the {} permutations instead permuted only the training \
                     trials' labels: one permutation of the labels{} per permutation, shared by its repeats, folds \
                     and windows as the observed labels are, with balancing and folds drawn from the observed \
                     labels; the decoders were trained on the permuted labels and tested on the held-out trials with \
                     their observed labels, so that a cell's null is a decoder trained without information at its \
                     training window meeting the observed data at its testing window.",
                    r.shuffle.count,
                    if r.input.group_column.is_some() { " within each group" } else { "" }
                ),
                GeneralizationNull::AllLabels => "The generalization matrix used the same permutations of every \
                     label as the curve."
                    .to_string(),
            });
        }
        let sig: Vec<String> = r
            .clusters
            .iter()
            .filter(|c| c.significant)
            .map(|c| span(c, r.shuffle.count))
            .collect();
        if sig.is_empty() {
            out.push("No cluster was significant.".into());
        } else {
            out.push(format!(
                "Significant clusters (window centres): {}.",
                sig.join("; ")
            ));
        }
        if let Some(g) = &r.generalization {
            out.push(matrix_sentence(g, r.shuffle.count));
        }
        if let Some(o) = &r.onset {
            out.push(format!(
                "The first window of the earliest significant cluster was centred at {} s; {ONSET_CAVEAT}.",
                s(o.time)
            ));
        }
        if r.clusters
            .iter()
            .any(|c| at_floor(c.p_value, r.shuffle.count))
        {
            out.push(format!(
                "A cluster p written as p ≤ {}: {}.",
                p_text(1.0 / (r.shuffle.count + 1) as f64),
                floor_note(r.shuffle.count)
            ));
        }
    }
    if let Some(g) = &r.generalization {
        out.push(format!(
            "Caution: {}.",
            generalization_caveat(g.null_method)
        ));
    }
    out.extend(cautions(&r.warnings, &out.join(" ")));
    out.push(format!(
        "Resampling used ChaCha20 random streams derived from seed {} and each task's index, so the analysis is \
         reproducible exactly.",
        rc.seed
    ));
    out.join(" ")
}
