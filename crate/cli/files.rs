//! Files on disk: what the core never touches.

use hdf5_pure::ReadSeekSource;
use std::io::Write;
use std::path::Path;

pub fn read(path: &Path) -> Result<Vec<u8>, String> {
    std::fs::read(path).map_err(|e| format!("{}: cannot read the file: {e}", path.display()))
}

/// Print text on standard output. A reader that has gone away (`popdecode ... | head`) is not an error: the rest
/// of the text is dropped quietly and the run goes on to write its files.
pub fn print(text: &str) -> Result<(), String> {
    let mut out = std::io::stdout().lock();
    match out.write_all(text.as_bytes()).and_then(|()| out.flush()) {
        Err(e) if e.kind() != std::io::ErrorKind::BrokenPipe => {
            Err(format!("cannot write to the standard output: {e}"))
        }
        _ => Ok(()),
    }
}

pub fn write(path: &Path, contents: &str) -> Result<(), String> {
    std::fs::write(path, contents)
        .map_err(|e| format!("{}: cannot write the file: {e}", path.display()))
}

/// The SHA-256 of a file's bytes, read in pieces (a session file can be larger than memory allows twice).
pub fn sha256_file(path: &Path) -> Result<String, String> {
    use sha2::{Digest, Sha256};
    use std::io::Read as _;
    let cannot = |e: std::io::Error| format!("{}: cannot read the file: {e}", path.display());
    let mut file = std::fs::File::open(path).map_err(cannot)?;
    let mut hasher = Sha256::new();
    let mut buf = vec![0u8; 1 << 20];
    loop {
        let n = file.read(&mut buf).map_err(cannot)?;
        if n == 0 {
            break;
        }
        hasher.update(&buf[..n]);
    }
    Ok(hasher
        .finalize()
        .iter()
        .map(|b| format!("{b:02x}"))
        .collect())
}

/// The name a file is reported under: as given on the command line's last component, like the page shows it.
pub fn display_name(path: &Path) -> String {
    path.file_name().map_or_else(
        || path.display().to_string(),
        |n| n.to_string_lossy().into_owned(),
    )
}

/// A file on disk as a random-access source, so that an NWB file is read only where its tables are.
pub fn open_source(path: &Path) -> Result<ReadSeekSource<std::fs::File>, String> {
    let file = std::fs::File::open(path)
        .map_err(|e| format!("{}: cannot read the file: {e}", path.display()))?;
    ReadSeekSource::new(file).map_err(|e| format!("{}: cannot read the file: {e}", path.display()))
}
