//! The result of a study.
//!
//! Schema `popdecode-study/1` (fields are only ever added):
//! * `schema`, `software`, `recipe` (the recipe every session shares), `options` {`pool`, `leave_out_flagged`,
//!   `group_draws`, `alpha`}
//! * `study` {`file`, `sha256` (of the study table, or of the session list's JSON), `kind` ("trial_table",
//!   "binned", "events", "nwb"), `level` ("subject" or "session": what the group statistics count),
//!   `subjects` (null without a subject column)}
//! * `classes`; `headline` ("accuracy", or "balanced_accuracy" without balancing): the score every statistic is of
//! * `score`: what one session's score is ("accuracy" per trial table; over time, the mean over every window)
//! * `chance`: 1 / classes
//! * `sessions`: per session that entered, in table order {`session`, `subject`, `seed` (its own analysis's seed:
//!   decode the session alone with it for the same numbers), `files` [{`file`, `sha256`}], `trials`, `neurons`,
//!   `class_counts`, `accuracy` and `balanced_accuracy` ({`mean`, `sd`, `p2_5`, `p97_5`} over repeats; null when
//!   pooled), `null` (the headline score of each shuffle), `p_value` (Phipson & Smyth; null without shuffles or
//!   when pooled), `curve` (over time: the headline mean at each window), `clusters` (over time: the session's own
//!   cluster test, as in `popdecode-timecourse/1`), `warnings`}
//! * `left_out`: [{`session`, `subject`, `reason`}], the sessions left out with the user's agreement
//! * `units`: the second level [{`name`, `sessions`, `score`}] (subjects with their sessions' mean, or sessions)
//! * `group` (null when pooled) {`level`, `units`, `mean`, `sd`, `interval` {`level`, `low`, `high`, `kind`},
//!   `chance`, `draws`, `null_mean`, `null_p95`, `p_value`, `significant`} (the last four null without shuffles)
//! * `prevalence` (null when pooled or without shuffles) {`minimum` (the smallest unit score, each session scored
//!   as a shuffle is: the mean over its first `repeats_each` repeats), `global_p`, `gamma0` (null when the global
//!   null is not rejected), `gamma0_limit`, `majority`, `alpha`, `units`}
//! * `t_test` (null with fewer than two units or no spread) {`t`, `df`, `p_value`, `caution`}
//! * `time` (over time, not pooled) {`windows` [{`index`, `start`, `end`, `time`, `mean`, `sd`, `null_p95`,
//!   `significant`}], `clusters` (as in `popdecode-timecourse/1`), `alpha`}
//! * `pooled` (when pooled): the pooled population's whole result (`popdecode-result/1` or
//!   `popdecode-timecourse/1`), with its caveat among its warnings
//! * `fits` {`total`, `capped`, `single_class`}, `warnings`
//!
//! Built from outcomes in any order; nothing time- or machine-dependent is written.

use super::plan::{AnyOutcome, AnyPlan, LeftOut, StudyOptions, StudyOutcome, StudyPlan};
use crate::analyses::across::report::AcrossRepeatCurves;
use crate::analyses::across::{AcrossOutcome, AcrossReport, AcrossTimeReport};
use crate::analyses::time_course::report::{TimeCluster, TimeRepeat, TimeReport};
use crate::analyses::time_course::TimeOutcome;
use crate::analyses::trial_table::report::Report;
use crate::analyses::trial_table::Outcome;
use crate::analyses::{Analysis, Finished};
use crate::data::SourceFile;
use crate::input::study::SessionKind;
use crate::recipe::windows::Window;
use crate::recipe::Recipe;
use crate::report::text::session_notes;
use crate::report::{Fits, Software};
use crate::resample::Headline;
use crate::stats::clusters::{self, CLUSTER_PERCENTILE};
use crate::stats::group::{self, Prevalence, TTest};
use crate::stats::{self, percentile, permutation_p, Spread};
use serde::Serialize;

pub const STUDY_SCHEMA: &str = "popdecode-study/1";

/// Every report of a pooled study carries this beside the pseudo-population's own caveat.
pub const POOLED_NOTE: &str = "the sessions were pooled into one pseudo-population: the result describes that \
     population, not how consistently the sessions or subjects carry the information; decode each session on its \
     own for group statistics";

