//! Classes per trial and a second column's level per trial: what generalization across conditions splits and
//! decodes.

use super::features::Features;

/// Activity, the label to decode, and the level of the column that says where a trial may train or test.
#[derive(Debug, Clone)]
pub struct AcrossData {
    pub features: Features,
    /// Class index of each trial into `classes` (sorted as every analysis sorts labels).
    pub y: Vec<usize>,
    pub classes: Vec<String>,
    pub label_column: String,
    /// Level index of each trial into `level_names`.
    pub levels: Vec<usize>,
    pub level_names: Vec<String>,
    pub across_column: String,
}

impl AcrossData {
    /// Trials of each (level, class) cell, counted: `[level][class]`.
    pub fn cell_counts(&self) -> Vec<Vec<usize>> {
        let mut counts = vec![vec![0; self.classes.len()]; self.level_names.len()];
        for (&l, &c) in self.levels.iter().zip(&self.y) {
            counts[l][c] += 1;
        }
        counts
    }

    /// Trials per class, in class order.
    pub fn class_counts(&self) -> Vec<usize> {
        let mut counts = vec![0; self.classes.len()];
        for &c in &self.y {
            counts[c] += 1;
        }
        counts
    }
}
