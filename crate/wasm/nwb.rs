//! NWB files dropped on the page, read lazily by a worker into the extract the page and its pool decode from.

use super::request::err;
use crate::input::extract;
use wasm_bindgen::prelude::*;

#[wasm_bindgen]
extern "C" {
    /// The worker's reader of the dropped file (www/worker.js): `length` bytes from `offset`, by FileReaderSync.
    #[wasm_bindgen(catch, js_name = popdecodeReadAt)]
    fn read_dropped_file(offset: f64, length: u32) -> Result<Vec<u8>, JsValue>;
}

/// The file dropped on the page as the HDF5 reader's random-access source: nothing is read until asked for, so
/// only the NWB file's units and trials tables are ever in memory. Only a worker can read this way.
struct DroppedFile {
    len: u64,
}

impl hdf5_pure::Source for DroppedFile {
    fn len(&self) -> u64 {
        self.len
    }

    fn read_at(&self, offset: u64, buf: &mut [u8]) -> Result<(), hdf5_pure::FormatError> {
        let length = u32::try_from(buf.len())
            .map_err(|_| hdf5_pure::FormatError::Source("a read of 4 GiB or more".into()))?;
        let bytes = read_dropped_file(offset as f64, length).map_err(|e| {
            hdf5_pure::FormatError::Source(e.as_string().unwrap_or_else(|| format!("{e:?}")))
        })?;
        if bytes.len() != buf.len() {
            return Err(hdf5_pure::FormatError::Source(format!(
                "{} bytes read at {offset} where {} were asked for",
                bytes.len(),
                buf.len()
            )));
        }
        buf.copy_from_slice(&bytes);
        Ok(())
    }
}

/// Read the dropped NWB file (`size` bytes) lazily into the extract the page and its workers decode from.
#[wasm_bindgen]
pub fn extract_nwb(name: &str, size: f64) -> Result<Vec<u8>, JsValue> {
    extract::read_nwb(name, DroppedFile { len: size as u64 }).map_err(err)
}

/// What an NWB recording holds (units, spikes, trials, the trials and units tables' columns, the file's SHA-256),
/// as JSON, from its extract (or the whole file).
#[wasm_bindgen]
pub fn inspect_nwb(name: &str, bytes: &[u8]) -> Result<String, JsValue> {
    let (rec, origin) = extract::read_any(name, bytes).map_err(err)?;
    let mut summary = serde_json::to_value(rec.summary()).expect("a summary serialises");
    summary["sha256"] = origin.sha256.into();
    Ok(summary.to_string())
}
