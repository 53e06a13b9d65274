//! Time-resolved recordings: trials × windows × neurons, from a binned table or from spike events.
//!
//! Two ways in, one result ([`TimeDataset`]):
//! * a **binned table**, one row per trial × time bin, with the trial id, the bin's time in seconds, the label,
//!   optionally a group, and one column per neuron; each distinct time is one window;
//! * **spike events** (one row per spike: trial, neuron, time in s) with a **trial table** (one row per trial:
//!   trial, label, optional group, optional alignment time). Spikes are counted in sliding windows
//!   ([`super::windows`]) and divided by the window width, giving rates in Hz. A neuron with no spike in a trial
//!   has rate 0 there, never a missing value.

use super::extract;
use super::nwb::{Column, Recording};
use super::unit_filter::keep_units;
use super::windows::{containing, sliding, to_ns, Window};
use crate::data::labels::{codes, sorted_levels};
use crate::data::table::{self, is_missing_token, parse_number, quoted_list, Cell, Table};
use crate::data::{sha256_hex, Columns};
use crate::error::{Error, Result};
use crate::protocol::Trials;
use crate::recipe::TimeInput;
use ndarray::Array3;
use serde::{Deserialize, Serialize};
use std::collections::BTreeMap;

/// One input file as the report names it.
#[derive(Debug, Clone, PartialEq, Serialize, Deserialize)]
pub struct SourceFile {
    pub file: String,
    pub sha256: String,
}

/// A named file's bytes, as a face hands them to the core.
#[derive(Debug, Clone, Copy)]
pub struct FileBytes<'a> {
    pub name: &'a str,
    pub bytes: &'a [u8],
}

/// Trials × windows × neurons with the trials' labels and groups.
#[derive(Debug, Clone)]
pub struct TimeDataset {
    /// What messages call the data (the binned table, or the trial table).
    pub source: String,
    pub files: Vec<SourceFile>,
    /// Windows × trials × neurons, rates as given (binned) or in Hz (events).
    pub x: Array3<f64>,
    pub windows: Vec<Window>,
    /// Trial ids in the order of `y`.
    pub trial_ids: Vec<String>,
    pub y: Vec<usize>,
    pub classes: Vec<String>,
    pub groups: Option<Vec<usize>>,
    pub group_names: Vec<String>,
    pub neurons: Vec<String>,
    pub label_column: String,
    pub group_column: Option<String>,
    /// Events only: spikes outside every window (before the first or after the last), which count nowhere.
    pub spikes_outside: u64,
    pub spikes_total: u64,
    pub warnings: Vec<String>,
}

impl TimeDataset {
    pub fn n_trials(&self) -> usize {
        self.y.len()
    }

    pub fn n_neurons(&self) -> usize {
        self.neurons.len()
    }

