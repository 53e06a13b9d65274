//! `popdecode timecourse`: decoding at every time window of a binned table, spike events or an NWB file.

use crate::args::{base_recipe, show, ColumnArgs, RunArgs};
use crate::files::{display_name, open_source, read};
use crate::run::analyse;
use crate::targets::{decode_other, TargetArgs};
use clap::Args;
use popdecode::analyses::time_course::TimePlan;
use popdecode::input::{self, extract, FileBytes};
use popdecode::recipe::{TimeInput, TimeSettings, UnitFilter};
use std::path::PathBuf;

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
    /// Clusters with a permutation p below this are significant [default: 0.05].
    #[arg(long)]
    pub alpha: Option<f64>,
    /// With --nwb: keep only the units passing this test on a units-table column, as COLUMN=VALUE[,VALUE...],
    /// COLUMN!=VALUE or COLUMN>=NUMBER (also <=, >, <), e.g. quality=good; repeat to require several.
    #[arg(long = "units", value_name = "FILTER")]
    pub units: Vec<String>,
    #[command(flatten)]
    pub columns: ColumnArgs,
    #[command(flatten)]
    pub targets: TargetArgs,
    #[command(flatten)]
    pub run: RunArgs,
}

/// The time settings: from the recipe file when it has them, with every flag given applied on top.
fn time_settings(
    args: &TimecourseArgs,
    from_recipe: Option<TimeSettings>,
) -> Result<TimeSettings, String> {
    let trial = args.trial.clone();
    if args.nwb.is_some() {
        return nwb_settings(args, from_recipe);
    }
    if !args.units.is_empty() {
        return Err("--units keeps units of an NWB file's units table (--nwb)".into());
    }
    let mut settings = match (&args.events, &args.csv, from_recipe) {
        (Some(_), _, Some(t @ TimeSettings { input: TimeInput::Events { .. }, .. })) => t,
        (None, Some(_), Some(t @ TimeSettings { input: TimeInput::Binned { .. }, .. })) => t,
        (Some(_), _, _) => {
            let (start, end) = match (args.start, args.end) {
                (Some(s), Some(e)) => (s, e),
                _ => {
                    return Err(
                        "with --events, give the analysis span with --start and --end (s from alignment)".into(),
                    )
                }
            };
            TimeSettings::events(start, end)
        }
        (None, Some(_), _) => TimeSettings::binned("trial", "time"),
        (None, None, _) => {
            return Err(
                "give a binned table (popdecode timecourse TABLE.csv ...) or --events EVENTS.csv --trials TRIALS.csv"
                    .into(),
            )
        }
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
    if let Some(a) = args.alpha {
        settings.alpha = a;
    }
    Ok(settings)
}

/// Time settings for an NWB file: windows and alignment from the recipe or the flags.
fn nwb_settings(
    args: &TimecourseArgs,
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
    recipe.time = Some(time_settings(&args, recipe.time.take())?);
    args.targets.apply(&mut recipe)?;
    recipe.validate().map_err(show)?;
    let paths: Vec<&PathBuf> = match (&args.events, &args.trials, &args.csv, &args.nwb) {
        (_, _, _, Some(n)) => vec![n],
        (Some(e), Some(t), _, _) => vec![e, t],
        (_, _, Some(c), _) => vec![c],
        _ => unreachable!("time_settings checked the inputs"),
    };
    // An NWB file is read lazily into its extract (units and trials only), exactly as the page does.
    let contents: Vec<(String, Vec<u8>)> = paths
        .iter()
        .map(|p| {
            let name = display_name(p);
            let bytes = match args.nwb {
                Some(_) => extract::read_nwb(&name, open_source(p)?).map_err(show)?,
                None => read(p)?,
            };
            Ok((name, bytes))
        })
        .collect::<Result<_, String>>()?;
    let files: Vec<FileBytes> = contents
        .iter()
        .map(|(name, bytes)| FileBytes { name, bytes })
        .collect();
    if let Some(done) = decode_other(&recipe, &files, &args.run) {
        return done;
    }
    let settings = recipe.time.as_ref().expect("set above");
    let data = input::time_course(&files, &recipe.columns, &settings.input).map_err(show)?;
    let plan = TimePlan::new(data, &recipe).map_err(show)?;
    analyse(&plan, &args.run)
}
