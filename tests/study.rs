//! Studies of many sessions: calibration of the group tests under the null, their power and the prevalence bound
//! with information in some sessions, pooled time courses, session seeds, flagged sessions, and the page's JSON
//! against the CLI's.

use popdecode::analyses::study::plan::{AnyOutcome, StudyOutcome};
use popdecode::analyses::study::{from_files, StudyOptions, StudyPlan, StudyReport, StudyRequest};
use popdecode::analyses::time_course::pooled::Pool;
use popdecode::analyses::trial_table::{run_all, Plan};
use popdecode::analyses::Analysis;
use popdecode::data::time::TimeDataset;
use popdecode::input::study::StudyRow;
use popdecode::input::{self, FileBytes};
use popdecode::recipe::windows::sliding;
use popdecode::recipe::{Classifier, Folds, Recipe, TimeSettings};
use popdecode::rng::{task_rng, Stream};
use popdecode::simulate::{binned, csv, study, Scenario, StudyScenario, TimeScenario};
use popdecode::stats::binomial;
use std::path::PathBuf;
use std::process::Command;

/// A trial table of one invented session: two conditions, `tuning` 0 for no information.
fn session_csv(tuning: f64, seed: u64) -> String {
    csv(&Scenario {
        classes: vec!["a".into(), "b".into()],
        trials_per_class: vec![12, 12],
        units: 6,
        tuning,
        tuned_fraction: 1.0,
        blocks_per_class: 0,
        block_offset: 0.0,
        sessions: 0,
        seed,
    })
}

/// A small, fast protocol. Repeats per shuffle equal the observed repeats, so that under the null the observed
/// score is exchangeable with the shuffles' and the tests should reject at their nominal rate, not below it.
fn small_recipe(seed: u64) -> Recipe {
    let mut r = Recipe::new("odour");
    r.classifier = Classifier::NearestMean;
    r.folds = Folds::K(3);
    r.repeats = 2;
    r.shuffles = 39;
    r.shuffle_repeats = Some(2);
    r.seed = seed;
    r
}

/// A study of in-memory trial tables, through the loader the page uses.
fn table_study(tunings: &[f64], seed: u64, draws: usize) -> StudyReport {
    let texts: Vec<(String, String)> = tunings
        .iter()
        .enumerate()
        .map(|(i, &t)| (format!("s{i}.csv"), session_csv(t, seed * 100 + i as u64)))
        .collect();
    in_memory_study(&texts, &small_recipe(seed), draws).1
}

/// A study of in-memory files (one per session, named `s0`, `s1`, …) through the loader the page uses: its plan and
/// its result from every task run in order.
fn in_memory_study(
    texts: &[(String, String)],
    recipe: &Recipe,
    draws: usize,
) -> (StudyPlan, StudyReport) {
    let files: Vec<FileBytes> = texts
        .iter()
        .map(|(name, text)| FileBytes {
            name,
            bytes: text.as_bytes(),
        })
        .collect();
    let rows = texts
        .iter()
        .enumerate()
        .map(|(i, (name, _))| StudyRow {
            file: name.clone(),
            session: format!("s{i}"),
            subject: None,
            trials: None,
        })
        .collect();
    let request = StudyRequest {
        options: StudyOptions {
            group_draws: draws,
            ..StudyOptions::default()
        },
        sessions: Some(rows),
        table: None,
    };
    let plan = from_files(&files, recipe, request).expect("a valid study");
    let outcomes: Vec<StudyOutcome> = plan.tasks().into_iter().map(|t| plan.run(t)).collect();
    let report = StudyReport::build(&plan, &outcomes, None);
    (plan, report)
}

/// The 99 % two-sided binomial range of a count of rejections at rate `alpha` over `n` tries.
fn binomial_99(n: u64, alpha: f64) -> (u64, u64) {
    (
        binomial::quantile(0.005, n, alpha),
        binomial::quantile(0.995, n, alpha),
    )
}

/// Under the null (no session carries information), the group permutation test (Stelzer, Chen & Turner 2013)
/// rejects at about α, and the prevalence inference (Allefeld, Görgen & Haynes 2016) claims a prevalence above 0 at
/// most at α: 600 invented studies of five sessions each; the rate must lie in the binomial 99 % range. (Measured
/// once on 3000 further studies: 4.9 % and 3.9 %.)
#[test]
fn group_tests_keep_their_error_rate_without_information() {
    let studies = 600u64;
    let (mut group, mut prevalence) = (0u64, 0u64);
    for k in 0..studies {
        let r = table_study(&[0.0; 5], k + 1, 999);
        let g = r.group.as_ref().unwrap();
        group += u64::from(g.p_value.unwrap() < 0.05);
        prevalence += u64::from(r.prevalence.as_ref().unwrap().gamma0.is_some());
    }
    let (lo, hi) = binomial_99(studies, 0.05);
    eprintln!("measured, no information: group test significant in {group}, prevalence claimed in {prevalence} of {studies} (range {lo}-{hi})");
    assert!(
        (lo..=hi).contains(&group),
        "group test rejected in {group} of {studies} null studies; the binomial 99 % range at α = 0.05 is {lo}–{hi}"
    );
    assert!(
        prevalence <= hi,
        "prevalence above 0 claimed in {prevalence} of {studies} null studies (at most {hi} allowed)"
    );
}

