//! Trials × features at one or more windows, with where they came from: what the analyses of generalization
//! across conditions and of continuous variables read, whether the activity came from a trial table (one window
//! without a time) or from a recording (one window per time bin).

use super::time::TimeDataset;
use super::{Dataset, SourceFile};
use crate::recipe::windows::Window;

/// Activity of every trial at every window, with the trials' groups and the provenance a report names.
#[derive(Debug, Clone)]
pub struct Features {
    /// What messages call the data (the trial table, binned table or trial table of a recording).
    pub source: String,
    pub files: Vec<SourceFile>,
    pub n_trials: usize,
    /// Features (neurons) per trial.
    pub names: Vec<String>,
    /// Windows × trials × features, row-major.
    x: Vec<f64>,
    /// The time windows of a recording; empty for a trial table.
    pub windows: Vec<Window>,
    /// Trial ids of a recording, in trial order; empty for a trial table (trials are its rows, in file order).
    pub trial_ids: Vec<String>,
    /// Group index of each trial into `group_names`, when a group column is set.
    pub groups: Option<Vec<usize>>,
    pub group_names: Vec<String>,
    pub group_column: Option<String>,
    /// Trial tables: file lines of trials left out for missing values, and columns left out for holding text.
    pub dropped_lines: Vec<u64>,
    pub skipped_columns: Vec<String>,
    /// Recordings from spikes: every spike, and those outside every window.
    pub spikes_total: u64,
    pub spikes_outside: u64,
    /// Things the user should know about the file.
    pub warnings: Vec<String>,
}

impl Features {
    /// A trial table's features: one window.
    pub fn from_table(d: &Dataset) -> Features {
        Features {
            source: d.source.clone(),
            files: vec![SourceFile {
                file: d.source.clone(),
                sha256: d.sha256.clone(),
            }],
            n_trials: d.n_trials(),
            names: d.feature_names.clone(),
            x: d.x.as_standard_layout().iter().copied().collect(),
            windows: Vec::new(),
            trial_ids: Vec::new(),
            groups: d.groups.clone(),
            group_names: d.group_names.clone(),
            group_column: d.group_column.clone(),
            dropped_lines: d.dropped_lines.clone(),
            skipped_columns: d.skipped_columns.clone(),
            spikes_total: 0,
            spikes_outside: 0,
            warnings: d.warnings.clone(),
        }
    }

    /// A recording's rates at every window (the array is moved, not copied, unless another copy of the data set
    /// shares it).
    pub fn from_time(d: TimeDataset) -> Features {
        let n_trials = d.n_trials();
        let owned = d.x.into_owned();
        let x = if owned.is_standard_layout() {
            owned.into_raw_vec_and_offset().0
        } else {
            owned.as_standard_layout().iter().copied().collect()
        };
        Features {
            source: d.source,
            files: d.files,
            n_trials,
            names: d.neurons,
            x,
            windows: d.windows,
            trial_ids: d.trial_ids,
            groups: d.groups,
            group_names: d.group_names,
            group_column: d.group_column,
            dropped_lines: Vec::new(),
            skipped_columns: Vec::new(),
            spikes_total: d.spikes_total,
            spikes_outside: d.spikes_outside,
            warnings: d.warnings,
        }
    }

    pub fn n_features(&self) -> usize {
        self.names.len()
    }

    /// Windows to decode at: one for a trial table.
    pub fn n_windows(&self) -> usize {
        self.windows.len().max(1)
    }

    /// Whether the activity is a recording over time.
    pub fn is_time(&self) -> bool {
        !self.windows.is_empty()
    }

    /// Row-major trials × features at window `w`.
    pub fn window(&self, w: usize) -> &[f64] {
        let per = self.n_trials * self.n_features();
        &self.x[w * per..(w + 1) * per]
    }

    /// Every value, all windows (for checks that read them all).
    pub fn values(&self) -> &[f64] {
        &self.x
    }

    /// Row-major rows of `trials` at window `w`, in that order.
    pub fn rows(&self, w: usize, trials: &[usize]) -> Vec<f64> {
        let p = self.n_features();
        let x = self.window(w);
        let mut out = Vec::with_capacity(trials.len() * p);
        for &i in trials {
            out.extend_from_slice(&x[i * p..(i + 1) * p]);
        }
        out
    }
}
