//! The recipe: everything that decides the numbers, in one serialisable value.
//!
//! The CLI writes it next to its results and reads it back with `--recipe`; the page saves and loads the same file.
//! Two runs with equal recipes on files with equal SHA-256 give identical results on every face.
//!
//! The recipe is plain data at the bottom of the layers: every layer may read it, and it imports nothing but the
//! error type. What a setting *means* lives with the layer that acts on it (a decoder's name here, its fitting in
//! `decoders/`; a unit filter's rule here, its application to a recording in `input/`).

pub mod across;
pub mod angle;
pub mod classifier;
pub mod columns;
pub mod limits;
pub mod power;
pub mod time;
pub mod units;
pub mod windows;

pub use across::{Across, Assignment};
pub use angle::AngleUnit;
pub use classifier::{Classifier, Setting};
pub use columns::Columns;
pub use power::PowerSettings;
pub use time::{GeneralizationNull, TimeInput, TimeSettings};
pub use units::UnitFilter;

use crate::error::{Error, Result};
use serde::{Deserialize, Deserializer, Serialize, Serializer};

/// Marks a file as a popdecode recipe and its version.
pub const RECIPE_FORMAT: &str = "popdecode-recipe/1";

/// Number of cross-validation folds, or leave-one-out.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub enum Folds {
    K(usize),
    LeaveOneOut,
}

impl Folds {
    pub fn parse(s: &str) -> Result<Folds> {
        let t = s.trim();
        if t.eq_ignore_ascii_case("loo") {
            return Ok(Folds::LeaveOneOut);
        }
        match t.parse::<usize>() {
            Ok(k) if k >= 2 => Ok(Folds::K(k)),
            _ => Err(Error::Recipe(format!(
                "folds must be a whole number of at least 2, or 'loo'; got '{s}'"
            ))),
        }
    }
}

impl std::fmt::Display for Folds {
    fn fmt(&self, f: &mut std::fmt::Formatter<'_>) -> std::fmt::Result {
        match self {
            Folds::K(k) => write!(f, "{k}"),
            Folds::LeaveOneOut => f.write_str("loo"),
        }
    }
}

impl Serialize for Folds {
    fn serialize<S: Serializer>(&self, s: S) -> std::result::Result<S::Ok, S::Error> {
        match self {
            Folds::K(k) => s.serialize_u64(*k as u64),
            Folds::LeaveOneOut => s.serialize_str("loo"),
        }
    }
}

impl<'de> Deserialize<'de> for Folds {
    fn deserialize<D: Deserializer<'de>>(d: D) -> std::result::Result<Folds, D::Error> {
        let v = serde_json::Value::deserialize(d)?;
        let text = match &v {
            serde_json::Value::Number(n) => n.to_string(),
            serde_json::Value::String(s) => s.clone(),
            _ => {
                return Err(serde::de::Error::custom(
                    "folds must be a number or \"loo\"",
                ))
            }
        };
        Folds::parse(&text).map_err(serde::de::Error::custom)
    }
}

