//! `popdecode decode`: cross-validated decoding of a trial table.

use crate::args::{base_recipe, show, RunArgs, TableArgs};
use crate::files::{display_name, read};
use crate::run::analyse;
use crate::targets::{decode_other, TargetArgs};
use clap::Args;
use popdecode::analyses::trial_table::Plan;
use popdecode::input::{self, FileBytes};

#[derive(Args)]
pub struct DecodeArgs {
    #[command(flatten)]
    pub table: TableArgs,
    #[command(flatten)]
    pub targets: TargetArgs,
    #[command(flatten)]
    pub run: RunArgs,
}

pub fn run(args: DecodeArgs) -> Result<(), String> {
    let mut recipe = base_recipe(&args.run, &args.table.columns)?;
    args.targets.apply(&mut recipe)?;
    if recipe.time.is_some() {
        return Err("this recipe is for a time course; run it with 'popdecode timecourse'".into());
    }
    recipe.validate().map_err(show)?;
    let bytes = read(&args.table.csv)?;
    let name = display_name(&args.table.csv);
    let file = [FileBytes {
        name: &name,
        bytes: &bytes,
    }];
    if let Some(done) = decode_other(&recipe, &file, &args.run) {
        return done;
    }
    let data = input::trial_table(&display_name(&args.table.csv), &bytes, &recipe.columns)
        .map_err(show)?;
    let plan = Plan::new(data, &recipe).map_err(show)?;
    analyse(&plan, &args.run)
}
