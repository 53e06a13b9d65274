//! Generalization across conditions: the column whose levels say where the decoder is trained and where it is
//! tested, and which levels go where.

use crate::error::{Error, Result};
use serde::{Deserialize, Serialize};

/// Train the decoder on trials at some levels of a second column and test it on trials at others.
#[derive(Debug, Clone, PartialEq, Serialize, Deserialize)]
#[serde(deny_unknown_fields)]
pub struct Across {
    /// The column whose levels split the trials (a context, a stimulus set, a task rule).
    pub column: String,
    /// The assignments of its levels to training and testing, each analysed on its own; empty means every
    /// balanced dichotomy of the levels (each half trained on once and tested on once).
    #[serde(default, skip_serializing_if = "Vec::is_empty")]
    pub assignments: Vec<Assignment>,
}

/// Levels whose trials train the decoder, and levels whose trials test it.
#[derive(Debug, Clone, PartialEq, Serialize, Deserialize)]
#[serde(deny_unknown_fields)]
pub struct Assignment {
    pub train: Vec<String>,
    pub test: Vec<String>,
}

impl Across {
    /// Settings that are wrong whatever the data.
    pub fn validate(&self) -> Result<()> {
        if self.column.trim().is_empty() {
            return Err(Error::Recipe(
                "name the column whose levels split training from testing".into(),
            ));
        }
        for a in &self.assignments {
            if a.train.is_empty() || a.test.is_empty() {
                return Err(Error::Recipe(format!(
                    "every assignment needs training and testing levels of '{}'; one has {} training and {} \
                     testing levels",
                    self.column,
                    a.train.len(),
                    a.test.len()
                )));
            }
            for (i, level) in a.train.iter().chain(&a.test).enumerate() {
                let earlier = a.train.iter().chain(&a.test).take(i);
                if earlier.into_iter().any(|l| l == level) {
                    let role = if a.train.contains(level) && a.test.contains(level) {
                        "both a training and a testing level"
                    } else {
                        "listed twice"
                    };
                    return Err(Error::Recipe(format!(
                        "level '{level}' of '{}' is {role}; training and testing levels must be distinct",
                        self.column
                    )));
                }
            }
        }
        Ok(())
    }
}
