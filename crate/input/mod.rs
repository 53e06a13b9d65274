//! Readers of every input format, one file each, all producing the in-memory data of `data/`:
//!
//! | format | reader | produces |
//! | --- | --- | --- |
//! | trial table (CSV, one row per trial) | [`trial_table`] | `Dataset` |
//! | binned table (CSV, one row per trial × bin) | [`binned`] | `TimeDataset` |
//! | spike events (CSV) + trial table | [`events`] | `TimeDataset` |
//! | NWB 2.x (HDF5), or its compact [`extract`] | [`nwb`], [`units`], [`nwb_counts`] | `TimeDataset` |
//! | study table (CSV, one row per session) | [`study`] | the sessions, each read by the readers above |
//! | any of these with the label read as numbers | [`target`] | `TargetData` |
//! | any of these with a second column's level per trial | [`across`] | `AcrossData` |
//!
//! Every reader takes a file's name and bytes (the core never touches the filesystem, so the page and the CLI share
//! every line of parsing), and every error names the file, the line and the column.

pub mod across;
pub mod binned;
pub mod events;
pub mod extract;
pub mod nwb;
pub mod nwb_counts;
pub mod spike_counts;
pub mod study;
pub mod table;
pub mod target;
pub mod trial_column;
pub mod trial_labels;
pub mod trial_table;
pub mod units;

use crate::data::time::TimeDataset;
use crate::data::{Dataset, SourceFile};
use crate::error::{Error, Result};
use crate::recipe::windows::sliding;
use crate::recipe::{Columns, TimeInput};
use sha2::{Digest, Sha256};
use table::Table;

/// A named file's bytes, as a face hands them to the core.
#[derive(Debug, Clone, Copy)]
pub struct FileBytes<'a> {
    pub name: &'a str,
    pub bytes: &'a [u8],
}

/// Read a trial table (one row per trial).
pub fn trial_table(
    name: &str,
    bytes: &(impl table::ByteSource + ?Sized),
    columns: &Columns,
) -> Result<Dataset> {
    trial_table::read(name, bytes, columns)
}

/// Read the recording a time-course recipe describes. `files` are the binned table, the events file then the trial
/// table, or the NWB file (or its extract).
pub fn time_course(
    files: &[FileBytes],
    columns: &Columns,
    input: &TimeInput,
) -> Result<TimeDataset> {
    match (input, files) {
        (TimeInput::Binned { trial, time }, [table]) => {
            let t = Table::parse(table.name, table.bytes)?;
            let mut ds = binned::read(&t, columns, trial, time)?;
            ds.files = vec![source_file(table)];
            Ok(ds)
        }
        (
            TimeInput::Events {
                trial,
                neuron,
                time,
                align,
                width,
                step,
                start,
                end,
            },
            [events, trials],
        ) => {
            let windows = sliding(*start, *end, *width, *step)?;
            let t = Table::parse(trials.name, trials.bytes)?;
            let spec = events::EventColumns {
                trial,
                neuron,
                time,
                align: align.as_deref(),
            };
            let mut ds = events::read(events, &t, columns, &spec, windows, *width)?;
            ds.files = vec![source_file(events), source_file(trials)];
            Ok(ds)
        }
        (
            TimeInput::Nwb {
                align,
                width,
                step,
                start,
                end,
                units,
            },
            [file],
        ) => {
            let windows = sliding(*start, *end, *width, *step)?;
            let (rec, origin) = extract::read_any(file.name, file.bytes)?;
            let (rec, kept) = units::keep_units(file.name, rec, units)?;
            let mut ds =
                nwb_counts::read(file.name, &rec, columns, align.as_deref(), windows, *width)?;
            ds.files = vec![origin];
            if let Some(note) = kept {
                ds.warnings.insert(0, note);
            }
            Ok(ds)
        }
        (TimeInput::Nwb { .. }, _) => Err(Error::Recipe(
            "an NWB time course reads one file (the .nwb file)".into(),
        )),
        (TimeInput::Binned { .. }, _) => Err(Error::Recipe(
            "a binned time course reads one file (the binned table)".into(),
        )),
        (TimeInput::Events { .. }, _) => Err(Error::Recipe(
            "spike events need two files: the events file and the trial table".into(),
        )),
    }
}

fn source_file(f: &FileBytes) -> SourceFile {
    SourceFile {
        file: f.name.to_string(),
        sha256: sha256_hex(f.bytes),
    }
}

/// Lower-case hex SHA-256 of a byte string.
pub fn sha256_hex(bytes: &[u8]) -> String {
    hex(&Sha256::digest(bytes))
}

/// Lower-case hex SHA-256 of a file read piece by piece (the page's dropped file, never held whole).
pub fn sha256_of(source: &str, bytes: &(impl table::ByteSource + ?Sized)) -> Result<String> {
    let mut hasher = Sha256::new();
    table::pieces(source, bytes, 0, |_, piece| {
        hasher.update(piece);
        Ok(true)
    })?;
    Ok(hex(&hasher.finalize()))
}

fn hex(digest: &[u8]) -> String {
    digest.iter().map(|b| format!("{b:02x}")).collect()
}
