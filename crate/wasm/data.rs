//! Decoded data on the page: a file is read once, in the page's data worker, into the trials × features (or
//! windows × trials × neurons) matrix the analyses use; each run worker then gets that matrix once, in parts of a
//! few megabytes the page transfers ([`MatrixIn`](super::job::MatrixIn)), with its labels, groups and names as a
//! small JSON header. No run worker parses the file or holds its text, and no side holds a second whole copy of
//! the matrix on the way, so memory grows with the decoded numbers, not with the file's bytes.
//!
//! The header carries every field of [`Dataset`] / [`TimeDataset`] but the matrix, and the matrix's bits are
//! copied exactly, so a plan built from decoded data is the plan built from the file (the page's JSON stays the
//! CLI's, byte for byte: tests/browser).

use super::request::{err, Files, Request};
use crate::data::time::TimeDataset;
use crate::data::{Dataset, SourceFile};
use crate::input;
use crate::recipe::windows::Window;
use ndarray::{Array2, Array3};
use serde::{Deserialize, Serialize};
use std::borrow::Cow;
use wasm_bindgen::JsValue;

/// What a file decodes into, by the analysis family that reads it.
#[derive(Clone)]
pub(super) enum Decoded {
    Table(Dataset),
    Time(TimeDataset),
    /// The files themselves, for the analyses that read them through the core's own door (`from_files`): a study
    /// (many sessions, read one at a time), generalization across conditions and continuous decoding (which read a
    /// second column or a numeric label besides the activity). Run workers get the files, not a matrix.
    Files(Files),
}

/// The family of data an analysis reads: the neuron and power analyses read a trial table.
pub(super) fn family(kind: &str) -> Result<&'static str, JsValue> {
    match kind {
        "table" | "neurons" | "power" => Ok("table"),
        "time" => Ok("time"),
        "study" | "across" | "continuous" => Ok("files"),
        other => Err(err(format!("unknown kind of analysis '{other}'"))),
    }
}

/// Read the request's files for an analysis kind (every check of the file happens here, with the core's messages).
pub(super) fn load(kind: &str, r: &Request) -> Result<Decoded, JsValue> {
    match family(kind)? {
        "files" => Ok(Decoded::Files(Files::from_items(
            r.files
                .iter()
                .map(|f| (f.name.to_string(), f.bytes.to_vec()))
                .collect(),
        ))),
        "table" => {
            let [file] = r.files[..] else {
                return Err(err("a trial table is one file"));
            };
            input::trial_table(file.name, file.bytes, &r.recipe.columns)
                .map(Decoded::Table)
                .map_err(err)
        }
        _ => {
            let settings = r
                .recipe
                .time
                .as_ref()
                .ok_or_else(|| err("this recipe has no time settings"))?;
            input::time_course(&r.files, &r.recipe.columns, &settings.input)
                .map(Decoded::Time)
                .map_err(err)
        }
    }
}

#[derive(Serialize, Deserialize)]
struct TableHeader {
    trials: usize,
    features: usize,
    source: String,
    sha256: String,
    delimiter: String,
    decimal_comma: bool,
    y: Vec<usize>,
    classes: Vec<String>,
    groups: Option<Vec<usize>>,
    group_names: Vec<String>,
    feature_names: Vec<String>,
    label_column: String,
    group_column: Option<String>,
    dropped_lines: Vec<u64>,
    skipped_columns: Vec<String>,
    warnings: Vec<String>,
    pseudo: Option<Vec<usize>>,
}

#[derive(Serialize, Deserialize)]
struct TimeHeader {
    windows_count: usize,
    trials: usize,
    neurons_count: usize,
    source: String,
    files: Vec<SourceFile>,
    windows: Vec<Window>,
    trial_ids: Vec<String>,
    y: Vec<usize>,
    classes: Vec<String>,
    groups: Option<Vec<usize>>,
    group_names: Vec<String>,
    neurons: Vec<String>,
    label_column: String,
    group_column: Option<String>,
    spikes_outside: u64,
    spikes_total: u64,
    warnings: Vec<String>,
}

impl Decoded {
    /// The group column and its groups' names (empty without groups).
    pub(super) fn groups(&self) -> (Option<&str>, &[String]) {
        match self {
            Decoded::Table(d) => (d.group_column.as_deref(), &d.group_names),
            Decoded::Time(d) => (d.group_column.as_deref(), &d.group_names),
            Decoded::Files(_) => (None, &[]),
        }
    }