/// Every setting of a decoding analysis.
#[derive(Debug, Clone, PartialEq, Serialize, Deserialize)]
#[serde(deny_unknown_fields)]
pub struct Recipe {
    pub format: String,
    pub columns: Columns,
    pub classifier: Classifier,
    /// Regularisation constant of the linear SVM and logistic regression (larger = less regularised).
    pub c: f64,
    /// Choose C inside each training fold by nested cross-validation instead of using `c`.
    #[serde(default, skip_serializing_if = "std::ops::Not::not")]
    pub tune: bool,
    pub folds: Folds,
    /// Independent resamplings (balancing + fold assignment) of the observed labels.
    pub repeats: usize,
    /// Undersample every class to the smallest in each repeat.
    pub balance: bool,
    /// Label permutations for the shuffle control (0 = none).
    pub shuffles: usize,
    /// Repeats run for each permutation; `None` = min(repeats, 10).
    #[serde(default)]
    pub shuffle_repeats: Option<usize>,
    pub seed: u64,
    /// Time-resolved analyses only: where the windows come from, and the time-course statistics.
    #[serde(default, skip_serializing_if = "Option::is_none")]
    pub time: Option<TimeSettings>,
    /// Trial tables with more than two classes: also decode every pair of classes on its own.
    #[serde(default, skip_serializing_if = "std::ops::Not::not")]
    pub pairwise: bool,
    /// Generalization across conditions: train at some levels of a second column, test at others.
    #[serde(default, skip_serializing_if = "Option::is_none")]
    pub across: Option<Across>,
    /// For `circular-ridge`: the unit the label column's angles are written in.
    #[serde(default, skip_serializing_if = "Option::is_none")]
    pub angle_unit: Option<AngleUnit>,
    /// Power analyses only: the grids, subsamples and significance level of planning the next recording.
    #[serde(default, skip_serializing_if = "Option::is_none")]
    pub power: Option<PowerSettings>,
}

impl Recipe {
    /// The defaults, for a named label column.
    pub fn new(label: &str) -> Recipe {
        Recipe {
            format: RECIPE_FORMAT.to_string(),
            columns: Columns {
                label: label.to_string(),
                ..Columns::default()
            },
            classifier: Classifier::LinearSvm,
            c: 1.0,
            tune: false,
            folds: Folds::K(5),
            repeats: 100,
            balance: true,
            shuffles: 200,
            shuffle_repeats: None,
            seed: 1,
            time: None,
            pairwise: false,
            across: None,
            angle_unit: None,
            power: None,
        }
    }

    /// Read a recipe file's text.
    pub fn from_json(source: &str, text: &str) -> Result<Recipe> {
        let r: Recipe = serde_json::from_str(text).map_err(|e| {
            // Where, first, as every message about a file says it ("file, line 3, column 9: …").
            let at = format!(" at line {} column {}", e.line(), e.column());
            let what = e.to_string();
            Error::Recipe(match what.strip_suffix(&at) {
                Some(what) if e.line() > 0 => format!(
                    "{source}, line {}, column {}: not a valid recipe: {what}",
                    e.line(),
                    e.column()
                ),
                _ => format!("{source}: not a valid recipe: {what}"),
            })
        })?;
        if r.format != RECIPE_FORMAT {
            return Err(Error::Recipe(format!(
                "{source}: recipe format '{}' is not '{RECIPE_FORMAT}', the one this version reads",
                r.format
            )));
        }
        r.validate()?;
        Ok(r)
    }

    pub fn to_json(&self) -> String {
        serde_json::to_string_pretty(self).expect("a recipe always serialises")
    }

    /// Repeats per shuffle after applying the default.
    pub fn shuffle_repeats(&self) -> usize {
        self.shuffle_repeats.unwrap_or(self.repeats.min(10))
    }

