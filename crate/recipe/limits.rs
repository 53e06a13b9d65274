//! The numeric limits of an analysis, each checked before any work starts and each with its reason.
//!
//! Every limit here is one a hostile or mistaken input reached: without it the run either gave a silent wrong
//! answer (a value so large that sums of squares overflow, a C so small that round-off picks the class), or asked
//! for more memory or time than any computer has (a window count that wraps, a billion shuffles). README's "Limits"
//! section lists them for users; a message names the setting or the file, line and column.
//!
//! Settings are checked by [`crate::recipe::Recipe::validate`]; the limits that need the data (windows of a binned
//! table, folds of leave-one-out, the size of a recording counted into windows) are checked by the readers and
//! the plans through the functions below, so that every face refuses the same things with the same words.

use crate::error::{Error, Result};

/// Largest magnitude of any value read from a file (features, rates, times). Decoders that work from sums over
/// trials (shrinkage LDA, nearest mean, Poisson naive Bayes) square and multiply raw values: with |x| ≤ 1e100 every
/// such sum over any number of trials a computer can hold stays below the largest double (1.8e308), and no
/// measurement in any unit comes near it, so a larger value is a corrupt cell or a sentinel.
pub const MAX_MAGNITUDE: f64 = 1e100;

/// Smallest and largest regularisation constant C. C weighs the data against a unit penalty on standardised
/// features: below 1e-6 the penalty outweighs the data until round-off decides the class (on the example data,
/// C = 1e-12 predicts one class for every trial); above 1e6 every decoder already fits its training folds as
/// tightly as it can (the scores no longer change), while the kernel SVM takes longer. Both ends lie three decades
/// beyond the grid that tuning searches (1e-3 to 1e3).
pub const C_RANGE: (f64, f64) = (1e-6, 1e6);

/// Most repeats, shuffles, repeats per shuffle and neuron-subset draws. Each is a task (or a loop in one) whose
/// outcome is kept until the end: 100 000 shuffles resolve a p-value to 1e-5, and the spread over repeats settles
/// within a few hundred. Beyond this the task list itself becomes the memory problem.
pub const MAX_REPEATS: usize = 100_000;

/// Most time windows of a time course: each window is a whole decoding analysis (a 10 s trial in 1 ms steps).
pub const MAX_WINDOWS: usize = 10_000;

/// Most cells of a temporal generalization matrix (windows²: 1000 windows): every task keeps its own matrix,
/// and every window's decoder predicts at every window.
pub const MAX_GENERALIZATION_CELLS: usize = 1_000_000;

/// Most numbers the outcomes of all tasks hold together (2²⁶, 512 MB as doubles): the outcomes are kept until the
/// end, since the cluster test needs every shuffle's curve (and matrix).
pub const MAX_RESULT_VALUES: usize = 1 << 26;

/// Most fits one task may perform (folds × windows × repeats per shuffle): its fit counters are 32-bit, as is
/// the page's address space.
pub const MAX_FITS_PER_TASK: usize = u32::MAX as usize;

/// Most values (trials × neurons × windows) a recording counted into windows may hold: 800 MB as doubles. A
/// file of spike events or an NWB file is small beside the counts it can describe, and each of the page's
/// workers holds its own copy within WebAssembly's 4 GB.
pub const MAX_TIME_VALUES: usize = 100_000_000;

/// Narrowest window and smallest step, s: window edges are rounded to the nanosecond
/// ([`crate::recipe::windows::to_ns`]), so a narrower window would hold nothing.
pub const MIN_WINDOW: f64 = 1e-9;

/// Farthest a window may start or end from the alignment event, s (11.6 days): window edges are kept to the
/// nanosecond, which a double resolves only up to about 4.5e6 s.
pub const MAX_SPAN_TIME: f64 = 1e6;

/// Refuse a value read from a file when its magnitude exceeds [`MAX_MAGNITUDE`]; `at` names the file, line and
/// column.
pub fn check_magnitude(v: f64, at: &str) -> Result<f64> {
    if v.abs() <= MAX_MAGNITUDE {
        Ok(v)
    } else {
        Err(Error::Input(format!("{at}: {}", beyond_magnitude(v))))
    }
}

/// Why a value is refused, in the words every reader uses.
pub fn beyond_magnitude(v: f64) -> String {
    let shown = if v.is_finite() {
        format!("{v:e}")
    } else {
        // Written as a number (1e309) but past what a 64-bit number holds.
        "the value overflows 64-bit numbers (±1.8e308) and".into()
    };
    format!(
        "{shown} is beyond ±1e100, the largest magnitude popdecode accepts (sums of squares of such values overflow); \
         check the cell, or express the column in larger units"
    )
}

/// C within [`C_RANGE`].
pub fn check_c(c: f64) -> Result<()> {
    let (lo, hi) = C_RANGE;
    if c.is_finite() && (lo..=hi).contains(&c) {
        Ok(())
    } else {
        Err(Error::Recipe(format!(
            "C must lie between {lo:e} and {hi:e}; got {c:?} (outside that range the fit is decided by round-off or \
             no longer changes)"
        )))
    }
}

