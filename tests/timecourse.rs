//! Time-resolved decoding on invented recordings: windows, clusters, generalization, and agreement with the
//! trial-table protocol.

use popdecode::analyses::time_course::TimePlan;
use popdecode::analyses::time_course::{run_all, TimeReport};
use popdecode::analyses::trial_table::report::Report;
use popdecode::analyses::trial_table::Plan;
use popdecode::data::time::TimeDataset;
use popdecode::input;
use popdecode::input::FileBytes;
use popdecode::recipe::Classifier;
use popdecode::recipe::{Recipe, TimeSettings};
use popdecode::resample::Task;
use popdecode::simulate::{binned, spike_events, TimeScenario};
use std::fmt::Write;

mod common;

fn events_recipe(start: f64, end: f64, repeats: usize, shuffles: usize) -> Recipe {
    let mut r = Recipe::new("odour");
    r.classifier = Classifier::ShrinkageLda;
    r.repeats = repeats;
    r.shuffles = shuffles;
    r.time = Some(TimeSettings::events(start, end));
    r
}

fn load(files: &[(&str, &str)], recipe: &Recipe) -> popdecode::Result<TimeDataset> {
    let f: Vec<FileBytes> = files
        .iter()
        .map(|(name, text)| FileBytes {
            name,
            bytes: text.as_bytes(),
        })
        .collect();
    popdecode::input::time_course(&f, &recipe.columns, &recipe.time.as_ref().unwrap().input)
}

fn analyse(scenario: &TimeScenario, recipe: &Recipe) -> TimeReport {
    let files = spike_events(scenario);
    let data = load(
        &[("spikes.csv", &files.events), ("trials.csv", &files.trials)],
        recipe,
    )
    .expect("valid recording");
    run_all(&TimePlan::new(data.clone(), recipe).expect("valid plan"))
}

/// The acceptance case (our own invented scenario): information only from 0.2 s to 0.6 s after onset.
/// Before onset the curve stays inside the null band; the one significant cluster spans 0.2–0.6 s to within one
/// step. Windows are 0.1 s wide, so a window centred within half a width of the period already overlaps it.
#[test]
fn information_between_0_2_and_0_6_s_is_found_there_and_only_there() {
    let scenario = TimeScenario {
        seed: 31,
        ..TimeScenario::odours()
    };
    let mut recipe = events_recipe(-0.5, 1.0, 10, 100);
    recipe.shuffle_repeats = Some(2);
    let r = analyse(&scenario, &recipe);
    let step = 0.05;
    for w in r.windows.iter().filter(|w| w.end <= 0.0) {
        assert!(
            w.accuracy.mean <= w.null_p95.unwrap(),
            "before onset, {} s: {} above the null's 95th percentile {:?}",
            w.time,
            w.accuracy.mean,
            w.null_p95
        );
        assert!(!w.significant);
    }
    let sig: Vec<_> = r.clusters.iter().filter(|c| c.significant).collect();
    assert_eq!(sig.len(), 1, "clusters: {:?}", r.clusters);
    let c = sig[0];
    assert!(
        (c.start - 0.2).abs() <= step + 1e-9 && (c.end - 0.6).abs() <= step + 1e-9,
        "cluster {} to {} s",
        c.start,
        c.end
    );
    assert!(c.p_value < 0.05);
    let onset = r.onset.as_ref().expect("an onset");
    assert_eq!(onset.time, c.start);
}

