//! The one shape every analysis takes on the page: read the data once, prepare, run tasks in workers, finish.
//!
//! The page's data worker holds a [`Loaded`]: the file read once for the recipe's columns (or windows). From it,
//! `prepare` checks the design and lists the tasks, `header` and `matrix_part` hand the decoded data to run workers
//! (in parts, into a [`MatrixIn`]; or, when the page's workers share one memory, by a ticket: `share`), and
//! `finish` assembles the outcomes into the result. A run worker keeps the decoded data as a [`Held`], builds a
//! [`Runner`] on it for each run and answers task messages with outcome JSON; the page joins the outcome strings
//! unparsed, so no number passes through a JavaScript double conversion (serde_json's `float_roundtrip` keeps the
//! parse exact).

use super::data::{self, Decoded};
use super::dropped::DroppedFile;
use super::request::{err, options, recipe, Files, Request};
use super::{across, continuous, neurons, power, study, time_course, trial_table};
use crate::analyses::{Analysis, Finished};
use crate::recipe::Recipe;
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

/// The analysis `kind` ("table", "time", "neurons", "power", "study", "across" or "continuous") on decoded data.
fn job(
    kind: &str,
    data: Decoded,
    recipe: &Recipe,
    options: &Value,
) -> Result<Box<dyn Job>, JsValue> {
    match kind {
        "table" => Ok(Box::new(trial_table::plan(data, recipe)?)),
        "time" => Ok(Box::new(time_course::plan(data, recipe)?)),
        "neurons" => Ok(Box::new(neurons::plan(data, recipe, options)?)),
        "study" => Ok(Box::new(study::plan(data, recipe, options)?)),
        "across" => Ok(Box::new(across::plan(data, recipe)?)),
        "continuous" => Ok(Box::new(continuous::plan(data, recipe)?)),
        "power" => Ok(Box::new(power::plan(data, recipe)?)),
        other => Err(err(format!("unknown kind of analysis '{other}'"))),
    }
}

/// A file (or two) read once in the page's data worker, for the columns and windows of a recipe.
#[wasm_bindgen]
pub struct Loaded {
    data: Decoded,
}

#[wasm_bindgen]
impl Loaded {
    /// Read the files as analysis `kind` reads them (every check of the file happens here).
    #[wasm_bindgen(constructor)]
    pub fn new(
        kind: &str,
        name_a: &str,
        bytes_a: &[u8],
        name_b: &str,
        bytes_b: &[u8],
        recipe_json: &str,
    ) -> Result<Loaded, JsValue> {
        let request = Request::new(name_a, bytes_a, name_b, bytes_b, recipe_json)?;
        Ok(Loaded {
            data: data::load(kind, &request)?,
        })
    }

    /// The dropped trial table of `size` bytes for analysis `kind` (of the trial-table family), read in pieces from
    /// the worker's copy (`wasm/dropped.rs`): the core never holds the file's bytes beside the matrix decoded from
    /// them.
    pub fn from_dropped(
        kind: &str,
        name: &str,
        size: f64,
        recipe_json: &str,
    ) -> Result<Loaded, JsValue> {
        if data::family(kind)? != "table" {
            return Err(err(format!(
                "the '{kind}' analysis does not read a trial table"
            )));
        }
        let recipe = recipe(recipe_json)?;
        let table = crate::input::trial_table(name, &DroppedFile::new(size), &recipe.columns);
        Ok(Loaded {
            data: Decoded::Table(table.map_err(err)?),
        })
    }

    /// The decoded data of a ticket from [`Loaded::share`] (shared memory: a worker that read and decoded a large
    /// file for this one and then ended, taking the file's bytes with it; www/worker.js).
    pub fn from_ticket(ticket: u32) -> Result<Loaded, JsValue> {
        Ok(Loaded {
            data: super::shared::take(ticket)?,
        })
    }

    /// Any number of named files (a study's table and sessions) for an analysis that reads files as they are
    /// (`study`; also `across` and `continuous`, which [`Loaded::new`] takes as one or two files).
    pub fn with_files(kind: &str, files: &Files, recipe_json: &str) -> Result<Loaded, JsValue> {
        if super::data::family(kind)? != "files" {
            return Err(err(format!(
                "the '{kind}' analysis reads one file, or spike events and their trial table"
            )));
        }
        recipe(recipe_json)?;
        Ok(Loaded {
            data: Decoded::Files(files.clone()),
        })
    }

    /// The bytes of file `i` of an analysis that reads files (empty for the others): what a run worker gets with
    /// [`Runner::with_files`].
    pub fn file(&self, i: usize) -> Vec<u8> {
        match &self.data {
            Decoded::Files(f) => f.file(i).to_vec(),
            _ => Vec::new(),
        }
    }

    /// Check the design against a recipe: the tasks with their cost in fits, and what the analysis shows before
    /// running (classes, counts, warnings, and the groups' column and names).
    pub fn prepare(
        &self,
        kind: &str,
        recipe_json: &str,
        options_json: &str,
    ) -> Result<String, JsValue> {
        let job = job(
            kind,
            self.data.clone(),
            &recipe(recipe_json)?,
            &options(options_json)?,
        )?;
        let mut out = job.prepare();
        // The page says the cross-validation scheme in words before a run: it needs the groups.
        let (column, names) = self.data.groups();
        out["group_column"] = column.into();
        out["group_names"] = names.into();
        Ok(out.to_string())
    }

    /// The decoded data but the matrix, as JSON.
    pub fn header(&self) -> String {
        self.data.header()
    }

