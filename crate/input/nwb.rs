//! Neurodata Without Borders (NWB 2.x) recordings: spike times from the units table, trials from the trials table.
//!
//! NWB files are HDF5. They are read with `hdf5-pure`, a pure-Rust HDF5 reader that also builds for WebAssembly, so
//! the page and the command line share one reader and give the same numbers. What is read (NWB 2.x layout):
//! * `units/spike_times` with its ragged index `units/spike_times_index` (the end, exclusive, of each unit's run of
//!   spike times), and `units/id` for the units' names;
//! * every column of `intervals/trials`: `start_time`, `stop_time` and any other, each a candidate label, group or
//!   alignment time. Ragged columns (those with a `<name>_index` companion) are skipped.
//!
//! Spike times in NWB are on the session clock; each trial's alignment time (default its `start_time`) is
//! subtracted, and the spikes are then counted in windows exactly as for a spike-events file.

use crate::error::{Error, Result};
use serde::Serialize;

fn not_hdf5(source: &str) -> Error {
    Error::Input(format!(
        "{source}: not an HDF5 file, so not an NWB file (NWB 2.x files are HDF5)"
    ))
}

/// One column of the trials table.
#[derive(Debug, Clone, PartialEq, Serialize)]
#[serde(untagged)]
pub enum Column {
    Numbers(Vec<f64>),
    Texts(Vec<String>),
}

impl Column {
    pub fn len(&self) -> usize {
        match self {
            Column::Numbers(v) => v.len(),
            Column::Texts(t) => t.len(),
        }
    }

    pub fn is_empty(&self) -> bool {
        self.len() == 0
    }

    /// The values as text, for labels and groups (numbers printed as the shortest round-trip form).
    pub fn texts(&self) -> Vec<String> {
        match self {
            Column::Texts(t) => t.clone(),
            Column::Numbers(v) => v.iter().map(|x| x.to_string()).collect(),
        }
    }
}

/// The parts of an NWB file a time course needs.
#[derive(Debug, Clone, PartialEq)]
pub struct Recording {
    /// Unit names ("unit <id>").
    pub units: Vec<String>,
    /// Spike times of each unit, s on the session clock, ascending.
    pub spikes: Vec<Vec<f64>>,
    /// Per-unit columns of the units table (quality, brain area, ...: one value per unit), in file order; what
    /// [`super::units`] keeps units by.
    pub unit_columns: Vec<(String, Column)>,
    /// Trials-table columns in file order.
    pub trials: Vec<(String, Column)>,
}

fn hdf(source: &str, what: &str, e: impl std::fmt::Display) -> Error {
    Error::Input(format!("{source}: {what}: {e}"))
}

/// Bytes hashed per read when a file is hashed through a [`hdf5_pure::Source`]: large enough that the page's
/// reads from the dropped file stay few, small enough that hashing holds little memory.
const HASH_CHUNK: usize = 1 << 20;

/// The SHA-256 (hex) of everything a source holds, read a chunk at a time so that a file of any size can be
/// hashed without being held in memory.
pub fn sha256_of(source: &str, src: &dyn hdf5_pure::Source) -> Result<String> {
    use sha2::{Digest, Sha256};
    let mut hasher = Sha256::new();
    let len = src.len();
    let mut offset = 0u64;
    while offset < len {
        let n = HASH_CHUNK.min((len - offset) as usize);
        let chunk = src
            .read_exact_at(offset, n)
            .map_err(|e| hdf(source, "the file cannot be read", e))?;
        hasher.update(&chunk);
        offset += n as u64;
    }
    Ok(hasher
        .finalize()
        .iter()
        .map(|b| format!("{b:02x}"))
        .collect())
}

/// Deflate's largest compression ratio, 1032:1 (zlib's technical details, "Maximum compression factor"): the
/// most bytes a compressed dataset's stored bytes can stand for.
const MAX_INFLATION: u64 = 1032;

