//! A label column read as numbers (running speed, heading): the target of a continuous decoder, with the activity
//! read as for any other analysis. A cell that is not a number is an error naming its file, line and column.

use super::table::Table;
use super::trial_column::{self, TrialCell};
use super::{sha256_hex, time_course as read_time_course, trial_table as tables, FileBytes};
use crate::data::features::Features;
use crate::data::target::TargetData;
use crate::error::{Error, Result};
use crate::recipe::{Columns, TimeInput};

/// A trial table whose label column holds a number on every trial.
pub fn trial_table(name: &str, bytes: &[u8], columns: &Columns) -> Result<TargetData> {
    let table = Table::parse(name, bytes)?;
    let mut data = tables::from_table(&table, columns)?;
    data.sha256 = sha256_hex(bytes);
    let rows = trial_column::kept_rows(&table, &data.dropped_lines);
    let cells = trial_column::of_table(&table, &columns.label, &rows)?;
    Ok(TargetData {
        values: numbers(&cells, &columns.label)?,
        column: data.label_column.clone(),
        features: Features::from_table(&data),
    })
}

/// A recording whose label column (in the binned table, the trial table or the NWB trials table) holds a number on
/// every trial.
pub fn time_course(
    files: &[FileBytes],
    columns: &Columns,
    input: &TimeInput,
) -> Result<TargetData> {
    let data = read_time_course(files, columns, input)?;
    let cells = trial_column::of_recording(files, input, &columns.label, &data.trial_ids)?;
    Ok(TargetData {
        values: numbers(&cells, &columns.label)?,
        column: data.label_column.clone(),
        features: Features::from_time(data),
    })
}

/// Every cell as a number, or an error at the first that is not one.
fn numbers(cells: &[TrialCell], column: &str) -> Result<Vec<f64>> {
    cells
        .iter()
        .map(|c| {
            c.number.ok_or_else(|| {
                Error::Input(format!(
                    "{}: {} is not a number; '{column}' is decoded as a continuous variable, so every trial needs \
                     a number there",
                    c.at,
                    super::table::quoted_cell(&c.text)
                ))
            })
        })
        .collect()
}

#[cfg(test)]
mod tests {
    use super::*;

    fn cols(label: &str) -> Columns {
        Columns {
            label: label.into(),
            ..Default::default()
        }
    }

    #[test]
    fn reads_numbers_and_names_the_cell_that_is_not_one() {
        let csv = b"speed;n1;n2\n1,5;3;4\n2;5;6\n";
        let d = trial_table("t.csv", csv, &cols("speed")).unwrap();
        assert_eq!(d.values, vec![1.5, 2.0]);
        assert_eq!(d.features.names, vec!["n1", "n2"]);
        let bad = b"speed,n1\n1,3\nfast,4\n";
        let e = trial_table("t.csv", bad, &cols("speed"))
            .unwrap_err()
            .to_string();
        assert!(
            e.contains("t.csv, line 3, column 'speed'") && e.contains("'fast' is not a number"),
            "{e}"
        );
    }

    #[test]
    fn dropped_trials_keep_values_aligned() {
        let csv = b"speed,n1\n1,3\n2,NA\n3,5\n";
        let mut c = cols("speed");
        c.drop_missing = true;
        let d = trial_table("t.csv", csv, &c).unwrap();
        assert_eq!(d.values, vec![1.0, 3.0]);
        assert_eq!(d.features.window(0), &[3.0, 5.0]);
    }
}