#[derive(Debug, Clone, Serialize)]
pub struct StudyReport {
    pub schema: String,
    pub software: Software,
    pub recipe: Recipe,
    pub options: StudyOptions,
    pub study: StudyInfo,
    pub classes: Vec<String>,
    pub headline: Headline,
    pub score: String,
    pub chance: f64,
    pub sessions: Vec<SessionResult>,
    pub left_out: Vec<LeftOut>,
    pub units: Vec<UnitResult>,
    pub group: Option<Group>,
    pub prevalence: Option<Prevalence>,
    pub t_test: Option<TTest>,
    pub time: Option<GroupTime>,
    pub pooled: Option<serde_json::Value>,
    pub fits: Fits,
    pub warnings: Vec<String>,
}

#[derive(Debug, Clone, Serialize)]
pub struct StudyInfo {
    pub file: String,
    pub sha256: String,
    pub kind: SessionKind,
    pub level: String,
    pub subjects: Option<usize>,
}

#[derive(Debug, Clone, Serialize)]
pub struct SessionResult {
    pub session: String,
    pub subject: Option<String>,
    pub seed: u64,
    pub files: Vec<SourceFile>,
    pub trials: usize,
    pub neurons: usize,
    pub class_counts: Vec<usize>,
    pub accuracy: Option<Spread>,
    pub balanced_accuracy: Option<Spread>,
    pub null: Vec<f64>,
    pub p_value: Option<f64>,
    #[serde(skip_serializing_if = "Option::is_none")]
    pub curve: Option<Vec<f64>>,
    #[serde(skip_serializing_if = "Option::is_none")]
    pub clusters: Option<Vec<TimeCluster>>,
    pub warnings: Vec<String>,
}

#[derive(Debug, Clone, Serialize)]
pub struct UnitResult {
    pub name: String,
    pub sessions: Vec<String>,
    pub score: f64,
}

#[derive(Debug, Clone, Serialize)]
pub struct Group {
    pub level: String,
    pub units: usize,
    pub mean: f64,
    pub sd: f64,
    pub interval: Option<Interval>,
    pub chance: f64,
    pub draws: usize,
    pub null_mean: Option<f64>,
    pub null_p95: Option<f64>,
    pub p_value: Option<f64>,
    pub significant: Option<bool>,
}

#[derive(Debug, Clone, Serialize)]
pub struct Interval {
    pub level: f64,
    pub low: f64,
    pub high: f64,
    pub kind: String,
}

#[derive(Debug, Clone, Serialize)]
pub struct GroupTime {
    pub windows: Vec<GroupWindow>,
    pub clusters: Vec<TimeCluster>,
    pub alpha: f64,
    /// Percentile of the group null a window's group mean must exceed to enter a cluster.
    pub cluster_percentile: f64,
}

#[derive(Debug, Clone, Serialize)]
pub struct GroupWindow {
    pub index: usize,
    pub start: f64,
    pub end: f64,
    pub time: f64,
    pub mean: f64,
    pub sd: f64,
    pub null_p95: Option<f64>,
    pub significant: bool,
}

/// One session's numbers, as the group statistics read them.
struct Scored {
    result: SessionResult,
    /// Observed score (mean over repeats) and each shuffle's, in shuffle order.
    observed: f64,
    /// The observed score as each shuffle is scored: the mean over the first `repeats_each` repeats only (see
    /// [`first_repeats`]). It joins the shuffles' scores in the session's pool for the group statistics.
    observed_as_shuffled: f64,
    /// Over time: the headline mean at each window, and each shuffle's headline curve.
    curve: Vec<f64>,
    null_curves: Vec<Vec<f64>>,
    /// Over time: the headline curve as each shuffle's is scored (mean over the first `repeats_each` repeats at each
    /// window); it joins the shuffles' curves in the session's pool for the group's cluster test.
    curve_as_shuffled: Vec<f64>,
}