/// Check, from a dataset's header alone and before anything is read, that the values it claims can be backed by
/// the file: their bytes may not exceed the file's length (times [`MAX_INFLATION`] when the dataset is
/// compressed). hdf5-pure sizes some buffers from the claim itself (a dataset whose storage was never written reads
/// as its fill value: a damaged dataspace asked for 72 PB), so a damaged file is refused here instead. Returns the
/// number of values.
fn claim(source: &str, path: &str, ds: &hdf5_pure::Dataset, file_len: u64) -> Result<u64> {
    let read = |e| hdf(source, path, e);
    let shape = ds.shape().map_err(read)?;
    let size = ds.element_size().map_err(read)?;
    let values = shape.iter().try_fold(1u64, |a, &d| a.checked_mul(d));
    let backed = if ds.filters().is_empty() {
        file_len
    } else {
        file_len.saturating_mul(MAX_INFLATION)
    };
    let v = match values {
        Some(v) if v.checked_mul(size).is_some_and(|b| b <= backed) => v,
        _ => {
            return Err(Error::Input(format!(
                "{source}: {path} claims {} values of {size} bytes, more than a file of {file_len} bytes can \
                 hold; the file is damaged",
                values.map_or_else(|| format!("{shape:?}"), |v| v.to_string())
            )))
        }
    };
    // Each stored chunk claims its own place and size, and hdf5-pure sets a buffer aside for a run of chunks
    // before reading it (a damaged chunk index once asked for 4 GB, which a page's 32-bit memory cannot give):
    // every chunk must lie inside the file. A chunk index hdf5-pure cannot list (a version-2 B-tree) is left to
    // its own checks.
    if ds.is_chunked() {
        if let Ok(chunks) = ds.chunks() {
            if let Some(c) = chunks.iter().find(|c| {
                c.address
                    .checked_add(c.storage_size)
                    .is_none_or(|end| end > file_len)
            }) {
                return Err(Error::Input(format!(
                    "{source}: {path} has a chunk of {} bytes at byte {}, beyond the end of a file of {file_len} \
                     bytes; the file is damaged",
                    c.storage_size, c.address
                )));
            }
        }
    }
    Ok(v)
}

/// A dataset's values as numbers, after [`claim`].
fn numbers(source: &str, path: &str, ds: &hdf5_pure::Dataset, file_len: u64) -> Result<Vec<f64>> {
    claim(source, path, ds, file_len)?;
    ds.read_f64().map_err(|e| hdf(source, path, e))
}

/// An integer dataset (indexes and ragged ends are stored signed or unsigned, by writer), after [`claim`].
fn integers(source: &str, path: &str, ds: &hdf5_pure::Dataset, file_len: u64) -> Result<Vec<i64>> {
    claim(source, path, ds, file_len)?;
    match ds.read_i64() {
        Ok(v) => Ok(v),
        Err(_) => Ok(ds
            .read_u64()
            .map_err(|e| hdf(source, path, e))?
            .into_iter()
            .map(|v| v as i64)
            .collect()),
    }
}

/// A text dataset, after [`claim`]; variable-length strings with their payload (kept in the file's heaps, never
/// compressed) held to the file's length too, since each element claims its own length.
fn texts(
    ds: &hdf5_pure::Dataset,
    values: u64,
    file_len: u64,
) -> std::result::Result<Vec<String>, hdf5_pure::Error> {
    if matches!(ds.datatype()?, hdf5_pure::Datatype::VariableLength { .. }) {
        let limits = hdf5_pure::VlenStringReadOptions::new()
            .with_max_elements(usize::try_from(values).unwrap_or(usize::MAX))
            .with_max_payload_bytes(usize::try_from(file_len).unwrap_or(usize::MAX));
        ds.read_vlen_strings(limits)
    } else {
        ds.read_string()
    }
}

/// Where each unit was recorded, from the electrodes table: for every text column of
/// `general/extracellular_ephys/electrodes` (`location`, `group_name`, ...), a unit column `electrode <name>`
/// holding the distinct values of the unit's electrodes (joined by " + " when it spans several). NWB keeps a unit's
/// brain area there, through the units table's `electrodes` region, rather than in the units table itself. Files
/// without that region or table get none.
fn electrode_columns(
    source: &str,
    file: &hdf5_pure::File,
    n_units: usize,
) -> Result<Vec<(String, Column)>> {
    const TABLE: &str = "general/extracellular_ephys/electrodes";
    let (Ok(region), Ok(ends), Ok(_)) = (
        file.dataset("units/electrodes"),
        file.dataset("units/electrodes_index"),
        file.group(TABLE),
    ) else {
        return Ok(Vec::new());
    };
    let bad = |what: &str| {
        Error::Input(format!(
            "{source}: units/electrodes is not a valid reference into the electrodes table ({what})"
        ))
    };
    let len = file.file_size();
    let rows = integers(source, "units/electrodes", &region, len)?;
    let ends = integers(source, "units/electrodes_index", &ends, len)?;
    if ends.len() != n_units {
        return Err(bad("one run of electrodes per unit"));
    }
    let mut columns = Vec::new();
    for (name, column) in table_columns(source, file, TABLE, None)? {
        let Column::Texts(values) = column else {
            continue; // positions and impedances: not a place to keep units by
        };
        let mut per_unit = Vec::with_capacity(n_units);
        let mut start = 0usize;
        for &end in &ends {
            let end = usize::try_from(end).map_err(|_| bad("a negative end"))?;
            let run = rows
                .get(start..end)
                .ok_or_else(|| bad("an end past the region"))?;
            let mut here = run
                .iter()
                .map(|&r| {
                    usize::try_from(r)
                        .ok()
                        .and_then(|r| values.get(r).cloned())
                        .ok_or_else(|| bad("a row the table does not have"))
                })
                .collect::<Result<Vec<String>>>()?;
            here.sort();
            here.dedup();
            per_unit.push(here.join(" + "));
            start = end;
        }
        columns.push((format!("electrode {name}"), Column::Texts(per_unit)));
    }
    Ok(columns)
}

