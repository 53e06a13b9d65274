//! The command-line face: parse flags into a recipe, run the core's tasks on threads, print and write results.

use clap::{Args, Parser, Subcommand};
use indicatif::{ProgressBar, ProgressStyle};
use popdecode::data::Dataset;
use popdecode::decoders::Classifier;
use popdecode::protocol::{predict_with_folds, Outcome, Plan};
use popdecode::recipe::{Folds, Recipe};
use popdecode::report::{methods, plots, text, Report};
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
    /// Cross-validated predictions on fold numbers you supply in a column (no balancing, no repeats).
    Predict(PredictArgs),
}

/// Flags that choose columns and the decoder, shared by every subcommand.
#[derive(Args)]
struct TableArgs {
    /// The trial table (CSV with a header; comma, semicolon or tab separated).
    csv: PathBuf,
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
    /// Decoder: linear-svm or shrinkage-lda [default: linear-svm].
    #[arg(long, value_parser = parse_classifier)]
    classifier: Option<Classifier>,
    /// Regularisation constant C of the linear SVM [default: 1].
    #[arg(long)]
    c: Option<f64>,
}

#[derive(Args)]
struct DecodeArgs {
    #[command(flatten)]
    table: TableArgs,
    /// Column naming the session, block or day; folds never split a group and shuffles stay within groups.
    #[arg(long)]
    group: Option<String>,
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
    /// Write the full result as JSON (schema popdecode-result/1).
    #[arg(long)]
    json: Option<PathBuf>,
    /// Read settings from a recipe file; flags given as well override it.
    #[arg(long)]
    recipe: Option<PathBuf>,
    /// Write the settings used as a recipe file.
    #[arg(long)]
    save_recipe: Option<PathBuf>,
    /// Write the figures (scores.svg, null.svg, confusion.svg) into this folder.
    #[arg(long)]
    plots: Option<PathBuf>,
    /// Print no progress bar.
    #[arg(long)]
    quiet: bool,
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

/// Apply the table flags to a recipe.
fn apply_table_flags(recipe: &mut Recipe, t: &TableArgs) {
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
}

fn decode(args: DecodeArgs) -> Result<(), String> {
    let mut recipe = match &args.recipe {
        Some(path) => {
            let text = String::from_utf8_lossy(&read(path)?).into_owned();
            Recipe::from_json(&display_name(path), &text).map_err(|e| e.to_string())?
        }
        None => Recipe::new(
            args.table
                .label
                .as_deref()
                .ok_or("name the label column with --label <COLUMN>")?,
        ),
    };
    apply_table_flags(&mut recipe, &args.table);
    if let Some(g) = &args.group {
        recipe.columns.group = Some(g.clone());
    }
    if let Some(f) = args.folds {
        recipe.folds = f;
    }
    if let Some(r) = args.repeats {
        recipe.repeats = r;
    }
    if let Some(s) = args.shuffles {
        recipe.shuffles = s;
    }
    if args.shuffle_repeats.is_some() {
        recipe.shuffle_repeats = args.shuffle_repeats;
    }
    recipe.balance &= !args.no_balance;
    if let Some(s) = args.seed {
        recipe.seed = s;
    }
    recipe.validate().map_err(|e| e.to_string())?;

    let bytes = read(&args.table.csv)?;
    let data =
        Dataset::from_csv(&display_name(&args.table.csv), &bytes, &recipe.columns).map_err(show)?;
    let plan = Plan::new(&data, &recipe).map_err(show)?;
    let outcomes = run_tasks(&plan, args.threads, args.quiet)?;
    let report = Report::build(&plan, &outcomes);

    print!("{}", text::render(&report));
    println!("\nMethods:\n{}", methods::paragraph(&report));
    if let Some(path) = &args.json {
        write(path, &(report.to_json() + "\n"))?;
    }
    if let Some(path) = &args.save_recipe {
        write(path, &(recipe.to_json() + "\n"))?;
    }
    if let Some(dir) = &args.plots {
        std::fs::create_dir_all(dir)
            .map_err(|e| format!("{}: cannot create the folder: {e}", dir.display()))?;
        write(&dir.join("scores.svg"), &plots::score_distribution(&report))?;
        write(&dir.join("confusion.svg"), &plots::confusion(&report))?;
        if let Some(null) = plots::null_distribution(&report) {
            write(&dir.join("null.svg"), &null)?;
        }
    }
    Ok(())
}

fn show(e: Error) -> String {
    e.to_string()
}

/// Run every task on a rayon pool. Outcomes are collected by task, so the thread count cannot change them.
fn run_tasks(plan: &Plan, threads: Option<usize>, quiet: bool) -> Result<Vec<Outcome>, String> {
    let tasks = plan.tasks();
    let total: usize = tasks.iter().map(|&t| plan.fits_in(t)).sum();
    let bar = if quiet {
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
    if let Some(n) = threads {
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
            .map(|&t| {
                let o = plan.run(t);
                bar.inc(plan.fits_in(t) as u64);
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
            .label
            .as_deref()
            .ok_or("name the label column with --label <COLUMN>")?,
    );
    apply_table_flags(&mut recipe, &args.table);
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
