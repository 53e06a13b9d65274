//! The one shape every analysis takes on the page: prepare, run tasks in workers, finish.
//!
//! A worker builds a [`Runner`] once per run (the files are read once) and answers task messages with outcome
//! JSON; the page joins the outcome strings unparsed and calls [`finish`], so no number passes through a
//! JavaScript double conversion (serde_json's `float_roundtrip` keeps the parse exact).

use super::request::{err, Request};
use super::{neurons, power, time_course, trial_table};
use crate::analyses::{Analysis, Finished};
use serde_json::{json, Map, Value};
use wasm_bindgen::prelude::*;

/// An analysis behind the page's bridge, with its tasks and outcomes as JSON.
pub(super) trait Job {
    fn prepare(&self) -> Value;
    fn run(&self, task: &str) -> Result<String, JsValue>;
    fn finish(&self, outcomes: &str) -> Result<Finished, JsValue>;
}

impl<A: Analysis> Job for A {
    fn prepare(&self) -> Value {
        let tasks = self.tasks();
        let fits: Vec<usize> = tasks.iter().map(|&t| self.fits_in(t)).collect();
        let mut out = json!({ "tasks": tasks, "fits": fits });
        if let Value::Object(more) = self.overview() {
            out.as_object_mut().expect("an object").extend(more);
        }
        out
    }

    fn run(&self, task: &str) -> Result<String, JsValue> {
        let task: A::Task =
            serde_json::from_str(task).map_err(|e| err(format!("malformed task: {e}")))?;
        Ok(serde_json::to_string(&Analysis::run(self, task)).expect("outcomes serialise"))
    }

    fn finish(&self, outcomes: &str) -> Result<Finished, JsValue> {
        let outcomes: Vec<A::Outcome> = serde_json::from_str(outcomes)
            .map_err(|e| err(format!("outcomes are malformed: {e}")))?;
        Ok(Analysis::finish(self, &outcomes))
    }
}

fn load(
    kind: &str,
    name_a: &str,
    bytes_a: &[u8],
    name_b: &str,
    bytes_b: &[u8],
    recipe_json: &str,
    options_json: &str,
) -> Result<Box<dyn Job>, JsValue> {
    let request = Request::new(name_a, bytes_a, name_b, bytes_b, recipe_json, options_json)?;
    match kind {
        "table" => Ok(Box::new(trial_table::load(request)?)),
        "time" => Ok(Box::new(time_course::load(request)?)),
        "neurons" => Ok(Box::new(neurons::load(request)?)),
        "power" => Ok(Box::new(power::load(request)?)),
        other => Err(err(format!("unknown kind of analysis '{other}'"))),
    }
}

/// Check the files against a recipe: the tasks with their cost in fits, and what the analysis shows before running
/// (classes, counts, warnings).
#[wasm_bindgen]
pub fn prepare(
    kind: &str,
    name_a: &str,
    bytes_a: &[u8],
    name_b: &str,
    bytes_b: &[u8],
    recipe_json: &str,
    options_json: &str,
) -> Result<String, JsValue> {
    let job = load(
        kind,
        name_a,
        bytes_a,
        name_b,
        bytes_b,
        recipe_json,
        options_json,
    )?;
    Ok(job.prepare().to_string())
}

/// Runs one analysis's tasks in a worker: the files are read once per run.
#[wasm_bindgen]
pub struct Runner {
    job: Box<dyn Job>,
}

#[wasm_bindgen]
impl Runner {
    #[wasm_bindgen(constructor)]
    pub fn new(
        kind: &str,
        name_a: &str,
        bytes_a: &[u8],
        name_b: &str,
        bytes_b: &[u8],
        recipe_json: &str,
        options_json: &str,
    ) -> Result<Runner, JsValue> {
        Ok(Runner {
            job: load(
                kind,
                name_a,
                bytes_a,
                name_b,
                bytes_b,
                recipe_json,
                options_json,
            )?,
        })
    }

    /// One task (JSON, as `prepare` listed it) run to its outcome (JSON).
    pub fn run(&self, task_json: &str) -> Result<String, JsValue> {
        self.job.run(task_json)
    }
}

/// Assemble the outcomes (a JSON array) into the result: `report` (parsed), `report_json` (the bytes the CLI writes
/// with `--json`), `headline`, `text`, `methods`, and the figures (`plots`, SVG) and tables (`csv`) by name.
#[allow(clippy::too_many_arguments)]
#[wasm_bindgen]
pub fn finish(
    kind: &str,
    name_a: &str,
    bytes_a: &[u8],
    name_b: &str,
    bytes_b: &[u8],
    recipe_json: &str,
    options_json: &str,
    outcomes_json: &str,
) -> Result<String, JsValue> {
    let job = load(
        kind,
        name_a,
        bytes_a,
        name_b,
        bytes_b,
        recipe_json,
        options_json,
    )?;
    let f = job.finish(outcomes_json)?;
    let (mut plots, mut csv) = (Map::new(), Map::new());
    for (name, contents) in f.files {
        match name.rsplit_once('.') {
            Some((stem, "svg")) => plots.insert(stem.to_string(), contents.into()),
            Some((stem, _)) => csv.insert(stem.to_string(), contents.into()),
            None => None,
        };
    }
    let report: Value = serde_json::from_str(&f.json).expect("a report is JSON");
    Ok(json!({
        "report": report,
        "report_json": f.json,
        "headline": f.headline,
        "text": f.text,
        "methods": f.methods,
        "plots": plots,
        "csv": csv,
    })
    .to_string())
}
