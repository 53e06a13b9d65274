//! A delimited text table, read with the `csv` crate, before any meaning is given to its columns.
//!
//! What is detected here and why:
//! * the delimiter (comma, semicolon or tab), because spreadsheets in many locales save semicolons;
//! * a decimal comma, only when the delimiter is a semicolon (the only case where `1,5` is unambiguous);
//! * a UTF-8 byte-order mark, which spreadsheet programs write and which would otherwise glue itself to the first
//!   column name;
//! * CRLF line ends and quoted header names with spaces, which the `csv` crate handles.
//!
//! Line numbers are the file's own (the header is line 1), so that a message points where a text editor or a
//! spreadsheet does.

use crate::error::{Error, Result};
use crate::recipe::limits::MAX_MAGNITUDE;
use std::cell::RefCell;
use std::collections::VecDeque;

/// The text of a table with its header, each record remembered with the file line it started on.
#[derive(Debug, Clone)]
pub struct Table {
    /// Name of the file as the user knows it; used in every message.
    pub source: String,
    pub headers: Vec<String>,
    pub rows: Vec<Vec<String>>,
    /// File line on which each row starts (header = line 1).
    pub lines: Vec<u64>,
    pub delimiter: u8,
    pub decimal_comma: bool,
}

/// What a cell holds once read as a number.
#[derive(Debug, Clone, Copy, PartialEq)]
pub enum Cell {
    Number(f64),
    Missing,
    NotNumber,
    /// A number beyond [`MAX_MAGNITUDE`]: counted as a number when columns are sorted into numeric and text, and
    /// refused wherever it would be used ([`crate::recipe::limits::beyond_magnitude`] says why).
    TooLarge(f64),
}

/// The header and delimiter of a file read row by row with [`stream`].
pub struct Header {
    pub headers: Vec<String>,
    pub delimiter: u8,
}

/// Where a file's bytes come from: all in memory (the CLI and the tests read the file first), or read piece by
/// piece (the page's core copies pieces out of its data worker's one read of a dropped file, so it never holds a
/// large table's bytes beside the matrix decoded from them). [`stream`] reads either the same way, so both give the
/// same rows and the same messages.
pub trait ByteSource {
    /// Read into `buf` from `offset`: how many bytes were read (possibly fewer than asked; 0 only at the end).
    fn read_at(&self, offset: u64, buf: &mut [u8]) -> std::io::Result<usize>;
}

impl ByteSource for [u8] {
    fn read_at(&self, offset: u64, buf: &mut [u8]) -> std::io::Result<usize> {
        let from = usize::try_from(offset)
            .unwrap_or(usize::MAX)
            .min(self.len());
        let n = buf.len().min(self.len() - from);
        buf[..n].copy_from_slice(&self[from..from + n]);
        Ok(n)
    }
}

impl ByteSource for Vec<u8> {
    fn read_at(&self, offset: u64, buf: &mut [u8]) -> std::io::Result<usize> {
        self.as_slice().read_at(offset, buf)
    }
}

impl<const N: usize> ByteSource for [u8; N] {
    fn read_at(&self, offset: u64, buf: &mut [u8]) -> std::io::Result<usize> {
        self.as_slice().read_at(offset, buf)
    }
}

/// Fill `buf` from `offset` as far as the file goes, however short the source's reads: how many bytes were read.
/// (Where a read starts matters: a byte-order mark is looked for in the first three bytes, and the `csv` reader
/// strips one only when its first buffer holds three.)
fn read_full(
    bytes: &(impl ByteSource + ?Sized),
    offset: u64,
    buf: &mut [u8],
) -> std::io::Result<usize> {
    let mut filled = 0;
    while filled < buf.len() {
        let n = bytes.read_at(offset + filled as u64, &mut buf[filled..])?;
        if n == 0 {
            break;
        }
        filled += n;
    }
    Ok(filled)
}

/// How much of a file is read at a time.
const PIECE: usize = 1 << 20;