/// The same when the observed score averages more repeats than each shuffle (8 against 1; 300 studies of 16
/// sessions): the prevalence test's minimum over sessions must compare like with like. When it took each session's
/// mean over all 8 repeats against the shuffles' single repeats, the observed minimum sat above the null minima:
/// prevalence was claimed in 53 of these 300 null studies (now 12; at most 25 allowed), and a statistics review
/// measured 88 % with 20 sessions, 100 repeats against 1 per shuffle.
#[test]
fn prevalence_keeps_its_error_rate_when_shuffles_average_fewer_repeats() {
    let studies = 300u64;
    let mut claimed = 0u64;
    for k in 0..studies {
        let texts: Vec<(String, String)> = (0..16)
            .map(|i| (format!("s{i}.csv"), session_csv(0.0, 7000 + k * 100 + i)))
            .collect();
        let mut recipe = small_recipe(k + 1);
        recipe.repeats = 8;
        recipe.shuffle_repeats = Some(1);
        let r = in_memory_study(&texts, &recipe, 999).1;
        claimed += u64::from(r.prevalence.as_ref().unwrap().gamma0.is_some());
    }
    let (_, hi) = binomial_99(studies, 0.05);
    eprintln!("measured, no information, 8 repeats against 1 per shuffle: prevalence claimed in {claimed} of {studies} (at most {hi})");
    assert!(
        claimed <= hi,
        "prevalence above 0 claimed in {claimed} of {studies} null studies (at most {hi} allowed)"
    );
}

/// With information in 6 of 10 sessions, the group test finds it, and the prevalence bound exceeds the true
/// prevalence 0.6 at most at α (Allefeld, Görgen & Haynes 2016: the bound is a lower confidence bound).
#[test]
fn information_in_six_of_ten_sessions_is_found_and_not_overstated() {
    let studies = 200u64;
    let (mut found, mut over) = (0u64, 0u64);
    let mut tunings = [0.0; 10];
    tunings[..6].fill(0.8);
    for k in 0..studies {
        let r = table_study(&tunings, 1000 + k, 999);
        found += u64::from(r.group.as_ref().unwrap().p_value.unwrap() < 0.05);
        over += u64::from(
            r.prevalence
                .as_ref()
                .unwrap()
                .gamma0
                .is_some_and(|g| g > 0.6),
        );
    }
    assert!(
        found >= studies * 95 / 100,
        "the group test found the information in only {found} of {studies} studies"
    );
    let (_, hi) = binomial_99(studies, 0.05);
    eprintln!("measured, six of ten informative: group test significant in {found}, bound above 0.6 in {over} of {studies}");
    assert!(
        over <= hi,
        "the prevalence bound exceeded 0.6 in {over} of {studies} studies (at most {hi} allowed)"
    );
    // With information in every session, the bound does claim a prevalence (so the check above is not empty).
    let all = table_study(&[0.8; 10], 77, 9999);
    let bound = all.prevalence.unwrap().gamma0;
    assert!(bound.is_some_and(|g| g > 0.3), "{bound:?}");
}

/// A group p-value at the smallest its draws can give is a bound, not an estimate: the text, the report and the
/// methods say "p ≤" (a p of 0.001 from 999 draws means no draw reached the observed group mean).
#[test]
fn a_group_p_at_its_floor_reads_as_a_bound() {
    let r = table_study(&[0.8; 10], 77, 999);
    let g = r.group.as_ref().unwrap();
    assert_eq!(
        g.p_value,
        Some(1.0 / 1000.0),
        "every session informative: no draw reaches the group mean"
    );
    let headline = popdecode::analyses::study::text::headline_sentence(&r);
    assert!(
        headline.contains("group permutation test p ≤ 0.001"),
        "{headline}"
    );
    let text = popdecode::analyses::study::text::render(&r);
    assert!(
        text.contains("p ≤ 0.001") && !text.contains("p = 0.001"),
        "{text}"
    );
    let methods = popdecode::analyses::study::methods::paragraph(&r);
    assert!(
        methods.contains("), p ≤ 0.001.") && !methods.contains("p = 0.001"),
        "{methods}"
    );
    // So does a session's own p in the table when none of its shuffles reached its score.
    let floor = 1.0 / (r.recipe.shuffles + 1) as f64;
    let at_floor = r
        .sessions
        .iter()
        .filter(|s| s.p_value == Some(floor))
        .count();
    assert!(
        at_floor > 0,
        "informative sessions reach the floor of their shuffles"
    );
    let cell = format!("≤ {}", popdecode::report::text::p_text(floor));
    assert_eq!(text.matches(&cell).count(), at_floor, "{text}");
    // The prevalence test's smallest score is each session's over as many repeats as a shuffle's: said when that
    // is fewer than the table's, so the two numbers can be told apart.
    assert!(!methods.contains("as every shuffle is"));
    let mut recipe = small_recipe(77);
    recipe.repeats = 4;
    let texts: Vec<(String, String)> = (0..10)
        .map(|i| (format!("s{i}.csv"), session_csv(0.8, 7700 + i as u64)))
        .collect();
    let fewer = in_memory_study(&texts, &recipe, 999).1;
    let methods = popdecode::analyses::study::methods::paragraph(&fewer);
    assert!(
        methods
            .contains("; each session scored over its first 2 of 4 repeats, as every shuffle is)"),
        "{methods}"
    );
}

/// Found by a hostile review: with two sessions, one informative and one not, the t interval of the mean left the
/// 0–100 % scale unremarked. It is kept as computed (clamping would hide how little it says) and cautioned in the
/// warnings, which every face shows.
#[test]
fn a_group_interval_beyond_the_scale_is_cautioned() {
    let r = table_study(&[3.0, 0.0], 5, 99);
    let g = r.group.as_ref().unwrap();
    let i = g.interval.as_ref().unwrap();
    assert!(i.low < 0.0 || i.high > 1.0, "{i:?}");
    let caution = r
        .warnings
        .iter()
        .find(|w| w.contains("reaches beyond the possible 0–100 %"))
        .unwrap_or_else(|| panic!("{:?}", r.warnings));
    assert!(caution.contains("across 2 sessions"), "{caution}");
    let methods = popdecode::analyses::study::methods::paragraph(&r);
    assert!(methods.contains(caution.as_str()), "{methods}");
    // Ten informative sessions: an interval inside the scale, no caution.
    let r = table_study(&[0.8; 10], 5, 99);
    assert!(
        !r.warnings.iter().any(|w| w.contains("0–100 %")),
        "{:?}",
        r.warnings
    );
}

