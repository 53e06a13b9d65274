//! Where tasks run on the command line: a rayon pool with a progress bar; then the result is printed and written,
//! or, with `--part K/N`, only that part's tasks run and their outcomes go to a part file (`part.rs`) that
//! `popdecode combine` joins with the others.

use crate::args::{Part, RunArgs};
use crate::files::{print, write};
use crate::inputs::Inputs;
use crate::part;
use indicatif::{ProgressBar, ProgressStyle};
use popdecode::analyses::{Analysis, Finished};
use popdecode::data::SourceFile;
use popdecode::recipe::Recipe;
use rayon::prelude::*;
use std::io::IsTerminal;
use std::path::{Path, PathBuf};

/// A plan and the files it was read from, as its report names them (file name and SHA-256).
pub struct Loaded<P> {
    pub plan: P,
    pub files: Vec<SourceFile>,
}

/// Where a finished result goes: the output flags a single run and `combine` share.
pub struct Outputs<'a> {
    pub json: Option<&'a Path>,
    pub save_recipe: Option<&'a Path>,
    pub plots: Option<&'a Path>,
}

/// Build the plan with the subcommand's `load` (the one `combine` calls too), run every task (or, with `--part`,
/// that part's tasks), then print and write the result (or the part file).
pub fn analyse<P: Analysis>(
    inputs: &Inputs,
    load: fn(&Inputs) -> Result<Loaded<P>, String>,
    run: &RunArgs,
) -> Result<(), String> {
    let part = run.part.map(|p| part_output(run, p)).transpose()?;
    let outputs = Outputs {
        json: run.json.as_deref(),
        save_recipe: run.save_recipe.as_deref(),
        plots: run.plots.as_deref(),
    };
    check_outputs(&outputs, &inputs.paths, run.recipe.as_deref())?;
    threads(run)?;
    let loaded = load(inputs)?;
    let plan = &loaded.plan;
    let tasks = plan.tasks();
    let Some((part, path)) = part else {
        let costs: Vec<usize> = tasks.iter().map(|&t| plan.fits_in(t)).collect();
        let outcomes = run_tasks(&tasks, &costs, |t| plan.run(t), run)?;
        return deliver(&plan.finish(&outcomes), plan.recipe(), &outputs);
    };
    let indices: Vec<usize> = part.indices(tasks.len()).collect();
    let mine: Vec<P::Task> = indices.iter().map(|&i| tasks[i]).collect();
    let costs: Vec<usize> = mine.iter().map(|&t| plan.fits_in(t)).collect();
    let outcomes = run_tasks(&mine, &costs, |t| plan.run(t), run)?;
    part::write(
        path,
        &part::Contents {
            inputs,
            files: &loaded.files,
            part,
            total: tasks.len(),
            indices: &indices,
            tasks: &mine,
            outcomes: &outcomes,
        },
    )?;
    if let Some(recipe_path) = &run.save_recipe {
        write(recipe_path, &(plan.recipe().to_json() + "\n"))?;
    }
    print(&format!(
        "Part {} of {}: {} of the {} tasks, written to {}.\n",
        part.k,
        part.n,
        indices.len(),
        tasks.len(),
        path.display()
    ))
}

/// The part and where its file goes; the flags a part cannot honour are refused before any work starts.
fn part_output(run: &RunArgs, part: Part) -> Result<(Part, &Path), String> {
    if run.plots.is_some() {
        return Err(
            "--plots is for the whole result: give it to 'popdecode combine', not to a part".into(),
        );
    }
    let path = run.json.as_deref().ok_or_else(|| {
        format!(
            "--part writes a part file: name it with --json, e.g. --json part-{}-of-{}.json",
            part.k, part.n
        )
    })?;
    Ok((part, path))
}

/// Refuse, before any work starts, outputs that could only fail or do harm at its end: a file in a folder that does
/// not exist, a folder where a file is asked for (or the reverse), or an output that is one of the files read (the
/// recipe read may be saved again, with the flags given applied).
pub fn check_outputs(
    outputs: &Outputs,
    read_from: &[PathBuf],
    recipe: Option<&Path>,
) -> Result<(), String> {
    let same = |a: &Path, b: &Path| match (a.canonicalize(), b.canonicalize()) {
        (Ok(a), Ok(b)) => a == b,
        _ => false,
    };
    // --save-recipe may rewrite the recipe it read; --json may not.
    for (flag, path, recipe_too) in [
        ("--json", outputs.json, recipe),
        ("--save-recipe", outputs.save_recipe, None),
    ] {
        let Some(path) = path else { continue };
        let mut inputs = read_from.iter().map(PathBuf::as_path).chain(recipe_too);
        if let Some(input) = inputs.find(|i| same(path, i)) {
            return Err(format!(
                "{flag} {}: this is the input file {}; write the result to another file",
                path.display(),
                input.display()
            ));
        }
        if path.is_dir() {
            return Err(format!(
                "{flag} {}: this is a folder; name a file",
                path.display()
            ));
        }
        let folder = path
            .parent()
            .filter(|f| !f.as_os_str().is_empty())
            .unwrap_or(Path::new("."));
        if !folder.is_dir() {
            return Err(format!(
                "{flag} {}: the folder {} does not exist",
                path.display(),
                folder.display()
            ));
        }
    }
    if let Some(dir) = outputs.plots {
        if dir.exists() && !dir.is_dir() {
            return Err(format!(
                "--plots {}: this is a file; name a folder for the figures",
                dir.display()
            ));
        }
    }
    Ok(())
}