/// The pieces of `bytes` from `offset` on, in order, with their offsets, until `each` says it has seen enough
/// (returns false) or the file ends.
pub fn pieces(
    source: &str,
    bytes: &(impl ByteSource + ?Sized),
    offset: u64,
    mut each: impl FnMut(u64, &[u8]) -> Result<bool>,
) -> Result<()> {
    let mut buf = vec![0u8; PIECE];
    let mut at = offset;
    loop {
        let n = read_full(bytes, at, &mut buf).map_err(|e| unreadable(source, e))?;
        if n == 0 {
            return Ok(());
        }
        if !each(at, &buf[..n])? {
            return Ok(());
        }
        at += n as u64;
    }
}

fn unreadable(source: &str, e: std::io::Error) -> Error {
    Error::Input(format!("{source}: the file could not be read ({e})"))
}

/// Check that the file is UTF-8 text with something in it, in one pass over its pieces: where its text starts
/// (after a byte-order mark).
fn check_text(source: &str, bytes: &(impl ByteSource + ?Sized)) -> Result<u64> {
    let mut bom = [0u8; 3];
    let read = read_full(bytes, 0, &mut bom).map_err(|e| unreadable(source, e))?;
    let start = if read == 3 && bom == [0xEF, 0xBB, 0xBF] {
        3
    } else {
        0
    };
    let not_utf8 = |offset: u64| {
        Error::Input(format!(
            "{source}: the file is not UTF-8 text (first bad byte at offset {offset}); save it as UTF-8 CSV"
        ))
    };
    // A character cut by a piece's end waits in `carry` for the rest of its bytes.
    let mut carry: Vec<u8> = Vec::new();
    let mut any_text = false;
    let mut end = start;
    pieces(source, bytes, start, |at, piece| {
        end = at + piece.len() as u64;
        let from = at - carry.len() as u64;
        carry.extend_from_slice(piece);
        let valid = match std::str::from_utf8(&carry) {
            Ok(text) => text,
            Err(e) if e.error_len().is_none() => {
                std::str::from_utf8(&carry[..e.valid_up_to()]).expect("valid up to here")
            }
            Err(e) => return Err(not_utf8(from + e.valid_up_to() as u64)),
        };
        any_text = any_text || valid.chars().any(|c| !c.is_whitespace());
        let used = valid.len();
        carry.drain(..used);
        Ok(true)
    })?;
    if !carry.is_empty() {
        return Err(not_utf8(end - carry.len() as u64));
    }
    if !any_text {
        return Err(Error::Input(format!("{source}: the file is empty")));
    }
    Ok(start)
}

/// The text from `start` up to the end of its 20th non-blank line (or all of it): what the delimiter is
/// chosen from.
fn first_lines(source: &str, bytes: &(impl ByteSource + ?Sized), start: u64) -> Result<String> {
    let mut text: Vec<u8> = Vec::new();
    let mut found = 0usize;
    let mut line_start = 0usize;
    pieces(source, bytes, start, |_, piece| {
        let scanned = text.len();
        text.extend_from_slice(piece);
        for i in scanned..text.len() {
            if text[i] != b'\n' {
                continue;
            }
            let line = &text[line_start..i];
            let line = line.strip_suffix(b"\r").unwrap_or(line);
            if !std::str::from_utf8(line).map_or(true, |l| l.trim().is_empty()) {
                found += 1;
            }
            line_start = i + 1;
            if found == DELIMITER_LINES {
                text.truncate(i + 1);
                return Ok(false);
            }
        }
        Ok(true)
    })?;
    Ok(String::from_utf8(text).expect("checked as UTF-8 by check_text"))
}

/// How many non-blank lines the delimiter is chosen from.
const DELIMITER_LINES: usize = 20;

/// The bytes the `csv` reader has taken but whose records' lines are not yet known: enough to number every record
/// as the file's own line, without keeping the file. Record positions only move forward.
struct Window {
    /// Text offset of `bytes[0]`.
    start: u64,
    /// Line ends before `start`.
    newlines: u64,
    bytes: VecDeque<u8>,
}

impl Window {
    /// The file line (header = 1) of the record at text offset `byte`: a record's position is where the previous
    /// one ended, before any blank lines, so those are stepped over first. Forgets everything before it.
    fn line_of(&mut self, byte: u64) -> u64 {
        let from = (byte.saturating_sub(self.start) as usize).min(self.bytes.len());
        let skip = self
            .bytes
            .range(from..)
            .take_while(|&&b| b == b'\n' || b == b'\r')
            .count();
        let first = from + skip;
        self.newlines += self.bytes.range(..first).filter(|&&b| b == b'\n').count() as u64;
        self.bytes.drain(..first);
        self.start += first as u64;
        self.newlines + 1
    }
}

