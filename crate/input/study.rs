//! Study tables: the sessions of a study, one row each, and how each session's files are read.
//!
//! A study table is a CSV with one row per session: `file` (the session's data file, relative to the study table),
//! `session` (its name, unique), optionally `subject` (the animal it was recorded from; then every row names one),
//! and, for spike events, `trials` (the session's trial table). Every session is of the kind the recipe describes:
//! trial tables (no time settings), binned tables, spike events with trial tables, or NWB files. Faces fetch the
//! files (the CLI from disk, relative to the table; the page from the files dropped on it) and hand them to
//! [`read_sessions`] one session at a time, so only one session's raw bytes are held at once: an NWB file is
//! fetched as its compact extract, and a spike-events file is counted into windows and dropped before the next.

use super::{table::Table, time_course, trial_table, FileBytes};
use crate::data::across::AcrossData;
use crate::data::time::TimeDataset;
use crate::data::Dataset;
use crate::error::{Error, Result};
use crate::recipe::{Recipe, TimeInput};
use serde::{Deserialize, Serialize};

/// The columns a study table may have.
pub const COLUMNS: [&str; 4] = ["file", "session", "subject", "trials"];

/// One session of a study, as its row names it.
#[derive(Debug, Clone, PartialEq, Eq, Serialize, Deserialize)]
#[serde(deny_unknown_fields)]
pub struct StudyRow {
    /// The session's data file, as written in the table (relative to it).
    pub file: String,
    pub session: String,
    #[serde(default, skip_serializing_if = "Option::is_none")]
    pub subject: Option<String>,
    /// Spike events only: the session's trial table.
    #[serde(default, skip_serializing_if = "Option::is_none")]
    pub trials: Option<String>,
}

/// The sessions of a study and where their list came from.
#[derive(Debug, Clone, PartialEq)]
pub struct StudyTable {
    /// What messages call the table (its file name, or "the session list").
    pub source: String,
    /// SHA-256 of the table's bytes (of the session list's JSON when the page gives the list).
    pub sha256: String,
    pub sessions: Vec<StudyRow>,
    /// Every row names a subject.
    pub has_subjects: bool,
}

/// The kind of every session of a study, from the recipe.
#[derive(Debug, Clone, Copy, PartialEq, Eq, Serialize, Deserialize)]
#[serde(rename_all = "snake_case")]
pub enum SessionKind {
    TrialTable,
    Binned,
    Events,
    Nwb,
}

impl SessionKind {
    pub fn of(recipe: &Recipe) -> SessionKind {
        match recipe.time.as_ref().map(|t| &t.input) {
            None => SessionKind::TrialTable,
            Some(TimeInput::Binned { .. }) => SessionKind::Binned,
            Some(TimeInput::Events { .. }) => SessionKind::Events,
            Some(TimeInput::Nwb { .. }) => SessionKind::Nwb,
        }
    }

    /// What one session is, in words.
    pub fn describe(self) -> &'static str {
        match self {
            SessionKind::TrialTable => "a trial table",
            SessionKind::Binned => "a binned table",
            SessionKind::Events => "spike events with a trial table",
            SessionKind::Nwb => "an NWB file",
        }
    }
}

/// Read a study table (CSV).
pub fn read(name: &str, bytes: &[u8]) -> Result<StudyTable> {
    let t = Table::parse(name, bytes)?;
    for (col, h) in t.headers.iter().enumerate() {
        if !COLUMNS.contains(&h.as_str()) {
            return Err(Error::Input(format!(
                "{name}: column {} is '{h}'; a study table has the columns file, session, and optionally subject \
                 and trials (spike events only)",
                col + 1
            )));
        }
    }
    let file = t.column("file")?;
    let session = t.column("session")?;
    let subject = t.headers.iter().position(|h| h == "subject");
    let trials = t.headers.iter().position(|h| h == "trials");
    let mut rows = Vec::with_capacity(t.rows.len());
    for r in 0..t.rows.len() {
        let cell = |c: usize| -> Result<String> {
            let v = t.rows[r][c].trim();
            if v.is_empty() {
                return Err(Error::Input(format!("{}: the cell is empty", t.at(r, c))));
            }
            Ok(v.to_string())
        };
        rows.push(StudyRow {
            file: cell(file)?,
            session: cell(session)?,
            subject: subject.map(cell).transpose()?,
            trials: trials.map(cell).transpose()?,
        });
    }
    let at = |r: usize, c: usize| t.at(r, c);
    check_unique(&rows, |r| &r.session, "session", |r| at(r, session))?;
    check_unique(&rows, |r| &r.file, "file", |r| at(r, file))?;
    Ok(StudyTable {
        source: name.to_string(),
        sha256: super::sha256_hex(bytes),
        has_subjects: subject.is_some(),
        sessions: rows,
    })
}

