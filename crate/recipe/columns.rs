//! Which columns of a table mean what.

use serde::{Deserialize, Serialize};

/// Which columns mean what, and what to do with gaps.
#[derive(Debug, Clone, Default, PartialEq, Serialize, Deserialize)]
pub struct Columns {
    /// Column holding the condition to decode.
    pub label: String,
    /// Optional column naming the recording session, block or day; folds never split a group.
    #[serde(default)]
    pub group: Option<String>,
    /// Feature columns; `None` means every other mostly-numeric column.
    #[serde(default)]
    pub features: Option<Vec<String>>,
    /// Columns never used as features by default (trial numbers, timestamps, other labels).
    #[serde(default, skip_serializing_if = "Vec::is_empty")]
    pub ignore: Vec<String>,
    /// Leave out trials with a missing cell instead of stopping.
    #[serde(default)]
    pub drop_missing: bool,
    /// Column naming the recording session when each neuron was recorded in one session only: trials are then
    /// combined across sessions into pseudo-trials. Each neuron's cells are filled in its own session's rows and
    /// empty in the others.
    #[serde(default, skip_serializing_if = "Option::is_none")]
    pub pseudo: Option<String>,
}
