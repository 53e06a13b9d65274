//! Part files: the outcomes of one part of an analysis's tasks (`--part K/N`), with everything `combine` needs to
//! check that parts belong together and to build the same plan again.
//!
//! Schema `popdecode-part/1` (one JSON object):
//! * `schema`: `"popdecode-part/1"`; `software`: `{name, version}` of the program that ran the part.
//! * `analysis`: the subcommand (`decode`, `timecourse`, `neurons`); `recipe`: the recipe the plan was built from
//!   (`popdecode-recipe/1`); `options`: the analysis's settings outside the recipe (`{"draws": 10}` for `neurons`,
//!   `{}` otherwise).
//! * `files`: the input files in the subcommand's order, each `{path, file, sha256}`: the absolute path it was read
//!   from (where `combine` reads it again), the name reports use, and the SHA-256 of its bytes.
//! * `part`, `parts`: K and N; `tasks_total`: how many tasks the whole analysis has.
//! * `tasks`: this part's tasks in increasing index order, each `{index, task, outcome}`: the task's index in the
//!   plan's task list (counted from 0), the task as the plan lists it, and what it produced.
//!
//! The rule: task index `i` belongs to part `i mod N + 1` (`Part::indices`). A part file is written to a temporary
//! name and renamed, so a part killed while writing leaves no file that looks finished.

use crate::args::Part;
use crate::files::{display_name, read, sha256_file};
use crate::inputs::Inputs;
use popdecode::data::SourceFile;
use popdecode::recipe::Recipe;
use popdecode::report::Software;
use serde::{Deserialize, Serialize};
use serde_json::Value;
use std::path::{Path, PathBuf};

/// The schema name part files carry.
pub const SCHEMA: &str = "popdecode-part/1";

/// One input file as a part records it.
#[derive(Clone, Debug, PartialEq, Serialize, Deserialize)]
pub struct InputFile {
    pub path: PathBuf,
    pub file: String,
    pub sha256: String,
}

/// One task of a part and its outcome, as JSON (typed by the analysis once `combine` knows which it is).
#[derive(Debug, Serialize, Deserialize)]
pub struct TaskRecord<T = Value, O = Value> {
    pub index: usize,
    pub task: T,
    pub outcome: O,
}

/// A part file (schema above).
#[derive(Debug, Serialize, Deserialize)]
#[serde(deny_unknown_fields)]
pub struct PartFile<T = Value, O = Value> {
    pub schema: String,
    pub software: Software,
    pub analysis: String,
    pub recipe: Value,
    pub options: Value,
    pub files: Vec<InputFile>,
    pub part: usize,
    pub parts: usize,
    pub tasks_total: usize,
    pub tasks: Vec<TaskRecord<T, O>>,
}

/// What a part run hands to [`write`].
pub struct Contents<'a, T, O> {
    pub inputs: &'a Inputs,
    pub files: &'a [SourceFile],
    pub part: Part,
    pub total: usize,
    pub indices: &'a [usize],
    pub tasks: &'a [T],
    pub outcomes: &'a [O],
}

/// Write a part file: to a temporary name beside `path`, then renamed into place.
pub fn write<T: Serialize + Copy, O: Serialize>(
    path: &Path,
    c: &Contents<T, O>,
) -> Result<(), String> {
    let files = c
        .inputs
        .paths
        .iter()
        .zip(c.files)
        .map(|(p, f)| {
            let path = std::path::absolute(p)
                .map_err(|e| format!("{}: cannot resolve the path: {e}", p.display()))?;
            Ok(InputFile {
                path,
                file: f.file.clone(),
                sha256: f.sha256.clone(),
            })
        })
        .collect::<Result<Vec<_>, String>>()?;
    let file = PartFile {
        schema: SCHEMA.into(),
        software: Software::current(),
        analysis: c.inputs.analysis.clone(),
        recipe: serde_json::to_value(&c.inputs.recipe).expect("a recipe always serialises"),
        options: c.inputs.options.clone(),
        files,
        part: c.part.k,
        parts: c.part.n,
        tasks_total: c.total,
        tasks: c
            .indices
            .iter()
            .zip(c.tasks)
            .zip(c.outcomes)
            .map(|((&index, &task), outcome)| TaskRecord {
                index,
                task,
                outcome,
            })
            .collect(),
    };
    let text = serde_json::to_string(&file)
        .map_err(|e| format!("{}: cannot write the part file: {e}", path.display()))?;
    let tmp = path.with_file_name(format!(
        ".{}.{}.tmp",
        display_name(path),
        std::process::id()
    ));
    std::fs::write(&tmp, text + "\n")
        .and_then(|()| std::fs::rename(&tmp, path))
        .map_err(|e| format!("{}: cannot write the file: {e}", path.display()))
}