/// A study from a list of sessions given as data (the page's session list, JSON), checked as a table is.
pub fn from_rows(source: &str, rows: Vec<StudyRow>) -> Result<StudyTable> {
    if rows.is_empty() {
        return Err(Error::Input(format!("{source}: no sessions")));
    }
    for (i, r) in rows.iter().enumerate() {
        let empty = [
            ("file", Some(&r.file)),
            ("session", Some(&r.session)),
            ("subject", r.subject.as_ref()),
            ("trials", r.trials.as_ref()),
        ]
        .into_iter()
        .find(|(_, v)| v.is_some_and(|v| v.trim().is_empty()));
        if let Some((name, _)) = empty {
            return Err(Error::Input(format!(
                "{source}: session {} has an empty {name}",
                i + 1
            )));
        }
    }
    let has_subjects = rows[0].subject.is_some();
    if let Some(i) = rows
        .iter()
        .position(|r| r.subject.is_some() != has_subjects)
    {
        return Err(Error::Input(format!(
            "{source}: session '{}' {} a subject while session '{}' {}; name a subject for every session or for none",
            rows[i].session,
            if has_subjects { "lacks" } else { "has" },
            rows[0].session,
            if has_subjects { "has one" } else { "does not" },
        )));
    }
    let at = |i: usize| format!("{source}, session {}", i + 1);
    check_unique(&rows, |r| &r.session, "session", at)?;
    check_unique(&rows, |r| &r.file, "file", at)?;
    let json = serde_json::to_string(&rows).expect("rows serialise");
    Ok(StudyTable {
        source: source.to_string(),
        sha256: super::sha256_hex(json.as_bytes()),
        sessions: rows,
        has_subjects,
    })
}

fn check_unique(
    rows: &[StudyRow],
    key: impl Fn(&StudyRow) -> &String,
    what: &str,
    at: impl Fn(usize) -> String,
) -> Result<()> {
    for (i, r) in rows.iter().enumerate() {
        if rows[..i].iter().any(|o| key(o) == key(r)) {
            return Err(Error::Input(format!(
                "{}: {what} '{}' is listed twice; every session needs its own",
                at(i),
                key(r)
            )));
        }
    }
    Ok(())
}

impl StudyTable {
    /// Check the table against the kind of sessions the recipe reads: spike events need a trial table per session,
    /// and the other kinds none.
    pub fn check_kind(&self, kind: SessionKind) -> Result<()> {
        let with_trials = self.sessions.iter().filter(|r| r.trials.is_some()).count();
        match kind {
            SessionKind::Events if with_trials < self.sessions.len() => Err(Error::Input(format!(
                "{}: sessions of spike events need a 'trials' column naming each session's trial table",
                self.source
            ))),
            SessionKind::Events => Ok(()),
            _ if with_trials > 0 => Err(Error::Input(format!(
                "{}: the 'trials' column names trial tables of spike events, but the sessions are read as {}",
                self.source,
                kind.describe()
            ))),
            _ => Ok(()),
        }
    }
}

impl StudyRow {
    /// The files of the session as written in the table: the data file, then the trial table for spike events.
    pub fn paths(&self) -> Vec<&str> {
        std::iter::once(self.file.as_str())
            .chain(self.trials.as_deref())
            .collect()
    }
}

