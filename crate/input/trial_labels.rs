//! What every time-resolved reader shares: one label (and group) per trial read from a table's cells, and the
//! assembly of trials, windows and rates into a [`TimeDataset`].

use super::table::{is_missing_token, Cell, Table};
use crate::data::labels::{codes, sorted_levels};
use crate::data::time::TimeDataset;
use crate::error::{Error, Result};
use crate::recipe::limits::beyond_magnitude;
use crate::recipe::windows::Window;
use crate::recipe::Columns;
use ndarray::Array3;

/// Labels and groups read from a table's rows, one per trial.
pub(super) struct TrialLabels {
    pub labels: Vec<String>,
    pub groups: Vec<String>,
}

pub(super) fn text_cell(t: &Table, r: usize, c: usize) -> Result<String> {
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

pub(super) fn number_cell(t: &Table, r: usize, c: usize, what: &str) -> Result<f64> {
    match t.cell(r, c) {
        Cell::Number(v) => Ok(v),
        Cell::Missing => Err(Error::Input(format!(
            "{}: the {what} is missing",
            t.at(r, c)
        ))),
        Cell::TooLarge(v) => Err(Error::Input(format!(
            "{}: {}",
            t.at(r, c),
            beyond_magnitude(v)
        ))),
        Cell::NotNumber => Err(Error::Input(format!(
            "{}: {} is not a number ({what})",
            t.at(r, c),
            super::table::quoted_cell(&t.rows[r][c])
        ))),
    }
}

/// Build the dataset once trials, labels and the rate array are known.
#[allow(clippy::too_many_arguments)]
pub(super) fn assemble(
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
    if let [] | [_] = classes.as_slice() {
        return Err(Error::Design(format!(
            "{source}: column '{}' holds {}; decoding needs at least two conditions",
            columns.label,
            classes.first().map_or("no class".to_string(), |c| format!(
                "only one class ('{c}')"
            ))
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
        x: x.into_shared(),
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