/// Spike counting against a direct count on hand-made trains, spikes on window edges included. Convention:
/// [start, start + width) (documented in `timecourse::windows`); rates are counts / width.
#[test]
fn window_counts_match_a_direct_count_with_spikes_on_edges() {
    // Two trials; a and b so there are two classes. Edges at 0, 0.1, 0.2, 0.3 (width 0.1, step 0.1), or
    // overlapping windows [0, 0.2), [0.1, 0.3) (width 0.2, step 0.1).
    let events = "trial,neuron,time\n\
                  t1,n1,0.0\nt1,n1,0.1\nt1,n1,0.15\nt1,n1,0.2\nt1,n1,0.3\nt1,n1,-0.05\n\
                  t1,n2,0.0999\nt1,n2,0.2999\n\
                  t2,n1,0.05\nt2,n2,0.1\nt2,n2,0.2\n";
    let trials = "trial,odour\nt1,a\nt2,b\n";
    let spikes: &[(&str, &str, f64)] = &[
        ("t1", "n1", 0.0),
        ("t1", "n1", 0.1),
        ("t1", "n1", 0.15),
        ("t1", "n1", 0.2),
        ("t1", "n1", 0.3),
        ("t1", "n1", -0.05),
        ("t1", "n2", 0.0999),
        ("t1", "n2", 0.2999),
        ("t2", "n1", 0.05),
        ("t2", "n2", 0.1),
        ("t2", "n2", 0.2),
    ];
    for (width, edges) in [
        (0.1, vec![(0.0, 0.1), (0.1, 0.2), (0.2, 0.3)]),
        (0.2, vec![(0.0, 0.2), (0.1, 0.3)]),
    ] {
        let mut recipe = events_recipe(0.0, 0.3, 1, 0);
        if let Some(t) = recipe.time.as_mut() {
            if let popdecode::recipe::TimeInput::Events {
                width: w, step: s, ..
            } = &mut t.input
            {
                *w = width;
                *s = 0.1;
            }
        }
        let data = load(&[("e.csv", events), ("t.csv", trials)], &recipe).unwrap();
        assert_eq!(data.neurons, vec!["n1", "n2"]);
        assert_eq!(data.windows.len(), edges.len());
        for (k, &(lo, hi)) in edges.iter().enumerate() {
            assert_eq!((data.windows[k].start, data.windows[k].end), (lo, hi));
            for (i, trial) in ["t1", "t2"].iter().enumerate() {
                for (j, neuron) in ["n1", "n2"].iter().enumerate() {
                    let direct = spikes
                        .iter()
                        .filter(|(t, n, s)| t == trial && n == neuron && lo <= *s && *s < hi)
                        .count();
                    assert_eq!(
                        data.x[[k, i, j]],
                        direct as f64 / width,
                        "window [{lo}, {hi}), trial {trial}, neuron {neuron}"
                    );
                }
            }
        }
        assert_eq!(data.spikes_total, 11);
    }
    // By hand, for the abutting windows: t1/n1 has 0.0 in the first, 0.1 and 0.15 in the second, 0.2 in the third;
    // 0.3 and -0.05 fall outside.
    let data = load(&[("e.csv", events), ("t.csv", trials)], &{
        let mut r = events_recipe(0.0, 0.3, 1, 0);
        if let Some(t) = r.time.as_mut() {
            if let popdecode::recipe::TimeInput::Events { step, .. } = &mut t.input {
                *step = 0.1;
            }
        }
        r
    })
    .unwrap();
    let n1: Vec<f64> = (0..3).map(|k| data.x[[k, 0, 0]] * 0.1).collect();
    assert_eq!(n1, vec![1.0, 2.0, 1.0]);
}

/// Absolute spike times with each trial's alignment time in the trial table give the same counts as times given
/// relative to alignment, edges included (5.3 − 5.0 is 0.2999…98 in binary and must still count as 0.3).
#[test]
fn alignment_column_gives_the_same_counts_as_relative_times() {
    let relative = TimeScenario {
        trials_per_class: 8,
        ..TimeScenario::odours()
    };
    let absolute = TimeScenario {
        absolute_times: true,
        ..relative.clone()
    };
    let (rel, abs) = (spike_events(&relative), spike_events(&absolute));
    let recipe = events_recipe(-0.5, 1.0, 1, 0);
    let mut aligned = recipe.clone();
    if let Some(t) = aligned.time.as_mut() {
        if let popdecode::recipe::TimeInput::Events { align, .. } = &mut t.input {
            *align = Some("onset".into());
        }
    }
    let a = load(&[("e.csv", &rel.events), ("t.csv", &rel.trials)], &recipe).unwrap();
    let b = load(&[("e.csv", &abs.events), ("t.csv", &abs.trials)], &aligned).unwrap();
    assert_eq!(a.x, b.x);
    let edge = "trial,neuron,time\nt1,n1,5.3\nt2,n1,1.0\n";
    let trials = "trial,odour,onset\nt1,a,5.0\nt2,b,1.0\n";
    let mut r = aligned.clone();
    if let Some(t) = r.time.as_mut() {
        if let popdecode::recipe::TimeInput::Events {
            start, end, step, ..
        } = &mut t.input
        {
            (*start, *end, *step) = (0.0, 0.4, 0.1);
        }
    }
    let d = load(&[("e.csv", edge), ("t.csv", trials)], &r).unwrap();
    // Windows [0, .1) [.1, .2) [.2, .3) [.3, .4): the spike at 0.3 after alignment is in the last one only.
    let t1: Vec<f64> = (0..4).map(|k| d.x[[k, 0, 0]]).collect();
    assert_eq!(t1, vec![0.0, 0.0, 0.0, 10.0]);
}

