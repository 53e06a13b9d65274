//! The area under the ROC curve of a two-class decoder, from its decision values.
//!
//! The AUC is the probability that a trial of the second class gets a larger decision value than a trial of the
//! first (ties count one half): the Mann–Whitney U statistic divided by n₁·n₀ (Hanley & McNeil, 1982), which is
//! also the trapezoidal area under the empirical ROC curve, as scikit-learn's `roc_auc_score` computes it.

/// AUC of `scores` (larger favours the positive class) for trials marked `positive`; `None` when either class is
/// absent. Ranks are averaged over ties, summed in the order of the sorted scores.
pub fn auc(scores: &[f64], positive: &[bool]) -> Option<f64> {
    let n1 = positive.iter().filter(|&&b| b).count();
    let n0 = positive.len() - n1;
    if n1 == 0 || n0 == 0 {
        return None;
    }
    let mut order: Vec<usize> = (0..scores.len()).collect();
    order.sort_by(|&a, &b| scores[a].total_cmp(&scores[b]).then(a.cmp(&b)));
    let mut rank_sum = 0.0;
    let mut start = 0;
    while start < order.len() {
        let mut end = start + 1;
        while end < order.len() && scores[order[end]] == scores[order[start]] {
            end += 1;
        }
        // Ranks start + 1 ..= end share their mean.
        let mean_rank = (start + 1 + end) as f64 / 2.0;
        rank_sum += mean_rank * order[start..end].iter().filter(|&&i| positive[i]).count() as f64;
        start = end;
    }
    let n1f = n1 as f64;
    Some((rank_sum - n1f * (n1f + 1.0) / 2.0) / (n1f * n0 as f64))
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn auc_counts_pairs_and_halves_ties() {
        // Positives 0.8, 0.4; negatives 0.1, 0.4, 0.9. Pairs won by the positive: 0.8 beats 0.1 and 0.4 (2), 0.4
        // beats 0.1 (1) and ties 0.4 (½): 3.5 of 6 (scikit-learn 1.9.1 roc_auc_score gives 0.5833333333333334).
        let s = [0.8, 0.1, 0.4, 0.4, 0.9];
        let pos = [true, false, true, false, false];
        assert!((auc(&s, &pos).unwrap() - 3.5 / 6.0).abs() < 1e-12);
        // Perfect separation and its reverse.
        assert_eq!(auc(&[1.0, 2.0], &[false, true]), Some(1.0));
        assert_eq!(auc(&[2.0, 1.0], &[false, true]), Some(0.0));
        assert_eq!(auc(&[1.0, 2.0], &[true, true]), None);
    }
}
