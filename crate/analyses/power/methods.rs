//! The power analysis's methods paragraph: how subsamples were drawn, what each ran, how power and the
//! extrapolation were computed, and the cautions that belong to the result.

use super::report::PowerReport;
use crate::recipe::Folds;
use crate::report::methods::{class_counts, fitting};
use crate::report::text::pct;

fn list(v: impl Iterator<Item = usize>) -> String {
    v.map(|n| n.to_string()).collect::<Vec<_>>().join(", ")
}

/// The power analysis's methods paragraph.
pub fn paragraph(r: &PowerReport) -> String {
    let rc = &r.recipe;
    let total: usize = r.class_counts.iter().sum();
    let mut s = Vec::new();
    s.push(format!(
        "The power of a future recording was estimated with {} {} by subsampling the recorded data (file {}, \
         SHA-256 {}; {} trials of {} conditions of '{}' ({}) with {} neurons).",
        r.software.name,
        r.software.version,
        r.file,
        r.sha256,
        total,
        r.classes.len(),
        rc.columns.label,
        class_counts(&r.classes, &r.class_counts),
        r.recorded_neurons
    ));
    let per_point = r.trials.first().map_or(0, |t| t.summary.subsamples);
    s.push(format!(
        "At each of {} trials per condition, {per_point} subsamples were drawn, each keeping that many trials of \
         every condition, chosen at random without replacement from its own random stream, with every neuron. At \
         each of {} neurons, random subsets of the recorded neurons were drawn in the same way ({per_point} per \
         size; the whole population once), with every trial. At each of {} added noise neurons, {per_point} \
         populations were made of every recorded neuron and that many noise neurons (none added: once), with every \
         trial; {}.",
        list(r.trials.iter().map(|t| t.per_class)),
        list(r.neurons.iter().map(|t| t.size)),
        list(r.noise.iter().map(|t| t.added)),
        r.noise_simulation
    ));
    let split = match r.protocol.folds {
        Folds::K(k) => format!(
            "split into {k} stratified folds (each trial held out in turn where a subsample had no more trials than \
             folds)"
        ),
        Folds::LeaveOneOut => "held out one trial at a time (leave-one-out)".into(),
    };
    s.push(format!(
        "Each subsample was analysed in {} repeats, in each of which its trials were {}.",
        r.protocol.repeats, split
    ));
    s.push(fitting(rc, r.recorded_neurons));
    s.push(format!(
        "Its {} was the mean over repeats of the score pooled over folds, and its significance was assessed by \
         permuting the condition labels {} times, analysing each permutation with the identical protocol over {} \
         repeats, and computing p = (b + 1)/(m + 1), with b the number of the m permutations scoring at least the \
         observed score (Phipson & Smyth, 2010). A subsample was significant when p ≤ {}; the empirical power at a \
         size is the fraction of its subsamples that were significant. Without information in the data this test \
         is significant in {} of subsamples (⌊α(m + 1)⌋/(m + 1), exact when the observed and permuted analyses run \
         the same repeats and scores do not tie). Accuracy at a size is reported as the mean ± SD over its \
         subsamples; the SD is the spread over subsamples, not a confidence interval.",
        r.headline.replace('_', " "),
        r.protocol.shuffles,
        r.protocol.shuffle_repeats,
        r.alpha,
        pct(r.test_size)
    ));
    match &r.extrapolation {
        Some(e) => s.push(format!(
            "Beyond the recorded trials, accuracy was extrapolated up to {} trials per condition ({}) by an {}; {}.",
            e.points.last().map_or(0, |p| p.per_class),
            e.model,
            e.method,
            r.extrapolation_note
        )),
        None => s.push(format!(
            "Accuracy was not extrapolated beyond the recorded trials ({}).",
            r.extrapolation_note
        )),
    }
    for c in r.cautions() {
        s.push(format!("Note: {c}."));
    }
    s.push(format!(
        "Random streams were ChaCha20 generators derived from seed {} and each task's coordinates, so the analysis \
         is reproducible exactly.",
        rc.seed
    ));
    s.join(" ")
}
