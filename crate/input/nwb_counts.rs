//! An NWB recording's spikes counted in windows around each trial's alignment time.

use super::nwb::{Column, Recording};
use super::spike_counts::{rates, Spans};
use super::trial_labels::{assemble, TrialLabels};
use crate::data::time::TimeDataset;
use crate::error::{Error, Result};
use crate::recipe::windows::{containing, to_ns, Window};
use crate::recipe::{limits, Columns};

/// An NWB recording: every unit's spikes counted in windows around each trial's alignment time (default: its
/// `start_time`). Labels and groups are trials-table columns.
pub fn read(
    src: &str,
    rec: &Recording,
    columns: &Columns,
    align: Option<&str>,
    windows: Vec<Window>,
    width: f64,
) -> Result<TimeDataset> {
    let n = rec.n_trials();
    let label = rec.require(src, &columns.label)?.texts();
    let group = columns
        .group
        .as_deref()
        .map(|g| rec.require(src, g).map(Column::texts))
        .transpose()?;
    let align_name = align.unwrap_or("start_time");
    let align_times = match rec.require(src, align_name)? {
        Column::Numbers(v) => v.clone(),
        Column::Texts(_) => {
            return Err(Error::Input(format!(
                "{src}: the trials column '{align_name}' holds text, not times in seconds"
            )))
        }
    };
    if let Some(i) = align_times.iter().position(|t| !t.is_finite()) {
        return Err(Error::Input(format!(
            "{src}: trial {i} has no '{align_name}' time (NaN); every trial needs one to align to"
        )));
    }
    let w = windows.len();
    limits::check_time_values(src, n, rec.spikes.len(), w)?;
    let (first, last) = (windows[0].start, windows[w - 1].end);
    // Spikes counted inside some trial's analysis span (a spike near two trials can count in both).
    let mut inside = 0u64;
    let counts: Vec<Vec<u32>> = rec
        .spikes
        .iter()
        .map(|times| {
            let mut c = vec![0u32; n * w];
            for (i, &a) in align_times.iter().enumerate() {
                // Spikes of this trial's span, found by bisection in the unit's sorted times.
                let lo = times.partition_point(|&t| to_ns(t - a) < first);
                let hi = times.partition_point(|&t| to_ns(t - a) < last);
                for &t in &times[lo..hi] {
                    for k in containing(&windows, to_ns(t - a)) {
                        c[i * w + k] += 1;
                    }
                }
                inside += (hi - lo) as u64;
            }
            c
        })
        .collect();
    let all: u64 = rec.spikes.iter().map(|s| s.len() as u64).sum();
    let spans = Spans {
        source: src,
        aligned: true,
        total: all,
        outside: if inside == 0 {
            all
        } else {
            all.saturating_sub(inside)
        },
    };
    let (x, warnings) = rates(&counts, n, &windows, width, &spans)?;
    let tl = TrialLabels {
        labels: label,
        groups: group.unwrap_or_else(|| vec![String::new(); n]),
    };
    let trial_ids = (0..n).map(|i| format!("trial {i}")).collect();
    let mut ds = assemble(
        src,
        trial_ids,
        tl,
        columns,
        windows,
        rec.units.clone(),
        x,
        warnings,
    )?;
    ds.spikes_total = all;
    ds.spikes_outside = spans.outside;
    Ok(ds)
}