    /// Everything but the matrix, as JSON (`"family"` says which; for files, their names).
    pub(super) fn header(&self) -> String {
        let (family, header) = match self {
            Decoded::Files(f) => ("files", Ok(serde_json::json!({ "files": f.names() }))),
            Decoded::Table(d) => (
                "table",
                serde_json::to_value(TableHeader {
                    trials: d.x.nrows(),
                    features: d.x.ncols(),
                    source: d.source.clone(),
                    sha256: d.sha256.clone(),
                    delimiter: d.delimiter.clone(),
                    decimal_comma: d.decimal_comma,
                    y: d.y.clone(),
                    classes: d.classes.clone(),
                    groups: d.groups.clone(),
                    group_names: d.group_names.clone(),
                    feature_names: d.feature_names.clone(),
                    label_column: d.label_column.clone(),
                    group_column: d.group_column.clone(),
                    dropped_lines: d.dropped_lines.clone(),
                    skipped_columns: d.skipped_columns.clone(),
                    warnings: d.warnings.clone(),
                    pseudo: d.pseudo.clone(),
                }),
            ),
            Decoded::Time(d) => {
                let (w, n, p) = d.x.dim();
                (
                    "time",
                    serde_json::to_value(TimeHeader {
                        windows_count: w,
                        trials: n,
                        neurons_count: p,
                        source: d.source.clone(),
                        files: d.files.clone(),
                        windows: d.windows.clone(),
                        trial_ids: d.trial_ids.clone(),
                        y: d.y.clone(),
                        classes: d.classes.clone(),
                        groups: d.groups.clone(),
                        group_names: d.group_names.clone(),
                        neurons: d.neurons.clone(),
                        label_column: d.label_column.clone(),
                        group_column: d.group_column.clone(),
                        spikes_outside: d.spikes_outside,
                        spikes_total: d.spikes_total,
                        warnings: d.warnings.clone(),
                    }),
                )
            }
        };
        let mut header = header.expect("a header serialises");
        header["family"] = family.into();
        header.to_string()
    }

    /// The matrix's values in memory order, without a copy when the matrix is laid out row-major (the readers
    /// make it so).
    pub(super) fn values(&self) -> Cow<'_, [f64]> {
        fn of<D: ndarray::Dimension>(x: &ndarray::ArcArray<f64, D>) -> Cow<'_, [f64]> {
            match x.as_slice() {
                Some(v) => Cow::Borrowed(v),
                None => Cow::Owned(x.iter().copied().collect()),
            }
        }
        match self {
            Decoded::Table(d) => of(&d.x),
            Decoded::Time(d) => of(&d.x),
            Decoded::Files(_) => Cow::Borrowed(&[]),
        }
    }

    /// Rebuild decoded data from its header and matrix (taken without a copy).
    pub(super) fn from_parts(header: &str, x: Vec<f64>) -> Result<Decoded, JsValue> {
        let bad = |e: &dyn std::fmt::Display| err(format!("malformed decoded data: {e}"));
        let value: serde_json::Value = serde_json::from_str(header).map_err(|e| bad(&e))?;
        if value["family"] == "files" {
            return Err(err(
                "files are handed to a run worker as files (Runner.with_files), not as a matrix",
            ));
        }
        if value["family"] == "table" {
            let h: TableHeader = serde_json::from_value(value).map_err(|e| bad(&e))?;
            let x = Array2::from_shape_vec((h.trials, h.features), x).map_err(|e| bad(&e))?;
            Ok(Decoded::Table(Dataset {
                source: h.source,
                sha256: h.sha256,
                delimiter: h.delimiter,
                decimal_comma: h.decimal_comma,
                x: x.into_shared(),
                y: h.y,
                classes: h.classes,
                groups: h.groups,
                group_names: h.group_names,
                feature_names: h.feature_names,
                label_column: h.label_column,
                group_column: h.group_column,
                dropped_lines: h.dropped_lines,
                skipped_columns: h.skipped_columns,
                warnings: h.warnings,
                pseudo: h.pseudo,
            }))
        } else {
            let h: TimeHeader = serde_json::from_value(value).map_err(|e| bad(&e))?;
            let x = Array3::from_shape_vec((h.windows_count, h.trials, h.neurons_count), x)
                .map_err(|e| bad(&e))?;
            Ok(Decoded::Time(TimeDataset {
                source: h.source,
                files: h.files,
                x: x.into_shared(),
                windows: h.windows,
                trial_ids: h.trial_ids,
                y: h.y,
                classes: h.classes,
                groups: h.groups,
                group_names: h.group_names,
                neurons: h.neurons,
                label_column: h.label_column,
                group_column: h.group_column,
                spikes_outside: h.spikes_outside,
                spikes_total: h.spikes_total,
                warnings: h.warnings,
            }))
        }
    }
}
