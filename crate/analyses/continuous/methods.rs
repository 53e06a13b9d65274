//! The methods paragraph of a continuous decoding analysis: every setting that changes the numbers, the software
//! version and the data's SHA-256.

use super::plan::ValueSplit;
use super::report::{ContinuousReport, ContinuousTimeReport, InputInfo, TargetInfo, ValueDesign};
use super::text::{angle, headline_value, num, quantity};
use crate::analyses::over_time::{cluster_sentence, windows_sentence};
use crate::analyses::time_course::report::ONSET_CAVEAT;
use crate::decoders;
use crate::recipe::Recipe;
use crate::report::methods::cautions;
use crate::report::text::{p_phrase, seconds as s};

/// The variable, in a clause: "'speed' (mean 21.3, SD 8.1, range 2.0–45.9)".
fn variable(t: &TargetInfo) -> String {
    match (t.mean, t.sd, t.mean_direction, t.resultant_length) {
        (Some(m), Some(sd), _, _) => format!(
            "'{}' (mean {}, SD {}, range {}–{})",
            t.column,
            quantity(m),
            quantity(sd),
            quantity(t.min),
            quantity(t.max)
        ),
        (_, _, Some(md), Some(rl)) => format!(
            "'{}', an angle in {} (mean direction {}, mean resultant length {})",
            t.column,
            t.unit.map_or("degrees", |u| u.name()),
            angle(md, t.unit),
            num(rl)
        ),
        _ => format!("'{}'", t.column),
    }
}

fn files(i: &InputInfo) -> String {
    i.files
        .iter()
        .map(|f| format!("file {}, SHA-256 {}", f.file, f.sha256))
        .collect::<Vec<_>>()
        .join("; ")
}

/// Folds, fitting and scoring: the sentences both schemas share.
fn protocol(
    rc: &Recipe,
    d: &ValueDesign,
    i: &InputInfo,
    t: &TargetInfo,
    per_window: bool,
) -> Vec<String> {
    let group = i.group_column.as_deref().unwrap_or("");
    let split = match d.split {
        ValueSplit::KFold { folds } => format!("trials were dealt at random into {folds} folds"),
        ValueSplit::LeaveOneOut => "each trial was held out in turn (leave-one-out)".into(),
        ValueSplit::Grouped { folds } => format!(
            "trials were split into {folds} folds that never divided a level of '{group}' ({} levels)",
            i.groups.len()
        ),
        ValueSplit::LeaveOneGroupOut => format!(
            "each level of '{group}' was held out in turn ({} levels; leave-one-group-out)",
            i.groups.len()
        ),
    };
    let mut out = vec![format!(
        "In each of {} repeats, {split}{}; no balancing applies to a continuous variable.",
        rc.repeats,
        if per_window {
            ", and the same folds were used at every window"
        } else {
            ""
        }
    )];
    out.push(format!(
        "Within each training fold{}, every feature was standardised with the mean and standard deviation of the \
         training trials, which were then applied to the test trials, and the decoder was fitted: {}.",
        if per_window { " and window" } else { "" },
        decoders::describe(rc.classifier, None, 0)
    ));
    out.push(if t.unit.is_some() {
        "Test predictions were pooled over folds within each repeat and scored by the mean absolute angular error \
         (the shorter way round the circle between actual and predicted angle), the circular correlation coefficient \
         (Jammalamadaka & SenGupta, 2001), and the out-of-sample R² of the (cosine, sine) pair, 1 − Σ‖u − û‖²/Σ‖u − \
         ū‖², ū being the mean of the training fold that predicted each test trial."
            .to_string()
    } else {
        "Test predictions were pooled over folds within each repeat and scored by the out-of-sample coefficient of \
         determination R² = 1 − Σ(y − ŷ)²/Σ(y − ȳ)², ȳ being the mean of the training fold that predicted each test \
         trial (so that a decoder predicting the training mean scores 0; this is not the squared correlation), and by \
         Pearson's correlation between predicted and actual values."
            .to_string()
    });
    out
}

fn permuted(i: &InputInfo) -> String {
    match &i.group_column {
        Some(g) => format!(" within levels of '{g}'"),
        None => String::new(),
    }
}

