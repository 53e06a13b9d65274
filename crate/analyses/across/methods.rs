//! The methods paragraph of generalization across conditions.

use super::plan::WithinSplit;
use super::report::{AcrossDesign, AcrossInput, AcrossReport, AcrossTimeReport, SetBalance};
use super::text::arrow;
use crate::analyses::over_time::{cluster_sentence, windows_sentence};
use crate::analyses::time_course::report::{generalization_caveat, ONSET_CAVEAT};
use crate::analyses::time_course::text::matrix_sentence;
use crate::recipe::{GeneralizationNull, Recipe};
use crate::report::methods::{cautions, class_counts, fitting};
use crate::report::text::{p_phrase, pct, seconds as s};

fn files(i: &AcrossInput) -> String {
    i.files
        .iter()
        .map(|f| format!("file {}, SHA-256 {}", f.file, f.sha256))
        .collect::<Vec<_>>()
        .join("; ")
}

/// The design: which levels trained and tested, how sets were balanced, how the within score was cross-validated.
#[allow(clippy::too_many_arguments)]
fn design(
    rc: &Recipe,
    d: &AcrossDesign,
    i: &AcrossInput,
    levels: &[String],
    pairs: &[(Vec<String>, Vec<String>)],
    balance: &[&SetBalance],
    within: &[(WithinSplit, usize)],
    per_window: bool,
) -> Vec<String> {
    let mut out = Vec::new();
    let list: Vec<String> = pairs.iter().map(|(a, b)| arrow(a, b)).collect();
    out.push(if d.assignments == "balanced_dichotomies" {
        format!(
            "The decoder was trained on the trials at half of the {} levels of '{}' and tested on the trials at the \
             other half, for every balanced dichotomy of the levels ({} assignments, each half trained on once: {}); \
             the mean over assignments is the cross-condition generalization performance (Bernardi et al., 2020).",
            levels.len(),
            i.across_column,
            pairs.len(),
            list.join("; ")
        )
    } else {
        format!(
            "The decoder was trained on the trials at some levels of '{}' and tested on the trials at others \
             (trained → tested: {}){}.",
            i.across_column,
            list.join("; "),
            if pairs.len() > 1 { "; the generalization score is the mean over these assignments" } else { "" }
        )
    });
    let balanced = if rc.balance {
        let cells: Vec<String> = balance
            .iter()
            .map(|b| {
                format!(
                    "{} / {}",
                    b.train_per_cell.unwrap_or(0),
                    b.test_per_cell.unwrap_or(0)
                )
            })
            .collect();
        format!(
            "the training and the testing set were each balanced by the label: every combination of a level and a \
             class was randomly undersampled to the smallest such combination in its set (trials kept per \
             combination, training / testing: {}), so that neither the class proportions nor a level's share of a \
             class could inform the decoder",
            cells.join("; ")
        )
    } else {
        "every trial at the training and testing levels was used without balancing".to_string()
    };
    out.push(format!(
        "In each of {} repeats, {balanced}; standardisation and decoder were fitted on the training set only{} and \
         applied to the testing set{}.",
        rc.repeats,
        if per_window { " at each window" } else { "" },
        if per_window { " at the same window" } else { "" }
    ));
    out.push(fitting(rc, i.features.len()).replace(
        "Within each training fold,",
        if per_window {
            "Within each training set and window (and each training fold of the within-condition score),"
        } else {
            "Within each training set (and each training fold of the within-condition score),"
        },
    ));
    let group = i.group_column.as_deref().unwrap_or("");
    let splits: Vec<String> = within
        .iter()
        .map(|(w, folds)| match w {
            WithinSplit::Stratified { folds } => format!("{folds} stratified folds"),
            WithinSplit::LeaveOneOut => "leave-one-out".into(),
            WithinSplit::Grouped { folds } => {
                format!("{folds} folds never dividing a level of '{group}'")
            }
            WithinSplit::LeaveOneGroupOut => {
                format!("each of the {folds} levels of '{group}' held out in turn")
            }
        })
        .collect();
    let mut splits_unique = splits.clone();
    splits_unique.dedup();
    out.push(format!(
        "For comparison, the within-condition score was cross-validated within each testing set (the same balanced \
         trials; {}), with standardisation and decoder fitted on the training folds only.",
        splits_unique.join("; ")
    ));
    out
}

