//! Flags that change what is decoded — across the levels of a second column, or a continuous or circular variable —
//! and the routing of `decode` and `timecourse` to those analyses.

use crate::args::{show, RunArgs};
use crate::run::analyse;
use clap::Args;
use popdecode::analyses::across::AcrossPlan;
use popdecode::analyses::continuous::ContinuousPlan;
use popdecode::input::FileBytes;
use popdecode::recipe::{Across, AngleUnit, Assignment, Classifier, Recipe};

/// Generalization across conditions, and continuous or circular labels.
#[derive(Args)]
pub struct TargetArgs {
    /// Train on the trials at some levels of this column and test on the trials at others (generalization across
    /// conditions; --train-levels and --test-levels choose them, otherwise every balanced dichotomy of its levels).
    #[arg(long, value_name = "COLUMN")]
    pub across: Option<String>,
    /// Levels of --across to train on, comma-separated; repeat together with --test-levels for more assignments.
    #[arg(long = "train-levels", value_name = "LEVEL,...", requires = "across")]
    pub train_levels: Vec<String>,
    /// Levels of --across to test on, comma-separated, paired in order with --train-levels.
    #[arg(long = "test-levels", value_name = "LEVEL,...", requires = "across")]
    pub test_levels: Vec<String>,
    /// With --classifier circular-ridge: the unit of the label's angles, degrees or radians.
    #[arg(long, value_parser = parse_unit)]
    pub angle_unit: Option<AngleUnit>,
}

fn parse_unit(s: &str) -> Result<AngleUnit, String> {
    AngleUnit::parse(s).ok_or_else(|| format!("the angle unit is degrees or radians, not '{s}'"))
}

impl TargetArgs {
    /// Apply the flags to a recipe (a recipe file's settings stay unless a flag replaces them).
    pub fn apply(&self, recipe: &mut Recipe) -> Result<(), String> {
        if self.train_levels.len() != self.test_levels.len() {
            return Err(format!(
                "give --train-levels and --test-levels in pairs ({} and {} given)",
                self.train_levels.len(),
                self.test_levels.len()
            ));
        }
        let list = |s: &String| {
            s.split(',')
                .map(|l| l.trim().to_string())
                .filter(|l| !l.is_empty())
                .collect()
        };
        let assignments: Vec<Assignment> = self
            .train_levels
            .iter()
            .zip(&self.test_levels)
            .map(|(a, b)| Assignment {
                train: list(a),
                test: list(b),
            })
            .collect();
        if let Some(column) = &self.across {
            recipe.across = Some(Across {
                column: column.clone(),
                assignments,
            });
        }
        if self.angle_unit.is_some() {
            recipe.angle_unit = self.angle_unit;
        }
        if recipe.classifier == Classifier::CircularRidge && recipe.angle_unit.is_none() {
            return Err(
                "circular-ridge reads angles: give their unit with --angle-unit degrees or radians"
                    .into(),
            );
        }
        if recipe.angle_unit.is_some() && recipe.classifier != Classifier::CircularRidge {
            return Err("--angle-unit applies to --classifier circular-ridge only".into());
        }
        Ok(())
    }
}

/// Run a trial table (one file) or a recording (its files, the recipe having time settings) as a continuous or
/// across-conditions analysis when the recipe is one; `None` otherwise.
pub fn decode_other(
    recipe: &Recipe,
    files: &[FileBytes],
    run: &RunArgs,
) -> Option<Result<(), String>> {
    if recipe.classifier.is_regression() {
        return Some(
            ContinuousPlan::from_files(files, recipe)
                .map_err(show)
                .and_then(|p| analyse(&p, run)),
        );
    }
    recipe.across.as_ref()?;
    Some(
        AcrossPlan::from_files(files, recipe)
            .map_err(show)
            .and_then(|p| analyse(&p, run)),
    )
}