impl StudyReport {
    /// Assemble the study's result from every task's outcome (any order); a pooled study also takes the pooled
    /// population's finished analysis ([`pooled_finished`]).
    pub fn build(
        plan: &StudyPlan,
        outcomes: &[StudyOutcome],
        pooled: Option<&Finished>,
    ) -> StudyReport {
        let fits = Fits::sum(outcomes.iter().map(|o| match &o.outcome {
            AnyOutcome::Table(t) => (t.fits, t.capped_fits, t.single_class_fits),
            AnyOutcome::Time(t) => (t.fits, t.capped_fits, t.single_class_fits),
            AnyOutcome::Across(t) => (t.fits, t.capped_fits, t.single_class_fits),
        }));
        let mut warnings = plan.warnings.clone();
        let by_subject = plan.by_subject();
        let level = if by_subject { "subject" } else { "session" };
        let mut report = StudyReport {
            schema: STUDY_SCHEMA.into(),
            software: Software::current(),
            recipe: plan.recipe.clone(),
            options: plan.options.clone(),
            study: StudyInfo {
                file: plan.table.source.clone(),
                sha256: plan.table.sha256.clone(),
                kind: plan.kind,
                level: level.into(),
                subjects: by_subject.then(|| plan.units.len()),
            },
            classes: plan.classes.clone(),
            headline: if plan.recipe.balance {
                Headline::Accuracy
            } else {
                Headline::BalancedAccuracy
            },
            score: String::new(),
            chance: 1.0 / plan.classes.len() as f64,
            sessions: Vec::new(),
            left_out: plan.left_out.clone(),
            units: Vec::new(),
            group: None,
            prevalence: None,
            t_test: None,
            time: None,
            pooled: None,
            fits,
            warnings: Vec::new(),
        };
        report.score = score_description(plan, report.headline);
        if let Some(pooled) = pooled {
            report.pooled = Some(serde_json::from_str(&pooled.json).expect("a report is JSON"));
            report.sessions = plan
                .sessions
                .iter()
                .map(|s| SessionResult {
                    session: s.name.clone(),
                    subject: s.subject.clone(),
                    seed: s.seed,
                    files: s.files.clone(),
                    trials: s.trials,
                    neurons: s.neurons,
                    class_counts: s.class_counts.clone(),
                    accuracy: None,
                    balanced_accuracy: None,
                    null: Vec::new(),
                    p_value: None,
                    curve: None,
                    clusters: None,
                    warnings: Vec::new(),
                })
                .collect();
            warnings.push(POOLED_NOTE.into());
            // The pooled analysis's own cautions (few trials per class, shuffles too few, …) belong to the study's
            // result too: every face reads the top-level warnings.
            let own = report
                .pooled
                .as_ref()
                .and_then(|p| p["warnings"].as_array());
            for w in own.into_iter().flatten().filter_map(|w| w.as_str()) {
                if !warnings.iter().any(|have| have == w) {
                    warnings.push(w.to_string());
                }
            }
            report.warnings = warnings;
            return report;
        }

        let mut per_session: Vec<Vec<&AnyOutcome>> = vec![Vec::new(); plan.sessions.len()];
        for o in outcomes {
            per_session[o.session.expect("a session's task")].push(&o.outcome);
        }
        let scored: Vec<Scored> = plan
            .sessions
            .iter()
            .zip(&per_session)
            .map(|(s, outs)| {
                let mut sc = score_session(s.plan(), outs);
                sc.result.session = s.name.clone();
                sc.result.subject = s.subject.clone();
                sc.result.seed = s.seed;
                sc.result.files = s.files.clone();
                sc.result.trials = s.trials;
                sc.result.neurons = s.neurons;
                sc.result.class_counts = s.class_counts.clone();
                sc
            })
            .collect();
        let notes: Vec<(&str, &[String])> = scored
            .iter()
            .map(|s| (s.result.session.as_str(), s.result.warnings.as_slice()))
            .collect();
        warnings.extend(session_notes(&notes));

        let observed: Vec<f64> = scored.iter().map(|s| s.observed).collect();
        let unit_scores = plan.units.means(&observed);
        let as_shuffled: Vec<f64> = scored.iter().map(|s| s.observed_as_shuffled).collect();
        report.units = plan
            .unit_names
            .iter()
            .zip(&plan.units.members)
            .zip(&unit_scores)
            .map(|((name, members), &score)| UnitResult {
                name: name.clone(),
                sessions: members
                    .iter()
                    .map(|&s| plan.sessions[s].name.clone())
                    .collect(),
                score,
            })
            .collect();
        let has_null = plan.recipe.shuffles > 0;
        let draws = plan.options.group_draws;
        // Each session's pool: its observed score first, then its shuffles' (the observed labelling is one of the
        // permutations, as in Allefeld et al. 2016), so that under the null the observed scores are a draw like
        // any other and the test is exact up to the draws' Monte Carlo error. A draw like any other only when
        // scored like the others: a shuffle's score is a mean over fewer repeats than the observed one, which
        // varies less, so the pool and the prevalence test take the observed mean over as many repeats as a
        // shuffle's. The minimum over sessions is sensitive to that spread: with the observed means over 100
        // repeats against shuffles' over 10, invented studies without information rejected the global null in
        // 6–9 % at α = 0.05, and in 88 % with 1 repeat per shuffle (a statistics review, 2026-12-04). The group
        // mean's own test keeps the mean over every repeat (its null is then wider than needed: conservative).
        let pools: Vec<Vec<f64>> = scored
            .iter()
            .map(|s| {
                std::iter::once(s.observed_as_shuffled)
                    .chain(s.result.null.iter().copied())
                    .collect()
            })
            .collect();
        let picks = if has_null {
            let counts: Vec<usize> = pools.iter().map(Vec::len).collect();
            group::picks(plan.recipe.seed, &counts, draws)
        } else {
            Vec::new()
        };
        let mean = stats::mean(&unit_scores);
        let alpha = plan.options.alpha;
        let (null_mean, null_p95, p_value) = if has_null {
            let scalar_null: Vec<Vec<Vec<f64>>> = pools
                .iter()
                .map(|p| p.iter().map(|&v| vec![v]).collect())
                .collect();
            let null: Vec<f64> = group::group_null(&plan.units, &scalar_null, &picks)
                .into_iter()
                .map(|g| g[0])
                .collect();
            let minimum = group::minimum_null(&plan.units, &pools, &picks);
            let shuffled_units = plan.units.means(&as_shuffled);
            report.prevalence = Some(group::prevalence(&shuffled_units, &minimum, alpha));
            (
                Some(stats::mean(&null)),
                Some(percentile(&null, 95.0)),
                Some(permutation_p(mean, &null)),
            )
        } else {
            (None, None, None)
        };
        report.group = Some(Group {
            level: level.into(),
            units: unit_scores.len(),
            mean,
            sd: stats::sd(&unit_scores),
            interval: group::t_interval(&unit_scores, 0.95).map(|(low, high)| Interval {
                level: 0.95,
                low,
                high,
                kind: format!(
                    "t interval of the mean across {level}s, each {level}'s score taken as exact (the resampling \
                     within sessions is not in it)"
                ),
            }),
            chance: report.chance,
            draws: if has_null { draws } else { 0 },
            null_mean,
            null_p95,
            p_value,
            significant: p_value.map(|p| p < alpha),
        });
        let g = report.group.as_ref().expect("set above");
        if let Some(i) = g.interval.as_ref().filter(|i| i.low < 0.0 || i.high > 1.0) {
            // A t interval is symmetric and unbounded: with few subjects or widely spread scores it leaves the
            // scale, which a reader should not take for information.
            warnings.push(format!(
                "the 95 % t interval of the mean across {} {level}s ({:.1} to {:.1} %) reaches beyond the possible \
                 0–100 %: with so few {level}s, or scores so spread, it says little about the population",
                g.units,
                100.0 * i.low,
                100.0 * i.high
            ));
        }
        report.t_test = group::t_test_greater(&unit_scores, report.chance);
        if let Some(windows) = plan.sessions[0].plan().windows() {
            report.time = Some(group_time(plan, windows, &scored, &picks));
        }
        report.sessions = scored.into_iter().map(|s| s.result).collect();
        warnings.extend(report.fits.warnings());
        if has_null && plan.recipe.shuffles < 100 {
            warnings.push(format!(
                "only {} shuffles per session: each session's null is coarse, and so are the group tests built \
                 from it; 200 or more are usual",
                plan.recipe.shuffles
            ));
        }
        if has_null
            && report
                .prevalence
                .as_ref()
                .is_some_and(|p| p.gamma0.is_none())
        {
            warnings.push(
                "the prevalence test did not reject the global null: by the minimum statistic, no claim can be \
                 made about how many sessions or subjects of the population carry the information"
                    .into(),
            );
        }
        report.warnings = warnings;
        report
    }