/// A session of a study gives, number for number, what the same file decoded alone with the session's seed gives:
/// each session runs on its own random streams, whatever else is in the study.
#[test]
fn a_session_is_its_own_analysis_under_its_seed() {
    let r = table_study(&[0.8, 0.0, 0.4], 7, 99);
    let s = &r.sessions[2];
    let alone = small_recipe(s.seed);
    let text = session_csv(0.4, 7 * 100 + 2);
    let data = input::trial_table("s2.csv", text.as_bytes(), &alone.columns).unwrap();
    let one = run_all(&Plan::new(data, &alone).unwrap());
    assert_eq!(s.accuracy.as_ref().unwrap(), &one.summary.accuracy);
    assert_eq!(s.null, one.shuffle.null);
    assert_eq!(s.p_value, one.shuffle.p_value);
}

/// Invented binned sessions over time whose information lies in known windows.
fn timed_session(info: (f64, f64), seed: u64) -> TimeDataset {
    let scenario = TimeScenario {
        classes: vec!["a".into(), "b".into(), "c".into()],
        trials_per_class: 20,
        units: 10,
        tuning: 0.7,
        tuned_fraction: 0.5,
        info_start: info.0,
        info_end: info.1,
        start: -0.4,
        end: 0.8,
        sessions: 0,
        absolute_times: false,
        seed,
    };
    let text = binned(&scenario, 0.1);
    let settings = TimeSettings::binned("trial", "time");
    let file = FileBytes {
        name: "s.csv",
        bytes: text.as_bytes(),
    };
    input::time_course(&[file], &Recipe::new("odour").columns, &settings.input).unwrap()
}

/// Three sessions pooled over time: two carry the odour from 0 to 0.3 s, one from 0.5 to 0.8 s; the pooled
/// population's cluster test finds both spans and nothing before odour onset.
#[test]
fn a_pooled_time_course_finds_the_windows_that_hold_information() {
    let sessions = vec![
        ("A".to_string(), timed_session((0.0, 0.3), 11)),
        ("B".to_string(), timed_session((0.5, 0.8), 12)),
        ("C".to_string(), timed_session((0.0, 0.3), 13)),
    ];
    let mut recipe = Recipe::new("odour");
    recipe.classifier = Classifier::ShrinkageLda;
    recipe.repeats = 5;
    recipe.shuffles = 100;
    recipe.shuffle_repeats = Some(2);
    recipe.time = Some(TimeSettings::binned("trial", "time"));
    let plan = popdecode::analyses::time_course::TimePlan::pooled(sessions, &recipe).unwrap();
    assert_eq!(
        plan.scheme.split,
        popdecode::resample::Split::Pseudo { folds: 5 }
    );
    let report = popdecode::analyses::time_course::run_all(&plan);
    let significant = |t: f64| {
        report
            .windows
            .iter()
            .find(|w| (w.time - t).abs() < 1e-9)
            .unwrap()
            .significant
    };
    for t in [0.05, 0.15, 0.25, 0.55, 0.65, 0.75] {
        assert!(significant(t), "window at {t} s: {:?}", report.curve());
    }
    for t in [-0.35, -0.25, -0.15, -0.05] {
        assert!(!significant(t), "window at {t} s: {:?}", report.curve());
    }
    assert!(report
        .warnings
        .iter()
        .any(|w| w.contains("noise correlations")));
}

/// The temporal generalization matrix of a pooled time course: its training-label null runs one repeat per shuffle
/// (pseudo-trials are dealt anew in every repeat, so no fixed training labels can recur across repeats), which
/// the methods paragraph says; the cells trained and tested while the odour is there are found, and no cell
/// trained before odour onset is significant.
#[test]
fn a_pooled_generalization_matrix_uses_one_repeat_per_shuffle_for_its_null() {
    let sessions = vec![
        ("A".to_string(), timed_session((0.0, 0.3), 21)),
        ("B".to_string(), timed_session((0.0, 0.3), 22)),
    ];
    let mut recipe = Recipe::new("odour");
    recipe.classifier = Classifier::ShrinkageLda;
    recipe.repeats = 4;
    recipe.shuffles = 60;
    recipe.shuffle_repeats = Some(3);
    let mut settings = TimeSettings::binned("trial", "time");
    settings.generalize = true;
    recipe.time = Some(settings);
    let plan = popdecode::analyses::time_course::TimePlan::pooled(sessions, &recipe).unwrap();
    // Progress counts the curve's 3 repeats and the matrix null's one.
    let per_repeat = 5 * plan.n_windows();
    let shuffle = popdecode::resample::Task::Shuffle(0);
    assert_eq!(plan.fits_in(shuffle), per_repeat * 4);
    let report = popdecode::analyses::time_course::run_all(&plan);
    let g = report.generalization.as_ref().expect("the matrix");
    let at = |t: f64| {
        report
            .windows
            .iter()
            .position(|w| (w.time - t).abs() < 1e-9)
            .unwrap()
    };
    assert!(g.significant[at(0.15)][at(0.15)], "{:?}", g.significant);
    let before = at(-0.05);
    assert!(
        g.significant[..=before].iter().flatten().all(|&s| !s),
        "{:?}",
        g.significant
    );
    let methods = popdecode::analyses::time_course::methods::paragraph(&report);
    assert!(
        methods.contains("one repeat per permutation, a conservative null"),
        "{methods}"
    );
}