/// A part file read from disk, with the name it was given under.
pub struct Read {
    pub path: PathBuf,
    pub file: PartFile,
}

impl Read {
    /// Read and parse one part file; a file that is not a part (a result, a recipe) is named as such.
    pub fn open(path: &Path) -> Result<Read, String> {
        let bytes = read(path)?;
        let value: Value = serde_json::from_slice(&bytes)
            .map_err(|e| format!("{}: not a part file (not JSON: {e})", path.display()))?;
        let schema = value.get("schema").and_then(Value::as_str).unwrap_or("");
        if schema != SCHEMA {
            let what = match value.get("schema").or(value.get("format")) {
                Some(Value::String(s)) => format!("a file of schema {s}"),
                _ => "not a popdecode file".into(),
            };
            return Err(format!(
                "{}: not a part file ({what}); give the files that runs with --part wrote",
                path.display()
            ));
        }
        let file: PartFile = serde_json::from_value(value)
            .map_err(|e| format!("{}: a damaged part file: {e}", path.display()))?;
        if file.part == 0 || file.part > file.parts {
            return Err(format!(
                "{}: a damaged part file: part {} of {}",
                path.display(),
                file.part,
                file.parts
            ));
        }
        Ok(Read {
            path: path.to_path_buf(),
            file,
        })
    }

    fn name(&self) -> String {
        self.path.display().to_string()
    }
}

/// Check that the parts belong to one analysis and cover every task exactly once; return them ordered by K.
/// Everything is checked from the files alone, before any data is read.
pub fn check_set(mut parts: Vec<Read>) -> Result<Vec<Read>, String> {
    let Some(first) = parts.first() else {
        return Err("give the part files to combine".into());
    };
    let here = Software::current();
    if first.file.software != here {
        return Err(format!(
            "{} was written by {} {}; this is {} {}: run every part and combine with one version",
            first.name(),
            first.file.software.name,
            first.file.software.version,
            here.name,
            here.version
        ));
    }
    for other in &parts[1..] {
        if let Some(why) = differs(&first.file, &other.file) {
            return Err(format!(
                "{} does not belong with {}: {why}",
                other.name(),
                first.name()
            ));
        }
    }
    parts.sort_by_key(|p| p.file.part);
    for pair in parts.windows(2) {
        if pair[0].file.part == pair[1].file.part {
            return Err(format!(
                "{} and {} are both part {} of {}; give each part once",
                pair[0].name(),
                pair[1].name(),
                pair[0].file.part,
                pair[0].file.parts
            ));
        }
    }
    let (n, total) = (parts[0].file.parts, parts[0].file.tasks_total);
    let missing: Vec<String> = (1..=n)
        .filter(|k| !parts.iter().any(|p| p.file.part == *k))
        .map(|k| {
            let part = Part { k, n };
            format!(
                "part {k} of {n} is missing (task indices {}): run it with --part {k}/{n}",
                list_indices(part.indices(total))
            )
        })
        .collect();
    if !missing.is_empty() {
        return Err(format!("{}, then combine again", missing.join("; ")));
    }
    for p in &parts {
        let part = Part {
            k: p.file.part,
            n: p.file.parts,
        };
        let stored = p.file.tasks.iter().map(|t| t.index);
        if !stored.eq(part.indices(total)) {
            return Err(format!(
                "{}: its task indices are not those of part {} of {} among {total} tasks (a damaged part file)",
                p.name(),
                part.k,
                part.n
            ));
        }
    }
    Ok(parts)
}

/// Why two part files cannot be combined, or `None` when they belong to one analysis.
fn differs(a: &PartFile, b: &PartFile) -> Option<String> {
    if a.software != b.software {
        return Some(format!(
            "it was written by version {}, the other by {}",
            b.software.version, a.software.version
        ));
    }
    if a.analysis != b.analysis {
        return Some(format!(
            "it is from 'popdecode {}', the other from 'popdecode {}'",
            b.analysis, a.analysis
        ));
    }
    if a.recipe != b.recipe {
        let mut keys = Vec::new();
        diff_keys("", &a.recipe, &b.recipe, &mut keys);
        return Some(format!("its recipe differs ({})", keys.join(", ")));
    }
    if a.options != b.options {
        return Some(format!(
            "its options differ ({} against {})",
            b.options, a.options
        ));
    }
    let hashes = |p: &PartFile| -> Vec<(String, String)> {
        p.files
            .iter()
            .map(|f| (f.file.clone(), f.sha256.clone()))
            .collect()
    };
    if hashes(a) != hashes(b) {
        let names: Vec<&str> = b.files.iter().map(|f| f.file.as_str()).collect();
        return Some(format!(
            "it was run on other data ({} with another SHA-256)",
            names.join(", ")
        ));
    }
    if (a.parts, a.tasks_total) != (b.parts, b.tasks_total) {
        return Some(format!(
            "it is part {} of {}, the other part {} of {}: combine parts of one split",
            b.part, b.parts, a.part, a.parts
        ));
    }
    None
}