/// The name a session's file is reported under: the last component of its path, on every face.
pub fn base_name(path: &str) -> &str {
    path.rsplit(['/', '\\']).next().unwrap_or(path)
}

/// One session's data.
#[derive(Debug, Clone)]
pub enum SessionData {
    Table(Dataset),
    Time(TimeDataset),
    /// A trial table or a recording with the second column of generalization across conditions.
    Across(AcrossData),
}

/// Read every session of a study, one at a time: `fetch` returns the bytes of a path as written in the table (for
/// an NWB file, its extract), and they are dropped once the session is read.
pub fn read_sessions(
    table: &StudyTable,
    recipe: &Recipe,
    mut fetch: impl FnMut(&str) -> Result<Vec<u8>>,
) -> Result<Vec<SessionData>> {
    let kind = SessionKind::of(recipe);
    table.check_kind(kind)?;
    table
        .sessions
        .iter()
        .map(|row| {
            let bytes: Vec<Vec<u8>> = row
                .paths()
                .iter()
                .map(|p| fetch(p))
                .collect::<Result<_>>()?;
            let files: Vec<FileBytes> = row
                .paths()
                .iter()
                .zip(&bytes)
                .map(|(p, b)| FileBytes {
                    name: base_name(p),
                    bytes: b,
                })
                .collect();
            read_session(&files, recipe)
        })
        .collect()
}

/// One session from its files (the data file, then for spike events the trial table).
pub fn read_session(files: &[FileBytes], recipe: &Recipe) -> Result<SessionData> {
    match &recipe.time {
        None => {
            let [file] = files else {
                return Err(Error::Recipe("a trial-table session is one file".into()));
            };
            match &recipe.across {
                Some(a) => {
                    super::across::trial_table(file.name, file.bytes, &recipe.columns, &a.column)
                        .map(SessionData::Across)
                }
                None => trial_table::read(file.name, file.bytes, &recipe.columns)
                    .map(SessionData::Table),
            }
        }
        Some(t) => match &recipe.across {
            Some(a) => super::across::time_course(files, &recipe.columns, &t.input, &a.column)
                .map(SessionData::Across),
            None => time_course(files, &recipe.columns, &t.input).map(SessionData::Time),
        },
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn reads_rows_and_refuses_what_it_cannot_use() {
        let t = read(
            "study.csv",
            b"file,session,subject\na/s1.csv,s1,m1\ns2.csv,s2,m2\n",
        )
        .unwrap();
        assert!(t.has_subjects);
        assert_eq!(t.sessions[0].paths(), vec!["a/s1.csv"]);
        assert_eq!(base_name(&t.sessions[0].file), "s1.csv");
        let e = read("study.csv", b"file,session,animal\na,s1,m1\n")
            .unwrap_err()
            .to_string();
        assert!(e.contains("column 3 is 'animal'"), "{e}");
        let e = read("study.csv", b"file,session\na.csv,s1\nb.csv,s1\n")
            .unwrap_err()
            .to_string();
        assert!(
            e.contains("study.csv, line 3, column 'session'") && e.contains("listed twice"),
            "{e}"
        );
        let e = read("study.csv", b"file,session,subject\na.csv,s1,\n")
            .unwrap_err()
            .to_string();
        assert!(
            e.contains("line 2, column 'subject': the cell is empty"),
            "{e}"
        );
        let e = t.check_kind(SessionKind::Events).unwrap_err().to_string();
        assert!(e.contains("'trials' column"), "{e}");
    }

    #[test]
    fn a_session_list_is_checked_like_a_table() {
        let row = |s: &str, subject: Option<&str>| StudyRow {
            file: format!("{s}.csv"),
            session: s.into(),
            subject: subject.map(String::from),
            trials: None,
        };
        let e = from_rows(
            "the session list",
            vec![row("a", Some("m1")), row("b", None)],
        )
        .unwrap_err()
        .to_string();
        assert!(e.contains("session 'b' lacks a subject"), "{e}");
        assert!(from_rows("the session list", vec![row("a", None), row("b", None)]).is_ok());
    }
}
