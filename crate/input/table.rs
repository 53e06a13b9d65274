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

/// Read a delimited file row by row without keeping it: `on_header` sees the checked header first, then `on_row`
/// gets each non-blank record with the file line it starts on. For files too large to hold as text cells (spike
/// events); [`Table::parse`] is this plus collecting the rows.
pub fn stream(
    source: &str,
    bytes: &[u8],
    mut on_header: impl FnMut(&Header) -> Result<()>,
    mut on_row: impl FnMut(u64, &csv::StringRecord) -> Result<()>,
) -> Result<Header> {
    let text = std::str::from_utf8(bytes).map_err(|e| {
        Error::Input(format!(
            "{source}: the file is not UTF-8 text (first bad byte at offset {}); save it as UTF-8 CSV",
            e.valid_up_to()
        ))
    })?;
    let text = text.strip_prefix('\u{feff}').unwrap_or(text);
    if text.trim().is_empty() {
        return Err(Error::Input(format!("{source}: the file is empty")));
    }
    let delimiter = detect_delimiter(text);
    // The csv crate's own line counter skips blank lines; count from byte offsets instead.
    let line_starts: Vec<usize> = std::iter::once(0)
        .chain(text.match_indices('\n').map(|(i, _)| i + 1))
        .collect();
    // A record's position is where the previous one ended, before any blank lines: step over those first.
    let line_of = |byte: u64| {
        let skip = text.as_bytes().get(byte as usize..).map_or(0, |rest| {
            rest.iter()
                .take_while(|&&b| b == b'\n' || b == b'\r')
                .count()
        });
        line_starts.partition_point(|&s| s <= byte as usize + skip) as u64
    };
    let mut reader = csv::ReaderBuilder::new()
        .delimiter(delimiter)
        .has_headers(true)
        .flexible(false)
        .trim(csv::Trim::All)
        .from_reader(text.as_bytes());
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

/// Parse a number; infinities and text are `NotNumber`, missing tokens are `Missing`, magnitudes beyond
/// [`MAX_MAGNITUDE`] are `TooLarge`.
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
        assert_eq!(parse_number("1e400", false), Cell::NotNumber);
        assert_eq!(parse_number("-1e100", false), Cell::Number(-1e100));
        assert_eq!(parse_number("1.5e200", false), Cell::TooLarge(1.5e200));
        assert_eq!(parse_number("1,5", false), Cell::NotNumber);
        assert_eq!(parse_number("-2.5e1", false), Cell::Number(-25.0));
    }

    #[test]
    fn line_numbers_are_file_lines() {
        let t = Table::parse("a.csv", b"x,y\n1,2\n\n3,4\n").unwrap();
        assert_eq!(t.lines, vec![2, 4]);
    }
}
