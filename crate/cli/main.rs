//! The command-line face: parse flags into a recipe, run the core's tasks on threads, print and write results.

use clap::{Args, Parser, Subcommand};
use hdf5_pure::ReadSeekSource;
use indicatif::{ProgressBar, ProgressStyle};
use popdecode::data::Dataset;
use popdecode::decoders::Classifier;
use popdecode::neurons::{plots as neuron_plots, NeuronsPlan};
use popdecode::protocol::{predict_with_folds, Plan};
use popdecode::recipe::{Folds, Recipe, TimeInput, TimeSettings};
use popdecode::report::{methods, plots, text, Report};
use popdecode::timecourse::data::{FileBytes, TimeDataset};
use popdecode::timecourse::extract;
use popdecode::timecourse::nwb::{ColumnSummary, Recording};
use popdecode::timecourse::plan::TimePlan;
use popdecode::timecourse::plots as tc_plots;
use popdecode::timecourse::report::TimeReport;
use popdecode::timecourse::text as tc_text;
use popdecode::timecourse::unit_filter::UnitFilter;
use popdecode::Error;
use rayon::prelude::*;
use std::path::{Path, PathBuf};
use std::process::ExitCode;

#[derive(Parser)]
#[command(
    name = "popdecode",
    version,
    about = "Decode task conditions from neural population activity"
)]
struct Cli {
    #[command(subcommand)]
    command: Command,
}

#[derive(Subcommand)]
enum Command {
    /// Cross-validated decoding with repeats, class balancing and a label-shuffle control.
    Decode(DecodeArgs),
    /// Decoding at every time window, with cluster-corrected significance and temporal generalization.
    Timecourse(Box<TimecourseArgs>),
    /// What each neuron contributes: neuron-dropping curve, each neuron alone, weights and activation patterns.
    Neurons(NeuronsArgs),
    /// What an NWB file holds: units, spikes, trials and the trials table's columns.
    Inspect(InspectArgs),
    /// Cross-validated predictions on fold numbers you supply in a column (no balancing, no repeats).
    Predict(PredictArgs),
}

/// A trial table and the flags that choose its columns and the decoder.
#[derive(Args)]
struct TableArgs {
    /// The trial table (CSV with a header; comma, semicolon or tab separated).
    csv: PathBuf,
    #[command(flatten)]
    columns: ColumnArgs,
}

/// Flags that choose columns and the decoder, shared by every subcommand.
#[derive(Args)]
struct ColumnArgs {
    /// Column holding the condition to decode.
    #[arg(long)]
    label: Option<String>,
    /// Comma-separated feature columns [default: every other numeric column].
    #[arg(long, value_delimiter = ',')]
    features: Option<Vec<String>>,
    /// Comma-separated columns never to use as features (trial numbers, times).
    #[arg(long, value_delimiter = ',')]
    ignore: Option<Vec<String>>,
    /// Leave out trials with missing cells instead of stopping.
    #[arg(long)]
    drop_missing: bool,
    /// Decoder: linear-svm, shrinkage-lda, logistic, gaussian-nb, poisson-nb or nearest-mean [default: linear-svm].
    #[arg(long, value_parser = parse_classifier)]
    classifier: Option<Classifier>,
    /// Regularisation constant C of the linear SVM and logistic regression [default: 1].
    #[arg(long)]
    c: Option<f64>,
    /// Choose C inside each training fold by nested cross-validation (grid 0.001 to 1000).
    #[arg(long)]
    tune: bool,
}

#[derive(Args)]
struct DecodeArgs {
    #[command(flatten)]
    table: TableArgs,
    #[command(flatten)]
    run: RunArgs,
}