/// Training and test pseudo-trials never share a real trial, and a pseudo-trial takes the same real trials at every
/// window: every value is unique to its (session, trial, neuron, window), so it betrays where it came from.
#[test]
fn pooled_pseudo_trials_use_disjoint_real_trials_at_every_window() {
    let windows = sliding(0.0, 0.3, 0.1, 0.1).unwrap();
    let make = |s: usize, n_trials: usize, n_neurons: usize| {
        let nw = windows.len();
        let y: Vec<usize> = (0..n_trials).map(|t| t % 2).collect();
        let x = ndarray::Array3::from_shape_fn((nw, n_trials, n_neurons), |(w, t, u)| {
            (s * 1_000_000 + t * 1000 + u * 10 + w) as f64
        });
        TimeDataset {
            source: format!("s{s}"),
            files: Vec::new(),
            x: x.into_shared(),
            windows: windows.clone(),
            trial_ids: (0..n_trials).map(|t| t.to_string()).collect(),
            y,
            classes: vec!["a".into(), "b".into()],
            groups: None,
            group_names: Vec::new(),
            neurons: (0..n_neurons).map(|u| format!("u{u}")).collect(),
            label_column: "cond".into(),
            group_column: None,
            spikes_outside: 0,
            spikes_total: 0,
            warnings: Vec::new(),
        }
    };
    let sessions = vec![
        ("s0".to_string(), make(0, 23, 3)),
        ("s1".to_string(), make(1, 30, 2)),
        ("s2".to_string(), make(2, 17, 4)),
    ];
    let (data, pool) = Pool::new(sessions).unwrap();
    let width = data.neurons.len();
    assert_eq!(width, 9);
    let labels = data.y.clone();
    for repeat in 0..5 {
        let draw = pool.draw(&labels, 4, 2, &mut task_rng(9, Stream::Repeat, repeat, 0));
        let all: Vec<usize> = (0..draw.y.len()).collect();
        // (session, trial) -> fold, from window 0; every other window must agree value by value.
        let mut fold_of = std::collections::BTreeMap::new();
        let mut trial_at: Vec<Vec<(usize, usize)>> = Vec::new();
        for w in 0..windows.len() {
            let rows = pool.rows(&draw, w, &all);
            for (pos, row) in rows.chunks_exact(width).enumerate() {
                let mut from = Vec::new();
                let mut per_session = [None; 3];
                for &v in row {
                    let v = v as usize;
                    let (s, t, ww) = (v / 1_000_000, v / 1000 % 1000, v % 10);
                    assert_eq!(ww, w, "a value from another window");
                    match per_session[s] {
                        None => per_session[s] = Some(t),
                        Some(t0) => assert_eq!(t0, t, "one session's neurons from two trials"),
                    }
                    from.push((s, t));
                }
                assert!(
                    per_session.iter().all(Option::is_some),
                    "a session is missing"
                );
                for (s, t) in per_session.iter().enumerate().map(|(s, t)| (s, t.unwrap())) {
                    assert_eq!(
                        labels_of(&pool, s, t),
                        draw.y[pos],
                        "a trial of another condition"
                    );
                    let fold = *fold_of.entry((s, t)).or_insert(draw.fold[pos]);
                    assert_eq!(fold, draw.fold[pos], "real trial ({s}, {t}) in two folds");
                }
                if w == 0 {
                    trial_at.push(from);
                } else {
                    assert_eq!(
                        trial_at[pos], from,
                        "pseudo-trial {pos} changed trials at window {w}"
                    );
                }
            }
        }
        // No real trial is used twice.
        let mut used: Vec<(usize, usize)> = trial_at
            .iter()
            .flat_map(|f| {
                let mut v = f.clone();
                v.dedup();
                v
            })
            .collect();
        let n = used.len();
        used.sort_unstable();
        used.dedup();
        assert_eq!(used.len(), n, "a real trial joins two pseudo-trials");
    }
}

fn labels_of(pool: &Pool, s: usize, t: usize) -> usize {
    pool.sessions[s].y[t]
}

/// Sessions that cannot enter (other label values; too few trials of a class for the folds) stop the study with
/// every reason, unless the user agrees to leave them out; then the result lists them.
#[test]
fn flagged_sessions_are_named_and_left_out_only_with_agreement() {
    let good: Vec<String> = (0..3).map(|i| session_csv(0.5, 50 + i)).collect();
    let other_labels = session_csv(0.5, 60).replace(",b,", ",c,");
    let few = {
        let text = session_csv(0.5, 61);
        let mut lines: Vec<&str> = text.lines().collect();
        let header = lines.remove(0);
        let mut kept = vec![header];
        let mut b = 0;
        for l in lines {
            if l.contains(",b,") {
                b += 1;
                if b > 2 {
                    continue;
                }
            }
            kept.push(l);
        }
        kept.join("\n") + "\n"
    };
    let mut texts: Vec<(String, String)> = good
        .into_iter()
        .enumerate()
        .map(|(i, t)| (format!("g{i}.csv"), t))
        .collect();
    texts.push(("odd.csv".into(), other_labels));
    texts.push(("few.csv".into(), few));
    let table: String = std::iter::once("file,session\n".to_string())
        .chain(
            texts
                .iter()
                .map(|(n, _)| format!("{n},{}\n", n.trim_end_matches(".csv"))),
        )
        .collect();
    let mut files = vec![FileBytes {
        name: "study.csv",
        bytes: table.as_bytes(),
    }];
    files.extend(texts.iter().map(|(n, t)| FileBytes {
        name: n,
        bytes: t.as_bytes(),
    }));
    let recipe = small_recipe(3);
    let e = from_files(&files, &recipe, StudyRequest::default())
        .err()
        .unwrap()
        .to_string();
    assert!(
        e.contains("'odd': its label values (a, c) differ from the study's (a, b)")
            && e.contains("'few'")
            && e.contains("fewer than the 3 folds")
            && !e.contains("--"),
        "{e}"
    );
    let request = StudyRequest {
        options: StudyOptions {
            leave_out_flagged: true,
            group_draws: 99,
            ..StudyOptions::default()
        },
        ..StudyRequest::default()
    };
    let plan: StudyPlan = from_files(&files, &recipe, request).unwrap();
    assert_eq!(plan.sessions.len(), 3);
    let finished = plan.finish(
        &plan
            .tasks()
            .into_iter()
            .map(|t| plan.run(t))
            .collect::<Vec<_>>(),
    );
    let v: serde_json::Value = serde_json::from_str(&finished.json).unwrap();
    let left: Vec<&str> = v["left_out"]
        .as_array()
        .unwrap()
        .iter()
        .map(|l| l["session"].as_str().unwrap())
        .collect();
    assert_eq!(left, vec!["odd", "few"]);
    assert!(finished.methods.unwrap().contains("left out"));
    assert!(v["warnings"][0].as_str().unwrap().contains("left out"));
}

