//! Where tasks run on the command line: a rayon pool with a progress bar; then the result is printed and written.

use crate::args::RunArgs;
use crate::files::{print, write};
use indicatif::{ProgressBar, ProgressStyle};
use popdecode::analyses::{Analysis, Finished};
use popdecode::recipe::Recipe;
use rayon::prelude::*;

/// Run every task of an analysis, print its text (and methods paragraph), and write what the flags ask for.
pub fn analyse(plan: &impl Analysis, run: &RunArgs) -> Result<(), String> {
    let tasks = plan.tasks();
    let costs: Vec<usize> = tasks.iter().map(|&t| plan.fits_in(t)).collect();
    let outcomes = run_tasks(&tasks, &costs, |t| plan.run(t), run)?;
    let finished = plan.finish(&outcomes);
    let mut text = finished.text.clone();
    if let Some(methods) = &finished.methods {
        text.push_str(&format!("\nMethods:\n{methods}\n"));
    }
    print(&text)?;
    write_outputs(run, plan.recipe(), &finished)
}

/// Write the JSON, the recipe and the figures a run asked for.
fn write_outputs(run: &RunArgs, recipe: &Recipe, finished: &Finished) -> Result<(), String> {
    if let Some(path) = &run.json {
        write(path, &(finished.json.clone() + "\n"))?;
    }
    if let Some(path) = &run.save_recipe {
        write(path, &(recipe.to_json() + "\n"))?;
    }
    if let Some(dir) = &run.plots {
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
