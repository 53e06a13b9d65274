//! The page's bridge to the core (wasm-bindgen). Plain strings in and out (JSON), so the surface stays small.
//!
//! Nothing here may panic across the boundary unnoticed: every fallible call returns `Result<_, JsValue>` with the
//! core's message, and a panic hook records the message of any bug, which the page reads with [`last_panic`] when
//! the wasm instance traps, instead of dying silently.

use crate::data::table::{Cell, Table};
use crate::data::{sha256_hex, Dataset};
use crate::neurons::{plots as neuron_plots, NeuronOutcome, NeuronTask, NeuronsPlan};
use crate::protocol::{Outcome, Plan, Task};
use crate::recipe::Recipe;
use crate::report::{methods, plots, text, Report};
use crate::timecourse::data::{FileBytes, TimeDataset};
use crate::timecourse::plan::{TimeOutcome, TimePlan};
use crate::timecourse::plots as tc_plots;
use crate::timecourse::report::TimeReport;
use crate::timecourse::text as tc_text;
use serde_json::json;
use std::sync::Mutex;
use wasm_bindgen::prelude::*;

static PANIC: Mutex<String> = Mutex::new(String::new());

fn err(e: impl std::fmt::Display) -> JsValue {
    JsValue::from_str(&e.to_string())
}

/// Install the panic recorder; the page calls this once per instance.
#[wasm_bindgen]
pub fn start() {
    std::panic::set_hook(Box::new(|info| {
        if let Ok(mut m) = PANIC.lock() {
            *m = info.to_string();
        }
    }));
}

/// The message of the last panic, if any (read after a trap).
#[wasm_bindgen]
pub fn last_panic() -> String {
    PANIC.lock().map(|m| m.clone()).unwrap_or_default()
}

#[wasm_bindgen]
pub fn version() -> String {
    env!("CARGO_PKG_VERSION").to_string()
}

/// A first look at a file: header, first rows, which columns are numeric, and a suggested label column.
#[wasm_bindgen]
pub fn inspect(name: &str, bytes: &[u8]) -> Result<String, JsValue> {
    let t = Table::parse(name, bytes).map_err(err)?;
    let numeric: Vec<bool> = (0..t.headers.len())
        .map(|c| {
            let (mut num, mut txt) = (0, 0);
            for r in 0..t.rows.len() {
                match t.cell(r, c) {
                    Cell::Number(_) => num += 1,
                    Cell::NotNumber => txt += 1,
                    Cell::Missing => {}
                }
            }
            num > txt
        })
        .collect();
    let label = (0..t.headers.len())
        .find(|&c| !numeric[c] && distinct(&t, c) < t.rows.len())
        .or(Some(0));
    Ok(json!({
        "file": name,
        "sha256": sha256_hex(bytes),
        "delimiter": t.delimiter_name(),
        "decimal_comma": t.decimal_comma,
        "headers": t.headers,
        "numeric": numeric,
        "rows": t.rows.len(),
        "preview": t.rows.iter().take(8).collect::<Vec<_>>(),
        "suggested_label": label.map(|c| t.headers[c].clone()),
    })
    .to_string())
}

fn distinct(t: &Table, c: usize) -> usize {
    let mut v: Vec<&str> = t.rows.iter().map(|r| r[c].as_str()).collect();
    v.sort_unstable();
    v.dedup();
    v.len()
}

fn load(name: &str, bytes: &[u8], recipe_json: &str) -> Result<(Dataset, Recipe), JsValue> {
    let recipe = Recipe::from_json("recipe", recipe_json).map_err(err)?;
    let data = Dataset::from_csv(name, bytes, &recipe.columns).map_err(err)?;
    Ok((data, recipe))
}

/// Check a file against a recipe; list the tasks with their cost in fits, the classes and the warnings.
#[wasm_bindgen]
pub fn prepare(name: &str, bytes: &[u8], recipe_json: &str) -> Result<String, JsValue> {
    let (data, recipe) = load(name, bytes, recipe_json)?;
    let plan = Plan::new(&data, &recipe).map_err(err)?;
    let tasks = plan.tasks();
    let fits: Vec<usize> = tasks.iter().map(|&t| plan.fits_in(t)).collect();
    Ok(json!({
        "tasks": tasks,
        "fits": fits,
        "classes": data.classes,
        "class_counts": data.class_counts(),
        "features": data.n_features(),
        "trials": data.n_trials(),
        "trials_per_repeat": plan.scheme.trials_per_repeat,
        "warnings": plan.scheme.warnings,
    })
    .to_string())
}

