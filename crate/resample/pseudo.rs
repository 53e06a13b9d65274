//! Pseudo-populations: neurons recorded in separate sessions, combined into pseudo-trials.
//!
//! When each neuron was recorded in one session only, no real trial holds them all. A pseudo-trial of condition c
//! joins, for every session, the activity of that session's neurons on one real trial of condition c. Per repeat:
//! 1. each session's trials of each condition are shuffled and dealt to the k folds in turn, so training and test
//!    pseudo-trials are built from disjoint real trials;
//! 2. in fold f, every condition gets n_f pseudo-trials, n_f being the fewest trials any (session, condition) has in
//!    that fold; pseudo-trial t of condition c takes, from each session, that session's t-th (shuffled) trial of c
//!    in fold f, so no real trial is used twice and the sessions are paired independently at random.
//!
//! Conditions have equal numbers of pseudo-trials in every fold: the design is balanced by construction. Pairing
//! trials from different sessions removes the trial-by-trial noise correlations between neurons of different
//! sessions, which can make the population look more informative than a simultaneous recording would be; every
//! report says so.

use crate::data::Dataset;
use crate::rng::shuffle;
use rand_core::RngCore;

/// Every report of a pseudo-population carries this.
pub const CAVEAT: &str = "pseudo-trials pair trials recorded in different sessions, which removes the noise \
     correlations between their neurons; decoding can then overstate what a simultaneously recorded population \
     would carry";

/// Pseudo-trials of each fold: per fold, the size n_f every condition gets, given per-(session, condition) counts.
pub fn per_fold(counts: &[Vec<usize>], k: usize) -> Vec<usize> {
    (0..k)
        .map(|f| {
            counts
                .iter()
                .flatten()
                .map(|&m| m / k + usize::from(f < m % k))
                .min()
                .unwrap_or(0)
        })
        .collect()
}

/// Trials per (session, condition) for labels `y`.
pub fn counts(
    y: &[usize],
    sessions: &[usize],
    n_sessions: usize,
    n_classes: usize,
) -> Vec<Vec<usize>> {
    let mut c = vec![vec![0; n_classes]; n_sessions];
    for (&s, &label) in sessions.iter().zip(y) {
        c[s][label] += 1;
    }
    c
}

/// One repeat's pseudo-trials: for every session, condition and fold, that session's (shuffled) trials of the
/// condition dealt to the fold, and how many pseudo-trials each condition gets in each fold.
pub struct Dealt {
    /// `members[s][c][f]`: indices into session s's own trials.
    pub members: Vec<Vec<Vec<Vec<usize>>>>,
    /// Pseudo-trials per condition in each fold.
    pub sizes: Vec<usize>,
    pub n_classes: usize,
}

/// One pseudo-trial: its condition, its fold, and its number `t` within (fold, condition); it takes, from every
/// session s, the trial `members[s][class][fold][t]`.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub struct PseudoTrial {
    pub fold: usize,
    pub class: usize,
    pub t: usize,
}

/// Shuffle every session's trials of every condition and deal them into `k` folds in turn (step 1 above). `labels[s]`
/// are session s's trials' conditions (observed or permuted) in its own trial order.
pub fn deal(labels: &[Vec<usize>], n_classes: usize, k: usize, rng: &mut impl RngCore) -> Dealt {
    let mut members = vec![vec![vec![Vec::new(); k]; n_classes]; labels.len()];
    let mut counts = vec![vec![0; n_classes]; labels.len()];
    for (s, by_class) in members.iter_mut().enumerate() {
        for (c, by_fold) in by_class.iter_mut().enumerate() {
            let mut trials: Vec<usize> = (0..labels[s].len())
                .filter(|&i| labels[s][i] == c)
                .collect();
            counts[s][c] = trials.len();
            shuffle(rng, &mut trials);
            for (t, &i) in trials.iter().enumerate() {
                by_fold[t % k].push(i);
            }
        }
    }
    Dealt {
        members,
        sizes: per_fold(&counts, k),
        n_classes,
    }
}

impl Dealt {
    /// Every pseudo-trial in order: fold by fold, condition by condition (step 2 above).
    pub fn trials(&self) -> Vec<PseudoTrial> {
        let mut out = Vec::new();
        for (fold, &n_f) in self.sizes.iter().enumerate() {
            for class in 0..self.n_classes {
                out.extend((0..n_f).map(|t| PseudoTrial { fold, class, t }));
            }
        }
        out
    }

    /// The trial of session `s` (an index into its own trials) that pseudo-trial `p` takes.
    pub fn member(&self, s: usize, p: PseudoTrial) -> usize {
        self.members[s][p.class][p.fold][p.t]
    }
}

/// Row-major pseudo-trials (n × p), their conditions and folds, for labels `y` (observed or permuted), from a table
/// holding every session's trials and each feature's session ([`Dataset::pseudo`]).
pub fn build(
    data: &Dataset,
    x: &[f64],
    y: &[usize],
    k: usize,
    rng: &mut impl RngCore,
) -> (Vec<f64>, Vec<usize>, Vec<usize>) {
    let sessions = data.groups.as_deref().expect("a session per trial");
    let feature_session = data.pseudo.as_ref().expect("pseudo-population layout");
    let p = data.n_features();
    // Each session's trials (indices into the table) in table order, and their labels.
    let mut trials_of = vec![Vec::new(); data.group_names.len()];
    for (i, &s) in sessions.iter().enumerate() {
        trials_of[s].push(i);
    }
    let labels: Vec<Vec<usize>> = trials_of
        .iter()
        .map(|t| t.iter().map(|&i| y[i]).collect())
        .collect();
    let dealt = deal(&labels, data.classes.len(), k, rng);
    let (mut rows, mut classes, mut folds) = (Vec::new(), Vec::new(), Vec::new());
    for pt in dealt.trials() {
        for (j, &s) in feature_session.iter().enumerate() {
            let i = trials_of[s][dealt.member(s, pt)];
            rows.push(x[i * p + j]);
        }
        classes.push(pt.class);
        folds.push(pt.fold);
    }
    (rows, classes, folds)
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn fold_sizes_are_the_fewest_dealt() {
        // Session 0 has 7 and 5 trials of the two conditions, session 1 has 6 and 9; 3 folds.
        // Dealt: 7 → 3,2,2; 5 → 2,2,1; 6 → 2,2,2; 9 → 3,3,3. Fewest per fold: 2, 2, 1.
        assert_eq!(per_fold(&[vec![7, 5], vec![6, 9]], 3), vec![2, 2, 1]);
    }
}
