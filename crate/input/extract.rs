//! A recording's extract: what a time course reads of an NWB file (the units with their spike times and per-unit
//! columns, and the trials table), with the file's name and SHA-256, in a compact binary form.
//!
//! Why it exists: NWB files are often hundreds of MB of raw voltage traces around a few MB of spike times. The page
//! reads a dropped file lazily, once, in one worker (only the units and trials tables, plus a chunked hash), and
//! hands this extract to the page and to every decoding worker, so the file itself is never held in memory. The
//! command line takes the same route, so both faces decode from the same bytes.
//!
//! Layout (little-endian): the magic [`MAGIC`]; the file's name and SHA-256 as strings; the units (a u32 count;
//! each a name, a u64 spike count and that many f64 spike times); then the unit columns and the trials columns
//! (each a u32 count; each a name and a column). A string is a u32 byte length and its UTF-8 bytes; a column is a
//! kind byte (0 numbers, 1 texts), a u32 length and the values (f64, or strings).

use super::nwb::{require_hdf5, sha256_of, Column, Recording};
use crate::data::SourceFile;
use crate::error::{Error, Result};

pub const MAGIC: &[u8] = b"popdecode-extract/1\n";

/// Read an NWB file through a random-access source (only its units and trials tables, and the whole file a chunk
/// at a time for its SHA-256) into an extract.
pub fn read_nwb(
    name: &str,
    src: impl hdf5_pure::Source + Send + Sync + 'static,
) -> Result<Vec<u8>> {
    // A dropped file that is not NWB is refused before the hash reads all of it.
    require_hdf5(name, &src)?;
    let sha256 = sha256_of(name, &src)?;
    let rec = Recording::read_from(name, src)?;
    Ok(encode(
        &rec,
        &SourceFile {
            file: name.to_string(),
            sha256,
        },
    ))
}

pub fn encode(rec: &Recording, file: &SourceFile) -> Vec<u8> {
    let spikes: usize = rec.spikes.iter().map(Vec::len).sum();
    let mut out = Vec::with_capacity(MAGIC.len() + 8 * spikes + 1024);
    out.extend_from_slice(MAGIC);
    put_str(&mut out, &file.file);
    put_str(&mut out, &file.sha256);
    put_u32(&mut out, rec.units.len());
    for (name, times) in rec.units.iter().zip(&rec.spikes) {
        put_str(&mut out, name);
        out.extend_from_slice(&(times.len() as u64).to_le_bytes());
        for t in times {
            out.extend_from_slice(&t.to_le_bytes());
        }
    }
    for columns in [&rec.unit_columns, &rec.trials] {
        put_u32(&mut out, columns.len());
        for (name, column) in columns.iter() {
            put_str(&mut out, name);
            match column {
                Column::Numbers(v) => {
                    out.push(0);
                    put_u32(&mut out, v.len());
                    for x in v {
                        out.extend_from_slice(&x.to_le_bytes());
                    }
                }
                Column::Texts(t) => {
                    out.push(1);
                    put_u32(&mut out, t.len());
                    for x in t {
                        put_str(&mut out, x);
                    }
                }
            }
        }
    }
    out
}

pub fn is_extract(bytes: &[u8]) -> bool {
    bytes.starts_with(MAGIC)
}

/// The recording in `bytes` (an extract, or a whole NWB file) and the file it was read from.
pub fn read_any(name: &str, bytes: &[u8]) -> Result<(Recording, SourceFile)> {
    match decode(name, bytes)? {
        Some(read) => Ok(read),
        None => Ok((
            Recording::read(name, bytes)?,
            SourceFile {
                file: name.to_string(),
                sha256: super::sha256_hex(bytes),
            },
        )),
    }
}

/// The recording and the file it was read from, or `None` when the bytes are not an extract.
pub fn decode(source: &str, bytes: &[u8]) -> Result<Option<(Recording, SourceFile)>> {
    if !is_extract(bytes) {
        return Ok(None);
    }
    let mut r = Reader {
        source,
        bytes,
        at: MAGIC.len(),
    };
    let file = SourceFile {
        file: r.string()?,
        sha256: r.string()?,
    };
    let n_units = r.u32()?;
    let mut units = Vec::with_capacity(n_units.min(bytes.len()));
    let mut spikes = Vec::with_capacity(n_units.min(bytes.len()));
    for _ in 0..n_units {
        units.push(r.string()?);
        let n = r.u64()?;
        spikes.push(r.numbers(n)?);
    }
    let unit_columns = r.columns()?;
    let trials = r.columns()?;
    if r.at != bytes.len() {
        return Err(r.damaged());
    }
    Ok(Some((
        Recording {
            units,
            spikes,
            unit_columns,
            trials,
        },
        file,
    )))
}

