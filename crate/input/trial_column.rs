//! One more column's value on every trial, read beside the activity: the second column of generalization across
//! conditions, or a label read as numbers. Values come in the trial order of the activity's reader, and each
//! remembers where it was read, so that a bad value is named by its file, line and column.

use super::extract;
use super::table::{is_missing_token, parse_number, Cell, Table};
use super::trial_labels::text_cell;
use super::FileBytes;
use crate::error::{Error, Result};
use crate::input::nwb::Column;
use crate::recipe::TimeInput;
use std::collections::BTreeMap;

/// A trial's value in a column, as text and (when it is one) as a number, and where it was read.
#[derive(Debug, Clone)]
pub struct TrialCell {
    pub text: String,
    pub number: Option<f64>,
    /// "file, line N, column 'x'" (or, in an NWB file, the trials column and the trial's index).
    pub at: String,
}

/// The rows of a trial table that became trials: every row except those dropped for missing values.
pub fn kept_rows(table: &Table, dropped_lines: &[u64]) -> Vec<usize> {
    (0..table.rows.len())
        .filter(|&r| !dropped_lines.contains(&table.lines[r]))
        .collect()
}

/// Column `column` of a trial table at `rows`; a missing value is an error naming its cell.
pub fn of_table(table: &Table, column: &str, rows: &[usize]) -> Result<Vec<TrialCell>> {
    let c = table.column(column)?;
    rows.iter().map(|&r| cell(table, r, c)).collect()
}

fn cell(t: &Table, r: usize, c: usize) -> Result<TrialCell> {
    Ok(TrialCell {
        text: text_cell(t, r, c)?,
        number: match t.cell(r, c) {
            Cell::Number(v) => Some(v),
            _ => None,
        },
        at: t.at(r, c),
    })
}

/// Column `column` of a recording's trials, in the order of `trial_ids` (as the recording's reader gave them):
/// from the binned table (one value per trial, the same on every row of the trial), the trial table of spike
/// events, or an NWB file's trials table.
pub fn of_recording(
    files: &[FileBytes],
    input: &TimeInput,
    column: &str,
    trial_ids: &[String],
) -> Result<Vec<TrialCell>> {
    match (input, files) {
        (TimeInput::Binned { trial, .. }, [table]) => {
            let t = Table::parse(table.name, table.bytes)?;
            by_trial(&t, trial, column, trial_ids, true)
        }
        (TimeInput::Events { trial, .. }, [_, trials]) => {
            let t = Table::parse(trials.name, trials.bytes)?;
            by_trial(&t, trial, column, trial_ids, false)
        }
        (TimeInput::Nwb { .. }, [file]) => {
            let (rec, _) = extract::read_any(file.name, file.bytes)?;
            let values = rec.require(file.name, column)?;
            let n = values.len();
            if n != trial_ids.len() {
                return Err(Error::Input(format!(
                    "{}: the trials column '{column}' has {n} values for {} trials",
                    file.name,
                    trial_ids.len()
                )));
            }
            let texts = values.texts();
            (0..n)
                .map(|i| {
                    let at = format!("{}: trials column '{column}', trial {i}", file.name);
                    let number = match values {
                        Column::Numbers(v) => Some(v[i]).filter(|x| x.is_finite()),
                        Column::Texts(t) => match parse_number(&t[i], false) {
                            Cell::Number(v) => Some(v),
                            _ => None,
                        },
                    };
                    // A missing number reads as "NaN", a missing token.
                    if is_missing_token(&texts[i]) {
                        return Err(Error::Input(format!(
                            "{at}: the value is missing; every trial needs one"
                        )));
                    }
                    Ok(TrialCell {
                        text: texts[i].clone(),
                        number,
                        at,
                    })
                })
                .collect()
        }
        _ => Err(Error::Recipe(
            "the files do not match the recording's kind (one binned table, spike events with a trial table, or one \
             NWB file)"
                .into(),
        )),
    }
}

/// One value per trial id from a table with a trial column; with `repeated` (a binned table) a trial's rows must
/// all hold the same value.
fn by_trial(
    t: &Table,
    trial: &str,
    column: &str,
    trial_ids: &[String],
    repeated: bool,
) -> Result<Vec<TrialCell>> {
    let (trial_c, c) = (t.column(trial)?, t.column(column)?);
    let mut found: BTreeMap<String, (usize, TrialCell)> = BTreeMap::new();
    for r in 0..t.rows.len() {
        let id = text_cell(t, r, trial_c)?;
        let value = cell(t, r, c)?;
        match found.get(&id) {
            Some((first, was)) if repeated && was.text != value.text => {
                return Err(Error::Input(format!(
                    "{}: trial '{id}' has '{}' here but '{}' on line {}; a trial has one value of '{column}' \
                     throughout",
                    value.at, value.text, was.text, t.lines[*first]
                )))
            }
            Some(_) => {}
            None => {
                found.insert(id, (r, value));
            }
        }
    }
    trial_ids
        .iter()
        .map(|id| {
            found.remove(id).map(|(_, v)| v).ok_or_else(|| {
                Error::Input(format!(
                    "{}: trial '{id}' has no row, so no value of '{column}'",
                    t.source
                ))
            })
        })
        .collect()
}
