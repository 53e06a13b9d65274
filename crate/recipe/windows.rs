//! Sliding time windows and spike counting in them.
//!
//! Convention: a window covers the half-open interval `[start, start + width)` in seconds relative to the trial's
//! alignment event, so a spike exactly on a boundary between two abutting windows is counted once, in the later
//! one. Window `k` starts at `first + k·step`, computed by multiplication rather than by adding `step` repeatedly, so
//! that edges do not drift by accumulated round-off over a long trial. Edges, and spike times after subtracting the
//! alignment time, are rounded to the nearest nanosecond ([`to_ns`]): `0.2 + 0.1` is not `0.3` in binary floating
//! point, and without the rounding a spike written as `0.3` in a file would fall in the window that ends at 0.3.

use super::limits::{check_windows, MAX_SPAN_TIME, MIN_WINDOW};
use crate::error::{Error, Result};
use serde::{Deserialize, Serialize};

/// One analysis window, in seconds relative to alignment.
#[derive(Debug, Clone, Copy, PartialEq, Serialize, Deserialize)]
pub struct Window {
    pub start: f64,
    pub end: f64,
    /// The window's centre: the time a curve is plotted at.
    pub time: f64,
}

/// Round seconds to the nearest nanosecond, far below any recording's clock resolution.
pub fn to_ns(seconds: f64) -> f64 {
    (seconds * 1e9).round() / 1e9
}

/// Windows of `width` stepped by `step` from `start`, as many as fit entirely before `end`. The count is checked
/// against [`super::limits::MAX_WINDOWS`] as a float, before anything is allocated.
pub fn sliding(start: f64, end: f64, width: f64, step: f64) -> Result<Vec<Window>> {
    // Found by a hostile review: a span edge of "nan" was blamed on the width and step.
    if !start.is_finite() || !end.is_finite() {
        return Err(Error::Recipe(format!(
            "the analysis span must run between two numbers of seconds from alignment; got {start} s to {end} s"
        )));
    }
    if !width.is_finite() || !step.is_finite() || width <= 0.0 || step <= 0.0 {
        return Err(Error::Recipe(format!(
            "window width and step must be positive numbers of seconds; got width {width}, step {step}"
        )));
    }
    if width < MIN_WINDOW || step < MIN_WINDOW {
        return Err(Error::Recipe(format!(
            "window width and step must be at least 1e-9 s (window edges are kept to the nanosecond); got width \
             {width}, step {step}"
        )));
    }
    if start.abs() > MAX_SPAN_TIME || end.abs() > MAX_SPAN_TIME {
        return Err(Error::Recipe(format!(
            "the analysis span {start:?} s to {end:?} s reaches beyond ±1e6 s from alignment, where window edges can no \
             longer be kept to the nanosecond"
        )));
    }
    if end - start < width {
        return Err(Error::Recipe(format!(
            "the analysis span {start} s to {end} s is shorter than one window of {width} s; widen the span or \
             narrow the window"
        )));
    }
    // A tolerance of a millionth of a step lets "0 to 1 s in 0.1 s windows" end with the window [0.9, 1.0).
    let slack = 1e-6 * step;
    let count = ((end - start - width + slack) / step).floor() + 1.0;
    check_windows(count, false)?;
    Ok((0..count as usize)
        .map(|k| {
            let s = to_ns(start + k as f64 * step);
            Window {
                start: s,
                end: to_ns(s + width),
                time: to_ns(s + width / 2.0),
            }
        })
        .collect())
}

/// Indices of the windows that contain time `t` (`start <= t < end`), as a range.
///
/// Windows are sorted by start and all have the same width, so both ends of the range are found by bisection.
pub fn containing(windows: &[Window], t: f64) -> std::ops::Range<usize> {
    let first = windows.partition_point(|w| w.end <= t);
    let last = windows.partition_point(|w| w.start <= t);
    first..last.max(first)
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn windows_fit_the_span_exactly() {
        let w = sliding(0.0, 1.0, 0.1, 0.1).unwrap();
        assert_eq!(w.len(), 10);
        assert!((w[9].start - 0.9).abs() < 1e-12);
        let w = sliding(-0.5, 1.0, 0.4, 0.2).unwrap();
        // Starts -0.5, -0.3, -0.1, 0.1, 0.3, 0.5 (0.5 + 0.4 = 0.9 <= 1.0); 0.7 + 0.4 > 1.0.
        assert_eq!(w.len(), 6);
        assert_eq!(w[0].time, -0.3);
        assert_eq!(w[5].end, 0.9);
        assert!(sliding(0.0, 0.05, 0.1, 0.05).is_err());
        assert!(sliding(0.0, 1.0, 0.1, 0.0).is_err());
        // A span edge that is not a number is named as such, not blamed on the width and step.
        let e = sliding(f64::NAN, 1.0, 0.1, 0.05).unwrap_err().to_string();
        assert!(
            e.contains("the analysis span must run between two numbers"),
            "{e}"
        );
        let e = sliding(0.0, 1.0, f64::INFINITY, 0.05)
            .unwrap_err()
            .to_string();
        assert!(e.contains("width and step must be positive"), "{e}");
    }

    #[test]
    fn half_open_membership() {
        let w = sliding(0.0, 0.3, 0.1, 0.1).unwrap(); // [0, .1) [.1, .2) [.2, .3)
        assert_eq!(containing(&w, 0.0), 0..1);
        assert_eq!(containing(&w, w[1].start), 1..2); // a boundary belongs to the later window
        assert_eq!(containing(&w, 0.3), 3..3); // the end of the last window is outside
        assert_eq!(containing(&w, 0.2), 2..3); // 0.1 + 0.1 rounds to the same edge as the literal 0.2
        assert_eq!(containing(&w, -0.01), 0..0);
        let overlapping = sliding(0.0, 0.3, 0.2, 0.1).unwrap(); // [0, .2) [.1, .3)
        assert_eq!(containing(&overlapping, 0.15), 0..2);
        assert_eq!(containing(&overlapping, overlapping[1].start), 0..2);
    }
}
