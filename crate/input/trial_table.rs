//! Ingestion: from the bytes of a trial table to a [`Dataset`] the decoders can use.
//!
//! The core never touches the filesystem: faces read the file and pass its bytes and name, so the page (which gets
//! bytes from a dropped `File`) and the CLI share every line of parsing and validation.

pub mod labels;
pub mod table;

use crate::error::{Error, Result};
use crate::protocol::Trials;
use ndarray::Array2;
use serde::{Deserialize, Serialize};
use sha2::{Digest, Sha256};
use table::{quoted_list, Cell, Table};

/// Which columns mean what, and what to do with gaps.
#[derive(Debug, Clone, Default, PartialEq, Serialize, Deserialize)]
pub struct Columns {
    /// Column holding the condition to decode.
    pub label: String,
    /// Optional column naming the recording session, block or day; folds never split a group.
    #[serde(default)]
    pub group: Option<String>,
    /// Feature columns; `None` means every other mostly-numeric column.
    #[serde(default)]
    pub features: Option<Vec<String>>,
    /// Columns never used as features by default (trial numbers, timestamps, other labels).
    #[serde(default, skip_serializing_if = "Vec::is_empty")]
    pub ignore: Vec<String>,
    /// Leave out trials with a missing cell instead of stopping.
    #[serde(default)]
    pub drop_missing: bool,
    /// Column naming the recording session when each neuron was recorded in one session only: trials are then
    /// combined across sessions into pseudo-trials. Each neuron's cells are filled in its own session's rows and
    /// empty in the others.
    #[serde(default, skip_serializing_if = "Option::is_none")]
    pub pseudo: Option<String>,
}

/// Trials × features with their labels, ready for the protocol.
#[derive(Debug, Clone)]
pub struct Dataset {
    pub source: String,
    /// SHA-256 of the file's bytes as read, in lower-case hex; goes into every report.
    pub sha256: String,
    pub delimiter: String,
    pub decimal_comma: bool,
    /// Trials × features.
    pub x: Array2<f64>,
    /// Class index of each trial into `classes`.
    pub y: Vec<usize>,
    pub classes: Vec<String>,
    /// Group index of each trial into `group_names`, when a group column is set.
    pub groups: Option<Vec<usize>>,
    pub group_names: Vec<String>,
    pub feature_names: Vec<String>,
    pub label_column: String,
    pub group_column: Option<String>,
    /// File lines of the trials left out for missing values.
    pub dropped_lines: Vec<u64>,
    /// Columns left out of the features because they hold text.
    pub skipped_columns: Vec<String>,
    /// Things the user should know about the file that do not stop the analysis.
    pub warnings: Vec<String>,
    /// Pseudo-populations: the session (index into `group_names`) each feature was recorded in.
    pub pseudo: Option<Vec<usize>>,
}

impl Dataset {
    /// Parse and validate a trial table (one row per trial).
    pub fn from_csv(source: &str, bytes: &[u8], columns: &Columns) -> Result<Dataset> {
        let table = Table::parse(source, bytes)?;
        let mut ds = Dataset::from_table(&table, columns)?;
        ds.sha256 = sha256_hex(bytes);
        Ok(ds)
    }

