//! `popdecode timecourse`: decoding at every time window of a binned table, spike events or an NWB file.

use crate::args::{base_recipe, show, ColumnArgs, RunArgs};
use crate::inputs::{read_inputs, Inputs};
use crate::run::{analyse, Loaded};
use crate::targets::{self, TargetArgs};
use clap::Args;
use popdecode::analyses::time_course::TimePlan;
use popdecode::input::{self, FileBytes};
use popdecode::recipe::{GeneralizationNull, TimeInput, TimeSettings, UnitFilter};
use std::path::PathBuf;

/// The subcommand's name, as part files record it.
pub const NAME: &str = "timecourse";

/// Decoding at every time window: a binned table (one row per trial × bin), or spike events with a trial table.
#[derive(Args)]
pub struct TimecourseArgs {
    /// The binned table: one row per trial and time bin (omit with --events).
    pub csv: Option<PathBuf>,
    /// Spike events CSV: one row per spike with trial, neuron and time (s) columns.
    #[arg(long, requires = "trials", conflicts_with = "csv")]
    pub events: Option<PathBuf>,
    /// Trial table CSV for --events: trial, label, optional group and alignment columns.
    #[arg(long, requires = "events")]
    pub trials: Option<PathBuf>,
    /// An NWB 2.x file: spike times of its units table, trials from its trials table (--label and --group name
    /// trials columns; --align one holding alignment times, default start_time).
    #[arg(long, conflicts_with_all = ["csv", "events", "trials"])]
    pub nwb: Option<PathBuf>,
    #[command(flatten)]
    pub time: TimeFlags,
    #[command(flatten)]
    pub columns: ColumnArgs,
    #[command(flatten)]
    pub targets: TargetArgs,
    #[command(flatten)]
    pub run: RunArgs,
}

/// Flags of time-resolved inputs: columns, windows and the cluster test (shared with `study`).
#[derive(Args)]
pub struct TimeFlags {
    /// Trial id column (binned table; events file and trial table) [default: trial].
    #[arg(long)]
    pub trial: Option<String>,
    /// Bin time column of the binned table, or spike time column of the events file, in s [default: time].
    #[arg(long)]
    pub time: Option<String>,
    /// Neuron column of the events file [default: neuron].
    #[arg(long)]
    pub neuron: Option<String>,
    /// Trial-table column with each trial's alignment time (s), when spike times are on one session clock.
    #[arg(long)]
    pub align: Option<String>,
    /// Window width, s [default: 0.1].
    #[arg(long)]
    pub width: Option<f64>,
    /// Step between window starts, s [default: 0.05].
    #[arg(long)]
    pub step: Option<f64>,
    /// Start of the first window relative to alignment, s.
    #[arg(long, allow_hyphen_values = true)]
    pub start: Option<f64>,
    /// No window extends past this time relative to alignment, s.
    #[arg(long, allow_hyphen_values = true)]
    pub end: Option<f64>,
    /// Also train at every window and test at every window (temporal generalization matrix).
    #[arg(long)]
    pub generalize: bool,
    /// Null of the generalization matrix: training-labels (permute only the training trials' labels, keep the
    /// test labels: a cell is significant only when what was learnt at its training window generalizes) or
    /// all-labels (the curve's null) [default: training-labels].
    #[arg(long, value_parser = parse_null)]
    pub generalization_null: Option<GeneralizationNull>,
    /// Clusters with a permutation p below this are significant [default: 0.05].
    #[arg(long)]
    pub alpha: Option<f64>,
    /// With --nwb: keep only the units passing this test on a units-table column, as COLUMN=VALUE[,VALUE...],
    /// COLUMN!=VALUE or COLUMN>=NUMBER (also <=, >, <), e.g. quality=good; repeat to require several.
    #[arg(long = "units", value_name = "FILTER")]
    pub units: Vec<String>,
}

fn parse_null(s: &str) -> Result<GeneralizationNull, String> {
    GeneralizationNull::from_name(s)
        .ok_or_else(|| format!("unknown null '{s}'; choose training-labels or all-labels"))
}

/// The kind of time-resolved input.
#[derive(Clone, Copy, PartialEq, Eq)]
pub enum Source {
    Binned,
    Events,
    Nwb,
}