/// Runs tasks in a worker: the file is parsed once per run, each task by its kind and index.
#[wasm_bindgen]
pub struct Runner {
    data: Dataset,
    recipe: Recipe,
}

#[wasm_bindgen]
impl Runner {
    #[wasm_bindgen(constructor)]
    pub fn new(name: &str, bytes: &[u8], recipe_json: &str) -> Result<Runner, JsValue> {
        let (data, recipe) = load(name, bytes, recipe_json)?;
        Plan::new(&data, &recipe).map_err(err)?;
        Ok(Runner { data, recipe })
    }

    /// One task's outcome as JSON; `kind` is "repeat" or "shuffle".
    pub fn run(&self, kind: &str, index: usize) -> Result<String, JsValue> {
        let plan = Plan::new(&self.data, &self.recipe).map_err(err)?;
        Ok(serde_json::to_string(&plan.run(task(kind, index)?)).expect("outcomes serialise"))
    }
}

fn task(kind: &str, index: usize) -> Result<Task, JsValue> {
    match kind {
        "repeat" => Ok(Task::Repeat(index)),
        "shuffle" => Ok(Task::Shuffle(index)),
        other => Err(err(format!("unknown task kind '{other}'"))),
    }
}

/// Assemble the outcomes into the report, its text, methods paragraph and figures.
#[wasm_bindgen]
pub fn finish(
    name: &str,
    bytes: &[u8],
    recipe_json: &str,
    outcomes_json: &str,
) -> Result<String, JsValue> {
    let (data, recipe) = load(name, bytes, recipe_json)?;
    let plan = Plan::new(&data, &recipe).map_err(err)?;
    let outcomes: Vec<Outcome> = serde_json::from_str(outcomes_json)
        .map_err(|e| err(format!("outcomes are malformed: {e}")))?;
    let report = Report::build(&plan, &outcomes);
    Ok(json!({
        "report": report,
        "report_json": report.to_json(),
        "headline": text::headline_sentence(&report),
        "text": text::render(&report),
        "methods": methods::paragraph(&report),
        "plots": {
            "scores": plots::score_distribution(&report),
            "null": plots::null_distribution(&report),
            "confusion": plots::confusion(&report),
        },
    })
    .to_string())
}

/// The default recipe for a label column, as JSON.
#[wasm_bindgen]
pub fn default_recipe(label: &str) -> String {
    Recipe::new(label).to_json()
}

/// Validate a recipe file's text and return it normalised (or the reason it is refused).
#[wasm_bindgen]
pub fn check_recipe(text: &str) -> Result<String, JsValue> {
    Recipe::from_json("recipe file", text)
        .map(|r| r.to_json())
        .map_err(err)
}

// ---------- time courses ----------

/// The recording's files: one (a binned table; `name_b` empty) or two (spike events, then the trial table).
fn time_files<'a>(
    name_a: &'a str,
    bytes_a: &'a [u8],
    name_b: &'a str,
    bytes_b: &'a [u8],
) -> Vec<FileBytes<'a>> {
    let mut files = vec![FileBytes {
        name: name_a,
        bytes: bytes_a,
    }];
    if !name_b.is_empty() {
        files.push(FileBytes {
            name: name_b,
            bytes: bytes_b,
        });
    }
    files
}

fn load_time(files: &[FileBytes], recipe_json: &str) -> Result<(TimeDataset, Recipe), JsValue> {
    let recipe = Recipe::from_json("recipe", recipe_json).map_err(err)?;
    let settings = recipe
        .time
        .as_ref()
        .ok_or_else(|| err("this recipe has no time settings"))?;
    let data = TimeDataset::load(files, &recipe.columns, &settings.input).map_err(err)?;
    Ok((data, recipe))
}

