//! Binned tables: one row per trial × time bin, with the trial id, the bin's time in seconds, the label,
//! optionally a group, and one column per neuron; each distinct time is one window.

use super::table::{quoted_list, Cell, Table};
use super::trial_labels::{assemble, number_cell, text_cell, TrialLabels};
use crate::data::time::TimeDataset;
use crate::error::{Error, Result};
use crate::recipe::limits::beyond_magnitude;
use crate::recipe::windows::Window;
use crate::recipe::Columns;
use ndarray::Array3;
use std::collections::BTreeMap;

/// A long table, one row per trial × bin. Every trial must have the same bin times, one row each, and one label.
pub fn read(t: &Table, columns: &Columns, trial: &str, time: &str) -> Result<TimeDataset> {
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
        let v = match number_cell(t, r, time_c, "bin time in seconds") {
            Ok(v) => v,
            // Text from the first row on: most likely a table of one row per trial, read as a binned table.
            Err(Error::Input(m)) if r == 0 && matches!(t.cell(0, time_c), Cell::NotNumber) => {
                return Err(Error::Input(format!(
                    "{m}; column '{}' holds text from its first row, so this looks like a table with one row per \
                     trial rather than one row per trial and time bin",
                    t.headers[time_c]
                )))
            }
            Err(e) => return Err(e),
        };
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
    if n.saturating_mul(w) > t.rows.len() {
        // Fewer rows than trials × bins: some trial lacks a bin. Found per trial here, before anything of size
        // trials × bins is allocated (a table of distinct trials at distinct times would otherwise ask for rows²).
        let mut per_trial: Vec<Vec<f64>> = vec![Vec::new(); n];
        for (r, &v) in row_time.iter().enumerate() {
            per_trial[trial_index[&t.rows[r][trial_c]]].push(v);
        }
        for (i, mut own) in per_trial.into_iter().enumerate() {
            own.sort_by(f64::total_cmp);
            own.dedup();
            if let Some(k) = (0..w).find(|&k| own.get(k) != Some(&times[k])) {
                return Err(lacks_bin(
                    src,
                    &trial_ids[i],
                    t.lines[first_row[i]],
                    times[k],
                ));
            }
        }
    }
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
                Cell::TooLarge(v) => {
                    return Err(Error::Input(format!(
                        "{}: {}",
                        t.at(r, c),
                        beyond_magnitude(v)
                    )))
                }
                Cell::NotNumber => {
                    return Err(Error::Input(format!(
                        "{}: {} is not a number",
                        t.at(r, c),
                        super::table::quoted_cell(&t.rows[r][c])
                    )))
                }
            };
        }
    }
    for i in 0..n {
        if let Some(k) = (0..w).find(|&k| seen_at[k * n + i].is_none()) {
            return Err(lacks_bin(
                src,
                &trial_ids[i],
                t.lines[first_row[i]],
                times[k],
            ));
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

fn lacks_bin(src: &str, trial: &str, line: u64, time: f64) -> Error {
    Error::Input(format!(
        "{src}: trial '{trial}' (first on line {line}) has no row for time {time}; every trial needs the same bins"
    ))
}