/// Temporal generalization's diagonal is the decoding curve for the same seed (the same fits), and asking for the
/// matrix does not change the curve.
#[test]
fn generalization_diagonal_is_the_curve() {
    let scenario = TimeScenario {
        trials_per_class: 20,
        units: 10,
        ..TimeScenario::odours()
    };
    let plain = events_recipe(-0.2, 0.8, 4, 12);
    let mut gen = plain.clone();
    gen.time.as_mut().unwrap().generalize = true;
    let (a, b) = (analyse(&scenario, &plain), analyse(&scenario, &gen));
    let g = b.generalization.as_ref().expect("matrix");
    let curve = a.curve();
    assert_eq!(g.scores.len(), curve.len());
    for (w, &v) in curve.iter().enumerate() {
        assert_eq!(g.scores[w][w], v, "window {w}");
    }
    assert_eq!(a.windows, b.windows);
    assert_eq!(a.shuffle.null, b.shuffle.null);
    // Off the diagonal the matrix is not a copy of it.
    assert!((0..curve.len()).any(|w| g.scores[w][(w + 5) % curve.len()] != curve[w]));
}

/// Window w of a time course is exactly a trial-table analysis of window w alone: one protocol, one set of random
/// streams. Checked repeat by repeat, shuffles included.
#[test]
fn each_window_equals_a_trial_table_analysis_of_that_window() {
    let scenario = TimeScenario {
        trials_per_class: 15,
        units: 8,
        ..TimeScenario::odours()
    };
    let mut recipe = events_recipe(0.0, 0.6, 5, 6);
    recipe.classifier = Classifier::LinearSvm;
    recipe.columns.group = Some("session".into());
    recipe.folds = popdecode::recipe::Folds::K(3);
    let files = spike_events(&scenario);
    let data = load(
        &[("spikes.csv", &files.events), ("trials.csv", &files.trials)],
        &recipe,
    )
    .unwrap();
    let plan = TimePlan::new(data.clone(), &recipe).unwrap();
    let report = run_all(&plan);
    for w in [0, 3, data.windows.len() - 1] {
        let mut csv = String::from("odour,session");
        for n in &data.neurons {
            write!(csv, ",{n}").unwrap();
        }
        csv.push('\n');
        let x = data.window(w);
        let p = data.n_neurons();
        for i in 0..data.n_trials() {
            write!(
                csv,
                "{},{}",
                data.classes[data.y[i]],
                data.group_names[data.groups.as_ref().unwrap()[i]]
            )
            .unwrap();
            for v in &x[i * p..(i + 1) * p] {
                write!(csv, ",{v:?}").unwrap();
            }
            csv.push('\n');
        }
        let mut flat = recipe.clone();
        flat.time = None;
        let table = input::trial_table("window.csv", csv.as_bytes(), &flat.columns).unwrap();
        let single = Plan::new(table.clone(), &flat).unwrap();
        let outcomes: Vec<_> = single.tasks().into_iter().map(|t| single.run(t)).collect();
        let r = Report::build(&single, &outcomes);
        let by_repeat: Vec<f64> = report.repeats.iter().map(|t| t.accuracy[w]).collect();
        let flat_by_repeat: Vec<f64> = r.repeats.iter().map(|t| t.accuracy).collect();
        assert_eq!(by_repeat, flat_by_repeat, "window {w}");
        let null: Vec<f64> = report.shuffle.null.iter().map(|n| n[w]).collect();
        assert_eq!(null, r.shuffle.null, "window {w}");
    }
}

