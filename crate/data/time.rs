//! Time-resolved recordings in memory: trials × windows × neurons with the trials' labels and groups.

use super::trials::Trials;
use super::SourceFile;
use crate::recipe::windows::Window;
use ndarray::ArcArray;
use ndarray::Ix3;

/// Trials × windows × neurons with the trials' labels and groups.
#[derive(Debug, Clone)]
pub struct TimeDataset {
    /// What messages call the data (the binned table, or the trial table).
    pub source: String,
    pub files: Vec<SourceFile>,
    /// Windows × trials × neurons, rates as given (binned) or in Hz (events).
    /// Shared, as [`crate::data::Dataset::x`]: a copy of the data set shares the matrix.
    pub x: ArcArray<f64, Ix3>,
    pub windows: Vec<Window>,
    /// Trial ids in the order of `y`.
    pub trial_ids: Vec<String>,
    pub y: Vec<usize>,
    pub classes: Vec<String>,
    pub groups: Option<Vec<usize>>,
    pub group_names: Vec<String>,
    pub neurons: Vec<String>,
    pub label_column: String,
    pub group_column: Option<String>,
    /// Events only: spikes outside every window (before the first or after the last), which count nowhere.
    pub spikes_outside: u64,
    pub spikes_total: u64,
    pub warnings: Vec<String>,
}

impl TimeDataset {
    pub fn n_trials(&self) -> usize {
        self.y.len()
    }

    pub fn n_neurons(&self) -> usize {
        self.neurons.len()
    }

    /// The trials' labels and groups, as resampling sees them.
    pub fn trials(&self) -> Trials<'_> {
        Trials {
            source: &self.source,
            y: &self.y,
            classes: &self.classes,
            groups: self.groups.as_deref(),
            group_names: &self.group_names,
            group_column: self.group_column.as_deref(),
            pseudo: false,
        }
    }

    pub fn class_counts(&self) -> Vec<usize> {
        self.trials().class_counts()
    }

    /// Row-major trials × neurons matrix of window `w`.
    pub fn window(&self, w: usize) -> &[f64] {
        let per = self.n_trials() * self.n_neurons();
        &self.x.as_slice().expect("standard layout")[w * per..(w + 1) * per]
    }
}
