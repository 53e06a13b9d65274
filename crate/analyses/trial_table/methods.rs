//! A methods paragraph ready to paste into a paper: every setting that changes the numbers, the software version
//! and the data's SHA-256, so a reader can re-run the identical analysis.

use super::report::Report;
use crate::report::methods::{class_counts, fitting, resampling};
use crate::report::text::{p_text, pct};
use crate::resample::Headline;

/// The trial-table analysis's methods paragraph.
pub fn paragraph(r: &Report) -> String {
    let rc = &r.recipe;
    let mut s = Vec::new();
    s.push(format!(
        "Population decoding was performed with {} {}. The data (file {}, SHA-256 {}) comprised {} trials of {} \
         conditions of '{}' ({}) with {} features per trial.",
        r.software.name,
        r.software.version,
        r.input.file,
        r.input.sha256,
        r.input.trials,
        r.classes.len(),
        r.input.label_column,
        class_counts(&r.classes, &r.class_counts),
        r.input.features.len()
    ));
    if !r.input.dropped_lines.is_empty() {
        s.push(format!(
            "{} trials with missing values were excluded.",
            r.input.dropped_lines.len()
        ));
    }
    let group = r.input.group_column.as_deref().unwrap_or("");
    s.push(resampling(
        rc,
        &r.design,
        r.classes.len(),
        group,
        r.input.groups.len(),
    ));
    s.push(fitting(rc));
    let metric = match r.design.headline {
        Headline::Accuracy => "accuracy (fraction of test trials correctly classified)".to_string(),
        Headline::BalancedAccuracy => {
            "balanced accuracy (the mean over classes of the fraction of that class's test trials correctly \
             classified), the headline score because classes were not balanced"
                .to_string()
        }
    };
    let h = r.headline();
    s.push(format!(
        "Test predictions were pooled over folds within each repeat to give {metric}; across repeats it was {} ± {} \
         (mean ± SD; 2.5th–97.5th percentiles {}–{}). Confusion matrices were normalised by true class and averaged \
         over repeats.",
        pct(h.mean),
        pct(h.sd),
        pct(h.p2_5),
        pct(h.p97_5)
    ));
    s.push(format!(
        "Chance level was {}; the binomial threshold for {} test trials at α = {} was {} (Combrisson & Jerbi, 2015).",
        pct(r.chance.level),
        r.chance.test_trials,
        r.chance.alpha,
        pct(r.chance.threshold)
    ));
    if let (Some(p), Some(mean), Some(p95)) =
        (r.shuffle.p_value, r.shuffle.null_mean, r.shuffle.null_p95)
    {
        s.push(format!(
            "Significance was assessed by a permutation test: condition labels were randomly permuted{} {} times, \
             each permutation was analysed with the identical protocol over {} repeats, and p = (b + 1)/(m + 1), \
             with b the number of the m permutations scoring at least the observed mean (Phipson & Smyth, 2010). \
             The null distribution had mean {} and 95th percentile {}; p = {}.",
            if r.shuffle.within_groups { format!(" within levels of '{group}'") } else { String::new() },
            r.shuffle.count,
            r.shuffle.repeats_each,
            pct(mean),
            pct(p95),
            p_text(p)
        ));
    }
    s.push(format!(
        "Resampling used ChaCha20 random streams derived from seed {} and each task's index, so the analysis is \
         reproducible exactly.",
        rc.seed
    ));
    s.join(" ")
}
