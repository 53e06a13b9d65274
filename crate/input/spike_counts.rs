//! Spike counts in windows turned into rates, with the checks every spike source shares (spike events and NWB).

use crate::error::{Error, Result};
use crate::recipe::windows::Window;
use ndarray::Array3;

/// Where spikes were counted, for messages.
pub(super) struct Spans<'a> {
    pub source: &'a str,
    pub aligned: bool,
    pub total: u64,
    pub outside: u64,
}

/// Rates (Hz) from spike counts (`counts[neuron][trial × windows + window]`), with the checks every spike source
/// shares: some spike must fall inside the windows, and trials with none at all are worth a warning.
pub(super) fn rates(
    counts: &[Vec<u32>],
    n: usize,
    windows: &[Window],
    width: f64,
    spans: &Spans,
) -> Result<(Array3<f64>, Vec<String>)> {
    let (w, p) = (windows.len(), counts.len());
    if spans.outside == spans.total {
        return Err(Error::Design(format!(
            "{}: none of the {} spikes falls inside the windows ({} s to {} s{}); check the span and the \
             alignment",
            spans.source,
            spans.total,
            windows[0].start,
            windows[w - 1].end,
            if spans.aligned {
                " after alignment"
            } else {
                ", times taken as already aligned"
            }
        )));
    }
    let mut x = Array3::<f64>::zeros((w, n, p));
    for (j, c) in counts.iter().enumerate() {
        for i in 0..n {
            for k in 0..w {
                x[[k, i, j]] = c[i * w + k] as f64 / width;
            }
        }
    }
    let silent = (0..n)
        .filter(|&i| {
            counts
                .iter()
                .all(|c| c[i * w..(i + 1) * w].iter().all(|&v| v == 0))
        })
        .count();
    let mut warnings = Vec::new();
    if silent > 0 {
        warnings.push(format!(
            "{silent} trial{} of the trial table {} no spike inside the windows (rates 0 throughout)",
            if silent == 1 { "" } else { "s" },
            if silent == 1 { "has" } else { "have" }
        ));
    }
    Ok((x, warnings))
}
