//! Trial tables (one row per trial): from the bytes of a CSV file to a [`Dataset`].
//!
//! The core never touches the filesystem: faces read the file and pass its bytes and name, so the page (which gets
//! bytes from a dropped `File`) and the CLI share every line of parsing and validation.

use super::sha256_of;
use super::table::{self, quoted_list, ByteSource, Cell, Table};
use crate::data::{labels, Dataset};
use crate::error::{Error, Result};
use crate::recipe::limits::beyond_magnitude;
use crate::recipe::Columns;
use ndarray::Array2;

/// Parse and validate a trial table (one row per trial).
///
/// Read in passes over the bytes (held in memory, or read piece by piece from a dropped file) without keeping the
/// cells as text (a `String` per cell costs several times the file, which a page with a large file cannot afford):
/// the first counts numbers and text in every column (to choose the features) and checks the whole file's
/// structure, the second parses the chosen cells into the matrix.
/// It gives what [`from_table`] gives on the parsed [`Table`], messages included (tests below and
/// tests/bad_input.rs), because both run the same row and column code.
pub fn read(
    source: &str,
    bytes: &(impl ByteSource + ?Sized),
    columns: &Columns,
) -> Result<Dataset> {
    let mut counts: Vec<(usize, usize)> = Vec::new();
    let mut lines = Vec::new();
    let decimal_comma = std::cell::Cell::new(false);
    let trials = std::cell::RefCell::new(TrialIds::default());
    let header = table::stream(
        source,
        bytes,
        |h| {
            decimal_comma.set(h.delimiter == b';');
            *trials.borrow_mut() = TrialIds::new(&h.headers, &columns.label);
            Ok(())
        },
        |line, record| {
            trials
                .borrow_mut()
                .see(line, |c| record.get(c).unwrap_or(""));
            lines.push(line);
            counts.resize(record.len(), (0, 0));
            for (c, cell) in record.iter().enumerate() {
                match table::parse_number(cell, decimal_comma.get()) {
                    Cell::Number(_) | Cell::TooLarge(_) => counts[c].0 += 1,
                    Cell::NotNumber => counts[c].1 += 1,
                    Cell::Missing => {}
                }
            }
            Ok(())
        },
    )?;
    // The header as a table without rows: column look-ups and their messages are the table's own.
    let shape = Table {
        source: source.to_string(),
        headers: header.headers,
        rows: Vec::new(),
        lines,
        delimiter: header.delimiter,
        decimal_comma: decimal_comma.get(),
    };
    trials.borrow().check(&shape)?;
    let chosen = Chosen::new(&shape, columns, &|c| counts[c])?;
    let mut rows = Rows::new(&shape, columns, chosen);
    let mut r = 0;
    table::stream(
        source,
        bytes,
        |_| Ok(()),
        |_, record| {
            let cells: Vec<&str> = record.iter().collect();
            rows.take(r, &cells)?;
            r += 1;
            Ok(())
        },
    )?;
    // Text of a cell (for a message about a missing value found after the rows were read): read again.
    let cell_text = |row: usize, col: usize| {
        let mut text = String::new();
        let mut r = 0;
        let _ = table::stream(
            source,
            bytes,
            |_| Ok(()),
            |_, record| {
                if r == row {
                    text = record.get(col).unwrap_or("").to_string();
                }
                r += 1;
                Ok(())
            },
        );
        text
    };
    let mut ds = rows.finish(&cell_text)?;
    ds.sha256 = sha256_of(source, bytes)?;
    Ok(ds)
}