    /// The trials' labels and groups, as resampling sees them.
    pub fn trials(&self) -> Trials<'_> {
        Trials {
            source: &self.source,
            y: &self.y,
            classes: &self.classes,
            groups: self.groups.as_deref(),
            group_names: &self.group_names,
            group_column: self.group_column.as_deref(),
            pseudo: false,
        }
    }

    pub fn class_counts(&self) -> Vec<usize> {
        let mut counts = vec![0; self.classes.len()];
        for &c in &self.y {
            counts[c] += 1;
        }
        counts
    }

    /// Row-major trials × neurons matrix of window `w`.
    pub fn window(&self, w: usize) -> &[f64] {
        let per = self.n_trials() * self.n_neurons();
        &self.x.as_slice().expect("standard layout")[w * per..(w + 1) * per]
    }

    /// Read the input a recipe describes. `files` are the binned table, or the events file then the trial table.
    pub fn load(files: &[FileBytes], columns: &Columns, input: &TimeInput) -> Result<TimeDataset> {
        match (input, files) {
            (TimeInput::Binned { trial, time }, [table]) => {
                let t = Table::parse(table.name, table.bytes)?;
                let mut ds = from_binned(&t, columns, trial, time)?;
                ds.files = vec![source_file(table)];
                Ok(ds)
            }
            (
                TimeInput::Events {
                    trial,
                    neuron,
                    time,
                    align,
                    width,
                    step,
                    start,
                    end,
                },
                [events, trials],
            ) => {
                let windows = sliding(*start, *end, *width, *step)?;
                let t = Table::parse(trials.name, trials.bytes)?;
                let spec = EventColumns {
                    trial,
                    neuron,
                    time,
                    align: align.as_deref(),
                };
                let mut ds = from_events(events, &t, columns, &spec, windows, *width)?;
                ds.files = vec![source_file(events), source_file(trials)];
                Ok(ds)
            }
            (
                TimeInput::Nwb {
                    align,
                    width,
                    step,
                    start,
                    end,
                    units,
                },
                [file],
            ) => {
                let windows = sliding(*start, *end, *width, *step)?;
                let (rec, origin) = extract::read_any(file.name, file.bytes)?;
                let (rec, kept) = keep_units(file.name, rec, units)?;
                let mut ds = from_nwb(file.name, &rec, columns, align.as_deref(), windows, *width)?;
                ds.files = vec![origin];
                if let Some(note) = kept {
                    ds.warnings.insert(0, note);
                }
                Ok(ds)
            }
            (TimeInput::Nwb { .. }, _) => Err(Error::Recipe(
                "an NWB time course reads one file (the .nwb file)".into(),
            )),
            (TimeInput::Binned { .. }, _) => Err(Error::Recipe(
                "a binned time course reads one file (the binned table)".into(),
            )),
            (TimeInput::Events { .. }, _) => Err(Error::Recipe(
                "spike events need two files: the events file and the trial table".into(),
            )),
        }
    }
}

fn source_file(f: &FileBytes) -> SourceFile {
    SourceFile {
        file: f.name.to_string(),
        sha256: sha256_hex(f.bytes),
    }
}

/// Labels and groups read from a table's rows, one per trial.
struct TrialLabels {
    labels: Vec<String>,
    groups: Vec<String>,
}

fn text_cell(t: &Table, r: usize, c: usize) -> Result<String> {
    let v = &t.rows[r][c];
    if is_missing_token(v) {
        return Err(Error::Input(format!(
            "{}: {} is a missing value; every trial needs one",
            t.at(r, c),
            if v.is_empty() {
                "empty cell".to_string()
            } else {
                format!("'{v}'")
            }
        )));
    }
    Ok(v.clone())
}

fn number_cell(t: &Table, r: usize, c: usize, what: &str) -> Result<f64> {
    match t.cell(r, c) {
        Cell::Number(v) => Ok(v),
        Cell::Missing => Err(Error::Input(format!(
            "{}: the {what} is missing",
            t.at(r, c)
        ))),
        Cell::NotNumber => Err(Error::Input(format!(
            "{}: '{}' is not a number ({what})",
            t.at(r, c),
            t.rows[r][c]
        ))),
    }
}

/// Build the dataset once trials, labels and the rate array are known.
#[allow(clippy::too_many_arguments)]
fn assemble(
    source: &str,
    trial_ids: Vec<String>,
    tl: TrialLabels,
    columns: &Columns,
    windows: Vec<Window>,
    neurons: Vec<String>,
    x: Array3<f64>,
    warnings: Vec<String>,
) -> Result<TimeDataset> {
    let classes = sorted_levels(&tl.labels);
    if classes.len() < 2 {
        return Err(Error::Design(format!(
            "{source}: column '{}' holds only one class ('{}'); decoding needs at least two conditions",
            columns.label, classes[0]
        )));
    }
    let y = codes(&tl.labels, &classes);
    let (groups, group_names) = match &columns.group {
        Some(_) => {
            let names = sorted_levels(&tl.groups);
            (Some(codes(&tl.groups, &names)), names)
        }
        None => (None, Vec::new()),
    };
    Ok(TimeDataset {
        source: source.to_string(),
        files: Vec::new(),
        x,
        windows,
        trial_ids,
        y,
        classes,
        groups,
        group_names,
        neurons,
        label_column: columns.label.clone(),
        group_column: columns.group.clone(),
        spikes_outside: 0,
        spikes_total: 0,
        warnings,
    })
}