/// Resampling, statistics and output flags, shared by `decode` and `timecourse`.
#[derive(Args)]
struct RunArgs {
    /// Column naming the session, block or day; folds never split a group and shuffles stay within groups.
    #[arg(long)]
    group: Option<String>,
    /// Column naming the recording session when each neuron was recorded in one session only (empty cells in the
    /// other sessions' rows): trials are combined across sessions into pseudo-trials.
    #[arg(long, conflicts_with = "group")]
    pseudo: Option<String>,
    /// Folds per repeat, or 'loo' for leave-one-out [default: 5].
    #[arg(long, value_parser = parse_folds)]
    folds: Option<Folds>,
    /// Repeats of balancing and fold assignment [default: 100].
    #[arg(long)]
    repeats: Option<usize>,
    /// Label permutations for the shuffle control; 0 for none [default: 200].
    #[arg(long)]
    shuffles: Option<usize>,
    /// Repeats run for each permutation [default: min(repeats, 10)].
    #[arg(long)]
    shuffle_repeats: Option<usize>,
    /// Do not undersample classes to the smallest; balanced accuracy becomes the headline.
    #[arg(long)]
    no_balance: bool,
    /// Seed of every random stream [default: 1].
    #[arg(long)]
    seed: Option<u64>,
    /// Threads to run tasks on [default: all cores]; results do not depend on it.
    #[arg(long)]
    threads: Option<usize>,
    /// Write the full result as JSON.
    #[arg(long)]
    json: Option<PathBuf>,
    /// Read settings from a recipe file; flags given as well override it.
    #[arg(long)]
    recipe: Option<PathBuf>,
    /// Write the settings used as a recipe file.
    #[arg(long)]
    save_recipe: Option<PathBuf>,
    /// Write the figures (SVG; for a time course also the curve and matrix as CSV) into this folder.
    #[arg(long)]
    plots: Option<PathBuf>,
    /// Print no progress bar.
    #[arg(long)]
    quiet: bool,
}

/// Decoding at every time window: a binned table (one row per trial × bin), or spike events with a trial table.
#[derive(Args)]
struct TimecourseArgs {
    /// The binned table: one row per trial and time bin (omit with --events).
    csv: Option<PathBuf>,
    /// Spike events CSV: one row per spike with trial, neuron and time (s) columns.
    #[arg(long, requires = "trials", conflicts_with = "csv")]
    events: Option<PathBuf>,
    /// Trial table CSV for --events: trial, label, optional group and alignment columns.
    #[arg(long, requires = "events")]
    trials: Option<PathBuf>,
    /// An NWB 2.x file: spike times of its units table, trials from its trials table (--label and --group name
    /// trials columns; --align one holding alignment times, default start_time).
    #[arg(long, conflicts_with_all = ["csv", "events", "trials"])]
    nwb: Option<PathBuf>,
    /// Trial id column (binned table; events file and trial table) [default: trial].
    #[arg(long)]
    trial: Option<String>,
    /// Bin time column of the binned table, or spike time column of the events file, in s [default: time].
    #[arg(long)]
    time: Option<String>,
    /// Neuron column of the events file [default: neuron].
    #[arg(long)]
    neuron: Option<String>,
    /// Trial-table column with each trial's alignment time (s), when spike times are on one session clock.
    #[arg(long)]
    align: Option<String>,
    /// Window width, s [default: 0.1].
    #[arg(long)]
    width: Option<f64>,
    /// Step between window starts, s [default: 0.05].
    #[arg(long)]
    step: Option<f64>,
    /// Start of the first window relative to alignment, s.
    #[arg(long, allow_hyphen_values = true)]
    start: Option<f64>,
    /// No window extends past this time relative to alignment, s.
    #[arg(long, allow_hyphen_values = true)]
    end: Option<f64>,
    /// Also train at every window and test at every window (temporal generalization matrix).
    #[arg(long)]
    generalize: bool,
    /// Clusters with a permutation p below this are significant [default: 0.05].
    #[arg(long)]
    alpha: Option<f64>,
    /// With --nwb: keep only the units passing this test on a units-table column, as COLUMN=VALUE[,VALUE...],
    /// COLUMN!=VALUE or COLUMN>=NUMBER (also <=, >, <), e.g. quality=good; repeat to require several.
    #[arg(long = "units", value_name = "FILTER")]
    units: Vec<String>,
    #[command(flatten)]
    columns: ColumnArgs,
    #[command(flatten)]
    run: RunArgs,
}

/// The neuron analyses run the decoding protocol without shuffles; --shuffles and --shuffle-repeats are ignored.
#[derive(Args)]
struct NeuronsArgs {
    #[command(flatten)]
    table: TableArgs,
    /// Random subsets drawn per population size for the dropping curve [default: 10].
    #[arg(long, default_value_t = 10)]
    draws: usize,
    #[command(flatten)]
    run: RunArgs,
}

#[derive(Args)]
struct InspectArgs {
    /// The NWB file.
    file: PathBuf,
    /// Also write every spike as read (unit, time in s) to this CSV.
    #[arg(long)]
    spikes: Option<PathBuf>,
}

#[derive(Args)]
struct PredictArgs {
    #[command(flatten)]
    table: TableArgs,
    /// Column holding each trial's fold number.
    #[arg(long)]
    fold_column: String,
    /// Write predictions here as CSV (line, fold, true, predicted) instead of standard output.
    #[arg(long)]
    out: Option<PathBuf>,
}