/// Cluster-level error under the global null (Maris & Oostenveld, 2007): on recordings with no information at any
/// window, a significant cluster appears in about 5 % of them or fewer. 200 recordings; the count must lie at or
/// below the upper end of the binomial 99 % interval around 0.05 for n = 200. Observed repeats (2) outnumber those
/// per shuffle (1), which can only make the test more conservative.
#[test]
fn cluster_test_keeps_its_error_rate_without_information() {
    let mut hits = 0;
    let n = 200;
    for seed in 0..n {
        let scenario = TimeScenario {
            trials_per_class: 12,
            units: 6,
            tuning: 0.0,
            classes: vec!["a".into(), "b".into()],
            seed: 1000 + seed,
            ..TimeScenario::odours()
        };
        let mut recipe = events_recipe(0.0, 1.0, 2, 39);
        recipe.shuffle_repeats = Some(1);
        recipe.folds = popdecode::recipe::Folds::K(4);
        if let Some(t) = recipe.time.as_mut() {
            if let popdecode::recipe::TimeInput::Events { width, step, .. } = &mut t.input {
                (*width, *step) = (0.1, 0.1);
            }
        }
        recipe.seed = seed;
        let r = analyse(&scenario, &recipe);
        hits += usize::from(r.clusters.iter().any(|c| c.significant));
    }
    let bound = popdecode::stats::binomial::quantile(0.995, n, 0.05);
    assert!(
        hits as u64 <= bound,
        "{hits} of {n} null recordings had a significant cluster; bound {bound}"
    );
    assert!(
        hits > 0 || n < 100,
        "the test never rejects: suspiciously conservative"
    );
}

/// A binned table (one row per trial × bin) reads into the same shape, each bin one window at its time.
#[test]
fn binned_table_reads_and_decodes() {
    let scenario = TimeScenario::odours();
    let text = binned(&scenario, 0.1);
    let mut recipe = events_recipe(0.0, 1.0, 4, 0);
    recipe.time = Some(TimeSettings::binned("trial", "time"));
    recipe.columns.group = Some("session".into());
    let data = load(&[("binned.csv", &text)], &recipe).unwrap();
    assert_eq!(data.windows.len(), 15);
    assert_eq!(data.n_trials(), 120);
    assert_eq!(data.n_neurons(), 24);
    assert_eq!(data.windows[0].time, -0.45);
    let r = run_all(&TimePlan::new(data.clone(), &recipe).unwrap());
    let curve = r.curve();
    // Inside the informative period the scenario is well above chance (1/3); before onset it is not.
    assert!(curve[7] > 0.6, "{curve:?}"); // 0.25 s
    assert!(curve[0] < 0.5, "{curve:?}");
    assert_eq!(r.input.kind, "binned");
}

fn load_err(files: &[(&str, &str)], recipe: &Recipe) -> String {
    load(files, recipe).unwrap_err().to_string()
}

/// Malformed recordings get a message naming the file, line and column.
#[test]
fn bad_recordings_are_named_by_file_line_and_column() {
    let mut binned_recipe = events_recipe(0.0, 1.0, 1, 0);
    binned_recipe.time = Some(TimeSettings::binned("trial", "time"));
    let cases: &[(&str, &str, &[&str])] = &[
        (
            "trial,time,odour,n1\nt1,0,a,1\nt1,0.1,b,2\n",
            "binned",
            &["b.csv, line 3, column 'odour'", "trial 't1'", "line 2"],
        ),
        (
            "trial,time,odour,n1\nt1,0,a,1\nt1,0,a,2\n",
            "binned",
            &["line 3, column 'time'", "second row"],
        ),
        (
            "trial,time,odour,n1\nt1,0,a,1\nt1,0.1,a,2\nt2,0,b,3\n",
            "binned",
            &["trial 't2'", "no row for time 0.1"],
        ),
        (
            "trial,time,odour,n1\nt1,0,a,x\n",
            "binned",
            &["line 2, column 'n1'", "'x' is not a number"],
        ),
        (
            "trial,time,odour,n1\nt1,soon,a,1\n",
            "binned",
            &["line 2, column 'time'", "'soon'"],
        ),
    ];
    for (text, _, wants) in cases {
        let msg = load_err(&[("b.csv", text)], &binned_recipe);
        for want in *wants {
            assert!(msg.contains(want), "{msg:?} lacks {want:?}");
        }
    }
    let recipe = events_recipe(0.0, 1.0, 1, 0);
    let trials = "trial,odour\nt1,a\nt2,b\n";
    let event_cases: &[(&str, &str, &[&str])] = &[
        (
            "trial,neuron,time\nt1,n1,0.1\nt9,n1,0.2\n",
            trials,
            &[
                "e.csv, line 3, column 'trial'",
                "'t9' is not in the trial table",
            ],
        ),
        ("trial,neuron,time\nt1,n1,0,5\n", trials, &["e.csv, line 2"]),
        (
            "trial,neuron,time\nt1,n1,0.1\nt2,n1,late\n",
            trials,
            &["e.csv, line 3, column 'time'", "'late'"],
        ),
        (
            "trial,unit,time\nt1,n1,0.1\n",
            trials,
            &["e.csv", "no column named 'neuron'"],
        ),
        (
            "trial,neuron,time\nt1,n1,0.1\n",
            "trial,odour\nt1,a\nt1,b\n",
            &["t.csv, line 3, column 'trial'", "listed twice"],
        ),
        (
            "trial,neuron,time\nt1,n1,5\n",
            trials,
            &["none of the 1 spikes falls inside the windows"],
        ),
    ];
    for (events, trials, wants) in event_cases {
        let msg = load_err(&[("e.csv", events), ("t.csv", trials)], &recipe);
        for want in *wants {
            assert!(msg.contains(want), "{msg:?} lacks {want:?}");
        }
    }
}

