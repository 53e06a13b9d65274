//! Benchmarks: print wall-clock figures, assert nothing.
//!
//! `popdecode-bench [--trials-csv PATH]`: the standard trial-table protocol, 232 invented trials × 52 units,
//! 4 odours (58 each), 100 repeats × 5 stratified folds, no shuffles, one thread, for each decoder.
//! `--trials-csv` also writes the table so that `scripts/bench_sklearn.py` can time scikit-learn on the identical
//! data and protocol.
//!
//! `popdecode-bench rbf [--trials-csv PATH]`: the Gaussian-kernel SVM on the large case, 1000 invented trials × 300
//! units, 4 odours, 10 repeats × 5 folds, one thread (`scripts/bench_sklearn.py TABLE rbf` times SVC on it).
//!
//! `popdecode-bench grid [--shapes 248x100,1000x400,...] [--tables DIR] [--repeats N] [--decoders NAMES]`: the
//! linear SVM and shrinkage LDA at every shape of a grid of trials × neurons (default [`GRID`]), 4 odours with equal
//! counts, weak information in 10 of the neurons (the rest carry none), 10 repeats × 5 stratified folds, no
//! shuffles, one thread. One line per (decoder, shape). `--tables DIR` also writes each shape's table as
//! `DIR/TRIALSxNEURONS.csv` for `scripts/bench_sklearn.py grid DIR SHAPES`.
//! `popdecode-bench grid-shapes`: the default grid, comma-separated (for `scripts/bench.sh`).
//!
//! `popdecode-bench timecourse [--trials N] [--units N] [--windows N] [--repeats N] [--shuffles N]
//! [--shuffle-repeats N] [--classifier NAME] [--threads N] [--generalize] [--binned-csv PATH]`: the time-resolved
//! protocol on an invented recording built in
//! memory (defaults: the target case, 1000 trials × 300 units × 40 windows, 5 folds × 10 repeats,
//! 200 shuffles × 10 repeats, shrinkage LDA, every core). Prints the time and the fits per second.

/// In the statically linked (musl) build, an allocator that keeps freed memory for reuse (Cargo.toml says why).
#[cfg(target_env = "musl")]
#[global_allocator]
static ALLOCATOR: dlmalloc::GlobalDlmalloc = dlmalloc::GlobalDlmalloc;

use popdecode::analyses::time_course::{TimePlan, TimeReport};
use popdecode::analyses::trial_table::{run_all, Plan};
use popdecode::data::time::TimeDataset;
use popdecode::input;
use popdecode::recipe::windows::Window;
use popdecode::recipe::{Classifier, Recipe, TimeSettings};
use popdecode::simulate::{binned_trials, csv, Scenario, TimeScenario};
use rayon::prelude::*;
use std::time::Instant;

fn main() {
    popdecode::memory::keep_freed_memory();
    let args: Vec<String> = std::env::args().collect();
    match args.get(1).map(String::as_str) {
        Some("timecourse") => timecourse(&args[2..]),
        Some("rbf") => rbf(&args[2..]),
        Some("grid") => grid(&args[2..]),
        Some("grid-shapes") => println!("{GRID}"),
        Some("kernels") => kernels(&args[2..]),
        _ => trial_table(&args),
    }
}

fn trial_table(args: &[String]) {
    let scenario = Scenario {
        trials_per_class: vec![58; 4],
        ..Scenario::odours()
    };
    let table = csv(&scenario);
    if let Some(i) = args.iter().position(|a| a == "--trials-csv") {
        let path = args.get(i + 1).expect("--trials-csv needs a path");
        std::fs::write(path, &table).expect("write the benchmark table");
    }
    for classifier in [Classifier::LinearSvm, Classifier::ShrinkageLda] {
        let mut recipe = Recipe::new("odour");
        recipe.columns.ignore = vec!["session".into()];
        recipe.classifier = classifier;
        recipe.shuffles = 0;
        let data = input::trial_table("bench.csv", table.as_bytes(), &recipe.columns)
            .expect("valid table");
        let plan = Plan::new(data, &recipe).expect("valid plan");
        let start = Instant::now();
        let report = run_all(&plan);
        let seconds = start.elapsed().as_secs_f64();
        println!(
            "{:<14} {:>8.3} s for {} trials x {} units, {} repeats x 5 folds (accuracy {:.3})",
            classifier.name(),
            seconds,
            plan.data.n_trials(),
            plan.data.n_features(),
            recipe.repeats,
            report.summary.accuracy.mean
        );
    }
}