    /// Build from an already parsed table (the SHA-256 is left empty).
    pub fn from_table(table: &Table, columns: &Columns) -> Result<Dataset> {
        let src = &table.source;
        let label_col = table.column(&columns.label)?;
        if columns.pseudo.is_some() && columns.group.is_some() {
            return Err(Error::Design(format!(
                "{src}: a session column for pseudo-populations is also the group column; name only one"
            )));
        }
        // The session column of a pseudo-population is read as the group column: shuffles stay within sessions.
        let group_col = columns
            .group
            .as_deref()
            .or(columns.pseudo.as_deref())
            .map(|g| table.column(g))
            .transpose()?;
        if group_col == Some(label_col) {
            return Err(Error::Design(format!(
                "{src}: the group column and the label column are both '{}'; choose different columns",
                columns.label
            )));
        }
        let (feature_cols, skipped) = choose_features(table, columns, label_col, group_col)?;

        let mut x = Vec::with_capacity(table.rows.len() * feature_cols.len());
        let (mut labels, mut groups, mut dropped) = (Vec::new(), Vec::new(), Vec::new());
        'rows: for (r, row) in table.rows.iter().enumerate() {
            let mut values = Vec::with_capacity(feature_cols.len());
            let text_cols = std::iter::once(label_col).chain(group_col);
            for c in text_cols {
                if table::is_missing_token(&row[c]) {
                    if columns.drop_missing {
                        dropped.push(table.lines[r]);
                        continue 'rows;
                    }
                    return Err(missing(table, r, c));
                }
            }
            for &c in &feature_cols {
                match table.cell(r, c) {
                    Cell::Number(v) => values.push(v),
                    // Checked below against the sessions: a neuron is empty outside its own session.
                    Cell::Missing if columns.pseudo.is_some() => values.push(f64::NAN),
                    Cell::Missing if columns.drop_missing => {
                        dropped.push(table.lines[r]);
                        continue 'rows;
                    }
                    Cell::Missing => return Err(missing(table, r, c)),
                    Cell::NotNumber => {
                        return Err(Error::Input(format!(
                            "{}: '{}' is not a number{}",
                            table.at(r, c),
                            row[c],
                            if !table.decimal_comma && row[c].contains(',') {
                                " (decimal commas are read only in semicolon-separated files)"
                            } else {
                                ""
                            }
                        )))
                    }
                }
            }
            x.extend(values);
            labels.push(row[label_col].clone());
            if let Some(g) = group_col {
                groups.push(row[g].clone());
            }
        }
        let n = labels.len();
        if n == 0 {
            return Err(Error::Input(format!(
                "{src}: every trial has a missing value; nothing is left to decode"
            )));
        }
        let classes = labels::sorted_levels(&labels);
        if classes.len() < 2 {
            return Err(Error::Design(format!(
                "{src}: column '{}' holds only one class ('{}'); decoding needs at least two conditions",
                columns.label, classes[0]
            )));
        }
        let y = labels::codes(&labels, &classes);
        let (groups, group_names) = match group_col {
            Some(_) => {
                let names = labels::sorted_levels(&groups);
                (Some(labels::codes(&groups, &names)), names)
            }
            None => (None, Vec::new()),
        };
        let p = feature_cols.len();
        let mut warnings = counter_columns(&x, p, &feature_cols, table);
        if !skipped.is_empty() {
            warnings.push(format!(
                "{} not used as features because {} mostly text: {}",
                if skipped.len() == 1 {
                    "this column is"
                } else {
                    "these columns are"
                },
                if skipped.len() == 1 {
                    "it holds"
                } else {
                    "they hold"
                },
                quoted_list(&skipped)
            ));
        }
        let pseudo = match (&columns.pseudo, &groups) {
            (Some(_), Some(sessions)) => Some(session_of_features(
                table,
                &x,
                p,
                &feature_cols,
                sessions,
                &group_names,
            )?),
            _ => None,
        };
        Ok(Dataset {
            pseudo,
            source: src.clone(),
            sha256: String::new(),
            delimiter: table.delimiter_name().to_string(),
            decimal_comma: table.decimal_comma,
            x: Array2::from_shape_vec((n, p), x).expect("n × p values were collected"),
            y,
            classes,
            groups,
            group_names,
            feature_names: feature_cols
                .iter()
                .map(|&c| table.headers[c].clone())
                .collect(),
            label_column: table.headers[label_col].clone(),
            group_column: group_col.map(|g| table.headers[g].clone()),
            dropped_lines: dropped,
            skipped_columns: skipped,
            warnings,
        })
    }

    pub fn n_trials(&self) -> usize {
        self.y.len()
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
            pseudo: self.pseudo.is_some(),
        }
    }

    pub fn n_features(&self) -> usize {
        self.x.ncols()
    }

    /// The same trials with only the feature columns `cols` (in that order).
    pub fn with_features(&self, cols: &[usize]) -> Dataset {
        Dataset {
            x: self.x.select(ndarray::Axis(1), cols),
            feature_names: cols
                .iter()
                .map(|&c| self.feature_names[c].clone())
                .collect(),
            warnings: Vec::new(),
            pseudo: self
                .pseudo
                .as_ref()
                .map(|s| cols.iter().map(|&c| s[c]).collect()),
            ..self.clone()
        }
    }

    /// Trials per class, in class order.
    pub fn class_counts(&self) -> Vec<usize> {
        let mut counts = vec![0; self.classes.len()];
        for &c in &self.y {
            counts[c] += 1;
        }
        counts
    }
}

/// For pseudo-populations: the one session each feature was recorded in. Every feature must have values in all the
/// rows of exactly one session and in no other row.
fn session_of_features(
    table: &Table,
    x: &[f64],
    p: usize,
    feature_cols: &[usize],
    sessions: &[usize],
    names: &[String],
) -> Result<Vec<usize>> {
    let n = sessions.len();
    (0..p)
        .map(|j| {
            let name = &table.headers[feature_cols[j]];
            let filled: Vec<usize> = (0..n).filter(|&i| !x[i * p + j].is_nan()).collect();
            let Some(&first) = filled.first() else {
                return Err(Error::Input(format!(
                    "{}: column '{name}' has no values; remove it or fill it in",
                    table.source
                )));
            };
            let s = sessions[first];
            if let Some(&i) = filled.iter().find(|&&i| sessions[i] != s) {
                return Err(Error::Input(format!(
                    "{}: '{name}' has values in sessions '{}' and '{}'; for pseudo-populations each neuron belongs \
                     to one session, with empty cells in the others",
                    table.at(i, feature_cols[j]),
                    names[s],
                    names[sessions[i]]
                )));
            }
            if let Some(i) = (0..n).find(|&i| sessions[i] == s && x[i * p + j].is_nan()) {
                return Err(missing(table, i, feature_cols[j]));
            }
            Ok(s)
        })
        .collect()
}

