//! False-discovery-rate control across many tests (Benjamini & Hochberg, 1995).
//!
//! Ranking every neuron (or every pair of conditions) by its own permutation p-value is many tests at once: at
//! p < 0.05, about one null neuron in twenty would be called informative. The Benjamini–Hochberg step-up procedure
//! keeps the expected fraction of false discoveries among those declared at most q. It holds for independent
//! tests and for positively dependent ones (Benjamini & Yekutieli, 2001), which is the case here: every neuron is
//! tested with the same label permutations.

/// Benjamini–Hochberg adjusted p-values ("q-values"), in the order given: `q_(i) = min over j ≥ i of m·p_(j)/j`,
/// capped at 1, with p sorted ascending (ties in input order). A test is a discovery at level q when its adjusted
/// value is at most q.
pub fn benjamini_hochberg(p: &[f64]) -> Vec<f64> {
    let m = p.len();
    let mut order: Vec<usize> = (0..m).collect();
    order.sort_by(|&a, &b| p[a].total_cmp(&p[b]).then(a.cmp(&b)));
    let mut adjusted = vec![0.0; m];
    let mut running = 1.0f64;
    for rank in (0..m).rev() {
        let i = order[rank];
        running = running.min(p[i] * m as f64 / (rank + 1) as f64);
        adjusted[i] = running;
    }
    adjusted
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn adjusted_values_match_the_step_up_by_hand() {
        // p = 0.01, 0.04, 0.03, 0.20 (m = 4). Sorted 0.01, 0.03, 0.04, 0.20 → m·p/rank = 0.04, 0.06, 0.0533, 0.20;
        // running minimum from the top: 0.20, 0.0533, 0.0533, 0.04 (scipy 1.17.1
        // stats.false_discovery_control([0.01, 0.04, 0.03, 0.20], method='bh') gives the same).
        let q = benjamini_hochberg(&[0.01, 0.04, 0.03, 0.20]);
        let want = [0.04, 0.16 / 3.0, 0.16 / 3.0, 0.20];
        for (a, b) in q.iter().zip(want) {
            assert!((a - b).abs() < 1e-12, "{q:?}");
        }
        assert_eq!(benjamini_hochberg(&[0.9, 0.95]), vec![0.95, 0.95]);
        assert!(benjamini_hochberg(&[]).is_empty());
    }
}
