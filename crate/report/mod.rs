//! What every analysis's report shares: the software, the design and chance level of the resampling, fit counts
//! and their warnings, the settings chosen by nested cross-validation; and, in submodules, text formatting
//! ([`text`]), methods sentences ([`methods`]), SVG primitives ([`svg`]) and figures on any scale ([`figures`]).
//! Each analysis has its own schema, in its own folder under `analyses/`.

pub mod figures;
pub mod methods;
pub mod svg;
pub mod text;

use crate::recipe::{Recipe, Setting};
use crate::resample::{Headline, Scheme, Split, Task};
use crate::stats::binomial;
use serde::{Deserialize, Serialize};

/// Significance level of the reported binomial chance threshold.
pub const CHANCE_ALPHA: f64 = 0.05;

/// How often each setting of the grid was chosen by nested cross-validation.
#[derive(Debug, Clone, PartialEq, Serialize, Deserialize)]
pub struct Tuning {
    pub grid: Vec<Setting>,
    pub chosen: Vec<Chosen>,
}

#[derive(Debug, Clone, PartialEq, Serialize, Deserialize)]
pub struct Chosen {
    #[serde(flatten)]
    pub setting: Setting,
    pub fits: usize,
}

impl Tuning {
    /// The summary of the settings chosen, when the recipe tunes.
    pub fn of<'a>(recipe: &Recipe, chosen: impl Iterator<Item = &'a Setting>) -> Option<Tuning> {
        let grid = recipe.classifier.grid().filter(|_| recipe.tune)?;
        let chosen: Vec<Setting> = chosen.copied().collect();
        Some(Tuning {
            chosen: grid
                .iter()
                .map(|&setting| Chosen {
                    setting,
                    fits: chosen.iter().filter(|&&c| c == setting).count(),
                })
                .collect(),
            grid,
        })
    }
}

#[derive(Debug, Clone, PartialEq, Serialize, Deserialize)]
pub struct Software {
    pub name: String,
    pub version: String,
}

impl Software {
    pub fn current() -> Software {
        Software {
            name: "popdecode".into(),
            version: env!("CARGO_PKG_VERSION").into(),
        }
    }
}

#[derive(Debug, Clone, PartialEq, Serialize, Deserialize)]
pub struct Design {
    pub split: Split,
    /// Folds per repeat (for leave-one-out, the trial count; for leave-one-group-out, the group count).
    pub folds: usize,
    pub trials_per_repeat: usize,
    pub headline: Headline,
}

impl Design {
    pub fn of(scheme: &Scheme) -> Design {
        Design {
            split: scheme.split,
            folds: scheme.folds(),
            trials_per_repeat: scheme.trials_per_repeat,
            headline: scheme.headline,
        }
    }
}

impl Chance {
    /// Chance level and the binomial threshold for the trials tested in each repeat.
    pub fn of(scheme: &Scheme, n_classes: usize) -> Chance {
        Chance {
            level: 1.0 / n_classes as f64,
            threshold: binomial::chance_threshold(
                scheme.trials_per_repeat as u64,
                n_classes,
                CHANCE_ALPHA,
            ),
            alpha: CHANCE_ALPHA,
            test_trials: scheme.trials_per_repeat,
        }
    }
}

#[derive(Debug, Clone, PartialEq, Serialize, Deserialize)]
pub struct Chance {
    /// 1 / number of classes (the expected accuracy of guessing, for balanced test sets).
    pub level: f64,
    /// Accuracy that chance exceeds with probability `alpha` on `test_trials` independent trials
    /// (Combrisson & Jerbi, 2015).
    pub threshold: f64,
    pub alpha: f64,
    pub test_trials: usize,
}

#[derive(Debug, Clone, PartialEq, Serialize, Deserialize)]
pub struct Fits {
    pub total: u64,
    pub capped: u64,
    pub single_class: u64,
}

impl Fits {
    /// What the user should know about fits that did not go as planned.
    pub fn warnings(&self) -> Vec<String> {
        let mut out = Vec::new();
        if self.capped > 0 {
            out.push(format!(
                "{} of {} fits stopped at the solver's iteration cap before reaching its tolerance; their decoders \
                 may be slightly off (standardised data rarely causes this; a smaller C usually helps)",
                self.capped, self.total
            ));
        }
        if self.single_class > 0 {
            out.push(format!(
                "{} of {} training folds held a single class (groups with one condition each) and predicted it for \
                 every test trial",
                self.single_class, self.total
            ));
        }
        out
    }
}

/// Fit counts summed over outcomes, each given as (fits, capped, single-class).
impl Fits {
    /// A report's warnings: the plan's, then what went wrong in fits.
    pub fn with_warnings(&self, plan_warnings: &[String]) -> Vec<String> {
        let mut warnings = plan_warnings.to_vec();
        warnings.extend(self.warnings());
        warnings
    }

    pub fn sum(counts: impl Iterator<Item = (u32, u32, u32)>) -> Fits {
        let mut f = Fits {
            total: 0,
            capped: 0,
            single_class: 0,
        };
        for (fits, capped, single) in counts {
            f.total += u64::from(fits);
            f.capped += u64::from(capped);
            f.single_class += u64::from(single);
        }
        f
    }
}

/// What a report says when nested tuning could not keep groups apart in the inner folds of some fits.
pub fn ungrouped_inner_warning(fits: u64, total: u64) -> String {
    format!(
        "in {fits} of {total} fits the training fold held a single group, so nested tuning's inner folds could not \
         keep groups apart there and were stratified instead"
    )
}

/// Observed repeats and shuffles, each sorted by index, from outcomes in any order.
pub fn by_task<O>(outcomes: &[O], task: impl Fn(&O) -> Task) -> (Vec<&O>, Vec<&O>) {
    let sorted = |shuffle: bool| {
        let mut v: Vec<&O> = outcomes
            .iter()
            .filter(|o| matches!(task(o), Task::Shuffle(_)) == shuffle)
            .collect();
        v.sort_by_key(|o| task(o).index());
        v
    };
    (sorted(false), sorted(true))
}
