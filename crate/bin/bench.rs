//! Benchmark of the standard protocol: prints wall-clock figures, asserts nothing.
//!
//! `popdecode-bench [--trials-csv PATH]`: 232 invented trials × 52 units, 4 odours (58 each), 100 repeats × 5
//! stratified folds, no shuffles, one thread, for each decoder. `--trials-csv` also writes the table so that
//! `scripts/bench_sklearn.py` can time scikit-learn on the identical data and protocol.

use popdecode::data::Dataset;
use popdecode::decoders::Classifier;
use popdecode::protocol::Plan;
use popdecode::recipe::Recipe;
use popdecode::report::run_all;
use popdecode::simulate::{csv, Scenario};
use std::time::Instant;

fn main() {
    let args: Vec<String> = std::env::args().collect();
    let scenario = Scenario {
        trials_per_class: vec![58; 4],
        ..Scenario::odours()
    };
    let table = csv(&scenario);
    if let Some(i) = args.iter().position(|a| a == "--trials-csv") {
        let path = args.get(i + 1).expect("--trials-csv needs a path");
        std::fs::write(path, &table).expect("write the benchmark table");
    }
    for classifier in Classifier::ALL {
        let mut recipe = Recipe::new("odour");
        recipe.columns.ignore = vec!["session".into()];
        recipe.classifier = classifier;
        recipe.shuffles = 0;
        let data =
            Dataset::from_csv("bench.csv", table.as_bytes(), &recipe.columns).expect("valid table");
        let plan = Plan::new(&data, &recipe).expect("valid plan");
        let start = Instant::now();
        let report = run_all(&plan);
        let seconds = start.elapsed().as_secs_f64();
        println!(
            "{:<14} {:>8.3} s for {} trials x {} units, {} repeats x 5 folds (accuracy {:.3})",
            classifier.name(),
            seconds,
            data.n_trials(),
            data.n_features(),
            recipe.repeats,
            report.summary.accuracy.mean
        );
    }
}