/// Refuse, at once and by name, a source that is not HDF5 (so not NWB): before anything reads the rest of it.
pub fn require_hdf5(source: &str, src: &dyn hdf5_pure::Source) -> Result<()> {
    if has_signature(src) {
        Ok(())
    } else {
        Err(not_hdf5(source))
    }
}

/// Whether the HDF5 signature stands where the format allows it: at 0, 512, 1024, 2048, ... bytes.
fn has_signature(src: &dyn hdf5_pure::Source) -> bool {
    let mut offset = 0u64;
    loop {
        let mut bytes = [0u8; 8];
        if offset + 8 > src.len() {
            return false;
        }
        if src.read_at(offset, &mut bytes).is_ok() && &bytes == b"\x89HDF\r\n\x1a\n" {
            return true;
        }
        offset = if offset == 0 { 512 } else { offset * 2 };
    }
}

/// The 1-D columns of an NWB dynamic table (a group of equal-length datasets), skipping `id`, ragged columns
/// (those with a `<name>_index` companion, such as the units' spike times) and their indexes, and anything not
/// numbers or text. Only columns with `rows` values are kept when `rows` is given (a 2-D column such as a mean
/// waveform reads as more values).
fn table_columns(
    source: &str,
    file: &hdf5_pure::File,
    path: &str,
    rows: Option<usize>,
) -> Result<Vec<(String, Column)>> {
    let group = file.group(path).map_err(|e| hdf(source, path, e))?;
    let names = group.datasets().map_err(|e| hdf(source, path, e))?;
    let mut columns = Vec::new();
    for name in &names {
        let ragged = names.contains(&format!("{name}_index"));
        if name == "id" || name.ends_with("_index") || ragged {
            continue;
        }
        let full = format!("{path}/{name}");
        let ds = file.dataset(&full).map_err(|e| hdf(source, name, e))?;
        let values = claim(source, &full, &ds, file.file_size())?;
        if rows.is_some_and(|n| values != n as u64) {
            continue; // a 2-D column (or a damaged one) is not a per-row property: not read at all
        }
        let column = match ds.read_f64() {
            Ok(v) => Column::Numbers(v),
            Err(_) => match texts(&ds, values, file.file_size()) {
                Ok(t) => Column::Texts(t),
                Err(_) => continue, // references, compounds: not a label, group, time or unit property
            },
        };
        if rows.is_none_or(|n| column.len() == n) {
            columns.push((name.clone(), column));
        }
    }
    Ok(columns)
}

impl Recording {
    /// Read a whole NWB file held in memory, through the same random-access route as a file on disk or the
    /// page's dropped file ([`Recording::read_from`]): hdf5-pure's in-memory constructor and its source
    /// constructor disagreed on some damaged files (one found the units table, the other did not), and every face
    /// must give a file the same verdict.
    pub fn read(source: &str, bytes: &[u8]) -> Result<Recording> {
        let src = hdf5_pure::ReadSeekSource::new(std::io::Cursor::new(bytes.to_vec()))
            .map_err(|e| hdf(source, "the file cannot be read", e))?;
        Recording::read_from(source, src)
    }

    /// Read an NWB file through a random-access source, touching only the units and trials tables: a file of
    /// hundreds of MB of raw voltage traces costs the few MB of its spike times (the page's dropped file, the
    /// command line's file on disk).
    pub fn read_from(
        source: &str,
        src: impl hdf5_pure::Source + Send + Sync + 'static,
    ) -> Result<Recording> {
        require_hdf5(source, &src)?;
        let file = hdf5_pure::File::from_source(src)
            .map_err(|e| hdf(source, "the HDF5 structure cannot be read", e))?;
        Recording::from_file(source, &file)
    }