fn parse_classifier(s: &str) -> Result<Classifier, String> {
    Classifier::from_name(s).ok_or_else(|| {
        let names: Vec<&str> = Classifier::ALL.iter().map(|c| c.name()).collect();
        format!(
            "unknown classifier '{s}'; choose one of: {}",
            names.join(", ")
        )
    })
}

fn parse_folds(s: &str) -> Result<Folds, String> {
    Folds::parse(s).map_err(|e| e.to_string())
}

fn main() -> ExitCode {
    let cli = Cli::parse();
    let result = match cli.command {
        Command::Decode(args) => decode(args),
        Command::Timecourse(args) => timecourse(*args),
        Command::Neurons(args) => neurons(args),
        Command::Inspect(args) => inspect(args),
        Command::Predict(args) => predict(args),
    };
    match result {
        Ok(()) => ExitCode::SUCCESS,
        Err(message) => {
            eprintln!("popdecode: error: {message}");
            ExitCode::from(2)
        }
    }
}

fn read(path: &Path) -> Result<Vec<u8>, String> {
    std::fs::read(path).map_err(|e| format!("{}: cannot read the file: {e}", path.display()))
}

fn write(path: &Path, contents: &str) -> Result<(), String> {
    std::fs::write(path, contents)
        .map_err(|e| format!("{}: cannot write the file: {e}", path.display()))
}

/// The name a file is reported under: as given on the command line's last component, like the page shows it.
fn display_name(path: &Path) -> String {
    path.file_name().map_or_else(
        || path.display().to_string(),
        |n| n.to_string_lossy().into_owned(),
    )
}

/// Apply the column and decoder flags to a recipe.
fn apply_column_flags(recipe: &mut Recipe, t: &ColumnArgs) {
    if let Some(l) = &t.label {
        recipe.columns.label = l.clone();
    }
    if let Some(f) = &t.features {
        recipe.columns.features = Some(f.clone());
    }
    if let Some(i) = &t.ignore {
        recipe.columns.ignore = i.clone();
    }
    recipe.columns.drop_missing |= t.drop_missing;
    if let Some(c) = t.classifier {
        recipe.classifier = c;
    }
    if let Some(c) = t.c {
        recipe.c = c;
    }
    recipe.tune |= t.tune;
}

/// The recipe a run starts from: a recipe file, or the defaults for the label column.
fn base_recipe(run: &RunArgs, columns: &ColumnArgs) -> Result<Recipe, String> {
    let mut recipe = match &run.recipe {
        Some(path) => {
            let text = String::from_utf8_lossy(&read(path)?).into_owned();
            Recipe::from_json(&display_name(path), &text).map_err(show)?
        }
        None => Recipe::new(
            columns
                .label
                .as_deref()
                .ok_or("name the label column with --label <COLUMN>")?,
        ),
    };
    apply_column_flags(&mut recipe, columns);
    if let Some(g) = &run.group {
        recipe.columns.group = Some(g.clone());
    }
    if let Some(s) = &run.pseudo {
        recipe.columns.pseudo = Some(s.clone());
    }
    if let Some(f) = run.folds {
        recipe.folds = f;
    }
    if let Some(r) = run.repeats {
        recipe.repeats = r;
    }
    if let Some(s) = run.shuffles {
        recipe.shuffles = s;
    }
    if run.shuffle_repeats.is_some() {
        recipe.shuffle_repeats = run.shuffle_repeats;
    }
    recipe.balance &= !run.no_balance;
    if let Some(s) = run.seed {
        recipe.seed = s;
    }
    Ok(recipe)
}

/// Write the JSON, the recipe and the figures a run asked for.
fn write_outputs(
    run: &RunArgs,
    recipe: &Recipe,
    json: &str,
    figures: &[(&str, Option<String>)],
) -> Result<(), String> {
    if let Some(path) = &run.json {
        write(path, &(json.to_string() + "\n"))?;
    }
    if let Some(path) = &run.save_recipe {
        write(path, &(recipe.to_json() + "\n"))?;
    }
    if let Some(dir) = &run.plots {
        std::fs::create_dir_all(dir)
            .map_err(|e| format!("{}: cannot create the folder: {e}", dir.display()))?;
        for (name, contents) in figures {
            if let Some(c) = contents {
                write(&dir.join(name), c)?;
            }
        }
    }
    Ok(())
}

