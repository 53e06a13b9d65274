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