/// The file's bytes from an offset on, in order.
struct Sequential<'a, S: ByteSource + ?Sized> {
    bytes: &'a S,
    at: u64,
}

impl<S: ByteSource + ?Sized> std::io::Read for Sequential<'_, S> {
    fn read(&mut self, buf: &mut [u8]) -> std::io::Result<usize> {
        let n = read_full(self.bytes, self.at, buf)?;
        self.at += n as u64;
        Ok(n)
    }
}

/// The text as the `csv` reader reads it (read from the file a piece at a time), every byte it takes also passing
/// through the [`Window`].
struct Feed<'a, S: ByteSource + ?Sized> {
    text: std::io::BufReader<Sequential<'a, S>>,
    window: &'a RefCell<Window>,
}

impl<S: ByteSource + ?Sized> std::io::Read for Feed<'_, S> {
    fn read(&mut self, buf: &mut [u8]) -> std::io::Result<usize> {
        let n = self.text.read(buf)?;
        self.window.borrow_mut().bytes.extend(&buf[..n]);
        Ok(n)
    }
}

/// Read a delimited file row by row without keeping it: `on_header` sees the checked header first, then `on_row`
/// gets each non-blank record with the file line it starts on. The bytes are read in pieces (three passes: the
/// text is checked as UTF-8 first, so a bad byte is said before any row is), so a large file is never held whole;
/// [`Table::parse`] is this plus collecting the rows.
pub fn stream(
    source: &str,
    bytes: &(impl ByteSource + ?Sized),
    mut on_header: impl FnMut(&Header) -> Result<()>,
    mut on_row: impl FnMut(u64, &csv::StringRecord) -> Result<()>,
) -> Result<Header> {
    let start = check_text(source, bytes)?;
    let delimiter = detect_delimiter(&first_lines(source, bytes, start)?);
    let window = RefCell::new(Window {
        start: 0,
        newlines: 0,
        bytes: VecDeque::new(),
    });
    // The csv crate's own line counter skips blank lines; count from byte offsets instead.
    let line_of = |byte: u64| window.borrow_mut().line_of(byte);
    let feed = Feed {
        text: std::io::BufReader::with_capacity(PIECE, Sequential { bytes, at: start }),
        window: &window,
    };
    let mut reader = csv::ReaderBuilder::new()
        .delimiter(delimiter)
        .has_headers(true)
        .flexible(false)
        .trim(csv::Trim::All)
        .buffer_capacity(64 * 1024)
        .from_reader(feed);
    let headers: Vec<String> = reader
        .headers()
        .map_err(|e| csv_error(source, e, &line_of))?
        .iter()
        .map(|h| h.trim().to_string())
        .collect();
    check_headers(source, &headers)?;
    let header = Header { headers, delimiter };
    on_header(&header)?;
    let mut record = csv::StringRecord::new();
    let mut any = false;
    loop {
        match reader.read_record(&mut record) {
            Ok(false) => break,
            Ok(true) => {}
            Err(e) => return Err(csv_error(source, e, &line_of)),
        }
        if record.iter().all(|c| c.is_empty()) {
            continue; // a blank line inside the file, as spreadsheets leave at the end
        }
        any = true;
        on_row(record.position().map_or(0, |p| line_of(p.byte())), &record)?;
    }
    if !any {
        return Err(Error::Input(format!(
            "{source}: the file has a header but no data rows"
        )));
    }
    Ok(header)
}

impl Table {
    /// Read a whole table from the bytes of a file.
    pub fn parse(source: &str, bytes: &[u8]) -> Result<Table> {
        let mut rows = Vec::new();
        let mut lines = Vec::new();
        let header = stream(
            source,
            bytes,
            |_| Ok(()),
            |line, record| {
                lines.push(line);
                rows.push(record.iter().map(str::to_string).collect());
                Ok(())
            },
        )?;
        Ok(Table {
            source: source.to_string(),
            headers: header.headers,
            rows,
            lines,
            delimiter: header.delimiter,
            decimal_comma: header.delimiter == b';',
        })
    }

