//! Cross-validated predictions on folds the user assigns (`popdecode predict`).

use crate::data::Dataset;
use crate::decoders::{self, cross_validate, CrossValidated, FoldSet, Nesting};
use crate::error::{Error, Result};
use crate::recipe::Recipe;
use crate::stats::roc;

/// Cross-validated predictions on fold assignments the caller supplies (one fold number per trial).
///
/// For users who must reproduce a split made elsewhere, and for the reference checks, which hand identical folds
/// to scikit-learn. No balancing and no randomness: trial `i` is predicted by the pipeline fitted on every trial
/// whose fold differs from its own.
pub fn predict_with_folds(
    data: &Dataset,
    recipe: &Recipe,
    fold_of: &[usize],
) -> Result<Vec<usize>> {
    Ok(cross_validated(data, recipe, fold_of, false)?.labels)
}

/// [`predict_with_folds`] for two classes, with each trial's decision value (larger favours the second class) and
/// the area under the ROC curve of those values pooled over the folds, the rule the reports use within a repeat.
pub fn decisions_with_folds(
    data: &Dataset,
    recipe: &Recipe,
    fold_of: &[usize],
) -> Result<(Vec<usize>, Vec<f64>, f64)> {
    if data.classes.len() != 2 {
        return Err(Error::Design(format!(
            "{}: decision values and the ROC curve need two classes; '{}' has {}",
            data.source,
            data.label_column,
            data.classes.len()
        )));
    }
    let cv = cross_validated(data, recipe, fold_of, true)?;
    let positive: Vec<bool> = data.y.iter().map(|&c| c == 1).collect();
    let auc = roc::auc(&cv.decision, &positive).expect("two classes present");
    Ok((cv.labels, cv.decision, auc))
}

/// The fold numbers as given, ascending and once each, and each trial's fold renumbered 0, 1, … in that order.
fn renumbered(fold_of: &[usize]) -> (Vec<usize>, Vec<usize>) {
    let mut names: Vec<usize> = fold_of.to_vec();
    names.sort_unstable();
    names.dedup();
    let fold = fold_of
        .iter()
        .map(|f| names.binary_search(f).expect("a listed fold"))
        .collect();
    (names, fold)
}

/// The classes among the training trials of fold `f` (every trial outside it), ascending.
fn training_classes(data: &Dataset, fold: &[usize], f: usize) -> Vec<usize> {
    let mut present = vec![false; data.classes.len()];
    for (&y, _) in data.y.iter().zip(fold).filter(|(_, &g)| g != f) {
        present[y] = true;
    }
    (0..present.len()).filter(|&c| present[c]).collect()
}

/// Cautions about user-assigned folds that the predictions cannot show: a class with no training trial for some fold
/// (its test trials there can only be predicted wrong). The fold numbers are as given.
pub fn fold_cautions(data: &Dataset, fold_of: &[usize]) -> Vec<String> {
    let (names, fold) = renumbered(fold_of);
    let mut out = Vec::new();
    for (f, name) in names.iter().enumerate() {
        let trained = training_classes(data, &fold, f);
        let missing: Vec<String> = (0..data.classes.len())
            .filter(|c| !trained.contains(c))
            .map(|c| format!("'{}'", data.classes[c]))
            .collect();
        if !missing.is_empty() {
            out.push(format!(
                "fold {name} holds every trial of {}: the decoder that predicts it never saw {} class, so \
                 those trials are predicted as another class",
                missing.join(", "),
                if missing.len() == 1 { "that" } else { "those" }
            ));
        }
    }
    out
}

fn cross_validated(
    data: &Dataset,
    recipe: &Recipe,
    fold_of: &[usize],
    decisions: bool,
) -> Result<CrossValidated> {
    if fold_of.len() != data.n_trials() {
        return Err(Error::Design(format!(
            "{}: {} fold numbers for {} trials",
            data.source,
            fold_of.len(),
            data.n_trials()
        )));
    }
    decoders::require_classes(recipe.classifier)?;
    let decoder = decoders::build(recipe.classifier, recipe.c, recipe.tune);
    let x = data.x.as_standard_layout();
    let (names, fold) = renumbered(fold_of);
    if names.len() == 1 {
        return Err(Error::Design(format!(
            "{}: fold {} holds every trial; nothing is left to train on",
            data.source, names[0]
        )));
    }
    for (f, name) in names.iter().enumerate() {
        let trained = training_classes(data, &fold, f);
        if let [only] = trained[..] {
            return Err(Error::Design(format!(
                "{}: the trials outside fold {name} are all of class '{}', so the decoder that predicts fold \
                 {name} would learn one class and could predict nothing else; assign the folds so that every \
                 fold leaves trials of at least two classes for training",
                data.source, data.classes[only]
            )));
        }
    }
    let set = FoldSet {
        x: x.as_slice().expect("standard layout"),
        p: data.n_features(),
        y: &data.y,
        fold: &fold,
        folds: names.len(),
        n_classes: data.classes.len(),
    };
    let cv = cross_validate(
        decoder.as_ref(),
        &set,
        &Nesting::plain(recipe.seed),
        decisions,
    );
    assert!(
        cv.labels.iter().all(|&c| c != usize::MAX),
        "every fold has training and test trials"
    );
    Ok(cv)
}