// ---- the command line and the page's bridge ----

fn bin() -> Command {
    Command::new(env!("CARGO_BIN_EXE_popdecode"))
}

fn samples() -> PathBuf {
    PathBuf::from(env!("CARGO_MANIFEST_DIR")).join("samples/study")
}

fn temp_dir(name: &str) -> PathBuf {
    let dir = std::env::temp_dir().join(format!("popdecode-study-{name}-{}", std::process::id()));
    std::fs::create_dir_all(&dir).unwrap();
    dir
}

/// The CLI's study JSON for a study table of the samples.
fn cli_json(table: &str, extra: &[&str], threads: &str) -> String {
    let dir = temp_dir(&format!("{table}-{threads}-{}", extra.join("")));
    let json = dir.join("study.json");
    let out = bin()
        .arg("study")
        .arg(samples().join(table))
        .args(["--label", "odour", "--repeats", "3", "--shuffles", "20"])
        .args(["--group-draws", "500", "--quiet", "--threads", threads])
        .arg("--json")
        .arg(&json)
        .args(extra)
        .output()
        .unwrap();
    assert!(
        out.status.success(),
        "{}",
        String::from_utf8_lossy(&out.stderr)
    );
    std::fs::read_to_string(json).unwrap()
}

/// The page's JSON: the same files handed to the bridge's loader by name (as dropped), the recipe the CLI wrote,
/// the tasks run in reverse order.
fn page_json(table: &str, cli: &str, options: serde_json::Value) -> String {
    let v: serde_json::Value = serde_json::from_str(cli).unwrap();
    let recipe = Recipe::from_json("recipe", &v["recipe"].to_string()).unwrap();
    let table_text = std::fs::read(samples().join(table)).unwrap();
    let rows = input::study::read(table, &table_text).unwrap();
    let contents: Vec<(String, Vec<u8>)> = rows
        .sessions
        .iter()
        .map(|r| {
            (
                r.file.clone(),
                std::fs::read(samples().join(&r.file)).unwrap(),
            )
        })
        .collect();
    let mut files = vec![FileBytes {
        name: table,
        bytes: &table_text,
    }];
    files.extend(
        contents
            .iter()
            .map(|(n, b)| FileBytes { name: n, bytes: b }),
    );
    let request: StudyRequest = serde_json::from_value(options).unwrap();
    let plan = from_files(&files, &recipe, request).unwrap();
    let mut tasks = plan.tasks();
    tasks.reverse();
    let outcomes: Vec<StudyOutcome> = tasks
        .into_iter()
        .map(|t| {
            // Through JSON, as a worker hands an outcome to the page.
            let text = serde_json::to_string(&plan.run(t)).unwrap();
            serde_json::from_str(&text).unwrap()
        })
        .collect();
    plan.finish(&outcomes).json + "\n"
}

#[test]
fn page_json_equals_the_cli_json_and_threads_change_nothing() {
    let one = cli_json("study.csv", &[], "1");
    let three = cli_json("study.csv", &[], "3");
    assert_eq!(one, three);
    let page = page_json("study.csv", &one, serde_json::json!({ "group_draws": 500 }));
    assert_eq!(page, one);
    let v: serde_json::Value = serde_json::from_str(&one).unwrap();
    assert_eq!(v["schema"], "popdecode-study/1");
    assert_eq!(v["sessions"].as_array().unwrap().len(), 10);
    assert_eq!(v["study"]["subjects"], 4);
    for key in ["mean", "p_value"] {
        assert!(v["group"][key].is_number(), "group.{key}");
    }
    assert!(v["prevalence"]["global_p"].is_number());
    assert!(v["sessions"][0]["accuracy"]["mean"].is_number());
    assert!(v["sessions"][0]["p_value"].is_number());
}

#[test]
fn pooled_page_json_over_time_equals_the_cli_json() {
    let args = ["--binned", "--pool", "--classifier", "nearest-mean"];
    let cli = cli_json("study_time.csv", &args, "2");
    let page = page_json(
        "study_time.csv",
        &cli,
        serde_json::json!({ "pool": true, "group_draws": 500 }),
    );
    assert_eq!(page, cli);
    let v: serde_json::Value = serde_json::from_str(&cli).unwrap();
    assert_eq!(v["pooled"]["schema"], "popdecode-timecourse/1");
    assert_eq!(v["pooled"]["design"]["split"]["pseudo"]["folds"], 5);
    assert!(v["group"].is_null());
    // The pooled analysis's cautions are the study's too: every face reads the top-level warnings (found by a
    // hostile review: they were only under `pooled`).
    let top: Vec<&str> = v["warnings"]
        .as_array()
        .unwrap()
        .iter()
        .map(|w| w.as_str().unwrap())
        .collect();
    assert!(
        top.iter()
            .any(|w| w.contains("pooled into one pseudo-population")),
        "{top:?}"
    );
    for own in v["pooled"]["warnings"].as_array().unwrap() {
        let own = own.as_str().unwrap();
        assert_eq!(
            top.iter().filter(|w| **w == own).count(),
            1,
            "{own}: {top:?}"
        );
    }
    assert!(
        top.iter().any(|w| w.contains("noise correlations")),
        "{top:?}"
    );
}