/// Tasks give the same outcome whatever order they run in.
#[test]
fn task_order_does_not_matter() {
    let scenario = TimeScenario {
        trials_per_class: 10,
        units: 6,
        ..TimeScenario::odours()
    };
    let mut recipe = events_recipe(0.0, 0.8, 3, 3);
    recipe.time.as_mut().unwrap().generalize = true;
    let files = spike_events(&scenario);
    let data = load(
        &[("spikes.csv", &files.events), ("trials.csv", &files.trials)],
        &recipe,
    )
    .unwrap();
    let plan = TimePlan::new(data.clone(), &recipe).unwrap();
    let forward: Vec<_> = plan.tasks().into_iter().map(|t| plan.run(t)).collect();
    let mut backward: Vec<_> = plan
        .tasks()
        .into_iter()
        .rev()
        .map(|t| plan.run(t))
        .collect();
    backward.reverse();
    assert_eq!(forward, backward);
    assert_eq!(
        TimeReport::build(&plan, &forward).to_json(),
        TimeReport::build(&plan, &backward.into_iter().rev().collect::<Vec<_>>()).to_json()
    );
    assert_eq!(plan.fits_in(Task::Repeat(0)), 5 * data.windows.len());
}

/// Poisson naive Bayes on spike events gets the exact counts (rates × the window width), so it raises no warning
/// about rates and decodes the informative period.
#[test]
fn poisson_bayes_on_events_uses_counts() {
    let scenario = TimeScenario {
        trials_per_class: 20,
        ..TimeScenario::odours()
    };
    let mut recipe = events_recipe(0.0, 0.8, 4, 0);
    recipe.classifier = Classifier::PoissonNb;
    let files = spike_events(&scenario);
    let data = load(
        &[("spikes.csv", &files.events), ("trials.csv", &files.trials)],
        &recipe,
    )
    .unwrap();
    let plan = TimePlan::new(data.clone(), &recipe).unwrap();
    assert!(
        plan.scheme
            .warnings
            .iter()
            .all(|w| !w.contains("whole numbers")),
        "{:?}",
        plan.scheme.warnings
    );
    let r = run_all(&plan);
    let at = |t: f64| {
        r.windows
            .iter()
            .position(|w| (w.time - t).abs() < 1e-9)
            .unwrap()
    };
    assert!(r.curve()[at(0.4)] > 0.6, "{:?}", r.curve());
}

/// The recording's files with only the first `keep` trials of class "b" left in its trial table and events: two
/// classes of unequal size.
fn fewer_of_b(
    files: popdecode::simulate::EventFiles,
    keep: usize,
) -> popdecode::simulate::EventFiles {
    let mut seen = 0;
    let mut dropped = std::collections::HashSet::new();
    let trials: Vec<&str> = files
        .trials
        .lines()
        .filter(|line| {
            let cells: Vec<&str> = line.split(',').collect();
            if cells.get(1) == Some(&"b") {
                seen += 1;
                if seen > keep {
                    dropped.insert(cells[0].to_string());
                    return false;
                }
            }
            true
        })
        .collect();
    let events: Vec<&str> = files
        .events
        .lines()
        .filter(|line| !dropped.contains(line.split(',').next().unwrap_or("")))
        .collect();
    popdecode::simulate::EventFiles {
        events: events.join("\n") + "\n",
        trials: trials.join("\n") + "\n",
    }
}