/// Check a recording against a time-course recipe: tasks with their cost in fits, classes, windows and warnings.
#[wasm_bindgen]
pub fn prepare_time(
    name_a: &str,
    bytes_a: &[u8],
    name_b: &str,
    bytes_b: &[u8],
    recipe_json: &str,
) -> Result<String, JsValue> {
    let (data, recipe) = load_time(&time_files(name_a, bytes_a, name_b, bytes_b), recipe_json)?;
    let plan = TimePlan::new(&data, &recipe).map_err(err)?;
    let tasks = plan.tasks();
    let fits: Vec<usize> = tasks.iter().map(|&t| plan.fits_in(t)).collect();
    Ok(json!({
        "tasks": tasks,
        "fits": fits,
        "classes": data.classes,
        "class_counts": data.class_counts(),
        "features": data.n_neurons(),
        "trials": data.n_trials(),
        "windows": data.windows,
        "spikes_total": data.spikes_total,
        "spikes_outside": data.spikes_outside,
        "trials_per_repeat": plan.scheme.trials_per_repeat,
        "warnings": plan.scheme.warnings,
    })
    .to_string())
}

/// Runs time-course tasks in a worker: the files are read once per run.
#[wasm_bindgen]
pub struct TimeRunner {
    data: TimeDataset,
    recipe: Recipe,
}

#[wasm_bindgen]
impl TimeRunner {
    #[wasm_bindgen(constructor)]
    pub fn new(
        name_a: &str,
        bytes_a: &[u8],
        name_b: &str,
        bytes_b: &[u8],
        recipe_json: &str,
    ) -> Result<TimeRunner, JsValue> {
        let (data, recipe) = load_time(&time_files(name_a, bytes_a, name_b, bytes_b), recipe_json)?;
        TimePlan::new(&data, &recipe).map_err(err)?;
        Ok(TimeRunner { data, recipe })
    }

    /// One task's outcome as JSON; `kind` is "repeat" or "shuffle".
    pub fn run(&self, kind: &str, index: usize) -> Result<String, JsValue> {
        let plan = TimePlan::new(&self.data, &self.recipe).map_err(err)?;
        Ok(serde_json::to_string(&plan.run(task(kind, index)?)).expect("outcomes serialise"))
    }
}

/// Assemble a time course's outcomes into its report, text, methods paragraph, figures and CSV tables.
#[wasm_bindgen]
pub fn finish_time(
    name_a: &str,
    bytes_a: &[u8],
    name_b: &str,
    bytes_b: &[u8],
    recipe_json: &str,
    outcomes_json: &str,
) -> Result<String, JsValue> {
    let (data, recipe) = load_time(&time_files(name_a, bytes_a, name_b, bytes_b), recipe_json)?;
    let plan = TimePlan::new(&data, &recipe).map_err(err)?;
    let outcomes: Vec<TimeOutcome> = serde_json::from_str(outcomes_json)
        .map_err(|e| err(format!("outcomes are malformed: {e}")))?;
    let report = TimeReport::build(&plan, &outcomes);
    Ok(json!({
        "report": report,
        "report_json": report.to_json(),
        "headline": tc_text::headline_sentence(&report),
        "text": tc_text::render(&report),
        "methods": tc_text::methods(&report),
        "plots": {
            "curve": tc_plots::curve(&report),
            "generalization": tc_plots::generalization(&report),
        },
        "csv": {
            "curve": tc_text::curve_csv(&report),
            "generalization": tc_text::generalization_csv(&report),
        },
    })
    .to_string())
}

// ---------- neuron analyses ----------

/// The neuron analyses' tasks with their cost in fits.
#[wasm_bindgen]
pub fn prepare_neurons(
    name: &str,
    bytes: &[u8],
    recipe_json: &str,
    draws: usize,
) -> Result<String, JsValue> {
    let (data, recipe) = load(name, bytes, recipe_json)?;
    let plan = NeuronsPlan::new(&data, &recipe, draws).map_err(err)?;
    let tasks = plan.tasks();
    let fits: Vec<usize> = tasks.iter().map(|&t| plan.fits_in(t)).collect();
    Ok(json!({ "tasks": tasks, "fits": fits, "sizes": plan.sizes }).to_string())
}

/// Runs neuron tasks in a worker.
#[wasm_bindgen]
pub struct NeuronsRunner {
    data: Dataset,
    recipe: Recipe,
    draws: usize,
}