    /// Index of a column by its header name, or an error listing the names that exist.
    pub fn column(&self, name: &str) -> Result<usize> {
        self.headers
            .iter()
            .position(|h| h == name.trim())
            .ok_or_else(|| {
                Error::Input(format!(
                    "{}: no column named '{}'; the columns are: {}",
                    self.source,
                    name,
                    quoted_list(&self.headers)
                ))
            })
    }

    /// Read one cell as a number under this table's decimal convention.
    pub fn cell(&self, row: usize, col: usize) -> Cell {
        parse_number(&self.rows[row][col], self.decimal_comma)
    }

    /// "file, line N, column 'x'" for messages.
    pub fn at(&self, row: usize, col: usize) -> String {
        format!(
            "{}, line {}, column '{}'",
            self.source, self.lines[row], self.headers[col]
        )
    }

    /// The delimiter as a word, for reports.
    pub fn delimiter_name(&self) -> &'static str {
        delimiter_name(self.delimiter)
    }
}

/// The tokens that mean "no value" in exported spreadsheets and statistics packages (common practice, no source).
pub fn is_missing_token(s: &str) -> bool {
    let t = s.trim();
    t.is_empty()
        || ["na", "n/a", "nan", "null", "none", "?"]
            .iter()
            .any(|m| t.eq_ignore_ascii_case(m))
}

/// Parse a number; written infinities and text are `NotNumber`, missing tokens are `Missing`, magnitudes beyond
/// [`MAX_MAGNITUDE`] (numbers too large for 64 bits included) are `TooLarge`.
pub fn parse_number(s: &str, decimal_comma: bool) -> Cell {
    let t = s.trim();
    if is_missing_token(t) {
        return Cell::Missing;
    }
    let parsed = if decimal_comma && t.contains(',') {
        t.replace(',', ".").parse::<f64>()
    } else {
        t.parse::<f64>()
    };
    match parsed {
        Ok(v) if v.abs() <= MAX_MAGNITUDE => Cell::Number(v),
        Ok(v) if v.is_finite() => Cell::TooLarge(v),
        // A number written out (1e309) that overflows, unlike a written infinity ("inf"), which is not a number.
        Ok(v) if !v.is_nan() && !t.to_ascii_lowercase().contains("inf") => Cell::TooLarge(v),
        _ => Cell::NotNumber,
    }
}

/// A delimiter as a word, for reports.
pub fn delimiter_name(delimiter: u8) -> &'static str {
    match delimiter {
        b';' => "semicolon",
        b'\t' => "tab",
        _ => "comma",
    }
}

/// A cell's text for a message, quoted, and cut after 40 characters: a cell of megabytes (a file with a lost line
/// ending) would otherwise fill the screen or the page.
pub fn quoted_cell(text: &str) -> String {
    const SHOWN: usize = 40;
    let count = text.chars().count();
    if count <= SHOWN {
        format!("'{text}'")
    } else {
        let start: String = text.chars().take(SHOWN).collect();
        format!("'{start}…' ({count} characters)")
    }
}

pub(crate) fn quoted_list(names: &[String]) -> String {
    const SHOWN: usize = 12;
    let mut s: Vec<String> = names.iter().take(SHOWN).map(|n| format!("'{n}'")).collect();
    if names.len() > SHOWN {
        s.push(format!("… ({} in all)", names.len()));
    }
    s.join(", ")
}

fn check_headers(source: &str, headers: &[String]) -> Result<()> {
    for (i, h) in headers.iter().enumerate() {
        if h.is_empty() {
            return Err(Error::Input(format!(
                "{source}, line 1: column {} has no name; every column needs a header",
                i + 1
            )));
        }
        if let Some(j) = headers[..i].iter().position(|o| o == h) {
            return Err(Error::Input(format!(
                "{source}, line 1: the column name '{h}' appears twice (columns {} and {}); names must be unique",
                j + 1,
                i + 1
            )));
        }
    }
    Ok(())
}

