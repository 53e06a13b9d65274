//! Cross-validated predictions on folds the user assigns (`popdecode predict`).

use crate::data::Dataset;
use crate::decoders::{self, fit_folds, FoldSet};
use crate::error::{Error, Result};
use crate::recipe::Recipe;

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
    // Fold numbers as given, renumbered 0, 1, … in ascending order.
    let mut names: Vec<usize> = fold_of.to_vec();
    names.sort_unstable();
    names.dedup();
    let fold: Vec<usize> = fold_of
        .iter()
        .map(|f| names.binary_search(f).expect("a listed fold"))
        .collect();
    if names.len() == 1 {
        return Err(Error::Design(format!(
            "{}: fold {} holds every trial; nothing is left to train on",
            data.source, names[0]
        )));
    }
    let set = FoldSet {
        x: x.as_slice().expect("standard layout"),
        p: data.n_features(),
        y: &data.y,
        fold: &fold,
        folds: names.len(),
        n_classes: data.classes.len(),
    };
    let mut predicted = vec![0; data.n_trials()];
    for (f, model) in fit_folds(decoder.as_ref(), &set).into_iter().enumerate() {
        let model = model.expect("every fold has training and test trials");
        let (_, test) = set.partition(f);
        for (&i, c) in test.iter().zip(model.predict(set.rows(&test))) {
            predicted[i] = c;
        }
    }
    Ok(predicted)
}
