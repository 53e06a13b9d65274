//! The resampling scheme of a recipe resolved against the trials: which score leads, how folds are made, and one
//! repeat's draw (balancing, then folds). Shared by every kind of analysis, so that a trial table and a
//! time-resolved recording are balanced and split by exactly the same rules.

use super::{balance, grouped_folds, stratified_folds};
use crate::data::trials::Trials;
use crate::error::{Error, Result};
use crate::recipe::{Folds, Recipe};
use rand_core::RngCore;
use serde::{Deserialize, Serialize};

/// One independent piece of work.
#[derive(Debug, Clone, Copy, PartialEq, Eq, Serialize, Deserialize)]
#[serde(tag = "kind", content = "index", rename_all = "snake_case")]
pub enum Task {
    /// Observed repeat `i`.
    Repeat(usize),
    /// Label permutation `j`, run with the recipe's repeats per shuffle.
    Shuffle(usize),
}

impl Task {
    /// Every task of a protocol: the observed repeats, then the shuffles, each in index order.
    pub fn all(repeats: usize, shuffles: usize) -> Vec<Task> {
        (0..repeats)
            .map(Task::Repeat)
            .chain((0..shuffles).map(Task::Shuffle))
            .collect()
    }

    /// The repeat's or the shuffle's index.
    pub fn index(self) -> usize {
        match self {
            Task::Repeat(i) | Task::Shuffle(i) => i,
        }
    }
}

/// The score a run is judged by and the null is built from.
#[derive(Debug, Clone, Copy, PartialEq, Eq, Serialize, Deserialize)]
#[serde(rename_all = "snake_case")]
pub enum Headline {
    /// Balanced data: accuracy, which then equals balanced accuracy.
    Accuracy,
    /// Unbalanced data: raw accuracy rewards guessing the majority class, so balanced accuracy leads.
    BalancedAccuracy,
}

impl Headline {
    /// The score's name in sentences and on axes.
    pub fn name(self) -> &'static str {
        match self {
            Headline::Accuracy => "accuracy",
            Headline::BalancedAccuracy => "balanced accuracy",
        }
    }

    /// This score, of a pair (accuracy, balanced accuracy).
    pub fn of(self, accuracy: f64, balanced_accuracy: f64) -> f64 {
        match self {
            Headline::Accuracy => accuracy,
            Headline::BalancedAccuracy => balanced_accuracy,
        }
    }
}

/// How folds are made, as resolved against the data.
#[derive(Debug, Clone, Copy, PartialEq, Eq, Serialize, Deserialize)]
#[serde(rename_all = "snake_case")]
pub enum Split {
    Stratified {
        folds: usize,
    },
    LeaveOneOut,
    Grouped {
        folds: usize,
    },
    LeaveOneGroupOut,
    /// Pseudo-trials built within each of `folds` folds of every session's trials ([`super::pseudo`]).
    Pseudo {
        folds: usize,
    },
}

/// The resampling scheme of a recipe, resolved against the trials: how folds are made, which score leads, and what
/// the user should know. Shared by every kind of analysis, so that a trial table and a time-resolved recording are
/// balanced and split by exactly the same rules.
#[derive(Debug, Clone)]
pub struct Scheme {
    pub split: Split,
    pub headline: Headline,
    /// Trials entering each repeat (after balancing).
    pub trials_per_repeat: usize,
    pub warnings: Vec<String>,
    /// Every repeat would draw the same split (see [`Scheme::repeats_to_run`]).
    pub identical_splits: bool,
    balance: bool,
    n_classes: usize,
    n_groups: usize,
}

/// What every report of a leave-one-out analysis says.
pub const LEAVE_ONE_OUT_CAUTION: &str = "leave-one-out is biased below chance when the data carry no information: \
     holding out one trial leaves its class one trial short in the training set, which tilts decoders that learn \
     class proportions or an intercept against it (Kohavi, 1995), and its estimate varies more from dataset to \
     dataset than that of k-fold cross-validation; repeated stratified k-fold (for example 5 folds and 100 repeats) \
     is recommended instead (Varoquaux et al., 2017)";