#[test]
fn the_cli_names_flagged_sessions_and_its_flag() {
    let dir = temp_dir("flagged");
    for f in ["m1-d1.csv", "m2-d1.csv", "m4-d1.csv"] {
        std::fs::copy(samples().join(f), dir.join(f)).unwrap();
    }
    let odd = std::fs::read_to_string(samples().join("m4-d2.csv"))
        .unwrap()
        .replace("hexanal", "vanillin");
    std::fs::write(dir.join("odd.csv"), odd).unwrap();
    std::fs::write(
        dir.join("study.csv"),
        "file,session\nm1-d1.csv,a\nm2-d1.csv,b\nm4-d1.csv,c\nodd.csv,d\n",
    )
    .unwrap();
    let run = |extra: &[&str]| {
        bin()
            .arg("study")
            .arg(dir.join("study.csv"))
            .args([
                "--label",
                "odour",
                "--repeats",
                "2",
                "--shuffles",
                "5",
                "--quiet",
            ])
            .args(extra)
            .output()
            .unwrap()
    };
    let out = run(&[]);
    assert_eq!(out.status.code(), Some(2));
    let stderr = String::from_utf8_lossy(&out.stderr);
    assert!(
        stderr.contains("'d': its label values") && stderr.contains("--leave-out-flagged"),
        "{stderr}"
    );
    assert_eq!(stderr.lines().count(), 1, "{stderr}");
    let out = run(&["--leave-out-flagged"]);
    assert!(
        out.status.success(),
        "{}",
        String::from_utf8_lossy(&out.stderr)
    );
    assert!(String::from_utf8_lossy(&out.stdout).contains("left out with your agreement: 'd'"));
}

/// Outcomes of a study carry their session, so a face can route them; a time study's outcomes are time outcomes.
#[test]
fn study_tasks_are_session_by_repeat_and_shuffle() {
    let files = study(&StudyScenario::mice());
    let mut all = vec![FileBytes {
        name: "study.csv",
        bytes: files.table.as_bytes(),
    }];
    all.extend(files.files.iter().map(|(n, t)| FileBytes {
        name: n,
        bytes: t.as_bytes(),
    }));
    let mut recipe = Recipe::new("odour");
    recipe.repeats = 3;
    recipe.shuffles = 4;
    let plan = from_files(&all, &recipe, StudyRequest::default()).unwrap();
    let tasks = plan.tasks();
    assert_eq!(tasks.len(), 10 * (3 + 4));
    assert_eq!(tasks[7].session, Some(1));
    let o = plan.run(tasks[7]);
    assert_eq!(o.session, Some(1));
    assert!(matches!(o.outcome, AnyOutcome::Table(_)));
    assert_eq!(
        plan.fits_in(tasks[3]),
        5 * 3,
        "a shuffle runs its repeats' folds"
    );
}

/// Spike-event sessions, named with their trial tables in a `trials` column, are counted into the recipe's windows
/// one session at a time; each session reports both its files.
#[test]
fn spike_event_sessions_come_with_their_trial_tables() {
    let dir = temp_dir("events");
    let mut table = String::from("file,trials,session\n");
    for i in 0..3u64 {
        let files = popdecode::simulate::spike_events(&TimeScenario {
            trials_per_class: 12,
            units: 8,
            seed: 40 + i,
            ..TimeScenario::odours()
        });
        std::fs::write(dir.join(format!("e{i}.csv")), files.events).unwrap();
        std::fs::write(dir.join(format!("t{i}.csv")), files.trials).unwrap();
        table.push_str(&format!("e{i}.csv,t{i}.csv,s{i}\n"));
    }
    std::fs::write(dir.join("study.csv"), table).unwrap();
    let json = dir.join("out.json");
    let run = |extra: &[&str]| {
        bin()
            .arg("study")
            .arg(dir.join("study.csv"))
            .args([
                "--label",
                "odour",
                "--repeats",
                "2",
                "--shuffles",
                "5",
                "--quiet",
            ])
            .args(["--classifier", "nearest-mean", "--group-draws", "100"])
            .args(extra)
            .output()
            .unwrap()
    };
    let out = run(&[]);
    assert_eq!(out.status.code(), Some(2));
    assert!(String::from_utf8_lossy(&out.stderr).contains("--start and --end"));
    let out = run(&[
        "--start", "-0.5", "--end", "1", "--width", "0.25", "--step", "0.25", "--json",
    ]
    .into_iter()
    .chain([json.to_str().unwrap()])
    .collect::<Vec<_>>());
    assert!(
        out.status.success(),
        "{}",
        String::from_utf8_lossy(&out.stderr)
    );
    let v: serde_json::Value =
        serde_json::from_str(&std::fs::read_to_string(json).unwrap()).unwrap();
    assert_eq!(v["study"]["kind"], "events");
    assert_eq!(v["time"]["windows"].as_array().unwrap().len(), 6);
    let files = v["sessions"][1]["files"].as_array().unwrap();
    assert_eq!(files[0]["file"], "e1.csv");
    assert_eq!(files[1]["file"], "t1.csv");
}

/// A study of invented sessions of choices in two contexts (`shared`: one code for the choice in both), each
/// session's score the generalization across contexts (trained in one, tested in the other, both ways).
fn across_study(shared: bool, seed: u64) -> (StudyPlan, StudyReport) {
    use popdecode::recipe::{Across, Assignment};
    use popdecode::simulate::{context_csv, ContextScenario};
    let texts: Vec<(String, String)> = (0..5)
        .map(|i| {
            let s = ContextScenario {
                shared,
                trials_per_cell: 20,
                units: 20,
                seed: seed * 10 + i,
                ..ContextScenario::choices()
            };
            (format!("s{i}.csv"), context_csv(&s))
        })
        .collect();
    let mut r = Recipe::new("choice");
    r.classifier = Classifier::ShrinkageLda;
    r.repeats = 2;
    r.shuffles = 39;
    r.seed = seed;
    r.columns.ignore = vec!["session".into()];
    let way = |a: &str, b: &str| Assignment {
        train: vec![a.into()],
        test: vec![b.into()],
    };
    r.across = Some(Across {
        column: "context".into(),
        assignments: vec![way("citral", "hexanal"), way("hexanal", "citral")],
    });
    in_memory_study(&texts, &r, 999)
}

