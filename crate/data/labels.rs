//! The order of classes and groups: the order every table, confusion matrix and report uses.
//!
//! Labels that are all numbers sort as numbers (`2` before `10`); otherwise names sort "naturally", digit runs by
//! value (`odour 2` before `odour 10`), which is what a person expects to read.

use std::cmp::Ordering;

/// Sorted distinct values, numeric-aware.
pub fn sorted_levels(values: &[String]) -> Vec<String> {
    let mut levels: Vec<String> = values.to_vec();
    levels.sort_by(|a, b| natural_cmp(a, b));
    levels.dedup();
    let all_numeric = levels
        .iter()
        .all(|l| l.parse::<f64>().is_ok_and(f64::is_finite));
    if all_numeric {
        levels.sort_by(|a, b| {
            let (x, y) = (
                a.parse::<f64>().unwrap_or(0.0),
                b.parse::<f64>().unwrap_or(0.0),
            );
            x.partial_cmp(&y)
                .unwrap_or(Ordering::Equal)
                .then_with(|| a.cmp(b))
        });
    }
    levels
}

/// Index of each value in `levels`.
pub fn codes(values: &[String], levels: &[String]) -> Vec<usize> {
    values
        .iter()
        .map(|v| {
            levels
                .iter()
                .position(|l| l == v)
                .expect("value is one of the levels")
        })
        .collect()
}

/// Compare with digit runs by numeric value; falls back to plain byte order so the order is total.
pub fn natural_cmp(a: &str, b: &str) -> Ordering {
    let (mut x, mut y) = (a.as_bytes(), b.as_bytes());
    while !x.is_empty() && !y.is_empty() {
        let (dx, dy) = (x[0].is_ascii_digit(), y[0].is_ascii_digit());
        let ord = if dx && dy {
            let (nx, rx) = split_run(x, true);
            let (ny, ry) = split_run(y, true);
            x = rx;
            y = ry;
            let (tx, ty) = (trim_zeros(nx), trim_zeros(ny));
            tx.len().cmp(&ty.len()).then_with(|| tx.cmp(ty))
        } else {
            let (sx, rx) = split_run(x, false);
            let (sy, ry) = split_run(y, false);
            x = rx;
            y = ry;
            sx.cmp(sy)
        };
        if ord != Ordering::Equal {
            return ord;
        }
    }
    x.len().cmp(&y.len()).then_with(|| a.cmp(b))
}

fn split_run(s: &[u8], digits: bool) -> (&[u8], &[u8]) {
    let n = s
        .iter()
        .take_while(|c| c.is_ascii_digit() == digits)
        .count();
    s.split_at(n)
}

fn trim_zeros(s: &[u8]) -> &[u8] {
    let n = s.iter().take_while(|&&c| c == b'0').count();
    &s[n.min(s.len().saturating_sub(1))..]
}

#[cfg(test)]
mod tests {
    use super::*;

    fn s(v: &[&str]) -> Vec<String> {
        v.iter().map(|x| x.to_string()).collect()
    }

    #[test]
    fn numeric_labels_sort_as_numbers() {
        assert_eq!(
            sorted_levels(&s(&["10", "2", "-1", "2"])),
            s(&["-1", "2", "10"])
        );
    }

    #[test]
    fn names_sort_naturally() {
        assert_eq!(
            sorted_levels(&s(&["odour 10", "odour 2", "banana", "odour 02"])),
            s(&["banana", "odour 02", "odour 2", "odour 10"])
        );
    }
}