/// One repeat's draw: the trials used (indices into the data), their labels, and the fold of each.
pub struct Draw {
    pub used: Vec<usize>,
    pub y: Vec<usize>,
    pub fold: Vec<usize>,
    pub folds: usize,
}

impl Scheme {
    /// Check the recipe against the trials (every design error is raised here, once) and resolve the split.
    pub fn resolve(t: &Trials, recipe: &Recipe) -> Result<Scheme> {
        recipe.validate()?;
        let n_classes = t.classes.len();
        let counts = t.class_counts();
        let smallest = *counts.iter().min().expect("at least two classes");
        let (smallest_class, _) = counts
            .iter()
            .enumerate()
            .min_by_key(|&(_, c)| *c)
            .expect("classes");
        let trials_per_repeat = if recipe.balance {
            smallest * n_classes
        } else {
            t.y.len()
        };
        let mut warnings = Vec::new();
        if t.pseudo {
            return Scheme::resolve_pseudo(t, recipe, n_classes);
        }
        if smallest < 2 {
            // A label of numbers most of which occur once is a continuous variable chosen by mistake: say that,
            // not "class '5.033' has a single trial", which reads as a broken file.
            let singles = counts.iter().filter(|&&c| c == 1).count();
            if singles * 2 > n_classes && t.classes.iter().all(|c| c.trim().parse::<f64>().is_ok())
            {
                return Err(Error::Design(format!(
                    "{}: '{}' holds {} different numbers among {} trials, {} of them on a single trial: it reads as \
                     a continuous variable, and decoding classes needs at least two trials of each. Decode it with \
                     a regression decoder (ridge regression, or circular ridge regression for an angle), or choose \
                     a column of conditions as the label",
                    t.source,
                    recipe.columns.label,
                    n_classes,
                    t.y.len(),
                    singles
                )));
            }
            // Its one trial is tested only when held out, and then no training trial of its class exists.
            return Err(Error::Design(format!(
                "{}: class {} has a single trial; cross-validation needs at least two trials of every class, so \
                 that a held-out trial's class is among the training trials (leave the class out, or add trials)",
                t.source,
                crate::input::table::quoted_cell(&t.classes[smallest_class])
            )));
        }
        let split = match (&t.groups, recipe.folds) {
            (Some(_), folds) => {
                let n_groups = t.group_names.len();
                if n_groups < 2 {
                    return Err(Error::Design(format!(
                        "{}: the group column '{}' holds a single group; grouped folds need at least two",
                        t.source,
                        t.group_column.unwrap_or("")
                    )));
                }
                match folds {
                    Folds::K(k) if k < n_groups => Split::Grouped { folds: k },
                    _ => Split::LeaveOneGroupOut,
                }
            }
            (None, Folds::LeaveOneOut) => Split::LeaveOneOut,
            (None, Folds::K(k)) if k >= trials_per_repeat => Split::LeaveOneOut,
            (None, Folds::K(k)) => {
                // The smallest class has the same size whether or not balancing is on.
                let per_class = smallest;
                if per_class < k {
                    return Err(Error::Design(format!(
                        "{}: class {} has {} trial{}{}, fewer than the {k} folds; choose {} or fewer folds, or \
                         leave-one-out",
                        t.source,
                        crate::input::table::quoted_cell(&t.classes[smallest_class]),
                        per_class,
                        if per_class == 1 { "" } else { "s" },
                        if recipe.balance { " (the size every class is balanced to)" } else { "" },
                        per_class.max(2)
                    )));
                }
                Split::Stratified { folds: k }
            }
        };
        if let (Some(groups), Split::LeaveOneGroupOut) = (t.groups, split) {
            for (g, name) in t.group_names.iter().enumerate() {
                let mut others = vec![false; n_classes];
                for (i, &c) in t.y.iter().enumerate() {
                    if groups[i] != g {
                        others[c] = true;
                    }
                }
                if others.iter().filter(|&&b| b).count() < 2 {
                    return Err(Error::Design(format!(
                        "{}: leaving out group '{name}' leaves a single class to train on; with groups, every \
                         training fold needs at least two classes",
                        t.source
                    )));
                }
            }
        }
        if let (Some(groups), true) = (t.groups, recipe.balance) {
            Scheme::check_draws_span_groups(t, groups, smallest)?;
        }
        if recipe.shuffles > 0 {
            if let Some(groups) = t.groups {
                let varies = (0..t.group_names.len()).any(|g| {
                    let mut labels =
                        t.y.iter()
                            .zip(groups)
                            .filter(|(_, &gi)| gi == g)
                            .map(|(&c, _)| c);
                    labels
                        .next()
                        .is_some_and(|first| labels.any(|c| c != first))
                });
                if !varies {
                    warnings.push(
                        "labels never vary within a group, so shuffling labels within groups leaves them unchanged: \
                         the shuffle control cannot test anything here (each shuffle repeats the observed analysis \
                         on other folds, so its p-value says nothing about the labels)"
                            .to_string(),
                    );
                }
            }
        }
        if split == Split::LeaveOneOut {
            warnings.push(LEAVE_ONE_OUT_CAUTION.to_string());
        }
        // Without random undersampling (balancing off, or classes already of equal size) leave-one-out and
        // leave-one-group-out have nothing random left: every repeat, and every repeat of a shuffle, splits alike.
        let identical_splits = matches!(split, Split::LeaveOneOut | Split::LeaveOneGroupOut)
            && (!recipe.balance || counts.iter().all(|&c| c == smallest));
        if identical_splits && (recipe.repeats > 1 || recipe.shuffle_repeats() > 1) {
            warnings.push(format!(
                "{} keeps every trial{} and splits them the same way in every repeat, so a single repeat was run \
                 (instead of {}{}): more repeats would only repeat the same numbers",
                match split {
                    Split::LeaveOneOut => "leave-one-out".to_string(),
                    _ => format!("holding out each level of '{}' in turn", t.group_column.unwrap_or("")),
                },
                if recipe.balance { " (the classes have equal sizes)" } else { "" },
                recipe.repeats,
                if recipe.shuffles > 0 {
                    format!(", and one per shuffle instead of {}", recipe.shuffle_repeats())
                } else {
                    String::new()
                }
            ));
        }
        if !recipe.balance && counts.iter().any(|&c| c != smallest) {
            warnings.push(
                "classes are unbalanced and balancing is off: balanced accuracy is the headline score".to_string(),
            );
        }
        let headline = if recipe.balance {
            Headline::Accuracy
        } else {
            Headline::BalancedAccuracy
        };
        Ok(Scheme {
            split,
            headline,
            trials_per_repeat,
            warnings,
            identical_splits,
            balance: recipe.balance,
            n_classes,
            n_groups: t.group_names.len(),
        })
    }