/// A long table, one row per trial × bin. Every trial must have the same bin times, one row each, and one label.
pub fn from_binned(t: &Table, columns: &Columns, trial: &str, time: &str) -> Result<TimeDataset> {
    let src = &t.source;
    let trial_c = t.column(trial)?;
    let time_c = t.column(time)?;
    let label_c = t.column(&columns.label)?;
    let group_c = columns.group.as_deref().map(|g| t.column(g)).transpose()?;
    let special: Vec<usize> = [trial_c, time_c, label_c]
        .into_iter()
        .chain(group_c)
        .collect();
    for (i, a) in special.iter().enumerate() {
        if special[..i].contains(a) {
            return Err(Error::Design(format!(
                "{src}: column '{}' is named for two roles (trial, time, label, group); choose different columns",
                t.headers[*a]
            )));
        }
    }
    let mut ignored = Vec::new();
    for name in &columns.ignore {
        ignored.push(t.column(name)?);
    }
    let neuron_cols: Vec<usize> = match &columns.features {
        Some(names) => names.iter().map(|n| t.column(n)).collect::<Result<_>>()?,
        None => (0..t.headers.len())
            .filter(|c| !special.contains(c) && !ignored.contains(c))
            .collect(),
    };
    if neuron_cols.is_empty() {
        return Err(Error::Design(format!(
            "{src}: no neuron columns besides trial, time, label and group; the columns are: {}",
            quoted_list(&t.headers)
        )));
    }
    // Distinct bin times, sorted; each is one window.
    let mut times: Vec<f64> = Vec::new();
    let mut row_time = Vec::with_capacity(t.rows.len());
    for r in 0..t.rows.len() {
        let v = number_cell(t, r, time_c, "bin time in seconds")?;
        row_time.push(v);
        times.push(v);
    }
    times.sort_by(f64::total_cmp);
    times.dedup();
    // Trials in order of first appearance.
    let mut trial_index: BTreeMap<String, usize> = BTreeMap::new();
    let mut trial_ids = Vec::new();
    let mut tl = TrialLabels {
        labels: Vec::new(),
        groups: Vec::new(),
    };
    let mut first_row = Vec::new();
    for r in 0..t.rows.len() {
        let id = text_cell(t, r, trial_c)?;
        let label = text_cell(t, r, label_c)?;
        let group = group_c.map(|g| text_cell(t, r, g)).transpose()?;
        match trial_index.get(&id) {
            Some(&i) => {
                let (r0, c, was) = if tl.labels[i] != label {
                    (first_row[i], label_c, &tl.labels[i])
                } else if group.as_ref().is_some_and(|g| *g != tl.groups[i]) {
                    (first_row[i], group_c.expect("group"), &tl.groups[i])
                } else {
                    continue;
                };
                return Err(Error::Input(format!(
                    "{}: trial '{id}' has '{}' here but '{was}' on line {}; a trial has one {} throughout",
                    t.at(r, c),
                    t.rows[r][c],
                    t.lines[r0],
                    if c == label_c { "label" } else { "group" }
                )));
            }
            None => {
                trial_index.insert(id.clone(), trial_ids.len());
                trial_ids.push(id);
                first_row.push(r);
                tl.labels.push(label);
                tl.groups.push(group.unwrap_or_default());
            }
        }
    }
    let (n, w, p) = (trial_ids.len(), times.len(), neuron_cols.len());
    let mut x = Array3::<f64>::from_elem((w, n, p), f64::NAN);
    let mut seen_at: Vec<Option<usize>> = vec![None; w * n];
    for r in 0..t.rows.len() {
        let i = trial_index[&t.rows[r][trial_c]];
        let k = times.partition_point(|&v| v < row_time[r]);
        if let Some(r0) = seen_at[k * n + i] {
            return Err(Error::Input(format!(
                "{}: trial '{}' has a second row for time {} (the first is on line {}); one row per trial and bin",
                t.at(r, time_c),
                trial_ids[i],
                t.rows[r][time_c],
                t.lines[r0]
            )));
        }
        seen_at[k * n + i] = Some(r);
        for (j, &c) in neuron_cols.iter().enumerate() {
            x[[k, i, j]] = match t.cell(r, c) {
                Cell::Number(v) => v,
                Cell::Missing => {
                    return Err(Error::Input(format!(
                        "{}: {} is a missing value; every trial needs a value in every bin",
                        t.at(r, c),
                        if t.rows[r][c].is_empty() {
                            "empty cell".to_string()
                        } else {
                            format!("'{}'", t.rows[r][c])
                        }
                    )))
                }
                Cell::NotNumber => {
                    return Err(Error::Input(format!(
                        "{}: '{}' is not a number",
                        t.at(r, c),
                        t.rows[r][c]
                    )))
                }
            };
        }
    }
    for i in 0..n {
        if let Some(k) = (0..w).find(|&k| seen_at[k * n + i].is_none()) {
            return Err(Error::Input(format!(
                "{src}: trial '{}' (first on line {}) has no row for time {}; every trial needs the same bins",
                trial_ids[i], t.lines[first_row[i]], times[k]
            )));
        }
    }
    // Bin times are window centres; a bin's extent is unknown, so each window is the point at its time.
    let windows = times
        .iter()
        .map(|&v| Window {
            start: v,
            end: v,
            time: v,
        })
        .collect();
    let neurons = neuron_cols.iter().map(|&c| t.headers[c].clone()).collect();
    assemble(src, trial_ids, tl, columns, windows, neurons, x, Vec::new())
}

