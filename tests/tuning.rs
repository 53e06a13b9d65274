//! Nested selection of C: the outer test trials are never seen, and the choices are reported.

use popdecode::analyses::trial_table::run_all;
use popdecode::analyses::trial_table::Plan;
use popdecode::decoders::tuning::Tuned;
use popdecode::decoders::{fit_folds, fit_folds_with, Decoder, FoldSet, Model, Nesting};
use popdecode::input;
use popdecode::recipe::Classifier;
use popdecode::recipe::Recipe;
use popdecode::recipe::Setting;
use std::sync::{Arc, Mutex};

/// A decoder that writes down every training row it is given (rows carry a unique id in their only feature).
struct Spy(Arc<Mutex<Vec<Vec<f64>>>>);

struct First(usize);

impl Model for First {
    fn predict(&self, x: &[f64]) -> Vec<usize> {
        vec![self.0; x.len()]
    }
    fn decision(&self, x: &[f64]) -> Vec<f64> {
        vec![0.0; x.len()]
    }
}

impl Decoder for Spy {
    fn fit(&self, x: &[f64], _n: usize, _p: usize, y: &[usize], _k: usize) -> Box<dyn Model> {
        self.0.lock().unwrap().push(x.to_vec());
        Box::new(First(y[0]))
    }
    fn standardise(&self) -> bool {
        false // keep the ids readable
    }
}

/// Instrumented data access: during the fit of outer fold f, every row any inner fit reads belongs to fold f's
/// training trials, and the final refit reads exactly those.
#[test]
fn nested_selection_never_reads_outer_test_rows() {
    let log = Arc::new(Mutex::new(Vec::new()));
    let grid: Vec<Setting> = [0.1, 1.0, 10.0]
        .map(|c| Setting {
            c,
            gamma_factor: None,
        })
        .to_vec();
    let spy_log = log.clone();
    let tuned = Tuned {
        build: Box::new(move |_| Box::new(Spy(spy_log.clone())) as Box<dyn Decoder>),
        grid: grid.clone(),
        standardise: false,
    };
    let n = 40;
    let x: Vec<f64> = (0..n).map(|i| i as f64).collect();
    let y: Vec<usize> = (0..n).map(|i| i % 2).collect();
    let fold: Vec<usize> = (0..n).map(|i| (i / 2) % 4).collect();
    let set = FoldSet {
        x: &x,
        p: 1,
        y: &y,
        fold: &fold,
        folds: 4,
        n_classes: 2,
    };
    let models = fit_folds(&tuned, &set);
    assert!(models.iter().all(Option::is_some));
    let calls = log.lock().unwrap().clone();
    // Per outer fold: 3 grid values × 5 inner folds, then the refit.
    let per_fold = grid.len() * 5 + 1;
    assert_eq!(calls.len(), 4 * per_fold);
    for (f, segment) in calls.chunks(per_fold).enumerate() {
        let training: Vec<f64> = (0..n).filter(|&i| fold[i] != f).map(|i| i as f64).collect();
        assert_eq!(
            segment.last().unwrap(),
            &training,
            "outer fold {f}: the refit"
        );
        for rows in segment {
            assert!(
                rows.iter().all(|id| training.contains(id)),
                "outer fold {f} read a test row: {rows:?}"
            );
        }
    }
}