    pub fn to_json(&self) -> String {
        serde_json::to_string_pretty(self).expect("a report always serialises")
    }

    /// The sessions that were decoded over time.
    pub fn is_time(&self) -> bool {
        self.time.is_some()
    }
}

/// What one session's score is, in words.
fn score_description(plan: &StudyPlan, headline: Headline) -> String {
    let name = headline.name();
    let plan = plan.sessions.first().and_then(|s| s.plan.as_ref());
    let over = plan.and_then(AnyPlan::windows).map(|w| {
        format!(
            "averaged over the {} windows from {} s to {} s",
            w.len(),
            crate::report::text::seconds(w[0].start),
            crate::report::text::seconds(w[w.len() - 1].end)
        )
    });
    let over = over.unwrap_or_default();
    match plan {
        Some(AnyPlan::Time(_)) => format!("{name} {over}"),
        Some(AnyPlan::Across(a)) => {
            let level = |l: &[usize]| {
                l.iter()
                    .map(|&i| a.data.level_names[i].as_str())
                    .collect::<Vec<_>>()
                    .join(", ")
            };
            let ways: Vec<String> = a
                .assignments
                .iter()
                .map(|x| format!("{} → {}", level(&x.train), level(&x.test)))
                .collect();
            format!(
                "{name} of the decoder trained at some levels of '{}' and tested at the others ({}{}){}",
                a.data.across_column,
                if ways.len() > 1 { "the mean over " } else { "" },
                ways.join("; "),
                if over.is_empty() {
                    String::new()
                } else {
                    format!(", {over}")
                }
            )
        }
        _ => name.to_string(),
    }
}