    /// With balancing, every class is undersampled to `smallest` trials; if one group alone holds that many of
    /// every class, a repeat can draw all its trials from that group and be left with nothing to test on.
    fn check_draws_span_groups(t: &Trials, groups: &[usize], smallest: usize) -> Result<()> {
        let (n_groups, n_classes) = (t.group_names.len(), t.classes.len());
        let mut count = vec![0usize; n_groups * n_classes];
        for (&g, &c) in groups.iter().zip(t.y) {
            count[g * n_classes + c] += 1;
        }
        match (0..n_groups).find(|&g| (0..n_classes).all(|c| count[g * n_classes + c] >= smallest)) {
            None => Ok(()),
            Some(g) => Err(Error::Design(format!(
                "{}: balancing keeps {smallest} trials of every class, and group '{}' alone holds that many of \
                 every class, so a repeat could draw all its trials from that one group and have no other group to \
                 test on; add trials of the smallest class in other groups, or turn class balancing off",
                t.source, t.group_names[g]
            ))),
        }
    }

    /// Pseudo-populations: k folds of every session's trials; every (session, condition) needs k trials.
    fn resolve_pseudo(t: &Trials, recipe: &Recipe, n_classes: usize) -> Result<Scheme> {
        let k = match recipe.folds {
            Folds::K(k) => k,
            Folds::LeaveOneOut => {
                return Err(Error::Design(format!(
                    "{}: pseudo-populations need k folds (each fold builds its own pseudo-trials), not leave-one-out",
                    t.source
                )))
            }
        };
        let sessions = t.groups.expect("sessions");
        let counts = super::pseudo::counts(t.y, sessions, t.group_names.len(), n_classes);
        for (s, row) in counts.iter().enumerate() {
            for (c, &m) in row.iter().enumerate() {
                if m < k {
                    return Err(Error::Design(format!(
                        "{}: session '{}' has {m} trial{} of '{}', fewer than the {k} folds; every session needs \
                         at least {k} trials of every condition for pseudo-trials (or choose fewer folds)",
                        t.source,
                        t.group_names[s],
                        if m == 1 { "" } else { "s" },
                        t.classes[c]
                    )));
                }
            }
        }
        let per_repeat = super::pseudo::per_fold(&counts, k).iter().sum::<usize>() * n_classes;
        Ok(Scheme {
            split: Split::Pseudo { folds: k },
            headline: Headline::Accuracy,
            trials_per_repeat: per_repeat,
            warnings: vec![super::pseudo::CAVEAT.to_string()],
            identical_splits: false,
            balance: true,
            n_classes,
            n_groups: t.group_names.len(),
        })
    }

