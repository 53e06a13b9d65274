//! Flags that change what is decoded — across the levels of a second column, or a continuous or circular variable —
//! and the routing of `decode` and `timecourse` to those analyses.

use crate::args::{show, RunArgs};
use crate::files::{display_name, sha256_file};
use crate::inputs::{read_inputs, Inputs};
use crate::run::{analyse, Loaded};
use clap::Args;
use popdecode::analyses::across::AcrossPlan;
use popdecode::analyses::continuous::ContinuousPlan;
use popdecode::data::SourceFile;
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

/// The names part files record for the two analyses `decode` and `timecourse` route to.
pub const ACROSS: &str = "across";
pub const CONTINUOUS: &str = "continuous";

/// Run the inputs of `decode` or `timecourse` as a continuous or across-conditions analysis when the recipe is one
/// (a decoder of numbers, or a column to generalize across); `None` otherwise.
pub fn route(inputs: &Inputs, run: &RunArgs) -> Option<Result<(), String>> {
    let mut inputs = inputs.clone();
    if inputs.recipe.classifier.is_regression() {
        inputs.analysis = CONTINUOUS.into();
        return Some(analyse(&inputs, load_continuous, run));
    }
    inputs.recipe.across.as_ref()?;
    inputs.analysis = ACROSS.into();
    Some(analyse(&inputs, load_across, run))
}

/// The input files as part files record them: each file's name and the SHA-256 of its bytes on disk.
fn source_files(inputs: &Inputs) -> Result<Vec<SourceFile>, String> {
    inputs
        .paths
        .iter()
        .map(|p| {
            Ok(SourceFile {
                file: display_name(p),
                sha256: sha256_file(p)?,
            })
        })
        .collect()
}

/// Read a trial table (or a recording, the recipe having time settings) and build the plan of generalization
/// across conditions (also how `combine` builds it again).
pub fn load_across(inputs: &Inputs) -> Result<Loaded<AcrossPlan>, String> {
    let contents = read_inputs(inputs)?;
    let files: Vec<FileBytes> = contents
        .iter()
        .map(|(name, bytes)| FileBytes { name, bytes })
        .collect();
    let plan = AcrossPlan::from_files(&files, &inputs.recipe).map_err(show)?;
    Ok(Loaded {
        plan,
        files: source_files(inputs)?,
    })
}

/// As [`load_across`], for decoding a continuous or circular variable.
pub fn load_continuous(inputs: &Inputs) -> Result<Loaded<ContinuousPlan>, String> {
    let contents = read_inputs(inputs)?;
    let files: Vec<FileBytes> = contents
        .iter()
        .map(|(name, bytes)| FileBytes { name, bytes })
        .collect();
    let plan = ContinuousPlan::from_files(&files, &inputs.recipe).map_err(show)?;
    Ok(Loaded {
        plan,
        files: source_files(inputs)?,
    })
}
