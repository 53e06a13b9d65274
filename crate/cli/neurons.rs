//! `popdecode neurons`: what each neuron contributes.

use crate::args::{base_recipe, show, RunArgs, TableArgs};
use crate::files::{display_name, read};
use crate::run::analyse;
use clap::Args;
use popdecode::analyses::neurons::NeuronsPlan;
use popdecode::input;

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
    let bytes = read(&args.table.csv)?;
    let data = input::trial_table(&display_name(&args.table.csv), &bytes, &recipe.columns)
        .map_err(show)?;
    let plan = NeuronsPlan::new(data, &recipe, args.draws).map_err(show)?;
    analyse(&plan, &args.run)
}