/// A count of repeats, shuffles or draws within [`MAX_REPEATS`].
pub fn check_count(what: &str, n: usize) -> Result<()> {
    if n <= MAX_REPEATS {
        Ok(())
    } else {
        Err(Error::Recipe(format!(
            "{what} must be at most {MAX_REPEATS}; got {n}"
        )))
    }
}

/// A window count (computed as a float, so that a span of 1e308 s cannot wrap) within [`MAX_WINDOWS`], and its
/// square within [`MAX_GENERALIZATION_CELLS`] when temporal generalization is asked for.
pub fn check_windows(count: f64, generalize: bool) -> Result<()> {
    if count.is_nan() || count > MAX_WINDOWS as f64 {
        return Err(Error::Recipe(format!(
            "{} windows are more than the {MAX_WINDOWS} a time course may have; use a larger step or a shorter span",
            shown(count)
        )));
    }
    let cells = count * count;
    if generalize && cells > MAX_GENERALIZATION_CELLS as f64 {
        return Err(Error::Recipe(format!(
            "temporal generalization over {} windows makes a {}-cell matrix per task, more than the \
             {MAX_GENERALIZATION_CELLS} allowed (1000 windows); use a larger step or a shorter span",
            shown(count),
            shown(cells)
        )));
    }
    Ok(())
}

/// The work and the outcomes of a plan, before it starts: fits per task (`folds × windows × repeats per shuffle`)
/// within [`MAX_FITS_PER_TASK`], and the numbers all outcomes hold within [`MAX_RESULT_VALUES`].
pub fn check_work(fits_per_task: f64, result_values: f64) -> Result<()> {
    if fits_per_task > MAX_FITS_PER_TASK as f64 {
        return Err(Error::Recipe(format!(
            "one task would fit {} decoders (folds × windows × repeats per shuffle), more than the {MAX_FITS_PER_TASK} \
             a task may count; use fewer folds, windows or repeats per shuffle",
            shown(fits_per_task)
        )));
    }
    if result_values > MAX_RESULT_VALUES as f64 {
        return Err(Error::Recipe(format!(
            "the outcomes of this run would hold {} numbers, more than the {MAX_RESULT_VALUES} kept in memory; use \
             fewer shuffles or repeats, or fewer windows (temporal generalization keeps windows² per task)",
            shown(result_values)
        )));
    }
    Ok(())
}

/// A recording of `trials × neurons × windows` values within [`MAX_TIME_VALUES`], checked before it is counted.
pub fn check_time_values(
    source: &str,
    trials: usize,
    neurons: usize,
    windows: usize,
) -> Result<()> {
    let values = trials as f64 * neurons as f64 * windows as f64;
    if values > MAX_TIME_VALUES as f64 {
        return Err(Error::Design(format!(
            "{source}: {trials} trials × {neurons} neurons × {windows} windows make {} values, more than the \
             {MAX_TIME_VALUES} a time course may hold; use fewer windows (a larger step or a shorter span) or keep \
             fewer neurons",
            shown(values)
        )));
    }
    Ok(())
}

/// A count for a message: whole numbers as such, anything larger than 2⁵³ (or infinite) in scientific notation.
fn shown(v: f64) -> String {
    if v.is_finite() && v < 9e15 {
        format!("{v:.0}")
    } else {
        format!("{v:e}")
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn each_limit_refuses_just_beyond_and_accepts_at() {
        assert!(check_magnitude(1e100, "f").is_ok());
        assert!(check_magnitude(-1e100, "f").is_ok());
        let e = check_magnitude(-2e100, "f.csv, line 3, column 'x'")
            .unwrap_err()
            .to_string();
        assert!(
            e.starts_with("f.csv, line 3, column 'x': -2e100 is beyond ±1e100"),
            "{e}"
        );
        assert!(check_c(1e-6).is_ok() && check_c(1e6).is_ok());
        assert!(
            check_c(0.99e-6).is_err() && check_c(1.01e6).is_err() && check_c(f64::NAN).is_err()
        );
        assert!(check_count("shuffles", MAX_REPEATS).is_ok());
        assert!(check_count("shuffles", usize::MAX).is_err());
        assert!(check_windows(10_000.0, false).is_ok());
        assert!(check_windows(10_001.0, false).is_err());
        assert!(check_windows(f64::INFINITY, false).is_err());
        assert!(check_windows(f64::NAN, false).is_err());
        assert!(check_windows(1000.0, true).is_ok());
        let e = check_windows(1001.0, true).unwrap_err().to_string();
        assert!(e.contains("1002001-cell matrix"), "{e}");
        assert!(check_work(u32::MAX as f64, MAX_RESULT_VALUES as f64).is_ok());
        assert!(check_work(u32::MAX as f64 + 1.0, 0.0).is_err());
        assert!(check_work(1.0, MAX_RESULT_VALUES as f64 + 1.0).is_err());
        assert!(check_time_values("t", 1000, 1000, 100).is_ok());
        let e = check_time_values("t", 1000, 1000, 101)
            .unwrap_err()
            .to_string();
        assert!(e.contains("101000000 values"), "{e}");
    }
}