/// Generalization across conditions, combined over sessions: a code shared by the contexts generalizes in every
/// session and the group test finds it; an orthogonal code stays at chance and the group test does not; each
/// session's numbers are those of the session analysed alone under its seed.
#[test]
fn generalization_across_conditions_is_combined_over_sessions() {
    use popdecode::analyses::across::{run_all as across_alone, AcrossPlan};
    use popdecode::simulate::{context_csv, ContextScenario};
    let (plan, shared) = across_study(true, 3);
    let group = shared.group.as_ref().unwrap();
    assert!(group.mean > 0.75, "{}", group.mean);
    assert!(group.p_value.unwrap() < 0.01, "{:?}", group.p_value);
    let (_, orthogonal) = across_study(false, 3);
    let group = orthogonal.group.as_ref().unwrap();
    assert!((group.mean - 0.5).abs() < 0.08, "{}", group.mean);
    assert!(group.p_value.unwrap() > 0.05, "{:?}", group.p_value);
    // Session 1 alone, with its seed.
    let s = &shared.sessions[1];
    let mut alone = plan.recipe.clone();
    alone.seed = s.seed;
    let text = context_csv(&ContextScenario {
        shared: true,
        trials_per_cell: 20,
        units: 20,
        seed: 31,
        ..ContextScenario::choices()
    });
    let data =
        input::across::trial_table("s1.csv", text.as_bytes(), &alone.columns, "context").unwrap();
    let one = across_alone(&AcrossPlan::new(data, &alone).unwrap());
    assert_eq!(s.accuracy.as_ref().unwrap(), &one.summary.accuracy);
    assert_eq!(s.null, one.shuffle.null);
    assert_eq!(s.p_value, one.shuffle.p_value);
}

/// A sample of three sessions (its `session` column, at `column`) written as one file per session, with a study
/// table naming them.
fn split_by_session(sample: &str, column: usize, dir: &std::path::Path) {
    let text = std::fs::read_to_string(
        PathBuf::from(env!("CARGO_MANIFEST_DIR"))
            .join("samples")
            .join(sample),
    )
    .unwrap();
    let mut lines = text.lines();
    let header = lines.next().unwrap();
    let rows: Vec<&str> = lines.collect();
    let mut table = String::from("file,session\n");
    for s in ["s1", "s2", "s3"] {
        let mine: Vec<&str> = rows
            .iter()
            .copied()
            .filter(|l| l.split(',').nth(column) == Some(s))
            .collect();
        std::fs::write(
            dir.join(format!("{s}.csv")),
            format!("{header}\n{}\n", mine.join("\n")),
        )
        .unwrap();
        table.push_str(&format!("{s}.csv,{s}\n"));
    }
    std::fs::write(dir.join("study.csv"), table).unwrap();
}

/// `popdecode study` on the study table in `dir` with `args`, writing its JSON to `out.json`.
fn study_cli(dir: &std::path::Path, args: &[&str]) -> std::process::Output {
    bin()
        .arg("study")
        .arg(dir.join("study.csv"))
        .args([
            "--repeats",
            "2",
            "--shuffles",
            "19",
            "--group-draws",
            "500",
            "--quiet",
        ])
        .args(args)
        .output()
        .unwrap()
}

/// The page's bridge on the study table in `dir` and its three sessions, with the recipe a CLI run wrote: the
/// finished study's JSON, from outcomes in reverse order.
fn study_page(dir: &std::path::Path, cli: &serde_json::Value) -> String {
    let recipe = Recipe::from_json("recipe", &cli["recipe"].to_string()).unwrap();
    let contents: Vec<(String, Vec<u8>)> = ["study.csv", "s1.csv", "s2.csv", "s3.csv"]
        .iter()
        .map(|f| (f.to_string(), std::fs::read(dir.join(f)).unwrap()))
        .collect();
    let files: Vec<FileBytes> = contents
        .iter()
        .map(|(name, bytes)| FileBytes { name, bytes })
        .collect();
    let request = StudyRequest {
        options: StudyOptions {
            group_draws: 500,
            ..StudyOptions::default()
        },
        sessions: None,
        table: Some("study.csv".into()),
    };
    let plan = from_files(&files, &recipe, request).unwrap();
    let mut outcomes: Vec<StudyOutcome> = plan.tasks().into_iter().map(|t| plan.run(t)).collect();
    outcomes.reverse();
    plan.finish(&outcomes).json
}