/// With --tune the report says how often each C was chosen, over every fit of the observed repeats; a decoder
/// without a setting refuses to be tuned.
#[test]
fn chosen_settings_are_reported() {
    let text = popdecode::simulate::csv(&popdecode::simulate::Scenario::odours());
    let mut recipe = Recipe::new("odour");
    recipe.tune = true;
    recipe.repeats = 3;
    recipe.shuffles = 2;
    recipe.columns.ignore = vec!["session".into()];
    let data = input::trial_table("o.csv", text.as_bytes(), &recipe.columns).unwrap();
    let report = run_all(&Plan::new(data.clone(), &recipe).unwrap());
    let t = report.tuning.as_ref().expect("a tuning summary");
    assert_eq!(t.grid.len(), 7);
    let total: usize = t.chosen.iter().map(|c| c.fits).sum();
    assert_eq!(total, 3 * 5, "one choice per fit of the observed repeats");
    // The kernel SVM searches C and the kernel width together: 7 × 3 settings.
    recipe.classifier = Classifier::RbfSvm;
    recipe.shuffles = 0;
    recipe.repeats = 1;
    let report = run_all(&Plan::new(data.clone(), &recipe).unwrap());
    let t = report.tuning.as_ref().unwrap();
    assert_eq!(t.grid.len(), 21);
    assert!(t.grid.iter().all(|s| s.gamma_factor.is_some()));
    assert_eq!(t.chosen.iter().map(|c| c.fits).sum::<usize>(), 5);
    recipe.classifier = Classifier::ShrinkageLda;
    assert!(Plan::new(data.clone(), &recipe).is_err());
}

/// With groups, nested tuning's inner folds never split a group of the outer training fold, and they are drawn at
/// random from the task's own stream (issue 13, item 10): every inner fit's held-out rows share no group with its
/// training rows, and another key (another task) deals other inner folds. Before, inner folds were dealt class by
/// class in file order, splitting every group.
#[test]
fn inner_folds_respect_groups_and_are_drawn_at_random() {
    let n = 60;
    // Ten groups of six trials, both classes in each.
    let group: Vec<usize> = (0..n).map(|i| i / 6).collect();
    let x: Vec<f64> = (0..n).map(|i| i as f64).collect();
    let y: Vec<usize> = (0..n).map(|i| i % 2).collect();
    // Outer folds: two groups each.
    let fold: Vec<usize> = (0..n).map(|i| (i / 12) % 5).collect();
    let set = FoldSet {
        x: &x,
        p: 1,
        y: &y,
        fold: &fold,
        folds: 5,
        n_classes: 2,
    };
    let grid: Vec<Setting> = [0.1, 1.0]
        .map(|c| Setting {
            c,
            gamma_factor: None,
        })
        .to_vec();
    let inner_training = |key: u64| {
        let log = Arc::new(Mutex::new(Vec::new()));
        let spy_log = log.clone();
        let tuned = Tuned {
            build: Box::new(move |_| Box::new(Spy(spy_log.clone())) as Box<dyn Decoder>),
            grid: grid.clone(),
            standardise: false,
        };
        let nesting = Nesting {
            groups: Some(&group),
            seed: 3,
            key,
        };
        fit_folds_with(&tuned, &set, &nesting);
        let calls: Vec<Vec<f64>> = log.lock().unwrap().clone();
        calls
    };
    let calls = inner_training(7);
    // Per outer fold: 8 training groups → 5 inner folds × 2 settings, then the refit.
    let per_fold = 2 * 5 + 1;
    assert_eq!(calls.len(), 5 * per_fold);
    for (f, segment) in calls.chunks(per_fold).enumerate() {
        let outer: Vec<usize> = (0..n).filter(|&i| fold[i] != f).collect();
        for rows in &segment[..per_fold - 1] {
            let trained: Vec<usize> = rows.iter().map(|&v| v as usize).collect();
            let held_out: Vec<usize> = outer
                .iter()
                .copied()
                .filter(|i| !trained.contains(i))
                .collect();
            assert!(!held_out.is_empty());
            for i in &held_out {
                assert!(
                    trained.iter().all(|t| group[*t] != group[*i]),
                    "outer fold {f}: group {} split between inner training and test",
                    group[*i]
                );
            }
        }
    }
    assert_ne!(
        calls,
        inner_training(8),
        "another task's stream deals other inner folds"
    );
    assert_eq!(
        calls,
        inner_training(7),
        "the same stream deals the same inner folds"
    );
}
