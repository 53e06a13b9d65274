//! Settings of a time-resolved analysis: where the windows come from, and the time-course statistics.

use super::units::UnitFilter;
use serde::{Deserialize, Serialize};

/// Settings of a time-resolved analysis. Times are in seconds, relative to each trial's alignment event.
#[derive(Debug, Clone, PartialEq, Serialize, Deserialize)]
#[serde(deny_unknown_fields)]
pub struct TimeSettings {
    pub input: TimeInput,
    /// Also train at every window and test at every other (temporal generalization).
    #[serde(default)]
    pub generalize: bool,
    /// Clusters with a permutation p below this are significant.
    pub alpha: f64,
    /// The null of the temporal generalization matrix; `None` means the default, [`GeneralizationNull::TrainingLabels`]
    /// (an analysis that generalizes writes the one it used).
    #[serde(default, skip_serializing_if = "Option::is_none")]
    pub generalization_null: Option<GeneralizationNull>,
}

/// How the label permutations of the temporal generalization matrix are made.
#[derive(Debug, Clone, Copy, PartialEq, Eq, Serialize, Deserialize)]
#[serde(rename_all = "kebab-case")]
pub enum GeneralizationNull {
    /// Permute only the training trials' labels (once per shuffle, for all its repeats) and keep the test trials'
    /// labels: a cell is significant only when what was learnt at its training window generalizes (the default).
    TrainingLabels,
    /// Permute every trial's label, as for the decoding curve (information is removed at every window at once).
    AllLabels,
}

impl GeneralizationNull {
    /// The spelling used in recipes and on the command line.
    pub fn name(self) -> &'static str {
        match self {
            GeneralizationNull::TrainingLabels => "training-labels",
            GeneralizationNull::AllLabels => "all-labels",
        }
    }

    pub fn from_name(name: &str) -> Option<GeneralizationNull> {
        [
            GeneralizationNull::TrainingLabels,
            GeneralizationNull::AllLabels,
        ]
        .into_iter()
        .find(|g| g.name() == name)
    }
}

/// Where the windows come from.
#[derive(Debug, Clone, PartialEq, Serialize, Deserialize)]
#[serde(tag = "kind", rename_all = "snake_case", deny_unknown_fields)]
pub enum TimeInput {
    /// One row per trial × bin: the trial id column and the bin time column (s); every bin is a window.
    Binned { trial: String, time: String },
    /// Spike events (trial, neuron, time columns) and a trial table (the trial column again, label, group, and an
    /// optional alignment column holding each trial's alignment time, for events given in absolute time).
    Events {
        trial: String,
        neuron: String,
        time: String,
        #[serde(default)]
        align: Option<String>,
        /// Window width, s.
        width: f64,
        /// Step between window starts, s.
        step: f64,
        /// Start of the first window, s.
        start: f64,
        /// No window extends past this, s.
        end: f64,
    },
    /// An NWB file: units' spike times and the trials table; `align` names the trials column holding each
    /// trial's alignment time (default `start_time`).
    Nwb {
        #[serde(default)]
        align: Option<String>,
        width: f64,
        step: f64,
        start: f64,
        end: f64,
        /// Keep only the units that pass all of these (none: every unit).
        #[serde(default, skip_serializing_if = "Vec::is_empty")]
        units: Vec<UnitFilter>,
    },
}

impl TimeSettings {
    /// The generalization matrix's null, with the default resolved.
    pub fn generalization_null(&self) -> GeneralizationNull {
        self.generalization_null
            .unwrap_or(GeneralizationNull::TrainingLabels)
    }

    /// Defaults for spike events: 0.1 s windows stepped by 0.05 s over the given span, events columns named
    /// `trial`, `neuron` and `time`.
    pub fn events(start: f64, end: f64) -> TimeSettings {
        TimeSettings {
            input: TimeInput::Events {
                trial: "trial".into(),
                neuron: "neuron".into(),
                time: "time".into(),
                align: None,
                width: 0.1,
                step: 0.05,
                start,
                end,
            },
            generalize: false,
            alpha: 0.05,
            generalization_null: None,
        }
    }

    /// Defaults for an NWB file: 0.1 s windows stepped by 0.05 s over the given span, aligned to `start_time`.
    pub fn nwb(start: f64, end: f64) -> TimeSettings {
        TimeSettings {
            input: TimeInput::Nwb {
                align: None,
                width: 0.1,
                step: 0.05,
                start,
                end,
                units: Vec::new(),
            },
            generalize: false,
            alpha: 0.05,
            generalization_null: None,
        }
    }

    /// Defaults for a binned table with the given trial and time columns.
    pub fn binned(trial: &str, time: &str) -> TimeSettings {
        TimeSettings {
            input: TimeInput::Binned {
                trial: trial.into(),
                time: time.into(),
            },
            generalize: false,
            alpha: 0.05,
            generalization_null: None,
        }
    }
}
