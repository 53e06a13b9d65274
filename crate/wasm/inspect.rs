//! A first look at a CSV file for the page, read row by row without keeping its text (so a file of hundreds of MB
//! or tens of thousands of columns costs little memory): header, a bounded preview, and per column whether it is
//! numeric, its distinct values when there are few, and whether it counts 1, 2, 3, … (a trial number).

use super::dropped::DroppedFile;
use super::request::err;
use crate::input::sha256_of;
use crate::input::table::{self, parse_number, ByteSource, Cell};
use serde_json::{json, Value};
use std::collections::BTreeMap;
use wasm_bindgen::prelude::*;

/// Rows and columns of the preview.
const PREVIEW_ROWS: usize = 8;
const PREVIEW_COLUMNS: usize = 40;
/// Distinct values counted per column; beyond this a column is "many-valued" and its values are forgotten.
const DISTINCT_CAP: usize = 32;

/// What is learnt of one column in one pass.
struct Column {
    numbers: usize,
    texts: usize,
    /// Value → rows, while there are at most `DISTINCT_CAP` distinct values.
    values: Option<BTreeMap<String, usize>>,
    /// Every value so far an integer one more than the row before.
    counter: bool,
    last: Option<f64>,
}

impl Column {
    fn see(&mut self, text: &str, decimal_comma: bool) {
        let cell = parse_number(text, decimal_comma);
        match cell {
            Cell::Number(_) | Cell::TooLarge(_) => self.numbers += 1,
            Cell::NotNumber => self.texts += 1,
            Cell::Missing => {}
        }
        self.counter = self.counter
            && match cell {
                Cell::Number(v) if v.fract() == 0.0 => {
                    let ok = self.last.is_none_or(|l| v == l + 1.0);
                    self.last = Some(v);
                    ok
                }
                _ => false,
            };
        if let Some(values) = &mut self.values {
            *values.entry(text.to_string()).or_insert(0) += 1;
            if values.len() > DISTINCT_CAP {
                self.values = None;
            }
        }
    }
}

/// A first look at a file: header, first rows (at most 8 × 40 cells), and per column `numeric`, `values`
/// (`[[value, rows], …]` when 32 or fewer distinct values, else null) and `counter`.
#[wasm_bindgen]
pub fn inspect(name: &str, bytes: &[u8]) -> Result<String, JsValue> {
    look(name, bytes)
}

/// [`inspect`] of the dropped file of `size` bytes, read in pieces from the worker's copy (`wasm/dropped.rs`).
#[wasm_bindgen]
pub fn inspect_dropped(name: &str, size: f64) -> Result<String, JsValue> {
    look(name, &DroppedFile::new(size))
}

fn look(name: &str, bytes: &(impl ByteSource + ?Sized)) -> Result<String, JsValue> {
    let mut columns: Vec<Column> = Vec::new();
    let mut preview: Vec<Vec<String>> = Vec::new();
    let mut rows = 0usize;
    // Set by the header, read by every row (two closures: hence a Cell).
    let delimiter = std::cell::Cell::new(b',');
    let header = table::stream(
        name,
        bytes,
        |h| {
            delimiter.set(h.delimiter);
            Ok(())
        },
        |_, record| {
            let decimal_comma = delimiter.get() == b';';
            if columns.is_empty() {
                columns = (0..record.len())
                    .map(|_| Column {
                        numbers: 0,
                        texts: 0,
                        values: Some(BTreeMap::new()),
                        counter: true,
                        last: None,
                    })
                    .collect();
            }
            rows += 1;
            if preview.len() < PREVIEW_ROWS {
                preview.push(
                    record
                        .iter()
                        .take(PREVIEW_COLUMNS)
                        .map(str::to_string)
                        .collect(),
                );
            }
            for (c, text) in columns.iter_mut().zip(record.iter()) {
                c.see(text, decimal_comma);
            }
            Ok(())
        },
    )
    .map_err(err)?;
    let decimal_comma = header.delimiter == b';';
    let described: Vec<Value> = columns
        .iter()
        .map(|c| {
            json!({
                "numeric": c.numbers > c.texts,
                "values": c.values.as_ref().map(|v| v.iter().collect::<Vec<_>>()),
                "counter": c.counter && rows > 2,
            })
        })
        .collect();
    Ok(json!({
        "file": name,
        "sha256": sha256_of(name, bytes).map_err(err)?,
        "delimiter": table::delimiter_name(header.delimiter),
        "decimal_comma": decimal_comma,
        "headers": header.headers,
        "numeric": described.iter().map(|c| c["numeric"].clone()).collect::<Vec<_>>(),
        "columns": described,
        "rows": rows,
        "preview": preview,
    })
    .to_string())
}
