//! Resampling: which trials enter a repeat, how they are split into folds, and how labels are permuted; the scheme
//! that resolves a recipe's resampling against the trials ([`scheme`]); pseudo-trials for neurons recorded in
//! separate sessions ([`pseudo`]); and scoring pooled predictions ([`score`]).
//!
//! Every function takes the task's own random stream, so a repeat's trials and folds depend only on
//! (seed, task coordinates) — never on which thread or worker runs it.

pub mod pseudo;
pub mod scheme;
pub mod score;

pub use scheme::{Draw, Headline, Scheme, Split, Task};

use crate::rng::{below, shuffle};
use rand_core::RngCore;

/// Randomly undersample every class to the size of the smallest. Returns trial indices, sorted.
pub fn balance(rng: &mut impl RngCore, y: &[usize], n_classes: usize) -> Vec<usize> {
    let smallest = class_members(y, n_classes)
        .iter()
        .map(Vec::len)
        .filter(|&n| n > 0)
        .min()
        .unwrap_or(0);
    undersample(rng, y, n_classes, smallest)
}

/// Keep `per_class` trials of every class (all of a class that has fewer), drawn at random without replacement
/// (each class's trials shuffled in file order, the first `per_class` kept). Returns trial indices, sorted.
pub fn undersample(
    rng: &mut impl RngCore,
    y: &[usize],
    n_classes: usize,
    per_class: usize,
) -> Vec<usize> {
    let mut by_class = class_members(y, n_classes);
    let mut kept = Vec::with_capacity(per_class * n_classes);
    for members in &mut by_class {
        shuffle(rng, members);
        kept.extend_from_slice(&members[..per_class.min(members.len())]);
    }
    kept.sort_unstable();
    kept
}

/// The trials of each class, in file order.
fn class_members(y: &[usize], n_classes: usize) -> Vec<Vec<usize>> {
    let mut by_class: Vec<Vec<usize>> = vec![Vec::new(); n_classes];
    for (i, &c) in y.iter().enumerate() {
        by_class[c].push(i);
    }
    by_class
}

/// Stratified k-fold: fold number of each of `trials`, so that every class is spread over the folds as evenly as
/// possible (per-class counts and fold sizes each differ by at most one).
///
/// Each class's trials are shuffled, the classes are laid end to end, and the sequence is dealt round-robin.
pub fn stratified_folds(
    rng: &mut impl RngCore,
    y_of: &[usize],
    n_classes: usize,
    k: usize,
) -> Vec<usize> {
    let mut by_class: Vec<Vec<usize>> = vec![Vec::new(); n_classes];
    for (pos, &c) in y_of.iter().enumerate() {
        by_class[c].push(pos);
    }
    let mut fold = vec![0; y_of.len()];
    let mut dealt = 0;
    for members in &mut by_class {
        shuffle(rng, members);
        for &pos in members.iter() {
            fold[pos] = dealt % k;
            dealt += 1;
        }
    }
    fold
}

/// Plain k-fold for a continuous target (no classes to stratify by): the positions `0..n` in random order, dealt
/// round-robin, so fold sizes differ by at most one.
pub fn kfold(rng: &mut impl RngCore, n: usize, k: usize) -> Vec<usize> {
    let mut order: Vec<usize> = (0..n).collect();
    shuffle(rng, &mut order);
    let mut fold = vec![0; n];
    for (dealt, &pos) in order.iter().enumerate() {
        fold[pos] = dealt % k;
    }
    fold
}

/// Grouped k-fold: a group's trials always share a fold. With `k` or fewer groups, each group is its own fold
/// (leave-one-group-out). Otherwise groups, in random order, are sorted by size (largest first; the shuffle breaks
/// ties at random) and each goes to the fold with the fewest trials so far, which evens out fold sizes.
///
/// Returns the fold number of each position and the number of folds used.
pub fn grouped_folds(
    rng: &mut impl RngCore,
    group_of: &[usize],
    n_groups: usize,
    k: usize,
) -> (Vec<usize>, usize) {
    let mut sizes = vec![0usize; n_groups];
    for &g in group_of {
        sizes[g] += 1;
    }
    let mut present: Vec<usize> = (0..n_groups).filter(|&g| sizes[g] > 0).collect();
    let mut fold_of_group = vec![usize::MAX; n_groups];
    let folds = if present.len() <= k {
        for (f, &g) in present.iter().enumerate() {
            fold_of_group[g] = f;
        }
        present.len()
    } else {
        shuffle(rng, &mut present);
        present.sort_by_key(|&g| std::cmp::Reverse(sizes[g])); // stable: shuffled order breaks ties
        let mut load = vec![0usize; k];
        for &g in &present {
            let f = (0..k).min_by_key(|&f| load[f]).expect("k > 0");
            fold_of_group[g] = f;
            load[f] += sizes[g];
        }
        k
    };
    (group_of.iter().map(|&g| fold_of_group[g]).collect(), folds)
}