    fn from_file(source: &str, file: &hdf5_pure::File) -> Result<Recording> {
        let missing = |table: &str, path: &str| {
            Error::Input(format!(
                "{source}: this NWB file has no {table} ('{path}'); a time course needs spike times in a units \
                 table and a trials table"
            ))
        };
        let len = file.file_size();
        let times_ds = file
            .dataset("units/spike_times")
            .map_err(|_| missing("units table", "units/spike_times"))?;
        let times = numbers(source, "units/spike_times", &times_ds, len)?;
        let index_ds = file
            .dataset("units/spike_times_index")
            .map_err(|_| missing("units table index", "units/spike_times_index"))?;
        let index = integers(source, "units/spike_times_index", &index_ds, len)?;
        let ids = file
            .dataset("units/id")
            .map_err(|e| hdf(source, "units/id", e))
            .and_then(|d| integers(source, "units/id", &d, len));
        let ids: Vec<String> = match ids {
            Ok(ids) if ids.len() == index.len() => {
                ids.iter().map(|i| format!("unit {i}")).collect()
            }
            _ => (0..index.len()).map(|i| format!("unit {i}")).collect(),
        };
        let mut spikes = Vec::with_capacity(index.len());
        let mut start = 0usize;
        for (u, &end) in index.iter().enumerate() {
            let end = usize::try_from(end).unwrap_or(usize::MAX);
            if end < start || end > times.len() {
                return Err(Error::Input(format!(
                    "{source}: units/spike_times_index is not a valid ragged index at unit {u} (end {end} after \
                     {start}, {} spike times in all)",
                    times.len()
                )));
            }
            let mut unit = times[start..end].to_vec();
            unit.sort_by(f64::total_cmp);
            spikes.push(unit);
            start = end;
        }
        let mut unit_columns = table_columns(source, file, "units", Some(index.len()))?;
        unit_columns.extend(electrode_columns(source, file, index.len())?);
        file.group("intervals/trials")
            .map_err(|_| missing("trials table", "intervals/trials"))?;
        let trials = table_columns(source, file, "intervals/trials", None)?;
        if !trials.iter().any(|(n, _)| n == "start_time") {
            return Err(missing("trial start times", "intervals/trials/start_time"));
        }
        Ok(Recording {
            units: ids,
            spikes,
            unit_columns,
            trials,
        })
    }

    /// Trials: as many as `start_time` has values.
    pub fn n_trials(&self) -> usize {
        self.column("start_time").map_or(0, Column::len)
    }

    pub fn column(&self, name: &str) -> Option<&Column> {
        self.trials.iter().find(|(n, _)| n == name).map(|(_, c)| c)
    }

    /// A trials column by name, holding one value per trial (as many as `start_time`), or an error listing the
    /// columns there are or saying how many values it has.
    pub fn require(&self, source: &str, name: &str) -> Result<&Column> {
        let column = self.column(name).ok_or_else(|| {
            let names: Vec<String> = self.trials.iter().map(|(n, _)| format!("'{n}'")).collect();
            Error::Input(format!(
                "{source}: the trials table has no column '{name}'; its columns are: {}",
                names.join(", ")
            ))
        })?;
        let n = self.n_trials();
        if n == 0 {
            return Err(Error::Input(format!(
                "{source}: the trials table has no trials (intervals/trials/start_time is empty)"
            )));
        }
        if column.len() != n {
            return Err(Error::Input(format!(
                "{source}: the trials column '{name}' holds {} values for {n} trials (one per start_time); every \
                 trials column needs one value per trial",
                column.len()
            )));
        }
        Ok(column)
    }
}

/// What `popdecode inspect` and the page show after loading: units, trials, duration, every trials column and every
/// units column with its distinct values and counts (columns with more than 20 distinct values are summarised by
/// their count; numbers also by their range).
#[derive(Debug, Clone, Serialize)]
pub struct Summary {
    pub units: usize,
    pub spikes: usize,
    pub trials: usize,
    /// From the first trial's start to the last trial's stop, s.
    pub duration: f64,
    pub columns: Vec<ColumnSummary>,
    /// The units table's per-unit columns, which units can be kept by.
    pub unit_columns: Vec<ColumnSummary>,
}

