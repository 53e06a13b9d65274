//! The activity with a label and a second column's level on every trial: the input of generalization across
//! conditions. The second column is never a feature (it is left out of the automatic choice, and refused in an
//! explicit list), and a trial without a level is an error naming its cell (or, when asked, left out).

use super::table::{is_missing_token, Table};
use super::trial_column::{self, TrialCell};
use super::{sha256_hex, time_course as read_time_course, trial_table as tables, FileBytes};
use crate::data::across::AcrossData;
use crate::data::features::Features;
use crate::data::labels::{codes, sorted_levels};
use crate::error::{Error, Result};
use crate::recipe::{Columns, TimeInput};

/// A trial table with a label and the `across` column.
pub fn trial_table(
    name: &str,
    bytes: &[u8],
    columns: &Columns,
    across: &str,
) -> Result<AcrossData> {
    let mut table = Table::parse(name, bytes)?;
    let columns = without_feature(&table.source, columns, across)?;
    let c = table.column(across)?;
    // Trials without a level are left out here when asked (the reader below leaves out the rest).
    let mut dropped = Vec::new();
    if columns.drop_missing {
        let keep: Vec<bool> = table
            .rows
            .iter()
            .map(|row| !is_missing_token(&row[c]))
            .collect();
        dropped = (0..keep.len())
            .filter(|&r| !keep[r])
            .map(|r| table.lines[r])
            .collect();
        let rows = std::mem::take(&mut table.rows);
        table.rows = rows
            .into_iter()
            .zip(&keep)
            .filter(|(_, &k)| k)
            .map(|(row, _)| row)
            .collect();
        let lines = std::mem::take(&mut table.lines);
        table.lines = lines
            .into_iter()
            .zip(&keep)
            .filter(|(_, &k)| k)
            .map(|(l, _)| l)
            .collect();
    }
    let mut data = tables::from_table(&table, &columns)?;
    data.sha256 = sha256_hex(bytes);
    let rows = trial_column::kept_rows(&table, &data.dropped_lines);
    let cells = trial_column::of_table(&table, across, &rows)?;
    data.dropped_lines.extend(dropped);
    data.dropped_lines.sort_unstable();
    let features = Features::from_table(&data);
    assemble(
        features,
        data.y,
        data.classes,
        data.label_column,
        &cells,
        across,
        name,
    )
}

/// A recording (binned table, spike events with a trial table, or NWB file) with a label and the `across` column.
pub fn time_course(
    files: &[FileBytes],
    columns: &Columns,
    input: &TimeInput,
    across: &str,
) -> Result<AcrossData> {
    let source = files.last().map_or("", |f| f.name);
    let columns = without_feature(source, columns, across)?;
    let data = read_time_course(files, &columns, input)?;
    let cells = trial_column::of_recording(files, input, across, &data.trial_ids)?;
    let (y, classes, label) = (
        data.y.clone(),
        data.classes.clone(),
        data.label_column.clone(),
    );
    let source = data.source.clone();
    assemble(
        Features::from_time(data),
        y,
        classes,
        label,
        &cells,
        across,
        &source,
    )
}

/// The columns with `across` kept out of the features: added to the ignored columns, refused in an explicit list
/// and as the group.
fn without_feature(source: &str, columns: &Columns, across: &str) -> Result<Columns> {
    if columns
        .features
        .as_ref()
        .is_some_and(|f| f.iter().any(|n| n == across))
    {
        return Err(Error::Design(format!(
            "{source}: '{across}' splits training from testing levels and cannot also be a feature"
        )));
    }
    if columns.group.as_deref() == Some(across) {
        return Err(Error::Design(format!(
            "{source}: '{across}' is both the group column and the column split into training and testing levels; \
             folds within a testing level cannot be grouped by that level"
        )));
    }
    let mut out = columns.clone();
    out.ignore.push(across.to_string());
    Ok(out)
}

fn assemble(
    features: Features,
    y: Vec<usize>,
    classes: Vec<String>,
    label_column: String,
    cells: &[TrialCell],
    across: &str,
    source: &str,
) -> Result<AcrossData> {
    let texts: Vec<String> = cells.iter().map(|c| c.text.clone()).collect();
    let level_names = sorted_levels(&texts);
    if level_names.len() < 2 {
        return Err(Error::Design(format!(
            "{source}: column '{across}' holds only one level ('{}'); training and testing need different levels",
            level_names.first().map_or("", String::as_str)
        )));
    }
    Ok(AcrossData {
        levels: codes(&texts, &level_names),
        level_names,
        across_column: across.to_string(),
        features,
        y,
        classes,
        label_column,
    })
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
    fn the_second_column_is_read_and_never_a_feature() {
        let csv = b"choice,context,n1,n2\nL,1,1,2\nR,2,3,4\nR,1,5,6\n";
        let d = trial_table("t.csv", csv, &cols("choice"), "context").unwrap();
        assert_eq!(d.features.names, vec!["n1", "n2"]);
        assert_eq!(d.level_names, vec!["1", "2"]);
        assert_eq!(d.levels, vec![0, 1, 0]);
        assert_eq!(d.y, vec![0, 1, 1]);
        let mut c = cols("choice");
        c.features = Some(vec!["n1".into(), "context".into()]);
        assert!(trial_table("t.csv", csv, &c, "context")
            .unwrap_err()
            .to_string()
            .contains("cannot also be a feature"));
    }

    #[test]
    fn a_missing_level_is_named_or_dropped() {
        let csv = b"choice,context,n1\nL,a,1\nR,,3\nR,b,5\nL,b,2\n";
        let e = trial_table("t.csv", csv, &cols("choice"), "context")
            .unwrap_err()
            .to_string();
        assert!(e.contains("t.csv, line 3, column 'context'"), "{e}");
        let mut c = cols("choice");
        c.drop_missing = true;
        let d = trial_table("t.csv", csv, &c, "context").unwrap();
        assert_eq!(d.features.dropped_lines, vec![3]);
        assert_eq!(d.levels, vec![0, 1, 1]);
        assert_eq!(d.features.window(0), &[1.0, 5.0, 2.0]);
    }
}
