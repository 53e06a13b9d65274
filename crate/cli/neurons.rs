//! `popdecode neurons`: what each neuron contributes.

use crate::args::{base_recipe, show, RunArgs, TableArgs};
use crate::files::{display_name, read};
use crate::run::analyse;
use clap::Args;
use popdecode::analyses::neurons::NeuronsPlan;
use popdecode::input;

/// The neuron analyses run the decoding protocol without shuffles; --shuffles and --shuffle-repeats are ignored.
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
    let recipe = base_recipe(&args.run, &args.table.columns)?;
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