/// The time settings: from the recipe file when it has them (for this kind of input), with every flag given applied
/// on top.
pub fn time_settings(
    source: Source,
    args: &TimeFlags,
    from_recipe: Option<TimeSettings>,
) -> Result<TimeSettings, String> {
    let trial = args.trial.clone();
    if source == Source::Nwb {
        return nwb_settings(args, from_recipe);
    }
    if !args.units.is_empty() {
        return Err("--units keeps units of an NWB file's units table (--nwb)".into());
    }
    let mut settings = match (source, from_recipe) {
        (
            Source::Events,
            Some(
                t @ TimeSettings {
                    input: TimeInput::Events { .. },
                    ..
                },
            ),
        ) => t,
        (
            Source::Binned,
            Some(
                t @ TimeSettings {
                    input: TimeInput::Binned { .. },
                    ..
                },
            ),
        ) => t,
        (Source::Events, _) => {
            let (start, end) = match (args.start, args.end) {
                (Some(s), Some(e)) => (s, e),
                _ => {
                    return Err(
                        "with spike events, give the analysis span with --start and --end (s from alignment)"
                            .into(),
                    )
                }
            };
            TimeSettings::events(start, end)
        }
        _ => TimeSettings::binned("trial", "time"),
    };
    match &mut settings.input {
        TimeInput::Binned { trial: tr, time } => {
            if let Some(t) = trial {
                *tr = t;
            }
            if let Some(t) = &args.time {
                *time = t.clone();
            }
            if args.neuron.is_some()
                || args.align.is_some()
                || args.width.is_some()
                || args.step.is_some()
            {
                return Err("--neuron, --align, --width and --step apply to spike events (--events), not to a \
                            binned table, whose bins are the windows"
                    .into());
            }
        }
        TimeInput::Events {
            trial: tr,
            neuron,
            time,
            align,
            width,
            step,
            start,
            end,
        } => {
            if let Some(t) = trial {
                *tr = t;
            }
            if let Some(t) = &args.time {
                *time = t.clone();
            }
            if let Some(n) = &args.neuron {
                *neuron = n.clone();
            }
            if args.align.is_some() {
                *align = args.align.clone();
            }
            *width = args.width.unwrap_or(*width);
            *step = args.step.unwrap_or(*step);
            *start = args.start.unwrap_or(*start);
            *end = args.end.unwrap_or(*end);
        }
        TimeInput::Nwb { .. } => unreachable!("NWB settings are made by nwb_settings"),
    }
    settings.generalize |= args.generalize;
    if args.generalization_null.is_some() {
        settings.generalization_null = args.generalization_null;
    }
    if let Some(a) = args.alpha {
        settings.alpha = a;
    }
    Ok(settings)
}

/// Time settings for an NWB file: windows and alignment from the recipe or the flags.
fn nwb_settings(
    args: &TimeFlags,
    from_recipe: Option<TimeSettings>,
) -> Result<TimeSettings, String> {
    let mut settings = match from_recipe {
        Some(t @ TimeSettings {
            input: TimeInput::Nwb { .. },
            ..
        }) => t,
        _ => match (args.start, args.end) {
            (Some(s), Some(e)) => TimeSettings::nwb(s, e),
            _ => {
                return Err(
                    "with --nwb, give the analysis span with --start and --end (s from each trial's alignment time)"
                        .into(),
                )
            }
        },
    };
    if args.trial.is_some() || args.neuron.is_some() || args.time.is_some() {
        return Err("--trial, --neuron and --time name CSV columns; an NWB file's tables are read as NWB lays \
                    them out"
            .into());
    }
    if let TimeInput::Nwb {
        align,
        width,
        step,
        start,
        end,
        units,
    } = &mut settings.input
    {
        if !args.units.is_empty() {
            *units = args
                .units
                .iter()
                .map(|f| UnitFilter::parse(f))
                .collect::<Result<_, _>>()
                .map_err(show)?;
        }
        if args.align.is_some() {
            *align = args.align.clone();
        }
        *width = args.width.unwrap_or(*width);
        *step = args.step.unwrap_or(*step);
        *start = args.start.unwrap_or(*start);
        *end = args.end.unwrap_or(*end);
    }
    settings.generalize |= args.generalize;
    if args.generalization_null.is_some() {
        settings.generalization_null = args.generalization_null;
    }
    if let Some(a) = args.alpha {
        settings.alpha = a;
    }
    Ok(settings)
}

pub fn run(args: TimecourseArgs) -> Result<(), String> {
    let mut recipe = base_recipe(&args.run, &args.columns)?;
    if recipe.columns.drop_missing {
        return Err(
            "a time course needs every value; --drop-missing applies to trial tables only".into(),
        );
    }
    let source = match (&args.events, &args.csv, &args.nwb) {
        (_, _, Some(_)) => Source::Nwb,
        (Some(_), _, _) => Source::Events,
        (None, Some(_), None) => Source::Binned,
        (None, None, None) => {
            return Err(
                "give a binned table (popdecode timecourse TABLE.csv ...) or --events EVENTS.csv --trials TRIALS.csv"
                    .into(),
            )
        }
    };
    recipe.time = Some(time_settings(source, &args.time, recipe.time.take())?);
    args.targets.apply(&mut recipe)?;
    recipe.validate().map_err(show)?;
    let paths: Vec<PathBuf> = match (args.events, args.trials, args.csv, args.nwb) {
        (_, _, _, Some(n)) => vec![n],
        (Some(e), Some(t), _, _) => vec![e, t],
        (_, _, Some(c), _) => vec![c],
        _ => unreachable!("time_settings checked the inputs"),
    };
    let inputs = Inputs {
        analysis: NAME.into(),
        recipe,
        options: serde_json::json!({}),
        paths,
    };
    if let Some(done) = targets::route(&inputs, &args.run) {
        return done;
    }
    analyse(&inputs, load, &args.run)
}

/// Read the recording (a binned table; spike events and trials; or an NWB file, as the recipe's time input says)
/// and build the plan (also how `combine` builds it again).
pub fn load(inputs: &Inputs) -> Result<Loaded<TimePlan>, String> {
    let recipe = &inputs.recipe;
    let settings = recipe
        .time
        .as_ref()
        .ok_or("a time course's recipe has time settings")?;
    let contents = read_inputs(inputs)?;
    let files: Vec<FileBytes> = contents
        .iter()
        .map(|(name, bytes)| FileBytes { name, bytes })
        .collect();
    let data = input::time_course(&files, &recipe.columns, &settings.input).map_err(show)?;
    let files = data.files.clone();
    let plan = TimePlan::new(data, recipe).map_err(show)?;
    Ok(Loaded { plan, files })
}
