//! Helpers shared by the integration tests: invented data and one-call analyses.
#![allow(dead_code)]

use popdecode::analyses::trial_table::report::Report;
use popdecode::analyses::trial_table::run_all;
use popdecode::analyses::trial_table::Plan;
use popdecode::input;
use popdecode::recipe::Classifier;
use popdecode::recipe::Recipe;
use popdecode::simulate::Scenario;

/// Invented trials with no information about the label: every unit has the same rate in every class.
pub fn no_information(trials_per_class: Vec<usize>, units: usize, seed: u64) -> Scenario {
    Scenario {
        classes: (0..trials_per_class.len())
            .map(|c| format!("c{}", c + 1))
            .collect(),
        trials_per_class,
        units,
        tuning: 0.0,
        tuned_fraction: 0.0,
        blocks_per_class: 0,
        block_offset: 0.0,
        sessions: 1,
        seed,
    }
}

pub fn recipe(classifier: Classifier, repeats: usize, shuffles: usize) -> Recipe {
    let mut r = Recipe::new("odour");
    r.classifier = classifier;
    r.repeats = repeats;
    r.shuffles = shuffles;
    r
}

/// Run a recipe on a scenario's table, ignoring its session/block column unless the recipe names it as groups.
pub fn analyse(scenario: &Scenario, recipe: &Recipe) -> Report {
    let csv = popdecode::simulate::csv(scenario);
    let mut recipe = recipe.clone();
    for col in ["session", "block"] {
        if recipe.columns.group.as_deref() != Some(col) && csv.lines().next().unwrap().contains(col)
        {
            recipe.columns.ignore.push(col.into());
        }
    }
    let data =
        input::trial_table("invented.csv", csv.as_bytes(), &recipe.columns).expect("valid table");
    let plan = Plan::new(data.clone(), &recipe).expect("valid plan");
    run_all(&plan)
}

/// A shuffle control is calibrated: its rejections at α = 0.05 over `datasets` tables without information lie
/// inside the binomial 99 % interval around 0.05 (a permutation p with m = 199 has P(p < 0.05) = 9/200, Phipson &
/// Smyth 2010; ties only lower it). Prints the count, for README.
pub fn assert_calibrated(what: &str, rejections: u64, datasets: u64) {
    use popdecode::stats::binomial;
    let (lo, hi) = (
        binomial::quantile(0.005, datasets, 0.05),
        binomial::quantile(0.995, datasets, 0.05),
    );
    eprintln!("measured, {what}: {rejections} of {datasets} rejected (99 % interval {lo}..={hi})");
    assert!(
        lo <= rejections && rejections <= hi,
        "{what}: {rejections} of {datasets} rejected; 99 % interval {lo}..={hi}"
    );
}

/// Cells of a generalization matrix trained before any information were significant in `hits` of `n` recordings:
/// at most the binomial 99 % upper bound at α = 0.05 (the cluster test's family-wise error over those cells, Maris
/// & Oostenveld 2007); and the information was found in `found` of them, at least `found_percent` %.
pub fn assert_keeps_error_rate(hits: usize, found: usize, n: u64, found_percent: usize) {
    use popdecode::stats::binomial;
    let bound = binomial::quantile(0.995, n, 0.05) as usize;
    assert!(
        hits <= bound,
        "{hits} of {n} recordings had a significant cell trained before 0 s; bound {bound}"
    );
    assert!(
        found * 100 >= n as usize * found_percent,
        "found in {found} of {n}"
    );
}

/// Where a generalization matrix's significant cells lie, for recordings with information only from 0.2 s on:
/// whether a cell trained at a window that ends by 0 s is significant (trained where there is no information), and
/// whether a cell trained and tested inside the information is. `windows` are the (start, end) of each window.
pub fn pre_onset_and_inside(
    g: &popdecode::analyses::time_course::report::Generalization,
    windows: &[(f64, f64)],
) -> (bool, bool) {
    let pre = windows.iter().filter(|w| w.1 <= 1e-9).count();
    let inside = windows
        .iter()
        .position(|w| w.0 >= 0.2 - 1e-9)
        .expect("windows inside the information");
    (
        g.significant[..pre].iter().flatten().any(|&s| s),
        g.significant[inside..]
            .iter()
            .any(|row| row[inside..].iter().any(|&s| s)),
    )
}