fn permutation(
    shuffle_count: usize,
    repeats_each: usize,
    within: &str,
    observed: Option<(f64, f64, f64)>,
) -> String {
    let mut s = format!(
        "Significance was assessed by a permutation test: the labels were permuted within {within} (keeping each \
         level's label counts) {shuffle_count} times, each permutation was analysed with the identical protocol over \
         {repeats_each} repeats for every assignment, and p = (b + 1)/(m + 1), b the number of the m permutations \
         whose mean generalization score was at least the observed one (Phipson & Smyth, 2010)."
    );
    if let Some((mean, p95, p)) = observed {
        s.push_str(&format!(
            " The null distribution had mean {} and 95th percentile {}; {}.",
            pct(mean),
            pct(p95),
            p_phrase(p, shuffle_count)
        ));
    }
    s
}

fn reproducible(rc: &Recipe) -> String {
    format!(
        "Resampling used ChaCha20 random streams derived from seed {} and each task's index, so the analysis is \
         reproducible exactly.",
        rc.seed
    )
}

/// The trial table's paragraph.
pub fn paragraph(r: &AcrossReport) -> String {
    let rc = &r.recipe;
    let mut out = vec![format!(
        "Generalization of a decoder across conditions was tested with {} {}. The data ({}) comprised {} trials of {} \
         classes of '{}' ({}) with {} features per trial, at {} levels of '{}' ({}).",
        r.software.name,
        r.software.version,
        files(&r.input),
        r.input.trials,
        r.classes.len(),
        r.input.label_column,
        class_counts(&r.classes, &r.class_counts),
        r.input.features.len(),
        r.levels.len(),
        r.input.across_column,
        r.levels.iter().map(|l| format!("'{l}'")).collect::<Vec<_>>().join(", ")
    )];
    if !r.input.dropped_lines.is_empty() {
        out.push(format!(
            "{} trials with missing values were excluded.",
            r.input.dropped_lines.len()
        ));
    }
    let pairs: Vec<(Vec<String>, Vec<String>)> = r
        .assignments
        .iter()
        .map(|a| (a.train.clone(), a.test.clone()))
        .collect();
    let balance: Vec<&SetBalance> = r.assignments.iter().map(|a| &a.balance).collect();
    let within: Vec<(WithinSplit, usize)> = r
        .assignments
        .iter()
        .map(|a| (a.within_split, a.within_folds))
        .collect();
    out.extend(design(
        rc, &r.design, &r.input, &r.levels, &pairs, &balance, &within, false,
    ));
    let (h, w) = (r.headline(), r.within_headline());
    out.push(format!(
        "The {} of the testing trials was {} ± {} across generalization repeats (mean ± SD over repeats, which is \
         not a confidence interval; 2.5th–97.5th percentiles {}–{}), against {} ± {} within the testing levels; \
         chance was {}.",
        r.design.headline.name(),
        pct(h.mean),
        pct(h.sd),
        pct(h.p2_5),
        pct(h.p97_5),
        pct(w.mean),
        pct(w.sd),
        pct(r.chance.level)
    ));
    if r.shuffle.count > 0 {
        out.push(permutation(
            r.shuffle.count,
            r.shuffle.repeats_each,
            &r.shuffle.permuted_within,
            r.shuffle
                .null_mean
                .zip(r.shuffle.null_p95)
                .zip(r.shuffle.p_value)
                .map(|((a, b), c)| (a, b, c)),
        ));
    }
    out.extend(cautions(&r.warnings, &out.join(" ")));
    out.push(reproducible(rc));
    out.join(" ")
}