/// Build from an already parsed table (the SHA-256 is left empty).
pub fn from_table(table: &Table, columns: &Columns) -> Result<Dataset> {
    let counts = |c: usize| {
        let (mut numbers, mut text) = (0usize, 0usize);
        for r in 0..table.rows.len() {
            match table.cell(r, c) {
                Cell::Number(_) | Cell::TooLarge(_) => numbers += 1,
                Cell::NotNumber => text += 1,
                Cell::Missing => {}
            }
        }
        (numbers, text)
    };
    let mut trials = TrialIds::new(&table.headers, &columns.label);
    for (row, &line) in table.rows.iter().zip(&table.lines) {
        trials.see(line, |c| &row[c]);
    }
    trials.check(table)?;
    let chosen = Chosen::new(table, columns, &counts)?;
    let mut rows = Rows::new(table, columns, chosen);
    for (r, row) in table.rows.iter().enumerate() {
        let cells: Vec<&str> = row.iter().map(String::as_str).collect();
        rows.take(r, &cells)?;
    }
    rows.finish(&|r, c| table.rows[r][c].clone())
}

/// A column named as trial identifiers (trial, trial_id, Trial number, …) whose value repeats on consecutive rows: a
/// binned table (one row per trial and time bin) read as a trial table, whose "trials" would be time bins, with the
/// bins of one trial split between training and test folds and time itself a feature. Only consecutive repeats
/// count: trials numbered from 1 again in every session repeat too, but never on the next row.
#[derive(Default)]
struct TrialIds {
    column: Option<usize>,
    last: Option<(u64, String)>,
    /// The first repeat: the value and the lines of its two rows.
    repeat: Option<(String, u64, u64)>,
}

impl TrialIds {
    fn new(headers: &[String], label: &str) -> TrialIds {
        let named = |h: &String| {
            let key: String = h
                .chars()
                .filter(|c| c.is_alphanumeric())
                .collect::<String>()
                .to_lowercase();
            h != label
                && matches!(
                    key.as_str(),
                    "trial"
                        | "trialid"
                        | "trialno"
                        | "trialnr"
                        | "trialnum"
                        | "trialnumber"
                        | "trialindex"
                )
        };
        TrialIds {
            column: headers.iter().position(named),
            ..Default::default()
        }
    }

    fn see<'r>(&mut self, line: u64, cell: impl Fn(usize) -> &'r str) {
        let Some(c) = self.column else { return };
        if self.repeat.is_some() {
            return;
        }
        let value = cell(c);
        match &self.last {
            Some((previous, last)) if !value.is_empty() && last == value => {
                self.repeat = Some((value.to_string(), *previous, line));
            }
            _ => self.last = Some((line, value.to_string())),
        }
    }

    fn check(&self, table: &Table) -> Result<()> {
        match (&self.repeat, self.column) {
            (Some((value, first, second)), Some(c)) => Err(Error::Input(format!(
                "{}, lines {first} and {second}, column '{}': trial '{value}' is on two rows in a row, as in a \
                 binned table (one row per trial and time bin); a trial table has one row per trial. Decode it \
                 over time as a binned table, naming its trial and time columns, or give one row per trial",
                table.source, table.headers[c]
            ))),
            _ => Ok(()),
        }
    }
}

/// The columns a recipe picks in a table: label, group (or pseudo-population session) and features.
struct Chosen {
    label: usize,
    group: Option<usize>,
    features: Vec<usize>,
    skipped: Vec<String>,
}

impl Chosen {
    /// `counts(c)`: how many cells of column `c` are numbers and how many text (for choosing the features).
    fn new(
        table: &Table,
        columns: &Columns,
        counts: &dyn Fn(usize) -> (usize, usize),
    ) -> Result<Chosen> {
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
        let (features, skipped) = choose_features(table, columns, label_col, group_col, counts)?;
        Ok(Chosen {
            label: label_col,
            group: group_col,
            features,
            skipped,
        })
    }
}

/// The rows of a table taken one at a time into the matrix, labels and groups (dropping or refusing missing
/// values), then finished into a [`Dataset`]. `table` gives the source, header, lines and decimal convention; its
/// rows are not read here.
struct Rows<'a> {
    table: &'a Table,
    columns: &'a Columns,
    chosen: Chosen,
    x: Vec<f64>,
    labels: Vec<String>,
    groups: Vec<String>,
    dropped: Vec<u64>,
    /// The label of each row left out for a missing feature value (its label was present), to tell when a whole
    /// class went.
    dropped_labels: Vec<String>,
}

