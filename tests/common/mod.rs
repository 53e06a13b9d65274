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
