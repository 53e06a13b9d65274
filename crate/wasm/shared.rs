//! One copy of the decoded data for every worker of the served page.
//!
//! On a cross-origin-isolated page the browser lets workers share one WebAssembly memory: the page then loads the
//! core built with atomics (`www/pkg-shared/`, scripts/build-web.sh), and the data worker and every run worker are
//! threads of one instance's memory. The data worker hands a run worker a *ticket* ([`share`]) for the decoded data
//! it holds, and the run worker takes the data by it ([`Held::from_ticket`](super::job::Held::from_ticket)): the
//! matrix is reference-counted (`ArcArray`), so taking a ticket copies the header's fields and never the matrix, and
//! memory no longer grows with the number of workers. Without isolation (the offline file, a host that does not
//! send the two headers), the page copies the matrix to each worker instead (`Loaded::matrix_part`), and this
//! registry stays empty.

use super::data::Decoded;
use super::request::err;
use std::collections::BTreeMap;
use std::sync::Mutex;
use wasm_bindgen::JsValue;

/// Decoded data waiting for the run worker its ticket was given to. Each ticket is taken once, right after it is
/// issued (the page sends it to one worker, whose messages run in order), so nothing waits here for long.
static WAITING: Mutex<(u32, BTreeMap<u32, Decoded>)> = Mutex::new((0, BTreeMap::new()));

/// A ticket for `data` (shared, not copied).
pub(super) fn share(data: &Decoded) -> Result<u32, JsValue> {
    if matches!(data, Decoded::Files(_)) {
        return Err(err(
            "files are handed to a run worker as files (Runner.with_files), not by a ticket",
        ));
    }
    let mut waiting = WAITING
        .lock()
        .map_err(|_| err("the shared data registry is unusable"))?;
    waiting.0 = waiting.0.wrapping_add(1);
    let ticket = waiting.0;
    waiting.1.insert(ticket, data.clone());
    Ok(ticket)
}

/// The data of `ticket`, taken out of the registry.
pub(super) fn take(ticket: u32) -> Result<Decoded, JsValue> {
    let mut waiting = WAITING
        .lock()
        .map_err(|_| err("the shared data registry is unusable"))?;
    waiting
        .1
        .remove(&ticket)
        .ok_or_else(|| err(format!("no shared data waits under ticket {ticket}")))
}