#[wasm_bindgen]
impl NeuronsRunner {
    #[wasm_bindgen(constructor)]
    pub fn new(
        name: &str,
        bytes: &[u8],
        recipe_json: &str,
        draws: usize,
    ) -> Result<NeuronsRunner, JsValue> {
        let (data, recipe) = load(name, bytes, recipe_json)?;
        NeuronsPlan::new(&data, &recipe, draws).map_err(err)?;
        Ok(NeuronsRunner {
            data,
            recipe,
            draws,
        })
    }

    /// One task (as JSON, from `prepare_neurons`) run to its outcome (JSON).
    pub fn run(&self, task_json: &str) -> Result<String, JsValue> {
        let plan = NeuronsPlan::new(&self.data, &self.recipe, self.draws).map_err(err)?;
        let task: NeuronTask =
            serde_json::from_str(task_json).map_err(|e| err(format!("malformed task: {e}")))?;
        Ok(serde_json::to_string(&plan.run(task)).expect("outcomes serialise"))
    }
}

/// The neuron report with its text and figures.
#[wasm_bindgen]
pub fn finish_neurons(
    name: &str,
    bytes: &[u8],
    recipe_json: &str,
    draws: usize,
    outcomes_json: &str,
) -> Result<String, JsValue> {
    let (data, recipe) = load(name, bytes, recipe_json)?;
    let plan = NeuronsPlan::new(&data, &recipe, draws).map_err(err)?;
    let outcomes: Vec<NeuronOutcome> = serde_json::from_str(outcomes_json)
        .map_err(|e| err(format!("outcomes are malformed: {e}")))?;
    let report = plan.report(&outcomes);
    Ok(json!({
        "report": report,
        "report_json": report.to_json(),
        "text": report.render(),
        "plots": {
            "dropping": neuron_plots::dropping(&report),
            "single": neuron_plots::single(&report),
            "weights": neuron_plots::weights(&report),
        },
    })
    .to_string())
}

// ---------- NWB files, read lazily ----------

#[wasm_bindgen]
extern "C" {
    /// The worker's reader of the dropped file (www/worker.js): `length` bytes from `offset`, by FileReaderSync.
    #[wasm_bindgen(catch, js_name = popdecodeReadAt)]
    fn read_dropped_file(offset: f64, length: u32) -> Result<Vec<u8>, JsValue>;
}

/// The file dropped on the page as the HDF5 reader's random-access source: nothing is read until asked for, so
/// only the NWB file's units and trials tables are ever in memory. Only a worker can read this way.
struct DroppedFile {
    len: u64,
}

impl hdf5_pure::Source for DroppedFile {
    fn len(&self) -> u64 {
        self.len
    }

    fn read_at(&self, offset: u64, buf: &mut [u8]) -> Result<(), hdf5_pure::FormatError> {
        let length = u32::try_from(buf.len())
            .map_err(|_| hdf5_pure::FormatError::Source("a read of 4 GiB or more".into()))?;
        let bytes = read_dropped_file(offset as f64, length).map_err(|e| {
            hdf5_pure::FormatError::Source(e.as_string().unwrap_or_else(|| format!("{e:?}")))
        })?;
        if bytes.len() != buf.len() {
            return Err(hdf5_pure::FormatError::Source(format!(
                "{} bytes read at {offset} where {} were asked for",
                bytes.len(),
                buf.len()
            )));
        }
        buf.copy_from_slice(&bytes);
        Ok(())
    }
}

/// Read the dropped NWB file (`size` bytes) lazily into the extract the page and its workers decode from.
#[wasm_bindgen]
pub fn extract_nwb(name: &str, size: f64) -> Result<Vec<u8>, JsValue> {
    crate::timecourse::extract::read_nwb(name, DroppedFile { len: size as u64 }).map_err(err)
}

/// What an NWB recording holds (units, spikes, trials, the trials and units tables' columns, the file's SHA-256),
/// as JSON, from its extract (or the whole file).
#[wasm_bindgen]
pub fn inspect_nwb(name: &str, bytes: &[u8]) -> Result<String, JsValue> {
    let (rec, origin) = crate::timecourse::extract::read_any(name, bytes).map_err(err)?;
    let mut summary = serde_json::to_value(rec.summary()).expect("a summary serialises");
    summary["sha256"] = origin.sha256.into();
    Ok(summary.to_string())
}
