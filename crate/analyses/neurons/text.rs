//! The neuron analyses as text: the dropping curve, each neuron alone, weights and patterns.

use super::plan::MeanSd;
use super::report::NeuronsReport;
use crate::report::text::{p_phrase, p_text, pct, split_words};
use std::fmt::Write;

/// The tables printed by the CLI.
pub fn render(r: &NeuronsReport) -> String {
    let lead = |a: &'_ MeanSd, b: &'_ MeanSd| -> MeanSd {
        if r.headline == "accuracy" {
            a.clone()
        } else {
            b.clone()
        }
    };
    let mut out = String::new();
    let group = r.recipe.columns.group.as_deref().unwrap_or("");
    writeln!(out, "Cross-validation: {}.", split_words(&r.design, group)).unwrap();
    let score = r.headline.replace('_', " ");
    writeln!(
        out,
        "Neuron-dropping curve ({score}, mean ± SD over random subsets; chance {}):",
        pct(r.chance)
    )
    .unwrap();
    for d in &r.dropping {
        let s = if r.headline == "accuracy" {
            &d.accuracy
        } else {
            &d.balanced_accuracy
        };
        writeln!(
            out,
            "  {:>5} neurons  {:>8} ± {:<8} ({} draw{})",
            d.size,
            pct(s.mean),
            pct(s.sd),
            d.draws,
            if d.draws == 1 { "" } else { "s" }
        )
        .unwrap();
    }
    let shuffles = r.recipe.shuffles;
    writeln!(
        out,
        "\nEach neuron alone ({score}, best first; mean ± SD over cross-validation repeats, the SD being the \
         variability from how trials were split{}):",
        match r.fdr {
            Some(q) => format!(
                "; p from {shuffles} shuffles of this neuron alone, q adjusted across neurons (Benjamini & \
                 Hochberg, 1995), * = discovery at a false-discovery rate of {q}"
            ),
            None => String::new(),
        }
    )
    .unwrap();
    for s in &r.single {
        let m = lead(&s.accuracy, &s.balanced_accuracy);
        write!(
            out,
            "  {:<24} {:>8} ± {:<8}",
            s.neuron,
            pct(m.mean),
            pct(m.sd)
        )
        .unwrap();
        if let (Some(p), Some(q)) = (s.p_value, s.q_value) {
            write!(
                out,
                " {:>9} q = {:<7}{}",
                p_phrase(p, shuffles),
                p_text(q),
                if s.discovery == Some(true) { " *" } else { "" }
            )
            .unwrap();
        }
        out.truncate(out.trim_end().len());
        out.push('\n');
    }
    if let (Some(outputs), Some(weights), Some(patterns)) = (&r.outputs, &r.weights, &r.patterns) {
        writeln!(
            out,
            "\nWeights and activation patterns ({}):",
            outputs.join(", ")
        )
        .unwrap();
        for (j, name) in r.neurons.iter().enumerate() {
            let cells: Vec<String> = weights[j]
                .iter()
                .zip(&patterns[j])
                .map(|(w, a)| format!("{w:>9.3} {a:>9.3}"))
                .collect();
            writeln!(out, "  {:<24} {}", name, cells.join("  ")).unwrap();
        }
        writeln!(
            out,
            "  (per output: weight, pattern)\n\n{}",
            r.patterns_note
        )
        .unwrap();
    }
    for w in &r.warnings {
        writeln!(out, "\nnote: {w}").unwrap();
    }
    out
}