fn rbf(args: &[String]) {
    let scenario = Scenario {
        trials_per_class: vec![250; 4],
        units: 300,
        tuning: 0.08,
        ..Scenario::odours()
    };
    let table = csv(&scenario);
    if let Some(i) = args.iter().position(|a| a == "--trials-csv") {
        let path = args.get(i + 1).expect("--trials-csv needs a path");
        std::fs::write(path, &table).expect("write the benchmark table");
    }
    let mut recipe = Recipe::new("odour");
    recipe.columns.ignore = vec!["session".into()];
    recipe.classifier = Classifier::RbfSvm;
    recipe.repeats = 10;
    recipe.shuffles = 0;
    let data =
        input::trial_table("bench.csv", table.as_bytes(), &recipe.columns).expect("valid table");
    let plan = Plan::new(data, &recipe).expect("valid plan");
    let start = Instant::now();
    let report = run_all(&plan);
    println!(
        "rbf-svm        {:>8.3} s for {} trials x {} units, {} repeats x 5 folds (accuracy {:.3})",
        start.elapsed().as_secs_f64(),
        plan.data.n_trials(),
        plan.data.n_features(),
        recipe.repeats,
        report.summary.accuracy.mean
    );
}

/// Trials × neurons of the grid: the corners and middle of trials 250–4000 × neurons 50–1000, and the shapes where
/// the speed lead was lost before (issue 18's table). Trials are a multiple of 4 (equal classes).
pub const GRID: &str =
    "248x50,248x100,248x1000,400x200,1000x50,1000x100,1000x400,1000x1000,2000x400,4000x50,4000x200,4000x1000";

/// The table of one grid shape: 4 odours with `trials / 4` trials each, `neurons` units of which 10 carry weak
/// odour tuning (log-rate SD 0.3) and the rest none.
fn grid_table(trials: usize, neurons: usize) -> String {
    csv(&Scenario {
        trials_per_class: vec![trials / 4; 4],
        units: neurons,
        tuning: 0.3,
        tuned_fraction: 10.0 / neurons as f64,
        ..Scenario::odours()
    })
}

fn grid(args: &[String]) {
    let text = |name: &str, default: &str| {
        args.iter()
            .position(|a| a == name)
            .and_then(|i| args.get(i + 1))
            .map_or(default.to_string(), String::clone)
    };
    let shapes = text("--shapes", GRID);
    let decoders = text("--decoders", "linear-svm,shrinkage-lda");
    let tables = args
        .iter()
        .position(|a| a == "--tables")
        .map(|i| args.get(i + 1).expect("--tables needs a folder"));
    for shape in shapes.split(',') {
        let (trials, neurons) = shape.split_once('x').expect("shapes as TRIALSxNEURONS");
        let (trials, neurons): (usize, usize) = (
            trials.parse().expect("a whole number"),
            neurons.parse().expect("a whole number"),
        );
        let table = grid_table(trials, neurons);
        if let Some(dir) = tables {
            std::fs::write(format!("{dir}/{shape}.csv"), &table).expect("write the grid table");
        }
        for name in decoders.split(',') {
            let mut recipe = Recipe::new("odour");
            recipe.columns.ignore = vec!["session".into()];
            recipe.classifier = Classifier::from_name(name).expect("a decoder name");
            recipe.repeats = flag(args, "--repeats", 10);
            recipe.shuffles = 0;
            let data = input::trial_table("bench.csv", table.as_bytes(), &recipe.columns)
                .expect("valid table");
            let plan = Plan::new(data, &recipe).expect("valid plan");
            let (start, cpu) = (Instant::now(), cpu_seconds());
            let report = run_all(&plan);
            println!(
                "grid {:<14} {:>9} {:>9.3} s (accuracy {:.3}; {:.3} s on the processor)",
                name,
                shape,
                start.elapsed().as_secs_f64(),
                report.summary.accuracy.mean,
                cpu_seconds() - cpu
            );
        }
    }
}

