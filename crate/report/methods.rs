//! Sentences every analysis's methods paragraph shares: how trials were resampled, and how each fold's decoder was
//! fitted (and tuned).

use super::Design;
use crate::decoders;
use crate::recipe::classifier::C_GRID;
use crate::recipe::{Classifier, Recipe};
use crate::resample::scheme::LEAVE_ONE_OUT_CAUTION;
use crate::resample::{pseudo, Split};

/// "a: 58, b: 58": trials per class, for the paragraph's first sentence.
pub fn class_counts(classes: &[String], counts: &[usize]) -> String {
    classes
        .iter()
        .zip(counts)
        .map(|(c, n)| format!("{c}: {n}"))
        .collect::<Vec<_>>()
        .join(", ")
}

/// "In each of R repeats, classes were balanced …, and trials were split …": the resampling sentence shared by
/// every kind of analysis.
pub fn resampling(
    rc: &Recipe,
    design: &Design,
    n_classes: usize,
    group: &str,
    n_groups: usize,
) -> String {
    let in_each = if rc.repeats == 1 {
        "In one repeat".to_string()
    } else {
        format!("In each of {} repeats", rc.repeats)
    };
    if let Split::Pseudo { folds } = design.split {
        return format!(
            "Neurons were recorded in {n_groups} separate sessions (levels of '{group}') and combined into \
             pseudo-trials. {in_each}, each session's trials of each condition were shuffled and dealt \
             into {folds} folds, and within each fold every condition received as many pseudo-trials as the \
             smallest session-by-condition share of that fold ({} pseudo-trials per repeat in all), each joining one \
             real trial of that condition from every session, paired at random without reuse, so that training and \
             test pseudo-trials came from disjoint real trials, and conditions were balanced ({} per condition); {}.",
            design.trials_per_repeat,
            design.trials_per_repeat / n_classes,
            pseudo::CAVEAT
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
    // Why fewer repeats ran than were asked is the result's own caution (the scheme's), which joins the paragraph
    // among its notes only when repeats were cut: a single repeat asked for needs no reason.
    let mut out = format!("{in_each}, {balance}{split}.");
    if design.split == Split::LeaveOneOut {
        out.push_str(&format!(" Caution: {LEAVE_ONE_OUT_CAUTION}."));
    }
    out
}

/// The result's cautions (its `warnings`) that the paragraph so far (`already`) does not state, so that they travel
/// with the methods paragraph into a paper. `None` when there are none left. A clause telling the user what to do
/// with a command-line flag ("; leave it out (--ignore 'n') unless …") is advice for the run, not a fact about it:
/// it stays in the warnings and is left out here (the page shows this paragraph as it is, and a paper has no flags).
pub fn cautions(warnings: &[String], already: &str) -> Option<String> {
    let listed: Vec<String> = warnings
        .iter()
        .map(|w| {
            w.trim_end_matches('.')
                .split("; ")
                .filter(|clause| !clause.contains("(--"))
                .collect::<Vec<_>>()
                .join("; ")
        })
        .filter(|w| !w.is_empty() && !already.contains(w.as_str()))
        .collect();
    (!listed.is_empty()).then(|| format!("Notes from the analysis: {}.", listed.join("; ")))
}

/// The standardisation-and-decoder sentence, for a decoder fitted on `features` features: what the fitted
/// pipeline did (a decoder of counts is fitted on the values as given, every other on standardised features).
pub fn fitting(rc: &Recipe, features: usize) -> String {
    let decoder = decoders::describe(rc.classifier, (!rc.tune).then_some(rc.c), features);
    let fitted = if rc.classifier.needs_counts() {
        format!(
            "Within each training fold, the decoder was fitted to the training trials' values as given, without \
             standardisation (it models spike counts), and applied to the test trials: {decoder}."
        )
    } else {
        format!(
            "Within each training fold, every feature was standardised with the mean and standard deviation of the \
             training trials, which were then applied to the test trials, and the decoder was fitted: {decoder}."
        )
    };
    fitted + &tuning_sentence(rc)
}

/// How C was chosen, when the recipe tunes: the nested cross-validation, in a sentence.
fn tuning_sentence(rc: &Recipe) -> String {
    if !rc.tune || rc.classifier.grid().is_none() {
        return String::new();
    }
    let c_grid: Vec<String> = C_GRID.iter().map(|v| v.to_string()).collect();
    let gamma = if rc.classifier == Classifier::RbfSvm {
        " and the kernel width γ at 0.1, 1 and 10 times its default"
    } else {
        ""
    };
    let inner = match &rc.columns.group {
        Some(group) => format!(
            "split at random into {} inner folds that never divided a level of '{group}' (stratified inner folds \
             where a training fold held a single level)",
            decoders::tuning::INNER_FOLDS
        ),
        None => format!(
            "split at random into {} stratified inner folds",
            decoders::tuning::INNER_FOLDS
        ),
    };
    format!(
        " C was chosen within each training fold by nested cross-validation: the training trials were {inner}, \
         every combination of C in {{{}}}{gamma} was scored by the inner balanced accuracy of the full pipeline \
         (standardisation refitted on each inner training fold), and the best (the simpler on ties) was refitted on \
         the whole training fold; the test fold was never used to choose it.",
        c_grid.join(", ")
    )
}

#[cfg(test)]
mod tests {
    use super::cautions;

    /// A caution travels into the methods paragraph once: those the paragraph already states are not repeated.
    #[test]
    fn cautions_not_yet_stated_are_added_once() {
        let warnings = vec![
            "only 5 shuffles: p cannot go below 1/6 = 0.167".to_string(),
            "leave-one-out is biased below chance".to_string(),
        ];
        let said = "… Caution: leave-one-out is biased below chance.";
        assert_eq!(
            cautions(&warnings, said).as_deref(),
            Some("Notes from the analysis: only 5 shuffles: p cannot go below 1/6 = 0.167.")
        );
        assert_eq!(cautions(&warnings[1..], said), None);
        // Advice naming a flag stays in the warnings, not in a paper (found by a review of the page).
        let counter = vec![
            "column 'n' counts up by one on every row, like a trial number, and is used as a feature; leave it out \
             (--ignore 'n') unless it really is a measurement"
                .to_string(),
        ];
        assert_eq!(
            cautions(&counter, "").as_deref(),
            Some(
                "Notes from the analysis: column 'n' counts up by one on every row, like a trial number, and is used \
                 as a feature."
            )
        );
        assert_eq!(cautions(&[], ""), None);
    }
}