/// A random permutation of labels; within each group when `groups` is given, so that a group's label counts (and
/// any structure shared by its trials, such as slow drift) are kept under the null.
pub fn permute_labels(rng: &mut impl RngCore, y: &[usize], groups: Option<&[usize]>) -> Vec<usize> {
    let mut out = y.to_vec();
    match groups {
        None => shuffle(rng, &mut out),
        Some(g) => {
            let n_groups = g.iter().max().map_or(0, |m| m + 1);
            for group in 0..n_groups {
                let members: Vec<usize> = (0..y.len()).filter(|&i| g[i] == group).collect();
                // Fisher–Yates over the members' positions.
                for a in (1..members.len()).rev() {
                    let b = below(rng, a + 1);
                    out.swap(members[a], members[b]);
                }
            }
        }
    }
    out
}

/// Folds (of `folds`) whose training trials all belong to one group; 0 without groups. There, nested tuning cannot
/// make grouped inner folds.
pub fn single_group_folds(groups: Option<&[usize]>, fold: &[usize], folds: usize) -> usize {
    let Some(g) = groups else { return 0 };
    (0..folds)
        .filter(|&f| {
            let mut train = (0..fold.len()).filter(|&i| fold[i] != f).map(|i| g[i]);
            train.next().is_some_and(|first| train.all(|x| x == first))
        })
        .count()
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::rng::{task_rng, Stream};

    #[test]
    fn balance_keeps_the_smallest_class_size() {
        let y = [0, 0, 0, 0, 1, 1, 2, 2, 2];
        let kept = balance(&mut task_rng(1, Stream::Repeat, 0, 0), &y, 3);
        let mut counts = [0; 3];
        for &i in &kept {
            counts[y[i]] += 1;
        }
        assert_eq!(counts, [2, 2, 2]);
    }

    #[test]
    fn stratified_folds_spread_every_class() {
        let y: Vec<usize> = (0..23).map(|i| if i < 13 { 0 } else { 1 }).collect();
        let fold = stratified_folds(&mut task_rng(2, Stream::Repeat, 0, 0), &y, 2, 5);
        for c in 0..2 {
            let counts: Vec<usize> = (0..5)
                .map(|f| (0..23).filter(|&i| y[i] == c && fold[i] == f).count())
                .collect();
            let (lo, hi) = (counts.iter().min().unwrap(), counts.iter().max().unwrap());
            assert!(hi - lo <= 1, "class {c}: {counts:?}");
        }
        let sizes: Vec<usize> = (0..5)
            .map(|f| fold.iter().filter(|&&x| x == f).count())
            .collect();
        assert!(
            sizes.iter().max().unwrap() - sizes.iter().min().unwrap() <= 1,
            "{sizes:?}"
        );
    }

    #[test]
    fn kfold_sizes_differ_by_at_most_one() {
        let fold = kfold(&mut task_rng(5, Stream::Repeat, 0, 0), 23, 5);
        let sizes: Vec<usize> = (0..5)
            .map(|f| fold.iter().filter(|&&x| x == f).count())
            .collect();
        assert_eq!(sizes.iter().sum::<usize>(), 23);
        assert!(
            sizes.iter().max().unwrap() - sizes.iter().min().unwrap() <= 1,
            "{sizes:?}"
        );
    }

    #[test]
    fn groups_never_split_and_few_groups_leave_one_out() {
        let g = [0, 0, 1, 1, 2, 2, 3, 3, 3, 4];
        let (fold, k) = grouped_folds(&mut task_rng(3, Stream::Repeat, 0, 0), &g, 5, 3);
        assert_eq!(k, 3);
        for i in 0..g.len() {
            for j in 0..g.len() {
                if g[i] == g[j] {
                    assert_eq!(fold[i], fold[j]);
                }
            }
        }
        let (fold, k) = grouped_folds(&mut task_rng(3, Stream::Repeat, 0, 0), &g, 5, 5);
        assert_eq!(k, 5);
        assert_eq!(fold, g.to_vec());
    }

    #[test]
    fn permutation_within_groups_keeps_group_label_counts() {
        let y = [0, 1, 1, 0, 0, 0, 1, 1];
        let g = [0, 0, 0, 0, 1, 1, 1, 1];
        let p = permute_labels(&mut task_rng(4, Stream::Permutation, 0, 0), &y, Some(&g));
        for group in 0..2 {
            let ones = |v: &[usize]| (0..8).filter(|&i| g[i] == group && v[i] == 1).count();
            assert_eq!(ones(&y), ones(&p));
        }
        let mut sorted = p.clone();
        sorted.sort();
        assert_eq!(sorted, vec![0, 0, 0, 0, 1, 1, 1, 1]);
    }
}