/// A session's own report, read for the group statistics.
fn score_session(plan: &AnyPlan, outs: &[&AnyOutcome]) -> Scored {
    let empty = |warnings: Vec<String>| SessionResult {
        session: String::new(),
        subject: None,
        seed: 0,
        files: Vec::new(),
        trials: 0,
        neurons: 0,
        class_counts: Vec::new(),
        accuracy: None,
        balanced_accuracy: None,
        null: Vec::new(),
        p_value: None,
        curve: None,
        clusters: None,
        warnings,
    };
    match plan {
        AnyPlan::Table(p) => {
            let outs: Vec<Outcome> = outs.iter().filter_map(|o| table_outcome(o)).collect();
            let r = Report::build(p, &outs);
            let (null, p_value) = (r.shuffle.null.clone(), r.shuffle.p_value);
            let as_shuffled = first_repeats(
                r.design.headline,
                r.repeats
                    .iter()
                    .map(|o| (o.index, o.accuracy, o.balanced_accuracy)),
                r.shuffle.repeats_each,
            );
            scalar(
                empty(r.warnings),
                &r.summary.accuracy,
                &r.summary.balanced_accuracy,
                null,
                p_value,
                (r.shuffle.observed, as_shuffled),
            )
        }
        AnyPlan::Across(p) if p.data.features.is_time() => {
            let outs: Vec<AcrossOutcome> = outs.iter().filter_map(|o| across_outcome(o)).collect();
            let r = AcrossTimeReport::build(p, &outs);
            let curves = |f: fn(&AcrossRepeatCurves) -> &Vec<f64>| {
                r.repeats.iter().map(|o| f(o).clone()).collect::<Vec<_>>()
            };
            over_time(
                empty(r.warnings.clone()),
                r.design.headline,
                (curves(|o| &o.accuracy), curves(|o| &o.balanced_accuracy)),
                r.curve(),
                (r.shuffle.null.clone(), r.shuffle.repeats_each),
                r.clusters.clone(),
            )
        }
        AnyPlan::Across(p) => {
            let outs: Vec<AcrossOutcome> = outs.iter().filter_map(|o| across_outcome(o)).collect();
            let r = AcrossReport::build(p, &outs);
            let (null, p_value) = (r.shuffle.null.clone(), r.shuffle.p_value);
            let as_shuffled = first_repeats(
                r.design.headline,
                r.repeats
                    .iter()
                    .map(|o| (o.index, o.accuracy, o.balanced_accuracy)),
                r.shuffle.repeats_each,
            );
            scalar(
                empty(r.warnings),
                &r.summary.accuracy,
                &r.summary.balanced_accuracy,
                null,
                p_value,
                (r.shuffle.observed, as_shuffled),
            )
        }
        AnyPlan::Time(p) => {
            let outs: Vec<TimeOutcome> = outs.iter().filter_map(|o| time_outcome(o)).collect();
            let r = TimeReport::build(p, &outs);
            let curves = |f: fn(&TimeRepeat) -> &Vec<f64>| {
                r.repeats.iter().map(|o| f(o).clone()).collect::<Vec<_>>()
            };
            over_time(
                empty(r.warnings.clone()),
                r.design.headline,
                (curves(|o| &o.accuracy), curves(|o| &o.balanced_accuracy)),
                r.curve(),
                (r.shuffle.null.clone(), r.shuffle.repeats_each),
                r.clusters.clone(),
            )
        }
    }
}