/// Recordings with information only from 0.2 s on, tested with temporal generalization: how many show a
/// significant cell trained at a window that ends by 0 s (trained where there is no information), and how many a
/// significant cell trained and tested inside the information? With `keep_b`, only that many trials of class "b"
/// are left in each recording ([`fewer_of_b`]).
fn pre_onset_rate(
    null: popdecode::recipe::GeneralizationNull,
    n: u64,
    (repeats, shuffle_repeats): (usize, usize),
    keep_b: Option<usize>,
) -> (usize, usize) {
    let (mut hits, mut found) = (0, 0);
    for seed in 0..n {
        let scenario = TimeScenario {
            trials_per_class: 12,
            units: 6,
            tuning: 0.9,
            tuned_fraction: 1.0,
            classes: vec!["a".into(), "b".into()],
            info_start: 0.2,
            info_end: 1.0,
            seed: 5000 + seed,
            ..TimeScenario::odours()
        };
        let mut recipe = events_recipe(-0.5, 1.0, repeats, 39);
        recipe.shuffle_repeats = Some(shuffle_repeats);
        recipe.folds = popdecode::recipe::Folds::K(4);
        recipe.seed = seed;
        if let Some(t) = recipe.time.as_mut() {
            t.generalize = true;
            t.generalization_null = Some(null);
            if let popdecode::recipe::TimeInput::Events { width, step, .. } = &mut t.input {
                (*width, *step) = (0.1, 0.1);
            }
        }
        let r = match keep_b {
            None => analyse(&scenario, &recipe),
            Some(keep) => {
                let files = fewer_of_b(spike_events(&scenario), keep);
                let data = load(
                    &[("spikes.csv", &files.events), ("trials.csv", &files.trials)],
                    &recipe,
                )
                .expect("valid recording");
                run_all(&TimePlan::new(data, &recipe).expect("valid plan"))
            }
        };
        let windows: Vec<(f64, f64)> = r.windows.iter().map(|w| (w.start, w.end)).collect();
        let g = r.generalization.as_ref().unwrap();
        let (pre, inside) = common::pre_onset_and_inside(g, &windows);
        hits += usize::from(pre);
        found += usize::from(inside);
    }
    (hits, found)
}

/// With the default null of the generalization matrix (only the training labels permuted), cells trained before
/// any information are significant in no more recordings than the α rate allows: the cluster test's family-wise
/// error over cells whose training window carries no information (Maris & Oostenveld, 2007). 200 recordings, the
/// count must lie below the binomial 99 % upper bound for α = 0.05 (issue 13, item 3; the all-labels null, which
/// permutes the test labels too, exceeds it on these recordings: see README).
#[test]
fn generalization_cells_trained_before_information_keep_the_error_rate() {
    use popdecode::recipe::GeneralizationNull;
    let n = 200;
    let (hits, found) = pre_onset_rate(GeneralizationNull::TrainingLabels, n, (2, 1), None);
    // The test still finds the information where it is.
    common::assert_keeps_error_rate(hits, found, n, 90);
}

/// The same with many repeats, and several per shuffle, as the defaults run (10 repeats per shuffle): the null's
/// training labels must recur across a shuffle's repeats as the observed labels recur across the observed ones.
/// When each repeat of a shuffle drew labels of its own, their chance alignments averaged away in the shuffle's
/// mean, the null was narrower than the observed mean's spread, and cells trained before any information came out
/// significant in 33 of these 100 recordings (bound 11).
#[test]
fn generalization_cells_trained_before_information_keep_the_error_rate_over_many_repeats() {
    use popdecode::recipe::GeneralizationNull;
    let n = 100;
    let (hits, found) = pre_onset_rate(GeneralizationNull::TrainingLabels, n, (10, 5), None);
    // The test still finds the information where it is.
    common::assert_keeps_error_rate(hits, found, n, 90);
}

/// The same with unequal classes (12 trials of "a", 4 of "b"): balancing and folds are drawn from the observed
/// labels, so the training trials' permuted labels are not balanced in the null's fits (about 3:1 on average) while
/// the observed fits' are; the null must still keep the error rate. Measured 2026-12-04: 3 of 200 recordings with
/// 2 repeats and 1 per shuffle, 5 of 100 with 10 repeats and 5 per shuffle (bounds 19 and 11).
#[test]
fn generalization_cells_trained_before_information_keep_the_error_rate_with_unequal_classes() {
    use popdecode::recipe::GeneralizationNull;
    let n = 200;
    let (hits, found) = pre_onset_rate(GeneralizationNull::TrainingLabels, n, (2, 1), Some(4));
    // The test still finds the information where it is.
    common::assert_keeps_error_rate(hits, found, n, 80);
}