/// Column names of the events file and the trial table's alignment column.
pub struct EventColumns<'a> {
    pub trial: &'a str,
    pub neuron: &'a str,
    pub time: &'a str,
    pub align: Option<&'a str>,
}

/// Spike events counted in sliding windows, divided by the width (Hz).
pub fn from_events(
    events: &FileBytes,
    trials: &Table,
    columns: &Columns,
    spec: &EventColumns,
    windows: Vec<Window>,
    width: f64,
) -> Result<TimeDataset> {
    let src = &trials.source;
    let trial_c = trials.column(spec.trial)?;
    let label_c = trials.column(&columns.label)?;
    let group_c = columns
        .group
        .as_deref()
        .map(|g| trials.column(g))
        .transpose()?;
    let align_c = spec.align.map(|a| trials.column(a)).transpose()?;
    let mut trial_index: BTreeMap<String, usize> = BTreeMap::new();
    let mut trial_ids = Vec::new();
    let mut tl = TrialLabels {
        labels: Vec::new(),
        groups: Vec::new(),
    };
    let mut align = Vec::new();
    for r in 0..trials.rows.len() {
        let id = text_cell(trials, r, trial_c)?;
        if let Some(&i) = trial_index.get(&id) {
            return Err(Error::Input(format!(
                "{}: trial '{id}' is listed twice (also on line {}); one row per trial",
                trials.at(r, trial_c),
                trials.lines[i]
            )));
        }
        trial_index.insert(id.clone(), r);
        trial_ids.push(id);
        tl.labels.push(text_cell(trials, r, label_c)?);
        tl.groups.push(
            group_c
                .map(|g| text_cell(trials, r, g))
                .transpose()?
                .unwrap_or_default(),
        );
        align.push(match align_c {
            Some(c) => number_cell(trials, r, c, "alignment time in seconds")?,
            None => 0.0,
        });
    }

    // One pass over the spikes: neuron ids are collected as they come, counts kept per (neuron, trial, window).
    let mut neuron_index: BTreeMap<String, usize> = BTreeMap::new();
    let mut counts: Vec<Vec<u32>> = Vec::new(); // per neuron: trial-major × window
    let (n, w) = (trial_ids.len(), windows.len());
    // Set by the header callback, read by the row callback.
    let cols = std::cell::Cell::new((0, 0, 0));
    let (mut total, mut outside) = (0u64, 0u64);
    table::stream(
        events.name,
        events.bytes,
        |h| {
            let find = |name: &str| {
                h.headers.iter().position(|x| x == name).ok_or_else(|| {
                    Error::Input(format!(
                        "{}: no column named '{name}'; the columns are: {}",
                        events.name,
                        quoted_list(&h.headers)
                    ))
                })
            };
            cols.set((find(spec.trial)?, find(spec.neuron)?, find(spec.time)?));
            Ok(())
        },
        |line, rec| {
            let cols = cols.get();
            let at = |c: usize| {
                format!(
                    "{}, line {line}, column '{}'",
                    events.name,
                    [spec.trial, spec.neuron, spec.time][c]
                )
            };
            let id = &rec[cols.0];
            let &i = trial_index.get(id).ok_or_else(|| {
                Error::Input(format!(
                    "{}: trial '{id}' is not in the trial table {src}",
                    at(0)
                ))
            })?;
            let unit = &rec[cols.1];
            if is_missing_token(unit) {
                return Err(Error::Input(format!("{}: the neuron is missing", at(1))));
            }
            let t = match parse_number(&rec[cols.2], false) {
                Cell::Number(v) => v,
                Cell::Missing => {
                    return Err(Error::Input(format!(
                        "{}: the spike time is missing",
                        at(2)
                    )))
                }
                Cell::NotNumber => {
                    return Err(Error::Input(format!(
                        "{}: '{}' is not a time in seconds{}",
                        at(2),
                        &rec[cols.2],
                        if rec[cols.2].contains(',') {
                            " (write decimals with a point in the events file)"
                        } else {
                            ""
                        }
                    )))
                }
            };
            let u = match neuron_index.get(unit) {
                Some(&u) => u,
                None => {
                    neuron_index.insert(unit.to_string(), counts.len());
                    counts.push(vec![0; n * w]);
                    counts.len() - 1
                }
            };
            total += 1;
            let range = containing(&windows, to_ns(t - align[i]));
            if range.is_empty() {
                outside += 1;
            }
            for k in range {
                counts[u][i * w + k] += 1;
            }
            Ok(())
        },
    )?;
    if neuron_index.is_empty() {
        return Err(Error::Input(format!("{}: no spikes", events.name)));
    }
    // Neurons in natural order of their ids; the map's byte order is only the collection order.
    let names: Vec<String> = neuron_index.keys().cloned().collect();
    let neurons = sorted_levels(&names);
    let counts: Vec<Vec<u32>> = neurons
        .iter()
        .map(|name| std::mem::take(&mut counts[neuron_index[name]]))
        .collect();
    let spans = Spans {
        source: events.name,
        aligned: spec.align.is_some(),
        total,
        outside,
    };
    let (x, warnings) = rates(&counts, n, &windows, width, &spans)?;
    let mut ds = assemble(src, trial_ids, tl, columns, windows, neurons, x, warnings)?;
    ds.spikes_total = total;
    ds.spikes_outside = outside;
    Ok(ds)
}