/// A session decoded at every window: its score is the mean over windows of each repeat's curve (accuracy and
/// balanced accuracy), its null the same mean of each shuffle's curve; the curves feed the group's cluster test.
fn over_time(
    mut result: SessionResult,
    headline: Headline,
    (accuracy, balanced): (Vec<Vec<f64>>, Vec<Vec<f64>>),
    curve: Vec<f64>,
    (null_curves, repeats_each): (Vec<Vec<f64>>, usize),
    clusters: Vec<TimeCluster>,
) -> Scored {
    let span = |curves: &[Vec<f64>]| curves.iter().map(|c| stats::mean(c)).collect::<Vec<_>>();
    let (acc, bacc) = (span(&accuracy), span(&balanced));
    let per_repeat: Vec<f64> = acc
        .iter()
        .zip(&bacc)
        .map(|(&a, &b)| headline.of(a, b))
        .collect();
    let observed = stats::mean(&per_repeat);
    let in_order = acc
        .iter()
        .zip(&bacc)
        .enumerate()
        .map(|(i, (&a, &b))| (i, a, b));
    let observed_as_shuffled = first_repeats(headline, in_order, repeats_each);
    let curve_as_shuffled: Vec<f64> = (0..curve.len())
        .map(|w| {
            let at = accuracy
                .iter()
                .zip(&balanced)
                .enumerate()
                .map(|(i, (a, b))| (i, a[w], b[w]));
            first_repeats(headline, at, repeats_each)
        })
        .collect();
    let null = span(&null_curves);
    result.p_value = (!null.is_empty()).then(|| permutation_p(observed, &null));
    result.accuracy = Some(Spread::of(&acc));
    result.balanced_accuracy = Some(Spread::of(&bacc));
    result.null = null;
    result.curve = Some(curve.clone());
    result.clusters = Some(clusters);
    Scored {
        observed,
        observed_as_shuffled,
        curve,
        null_curves,
        curve_as_shuffled,
        result,
    }
}

/// A session whose analysis gives one score (a trial table, or generalization across conditions): its scores,
/// null and p-value as the group statistics read them.
fn scalar(
    mut result: SessionResult,
    accuracy: &Spread,
    balanced_accuracy: &Spread,
    null: Vec<f64>,
    p_value: Option<f64>,
    (observed, observed_as_shuffled): (f64, f64),
) -> Scored {
    result.accuracy = Some(accuracy.clone());
    result.balanced_accuracy = Some(balanced_accuracy.clone());
    result.null = null;
    result.p_value = p_value;
    Scored {
        observed,
        observed_as_shuffled,
        curve: Vec::new(),
        null_curves: Vec::new(),
        curve_as_shuffled: Vec::new(),
        result,
    }
}

