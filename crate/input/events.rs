//! Spike events (one row per spike: trial, neuron, time in s) with a trial table (one row per trial: trial, label,
//! optional group, optional alignment time). Spikes are counted in sliding windows and divided by the window
//! width, giving rates in Hz; a neuron with no spike in a trial has rate 0 there, never a missing value.

use super::spike_counts::{rates, Spans};
use super::table::{self, is_missing_token, parse_number, quoted_list, Cell, Table};
use super::trial_labels::{assemble, number_cell, text_cell, TrialLabels};
use super::FileBytes;
use crate::data::labels::sorted_levels;
use crate::data::time::TimeDataset;
use crate::error::{Error, Result};
use crate::recipe::limits::{self, beyond_magnitude};
use crate::recipe::windows::{containing, to_ns, Window};
use crate::recipe::Columns;
use std::collections::BTreeMap;

/// Column names of the events file and the trial table's alignment column.
pub struct EventColumns<'a> {
    pub trial: &'a str,
    pub neuron: &'a str,
    pub time: &'a str,
    pub align: Option<&'a str>,
}

/// Spike events counted in sliding windows, divided by the width (Hz).
pub fn read(
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
                Cell::TooLarge(v) => {
                    return Err(Error::Input(format!("{}: {}", at(2), beyond_magnitude(v))))
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
                    // Checked as each neuron appears: a small events file can name more neurons than trials ×
                    // windows × neurons can be held for.
                    limits::check_time_values(events.name, n, counts.len() + 1, w)?;
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