fn put_u32(out: &mut Vec<u8>, n: usize) {
    let n = u32::try_from(n).expect("fewer than 2^32 units, columns, values and bytes per name");
    out.extend_from_slice(&n.to_le_bytes());
}

fn put_str(out: &mut Vec<u8>, s: &str) {
    put_u32(out, s.len());
    out.extend_from_slice(s.as_bytes());
}

/// Reads an extract front to back; every length is checked against what is left before anything is reserved.
struct Reader<'a> {
    source: &'a str,
    bytes: &'a [u8],
    at: usize,
}

impl<'a> Reader<'a> {
    fn damaged(&self) -> Error {
        Error::Input(format!(
            "{}: the recording's extract is damaged (at byte {}); load the NWB file again",
            self.source, self.at
        ))
    }

    fn take(&mut self, n: usize) -> Result<&'a [u8]> {
        let end = self
            .at
            .checked_add(n)
            .filter(|&e| e <= self.bytes.len())
            .ok_or_else(|| self.damaged())?;
        let part = &self.bytes[self.at..end];
        self.at = end;
        Ok(part)
    }

    fn u32(&mut self) -> Result<usize> {
        let b = self.take(4)?;
        Ok(u32::from_le_bytes([b[0], b[1], b[2], b[3]]) as usize)
    }

    fn u64(&mut self) -> Result<usize> {
        let b = self.take(8)?;
        let n = u64::from_le_bytes(b.try_into().expect("8 bytes"));
        usize::try_from(n).map_err(|_| self.damaged())
    }

    fn string(&mut self) -> Result<String> {
        let n = self.u32()?;
        let b = self.take(n)?;
        String::from_utf8(b.to_vec()).map_err(|_| self.damaged())
    }

    fn numbers(&mut self, n: usize) -> Result<Vec<f64>> {
        let b = self.take(n.checked_mul(8).ok_or_else(|| self.damaged())?)?;
        Ok(b.chunks_exact(8)
            .map(|c| f64::from_le_bytes(c.try_into().expect("8 bytes")))
            .collect())
    }

    fn columns(&mut self) -> Result<Vec<(String, Column)>> {
        let n = self.u32()?;
        let mut columns = Vec::new();
        for _ in 0..n {
            let name = self.string()?;
            let kind = self.take(1)?[0];
            let len = self.u32()?;
            let column = match kind {
                0 => Column::Numbers(self.numbers(len)?),
                1 => Column::Texts(
                    (0..len)
                        .map(|_| self.string())
                        .collect::<Result<Vec<_>>>()?,
                ),
                _ => return Err(self.damaged()),
            };
            columns.push((name, column));
        }
        Ok(columns)
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    fn recording() -> Recording {
        Recording {
            units: vec!["unit 3".into(), "unit 8".into()],
            spikes: vec![vec![0.1, 0.25, f64::MAX], vec![]],
            unit_columns: vec![(
                "quality".into(),
                Column::Texts(vec!["good".into(), "mua".into()]),
            )],
            trials: vec![
                ("start_time".into(), Column::Numbers(vec![0.0, f64::NAN])),
                ("odour".into(), Column::Texts(vec!["é".into(), "".into()])),
            ],
        }
    }

    #[test]
    fn round_trips_bit_for_bit() {
        let file = SourceFile {
            file: "s.nwb".into(),
            sha256: "ab".repeat(32),
        };
        let bytes = encode(&recording(), &file);
        let (rec, back) = decode("s.nwb", &bytes).unwrap().unwrap();
        assert_eq!(back, file);
        assert_eq!(rec.units, recording().units);
        assert_eq!(rec.spikes, recording().spikes);
        assert_eq!(rec.unit_columns, recording().unit_columns);
        match &rec.trials[0].1 {
            Column::Numbers(v) => assert!(v[0] == 0.0 && v[1].is_nan()),
            other => panic!("{other:?}"),
        }
        assert_eq!(rec.trials[1], recording().trials[1]);
    }

    #[test]
    fn other_bytes_are_not_an_extract_and_damage_is_named() {
        assert!(decode("x", b"\x89HDF\r\n\x1a\n").unwrap().is_none());
        let file = SourceFile {
            file: "s.nwb".into(),
            sha256: String::new(),
        };
        let bytes = encode(&recording(), &file);
        for cut in [MAGIC.len() + 2, bytes.len() - 1] {
            let e = decode("s.nwb", &bytes[..cut]).unwrap_err().to_string();
            assert!(
                e.contains("s.nwb: the recording's extract is damaged"),
                "{e}"
            );
        }
        let mut long = bytes.clone();
        long.push(0);
        assert!(decode("s.nwb", &long).is_err());
    }
}