fn csv_error(source: &str, e: csv::Error, line_of: &dyn Fn(u64) -> u64) -> Error {
    let line = e.position().map(|p| line_of(p.byte()));
    match (e.kind(), line) {
        (
            csv::ErrorKind::UnequalLengths {
                expected_len, len, ..
            },
            Some(line),
        ) => Error::Input(format!(
            "{source}, line {line}: this row has {len} fields but the header has {expected_len}; \
             check for a stray delimiter or a missing cell"
        )),
        (_, Some(line)) => Error::Input(format!("{source}, line {line}: {e}")),
        _ => Error::Input(format!("{source}: {e}")),
    }
}

/// Choose the delimiter that splits the first lines into the same number (> 1) of fields most consistently.
///
/// Quoted text is skipped so that a comma inside a quoted header does not count. Ties go to the candidate giving more
/// fields; a file with a single column falls back to comma.
fn detect_delimiter(text: &str) -> u8 {
    let lines: Vec<&str> = text
        .lines()
        .filter(|l| !l.trim().is_empty())
        .take(20)
        .collect();
    let mut best = (b',', 0usize, 0usize); // (delimiter, lines agreeing with the header, fields)
    for d in [b',', b';', b'\t'] {
        let counts: Vec<usize> = lines.iter().map(|l| count_unquoted(l, d)).collect();
        let fields = counts.first().copied().unwrap_or(0);
        if fields == 0 {
            continue;
        }
        let agreeing = counts.iter().filter(|&&c| c == fields).count();
        if (agreeing, fields) > (best.1, best.2) {
            best = (d, agreeing, fields);
        }
    }
    best.0
}

