//! `popdecode neurons`: what each neuron contributes.

use crate::args::{base_recipe, show, RunArgs, TableArgs};
use crate::files::{display_name, read};
use crate::inputs::Inputs;
use crate::run::{analyse, Loaded};
use clap::Args;
use popdecode::analyses::neurons::NeuronsPlan;
use popdecode::data::SourceFile;
use popdecode::input;
use serde::{Deserialize, Serialize};

/// The subcommand's name, as part files record it.
pub const NAME: &str = "neurons";

/// The neuron analyses' settings outside the recipe (a part file's `options`).
#[derive(Serialize, Deserialize)]
#[serde(deny_unknown_fields)]
struct Options {
    draws: usize,
}

/// The neuron analyses run the decoding protocol on subsets of neurons and on each neuron alone. With --shuffles
/// (none unless given, or set by a recipe), each neuron alone also gets a shuffle p-value, with the false-discovery
/// rate controlled across neurons (Benjamini & Hochberg, 1995); the subsets never run shuffles.
#[derive(Args)]
pub struct NeuronsArgs {
    #[command(flatten)]
    pub table: TableArgs,
    /// Random subsets drawn per population size for the dropping curve.
    #[arg(long, default_value_t = 10)]
    pub draws: usize,
    #[command(flatten)]
    pub run: RunArgs,
}

pub fn run(args: NeuronsArgs) -> Result<(), String> {
    let mut recipe = base_recipe(&args.run, &args.table.columns)?;
    // A shuffle test per neuron is many fits: run it only when asked for.
    if args.run.shuffles.is_none() && args.run.recipe.is_none() {
        recipe.shuffles = 0;
    }
    if recipe.time.is_some() {
        return Err(
            "this recipe is for a time course; the neuron analyses read a trial table".into(),
        );
    }
    recipe.validate().map_err(show)?;
    let options = Options { draws: args.draws };
    let inputs = Inputs {
        analysis: NAME.into(),
        recipe,
        options: serde_json::to_value(options).expect("options serialise"),
        paths: vec![args.table.csv],
    };
    analyse(&inputs, load, &args.run)
}

/// Read the trial table and build the plan (also how `combine` builds it again).
pub fn load(inputs: &Inputs) -> Result<Loaded<NeuronsPlan>, String> {
    let options: Options = serde_json::from_value(inputs.options.clone())
        .map_err(|e| format!("the neuron analyses' options are damaged: {e}"))?;
    let path = &inputs.paths[0];
    let bytes = read(path)?;
    let data =
        input::trial_table(&display_name(path), &bytes, &inputs.recipe.columns).map_err(show)?;
    let files = vec![SourceFile {
        file: data.source.clone(),
        sha256: data.sha256.clone(),
    }];
    let plan = NeuronsPlan::new(data, &inputs.recipe, options.draws).map_err(show)?;
    Ok(Loaded { plan, files })
}
