//! `popdecode decode`: cross-validated decoding of a trial table.

use crate::args::{base_recipe, show, RunArgs, TableArgs};
use crate::files::{display_name, read};
use crate::inputs::Inputs;
use crate::run::{analyse, Loaded};
use crate::targets::{self, TargetArgs};
use clap::Args;
use popdecode::analyses::trial_table::Plan;
use popdecode::data::SourceFile;
use popdecode::input;

/// The subcommand's name, as part files record it.
pub const NAME: &str = "decode";

#[derive(Args)]
pub struct DecodeArgs {
    #[command(flatten)]
    pub table: TableArgs,
    /// Also decode every pair of conditions on its own with the same protocol (three or more conditions): a
    /// table, the JSON's "pairwise" and pairwise.svg with --plots.
    #[arg(long)]
    pub pairwise: bool,
    #[command(flatten)]
    pub targets: TargetArgs,
    #[command(flatten)]
    pub run: RunArgs,
}

pub fn run(args: DecodeArgs) -> Result<(), String> {
    let mut recipe = base_recipe(&args.run, &args.table.columns)?;
    recipe.pairwise |= args.pairwise;
    args.targets.apply(&mut recipe)?;
    if recipe.time.is_some() {
        return Err("this recipe is for a time course; run it with 'popdecode timecourse'".into());
    }
    recipe.validate().map_err(show)?;
    let inputs = Inputs {
        analysis: NAME.into(),
        recipe,
        options: serde_json::json!({}),
        paths: vec![args.table.csv],
    };
    if let Some(done) = targets::route(&inputs, &args.run) {
        return done;
    }
    analyse(&inputs, load, &args.run)
}

/// Read the trial table and build the plan (also how `combine` builds it again).
pub fn load(inputs: &Inputs) -> Result<Loaded<Plan>, String> {
    let path = &inputs.paths[0];
    let bytes = read(path)?;
    let data =
        input::trial_table(&display_name(path), &bytes, &inputs.recipe.columns).map_err(show)?;
    let files = vec![SourceFile {
        file: data.source.clone(),
        sha256: data.sha256.clone(),
    }];
    let plan = Plan::new(data, &inputs.recipe).map_err(show)?;
    Ok(Loaded { plan, files })
}
