//! A first look at a CSV file for the page: header, first rows, numeric columns, a suggested label.

use super::request::err;
use crate::input::sha256_hex;
use crate::input::table::{Cell, Table};
use serde_json::json;
use wasm_bindgen::prelude::*;

/// A first look at a file: header, first rows, which columns are numeric, and a suggested label column.
#[wasm_bindgen]
pub fn inspect(name: &str, bytes: &[u8]) -> Result<String, JsValue> {
    let t = Table::parse(name, bytes).map_err(err)?;
    let numeric: Vec<bool> = (0..t.headers.len())
        .map(|c| {
            let (mut num, mut txt) = (0, 0);
            for r in 0..t.rows.len() {
                match t.cell(r, c) {
                    Cell::Number(_) | Cell::TooLarge(_) => num += 1,
                    Cell::NotNumber => txt += 1,
                    Cell::Missing => {}
                }
            }
            num > txt
        })
        .collect();
    let label = (0..t.headers.len())
        .find(|&c| !numeric[c] && distinct(&t, c) < t.rows.len())
        .or(Some(0));
    Ok(json!({
        "file": name,
        "sha256": sha256_hex(bytes),
        "delimiter": t.delimiter_name(),
        "decimal_comma": t.decimal_comma,
        "headers": t.headers,
        "numeric": numeric,
        "rows": t.rows.len(),
        "preview": t.rows.iter().take(8).collect::<Vec<_>>(),
        "suggested_label": label.map(|c| t.headers[c].clone()),
    })
    .to_string())
}

fn distinct(t: &Table, c: usize) -> usize {
    let mut v: Vec<&str> = t.rows.iter().map(|r| r[c].as_str()).collect();
    v.sort_unstable();
    v.dedup();
    v.len()
}