    /// The recipe as it will run: when every repeat would split alike ([`Scheme::identical_splits`]), one repeat,
    /// and one per shuffle, since more would only repeat the same numbers.
    pub fn repeats_to_run(&self, recipe: &Recipe) -> Recipe {
        let mut recipe = recipe.clone();
        if self.identical_splits {
            recipe.repeats = 1;
            if recipe.shuffles > 0 {
                recipe.shuffle_repeats = Some(1);
            }
        }
        recipe
    }

    /// Folds per repeat (for leave-one-out, the trial count; for leave-one-group-out, the group count).
    pub fn folds(&self) -> usize {
        match self.split {
            Split::Stratified { folds } | Split::Grouped { folds } | Split::Pseudo { folds } => {
                folds
            }
            Split::LeaveOneOut => self.trials_per_repeat,
            Split::LeaveOneGroupOut => self.n_groups,
        }
    }

    /// Balance (if asked) and split, for `labels` (observed or permuted), from the task's own random stream.
    pub fn draw(&self, labels: &[usize], groups: Option<&[usize]>, rng: &mut impl RngCore) -> Draw {
        let used: Vec<usize> = if self.balance {
            balance(rng, labels, self.n_classes)
        } else {
            (0..labels.len()).collect()
        };
        let y: Vec<usize> = used.iter().map(|&i| labels[i]).collect();
        let grouped = |rng: &mut _, k: usize| {
            let g = groups.expect("grouped splits exist only with groups");
            let g_used: Vec<usize> = used.iter().map(|&i| g[i]).collect();
            grouped_folds(rng, &g_used, self.n_groups, k)
        };
        let (fold, folds) = match self.split {
            Split::Stratified { folds } => {
                (stratified_folds(rng, &y, self.n_classes, folds), folds)
            }
            Split::LeaveOneOut => ((0..used.len()).collect(), used.len()),
            Split::Grouped { folds } => grouped(rng, folds),
            Split::LeaveOneGroupOut => grouped(rng, usize::MAX),
            Split::Pseudo { .. } => {
                unreachable!("pseudo-trials are drawn by resample::pseudo::build")
            }
        };
        Draw {
            used,
            y,
            fold,
            folds,
        }
    }

    /// The score a run is judged by, from accuracy and balanced accuracy.
    pub fn headline_of(&self, accuracy: f64, balanced_accuracy: f64) -> f64 {
        self.headline.of(accuracy, balanced_accuracy)
    }
}

impl Draw {
    /// Training and test positions (into `used`) of fold `f`.
    pub fn partition(&self, f: usize) -> (Vec<usize>, Vec<usize>) {
        (0..self.used.len()).partition(|&pos| self.fold[pos] != f)
    }
}