/// Multiply-adds per second of the Gram and Cholesky kernels at a few sizes, on the instruction set chosen at run
/// time (`POPDECODE_SIMD=baseline` for the baseline).
fn kernels(args: &[String]) {
    use popdecode::decoders::{linalg, simd};
    println!("kernels on {}", simd::level_name());
    let once = args.iter().any(|a| a == "--once");
    let sizes: Vec<usize> = args.iter().filter_map(|a| a.parse().ok()).collect();
    let sizes = if sizes.is_empty() {
        vec![53, 201, 401, 1001]
    } else {
        sizes
    };
    for p in sizes {
        let n = 800;
        let z: Vec<f64> = (0..n * p)
            .map(|i| ((i * 7919) % 1000) as f64 / 1000.0 - 0.5)
            .collect();
        let reps = if once {
            1
        } else {
            (2e9 / (n * p * p) as f64).ceil() as usize
        };
        let (start, cpu) = (Instant::now(), cpu_seconds());
        let mut g = Vec::new();
        for _ in 0..reps {
            g = linalg::gram(&z, n, p);
        }
        let (wall, used) = (start.elapsed().as_secs_f64(), cpu_seconds() - cpu);
        let macs = (reps * n * p * (p + 1) / 2) as f64;
        println!(
            "gram {n} x {p}: {:.2} G multiply-adds/s ({:.2} per processor second)",
            macs / wall * 1e-9,
            macs / used * 1e-9
        );
        for i in 0..p {
            g[i * p + i] += 1.0;
        }
        let reps = if once {
            1
        } else {
            (2e9 / (p * p * p) as f64).ceil() as usize
        };
        let (start, cpu) = (Instant::now(), cpu_seconds());
        for _ in 0..reps {
            linalg::cholesky(&g, p).expect("positive definite");
        }
        let (wall, used) = (start.elapsed().as_secs_f64(), cpu_seconds() - cpu);
        let macs = (reps * p * p * p / 6) as f64;
        println!(
            "cholesky {p}: {:.2} G multiply-adds/s ({:.2} per processor second)",
            macs / wall * 1e-9,
            macs / used * 1e-9
        );
    }
}

/// Time this thread has spent running (Linux: /proc/thread-self/schedstat; 0 elsewhere). On a shared machine it
/// varies less than the wall clock, which counts the time other processes hold the processor.
fn cpu_seconds() -> f64 {
    std::fs::read_to_string("/proc/thread-self/schedstat")
        .ok()
        .and_then(|s| s.split_whitespace().next()?.parse::<f64>().ok())
        .map_or(0.0, |ns| ns * 1e-9)
}

fn flag(args: &[String], name: &str, default: usize) -> usize {
    args.iter()
        .position(|a| a == name)
        .and_then(|i| args.get(i + 1))
        .map_or(default, |v| v.parse().expect("a whole number"))
}

/// An invented recording of `windows` bins of 50 ms, built in memory (the CSV of the target case is ~100 MB).
fn recording(trials: usize, units: usize, windows: usize) -> TimeDataset {
    let bin = 0.05;
    let scenario = TimeScenario {
        classes: ["citral", "eugenol", "hexanal", "limonene"]
            .map(String::from)
            .to_vec(),
        trials_per_class: trials / 4,
        units,
        start: -0.5,
        end: -0.5 + bin * windows as f64,
        ..TimeScenario::odours()
    };
    let n = scenario.trials_per_class * 4;
    let mut x = ndarray::Array3::<f64>::zeros((windows, n, units));
    let mut y = vec![0; n];
    let mut times = vec![0.0; windows];
    binned_trials(&scenario, bin, |b| {
        y[b.trial] = b.class;
        times[b.bin] = b.centre;
        for (u, &r) in b.rates.iter().enumerate() {
            x[[b.bin, b.trial, u]] = r;
        }
    });
    TimeDataset {
        source: "bench".into(),
        files: Vec::new(),
        x: x.into_shared(),
        windows: times
            .iter()
            .map(|&t| Window {
                start: t,
                end: t,
                time: t,
            })
            .collect(),
        trial_ids: (0..n).map(|i| format!("t{i}")).collect(),
        y,
        classes: scenario.classes.clone(),
        groups: None,
        group_names: Vec::new(),
        neurons: (0..units).map(|u| format!("u{u}")).collect(),
        label_column: "odour".into(),
        group_column: None,
        spikes_outside: 0,
        spikes_total: 0,
        warnings: Vec::new(),
    }
}