    /// Values `from..from + len` of the decoded matrix in memory order (cut at its end), and how many values it
    /// has: a part the page transfers to a run worker's [`MatrixIn`]. Parts of a few megabytes keep both sides from
    /// holding a second whole copy of a large matrix on the way.
    pub fn matrix_part(&self, from: usize, len: usize) -> MatrixPart {
        let values = self.data.values();
        let from = from.min(values.len());
        let to = from.saturating_add(len).min(values.len());
        MatrixPart {
            total: values.len(),
            values: values[from..to].to_vec(),
        }
    }

    /// A ticket by which a run worker sharing this worker's memory takes the decoded data without a copy
    /// ([`Held::from_ticket`]; `wasm/shared.rs` says when the page shares memory).
    pub fn share(&self) -> Result<u32, JsValue> {
        super::shared::share(&self.data)
    }

    /// Assemble the outcomes (a JSON array) into the result: `report` (parsed), `report_json` (the bytes the CLI
    /// writes with `--json`), `headline`, `text`, `methods`, and the figures (`plots`, SVG) and tables (`csv`) by
    /// name.
    pub fn finish(
        &self,
        kind: &str,
        recipe_json: &str,
        options_json: &str,
        outcomes_json: &str,
    ) -> Result<String, JsValue> {
        let job = job(
            kind,
            self.data.clone(),
            &recipe(recipe_json)?,
            &options(options_json)?,
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
}

/// A part of a decoded matrix on its way to a run worker, with the matrix's size.
#[wasm_bindgen]
pub struct MatrixPart {
    total: usize,
    values: Vec<f64>,
}

#[wasm_bindgen]
impl MatrixPart {
    /// How many values the whole matrix has.
    #[wasm_bindgen(getter)]
    pub fn total(&self) -> usize {
        self.total
    }

    /// This part's values (a `Float64Array`, which the page transfers).
    pub fn values(self) -> Vec<f64> {
        self.values
    }
}

/// A run worker's decoded matrix, filled part by part ([`Loaded::matrix_part`]) before [`Held::new`] takes it.
#[wasm_bindgen]
pub struct MatrixIn {
    values: Vec<f64>,
    total: usize,
}

#[wasm_bindgen]
impl MatrixIn {
    /// Room for `total` values, reserved at once (a matrix this worker cannot hold is said here, not found by
    /// running out of memory half way).
    #[wasm_bindgen(constructor)]
    pub fn new(total: usize) -> Result<MatrixIn, JsValue> {
        let mut values = Vec::new();
        values.try_reserve_exact(total).map_err(|_| {
            err(format!(
                "a run worker cannot hold the decoded data ({} MB): use fewer workers or fewer trials, neurons or \
                 windows",
                total.saturating_mul(8) / 1_000_000
            ))
        })?;
        Ok(MatrixIn { values, total })
    }

    /// The next part, in memory order.
    pub fn put(&mut self, part: &[f64]) -> Result<(), JsValue> {
        if self.values.len() + part.len() > self.total {
            return Err(err(
                "malformed decoded data: more values than the matrix has",
            ));
        }
        self.values.extend_from_slice(part);
        Ok(())
    }
}

/// The decoded data a run worker holds, built once from its parts: the page keeps a worker with small data warm
/// between runs on the same data, and each run's [`Runner`] shares it (no copy).
#[wasm_bindgen]
pub struct Held {
    data: Decoded,
}

#[wasm_bindgen]
impl Held {
    /// `header` as [`Loaded::header`] gave it and the matrix filled from [`Loaded::matrix_part`] (moved in, not
    /// copied again).
    #[wasm_bindgen(constructor)]
    pub fn new(header: &str, matrix: MatrixIn) -> Result<Held, JsValue> {
        if matrix.values.len() != matrix.total {
            return Err(err("malformed decoded data: the matrix arrived incomplete"));
        }
        Ok(Held {
            data: Decoded::from_parts(header, matrix.values)?,
        })
    }

    /// The decoded data of a ticket from [`Loaded::share`], in the memory this worker shares with the data worker
    /// (the matrix shared, not copied).
    pub fn from_ticket(ticket: u32) -> Result<Held, JsValue> {
        Ok(Held {
            data: super::shared::take(ticket)?,
        })
    }
}

/// Runs one analysis's tasks in a run worker, on the decoded data the page handed it once.
#[wasm_bindgen]
pub struct Runner {
    job: Box<dyn Job>,
}

#[wasm_bindgen]
impl Runner {
    /// A runner for analysis `kind` on the data the worker holds (shared, not copied).
    #[wasm_bindgen(constructor)]
    pub fn new(
        kind: &str,
        held: &Held,
        recipe_json: &str,
        options_json: &str,
    ) -> Result<Runner, JsValue> {
        let data = held.data.clone();
        Ok(Runner {
            job: job(kind, data, &recipe(recipe_json)?, &options(options_json)?)?,
        })
    }

    /// A runner for an analysis that reads files (`study`, `across`, `continuous`): the files as the data worker
    /// holds them ([`Loaded::file`]).
    pub fn with_files(
        kind: &str,
        files: &Files,
        recipe_json: &str,
        options_json: &str,
    ) -> Result<Runner, JsValue> {
        Ok(Runner {
            job: job(
                kind,
                Decoded::Files(files.clone()),
                &recipe(recipe_json)?,
                &options(options_json)?,
            )?,
        })
    }

    /// One task (JSON, as `prepare` listed it) run to its outcome (JSON).
    pub fn run(&self, task_json: &str) -> Result<String, JsValue> {
        self.job.run(task_json)
    }
}