/// The CLI's `study --across`: the sessions of the choices sample (split by its session column) generalize across
/// odour contexts at the group level, and so do the sessions of its binned twin in the windows that carry the
/// choice; the page's bridge gives the same bytes; pooling with `--across` is refused in one line.
#[test]
fn the_cli_generalizes_across_conditions_over_sessions() {
    let dir = temp_dir("across");
    split_by_session("choices.csv", 3, &dir);
    let json = dir.join("out.json");
    let across = [
        "--label", "choice", "--across", "context", "--ignore", "session",
    ];
    let out = study_cli(
        &dir,
        &[&across[..], &["--json", json.to_str().unwrap()]].concat(),
    );
    assert!(
        out.status.success(),
        "{}",
        String::from_utf8_lossy(&out.stderr)
    );
    let cli = std::fs::read_to_string(&json).unwrap();
    let v: serde_json::Value = serde_json::from_str(&cli).unwrap();
    assert_eq!(v["recipe"]["across"]["column"], "context");
    assert_eq!(v["sessions"].as_array().unwrap().len(), 3);
    assert!(
        v["group"]["mean"].as_f64().unwrap() > 0.75,
        "{}",
        v["group"]
    );
    assert!(
        v["group"]["p_value"].as_f64().unwrap() < 0.05,
        "{}",
        v["group"]
    );
    assert_eq!(
        format!("{}\n", study_page(&dir, &v)),
        cli,
        "the CLI writes the JSON and a newline"
    );
    let out = study_cli(&dir, &[&across[..], &["--pool"]].concat());
    assert_eq!(out.status.code(), Some(2));
    let stderr = String::from_utf8_lossy(&out.stderr);
    assert!(
        stderr.contains("pooled sessions") && stderr.lines().count() == 1,
        "{stderr}"
    );

    // Over time: the binned sample carries the choice from 0.2 to 0.6 s only.
    let dir = temp_dir("across-binned");
    split_by_session("choices_binned.csv", 4, &dir);
    let json = dir.join("out.json");
    let binned = ["--binned", "--trial", "trial", "--time", "time"];
    let out = study_cli(
        &dir,
        &[
            &across[..],
            &binned[..],
            &["--json", json.to_str().unwrap()],
        ]
        .concat(),
    );
    assert!(
        out.status.success(),
        "{}",
        String::from_utf8_lossy(&out.stderr)
    );
    let cli = std::fs::read_to_string(&json).unwrap();
    let v: serde_json::Value = serde_json::from_str(&cli).unwrap();
    assert_eq!(v["study"]["kind"], "binned");
    let windows = v["time"]["windows"].as_array().unwrap();
    assert_eq!(windows.len(), 14);
    for w in windows {
        let (t, mean) = (w["time"].as_f64().unwrap(), w["mean"].as_f64().unwrap());
        if t > 0.2 && t < 0.6 {
            assert!(mean > 0.7, "window at {t} s: {mean}");
        } else if t < 0.0 {
            assert!(
                w["significant"] == false && mean < 0.65,
                "window at {t} s: {w}"
            );
        }
    }
    assert!(
        v["time"]["clusters"]
            .as_array()
            .unwrap()
            .iter()
            .any(|c| c["significant"] == true),
        "{}",
        v["time"]
    );
    assert_eq!(format!("{}\n", study_page(&dir, &v)), cli);
}

/// Generalization across conditions in sessions over time: four invented binned sessions carry a choice code shared
/// by two contexts from 0.2 to 0.6 s only. The group curve of the generalization score forms a significant cluster
/// there and none before the choice; each session's curve and null are those of the session analysed alone under
/// its seed.
#[test]
fn generalization_across_conditions_over_time_is_combined_over_sessions() {
    use popdecode::analyses::across::{run_all_time, AcrossPlan};
    use popdecode::recipe::{Across, Assignment};
    use popdecode::simulate::{context_binned, ContextScenario};
    let text = |i: u64| {
        let s = ContextScenario {
            trials_per_cell: 16,
            units: 16,
            choice_gain: 8.0,
            sessions: 1,
            seed: 70 + i,
            ..ContextScenario::choices()
        };
        context_binned(&s, -0.4, 1.0, 0.2, (0.2, 0.6))
    };
    let texts: Vec<(String, String)> = (0..4).map(|i| (format!("s{i}.csv"), text(i))).collect();
    let mut r = Recipe::new("choice");
    r.classifier = Classifier::ShrinkageLda;
    r.repeats = 2;
    r.shuffles = 39;
    r.seed = 5;
    r.columns.ignore = vec!["session".into()];
    r.time = Some(TimeSettings::binned("trial", "time"));
    let way = |a: &str, b: &str| Assignment {
        train: vec![a.into()],
        test: vec![b.into()],
    };
    r.across = Some(Across {
        column: "context".into(),
        assignments: vec![way("citral", "hexanal"), way("hexanal", "citral")],
    });
    let (plan, report) = in_memory_study(&texts, &r, 999);
    let time = report.time.as_ref().expect("sessions over time");
    assert_eq!(time.windows.len(), 7);
    assert!(
        report.score.contains("averaged over the 7 windows"),
        "{}",
        report.score
    );
    assert!(report.score.contains("'context'"), "{}", report.score);
    let inside = |w: &popdecode::analyses::study::report::GroupWindow| w.time > 0.2 && w.time < 0.6;
    for w in &time.windows {
        if inside(w) {
            assert!(w.significant, "window at {} s: {}", w.time, w.mean);
            assert!(w.mean > 0.75, "window at {} s: {}", w.time, w.mean);
        } else if w.time < 0.0 {
            assert!(!w.significant, "window at {} s: {}", w.time, w.mean);
            assert!(
                (w.mean - 0.5).abs() < 0.12,
                "window at {} s: {}",
                w.time,
                w.mean
            );
        }
    }
    // Session 2 alone, with its seed.
    let s = &report.sessions[2];
    let mut alone = plan.recipe.clone();
    alone.seed = s.seed;
    let settings = alone.time.as_ref().unwrap().input.clone();
    let file = FileBytes {
        name: "s2.csv",
        bytes: texts[2].1.as_bytes(),
    };
    let data = input::across::time_course(&[file], &alone.columns, &settings, "context").unwrap();
    let one = run_all_time(&AcrossPlan::new(data, &alone).unwrap());
    assert_eq!(s.curve.as_ref().unwrap(), &one.curve());
    assert_eq!(s.clusters.as_ref().unwrap(), &one.clusters);
    let null: Vec<f64> = one
        .shuffle
        .null
        .iter()
        .map(|c| popdecode::stats::mean(c))
        .collect();
    assert_eq!(s.null, null);
}
