//! The in-memory data every analysis works on: trials × features ([`Dataset`]), trials × windows × neurons
//! ([`time::TimeDataset`]), their labels and groups ([`trials::Trials`]), and how labels are ordered
//! ([`labels`]); for the analyses that read one or many windows alike, activity with its provenance
//! ([`features::Features`]) with a number per trial ([`target::TargetData`]) or a label and a second column's level
//! per trial ([`across::AcrossData`]). Readers of files (`input/`) produce these; nothing here reads a file.

pub mod across;
pub mod features;
pub mod labels;
pub mod target;
pub mod time;
pub mod trials;

use ndarray::ArcArray2;
use serde::{Deserialize, Serialize};
use trials::Trials;

/// Trials × features with their labels, ready for the protocol.
#[derive(Debug, Clone)]
pub struct Dataset {
    pub source: String,
    /// SHA-256 of the file's bytes as read, in lower-case hex; goes into every report.
    pub sha256: String,
    pub delimiter: String,
    pub decimal_comma: bool,
    /// Trials × features, shared: copies of a dataset (a plan made again for new settings, the page's prepare and
    /// finish) share one matrix instead of copying it, which a page with a large file cannot afford.
    pub x: ArcArray2<f64>,
    /// Class index of each trial into `classes`.
    pub y: Vec<usize>,
    pub classes: Vec<String>,
    /// Group index of each trial into `group_names`, when a group column is set.
    pub groups: Option<Vec<usize>>,
    pub group_names: Vec<String>,
    pub feature_names: Vec<String>,
    pub label_column: String,
    pub group_column: Option<String>,
    /// File lines of the trials left out for missing values.
    pub dropped_lines: Vec<u64>,
    /// Columns left out of the features because they hold text.
    pub skipped_columns: Vec<String>,
    /// Things the user should know about the file that do not stop the analysis.
    pub warnings: Vec<String>,
    /// Pseudo-populations: the session (index into `group_names`) each feature was recorded in.
    pub pseudo: Option<Vec<usize>>,
}

impl Dataset {
    pub fn n_trials(&self) -> usize {
        self.y.len()
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
            pseudo: self.pseudo.is_some(),
        }
    }

    pub fn n_features(&self) -> usize {
        self.x.ncols()
    }

    /// The same trials with only the feature columns `cols` (in that order).
    pub fn with_features(&self, cols: &[usize]) -> Dataset {
        Dataset {
            x: self.x.select(ndarray::Axis(1), cols).into_shared(),
            feature_names: cols
                .iter()
                .map(|&c| self.feature_names[c].clone())
                .collect(),
            warnings: Vec::new(),
            pseudo: self
                .pseudo
                .as_ref()
                .map(|s| cols.iter().map(|&c| s[c]).collect()),
            ..self.clone()
        }
    }

    /// Only the trials `rows` (indices, in that order), with their labels and groups; the classes stay as they are.
    pub fn with_trials(&self, rows: &[usize]) -> Dataset {
        Dataset {
            x: self.x.select(ndarray::Axis(0), rows).into_shared(),
            y: rows.iter().map(|&i| self.y[i]).collect(),
            groups: self
                .groups
                .as_ref()
                .map(|g| rows.iter().map(|&i| g[i]).collect()),
            warnings: Vec::new(),
            ..self.clone()
        }
    }

    /// Only the trials of `keep` (class indices, ascending), relabelled 0, 1, … in that order; groups no trial
    /// is left in are dropped (and the others renumbered, with the sessions of a pseudo-population's features).
    pub fn with_classes(&self, keep: &[usize]) -> Dataset {
        let rows: Vec<usize> = (0..self.n_trials())
            .filter(|&i| keep.contains(&self.y[i]))
            .collect();
        let new_class = |c: usize| keep.iter().position(|&k| k == c).expect("a kept class");
        let (groups, group_names, pseudo) = match &self.groups {
            Some(g) => {
                let mut present: Vec<usize> = rows.iter().map(|&i| g[i]).collect();
                present.sort_unstable();
                present.dedup();
                let renumber = |old: usize| present.binary_search(&old).ok();
                (
                    Some(
                        rows.iter()
                            .map(|&i| renumber(g[i]).expect("present"))
                            .collect(),
                    ),
                    present
                        .iter()
                        .map(|&o| self.group_names[o].clone())
                        .collect(),
                    // A pseudo-population's design holds every condition in every session, so no session is
                    // dropped.
                    self.pseudo.as_ref().map(|s| {
                        s.iter()
                            .map(|&o| renumber(o).expect("every session holds every condition"))
                            .collect()
                    }),
                )
            }
            None => (None, self.group_names.clone(), self.pseudo.clone()),
        };
        Dataset {
            x: self.x.select(ndarray::Axis(0), &rows).into_shared(),
            y: rows.iter().map(|&i| new_class(self.y[i])).collect(),
            classes: keep.iter().map(|&c| self.classes[c].clone()).collect(),
            groups,
            group_names,
            pseudo,
            warnings: Vec::new(),
            ..self.clone()
        }
    }

    /// Trials per class, in class order.
    pub fn class_counts(&self) -> Vec<usize> {
        self.trials().class_counts()
    }
}

/// One input file as a report names it.
#[derive(Debug, Clone, PartialEq, Serialize, Deserialize)]
pub struct SourceFile {
    pub file: String,
    pub sha256: String,
}
