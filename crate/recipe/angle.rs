//! The unit of the angles a circular variable is given in.

use serde::{Deserialize, Serialize};

/// Degrees or radians: how the label column's angles are written, and how errors are reported.
#[derive(Debug, Clone, Copy, PartialEq, Eq, Serialize, Deserialize)]
#[serde(rename_all = "snake_case")]
pub enum AngleUnit {
    Degrees,
    Radians,
}

impl AngleUnit {
    pub fn parse(s: &str) -> Option<AngleUnit> {
        match s.trim().to_ascii_lowercase().as_str() {
            "degrees" | "deg" => Some(AngleUnit::Degrees),
            "radians" | "rad" => Some(AngleUnit::Radians),
            _ => None,
        }
    }

    pub fn name(self) -> &'static str {
        match self {
            AngleUnit::Degrees => "degrees",
            AngleUnit::Radians => "radians",
        }
    }

    /// Radians in one unit (π/180 for degrees).
    pub fn to_radians(self) -> f64 {
        match self {
            AngleUnit::Degrees => std::f64::consts::PI / 180.0,
            AngleUnit::Radians => 1.0,
        }
    }

    /// One full turn in this unit.
    pub fn turn(self) -> f64 {
        match self {
            AngleUnit::Degrees => 360.0,
            AngleUnit::Radians => 2.0 * std::f64::consts::PI,
        }
    }
}
