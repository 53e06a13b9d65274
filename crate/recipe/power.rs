//! Settings of the power analysis (planning the next recording): the grids of trials per class, neuron counts and
//! added noise neurons, the subsamples drawn at each grid point, the significance level, and how far to extrapolate.
//!
//! Every subsample runs the recipe's own protocol (folds, decoder, repeats, shuffles), so a subsample's protocol is
//! set by the recipe's `repeats`, `shuffles` and `shuffle_repeats`; [`REPEATS`] and [`SHUFFLES`] are the defaults a
//! face starts a power analysis from, because the decoding defaults (100 repeats, 200 shuffles) run thousands of
//! times over would take hours.

use crate::error::{Error, Result};
use serde::{Deserialize, Serialize};

/// Repeats of each subsample's protocol a face starts from.
pub const REPEATS: usize = 2;
/// Label permutations of each subsample's protocol a face starts from: with 19, the smallest p-value is
/// 1/20 = 0.05, so a subsample is significant at α = 0.05 only when every permutation scores below it.
pub const SHUFFLES: usize = 19;
/// Subsamples drawn at each grid point by default.
pub const SUBSAMPLES: usize = 50;
/// Significance level by default.
pub const ALPHA: f64 = 0.05;

/// Settings of a power analysis. A grid left out (`None`) is chosen from the data when the plan is made (and the
/// report lists the grid used).
#[derive(Debug, Clone, PartialEq, Serialize, Deserialize)]
#[serde(deny_unknown_fields)]
pub struct PowerSettings {
    /// Trials per class at which trial subsamples are drawn.
    #[serde(default, skip_serializing_if = "Option::is_none")]
    pub trials: Option<Vec<usize>>,
    /// Numbers of recorded neurons at which neuron subsets are drawn.
    #[serde(default, skip_serializing_if = "Option::is_none")]
    pub neurons: Option<Vec<usize>>,
    /// Numbers of uninformative neurons appended to the recorded population.
    #[serde(default, skip_serializing_if = "Option::is_none")]
    pub noise: Option<Vec<usize>>,
    /// Subsamples (or subsets, or noise draws) at each grid point.
    pub subsamples: usize,
    /// A subsample is significant when its shuffle p-value is at most this.
    pub alpha: f64,
    /// Trials per class up to which the fitted learning curve is extrapolated (`None`: four times the largest
    /// measured size).
    #[serde(default, skip_serializing_if = "Option::is_none")]
    pub extrapolate_to: Option<usize>,
}

impl Default for PowerSettings {
    fn default() -> PowerSettings {
        PowerSettings {
            trials: None,
            neurons: None,
            noise: None,
            subsamples: SUBSAMPLES,
            alpha: ALPHA,
            extrapolate_to: None,
        }
    }
}

impl PowerSettings {
    /// Settings that are wrong whatever the data.
    pub fn validate(&self) -> Result<()> {
        if self.subsamples == 0 {
            return Err(Error::Recipe(
                "subsamples per size must be at least 1".into(),
            ));
        }
        if !(self.alpha > 0.0 && self.alpha < 1.0) {
            return Err(Error::Recipe(format!(
                "alpha must lie between 0 and 1; got {}",
                self.alpha
            )));
        }
        for (name, grid) in [
            ("trials per class", &self.trials),
            ("neuron counts", &self.neurons),
        ] {
            if let Some(g) = grid {
                if g.is_empty() || g.contains(&0) {
                    return Err(Error::Recipe(format!(
                        "the {name} to try must be whole numbers of at least 1"
                    )));
                }
            }
        }
        if self.noise.as_ref().is_some_and(Vec::is_empty) {
            return Err(Error::Recipe(
                "give at least one number of noise neurons to add (0 for none)".into(),
            ));
        }
        if self.extrapolate_to == Some(0) {
            return Err(Error::Recipe(
                "the extrapolation must reach at least 1 trial per class".into(),
            ));
        }
        Ok(())
    }
}

/// A grid sorted ascending without repeats (the order a report and a figure use).
pub fn sorted(grid: &[usize]) -> Vec<usize> {
    let mut g = grid.to_vec();
    g.sort_unstable();
    g.dedup();
    g
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn refuses_what_no_data_can_rescue() {
        assert!(PowerSettings::default().validate().is_ok());
        let bad = [
            PowerSettings {
                subsamples: 0,
                ..PowerSettings::default()
            },
            PowerSettings {
                alpha: 1.0,
                ..PowerSettings::default()
            },
            PowerSettings {
                trials: Some(vec![0, 5]),
                ..PowerSettings::default()
            },
            PowerSettings {
                noise: Some(vec![]),
                ..PowerSettings::default()
            },
        ];
        for s in bad {
            assert!(s.validate().is_err(), "{s:?}");
        }
        assert_eq!(sorted(&[8, 2, 8, 4]), vec![2, 4, 8]);
    }
}
