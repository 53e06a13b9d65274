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

/// Row-major pseudo-trials (n × p), their conditions and folds, for labels `y` (observed or permuted).
pub fn build(
    data: &Dataset,
    x: &[f64],
    y: &[usize],
    k: usize,
    rng: &mut impl RngCore,
) -> (Vec<f64>, Vec<usize>, Vec<usize>) {
    let sessions = data.groups.as_deref().expect("a session per trial");
    let feature_session = data.pseudo.as_ref().expect("pseudo-population layout");
    let (ns, nc, p) = (
        data.group_names.len(),
        data.classes.len(),
        data.n_features(),
    );
    // members[s][c][f]: shuffled trials of session s, condition c, dealt to fold f.
    let mut members = vec![vec![vec![Vec::new(); k]; nc]; ns];
    for (s, by_class) in members.iter_mut().enumerate() {
        for (c, by_fold) in by_class.iter_mut().enumerate() {
            let mut trials: Vec<usize> = (0..y.len())
                .filter(|&i| sessions[i] == s && y[i] == c)
                .collect();
            shuffle(rng, &mut trials);
            for (t, &i) in trials.iter().enumerate() {
                by_fold[t % k].push(i);
            }
        }
    }
    let sizes = per_fold(&counts(y, sessions, ns, nc), k);
    let (mut rows, mut labels, mut folds) = (Vec::new(), Vec::new(), Vec::new());
    // Pseudo-trial t of condition c in fold f takes trial t of that fold from every session.
    for (f, &n_f) in sizes.iter().enumerate() {
        for (c, t) in (0..nc).flat_map(|c| (0..n_f).map(move |t| (c, t))) {
            for (j, &s) in feature_session.iter().enumerate() {
                let i = members[s][c][f][t];
                rows.push(x[i * p + j]);
            }
            labels.push(c);
            folds.push(f);
        }
    }
    (rows, labels, folds)
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
