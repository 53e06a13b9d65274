//! `popdecode combine`: join the part files of an analysis run with `--part K/N` into the result a single run
//! writes, byte for byte. The parts are checked against each other before any data is read; then the plan is built
//! again by the subcommand's own `load` from the recorded recipe, options and files (whose SHA-256 must not have
//! changed), and `finish` runs on every task's outcome in task order, exactly as after a single run.

use crate::part::{self, Read};
use crate::run::{check_outputs, deliver, Loaded, Outputs};
use crate::{decode, neurons, power, study, targets, timecourse};
use clap::Args;
use popdecode::analyses::Analysis;
use std::path::PathBuf;

/// Part files of one analysis and where the result goes.
#[derive(Args)]
pub struct CombineArgs {
    /// The part files (every part of one split, in any order).
    #[arg(required = true)]
    pub parts: Vec<PathBuf>,
    /// Write the full result as JSON.
    #[arg(long)]
    pub json: Option<PathBuf>,
    /// Write the settings used as a recipe file.
    #[arg(long)]
    pub save_recipe: Option<PathBuf>,
    /// Write the figures (SVG; for a time course also the curve and matrix as CSV) into this folder.
    #[arg(long)]
    pub plots: Option<PathBuf>,
}

pub fn run(args: CombineArgs) -> Result<(), String> {
    let parts = args
        .parts
        .iter()
        .map(|p| Read::open(p))
        .collect::<Result<Vec<_>, _>>()?;
    let parts = part::check_set(parts)?;
    let inputs = part::inputs(&parts)?;
    part::check_files(&parts)?;
    // One line per analysis: its subcommand's `load` builds the plan, the rest is shared.
    match inputs.analysis.as_str() {
        decode::NAME => finish(decode::load(&inputs)?, parts, &args),
        timecourse::NAME => finish(timecourse::load(&inputs)?, parts, &args),
        neurons::NAME => finish(neurons::load(&inputs)?, parts, &args),
        study::NAME => finish(study::load(&inputs)?, parts, &args),
        power::NAME => finish(power::load(&inputs)?, parts, &args),
        targets::ACROSS => finish(targets::load_across(&inputs)?, parts, &args),
        targets::CONTINUOUS => finish(targets::load_continuous(&inputs)?, parts, &args),
        other => Err(format!(
            "{}: an analysis this version does not know ('{other}')",
            parts[0].path.display()
        )),
    }
}

/// Gather the outcomes in task order and write what a single run writes.
fn finish<P: Analysis>(
    loaded: Loaded<P>,
    parts: Vec<Read>,
    args: &CombineArgs,
) -> Result<(), String> {
    let plan = &loaded.plan;
    let outputs = Outputs {
        json: args.json.as_deref(),
        save_recipe: args.save_recipe.as_deref(),
        plots: args.plots.as_deref(),
    };
    let read_from: Vec<PathBuf> = parts.iter().map(|p| p.path.clone()).collect();
    check_outputs(&outputs, &read_from, None)?;
    let outcomes: Vec<P::Outcome> = part::outcomes(parts, &plan.tasks())?;
    deliver(&plan.finish(&outcomes), plan.recipe(), &outputs)
}
