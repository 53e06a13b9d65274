//! One error type for the whole core.
//!
//! Every message is written for the scientist who made the file, not for a programmer: it names the file, the line
//! and the column where it can, and says what to change. Errors are plain data so that the wasm face can hand them
//! to the page as text and the CLI can print them as one line.

use std::fmt;

/// Anything that stops an analysis before or while it runs.
#[derive(Debug, Clone, PartialEq, Eq)]
pub enum Error {
    /// The input table cannot be read as asked (bad cell, missing column, ragged row, ...).
    Input(String),
    /// The table was read but the analysis cannot run on it as configured (one class, too few trials, ...).
    Design(String),
    /// A recipe file or a setting is malformed.
    Recipe(String),
}

impl fmt::Display for Error {
    fn fmt(&self, f: &mut fmt::Formatter<'_>) -> fmt::Result {
        match self {
            Error::Input(m) | Error::Design(m) | Error::Recipe(m) => f.write_str(m),
        }
    }
}

impl std::error::Error for Error {}

pub type Result<T> = std::result::Result<T, Error>;