#[derive(Debug, Clone, Serialize)]
pub struct ColumnSummary {
    pub name: String,
    pub numeric: bool,
    /// Distinct values with their counts, when there are at most 20.
    pub values: Vec<(String, usize)>,
    pub distinct: usize,
    /// Smallest and largest value of a numeric column (NaN left out), null for text or no number.
    pub range: Option<(f64, f64)>,
}

fn summarise(columns: &[(String, Column)]) -> Vec<ColumnSummary> {
    columns
        .iter()
        .map(|(name, c)| {
            let texts = c.texts();
            let mut levels = crate::data::labels::sorted_levels(&texts);
            let distinct = levels.len();
            if distinct > 20 {
                levels.clear();
            }
            let range = match c {
                Column::Numbers(v) => {
                    let finite = v.iter().copied().filter(|x| !x.is_nan());
                    let lo = finite.clone().fold(f64::INFINITY, f64::min);
                    let hi = finite.fold(f64::NEG_INFINITY, f64::max);
                    (lo <= hi).then_some((lo, hi))
                }
                Column::Texts(_) => None,
            };
            ColumnSummary {
                name: name.clone(),
                numeric: matches!(c, Column::Numbers(_)),
                values: levels
                    .into_iter()
                    .map(|l| {
                        let n = texts.iter().filter(|t| **t == l).count();
                        (l, n)
                    })
                    .collect(),
                distinct,
                range,
            }
        })
        .collect()
}

impl Recording {
    pub fn summary(&self) -> Summary {
        let number = |name: &str| match self.column(name) {
            Some(Column::Numbers(v)) => v.clone(),
            _ => Vec::new(),
        };
        let (starts, stops) = (number("start_time"), number("stop_time"));
        let first = starts.iter().copied().fold(f64::INFINITY, f64::min);
        let last = stops
            .iter()
            .chain(&starts)
            .copied()
            .fold(f64::NEG_INFINITY, f64::max);
        Summary {
            units: self.units.len(),
            spikes: self.spikes.iter().map(Vec::len).sum(),
            trials: self.n_trials(),
            duration: if last > first { last - first } else { 0.0 },
            columns: summarise(&self.trials),
            unit_columns: summarise(&self.unit_columns),
        }
    }
}

#[cfg(test)]
mod tests {
    use super::*;
    use hdf5_pure::FileBuilder;

    /// A minimal file with the NWB layout: a units table, and (if asked) a trials table.
    fn file(with_trials: bool) -> Vec<u8> {
        let mut b = FileBuilder::new();
        let mut units = b.create_group("units");
        units
            .create_dataset("spike_times")
            .with_f64_data(&[0.5, 0.1, 0.2, 1.2, 1.5]);
        units
            .create_dataset("spike_times_index")
            .with_i64_data(&[3, 5]);
        units.create_dataset("id").with_i64_data(&[7, 9]);
        b.add_group(units.finish());
        if with_trials {
            let mut intervals = b.create_group("intervals");
            let mut trials = intervals.create_group("trials");
            trials
                .create_dataset("start_time")
                .with_f64_data(&[0.0, 1.0]);
            trials
                .create_dataset("stop_time")
                .with_f64_data(&[0.9, 1.9]);
            trials.create_dataset("side").with_f64_data(&[1.0, 2.0]);
            intervals.add_group(trials.finish());
            b.add_group(intervals.finish());
        }
        b.finish().unwrap()
    }

    #[test]
    fn reads_ragged_spike_times_and_trial_columns() {
        let r = Recording::read("r.nwb", &file(true)).unwrap();
        assert_eq!(r.units, vec!["unit 7", "unit 9"]);
        assert_eq!(r.spikes, vec![vec![0.1, 0.2, 0.5], vec![1.2, 1.5]]);
        assert_eq!(r.n_trials(), 2);
        assert_eq!(r.column("side").unwrap().texts(), vec!["1", "2"]);
        let s = r.summary();
        assert_eq!((s.units, s.spikes, s.trials), (2, 5, 2));
        assert!((s.duration - 1.9).abs() < 1e-12);
    }

    #[test]
    fn missing_tables_are_named() {
        let e = Recording::read("r.nwb", &file(false))
            .unwrap_err()
            .to_string();
        assert!(
            e.contains("r.nwb: this NWB file has no trials table ('intervals/trials')"),
            "{e}"
        );
        let e = Recording::read("r.nwb", b"trial,neuron,time\n")
            .unwrap_err()
            .to_string();
        assert!(e.contains("not an HDF5 file"), "{e}");
    }
}