fn decode(args: DecodeArgs) -> Result<(), String> {
    let recipe = base_recipe(&args.run, &args.table.columns)?;
    if recipe.time.is_some() {
        return Err("this recipe is for a time course; run it with 'popdecode timecourse'".into());
    }
    recipe.validate().map_err(show)?;
    let bytes = read(&args.table.csv)?;
    let data =
        Dataset::from_csv(&display_name(&args.table.csv), &bytes, &recipe.columns).map_err(show)?;
    let plan = Plan::new(&data, &recipe).map_err(show)?;
    let tasks = plan.tasks();
    let costs: Vec<usize> = tasks.iter().map(|&t| plan.fits_in(t)).collect();
    let outcomes = run_tasks(&tasks, &costs, |t| plan.run(t), &args.run)?;
    let report = Report::build(&plan, &outcomes);

    print!("{}", text::render(&report));
    println!("\nMethods:\n{}", methods::paragraph(&report));
    write_outputs(
        &args.run,
        &recipe,
        &report.to_json(),
        &[
            ("scores.svg", Some(plots::score_distribution(&report))),
            ("confusion.svg", Some(plots::confusion(&report))),
            ("null.svg", plots::null_distribution(&report)),
        ],
    )
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

/// `popdecode inspect FILE.nwb`: what the file holds, and optionally every spike as read.
fn inspect(args: InspectArgs) -> Result<(), String> {
    let name = display_name(&args.file);
    let rec = Recording::read_from(&name, open_source(&args.file)?).map_err(show)?;
    let s = rec.summary();
    println!(
        "{name}: {} units, {} spikes, {} trials over {:.3} s",
        s.units, s.spikes, s.trials, s.duration
    );
    println!("trials columns (candidate labels, groups and alignment times):");
    print_columns(&s.columns);
    if !s.unit_columns.is_empty() {
        println!("units columns (what --units can keep units by):");
        print_columns(&s.unit_columns);
    }
    if let Some(path) = &args.spikes {
        let mut out = String::from("unit,time\n");
        for (u, times) in rec.units.iter().zip(&rec.spikes) {
            for t in times {
                out.push_str(&format!("{u},{t:?}\n"));
            }
        }
        write(path, &out)?;
    }
    Ok(())
}

fn print_columns(columns: &[ColumnSummary]) {
    for c in columns {
        let values: Vec<String> = c.values.iter().map(|(v, n)| format!("{v} ({n})")).collect();
        let described = match (values.is_empty(), c.range) {
            (false, _) => values.join(", "),
            (true, Some((lo, hi))) => format!("{} distinct values from {lo} to {hi}", c.distinct),
            (true, None) => format!("{} distinct values", c.distinct),
        };
        println!(
            "  {:<20} {:<7} {described}",
            c.name,
            if c.numeric { "number" } else { "text" }
        );
    }
}

/// A file on disk as a random-access source, so that an NWB file is read only where its tables are.
fn open_source(path: &Path) -> Result<ReadSeekSource<std::fs::File>, String> {
    let file = std::fs::File::open(path)
        .map_err(|e| format!("{}: cannot read the file: {e}", path.display()))?;
    ReadSeekSource::new(file).map_err(|e| format!("{}: cannot read the file: {e}", path.display()))
}

fn timecourse(args: TimecourseArgs) -> Result<(), String> {
    let mut recipe = base_recipe(&args.run, &args.columns)?;
    if recipe.columns.drop_missing {
        return Err(
            "a time course needs every value; --drop-missing applies to trial tables only".into(),
        );
    }
    recipe.time = Some(time_settings(&args, recipe.time.take())?);
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
    let settings = recipe.time.as_ref().expect("set above");
    let data = TimeDataset::load(&files, &recipe.columns, &settings.input).map_err(show)?;
    let plan = TimePlan::new(&data, &recipe).map_err(show)?;
    let tasks = plan.tasks();
    let costs: Vec<usize> = tasks.iter().map(|&t| plan.fits_in(t)).collect();
    let outcomes = run_tasks(&tasks, &costs, |t| plan.run(t), &args.run)?;
    let report = TimeReport::build(&plan, &outcomes);
    print!("{}", tc_text::render(&report));
    println!("\nMethods:\n{}", tc_text::methods(&report));
    write_outputs(
        &args.run,
        &recipe,
        &report.to_json(),
        &[
            ("curve.svg", Some(tc_plots::curve(&report))),
            ("curve.csv", Some(tc_text::curve_csv(&report))),
            ("generalization.svg", tc_plots::generalization(&report)),
            ("generalization.csv", tc_text::generalization_csv(&report)),
        ],
    )
}

fn show(e: Error) -> String {
    e.to_string()
}

fn neurons(args: NeuronsArgs) -> Result<(), String> {
    let recipe = base_recipe(&args.run, &args.table.columns)?;
    if recipe.time.is_some() {
        return Err(
            "this recipe is for a time course; the neuron analyses read a trial table".into(),
        );
    }
    recipe.validate().map_err(show)?;
    let bytes = read(&args.table.csv)?;
    let data =
        Dataset::from_csv(&display_name(&args.table.csv), &bytes, &recipe.columns).map_err(show)?;
    let plan = NeuronsPlan::new(&data, &recipe, args.draws).map_err(show)?;
    let tasks = plan.tasks();
    let costs: Vec<usize> = tasks.iter().map(|&t| plan.fits_in(t)).collect();
    let outcomes = run_tasks(&tasks, &costs, |t| plan.run(t), &args.run)?;
    let report = plan.report(&outcomes);
    print!("{}", report.render());
    write_outputs(
        &args.run,
        &plan.recipe,
        &report.to_json(),
        &[
            ("dropping.svg", Some(neuron_plots::dropping(&report))),
            ("single.svg", Some(neuron_plots::single(&report))),
            ("weights.svg", neuron_plots::weights(&report)),
        ],
    )
}

/// Run every task on a rayon pool. Outcomes are collected by task, so the thread count cannot change them.
fn run_tasks<T: Copy + Sync, O: Send>(
    tasks: &[T],
    costs: &[usize],
    run: impl Fn(T) -> O + Sync,
    args: &RunArgs,
) -> Result<Vec<O>, String> {
    let total: usize = costs.iter().sum();
    let bar = if args.quiet {
        ProgressBar::hidden()
    } else {
        ProgressBar::new(total as u64)
    };
    bar.set_style(
        ProgressStyle::with_template(
            "{bar:40} {pos}/{len} fits, {elapsed} elapsed, about {eta} left",
        )
        .expect("valid template"),
    );
    let mut builder = rayon::ThreadPoolBuilder::new();
    if let Some(n) = args.threads {
        if n == 0 {
            return Err("--threads must be at least 1".into());
        }
        builder = builder.num_threads(n);
    }
    let pool = builder
        .build()
        .map_err(|e| format!("cannot start threads: {e}"))?;
    let outcomes = pool.install(|| {
        tasks
            .par_iter()
            .zip(costs)
            .map(|(&t, &cost)| {
                let o = run(t);
                bar.inc(cost as u64);
                o
            })
            .collect()
    });
    bar.finish_and_clear();
    Ok(outcomes)
}

fn predict(args: PredictArgs) -> Result<(), String> {
    let mut recipe = Recipe::new(
        args.table
            .columns
            .label
            .as_deref()
            .ok_or("name the label column with --label <COLUMN>")?,
    );
    apply_column_flags(&mut recipe, &args.table.columns);
    recipe.columns.ignore.push(args.fold_column.clone());
    let bytes = read(&args.table.csv)?;
    let name = display_name(&args.table.csv);
    let table = popdecode::data::table::Table::parse(&name, &bytes).map_err(show)?;
    if recipe.columns.drop_missing {
        return Err(
            "predict keeps every trial, so that each has its fold; fill in missing values first"
                .into(),
        );
    }
    let data = Dataset::from_table(&table, &recipe.columns).map_err(show)?;
    let fold_col = table.column(&args.fold_column).map_err(show)?;
    let folds: Vec<usize> = (0..table.rows.len())
        .map(|r| {
            table.rows[r][fold_col]
                .trim()
                .parse::<usize>()
                .map_err(|_| {
                    format!(
                        "{}: '{}' is not a fold number",
                        table.at(r, fold_col),
                        table.rows[r][fold_col]
                    )
                })
        })
        .collect::<Result<_, _>>()?;
    let predicted = predict_with_folds(&data, &recipe, &folds).map_err(show)?;
    let mut writer = csv::Writer::from_writer(Vec::new());
    let csv_err = |e: csv::Error| e.to_string();
    writer
        .write_record(["line", "fold", "true", "predicted"])
        .map_err(csv_err)?;
    for (i, &p) in predicted.iter().enumerate() {
        let (line, fold) = (table.lines[i].to_string(), folds[i].to_string());
        writer
            .write_record([&line, &fold, &data.classes[data.y[i]], &data.classes[p]])
            .map_err(csv_err)?;
    }
    let out = String::from_utf8(writer.into_inner().map_err(|e| e.to_string())?)
        .expect("UTF-8 in, UTF-8 out");
    match &args.out {
        Some(path) => write(path, &out),
        None => {
            print!("{out}");
            Ok(())
        }
    }
}