fn missing(table: &Table, r: usize, c: usize) -> Error {
    let shown = if table.rows[r][c].is_empty() {
        "empty cell".to_string()
    } else {
        format!("'{}'", table.rows[r][c])
    };
    Error::Input(format!(
        "{}: {shown} is a missing value; fill it in, or choose to drop trials with missing values (--drop-missing)",
        table.at(r, c)
    ))
}

/// The feature columns: the ones asked for, or every other column whose cells are mostly numbers.
///
/// "Mostly" (more than half of the non-missing cells) rather than "all", so that one typo in a numeric column is
/// reported as an error at its row instead of silently removing the neuron from the analysis.
fn choose_features(
    table: &Table,
    columns: &Columns,
    label_col: usize,
    group_col: Option<usize>,
) -> Result<(Vec<usize>, Vec<String>)> {
    let src = &table.source;
    if let Some(names) = &columns.features {
        let mut cols = Vec::new();
        for name in names {
            let c = table.column(name)?;
            if c == label_col || Some(c) == group_col {
                return Err(Error::Design(format!(
                    "{src}: '{name}' is the label or group column and cannot also be a feature"
                )));
            }
            if cols.contains(&c) {
                return Err(Error::Design(format!(
                    "{src}: feature '{name}' is listed twice"
                )));
            }
            cols.push(c);
        }
        if cols.is_empty() {
            return Err(Error::Design(format!(
                "{src}: the feature list is empty; name at least one column"
            )));
        }
        return Ok((cols, Vec::new()));
    }
    let mut ignored = Vec::new();
    for name in &columns.ignore {
        ignored.push(table.column(name)?);
    }
    let mut cols = Vec::new();
    let mut skipped = Vec::new();
    for c in 0..table.headers.len() {
        if c == label_col || Some(c) == group_col || ignored.contains(&c) {
            continue;
        }
        let (mut numbers, mut text) = (0usize, 0usize);
        for r in 0..table.rows.len() {
            match table.cell(r, c) {
                Cell::Number(_) => numbers += 1,
                Cell::NotNumber => text += 1,
                Cell::Missing => {}
            }
        }
        if numbers > text {
            cols.push(c);
        } else {
            skipped.push(table.headers[c].clone());
        }
    }
    if cols.is_empty() {
        return Err(Error::Design(format!(
            "{src}: no numeric feature columns besides the label{}; the columns are: {}",
            if group_col.is_some() {
                " and group"
            } else {
                ""
            },
            quoted_list(&table.headers)
        )));
    }
    Ok((cols, skipped))
}

/// Warn about feature columns that count 1, 2, 3, … down the file: almost surely trial numbers, which would let
/// slow drift or block order pass for information.
fn counter_columns(x: &[f64], p: usize, feature_cols: &[usize], table: &Table) -> Vec<String> {
    let n = x.len() / p;
    if n < 3 {
        return Vec::new();
    }
    (0..p)
        .filter(|&j| (1..n).all(|i| x[i * p + j] - x[(i - 1) * p + j] == 1.0))
        .map(|j| {
            format!(
                "column '{}' counts up by one on every row, like a trial number, and is used as a feature; \
                 leave it out (--ignore '{}') unless it really is a measurement",
                table.headers[feature_cols[j]], table.headers[feature_cols[j]]
            )
        })
        .collect()
}

/// Lower-case hex SHA-256 of a byte string.
pub fn sha256_hex(bytes: &[u8]) -> String {
    Sha256::digest(bytes)
        .iter()
        .map(|b| format!("{b:02x}"))
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
    fn reads_labels_groups_and_features() {
        let csv = b"odour,session,n1,n2,note\nb,s1,1,2,x\na,s2,3,4,y\nb,s2,5,6,z\n";
        let mut c = cols("odour");
        c.group = Some("session".into());
        let ds = Dataset::from_csv("t.csv", csv, &c).unwrap();
        assert_eq!(ds.classes, vec!["a", "b"]);
        assert_eq!(ds.y, vec![1, 0, 1]);
        assert_eq!(ds.groups, Some(vec![0, 1, 1]));
        assert_eq!(ds.feature_names, vec!["n1", "n2"]);
        assert_eq!(ds.skipped_columns, vec!["note"]);
        assert_eq!(ds.x[[2, 1]], 6.0);
        assert_eq!(ds.sha256.len(), 64);
    }

    #[test]
    fn sha256_of_known_string() {
        // FIPS 180-2, appendix B.1: SHA-256("abc").
        assert_eq!(
            sha256_hex(b"abc"),
            "ba7816bf8f01cfea414140de5dae2223b00361a396177a9cb410ff61f20015ad"
        );
    }
}