/// The group curve, its spread across units, and its cluster test with the sessions' null curves drawn as the
/// scalar test draws them (each session's observed curve in its pool scored as a shuffle's is; the group curve
/// tested is the mean over every repeat, as the scalar group mean is).
fn group_time(
    plan: &StudyPlan,
    win: &[Window],
    scored: &[Scored],
    picks: &[Vec<usize>],
) -> GroupTime {
    let nw = win.len();
    let unit_curves: Vec<Vec<f64>> = (0..nw)
        .map(|w| {
            let at: Vec<f64> = scored.iter().map(|s| s.curve[w]).collect();
            plan.units.means(&at)
        })
        .collect(); // [window][unit]
    let mean: Vec<f64> = unit_curves.iter().map(|u| stats::mean(u)).collect();
    let test = (!picks.is_empty()).then(|| {
        let null_curves: Vec<Vec<Vec<f64>>> = scored
            .iter()
            .map(|s| {
                std::iter::once(s.curve_as_shuffled.clone())
                    .chain(s.null_curves.iter().cloned())
                    .collect()
            })
            .collect();
        let null = group::group_null(&plan.units, &null_curves, picks);
        let refs: Vec<&[f64]> = null.iter().map(Vec::as_slice).collect();
        clusters::test(&mean, &refs, 1, nw)
    });
    let alpha = plan.options.alpha;
    let clusters: Vec<TimeCluster> = test
        .iter()
        .flat_map(|t| &t.clusters)
        .map(|c| {
            let (a, b) = (c.cells[0], *c.cells.last().expect("a cluster has cells"));
            TimeCluster {
                start: win[a].time,
                end: win[b].time,
                window_start: win[a].start,
                window_end: win[b].end,
                first_window: a,
                last_window: b,
                mass: c.mass,
                p_value: c.p_value,
                significant: c.p_value < alpha,
            }
        })
        .collect();
    let windows = (0..nw)
        .map(|w| GroupWindow {
            index: w,
            start: win[w].start,
            end: win[w].end,
            time: win[w].time,
            mean: mean[w],
            sd: stats::sd(&unit_curves[w]),
            null_p95: test.as_ref().map(|t| t.thresholds[w]),
            significant: clusters
                .iter()
                .any(|c| c.significant && (c.first_window..=c.last_window).contains(&w)),
        })
        .collect();
    GroupTime {
        windows,
        clusters,
        alpha,
        cluster_percentile: CLUSTER_PERCENTILE,
    }
}

/// The pooled population's own finished analysis (its JSON, text, methods and figures).
pub fn pooled_finished(pooled: &AnyPlan, outcomes: &[StudyOutcome]) -> Finished {
    let outs = outcomes.iter().map(|o| &o.outcome);
    match pooled {
        AnyPlan::Table(p) => {
            Analysis::finish(p, &outs.filter_map(table_outcome).collect::<Vec<_>>())
        }
        AnyPlan::Time(p) => Analysis::finish(p, &outs.filter_map(time_outcome).collect::<Vec<_>>()),
        AnyPlan::Across(p) => {
            Analysis::finish(p, &outs.filter_map(across_outcome).collect::<Vec<_>>())
        }
    }
}

fn table_outcome(o: &AnyOutcome) -> Option<Outcome> {
    match o {
        AnyOutcome::Table(t) => Some(t.clone()),
        _ => None,
    }
}

fn time_outcome(o: &AnyOutcome) -> Option<TimeOutcome> {
    match o {
        AnyOutcome::Time(t) => Some(t.clone()),
        _ => None,
    }
}

fn across_outcome(o: &AnyOutcome) -> Option<AcrossOutcome> {
    match o {
        AnyOutcome::Across(t) => Some(t.clone()),
        _ => None,
    }
}

/// The `headline` score's mean over the first `n` observed repeats (given as (repeat index, accuracy, balanced
/// accuracy), in any order): the observed score as a shuffle is scored, since each shuffle averages `n` repeats
/// (its `repeats_each`). All of them when there are fewer, or no shuffles (`n` = 0).
fn first_repeats(
    headline: Headline,
    repeats: impl Iterator<Item = (usize, f64, f64)>,
    n: usize,
) -> f64 {
    let mut scores: Vec<(usize, f64)> = repeats.map(|(i, a, b)| (i, headline.of(a, b))).collect();
    scores.sort_by_key(|&(i, _)| i);
    let n = if n == 0 {
        scores.len()
    } else {
        n.min(scores.len())
    };
    stats::mean(&scores[..n].iter().map(|&(_, v)| v).collect::<Vec<_>>())
}
