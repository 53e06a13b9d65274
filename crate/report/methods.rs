//! A methods paragraph ready to paste into a paper: every setting that changes the numbers, the software version
//! and the data's SHA-256, so a reader can re-run the identical analysis.

use super::text::{p_text, pct};
use super::{Design, Report};
use crate::protocol::{Headline, Split};
use crate::recipe::Recipe;

pub fn paragraph(r: &Report) -> String {
    let rc = &r.recipe;
    let mut s = Vec::new();
    let counts: Vec<String> = r
        .classes
        .iter()
        .zip(&r.class_counts)
        .map(|(c, n)| format!("{c}: {n}"))
        .collect();
    s.push(format!(
        "Population decoding was performed with {} {}. The data (file {}, SHA-256 {}) comprised {} trials of {} \
         conditions of '{}' ({}) with {} features per trial.",
        r.software.name,
        r.software.version,
        r.input.file,
        r.input.sha256,
        r.input.trials,
        r.classes.len(),
        r.input.label_column,
        counts.join(", "),
        r.input.features.len()
    ));
    if !r.input.dropped_lines.is_empty() {
        s.push(format!(
            "{} trials with missing values were excluded.",
            r.input.dropped_lines.len()
        ));
    }
    let group = r.input.group_column.as_deref().unwrap_or("");
    s.push(resampling(
        rc,
        &r.design,
        r.classes.len(),
        group,
        r.input.groups.len(),
    ));
    s.push(fitting(rc));
    let metric = match r.design.headline {
        Headline::Accuracy => "accuracy (fraction of test trials correctly classified)".to_string(),
        Headline::BalancedAccuracy => {
            "balanced accuracy (the mean over classes of the fraction of that class's test trials correctly \
             classified), the headline score because classes were not balanced"
                .to_string()
        }
    };
    let h = r.headline();
    s.push(format!(
        "Test predictions were pooled over folds within each repeat to give {metric}; across repeats it was {} ± {} \
         (mean ± SD; 2.5th–97.5th percentiles {}–{}). Confusion matrices were normalised by true class and averaged \
         over repeats.",
        pct(h.mean),
        pct(h.sd),
        pct(h.p2_5),
        pct(h.p97_5)
    ));
    s.push(format!(
        "Chance level was {}; the binomial threshold for {} test trials at α = {} was {} (Combrisson & Jerbi, 2015).",
        pct(r.chance.level),
        r.chance.test_trials,
        r.chance.alpha,
        pct(r.chance.threshold)
    ));
    if let (Some(p), Some(mean), Some(p95)) =
        (r.shuffle.p_value, r.shuffle.null_mean, r.shuffle.null_p95)
    {
        s.push(format!(
            "Significance was assessed by a permutation test: condition labels were randomly permuted{} {} times, \
             each permutation was analysed with the identical protocol over {} repeats, and p = (b + 1)/(m + 1), \
             with b the number of the m permutations scoring at least the observed mean (Phipson & Smyth, 2010). \
             The null distribution had mean {} and 95th percentile {}; p = {}.",
            if r.shuffle.within_groups { format!(" within levels of '{group}'") } else { String::new() },
            r.shuffle.count,
            r.shuffle.repeats_each,
            pct(mean),
            pct(p95),
            p_text(p)
        ));
    }
    s.push(format!(
        "Resampling used ChaCha20 random streams derived from seed {} and each task's index, so the analysis is \
         reproducible exactly.",
        rc.seed
    ));
    s.join(" ")
}

/// "In each of R repeats, classes were balanced …, and trials were split …": the resampling sentence shared by
/// every kind of analysis.
pub(crate) fn resampling(
    rc: &Recipe,
    design: &Design,
    n_classes: usize,
    group: &str,
    n_groups: usize,
) -> String {
    if let Split::Pseudo { folds } = design.split {
        return format!(
            "Neurons were recorded in {n_groups} separate sessions (levels of '{group}') and combined into \
             pseudo-trials. In each of {} repeats, each session's trials of each condition were shuffled and dealt \
             into {folds} folds, and within each fold every condition received as many pseudo-trials as the \
             smallest session-by-condition share of that fold ({} pseudo-trials per repeat in all), each joining one \
             real trial of that condition from every session, paired at random without reuse, so that training and \
             test pseudo-trials came from disjoint real trials, and conditions were balanced ({} per condition); {}.",
            rc.repeats,
            design.trials_per_repeat,
            design.trials_per_repeat / n_classes,
            crate::pseudo::CAVEAT
        );
    }
    let balance = if rc.balance {
        format!(
            "classes were balanced by randomly undersampling every class to the size of the smallest ({} trials per \
             class, {} in all), and ",
            design.trials_per_repeat / n_classes,
            design.trials_per_repeat
        )
    } else {
        String::new()
    };
    let split = match design.split {
        Split::Stratified { folds } => format!("trials were split into {folds} stratified folds"),
        Split::LeaveOneOut => "each trial was held out in turn (leave-one-out)".to_string(),
        Split::Grouped { folds } => format!(
            "trials were split into {folds} folds that never divided a level of '{group}' ({n_groups} levels)"
        ),
        Split::LeaveOneGroupOut => {
            format!("each level of '{group}' was held out in turn ({n_groups} levels; leave-one-group-out)")
        }
        Split::Pseudo { .. } => unreachable!("answered above"),
    };
    format!("In each of {} repeats, {balance}{split}.", rc.repeats)
}

/// The standardisation-and-decoder sentence.
pub(crate) fn fitting(rc: &Recipe) -> String {
    format!(
        "Within each training fold, every feature was standardised with the mean and standard deviation of the \
         training trials, which were then applied to the test trials, and the decoder was fitted: {}.",
        rc.classifier.describe((!rc.tune).then_some(rc.c))
    ) + &tuning_sentence(rc)
}

/// How C was chosen, when the recipe tunes: the nested cross-validation, in a sentence.
fn tuning_sentence(rc: &Recipe) -> String {
    if !rc.tune || rc.classifier.grid().is_none() {
        return String::new();
    }
    let c_grid: Vec<String> = crate::decoders::tuning::C_GRID
        .iter()
        .map(|v| v.to_string())
        .collect();
    let gamma = if rc.classifier == crate::decoders::Classifier::RbfSvm {
        " and the kernel width γ at 0.1, 1 and 10 times its default"
    } else {
        ""
    };
    format!(
        " C was chosen within each training fold by nested cross-validation: the training trials were dealt, class \
         by class in file order, into {} inner folds, every combination of C in {{{}}}{gamma} was scored by the inner \
         balanced accuracy of the full pipeline (standardisation refitted on each inner training fold), and the best \
         (the simpler on ties) was refitted on the whole training fold; the test fold was never used to choose it.",
        crate::decoders::tuning::INNER_FOLDS,
        c_grid.join(", ")
    )
}
