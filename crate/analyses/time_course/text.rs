//! A time course in words and tables: the headline sentence, a per-window table, the methods paragraph, and the
//! curve and matrix as CSV.

use super::report::{TimeCluster, TimeReport, ONSET_CAVEAT};
use crate::protocol::Headline;
use crate::recipe::TimeInput;
use crate::report::methods::{fitting, resampling};
use crate::report::text::{p_text, pct};
use std::fmt::Write;

fn score_name(r: &TimeReport) -> &'static str {
    match r.design.headline {
        Headline::Accuracy => "accuracy",
        Headline::BalancedAccuracy => "balanced accuracy",
    }
}

fn s(v: f64) -> String {
    let t = format!("{v:.3}");
    let t = t.trim_end_matches('0').trim_end_matches('.');
    if t == "-0" {
        "0".into()
    } else {
        t.into()
    }
}

/// "0.2 to 0.6 s (p = 0.010)": a cluster by its first and last window centres.
fn span(c: &TimeCluster) -> String {
    format!(
        "{} to {} s (p = {})",
        s(c.start),
        s(c.end),
        p_text(c.p_value)
    )
}

/// The one sentence a reader needs first: the peak, and where information is significant.
pub fn headline_sentence(r: &TimeReport) -> String {
    let curve = r.curve();
    let peak = (0..curve.len()).fold(0, |b, i| if curve[i] > curve[b] { i } else { b });
    let mut out = format!(
        "'{}' decoded at up to {} {} at {} s (mean over {} repeats; chance {})",
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
        let spans: Vec<String> = sig.iter().map(|c| span(c)).collect();
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
            "onset: {} s (first window of the earliest significant cluster, starting at {} s); {ONSET_CAVEAT}.\n",
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
                "  {:>8} to {:>8} s   mass {:.3}   p = {}{}",
                s(c.start),
                s(c.end),
                c.mass,
                p_text(c.p_value),
                if c.significant { "   significant" } else { "" }
            )
            .unwrap();
        }
        out.push('\n');
    }
    if let Some(g) = &r.generalization {
        let sig = g.clusters.iter().filter(|c| c.significant).count();
        writeln!(
            out,
            "temporal generalization: {} cluster{} in the train × test matrix, {sig} significant",
            g.clusters.len(),
            if g.clusters.len() == 1 { "" } else { "s" }
        )
        .unwrap();
        for c in g.clusters.iter().filter(|c| c.significant) {
            writeln!(
                out,
                "  trained {} to {} s, tested {} to {} s, {} cells, p = {}",
                s(c.train_start),
                s(c.train_end),
                s(c.test_start),
                s(c.test_end),
                c.cells,
                p_text(c.p_value)
            )
            .unwrap();
        }
        out.push('\n');
    }
    writeln!(
        out,
        "{:>9} {:>9} {:>8} {:>10} {:>5}",
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
        out.push_str(&crate::report::text::tuning_line(t));
    }
    for w in &r.warnings {
        writeln!(out, "\nnote: {w}").unwrap();
    }
    out
}

