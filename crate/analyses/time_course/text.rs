//! A time course in words and tables: the headline sentence, a per-window table, and the curve and matrix as CSV.

use super::report::{Generalization, GridCluster, TimeCluster, TimeReport, ONSET_CAVEAT};
use crate::recipe::GeneralizationNull;
use crate::report::text::{p_phrase, pct, seconds as s, tuning_line};
use crate::resample::Headline;
use std::fmt::Write;

fn score_name(r: &TimeReport) -> &'static str {
    r.design.headline.name()
}

/// "0.2 to 0.6 s (p = 0.010)": a cluster by its first and last window centres, its p written as a bound when no
/// one of the `m` shuffles reached it.
pub(super) fn span(c: &TimeCluster, m: usize) -> String {
    format!(
        "{} to {} s ({})",
        s(c.start),
        s(c.end),
        p_phrase(c.p_value, m)
    )
}

/// The one sentence a reader needs first: the peak, and where information is significant.
pub fn headline_sentence(r: &TimeReport) -> String {
    let curve = r.curve();
    let peak = (0..curve.len()).fold(0, |b, i| if curve[i] > curve[b] { i } else { b });
    let mut out = format!(
        "'{}' decoded at up to {} {} at {} s (mean over {} cross-validation repeats; chance {})",
        r.input.label_column,
        pct(curve[peak]),
        score_name(r),
        s(r.windows[peak].time),
        r.repeats.len(),
        pct(r.chance.level)
    );
    let sig: Vec<_> = r.clusters.iter().filter(|c| c.significant).collect();
    if r.shuffle.count == 0 {
        out.push_str("; no shuffle control run, so no significance.");
    } else if sig.is_empty() {
        write!(
            out,
            "; no cluster of windows is significant ({} shuffles).",
            r.shuffle.count
        )
        .unwrap();
    } else {
        let spans: Vec<String> = sig.iter().map(|c| span(c, r.shuffle.count)).collect();
        write!(
            out,
            "; significant from {} ({} shuffles, cluster-corrected).",
            spans.join(", "),
            r.shuffle.count
        )
        .unwrap();
    }
    out
}

/// Headline, clusters, onset and the per-window table.
pub fn render(r: &TimeReport) -> String {
    let mut out = String::new();
    writeln!(out, "{}\n", headline_sentence(r)).unwrap();
    if let Some(o) = &r.onset {
        writeln!(
            out,
            "onset: {} s (the centre of the first window of the earliest significant cluster; that window \
             starts at {} s); {ONSET_CAVEAT}.\n",
            s(o.time),
            s(o.window_start)
        )
        .unwrap();
    }
    if !r.clusters.is_empty() {
        writeln!(out, "clusters (window centres):").unwrap();
        for c in &r.clusters {
            writeln!(
                out,
                "  {:>8} to {:>8} s   mass {:.3}   {}{}",
                s(c.start),
                s(c.end),
                c.mass,
                p_phrase(c.p_value, r.shuffle.count),
                if c.significant { "   significant" } else { "" }
            )
            .unwrap();
        }
        out.push('\n');
    }
    if let Some(g) = &r.generalization {
        out.push_str(&matrix_lines(g, r.shuffle.count));
        out.push('\n');
    }
    writeln!(
        out,
        "{:>9} {:>9} {:>8} {:>10} {:>5}   (mean and SD over cross-validation repeats: the SD is the variability \
         from how trials were split, not a confidence interval)",
        "time (s)",
        score_name(r).split(' ').next_back().unwrap_or("score"),
        "SD",
        "null 95%",
        "sig"
    )
    .unwrap();
    let curve = r.curve();
    for (w, m) in r.windows.iter().zip(curve) {
        let sd = match r.design.headline {
            Headline::Accuracy => w.accuracy.sd,
            Headline::BalancedAccuracy => w.balanced_accuracy.sd,
        };
        writeln!(
            out,
            "{:>9} {:>9} {:>8} {:>10} {:>5}",
            s(w.time),
            pct(m),
            pct(sd),
            w.null_p95.map_or("–".into(), pct),
            if w.significant { "*" } else { "" }
        )
        .unwrap();
    }
    if let Some(t) = &r.tuning {
        out.push_str(&tuning_line(t));
    }
    for w in &r.warnings {
        writeln!(out, "\nnote: {w}").unwrap();
    }
    out
}

/// The curve as CSV: one row per window.
pub fn curve_csv(r: &TimeReport) -> String {
    let mut out = String::from(
        "window,start_s,end_s,time_s,accuracy_mean,accuracy_sd,balanced_accuracy_mean,balanced_accuracy_sd,\
         null_mean,null_p95,significant\n",
    );
    let opt = |v: Option<f64>| v.map_or(String::new(), |v| v.to_string());
    for w in &r.windows {
        writeln!(
            out,
            "{},{},{},{},{},{},{},{},{},{},{}",
            w.index,
            w.start,
            w.end,
            w.time,
            w.accuracy.mean,
            w.accuracy.sd,
            w.balanced_accuracy.mean,
            w.balanced_accuracy.sd,
            opt(w.null_mean),
            opt(w.null_p95),
            w.significant
        )
        .unwrap();
    }
    out
}

/// The generalization matrix as CSV: rows = training window, columns = testing window, headers in seconds.
pub fn generalization_csv(r: &TimeReport) -> Option<String> {
    let g = r.generalization.as_ref()?;
    let mut out = String::from("train_time_s\\test_time_s");
    for w in &r.windows {
        write!(out, ",{}", w.time).unwrap();
    }
    out.push('\n');
    for (w, row) in r.windows.iter().zip(&g.scores) {
        write!(out, "{}", w.time).unwrap();
        for v in row {
            write!(out, ",{v}").unwrap();
        }
        out.push('\n');
    }
    Some(out)
}

/// The train × test matrix's clusters in the text output: how many, how many significant, against which null, and
/// each significant one's training and testing spans (`m` permutations).
pub fn matrix_lines(g: &Generalization, m: usize) -> String {
    let sig: Vec<&GridCluster> = g.clusters.iter().filter(|c| c.significant).collect();
    let mut out = format!(
        "temporal generalization: {} cluster{} in the train × test matrix, {} significant (null: {})\n",
        g.clusters.len(),
        if g.clusters.len() == 1 { "" } else { "s" },
        sig.len(),
        match g.null_method {
            GeneralizationNull::TrainingLabels => "training labels permuted, test labels kept",
            GeneralizationNull::AllLabels => "every label permuted",
        }
    );
    for c in sig {
        out.push_str(&format!("  {}\n", grid_span(c, m)));
    }
    out
}

/// The methods sentence on the matrix's significant clusters (`m` permutations).
pub fn matrix_sentence(g: &Generalization, m: usize) -> String {
    let sig: Vec<String> = g
        .clusters
        .iter()
        .filter(|c| c.significant)
        .map(|c| grid_span(c, m))
        .collect();
    if sig.is_empty() {
        "No cluster of the train × test matrix was significant.".into()
    } else {
        format!(
            "Significant clusters of the train × test matrix (window centres): {}.",
            sig.join("; ")
        )
    }
}

/// "trained 0.25 to 0.55 s, tested 0.25 to 0.55 s, 16 cells, p ≤ 0.020".
fn grid_span(c: &GridCluster, m: usize) -> String {
    format!(
        "trained {} to {} s, tested {} to {} s, {} cells, {}",
        s(c.train_start),
        s(c.train_end),
        s(c.test_start),
        s(c.test_end),
        c.cells,
        p_phrase(c.p_value, m)
    )
}