    /// Settings that are wrong whatever the data.
    pub fn validate(&self) -> Result<()> {
        if self.repeats == 0 {
            return Err(Error::Recipe("repeats must be at least 1".into()));
        }
        limits::check_count("repeats", self.repeats)?;
        limits::check_count("shuffles", self.shuffles)?;
        limits::check_c(self.c)?;
        if self.shuffles > 0 {
            if self.shuffle_repeats() == 0 {
                return Err(Error::Recipe(
                    "repeats per shuffle must be at least 1".into(),
                ));
            }
            limits::check_count("repeats per shuffle", self.shuffle_repeats())?;
            // A shuffle's score is a mean over its repeats, compared with the observed mean over `repeats`: a mean
            // over more repeats varies less, so such a null would be too narrow and its p-values too small
            // (measured on invented data without information: 10 % of p ≤ 0.05 at 1 repeat against 10 per
            // shuffle). Fewer per shuffle is allowed: wider, so conservative.
            if self.shuffle_repeats() > self.repeats {
                return Err(Error::Recipe(format!(
                    "repeats per shuffle ({}) must be at most the repeats ({}): a shuffle averaging more repeats \
                     than the observed score would vary less than it, and its p-value would be too small",
                    self.shuffle_repeats(),
                    self.repeats
                )));
            }
        }
        if self.columns.label.trim().is_empty() {
            return Err(Error::Recipe("name the label column".into()));
        }
        self.validate_targets()?;
        if self.tune && self.classifier.grid().is_none() {
            return Err(Error::Recipe(format!(
                "{} has no setting to choose; tuning applies to linear-svm and logistic",
                self.classifier.name()
            )));
        }
        if self.pairwise && self.time.is_some() {
            return Err(Error::Recipe(
                "pairwise decoding is for trial tables; a time course cannot run it yet".into(),
            ));
        }
        if let Some(p) = &self.power {
            p.validate()?;
        }
        if let Some(t) = &self.time {
            if self.columns.pseudo.is_some() {
                return Err(Error::Recipe(
                    "pseudo-populations are built from trial tables; a time course cannot use them yet".into(),
                ));
            }
            if !(t.alpha > 0.0 && t.alpha < 1.0) {
                return Err(Error::Recipe(format!(
                    "alpha must lie between 0 and 1; got {}",
                    t.alpha
                )));
            }
            if let TimeInput::Events {
                width,
                step,
                start,
                end,
                ..
            }
            | TimeInput::Nwb {
                width,
                step,
                start,
                end,
                ..
            } = t.input
            {
                let count = windows::sliding(start, end, width, step)?.len();
                limits::check_windows(count as f64, t.generalize)?;
            }
            if let TimeInput::Nwb { units, .. } = &t.input {
                units.iter().try_for_each(UnitFilter::validate)?;
            }
        }
        Ok(())
    }

