//! Cluster-based permutation inference (Maris & Oostenveld, 2007) over a time axis or a train × test time grid.
//!
//! Testing every window separately at α = 0.05 would call about one window in twenty significant by chance. The
//! cluster test controls the error over the whole curve (or matrix) instead:
//! 1. each cell's threshold is the 95th percentile of its own null scores (the label shuffles at that cell);
//! 2. a cluster is a maximal set of supra-threshold cells (score strictly above threshold) joined through shared
//!    edges (neighbouring windows on a curve; left, right, up and down in a matrix), and its mass is the sum of the
//!    excess `score − threshold` over its cells;
//! 3. every shuffle is thresholded the same way and contributes its largest cluster mass (0 when it has none);
//! 4. an observed cluster's p = (b + 1)/(m + 1), b the number of the m shuffles whose largest mass is at least the
//!    cluster's (Phipson & Smyth, 2010).
//!
//! The test says that the curve holds information somewhere in a cluster; it does not localise an onset to the
//! window (Sassenhagen & Draschkow, 2019).

use super::{percentile, permutation_p};
use serde::{Deserialize, Serialize};

/// Percentile of the null that each cell's score must exceed to enter a cluster.
pub const CLUSTER_PERCENTILE: f64 = 95.0;

/// Connected supra-threshold cells of a grid.
#[derive(Debug, Clone, PartialEq)]
pub struct Cluster {
    /// Cell indices (row-major), ascending.
    pub cells: Vec<usize>,
    pub mass: f64,
}

/// A cluster with its permutation p-value.
#[derive(Debug, Clone, PartialEq, Serialize, Deserialize)]
pub struct TestedCluster {
    pub cells: Vec<usize>,
    pub mass: f64,
    pub p_value: f64,
}

/// The outcome of the cluster test on one grid.
#[derive(Debug, Clone, PartialEq)]
pub struct ClusterTest {
    /// Per cell: the null's 95th percentile.
    pub thresholds: Vec<f64>,
    /// Largest cluster mass of each shuffle, in shuffle order.
    pub null_max_mass: Vec<f64>,
    /// Observed clusters in order of their first cell.
    pub clusters: Vec<TestedCluster>,
}

/// Clusters of a `rows × cols` grid (row-major; a curve is one row) where `scores` exceed `thresholds`.
pub fn find(scores: &[f64], thresholds: &[f64], rows: usize, cols: usize) -> Vec<Cluster> {
    let n = rows * cols;
    let above: Vec<bool> = (0..n).map(|c| scores[c] > thresholds[c]).collect();
    let mut seen = vec![false; n];
    let mut found = Vec::new();
    for start in 0..n {
        if !above[start] || seen[start] {
            continue;
        }
        // Flood fill through edge neighbours.
        let mut stack = vec![start];
        seen[start] = true;
        let mut cells = Vec::new();
        while let Some(c) = stack.pop() {
            cells.push(c);
            let (r, col) = (c / cols, c % cols);
            let neighbours = [
                (col > 0).then(|| c - 1),
                (col + 1 < cols).then(|| c + 1),
                (r > 0).then(|| c - cols),
                (r + 1 < rows).then(|| c + cols),
            ];
            for nb in neighbours.into_iter().flatten() {
                if above[nb] && !seen[nb] {
                    seen[nb] = true;
                    stack.push(nb);
                }
            }
        }
        cells.sort_unstable();
        let mass = cells.iter().map(|&c| scores[c] - thresholds[c]).sum();
        found.push(Cluster { cells, mass });
    }
    found
}

/// Largest cluster mass of a grid, 0 when no cell exceeds its threshold.
pub fn max_mass(scores: &[f64], thresholds: &[f64], rows: usize, cols: usize) -> f64 {
    find(scores, thresholds, rows, cols)
        .iter()
        .map(|c| c.mass)
        .fold(0.0, f64::max)
}

/// Run the cluster test: `observed` per cell, `null` one grid per shuffle (each `rows × cols`).
pub fn test(observed: &[f64], null: &[&[f64]], rows: usize, cols: usize) -> ClusterTest {
    let n = rows * cols;
    let thresholds: Vec<f64> = (0..n)
        .map(|c| {
            let at: Vec<f64> = null.iter().map(|g| g[c]).collect();
            percentile(&at, CLUSTER_PERCENTILE)
        })
        .collect();
    let null_max_mass: Vec<f64> = null
        .iter()
        .map(|g| max_mass(g, &thresholds, rows, cols))
        .collect();
    let clusters = find(observed, &thresholds, rows, cols)
        .into_iter()
        .map(|c| TestedCluster {
            p_value: permutation_p(c.mass, &null_max_mass),
            cells: c.cells,
            mass: c.mass,
        })
        .collect();
    ClusterTest {
        thresholds,
        null_max_mass,
        clusters,
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn masses_by_hand_on_a_curve() {
        // Thresholds 0.5 everywhere. Scores above: windows 1-2 (excess 0.1 + 0.3) and window 5 (excess 0.05);
        // window 3 equals the threshold and so is not above it, which splits the clusters.
        let scores = [0.4, 0.6, 0.8, 0.5, 0.2, 0.55];
        let th = [0.5; 6];
        let c = find(&scores, &th, 1, 6);
        assert_eq!(c.len(), 2);
        assert_eq!(c[0].cells, vec![1, 2]);
        assert!((c[0].mass - 0.4).abs() < 1e-12);
        assert_eq!(c[1].cells, vec![5]);
        assert!((c[1].mass - 0.05).abs() < 1e-12);
        assert!((max_mass(&scores, &th, 1, 6) - 0.4).abs() < 1e-12);
        assert_eq!(max_mass(&[0.1; 6], &th, 1, 6), 0.0);
    }

    #[test]
    fn grid_neighbours_share_an_edge_not_a_corner() {
        // 3 × 3, above threshold 0: the centre-left pair joins vertically; the top-right corner touches the
        // centre only diagonally, so it is a cluster of its own.
        #[rustfmt::skip]
        let scores = [
            1.0, 0.0, 2.0,
            1.0, 0.0, 0.0,
            0.0, 0.0, 0.0,
        ];
        let c = find(&scores, &[0.0; 9], 3, 3);
        assert_eq!(c.len(), 2);
        assert_eq!(c[0].cells, vec![0, 3]);
        assert_eq!(c[0].mass, 2.0);
        assert_eq!(c[1].cells, vec![2]);
    }

    #[test]
    fn p_values_count_shuffles_with_a_larger_maximum() {
        // 19 shuffles: thresholds come from them; the observed cluster beats all but one shuffle's maximum.
        let mut null: Vec<Vec<f64>> = (0..19).map(|j| vec![0.3 + 0.001 * j as f64; 4]).collect();
        null[0] = vec![0.9, 0.9, 0.9, 0.9]; // one shuffle with a huge cluster
        let refs: Vec<&[f64]> = null.iter().map(Vec::as_slice).collect();
        let observed = [0.3, 0.8, 0.8, 0.3];
        let t = test(&observed, &refs, 1, 4);
        assert_eq!(t.clusters.len(), 1);
        assert_eq!(t.clusters[0].cells, vec![1, 2]);
        // b = 1 (the huge shuffle), m = 19: p = 2/20.
        assert!((t.clusters[0].p_value - 0.1).abs() < 1e-12);
    }
}