impl<'a> Rows<'a> {
    fn new(table: &'a Table, columns: &'a Columns, chosen: Chosen) -> Rows<'a> {
        Rows {
            table,
            columns,
            x: Vec::with_capacity(table.lines.len() * chosen.features.len()),
            chosen,
            labels: Vec::new(),
            groups: Vec::new(),
            dropped: Vec::new(),
            dropped_labels: Vec::new(),
        }
    }

    /// Row `r` of the file (0 = the first data row), as its cells.
    fn take(&mut self, r: usize, row: &[&str]) -> Result<()> {
        let (table, columns) = (self.table, self.columns);
        let (label_col, group_col) = (self.chosen.label, self.chosen.group);
        let mut values = Vec::with_capacity(self.chosen.features.len());
        let text_cols = std::iter::once(label_col).chain(group_col);
        for c in text_cols {
            if table::is_missing_token(row[c]) {
                if columns.drop_missing {
                    self.dropped.push(table.lines[r]);
                    return Ok(());
                }
                return Err(missing(table, r, c, row[c]));
            }
        }
        for &c in &self.chosen.features {
            match table::parse_number(row[c], table.decimal_comma) {
                Cell::Number(v) => values.push(v),
                // Checked below against the sessions: a neuron is empty outside its own session.
                Cell::Missing if columns.pseudo.is_some() => values.push(f64::NAN),
                Cell::Missing if columns.drop_missing => {
                    self.dropped.push(table.lines[r]);
                    self.dropped_labels.push(row[label_col].to_string());
                    return Ok(());
                }
                Cell::Missing => return Err(missing(table, r, c, row[c])),
                Cell::TooLarge(v) => {
                    return Err(Error::Input(format!(
                        "{}: {}",
                        table.at(r, c),
                        beyond_magnitude(v)
                    )))
                }
                Cell::NotNumber => {
                    return Err(Error::Input(format!(
                        "{}: {} is not a number{}",
                        table.at(r, c),
                        table::quoted_cell(row[c]),
                        if !table.decimal_comma && row[c].contains(',') {
                            " (decimal commas are read only in semicolon-separated files)"
                        } else {
                            ""
                        }
                    )))
                }
            }
        }
        self.x.extend(values);
        self.labels.push(row[label_col].to_string());
        if let Some(g) = group_col {
            self.groups.push(row[g].to_string());
        }
        Ok(())
    }

    /// The dataset, once every row is taken. `cell_text(r, c)` gives a cell's text for a message.
    fn finish(self, cell_text: &dyn Fn(usize, usize) -> String) -> Result<Dataset> {
        let Rows {
            table,
            columns,
            chosen,
            x,
            labels,
            groups,
            dropped,
            dropped_labels,
        } = self;
        let src = &table.source;
        let Chosen {
            label: label_col,
            group: group_col,
            features: feature_cols,
            skipped,
        } = chosen;
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
        let (x, feature_cols, mut warnings) = leave_out_counters(table, columns, x, feature_cols)?;
        let p = feature_cols.len();
        // Found by a hostile review: features that never vary gave a score with no word. (A pseudo-population's
        // features are empty outside their session, so none is constant.)
        let constant: Vec<String> = (0..p)
            .filter(|&j| columns.pseudo.is_none() && (1..n).all(|i| x[i * p + j] == x[j]))
            .map(|j| table.headers[feature_cols[j]].clone())
            .collect();
        if constant.len() == p && n > 1 {
            return Err(Error::Design(format!(
                "{src}: every feature column holds one value on every trial ({}), so there is nothing to decode \
                 from; check that the right columns were read",
                quoted_list(&constant)
            )));
        } else if !constant.is_empty() {
            warnings.push(format!(
                "{} {} the same value on every trial and {} no information; {} kept among the features",
                quoted_list(&constant),
                number(&constant, "holds", "hold"),
                number(&constant, "carries", "carry"),
                number(&constant, "it is", "they are")
            ));
        }
        let mut gone = std::collections::BTreeMap::<&str, usize>::new();
        for l in dropped_labels.iter().filter(|l| !classes.contains(l)) {
            *gone.entry(l).or_default() += 1;
        }
        for (class, count) in gone {
            warnings.push(format!(
                "every trial of '{class}' ({count}) had a missing value and was left out, so '{class}' is not \
                 decoded"
            ));
        }
        if !skipped.is_empty() {
            warnings.push(format!(
                "{} {} not used as {} because {} mostly text",
                quoted_list(&skipped),
                number(&skipped, "is", "are"),
                number(&skipped, "a feature", "features"),
                number(&skipped, "it holds", "they hold"),
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
                cell_text,
            )?),
            _ => None,
        };
        Ok(Dataset {
            pseudo,
            source: src.clone(),
            sha256: String::new(),
            delimiter: table.delimiter_name().to_string(),
            decimal_comma: table.decimal_comma,
            x: Array2::from_shape_vec((n, p), x)
                .expect("n × p values were collected")
                .into_shared(),
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
    cell_text: &dyn Fn(usize, usize) -> String,
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
                return Err(missing(table, i, feature_cols[j], &cell_text(i, feature_cols[j])));
            }
            Ok(s)
        })
        .collect()
}