fn count_unquoted(line: &str, d: u8) -> usize {
    let mut in_quotes = false;
    let mut n = 0;
    for b in line.bytes() {
        if b == b'"' {
            in_quotes = !in_quotes;
        } else if b == d && !in_quotes {
            n += 1;
        }
    }
    n
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn detects_each_delimiter() {
        let comma = Table::parse("a.csv", b"x,y\n1,2\n").unwrap();
        assert_eq!(comma.delimiter, b',');
        let semi = Table::parse("a.csv", b"x;y\n1,5;2\n").unwrap();
        assert_eq!(semi.delimiter, b';');
        assert_eq!(semi.cell(0, 0), Cell::Number(1.5));
        let tab = Table::parse("a.csv", b"x\ty\n1\t2\n").unwrap();
        assert_eq!(tab.delimiter, b'\t');
    }

    #[test]
    fn bom_crlf_and_quoted_headers() {
        let t = Table::parse(
            "a.csv",
            "\u{feff}\"unit 1\",\"odour, name\"\r\n3,a\r\n".as_bytes(),
        )
        .unwrap();
        assert_eq!(t.headers, vec!["unit 1", "odour, name"]);
        assert_eq!(t.rows[0], vec!["3", "a"]);
    }

    #[test]
    fn missing_and_non_numbers() {
        assert_eq!(parse_number(" NA ", false), Cell::Missing);
        assert_eq!(parse_number("NaN", false), Cell::Missing);
        assert_eq!(parse_number("", false), Cell::Missing);
        assert_eq!(parse_number("inf", false), Cell::NotNumber);
        assert_eq!(parse_number("-infinity", false), Cell::NotNumber);
        // Written as a number but past 64 bits: too large, not "not a number" (found by a hostile review).
        assert_eq!(parse_number("1e400", false), Cell::TooLarge(f64::INFINITY));
        assert_eq!(
            parse_number("-1e309", false),
            Cell::TooLarge(f64::NEG_INFINITY)
        );
        assert_eq!(parse_number("-1e100", false), Cell::Number(-1e100));
        assert_eq!(parse_number("1.5e200", false), Cell::TooLarge(1.5e200));
        assert_eq!(parse_number("1,5", false), Cell::NotNumber);
        assert_eq!(parse_number("-2.5e1", false), Cell::Number(-25.0));
    }

    /// Found by a hostile review: a 50 MB cell was echoed whole in the message.
    #[test]
    fn long_cells_are_cut_in_messages() {
        assert_eq!(quoted_cell("fast"), "'fast'");
        let long = "é".repeat(100);
        assert_eq!(
            quoted_cell(&long),
            format!("'{}…' (100 characters)", "é".repeat(40))
        );
    }

    #[test]
    fn line_numbers_are_file_lines() {
        let t = Table::parse("a.csv", b"x,y\n1,2\n\n3,4\n").unwrap();
        assert_eq!(t.lines, vec![2, 4]);
    }

    /// A source that gives 1 to 7 bytes a read (1 at the start of the file): pieces cut byte-order marks, lines,
    /// records and multi-byte characters anywhere.
    struct Dribble<'a>(&'a [u8]);

    impl ByteSource for Dribble<'_> {
        fn read_at(&self, offset: u64, buf: &mut [u8]) -> std::io::Result<usize> {
            let n = buf.len().min(1 + (offset % 7) as usize);
            self.0.read_at(offset, &mut buf[..n])
        }
    }

    /// The header, delimiter and every record with its line.
    type Streamed = (Vec<String>, u8, Vec<(u64, Vec<String>)>);

    /// The header, delimiter and every record with its line, or the message.
    fn streamed(bytes: &(impl ByteSource + ?Sized)) -> std::result::Result<Streamed, String> {
        let mut rows = Vec::new();
        stream(
            "a.csv",
            bytes,
            |_| Ok(()),
            |line, r| {
                rows.push((line, r.iter().map(str::to_string).collect()));
                Ok(())
            },
        )
        .map(|h| (h.headers, h.delimiter, rows))
        .map_err(|e| e.to_string())
    }

    #[test]
    fn a_file_read_in_small_pieces_reads_as_one_held_in_memory() {
        let many: String = "a;b\n".to_string() + &"1;2\n".repeat(30);
        let cases: Vec<&[u8]> = vec![
            b"\xEF\xBB\xBFx,y\r\n1,2\r\n\r\n\r\n3,4\r\n",
            b"x,y\n1,2\n\n3,4\n",
            b"x,y\n\"a\nb\",2\n\n3,4\n",
            "name,\u{e9}t\u{e9}\n\u{fc}ber,2\n\u{1F600},3".as_bytes(),
            many.as_bytes(),
            b"x,y\n1,\xff\n",
            b"x,y\n1,\xc3",
            b"\xEF\xBB\xBF \n\t\n",
            b"\xEF\xBB",
            b"x,y\n\n",
            b"x,y\n1,2\n\n3\n",
            // Found by a differential test against the reader that held the whole file (reads of 1 or 2 bytes at
            // the start missed the byte-order mark, or a second one).
            b"\xEF\xBB\xBF",
            b"\xEF\xBB\xBFx;y\n1;2",
            b"\xEF\xBB\xBF\n\tx",
            b"\xEF\xBB\xBF\xEF\xBB\xBF\rx",
        ];
        for bytes in cases {
            assert_eq!(
                streamed(&Dribble(bytes)),
                streamed(bytes),
                "{:?}",
                String::from_utf8_lossy(bytes)
            );
        }
        // What those are, from the file's own lines and offsets (header = line 1, offsets from 0).
        let lines = |b: &[u8]| {
            streamed(b)
                .unwrap()
                .2
                .iter()
                .map(|r| r.0)
                .collect::<Vec<u64>>()
        };
        assert_eq!(
            lines(b"\xEF\xBB\xBFx,y\r\n1,2\r\n\r\n\r\n3,4\r\n"),
            vec![2, 5]
        );
        assert_eq!(lines(b"x,y\n\"a\nb\",2\n\n3,4\n"), vec![2, 5]);
        assert_eq!(streamed(many.as_bytes()).unwrap().1, b';');
        assert!(streamed(&Dribble(b"x,y\n1,\xff\n"))
            .unwrap_err()
            .contains("first bad byte at offset 6"));
        assert!(streamed(&Dribble(b"x,y\n1,\xc3"))
            .unwrap_err()
            .contains("first bad byte at offset 6"));
        assert!(streamed(&Dribble(b"\xEF\xBB\xBF \n\t\n"))
            .unwrap_err()
            .contains("the file is empty"));
        assert!(streamed(&Dribble(b"x,y\n1,2\n\n3\n"))
            .unwrap_err()
            .contains("line 4"));
    }
}