/// A methods paragraph for a time course.
pub fn methods(r: &TimeReport) -> String {
    let rc = &r.recipe;
    let mut out = Vec::new();
    let files: Vec<String> = r
        .input
        .files
        .iter()
        .map(|f| format!("{} (SHA-256 {})", f.file, f.sha256))
        .collect();
    let counts: Vec<String> = r
        .classes
        .iter()
        .zip(&r.class_counts)
        .map(|(c, n)| format!("{c}: {n}"))
        .collect();
    out.push(format!(
        "Time-resolved population decoding was performed with {} {} on {} trials of {} conditions of '{}' ({}) \
         recorded from {} neurons (data: {}).",
        r.software.name,
        r.software.version,
        r.input.trials,
        r.classes.len(),
        r.input.label_column,
        counts.join(", "),
        r.input.neurons.len(),
        files.join("; ")
    ));
    let windows = &r.windows;
    match rc.time.as_ref().map(|t| &t.input) {
        Some(TimeInput::Events {
            width,
            step,
            start,
            end,
            align,
            ..
        }) => out.push(format!(
            "Spikes were counted in windows of {} s stepped by {} s from {} s to {} s relative to {} (each window \
             covering [start, start + width)), giving {} windows, and converted to rates in Hz.",
            s(*width),
            s(*step),
            s(*start),
            s(*end),
            match align {
                Some(a) => format!("each trial's '{a}' time"),
                None => "the alignment event the spike times were given relative to".to_string(),
            },
            windows.len()
        )),
        Some(TimeInput::Nwb {
            width,
            step,
            start,
            end,
            align,
            units,
        }) => out.push(format!(
            "Spike times of {} units{} were read from the NWB file's units table and counted in windows of {} s \
             stepped by {} s from {} s to {} s relative to each trial's '{}' time (trials table; each window \
             covering [start, start + width)), giving {} windows, and converted to rates in Hz.",
            r.input.neurons.len(),
            if units.is_empty() {
                String::new()
            } else {
                let rule: Vec<String> = units.iter().map(ToString::to_string).collect();
                format!(" (those with {})", rule.join(" and "))
            },
            s(*width),
            s(*step),
            s(*start),
            s(*end),
            align.as_deref().unwrap_or("start_time"),
            windows.len()
        )),
        _ => out.push(format!(
            "The activity was given in {} time bins from {} s to {} s, each decoded as one window.",
            windows.len(),
            s(windows[0].time),
            s(windows[windows.len() - 1].time)
        )),
    }
    let group = r.input.group_column.as_deref().unwrap_or("");
    out.push(format!(
        "{} The same balancing and folds were applied at every window.",
        resampling(rc, &r.design, r.classes.len(), group, r.input.groups.len())
    ));
    out.push(fitting(rc).replace(
        "Within each training fold,",
        "Within each training fold and window,",
    ));
    if r.generalization.is_some() {
        out.push(
            "For temporal generalization (King & Dehaene, 2014), the decoder trained at each window was tested on \
             the same held-out trials at every window."
                .to_string(),
        );
    }
    out.push(format!(
        "The {} of pooled test predictions was averaged over repeats at each window; chance was {} (binomial \
         threshold {} for {} test trials at α = {}; Combrisson & Jerbi, 2015).",
        score_name(r),
        pct(r.chance.level),
        pct(r.chance.threshold),
        r.chance.test_trials,
        r.chance.alpha
    ));
    if r.shuffle.count > 0 {
        let alpha = rc.time.as_ref().map_or(0.05, |t| t.alpha);
        out.push(format!(
            "Significance was assessed by cluster-based permutation inference (Maris & Oostenveld, 2007): condition \
             labels were permuted{} {} times, each permutation analysed with the identical protocol at every window \
             over {} repeats; windows{} whose score exceeded the {}th percentile of their own null formed clusters \
             of adjacent windows, a cluster's mass was its summed excess over those thresholds, and its p = \
             (b + 1)/(m + 1), b the number of the m permutations whose largest cluster mass was at least as large \
             (Phipson & Smyth, 2010). Clusters with p < {alpha} are reported as significant.",
            if r.shuffle.within_groups {
                format!(" within levels of '{group}'")
            } else {
                String::new()
            },
            r.shuffle.count,
            r.shuffle.repeats_each,
            if r.generalization.is_some() {
                " (and cells of the generalization matrix, adjacent when sharing an edge)"
            } else {
                ""
            },
            r.shuffle.cluster_percentile
        ));
        let sig: Vec<String> = r
            .clusters
            .iter()
            .filter(|c| c.significant)
            .map(span)
            .collect();
        if sig.is_empty() {
            out.push("No cluster was significant.".into());
        } else {
            out.push(format!(
                "Significant clusters (window centres): {}.",
                sig.join("; ")
            ));
        }
        if let Some(o) = &r.onset {
            out.push(format!(
                "The first window of the earliest significant cluster was centred at {} s; {ONSET_CAVEAT}.",
                s(o.time)
            ));
        }
    }
    out.push(format!(
        "Resampling used ChaCha20 random streams derived from seed {} and each task's index, so the analysis is \
         reproducible exactly.",
        rc.seed
    ));
    out.join(" ")
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