/// The trial table's paragraph.
pub fn paragraph(r: &ContinuousReport) -> String {
    let rc = &r.recipe;
    let t = &r.target;
    let mut out = vec![format!(
        "Decoding of a continuous variable was performed with {} {}. The data ({}) comprised {} trials with {} \
         features per trial; the decoded variable was {}.",
        r.software.name,
        r.software.version,
        files(&r.input),
        r.input.trials,
        r.input.features.len(),
        variable(t)
    )];
    if !r.input.dropped_lines.is_empty() {
        out.push(format!(
            "{} trials with missing values were excluded.",
            r.input.dropped_lines.len()
        ));
    }
    out.extend(protocol(rc, &r.design, &r.input, t, false));
    let h = r.headline();
    let others = if t.unit.is_some() {
        format!(
            ", the R² of the (cosine, sine) pair {} ± {} and the circular correlation {} ± {}",
            num(r.summary.r2.mean),
            num(r.summary.r2.sd),
            num(r.summary.correlation.mean),
            num(r.summary.correlation.sd)
        )
    } else {
        format!(
            ", and Pearson's correlation {} ± {}",
            num(r.summary.correlation.mean),
            num(r.summary.correlation.sd)
        )
    };
    out.push(format!(
        "Across repeats the {} was {} ± {} (mean ± SD over repeats, which is not a confidence interval; 2.5th–97.5th \
         percentiles {}–{}){others}.",
        if t.unit.is_some() { "mean absolute angular error" } else { "out-of-sample R²" },
        headline_value(t, h.mean),
        headline_value(t, h.sd),
        headline_value(t, h.p2_5),
        headline_value(t, h.p97_5),
    ));
    if let (Some(p), Some(mean)) = (r.shuffle.p_value, r.shuffle.null_mean) {
        out.push(format!(
            "Significance was assessed by a permutation test: the values of '{}' were permuted across trials{} {} \
             times, each permutation was analysed with the identical protocol over {} repeats, and p = (b + 1)/(m + \
             1), with b the number of the m permutations whose mean {} (Phipson & Smyth, 2010). Under permutation the \
             {} averaged {} (the chance level of these data); {}.",
            t.column,
            permuted(&r.input),
            r.shuffle.count,
            r.shuffle.repeats_each,
            if t.unit.is_some() {
                "angular error was at most the observed one"
            } else {
                "R² was at least the observed one"
            },
            if t.unit.is_some() { "angular error" } else { "R²" },
            headline_value(t, mean),
            p_phrase(p, r.shuffle.count)
        ));
    }
    out.extend(cautions(&r.warnings, &out.join(" ")));
    out.push(reproducible(rc));
    out.join(" ")
}

/// The recording's paragraph.
pub fn time_paragraph(r: &ContinuousTimeReport) -> String {
    let rc = &r.recipe;
    let t = &r.target;
    let mut out = vec![format!(
        "Time-resolved decoding of a continuous variable was performed with {} {} on {} trials recorded from {} \
         neurons (data: {}); the decoded variable was {}.",
        r.software.name,
        r.software.version,
        r.input.trials,
        r.input.features.len(),
        files(&r.input),
        variable(t)
    )];
    let windows: Vec<_> = r
        .windows
        .iter()
        .map(|w| crate::recipe::windows::Window {
            start: w.start,
            end: w.end,
            time: w.time,
        })
        .collect();
    out.push(windows_sentence(rc, &windows, r.input.features.len()));
    out.extend(protocol(rc, &r.design, &r.input, t, true));
    out.push(format!(
        "The {} was averaged over repeats at each window.",
        if t.unit.is_some() {
            "mean absolute angular error"
        } else {
            "out-of-sample R²"
        }
    ));
    if r.shuffle.count > 0 {
        let alpha = rc.time.as_ref().map_or(0.05, |t| t.alpha);
        out.push(cluster_sentence(
            r.shuffle.count,
            r.shuffle.repeats_each,
            &permuted(&r.input),
            &format!("the values of '{}' across trials", t.column),
            alpha,
        ));
        if t.unit.is_some() {
            out.push(
                "For the angular error, better means smaller: a window entered a cluster when its error was below the \
                 5th percentile of its null, and its excess was the distance below."
                    .into(),
            );
        }
        let sig: Vec<String> = r
            .clusters
            .iter()
            .filter(|c| c.significant)
            .map(|c| {
                format!(
                    "{} to {} s ({})",
                    s(c.start),
                    s(c.end),
                    p_phrase(c.p_value, r.shuffle.count)
                )
            })
            .collect();
        out.push(if sig.is_empty() {
            "No cluster was significant.".into()
        } else {
            format!("Significant clusters (window centres): {}.", sig.join("; "))
        });
        if let Some(o) = &r.onset {
            out.push(format!(
                "The first window of the earliest significant cluster was centred at {} s; {ONSET_CAVEAT}.",
                s(o.time)
            ));
        }
    }
    out.extend(cautions(&r.warnings, &out.join(" ")));
    out.push(reproducible(rc));
    out.join(" ")
}

fn reproducible(rc: &Recipe) -> String {
    format!(
        "Resampling used ChaCha20 random streams derived from seed {} and each task's index, so the analysis is \
         reproducible exactly.",
        rc.seed
    )
}