/// Where spikes were counted, for messages.
struct Spans<'a> {
    source: &'a str,
    aligned: bool,
    total: u64,
    outside: u64,
}

/// Rates (Hz) from spike counts (`counts[neuron][trial × windows + window]`), with the checks every spike source
/// shares: some spike must fall inside the windows, and trials with none at all are worth a warning.
fn rates(
    counts: &[Vec<u32>],
    n: usize,
    windows: &[Window],
    width: f64,
    spans: &Spans,
) -> Result<(Array3<f64>, Vec<String>)> {
    let (w, p) = (windows.len(), counts.len());
    if spans.outside == spans.total {
        return Err(Error::Design(format!(
            "{}: none of the {} spikes falls inside the windows ({} s to {} s{}); check the span and the \
             alignment",
            spans.source,
            spans.total,
            windows[0].start,
            windows[w - 1].end,
            if spans.aligned {
                " after alignment"
            } else {
                ", times taken as already aligned"
            }
        )));
    }
    let mut x = Array3::<f64>::zeros((w, n, p));
    for (j, c) in counts.iter().enumerate() {
        for i in 0..n {
            for k in 0..w {
                x[[k, i, j]] = c[i * w + k] as f64 / width;
            }
        }
    }
    let silent = (0..n)
        .filter(|&i| {
            counts
                .iter()
                .all(|c| c[i * w..(i + 1) * w].iter().all(|&v| v == 0))
        })
        .count();
    let mut warnings = Vec::new();
    if silent > 0 {
        warnings.push(format!(
            "{silent} trial{} of the trial table {} no spike inside the windows (rates 0 throughout)",
            if silent == 1 { "" } else { "s" },
            if silent == 1 { "has" } else { "have" }
        ));
    }
    Ok((x, warnings))
}

