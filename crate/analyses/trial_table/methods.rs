//! A methods paragraph ready to paste into a paper: every setting that changes the numbers, the software version
//! and the data's SHA-256, so a reader can re-run the identical analysis.

use super::report::Report;
use crate::report::methods::{cautions, class_counts, fitting, resampling};
use crate::report::text::{at_floor, floor_note, p_phrase, pct, pct_range};
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
    s.push(fitting(rc, r.input.features.len()));
    let metric = match r.design.headline {
        Headline::Accuracy => "accuracy (fraction of test trials correctly classified)".to_string(),
        Headline::BalancedAccuracy => {
            "balanced accuracy (the mean over classes of the fraction of that class's test trials correctly \
             classified), the headline score because classes were not balanced"
                .to_string()
        }
    };
    let h = r.headline();
    let variability = if r.repeats.len() > 1 {
        format!(
            "; its variability over cross-validation repeats, which reflects how the trials were split and not the \
             uncertainty of the estimate, was SD {} (2.5th–97.5th percentiles {}–{})",
            pct(h.sd),
            pct(h.p2_5),
            pct(h.p97_5)
        )
    } else {
        String::new()
    };
    s.push(format!(
        "Test predictions were pooled over folds within each repeat to give {metric}, {} {}{variability}.",
        if r.repeats.len() > 1 {
            "whose mean over repeats was"
        } else {
            "which was"
        },
        pct(h.mean),
    ));
    if let (Some(ci), Some(e)) = (h.ci, &r.summary.effect_size) {
        s.push(format!(
            "Its 95 % confidence interval was {}, taking at each end the wider of a Wilson interval on the {} test \
             trials of a repeat (Wilson, 1927) and the corrected resampled t interval over the {} fold scores of all \
             repeats (Nadeau & Bengio, 2003; Bouckaert & Frank, 2004); no unbiased estimator of the variance of a \
             cross-validated score exists (Bengio & Grandvalet, 2004), so the interval is approximate. Above chance, \
             the score was {:+.1} percentage points (95 % CI {:+.1} to {:+.1}), or {:.2} on a scale from 0 (chance) to \
             1 (perfect decoding), 95 % CI {:.2} to {:.2} (chance-corrected score (score − chance)/(1 − chance), Cohen's κ for balanced test \
             sets; Cohen, 1960).",
            pct_range(ci),
            r.design.trials_per_repeat,
            fold_scores(r),
            100.0 * e.above_chance,
            100.0 * e.above_chance_ci[0],
            100.0 * e.above_chance_ci[1],
            e.kappa,
            e.kappa_ci[0],
            e.kappa_ci[1]
        ));
    }
    if let Some(a) = &r.summary.auc {
        s.push(format!(
            "For the two classes, the area under the ROC curve of the decoder's decision values (decision values of \
             every test fold of a repeat pooled into one curve, '{}' positive) averaged {:.3} over repeats.",
            r.classes[1], a.mean
        ));
    }
    s.push(
        "Confusion matrices were normalised by true class and averaged over repeats, and each class's recall is \
         the diagonal of that matrix."
            .to_string(),
    );
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
        let m = r.shuffle.count;
        s.push(format!(
            "Significance was assessed by a permutation test: condition labels were randomly permuted{} {} times, \
             each permutation was analysed with the identical protocol over {} repeats, and p = (b + 1)/(m + 1), \
             with b the number of the m permutations scoring at least the observed mean (Phipson & Smyth, 2010). \
             The null distribution had mean {} and 95th percentile {}; {}{}.",
            if r.shuffle.within_groups { format!(" within levels of '{group}'") } else { String::new() },
            m,
            r.shuffle.repeats_each,
            pct(mean),
            pct(p95),
            p_phrase(p, m),
            if at_floor(p, m) { format!(" ({})", floor_note(m)) } else { String::new() }
        ));
        if let Some(ps) = &r.shuffle.recall_p_values {
            let each: Vec<String> = r
                .classes
                .iter()
                .zip(ps)
                .map(|(c, &p)| format!("{c}: {}", p_phrase(p, m)))
                .collect();
            s.push(format!(
                "Each class's recall was compared in the same way with its recall under the same permutations (one \
                 test per class, not corrected across classes): {}.",
                each.join(", ")
            ));
        }
    }
    if let Some(pw) = &r.pairwise {
        let means: Vec<f64> = pw
            .pairs
            .iter()
            .map(|p| match p.headline {
                Headline::Accuracy => p.accuracy.mean,
                Headline::BalancedAccuracy => p.balanced_accuracy.mean,
            })
            .collect();
        let (lo, hi) = means
            .iter()
            .fold((f64::INFINITY, f64::NEG_INFINITY), |(a, b), &v| {
                (a.min(v), b.max(v))
            });
        s.push(format!(
            "Every pair of conditions ({} pairs) was also decoded on its own, on the trials of its two conditions \
             only, with the identical protocol (balancing, folds, repeats{}); pair scores ranged from {} to {} \
             (chance 50 %){}.",
            pw.pairs.len(),
            if r.shuffle.count > 0 { " and permutations" } else { "" },
            pct(lo),
            pct(hi),
            match pw.fdr {
                Some(q) => format!(
                    ", and each pair's permutation p-value was adjusted across pairs for a false-discovery rate \
                     of {q} (Benjamini & Hochberg, 1995); {} of {} pairs were discoveries",
                    pw.pairs.iter().filter(|p| p.discovery == Some(true)).count(),
                    pw.pairs.len()
                ),
                None => String::new(),
            }
        ));
    }
    s.extend(cautions(&r.warnings, &s.join(" ")));
    s.push(format!(
        "Resampling used ChaCha20 random streams derived from seed {} and each task's index, so the analysis is \
         reproducible exactly.",
        rc.seed
    ));
    s.join(" ")
}

/// The number of fold scores the confidence interval was computed from: folds with test trials, over repeats.
fn fold_scores(r: &Report) -> usize {
    r.repeats.len() * r.design.folds
}