    /// What the decoded variable allows: a regressor with neither pseudo-populations nor generalization across
    /// conditions, an angle unit exactly when the decoder reads angles.
    fn validate_targets(&self) -> Result<()> {
        let name = self.classifier.name();
        if self.classifier.is_regression() {
            if self.tune {
                return Err(Error::Recipe(format!(
                    "{name} always chooses its penalty inside each training fold; there is nothing more to tune"
                )));
            }
            if self.columns.pseudo.is_some() {
                return Err(Error::Recipe(format!(
                    "{name} decodes a continuous variable from a trial table of simultaneously recorded neurons; \
                     pseudo-populations are built for classes only"
                )));
            }
            if self.across.is_some() {
                return Err(Error::Recipe(format!(
                    "generalization across conditions decodes classes; {name} decodes a continuous variable, so \
                     choose a decoder of classes for it"
                )));
            }
        }
        match (self.classifier, self.angle_unit) {
            (Classifier::CircularRidge, None) => Err(Error::Recipe(
                "circular-ridge reads angles: give their unit (degrees or radians)".into(),
            )),
            (c, Some(_)) if c != Classifier::CircularRidge => Err(Error::Recipe(format!(
                "an angle unit applies to circular-ridge only, not to {}",
                c.name()
            ))),
            _ => Ok(()),
        }?;
        if let Some(a) = &self.across {
            a.validate()?;
            if self.columns.pseudo.is_some() {
                return Err(Error::Recipe(
                    "generalization across conditions needs simultaneously recorded neurons; it does not combine \
                     separate sessions into pseudo-trials"
                        .into(),
                ));
            }
            if a.column == self.columns.label {
                return Err(Error::Recipe(format!(
                    "'{}' is both the label and the column split into training and testing levels; choose \
                     different columns",
                    a.column
                )));
            }
        }
        Ok(())
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    /// A recipe file's mistake is placed as every file's is: "file, line, column: …" first.
    #[test]
    fn a_bad_recipe_file_names_the_line_and_column_first() {
        let e = Recipe::from_json("r.json", "{\n  \"repeats\": \"ten\"\n}")
            .unwrap_err()
            .to_string();
        assert!(
            e.starts_with("r.json, line 2, column 18: not a valid recipe: invalid type"),
            "{e}"
        );
        assert!(!e.contains(" at line "), "{e}");
    }

    /// A shuffle may average fewer repeats than the observed score (conservative), never more (too narrow).
    #[test]
    fn repeats_per_shuffle_are_at_most_the_repeats() {
        let mut r = Recipe::new("odour");
        r.repeats = 2;
        r.shuffles = 10;
        r.shuffle_repeats = Some(3);
        let e = r.validate().unwrap_err().to_string();
        assert!(
            e.contains("repeats per shuffle (3) must be at most the repeats (2)"),
            "{e}"
        );
        r.shuffle_repeats = Some(2);
        assert!(r.validate().is_ok());
        r.shuffle_repeats = None;
        r.repeats = 50;
        assert_eq!(r.shuffle_repeats(), 10);
        assert!(r.validate().is_ok());
        // Without shuffles the setting is not used.
        r.shuffles = 0;
        r.shuffle_repeats = Some(99);
        assert!(r.validate().is_ok());
    }

    #[test]
    fn round_trips_through_json() {
        let mut r = Recipe::new("odour");
        r.folds = Folds::LeaveOneOut;
        r.columns.group = Some("session".into());
        let back = Recipe::from_json("r.json", &r.to_json()).unwrap();
        assert_eq!(back, r);
    }

    #[test]
    fn new_fields_round_trip_and_old_recipes_still_load() {
        let mut r = Recipe::new("heading");
        r.classifier = Classifier::CircularRidge;
        r.angle_unit = Some(AngleUnit::Degrees);
        assert_eq!(Recipe::from_json("r.json", &r.to_json()).unwrap(), r);
        let mut a = Recipe::new("choice");
        a.across = Some(Across {
            column: "context".into(),
            assignments: vec![Assignment {
                train: vec!["A".into()],
                test: vec!["B".into()],
            }],
        });
        assert_eq!(Recipe::from_json("r.json", &a.to_json()).unwrap(), a);
        // A recipe written before these fields existed has neither key.
        let old = Recipe::new("odour").to_json();
        assert!(!old.contains("across") && !old.contains("angle_unit"));
        assert_eq!(Recipe::from_json("r.json", &old).unwrap().across, None);
    }

    #[test]
    fn regressors_and_angle_units_go_together() {
        let mut r = Recipe::new("heading");
        r.classifier = Classifier::CircularRidge;
        assert!(r
            .validate()
            .unwrap_err()
            .to_string()
            .contains("degrees or radians"));
        r.classifier = Classifier::LinearSvm;
        r.angle_unit = Some(AngleUnit::Radians);
        assert!(r
            .validate()
            .unwrap_err()
            .to_string()
            .contains("circular-ridge only"));
        r.angle_unit = None;
        r.classifier = Classifier::Ridge;
        r.across = Some(Across {
            column: "context".into(),
            assignments: Vec::new(),
        });
        assert!(r
            .validate()
            .unwrap_err()
            .to_string()
            .contains("decodes classes"));
        r.classifier = Classifier::LinearSvm;
        r.across.as_mut().unwrap().assignments = vec![Assignment {
            train: vec!["A".into()],
            test: vec!["A".into()],
        }];
        assert!(r
            .validate()
            .unwrap_err()
            .to_string()
            .contains("both a training and a testing level"));
    }

    #[test]
    fn rejects_unknown_keys_and_bad_folds() {
        let mut v: serde_json::Value = serde_json::from_str(&Recipe::new("x").to_json()).unwrap();
        v["colour"] = "red".into();
        assert!(Recipe::from_json("r.json", &v.to_string())
            .unwrap_err()
            .to_string()
            .contains("colour"));
        assert!(Folds::parse("1").is_err());
        assert_eq!(Folds::parse("LOO").unwrap(), Folds::LeaveOneOut);
    }
}