/// Most threads `--threads` may ask for: far beyond any machine's cores (each thread costs memory and start-up
/// time, and results do not depend on the count).
const MAX_THREADS: usize = 1024;

/// Check `--threads` before any work starts.
fn threads(run: &RunArgs) -> Result<(), String> {
    match run.threads {
        Some(0) => Err("--threads must be at least 1".into()),
        Some(n) if n > MAX_THREADS => Err(format!(
            "--threads takes at most {MAX_THREADS} (this computer has {}); got {n}",
            std::thread::available_parallelism().map_or(1, |n| n.get())
        )),
        _ => Ok(()),
    }
}

/// Print a finished analysis's text (and methods paragraph), and write the JSON, the recipe and the figures the
/// flags ask for. A single run and `combine` both end here, so they write the same bytes.
pub fn deliver(finished: &Finished, recipe: &Recipe, outputs: &Outputs) -> Result<(), String> {
    let mut text = finished.text.clone();
    if let Some(methods) = &finished.methods {
        text.push_str(&format!("\nMethods:\n{methods}\n"));
    }
    print(&text)?;
    if let Some(path) = outputs.json {
        write(path, &(finished.json.clone() + "\n"))?;
    }
    if let Some(path) = outputs.save_recipe {
        write(path, &(recipe.to_json() + "\n"))?;
    }
    if let Some(dir) = outputs.plots {
        std::fs::create_dir_all(dir)
            .map_err(|e| format!("{}: cannot create the folder: {e}", dir.display()))?;
        for (name, contents) in &finished.files {
            write(&dir.join(name), contents)?;
        }
    }
    Ok(())
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
        builder = builder.num_threads(n);
    }
    let pool = builder
        .build()
        .map_err(|e| format!("cannot start threads: {e}"))?;
    // Where the bar cannot be drawn (a log file, a cluster job's output), the size of the run first and a line at
    // every tenth of the fits instead, so that a long run says how long it is and how far it got.
    let log = (!args.quiet && !std::io::stderr().is_terminal())
        .then(|| LogLines::start(tasks.len(), total));
    let outcomes = pool.install(|| {
        tasks
            .par_iter()
            .zip(costs)
            .map(|(&t, &cost)| {
                let o = run(t);
                bar.inc(cost as u64);
                if let Some(log) = &log {
                    log.done(cost);
                }
                o
            })
            .collect()
    });
    bar.finish_and_clear();
    Ok(outcomes)
}

/// Progress as plain lines on standard error, for when it is not a terminal.
struct LogLines {
    total: usize,
    started: std::time::Instant,
    /// Fits done, and the tenths already reported.
    state: std::sync::Mutex<(usize, usize)>,
}

impl LogLines {
    fn start(tasks: usize, total: usize) -> LogLines {
        say(&format!(
            "popdecode: {total} fits in {tasks} tasks{}",
            if tasks == 1 { "" } else { ", run in parallel" }
        ));
        LogLines {
            total: total.max(1),
            started: std::time::Instant::now(),
            state: std::sync::Mutex::new((0, 0)),
        }
    }

    fn done(&self, cost: usize) {
        let mut state = self.state.lock().unwrap_or_else(|e| e.into_inner());
        state.0 += cost;
        let tenths = state.0 * 10 / self.total;
        let elapsed = self.started.elapsed().as_secs_f64();
        // A run of a few seconds needs no more than its size.
        if tenths > state.1 && tenths < 10 && elapsed >= 10.0 {
            state.1 = tenths;
            let left = elapsed * (self.total - state.0) as f64 / state.0 as f64;
            say(&format!(
                "popdecode: {} % of the fits done, {} elapsed, about {} left",
                tenths * 10,
                duration(elapsed),
                duration(left)
            ));
        }
    }
}

/// A line on standard error that cannot panic when it is closed (`eprintln!` would).
fn say(line: &str) {
    use std::io::Write;
    let _ = writeln!(std::io::stderr(), "{line}");
}

/// Seconds as "42 s", "7 min 5 s" or "3 h 12 min".
fn duration(seconds: f64) -> String {
    let s = seconds.round() as u64;
    match s {
        0..=59 => format!("{s} s"),
        60..=3599 => format!("{} min {} s", s / 60, s % 60),
        _ => format!("{} h {} min", s / 3600, s % 3600 / 60),
    }
}