fn missing(table: &Table, r: usize, c: usize, text: &str) -> Error {
    let shown = if text.is_empty() {
        "empty cell".to_string()
    } else {
        format!("'{text}'")
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
    counts: &dyn Fn(usize) -> (usize, usize),
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
            if columns.ignore.contains(name) {
                return Err(Error::Design(format!(
                    "{src}: '{name}' is both named as a feature and to be left out (--ignore); remove it from one \
                     of the two lists"
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
        let (numbers, text) = counts(c);
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

/// The word for one or for several `names`.
fn number<'w>(names: &[String], one: &'w str, several: &'w str) -> &'w str {
    if names.len() == 1 {
        one
    } else {
        several
    }
}

/// A trial counter among features chosen by default is left out (the page leaves it unticked too), with a note;
/// one named among the features is kept, with a caution. Only counters to decode from: refused. Returns the rows
/// (`x`, row-major over `feature_cols`) and feature columns that remain, and the notes.
fn leave_out_counters(
    table: &Table,
    columns: &Columns,
    x: Vec<f64>,
    feature_cols: Vec<usize>,
) -> Result<(Vec<f64>, Vec<usize>, Vec<String>)> {
    let src = &table.source;
    let p_all = feature_cols.len();
    let counters = counter_columns(&x, p_all);
    if columns.features.is_some() || counters.is_empty() {
        let warnings = counters
            .iter()
            .map(|&j| {
                let name = &table.headers[feature_cols[j]];
                format!(
                    "column '{name}' counts up by one on every row, like a trial number, and is used as a feature; \
                     leave it out (--ignore '{name}') unless it really is a measurement"
                )
            })
            .collect();
        return Ok((x, feature_cols, warnings));
    }
    let names: Vec<String> = counters
        .iter()
        .map(|&j| table.headers[feature_cols[j]].clone())
        .collect();
    if counters.len() == p_all {
        return Err(Error::Design(format!(
            "{src}: the only numeric {} {} {} up by one on every row, like a trial number, and {} not a \
             measurement to decode from; name the feature columns (--features) if it really is one",
            number(&names, "column", "columns"),
            quoted_list(&names),
            number(&names, "counts", "count"),
            number(&names, "is", "are")
        )));
    }
    let keep: Vec<usize> = (0..p_all).filter(|j| !counters.contains(j)).collect();
    let x = x
        .chunks_exact(p_all)
        .flat_map(|row| keep.iter().map(move |&j| row[j]))
        .collect();
    let cols = keep.iter().map(|&j| feature_cols[j]).collect();
    let note = format!(
        "{} {} up by one on every row, like a trial number, so {} left out of the features; name {} among the \
         features (--features) if {} really a measurement",
        quoted_list(&names),
        number(&names, "counts", "count"),
        number(&names, "it is", "they are"),
        number(&names, "it", "them"),
        number(&names, "it is", "they are"),
    );
    Ok((x, cols, vec![note]))
}

/// The feature columns (indices into the row) that count 1, 2, 3, … down the file: almost surely trial numbers,
/// which would let slow drift or block order pass for information.
fn counter_columns(x: &[f64], p: usize) -> Vec<usize> {
    let n = x.len() / p;
    if n < 3 {
        return Vec::new();
    }
    (0..p)
        .filter(|&j| (1..n).all(|i| x[i * p + j] - x[(i - 1) * p + j] == 1.0))
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
        let ds = read("t.csv", csv, &c).unwrap();
        assert_eq!(ds.classes, vec!["a", "b"]);
        assert_eq!(ds.y, vec![1, 0, 1]);
        assert_eq!(ds.groups, Some(vec![0, 1, 1]));
        assert_eq!(ds.feature_names, vec!["n1", "n2"]);
        assert_eq!(ds.skipped_columns, vec!["note"]);
        assert_eq!(ds.x[[2, 1]], 6.0);
        assert_eq!(ds.sha256.len(), 64);
    }

    /// Found by a hostile review: a binned table given as a trial table was decoded with its time bins as trials
    /// (the bins of one trial in training and test folds, time as a feature). Trials numbered from 1 again in each
    /// session are still a trial table.
    #[test]
    fn a_binned_table_is_not_read_as_trials() {
        let binned =
            b"Trial ID,time,odour,n1\nt1,0,a,3\nt1,1,a,4\nt2,0,b,1\nt2,1,b,2\nt3,0,a,5\nt3,1,a,1\n";
        for e in [
            read("b.csv", binned, &cols("odour")).err(),
            from_table(&Table::parse("b.csv", binned).unwrap(), &cols("odour")).err(),
        ] {
            let e = e.expect("refused").to_string();
            assert!(
                e.starts_with(
                    "b.csv, lines 2 and 3, column 'Trial ID': trial 't1' is on two rows in a row"
                ),
                "{e}"
            );
        }
        let sessions = b"trial,session,odour,n1\n1,s1,a,3\n2,s1,b,4\n1,s2,a,1\n2,s2,b,2\n";
        let ds = read("s.csv", sessions, &cols("odour")).unwrap();
        assert_eq!(ds.n_trials(), 4);
        // The label itself may repeat on consecutive rows, whatever it is called.
        let ds = read("l.csv", b"trial,n1\na,3\na,4\nb,1\nb,2\n", &cols("trial")).unwrap();
        assert_eq!(ds.classes, vec!["a", "b"]);
    }

    /// Found by a hostile review: dropping trials with missing values removed a whole class with no caution.
    #[test]
    fn a_class_left_out_by_dropping_missing_values_is_said() {
        let csv = b"odour,n1,n2\na,1,2\nb,3,NA\nc,5,6\na,2,1\nb,4,\nc,6,5\n";
        let mut c = cols("odour");
        c.drop_missing = true;
        let ds = read("t.csv", csv, &c).unwrap();
        assert_eq!(ds.classes, vec!["a", "c"]);
        assert!(
            ds.warnings
                .contains(&"every trial of 'b' (2) had a missing value and was left out, so 'b' is not decoded".into()),
            "{:?}",
            ds.warnings
        );
        // A class that keeps some trials is not said to be gone.
        let csv = b"odour,n1,n2\na,1,2\nb,3,NA\nb,5,6\na,2,1\n";
        let ds = read("t.csv", csv, &c).unwrap();
        assert!(
            ds.warnings.iter().all(|w| !w.contains("is not decoded")),
            "{:?}",
            ds.warnings
        );
    }

    /// The streaming read gives what the parsed table gives, data and messages alike, on good and bad files.
    #[test]
    fn streaming_read_is_the_table_read() {
        let with = |label: &str, f: &dyn Fn(&mut Columns)| {
            let mut c = cols(label);
            f(&mut c);
            c
        };
        let cases: Vec<(&str, Columns)> = vec![
            (
                "odour,session,n1,n2,note\nb,s1,1,2,x\na,s2,3,4,y\nb,s2,5,6,z\n",
                with("odour", &|c| c.group = Some("session".into())),
            ),
            ("odour;n1;n2\na;1,5;2\nb;3;4,25\na;5;6\n", cols("odour")),
            (
                "\u{feff}odour,n1,n2\r\na,1,2\r\n\r\nb,3,4\r\n\nb,5,6\n\n",
                cols("odour"),
            ),
            ("odour,n1,n2\na,1,\nb,3,4\na,5,6\n", cols("odour")),
            (
                "odour,n1,n2\na,1,NA\nb,3,4\na,5,6\nb,7,8\n",
                with("odour", &|c| c.drop_missing = true),
            ),
            (
                "odour,n1,n2\na,1,2\n,3,4\na,5,6\nb,7,8\n",
                with("odour", &|c| c.drop_missing = true),
            ),
            ("odour,n1,n2\na,1,2\nb,3,x\na,5,6\nb,7,8\n", cols("odour")),
            ("odour,n1,n2\na,1,2\nb,3,\"4,5\"\na,5,6\n", cols("odour")),
            ("odour,n1,n2\na,1,\nb,3,4\na,5\n", cols("odour")),
            ("odour,n1,n2\na,1,2\na,3,4\n", cols("odour")),
            ("odour,n1,n2\na,1,2\nb,3,4\n", cols("smell")),
            (
                "odour,n1,n2\na,1,2\nb,3,4\n",
                with("odour", &|c| c.features = Some(vec!["n2".into()])),
            ),
            (
                "odour,n1,n2\na,1,2\nb,3,4\n",
                with("odour", &|c| c.features = Some(vec!["n3".into()])),
            ),
            (
                "odour,n1,n2\na,1,2\nb,3,4\n",
                with("odour", &|c| c.ignore = vec!["n1".into()]),
            ),
            (
                "odour,trial,n1\na,1,2\nb,2,4\na,3,1\nb,4,0\n",
                cols("odour"),
            ),
            ("odour,a,b\nx,p,q\ny,r,s\n", cols("odour")),
            (
                "odour,n1,n2\nNA,1,2\nNA,3,4\n",
                with("odour", &|c| c.drop_missing = true),
            ),
            (
                "odour,n1,n2\na,1,2\nb,3,4\n",
                with("odour", &|c| c.group = Some("odour".into())),
            ),
            // Pseudo-populations: a good one, a neuron in two sessions, a gap inside a neuron's own session.
            (
                "odour,s,u1,u2\na,1,1,\nb,1,2,\na,2,,3\nb,2,,4\n",
                with("odour", &|c| c.pseudo = Some("s".into())),
            ),
            (
                "odour,s,u1,u2\na,1,1,\nb,1,2,5\na,2,,3\nb,2,,4\n",
                with("odour", &|c| c.pseudo = Some("s".into())),
            ),
            (
                "odour,s,u1,u2\na,1,1,\nb,1,NaN,\na,2,,3\nb,2,,4\n",
                with("odour", &|c| c.pseudo = Some("s".into())),
            ),
            (
                "odour,s,u1\na,1,1\nb,1,2\n",
                with("odour", &|c| {
                    c.pseudo = Some("s".into());
                    c.group = Some("s".into());
                }),
            ),
            ("odour,n1\n", cols("odour")),
            ("", cols("odour")),
        ];
        for (text, columns) in cases {
            let streamed = read("t.csv", text.as_bytes(), &columns).map(|mut d| {
                d.sha256.clear();
                d
            });
            let parsed =
                Table::parse("t.csv", text.as_bytes()).and_then(|t| from_table(&t, &columns));
            assert_eq!(format!("{streamed:?}"), format!("{parsed:?}"), "{text:?}");
        }
    }

    #[test]
    fn sha256_of_known_string() {
        // FIPS 180-2, appendix B.1: SHA-256("abc").
        assert_eq!(
            crate::input::sha256_hex(b"abc"),
            "ba7816bf8f01cfea414140de5dae2223b00361a396177a9cb410ff61f20015ad"
        );
    }
}
