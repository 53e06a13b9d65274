//! The file dropped on the page, read in pieces: the worker's readers (www/worker.js) give the pieces the core asks
//! for, so a large file is never copied whole into the core's memory. The HDF5 reader reads an NWB file this way
//! where it lies (`popdecodeReadAt`, by `FileReaderSync`); the delimited-table reader reads a trial table from the
//! worker's one copy of it (`popdecodeReadInto`: repeated `FileReaderSync` reads would leave a garbage buffer per
//! piece, which the browser collects late).

use crate::input::table::ByteSource;
use wasm_bindgen::prelude::*;

#[wasm_bindgen]
extern "C" {
    /// The worker's reader of the dropped file (www/worker.js): `length` bytes from `offset`, by FileReaderSync.
    #[wasm_bindgen(catch, js_name = popdecodeReadAt)]
    fn read_dropped_file(offset: f64, length: u32) -> Result<Vec<u8>, JsValue>;
    /// The same straight into `buf`, for a table the worker read once (each piece a copy out of the worker's
    /// bytes, leaving no garbage): how many bytes were read.
    #[wasm_bindgen(catch, js_name = popdecodeReadInto)]
    fn read_dropped_into(offset: f64, buf: &mut [u8]) -> Result<u32, JsValue>;
}

/// The file the worker is reading (of `len` bytes). Only a worker can read this way.
pub(super) struct DroppedFile {
    len: u64,
}

impl DroppedFile {
    /// The dropped file of `size` bytes (as the page's `File.size` says).
    pub(super) fn new(size: f64) -> DroppedFile {
        DroppedFile { len: size as u64 }
    }

    /// `length` bytes from `offset` (fewer only past the end).
    fn read(&self, offset: u64, length: usize) -> Result<Vec<u8>, String> {
        let length = u32::try_from(length).map_err(|_| "a read of 4 GiB or more".to_string())?;
        read_dropped_file(offset as f64, length)
            .map_err(|e| e.as_string().unwrap_or_else(|| format!("{e:?}")))
    }
}

impl hdf5_pure::Source for DroppedFile {
    fn len(&self) -> u64 {
        self.len
    }

    fn read_at(&self, offset: u64, buf: &mut [u8]) -> Result<(), hdf5_pure::FormatError> {
        let bytes = self
            .read(offset, buf.len())
            .map_err(hdf5_pure::FormatError::Source)?;
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

impl ByteSource for DroppedFile {
    fn read_at(&self, offset: u64, buf: &mut [u8]) -> std::io::Result<usize> {
        let want = buf.len().min(self.len.saturating_sub(offset) as usize);
        let n = read_dropped_into(offset as f64, &mut buf[..want]).map_err(|e| {
            std::io::Error::other(e.as_string().unwrap_or_else(|| format!("{e:?}")))
        })?;
        Ok((n as usize).min(want))
    }
}
