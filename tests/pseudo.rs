//! Pseudo-populations from neurons recorded in separate sessions.

use popdecode::analyses::trial_table::run_all;
use popdecode::analyses::trial_table::Plan;
use popdecode::input;
use popdecode::recipe::Classifier;
use popdecode::recipe::Recipe;
use popdecode::resample::pseudo;
use popdecode::resample::Split;
use popdecode::rng::{normal, task_rng, Stream};
use std::fmt::Write;

mod common;

/// Three sessions of 6 neurons each, 30 trials per condition per session (two conditions), each neuron weakly
/// tuned; cells of other sessions' neurons empty. `tag` makes every value unique to its trial (for tracing).
fn sessions_table(tuning: f64) -> String {
    seeded_sessions_table(tuning, 3, 60)
}

/// [`sessions_table`] drawn from simulation stream `seed`, with `trials` trials per session.
fn seeded_sessions_table(tuning: f64, seed: u64, trials: usize) -> String {
    let mut rng = task_rng(seed, Stream::Simulation, 7, 0);
    let mut text = String::from("session,cond");
    for s in 0..3 {
        for u in 0..6 {
            write!(text, ",s{s}u{u}").unwrap();
        }
    }
    text.push('\n');
    for s in 0..3 {
        for t in 0..trials {
            let cond = t % 2;
            write!(text, "S{s},{}", if cond == 0 { "a" } else { "b" }).unwrap();
            for s2 in 0..3 {
                for u in 0..6 {
                    if s2 == s {
                        let sign = if (u + s) % 2 == 0 { 1.0 } else { -1.0 };
                        let v = sign * tuning * cond as f64 + normal(&mut rng);
                        write!(text, ",{v}").unwrap();
                    } else {
                        text.push(',');
                    }
                }
            }
            text.push('\n');
        }
    }
    text
}

fn recipe() -> Recipe {
    let mut r = Recipe::new("cond");
    r.columns.pseudo = Some("session".into());
    r.classifier = Classifier::ShrinkageLda;
    r.repeats = 5;
    r.shuffles = 19;
    r
}

/// Neurons from three sessions decode better together than one session's alone, which is the point of a
/// pseudo-population; the report says what the pairing does.
#[test]
fn sessions_combine_into_a_better_decoder() {
    let text = sessions_table(0.5);
    let r = recipe();
    let data = input::trial_table("sessions.csv", text.as_bytes(), &r.columns).unwrap();
    assert_eq!(data.pseudo.as_ref().unwrap().len(), 18);
    let plan = Plan::new(data.clone(), &r).unwrap();
    assert_eq!(plan.scheme.split, Split::Pseudo { folds: 5 });
    // 30 trials per (session, condition) in 5 folds: 6 per fold, so 6 × 5 × 2 = 60 pseudo-trials per repeat.
    assert_eq!(plan.scheme.trials_per_repeat, 60);
    let all = run_all(&plan);
    // Session S0 alone, as an ordinary trial table: its rows and its six neurons.
    let s0: String = text
        .lines()
        .filter(|l| l.starts_with("session") || l.starts_with("S0"))
        .map(|l| l.split(',').take(8).collect::<Vec<_>>().join(",") + "\n")
        .collect();
    let mut single = r.clone();
    single.shuffles = 0;
    single.columns.pseudo = None;
    single.columns.ignore = vec!["session".into()];
    let one_session = input::trial_table("s0.csv", s0.as_bytes(), &single.columns).unwrap();
    let one = run_all(&Plan::new(one_session.clone(), &single).unwrap());
    assert!(
        all.summary.accuracy.mean > one.summary.accuracy.mean + 0.05,
        "{} vs {}",
        all.summary.accuracy.mean,
        one.summary.accuracy.mean
    );
    assert!(all.shuffle.p_value.unwrap() <= 0.05);
    assert!(all
        .warnings
        .iter()
        .any(|w| w.contains("noise correlations")));
    let methods = popdecode::analyses::trial_table::methods::paragraph(&all);
    assert!(methods.contains("pseudo-trials"), "{methods}");
}

/// Training and test pseudo-trials are built from disjoint real trials: every value is unique to its real trial, so
/// a value found in two folds would betray a reused trial.
#[test]
fn folds_use_disjoint_real_trials() {
    let text = sessions_table(0.5);
    let r = recipe();
    let data = input::trial_table("sessions.csv", text.as_bytes(), &r.columns).unwrap();
    let x: Vec<f64> = data.x.iter().copied().collect();
    let (rows, labels, folds) = pseudo::build(
        &data,
        &x,
        &data.y,
        5,
        &mut task_rng(1, Stream::Repeat, 0, 0),
    );
    let p = data.n_features();
    assert_eq!(labels.len(), 60);
    let mut seen: Vec<(u64, usize)> = Vec::new();
    for (t, row) in rows.chunks_exact(p).enumerate() {
        assert!(
            row.iter().all(|v| v.is_finite()),
            "a pseudo-trial has a value from every session"
        );
        for v in row {
            seen.push((v.to_bits(), folds[t]));
        }
    }
    seen.sort_unstable();
    for pair in seen.windows(2) {
        assert!(pair[0].0 != pair[1].0, "a real trial's value appears twice");
    }
    // Balanced: each fold has as many pseudo-trials of each condition.
    for f in 0..5 {
        let a = (0..60).filter(|&t| folds[t] == f && labels[t] == 0).count();
        let b = (0..60).filter(|&t| folds[t] == f && labels[t] == 1).count();
        assert_eq!(a, b);
    }
}