/// The recording as a binned table (one row per trial × window), for timing the page on the same case
/// (scripts/bench-page-timecourse.sh); rates with 3 decimals.
fn binned_csv(data: &TimeDataset) -> String {
    let mut out = String::from("trial,time,odour");
    for u in &data.neurons {
        out.push(',');
        out.push_str(u);
    }
    out.push('\n');
    for (w, window) in data.windows.iter().enumerate() {
        let x = data.window(w);
        for (i, &c) in data.y.iter().enumerate() {
            out.push_str(&format!("{i},{},{}", window.time, data.classes[c]));
            for v in &x[i * data.n_neurons()..(i + 1) * data.n_neurons()] {
                out.push_str(&format!(",{v:.3}"));
            }
            out.push('\n');
        }
    }
    out
}

fn timecourse(args: &[String]) {
    let (trials, units, windows) = (
        flag(args, "--trials", 1000),
        flag(args, "--units", 300),
        flag(args, "--windows", 40),
    );
    let classifier = args
        .iter()
        .position(|a| a == "--classifier")
        .and_then(|i| args.get(i + 1))
        .map_or(Classifier::ShrinkageLda, |n| {
            Classifier::from_name(n).expect("a decoder name")
        });
    let data = recording(trials, units, windows);
    if let Some(i) = args.iter().position(|a| a == "--binned-csv") {
        let path = args.get(i + 1).expect("--binned-csv needs a path");
        std::fs::write(path, binned_csv(&data)).expect("write the binned table");
    }
    let mut recipe = Recipe::new("odour");
    recipe.classifier = classifier;
    recipe.repeats = flag(args, "--repeats", 10);
    recipe.shuffles = flag(args, "--shuffles", 200);
    if args.iter().any(|a| a == "--shuffle-repeats") {
        recipe.shuffle_repeats = Some(flag(args, "--shuffle-repeats", 10));
    }
    let mut settings = TimeSettings::binned("trial", "time");
    settings.generalize = args.iter().any(|a| a == "--generalize");
    recipe.time = Some(settings);
    let (n_trials, units_kept) = (data.n_trials(), data.n_neurons());
    let plan = TimePlan::new(data, &recipe).expect("valid plan");
    let tasks = plan.tasks();
    let fits: usize = tasks.iter().map(|&t| plan.fits_in(t)).sum();
    let pool = rayon::ThreadPoolBuilder::new()
        .num_threads(flag(args, "--threads", 0))
        .build()
        .expect("threads");
    let start = Instant::now();
    let outcomes: Vec<_> = pool.install(|| tasks.par_iter().map(|&t| plan.run(t)).collect());
    let seconds = start.elapsed().as_secs_f64();
    let report = TimeReport::build(&plan, &outcomes);
    let peak = report.curve().iter().copied().fold(0.0, f64::max);
    println!(
        "timecourse {} {:>8.2} s for {} trials x {} units x {} windows, {} repeats + {} shuffles x {} repeats, \
         {} fits ({:.0} fits/s, {} threads; peak accuracy {:.3})",
        classifier.name(),
        seconds,
        n_trials,
        units_kept,
        windows,
        recipe.repeats,
        recipe.shuffles,
        recipe.shuffle_repeats(),
        fits,
        fits as f64 / seconds,
        pool.current_num_threads(),
        peak
    );
}
