//! A continuous (or circular) variable per trial, with the activity it is decoded from.

use super::features::Features;

/// Activity and the number to decode from it on every trial (running speed, heading...).
#[derive(Debug, Clone)]
pub struct TargetData {
    pub features: Features,
    /// The value of each trial, as the file gives it (an angle in the recipe's unit).
    pub values: Vec<f64>,
    /// The column the values come from.
    pub column: String,
}