/// An NWB recording: every unit's spikes counted in windows around each trial's alignment time (default: its
/// `start_time`). Labels and groups are trials-table columns.
pub fn from_nwb(
    src: &str,
    rec: &Recording,
    columns: &Columns,
    align: Option<&str>,
    windows: Vec<Window>,
    width: f64,
) -> Result<TimeDataset> {
    let n = rec.n_trials();
    let label = rec.require(src, &columns.label)?.texts();
    let group = columns
        .group
        .as_deref()
        .map(|g| rec.require(src, g).map(Column::texts))
        .transpose()?;
    let align_name = align.unwrap_or("start_time");
    let align_times = match rec.require(src, align_name)? {
        Column::Numbers(v) => v.clone(),
        Column::Texts(_) => {
            return Err(Error::Input(format!(
                "{src}: the trials column '{align_name}' holds text, not times in seconds"
            )))
        }
    };
    if let Some(i) = align_times.iter().position(|t| !t.is_finite()) {
        return Err(Error::Input(format!(
            "{src}: trial {i} has no '{align_name}' time (NaN); every trial needs one to align to"
        )));
    }
    let w = windows.len();
    let (first, last) = (windows[0].start, windows[w - 1].end);
    // Spikes counted inside some trial's analysis span (a spike near two trials can count in both).
    let mut inside = 0u64;
    let counts: Vec<Vec<u32>> = rec
        .spikes
        .iter()
        .map(|times| {
            let mut c = vec![0u32; n * w];
            for (i, &a) in align_times.iter().enumerate() {
                // Spikes of this trial's span, found by bisection in the unit's sorted times.
                let lo = times.partition_point(|&t| to_ns(t - a) < first);
                let hi = times.partition_point(|&t| to_ns(t - a) < last);
                for &t in &times[lo..hi] {
                    for k in containing(&windows, to_ns(t - a)) {
                        c[i * w + k] += 1;
                    }
                }
                inside += (hi - lo) as u64;
            }
            c
        })
        .collect();
    let all: u64 = rec.spikes.iter().map(|s| s.len() as u64).sum();
    let spans = Spans {
        source: src,
        aligned: true,
        total: all,
        outside: if inside == 0 {
            all
        } else {
            all.saturating_sub(inside)
        },
    };
    let (x, warnings) = rates(&counts, n, &windows, width, &spans)?;
    let tl = TrialLabels {
        labels: label,
        groups: group.unwrap_or_else(|| vec![String::new(); n]),
    };
    let trial_ids = (0..n).map(|i| format!("trial {i}")).collect();
    let mut ds = assemble(
        src,
        trial_ids,
        tl,
        columns,
        windows,
        rec.units.clone(),
        x,
        warnings,
    )?;
    ds.spikes_total = all;
    ds.spikes_outside = spans.outside;
    Ok(ds)
}