#[test]
fn bad_session_layouts_are_named() {
    let r = recipe();
    let shared = "session,cond,n1,n2\nS0,a,1,\nS1,b,2,3\n";
    let e = input::trial_table("x.csv", shared.as_bytes(), &r.columns)
        .unwrap_err()
        .to_string();
    assert!(
        e.contains("x.csv, line 3, column 'n1'") && e.contains("sessions 'S0' and 'S1'"),
        "{e}"
    );
    let gap = "session,cond,n1,n2\nS0,a,1,\nS0,b,,\nS1,a,,3\nS1,b,,4\n";
    let e = input::trial_table("x.csv", gap.as_bytes(), &r.columns)
        .unwrap_err()
        .to_string();
    assert!(
        e.contains("line 3, column 'n1'") && e.contains("missing"),
        "{e}"
    );
    let text = sessions_table(0.5);
    let mut few = r.clone();
    few.folds = popdecode::recipe::Folds::K(40);
    let data = input::trial_table("sessions.csv", text.as_bytes(), &few.columns).unwrap();
    let e = Plan::new(data.clone(), &few).err().unwrap().to_string();
    assert!(
        e.contains("session 'S0' has 30 trials of 'a', fewer than the 40 folds"),
        "{e}"
    );
}

/// The neuron analyses on a pseudo-population (issue 13, item 2): the weights and patterns of every linear decoder
/// are fitted on pseudo-trials (the table itself is mostly empty cells), so they finish and are finite; before,
/// the SVM and LDA ran on missing values without end and logistic regression printed NaN.
#[test]
fn neuron_weights_of_a_pseudo_population_are_finite() {
    use popdecode::analyses::neurons::{run_all as run_neurons, NeuronsPlan};
    let text = sessions_table(0.8);
    for classifier in [
        Classifier::LinearSvm,
        Classifier::ShrinkageLda,
        Classifier::Logistic,
    ] {
        let mut r = recipe();
        r.classifier = classifier;
        r.repeats = 2;
        r.shuffles = 0;
        let data = input::trial_table("sessions.csv", text.as_bytes(), &r.columns).unwrap();
        let report = run_neurons(&NeuronsPlan::new(data, &r, 1).unwrap());
        let (w, a) = (report.weights.unwrap(), report.patterns.unwrap());
        assert_eq!(w.len(), 18);
        assert!(
            w.iter().chain(&a).flatten().all(|v| v.is_finite()),
            "{classifier:?}"
        );
        assert!(
            a.iter().flatten().any(|v| v.abs() > 0.1),
            "{classifier:?}: patterns {a:?}"
        );
        assert!(report.weights_fitted_on.unwrap().contains("pseudo-trials"));
        // Every neuron is tuned, its sign alternating by neuron and session: the patterns follow those signs (up
        // to the output's orientation) for nearly every neuron.
        let agree = (0..18)
            .filter(|&j| {
                let (session, unit) = (j / 6, j % 6);
                let sign = if (unit + session) % 2 == 0 { 1.0 } else { -1.0 };
                sign * a[j][0] * a[0][0] > 0.0
            })
            .count();
        assert!(
            agree >= 16,
            "{classifier:?}: {agree} of 18 patterns follow the tuning: {a:?}"
        );
    }
}

/// The shuffle control of a pseudo-population is calibrated: three sessions of 80 trials per condition without any
/// tuning, 199 shuffles, 2 repeats observed and 2 per shuffle; p < 0.05 in a share of 300 tables inside the
/// binomial 99 % interval around 0.05 (P(p < 0.05) = 9/200 for m = 199, Phipson & Smyth 2010). Ties between the
/// observed and a shuffled accuracy only lower it, and with few pseudo-trials they are common: measured on 600
/// tables (2026-12-04), P(p < 0.05) was 0.027 and P(p < 0.5) 0.46 with 30 trials per condition and session, 0.045
/// and 0.475 with 120; hence 80 here.
#[test]
fn pseudo_population_shuffle_control_is_calibrated() {
    let datasets = 300;
    let mut rejections = 0;
    for d in 0..datasets {
        let text = seeded_sessions_table(0.0, 30_000 + d, 160);
        let mut r = recipe();
        r.repeats = 2;
        r.shuffles = 199;
        r.shuffle_repeats = Some(2);
        r.seed = d;
        let data = input::trial_table("sessions.csv", text.as_bytes(), &r.columns).unwrap();
        let report = run_all(&Plan::new(data, &r).unwrap());
        rejections += u64::from(report.shuffle.p_value.unwrap() < 0.05);
    }
    common::assert_calibrated("a pseudo-population", rejections, datasets);
}
