//! `popdecode power`: planning the next recording (power against trials per class, neurons and noise neurons).

use crate::args::{base_recipe, show, RunArgs, TableArgs};
use crate::files::{display_name, read};
use crate::inputs::Inputs;
use crate::run::{analyse, Loaded};
use clap::Args;
use popdecode::analyses::power::PowerPlan;
use popdecode::data::SourceFile;
use popdecode::input;
use popdecode::recipe::power::{self, PowerSettings};

/// The subcommand's name, as part files record it.
pub const NAME: &str = "power";

/// Every subsample runs the decoding protocol with its repeats and shuffles: --repeats, --shuffles and
/// --shuffle-repeats set that protocol (defaults here: 2 repeats, 19 shuffles, each shuffle with as many repeats).
#[derive(Args)]
pub struct PowerArgs {
    #[command(flatten)]
    pub table: TableArgs,
    /// Trials per class to draw subsamples at, comma-separated [default: six sizes from the fewest the folds allow
    /// to the smallest class].
    #[arg(long, value_delimiter = ',')]
    pub per_class: Option<Vec<usize>>,
    /// Numbers of recorded neurons to keep, comma-separated [default: 1, 2, 4, … and all].
    #[arg(long, value_delimiter = ',')]
    pub neurons: Option<Vec<usize>>,
    /// Numbers of noise neurons to add, comma-separated [default: 0, ½, 1, 2 and 4 times the recorded count].
    #[arg(long, value_delimiter = ',')]
    pub added: Option<Vec<usize>>,
    /// Subsamples (subsets, noise draws) at each size [default: 50].
    #[arg(long)]
    pub subsamples: Option<usize>,
    /// A subsample is significant when its shuffle p-value is at most this [default: 0.05].
    #[arg(long)]
    pub alpha: Option<f64>,
    /// Extrapolate accuracy up to this many trials per class [default: 4 × the largest measured].
    #[arg(long)]
    pub extrapolate_to: Option<usize>,
    #[command(flatten)]
    pub run: RunArgs,
}

pub fn run(args: PowerArgs) -> Result<(), String> {
    let mut recipe = base_recipe(&args.run, &args.table.columns)?;
    if recipe.time.is_some() {
        return Err(
            "this recipe is for a time course; the power analysis reads a trial table".into(),
        );
    }
    // The decoding defaults (100 repeats, 200 shuffles) run for every subsample would take hours.
    if args.run.recipe.is_none() {
        if args.run.repeats.is_none() {
            recipe.repeats = power::REPEATS;
        }
        if args.run.shuffles.is_none() {
            recipe.shuffles = power::SHUFFLES;
        }
    }
    let mut settings = recipe.power.take().unwrap_or_default();
    apply_power_flags(&mut settings, &args);
    recipe.power = Some(settings);
    recipe.validate().map_err(show)?;
    let inputs = Inputs {
        analysis: NAME.into(),
        recipe,
        options: serde_json::json!({}),
        paths: vec![args.table.csv],
    };
    analyse(&inputs, load, &args.run)
}

/// Read the trial table and build the plan (also how `combine` builds it again); the power settings are in the
/// recipe.
pub fn load(inputs: &Inputs) -> Result<Loaded<PowerPlan>, String> {
    let path = &inputs.paths[0];
    let bytes = read(path)?;
    let data =
        input::trial_table(&display_name(path), &bytes, &inputs.recipe.columns).map_err(show)?;
    let files = vec![SourceFile {
        file: data.source.clone(),
        sha256: data.sha256.clone(),
    }];
    let plan = PowerPlan::new(data, &inputs.recipe).map_err(show)?;
    Ok(Loaded { plan, files })
}

/// The power flags given, over the recipe's (or the default) settings.
fn apply_power_flags(s: &mut PowerSettings, args: &PowerArgs) {
    if let Some(g) = &args.per_class {
        s.trials = Some(g.clone());
    }
    if let Some(g) = &args.neurons {
        s.neurons = Some(g.clone());
    }
    if let Some(g) = &args.added {
        s.noise = Some(g.clone());
    }
    if let Some(n) = args.subsamples {
        s.subsamples = n;
    }
    if let Some(a) = args.alpha {
        s.alpha = a;
    }
    if let Some(n) = args.extrapolate_to {
        s.extrapolate_to = Some(n);
    }
}
