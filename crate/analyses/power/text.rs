//! The power analysis as text: the three axes as tables, the extrapolation apart from them, the cautions.

use super::report::{PowerReport, Summary};
use crate::recipe::Folds;
use crate::report::text::pct;
use std::fmt::Write;

/// The one sentence a reader needs first: the fewest trials per class reaching 80 % power, or that none did.
pub fn headline_sentence(r: &PowerReport) -> String {
    let target = format!("{:.0} %", TARGET_POWER * 100.0);
    match r.trials.iter().find(|t| t.summary.power >= TARGET_POWER) {
        Some(t) => format!(
            "At {} trials per class, the fewest measured to reach {} power, {} of {} subsamples of this recording \
             decoded '{}' significantly at α = {}.",
            t.per_class,
            target,
            t.summary.significant,
            t.summary.subsamples,
            label(r),
            r.alpha
        ),
        None => {
            let last = r.trials.last().expect("a grid is never empty");
            format!(
                "No measured size reached {} power: at {} trials per class (the most measured), {} of {} \
                 subsamples decoded '{}' significantly at α = {}.",
                target,
                last.per_class,
                last.summary.significant,
                last.summary.subsamples,
                label(r),
                r.alpha
            )
        }
    }
}

/// The power the headline looks for: 80 %, a common target in study planning (Cohen, 1988).
pub const TARGET_POWER: f64 = 0.8;

fn label(r: &PowerReport) -> &str {
    &r.recipe.columns.label
}

/// The tables printed by the CLI.
pub fn render(r: &PowerReport) -> String {
    let mut out = String::new();
    let score = r.headline.replace('_', " ");
    let folds = match r.protocol.folds {
        Folds::K(k) => format!("{k}-fold"),
        Folds::LeaveOneOut => "leave-one-out".into(),
    };
    writeln!(
        out,
        "Planning the next recording: '{}' in {} ({} classes, {} trials per class, {} neurons; chance {}).",
        label(r),
        r.file,
        r.classes.len(),
        r.class_counts
            .iter()
            .map(usize::to_string)
            .collect::<Vec<_>>()
            .join("/"),
        r.recorded_neurons,
        pct(r.chance)
    )
    .unwrap();
    writeln!(
        out,
        "Each subsample: {folds} protocol, {} repeats and {} label shuffles ({} repeats each); significant when p ≤ \
         {} (without information: {} of subsamples).\n{}; power = fraction of subsamples significant.\n",
        r.protocol.repeats,
        r.protocol.shuffles,
        r.protocol.shuffle_repeats,
        r.alpha,
        pct(r.test_size),
        capitalise(&r.spread)
    )
    .unwrap();
    writeln!(out, "{}\n", headline_sentence(r)).unwrap();
    table(
        &mut out,
        &format!(
            "Trials per class (every neuron; subsamples of real trials without replacement), {score}:"
        ),
        "per class",
        r.trials.iter().map(|t| (t.per_class, &t.summary)),
    );
    match &r.extrapolation {
        Some(e) => {
            writeln!(
                out,
                "Extrapolation beyond the recorded trials ({}, {} % interval; NOT measured):",
                e.model,
                e.level * 100.0
            )
            .unwrap();
            for p in &e.points {
                writeln!(
                    out,
                    "  {:>9}  {:>8}  ({}–{})",
                    p.per_class,
                    pct(p.accuracy),
                    pct(p.low),
                    pct(p.high)
                )
                .unwrap();
            }
            writeln!(out, "  ({})\n", r.extrapolation_note).unwrap();
        }
        None => writeln!(out, "{}\n", r.extrapolation_note).unwrap(),
    }
    table(
        &mut out,
        &format!("Neurons kept (every trial; random subsets of the recorded neurons), {score}:"),
        "neurons",
        r.neurons.iter().map(|t| (t.size, &t.summary)),
    );
    table(
        &mut out,
        &format!(
            "Noise neurons added to the {} recorded (every trial), {score}:",
            r.recorded_neurons
        ),
        "added",
        r.noise.iter().map(|t| (t.added, &t.summary)),
    );
    writeln!(out, "Noise neurons: {}.", r.noise_simulation).unwrap();
    for w in &r.warnings {
        writeln!(out, "\nnote: {w}").unwrap();
    }
    out
}

/// One axis as a table: size, subsamples, mean ± SD over subsamples, power with its count.
fn table<'a>(
    out: &mut String,
    title: &str,
    size: &str,
    rows: impl Iterator<Item = (usize, &'a Summary)>,
) {
    writeln!(out, "{title}").unwrap();
    writeln!(
        out,
        "  {size:>9}  {:>10}  {:>18}  power",
        "subsamples", "mean ± SD"
    )
    .unwrap();
    for (n, s) in rows {
        writeln!(
            out,
            "  {n:>9}  {:>10}  {:>18}  {} ({}/{})",
            s.subsamples,
            format!("{} ± {}", pct(s.accuracy.mean), pct(s.accuracy.sd)),
            pct(s.power),
            s.significant,
            s.subsamples
        )
        .unwrap();
    }
    out.push('\n');
}

fn capitalise(s: &str) -> String {
    let mut c = s.chars();
    c.next()
        .map(|f| f.to_uppercase().collect::<String>() + c.as_str())
        .unwrap_or_default()
}
