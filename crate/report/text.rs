//! Text pieces every analysis's summary uses: percentages, p-values, seconds, the tuning line.

/// Percent with one decimal.
pub fn pct(v: f64) -> String {
    format!("{:.1} %", 100.0 * v)
}

/// p-value as usually printed: three decimals, or "< 0.001" style only when the number of shuffles allows it.
pub fn p_text(p: f64) -> String {
    if p < 0.001 {
        format!("{p:.1e}")
    } else {
        format!("{p:.3}")
    }
}

/// Whether a permutation p-value is the smallest `m` permutations can give, `1/(m + 1)`: no permutation reached the
/// observed statistic, and p is then a bound, not an estimate.
pub fn at_floor(p: f64, m: usize) -> bool {
    m > 0 && (p * (m + 1) as f64 - 1.0).abs() < 1e-9
}

/// A permutation p-value in a table's cell: "0.034", or "≤ 0.005" at its floor ([`at_floor`]).
pub fn p_cell(p: f64, m: usize) -> String {
    if at_floor(p, m) {
        format!("≤ {}", p_text(p))
    } else {
        p_text(p)
    }
}

/// "p = 0.034", or "p ≤ 0.005" when no permutation reached the observed statistic ([`at_floor`]).
pub fn p_phrase(p: f64, m: usize) -> String {
    if at_floor(p, m) {
        format!("p ≤ {}", p_text(p))
    } else {
        format!("p = {}", p_text(p))
    }
}

/// The sentence that explains a p at its floor: none of the m permutations reached the observed statistic, and
/// `1/(m + 1)` is the smallest p that m permutations can give.
pub fn floor_note(m: usize) -> String {
    format!(
        "no permutation reached the observed value; 1/(m + 1) = {} is the smallest p that m = {m} permutations can \
         give, so p is at most that",
        floor_words(m)
    )
}

/// The smallest p `m` permutations can give, exactly enough to be a true bound: "1/21 = 0.0476" (three
/// decimals would round 0.0476 up to 0.048, and a p of 0.047 would then seem to lie below the floor).
pub fn floor_words(m: usize) -> String {
    let v = 1.0 / (m + 1) as f64;
    let decimals = (2.0 - v.log10().floor()).max(0.0) as usize;
    format!("1/{} = {v:.decimals$}", m + 1)
}

/// The x-axis label of a shuffle null's histogram: each value is one permutation's score averaged over its
/// repeats, so the histogram holds one value per permutation, not one per repeat ("accuracy (mean of 10 repeats
/// per permutation)").
pub fn per_permutation(score: &str, repeats: usize) -> String {
    if repeats == 1 {
        format!("{score} (one repeat per permutation)")
    } else {
        format!("{score} (mean of {repeats} repeats per permutation)")
    }
}

/// A confidence interval in percent: "55.1–69.0 %".
pub fn pct_range([lo, hi]: [f64; 2]) -> String {
    format!("{:.1}–{:.1} %", 100.0 * lo, 100.0 * hi)
}

/// "C chosen in nested cross-validation: 0.1 in 12 fits, 1 in 488 fits".
pub fn tuning_line(t: &super::Tuning) -> String {
    let parts: Vec<String> = t
        .chosen
        .iter()
        .filter(|c| c.fits > 0)
        .map(|c| {
            format!(
                "{} in {} fit{}",
                c.setting,
                c.fits,
                if c.fits == 1 { "" } else { "s" }
            )
        })
        .collect();
    format!(
        "\nsettings chosen by nested cross-validation: {}\n",
        parts.join(", ")
    )
}

/// At most `n` characters, the last one an ellipsis when cut.
pub fn clip(s: &str, n: usize) -> String {
    if s.chars().count() <= n {
        s.to_string()
    } else {
        let mut t: String = s.chars().take(n - 1).collect();
        t.push('…');
        t
    }
}

/// Seconds as written in text and figures: at most three decimals, no trailing zeros, never "-0".
pub fn seconds(v: f64) -> String {
    let t = format!("{v:.3}");
    let t = t.trim_end_matches('0').trim_end_matches('.');
    if t == "-0" {
        "0".into()
    } else {
        t.into()
    }
}

/// Notes of several sessions (name, notes), each note once with the sessions it concerns ("every session" when it
/// concerns all of them), in order of first appearance.
pub fn session_notes(sessions: &[(&str, &[String])]) -> Vec<String> {
    let mut texts: Vec<(&str, Vec<&str>)> = Vec::new();
    for &(name, notes) in sessions {
        for w in notes {
            match texts.iter_mut().find(|(t, _)| t == w) {
                Some((_, who)) => who.push(name),
                None => texts.push((w, vec![name])),
            }
        }
    }
    texts
        .into_iter()
        .map(|(w, who)| {
            let who = if who.len() == sessions.len() && who.len() > 1 {
                "every session".to_string()
            } else {
                let named: Vec<String> = who.iter().map(|s| format!("'{s}'")).collect();
                format!(
                    "session{} {}",
                    if named.len() == 1 { "" } else { "s" },
                    named.join(", ")
                )
            };
            format!("{who}: {w}")
        })
        .collect()
}

/// The split a result was decoded with, in a few words for the CLI's text ("leave one 'session' out (4 groups)").
pub fn split_words(design: &super::Design, group: &str) -> String {
    use crate::resample::Split;
    match design.split {
        Split::Stratified { folds } => format!("{folds} stratified folds"),
        Split::LeaveOneOut => format!("leave-one-out ({} trials)", design.folds),
        Split::Grouped { folds } => format!("{folds} folds, grouped by '{group}'"),
        Split::LeaveOneGroupOut => format!("leave one '{group}' out ({} groups)", design.folds),
        Split::Pseudo { folds } => format!("pseudo-trials within {folds} folds of every session"),
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn the_floor_is_written_so_that_it_bounds() {
        assert_eq!(floor_words(20), "1/21 = 0.0476");
        assert_eq!(floor_words(199), "1/200 = 0.00500");
        assert_eq!(floor_words(9999), "1/10000 = 0.000100");
        assert_eq!(floor_words(1), "1/2 = 0.500");
    }
}