/// The dotted names of the settings where two recipes differ (`repeats`, `columns.label`).
fn diff_keys(prefix: &str, a: &Value, b: &Value, out: &mut Vec<String>) {
    match (a, b) {
        (Value::Object(x), Value::Object(y)) => {
            let mut keys: Vec<&String> = x.keys().chain(y.keys()).collect();
            keys.sort();
            keys.dedup();
            for k in keys {
                let (va, vb) = (
                    x.get(k).unwrap_or(&Value::Null),
                    y.get(k).unwrap_or(&Value::Null),
                );
                if va != vb {
                    diff_keys(&format!("{prefix}{k}."), va, vb, out);
                }
            }
        }
        _ => out.push(prefix.trim_end_matches('.').to_string()),
    }
}

/// Task indices for a message: all of them when few, else the first ones and how many there are.
fn list_indices(indices: impl Iterator<Item = usize>) -> String {
    const SHOWN: usize = 12;
    let all: Vec<usize> = indices.collect();
    if all.is_empty() {
        return "none".into();
    }
    let head: Vec<String> = all.iter().take(SHOWN).map(usize::to_string).collect();
    match all.len() {
        n if n <= SHOWN => head.join(", "),
        n => format!("{}, … {} ({n} tasks)", head.join(", "), all[n - 1]),
    }
}

/// What the parts record about how the plan was built, with the data read from the first part's paths.
pub fn inputs(parts: &[Read]) -> Result<Inputs, String> {
    let first = &parts[0];
    let recipe_text = first.file.recipe.to_string();
    let recipe = Recipe::from_json(&first.name(), &recipe_text).map_err(|e| e.to_string())?;
    Ok(Inputs {
        analysis: first.file.analysis.clone(),
        recipe,
        options: first.file.options.clone(),
        paths: first.file.files.iter().map(|f| f.path.clone()).collect(),
    })
}

/// Refuse to combine when an input file is no longer the file the parts ran on. The SHA-256 of its bytes is
/// computed here, before the file is parsed, so that a changed file is named as changed rather than as a
/// puzzling design error.
pub fn check_files(parts: &[Read]) -> Result<(), String> {
    for was in &parts[0].file.files {
        let now = sha256_file(&was.path)?;
        if was.sha256 != now {
            return Err(format!(
                "{}: the file has changed since the parts ran (SHA-256 {} in {}, {now} now)",
                was.path.display(),
                was.sha256,
                parts[0].name(),
            ));
        }
    }
    Ok(())
}

/// Every task's outcome in task order, after checking that each part's tasks are the plan's tasks at their
/// indices.
pub fn outcomes<T, O>(parts: Vec<Read>, tasks: &[T]) -> Result<Vec<O>, String>
where
    T: Serialize,
    O: serde::de::DeserializeOwned,
{
    let total = parts[0].file.tasks_total;
    if tasks.len() != total {
        return Err(format!(
            "{}: the parts hold {total} tasks, but the analysis they record has {}",
            parts[0].name(),
            tasks.len()
        ));
    }
    let mut slots: Vec<Option<O>> = (0..total).map(|_| None).collect();
    for p in parts {
        let name = p.name();
        for record in p.file.tasks {
            let planned = serde_json::to_value(&tasks[record.index]).expect("tasks serialise");
            if record.task != planned {
                return Err(format!(
                    "{name}: task {} is {}, but the analysis lists {planned} there (a damaged part file)",
                    record.index, record.task
                ));
            }
            let outcome = serde_json::from_value(record.outcome).map_err(|e| {
                format!(
                    "{name}: the outcome of task {} is damaged: {e}",
                    record.index
                )
            })?;
            slots[record.index] = Some(outcome);
        }
    }
    Ok(slots
        .into_iter()
        .map(|o| o.expect("check_set saw every index once"))
        .collect())
}