/// The recording's paragraph.
pub fn time_paragraph(r: &AcrossTimeReport) -> String {
    let rc = &r.recipe;
    let mut out = vec![format!(
        "Time-resolved generalization of a decoder across conditions was tested with {} {} on {} trials of {} \
         classes of '{}' ({}) at {} levels of '{}', recorded from {} neurons (data: {}).",
        r.software.name,
        r.software.version,
        r.input.trials,
        r.classes.len(),
        r.input.label_column,
        class_counts(&r.classes, &r.class_counts),
        r.levels.len(),
        r.input.across_column,
        r.input.features.len(),
        files(&r.input)
    )];
    let windows: Vec<_> = r
        .windows
        .iter()
        .map(|w| crate::recipe::windows::Window {
            start: w.start,
            end: w.end,
            time: w.time,
        })
        .collect();
    out.push(windows_sentence(rc, &windows, r.input.features.len()));
    let pairs: Vec<(Vec<String>, Vec<String>)> = r
        .assignments
        .iter()
        .map(|a| (a.train.clone(), a.test.clone()))
        .collect();
    let balance: Vec<&SetBalance> = r.assignments.iter().map(|a| &a.balance).collect();
    let within: Vec<(WithinSplit, usize)> = r
        .assignments
        .iter()
        .map(|a| (a.within_split, a.within_folds))
        .collect();
    out.extend(design(
        rc, &r.design, &r.input, &r.levels, &pairs, &balance, &within, true,
    ));
    if r.generalization.is_some() {
        out.push(
            "For temporal generalization (King & Dehaene, 2014), the decoder trained at each window on the training \
             set was tested on the testing set at every window."
                .into(),
        );
    }
    out.push(format!(
        "The {} was averaged over assignments and repeats at each window; chance was {}.",
        r.design.headline.name(),
        pct(r.chance.level)
    ));
    if r.shuffle.count > 0 {
        let alpha = rc.time.as_ref().map_or(0.05, |t| t.alpha);
        out.push(cluster_sentence(
            r.shuffle.count,
            r.shuffle.repeats_each,
            &format!(" within {}", r.shuffle.permuted_within),
            "the labels",
            alpha,
        ));
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
        out.push(if sig.is_empty() {
            "No cluster was significant.".into()
        } else {
            format!("Significant clusters (window centres): {}.", sig.join("; "))
        });
        if let Some(o) = &r.onset {
            out.push(format!(
                "The first window of the earliest significant cluster was centred at {} s; {ONSET_CAVEAT}.",
                s(o.time)
            ));
        }
        if let Some(g) = &r.generalization {
            out.push(match g.null_method {
                GeneralizationNull::TrainingLabels => format!(
                    "For the train × test matrix, each of the {} permutations instead permuted only the training \
                     trials' labels: one permutation within {} per permutation, shared by its repeats and windows \
                     as the observed labels are, the training set balanced by the permuted labels; the decoders \
                     were trained on the permuted labels and tested on the testing trials with their observed \
                     labels, so that a cell's null is a decoder trained without information at its training window \
                     meeting the observed data at its testing window. The matrix's clusters (cells adjacent when \
                     sharing an edge) were tested against this null in the same way.",
                    r.shuffle.count, r.shuffle.permuted_within
                ),
                GeneralizationNull::AllLabels => "The train × test matrix used the same permutations of the \
                     labels as the curve, its clusters (cells adjacent when sharing an edge) tested in the same way."
                    .to_string(),
            });
            out.push(matrix_sentence(g, r.shuffle.count));
            out.push(format!(
                "Caution: {}.",
                generalization_caveat(g.null_method)
            ));
        }
    }
    out.extend(cautions(&r.warnings, &out.join(" ")));
    out.push(reproducible(rc));
    out.join(" ")
}
