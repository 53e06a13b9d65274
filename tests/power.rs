//! Planning the next recording: the power analysis checked against fresh data from the model that made the
//! recording, against data without information, with noise neurons, and for what its subsamples may contain; and
//! its faces (thread counts, task order, the page's bridge against the command line).

use popdecode::analyses::neurons::{NeuronTask, NeuronsPlan};
use popdecode::analyses::power::report::PowerReport;
use popdecode::analyses::power::{run_all, PowerOutcome, PowerPlan, PowerTask};
use popdecode::analyses::trial_table::{report::Report, Plan};
use popdecode::analyses::Analysis;
use popdecode::input;
use popdecode::recipe::{Classifier, PowerSettings, Recipe};
use popdecode::rng::{normal, task_rng, Stream};
use popdecode::stats::binomial;
use std::fmt::Write;
use std::process::Command;

/// An invented recording: two conditions, `per_class` trials each (interleaved), `units` neurons with unit-SD
/// Gaussian noise, of which the first `informative` have condition means −effect/2 and +effect/2; the rest carry
/// nothing. Stream `stream` makes its noise, so two streams are two fresh recordings of the same model.
fn gaussian(
    per_class: usize,
    units: usize,
    informative: usize,
    effect: f64,
    stream: u64,
) -> String {
    let mut rng = task_rng(77, Stream::Simulation, stream, 0);
    let mut out = String::from("trial,cond");
    for u in 0..units {
        write!(out, ",u{u:02}").unwrap();
    }
    out.push('\n');
    for t in 0..2 * per_class {
        let class = t % 2;
        write!(out, "t{t},{}", ["a", "b"][class]).unwrap();
        for u in 0..units {
            let mean = if u < informative {
                effect * (class as f64 - 0.5)
            } else {
                0.0
            };
            write!(out, ",{}", mean + normal(&mut rng)).unwrap();
        }
        out.push('\n');
    }
    out
}

/// The recipe every check starts from: shrinkage LDA (fast), 5 folds, each subsample with 2 repeats and 19
/// shuffles of 2 repeats (the command line's defaults).
fn recipe(settings: PowerSettings) -> Recipe {
    let mut r = Recipe::new("cond");
    r.classifier = Classifier::ShrinkageLda;
    r.repeats = 2;
    r.shuffles = 19;
    r.power = Some(settings);
    r
}

fn plan(csv: &str, recipe: &Recipe) -> PowerPlan {
    let data = input::trial_table("invented.csv", csv.as_bytes(), &recipe.columns).unwrap();
    PowerPlan::new(data, recipe).unwrap()
}

/// Two-sided 99 % binomial bound on the count of successes in `n` trials of probability `p`.
fn binomial_99(n: usize, p: f64) -> (u64, u64) {
    (
        binomial::quantile(0.005, n as u64, p),
        binomial::quantile(0.995, n as u64, p),
    )
}

/// The power analysis with only the trials axis (the other two reduced to the one whole-population point).
fn trials_only(sizes: Vec<usize>, subsamples: usize) -> PowerSettings {
    PowerSettings {
        trials: Some(sizes),
        neurons: Some(vec![6]),
        noise: Some(vec![0]),
        subsamples,
        ..PowerSettings::default()
    }
}

/// On a population with a known effect, the power measured by subsampling a large recording agrees with the power
/// found by analysing fresh recordings of that size from the same model, within the 99 % bound of the difference of
/// two binomial proportions (normal approximation, common practice, no source). The recording is large (3000 trials
/// per class) so that its own sampling error in the effect is small beside the bound.
#[test]
fn subsampled_power_matches_fresh_recordings() {
    let (sizes, draws, effect) = (vec![10, 20], 400, 0.9);
    let rc = recipe(trials_only(sizes.clone(), draws));
    let big = plan(&gaussian(3000, 6, 2, effect, 0), &rc);
    let report = run_all(&big);
    let alpha = report.alpha;
    for (point, &n) in report.trials.iter().zip(&sizes) {
        assert_eq!((point.per_class, point.summary.subsamples), (n, draws));
        let measured = point.summary.power;
        let mut significant = 0;
        for i in 0..draws {
            let fresh = gaussian(n, 6, 2, effect, 1 + (n * draws + i) as u64);
            let mut r = rc.clone();
            r.power = None;
            r.seed = 1000 + i as u64;
            let data = input::trial_table("fresh.csv", fresh.as_bytes(), &r.columns).unwrap();
            let p = Plan::new(data, &r).unwrap();
            let outcomes: Vec<_> = p.tasks().into_iter().map(|t| p.run(t)).collect();
            if Report::build(&p, &outcomes).shuffle.p_value.unwrap() <= alpha {
                significant += 1;
            }
        }
        let fresh = significant as f64 / draws as f64;
        assert!(
            (0.15..0.85).contains(&fresh),
            "{n} per class: the effect must leave power away from 0 and 1 for the check to mean anything: {fresh}"
        );
        let pooled = (measured + fresh) / 2.0;
        let bound = 2.576 * (pooled * (1.0 - pooled) * 2.0 / draws as f64).sqrt();
        assert!(
            (measured - fresh).abs() <= bound,
            "{n} per class: subsampled {measured} vs fresh {fresh} (bound {bound})"
        );
    }
}

/// Without information, a subsample is significant at the test's size, ⌊α(m + 1)⌋/(m + 1) = 5 % with 19 shuffles,
/// at every size: each count within the binomial 99 % bound (scipy-style quantiles from `stats::binomial`).
/// Subsamples of at most 40 of 2000 trials per class barely overlap, so their outcomes are close to independent.
#[test]
fn without_information_power_stays_at_alpha() {
    let (sizes, draws) = (vec![5, 10, 20, 40], 300);
    let rc = recipe(trials_only(sizes, draws));
    let report = run_all(&plan(&gaussian(2000, 6, 0, 0.0, 5), &rc));
    assert_eq!(report.test_size, 0.05);
    let (lo, hi) = binomial_99(draws, report.test_size);
    for t in &report.trials {
        let k = t.summary.significant as u64;
        assert!(
            (lo..=hi).contains(&k),
            "{} per class: {k} of {draws} significant, outside {lo}..={hi}",
            t.per_class
        );
        assert!((t.summary.accuracy.mean - 0.5).abs() < 0.03, "{t:?}");
    }
}

/// Noise neurons appended to a population of four informative neurons lower accuracy step by step (each step no
/// higher than the one before beyond 2.58 standard errors of the two means) and clearly in all; and the noise
/// neurons carry nothing: each alone decodes at chance (their mean within 2 points of 50 %, none beyond the
/// binomial threshold (Combrisson & Jerbi, 2015) more often than the 99 % bound allows), while every neuron they copy
/// decodes above that threshold.
#[test]
fn noise_neurons_lower_accuracy_and_carry_nothing() {
    let settings = PowerSettings {
        trials: Some(vec![60]),
        neurons: Some(vec![4]),
        noise: Some(vec![0, 4, 16, 64]),
        subsamples: 12,
        ..PowerSettings::default()
    };
    let mut rc = recipe(settings);
    rc.classifier = Classifier::LinearSvm;
    rc.repeats = 4;
    rc.shuffles = 19;
    rc.shuffle_repeats = Some(1);
    let p = plan(&gaussian(60, 4, 4, 1.2, 9), &rc);
    let report = run_all(&p);
    let means: Vec<f64> = report
        .noise
        .iter()
        .map(|t| t.summary.accuracy.mean)
        .collect();
    for pair in report.noise.windows(2) {
        let se = |t: &popdecode::analyses::power::report::NoisePoint| {
            t.summary.accuracy.sd / (t.summary.subsamples as f64).sqrt()
        };
        let tolerance = 2.576 * (se(&pair[0]).powi(2) + se(&pair[1]).powi(2)).sqrt() + 0.01;
        assert!(
            pair[1].summary.accuracy.mean <= pair[0].summary.accuracy.mean + tolerance,
            "{means:?}"
        );
    }
    assert!(means[0] > 0.75 && means[3] < means[0] - 0.08, "{means:?}");

    // Each neuron alone, in a population with 64 noise neurons (16 permuted copies of each recorded one).
    let noisy = p.with_noise(64, 0);
    assert_eq!(noisy.n_features(), 68);
    let mut single = rc.clone();
    single.power = None;
    single.shuffles = 0;
    let neurons = NeuronsPlan::new(noisy, &single, 1).unwrap();
    let alone: Vec<f64> = (0..68)
        .map(|neuron| neurons.run(NeuronTask::Single { neuron }).accuracy.mean)
        .collect();
    let threshold = binomial::chance_threshold(120, 2, 0.05);
    assert!(
        alone[..4].iter().all(|&a| a > threshold),
        "{:?}",
        &alone[..4]
    );
    let noise = &alone[4..];
    let mean = noise.iter().sum::<f64>() / noise.len() as f64;
    assert!((mean - 0.5).abs() < 0.02, "noise neurons alone: {mean}");
    let above = noise.iter().filter(|&&a| a > threshold).count() as u64;
    assert!(
        above <= binomial_99(64, 0.05).1,
        "{above} of 64 above {threshold}"
    );
}

/// Every trial subsample keeps exactly `per_class` trials of every class, each a different real trial of the
/// recording with its own values and label; and in every repeat of its protocol, no trial tested in a fold is among
/// that fold's training trials (checked on the trials' identities in the recording, so a trial drawn twice would be
/// caught).
#[test]
fn subsamples_are_balanced_real_trials_never_tested_on_their_training_folds() {
    let csv = gaussian(30, 5, 2, 1.0, 3);
    let mut rc = recipe(PowerSettings {
        trials: Some(vec![5, 12, 30]),
        subsamples: 8,
        ..PowerSettings::default()
    });
    rc.repeats = 3;
    let p = plan(&csv, &rc);
    let full = &p.plan.data;
    for &n in &p.grids.trials {
        for draw in 0..8 {
            let rows = p.trial_subsample(n, draw);
            assert!(rows.windows(2).all(|w| w[0] < w[1]), "distinct and sorted");
            assert!(rows.iter().all(|&i| i < full.n_trials()));
            for class in 0..2 {
                assert_eq!(rows.iter().filter(|&&i| full.y[i] == class).count(), n);
            }
            let task = PowerTask::Trials { per_class: n, draw };
            let sub = p.task_plan(task).unwrap();
            for (k, &i) in rows.iter().enumerate() {
                assert_eq!(sub.data.y[k], full.y[i]);
                assert_eq!(
                    sub.data.x.row(k),
                    full.x.row(i),
                    "row {k} is trial {i} as recorded"
                );
            }
            for repeat in 0..rc.repeats {
                // The draw the protocol makes for this repeat (the trial-table plan's own stream).
                let mut rng = task_rng(sub.recipe.seed, Stream::Repeat, repeat as u64, 0);
                let d = sub.scheme.draw(&sub.data.y, None, &mut rng);
                for f in 0..d.folds {
                    let (train, test) = d.partition(f);
                    let identity = |pos: &usize| rows[d.used[*pos]];
                    let train: Vec<usize> = train.iter().map(identity).collect();
                    assert!(!test.is_empty());
                    for t in test.iter().map(identity) {
                        assert!(
                            !train.contains(&t),
                            "{n} per class, draw {draw}: trial {t} tested and trained"
                        );
                    }
                }
            }
        }
    }
    // Subsamples of the largest size take every trial; smaller ones differ from draw to draw.
    assert_eq!(p.trial_subsample(30, 0), (0..60).collect::<Vec<_>>());
    assert_ne!(p.trial_subsample(5, 0), p.trial_subsample(5, 1));
}

/// The report does not depend on the order outcomes arrive in, and the tasks are as fine as the issue asks: one
/// subsample each, with its fits counted for progress.
#[test]
fn outcome_order_does_not_matter() {
    let rc = recipe(PowerSettings {
        trials: Some(vec![5, 8, 12, 20]),
        neurons: Some(vec![1, 3, 5]),
        noise: Some(vec![0, 5]),
        subsamples: 3,
        ..PowerSettings::default()
    });
    let p = plan(&gaussian(20, 5, 2, 1.0, 4), &rc);
    let tasks = p.tasks();
    assert_eq!(tasks.len(), 4 * 3 + (2 * 3 + 1) + (1 + 3));
    assert_eq!(p.fits_in(tasks[0]), (2 + 19 * 2) * 5);
    let forward: Vec<PowerOutcome> = tasks.iter().map(|&t| p.run(t)).collect();
    let mut backward: Vec<PowerOutcome> = tasks.iter().rev().map(|&t| p.run(t)).collect();
    assert_eq!(
        PowerReport::build(&p, &forward).to_json(),
        PowerReport::build(&p, &backward).to_json()
    );
    backward.reverse();
    assert_eq!(forward, backward);
    assert!(forward.iter().all(|o| o.fits as usize == p.fits_in(o.task)));
}

/// A plan that would run more fits than allowed is refused before any work, with what to lower; sizes beyond the
/// recording are refused as measurements.
#[test]
fn limits_are_checked_before_work_starts() {
    let csv = gaussian(40, 5, 2, 1.0, 6);
    let mut rc = recipe(PowerSettings {
        subsamples: 2000,
        ..PowerSettings::default()
    });
    rc.repeats = 100;
    rc.shuffles = 200;
    let data = input::trial_table("big.csv", csv.as_bytes(), &rc.columns).unwrap();
    let e = PowerPlan::new(data.clone(), &rc).err().unwrap().to_string();
    assert!(
        e.contains("fits") && e.contains("lower the subsamples"),
        "{e}"
    );
    let rc = recipe(PowerSettings {
        trials: Some(vec![10, 41]),
        ..PowerSettings::default()
    });
    let e = PowerPlan::new(data.clone(), &rc).err().unwrap().to_string();
    assert!(
        e.contains("41 trials per class") && e.contains("extrapolated"),
        "{e}"
    );
    let mut rc = recipe(PowerSettings::default());
    rc.shuffles = 9;
    let e = PowerPlan::new(data, &rc).err().unwrap().to_string();
    assert!(e.contains("at least 19 shuffles"), "{e}");
}

fn cli_power(dir: &std::path::Path, name: &str, extra: &[&str]) -> (String, String) {
    let json = dir.join(name);
    let recipe = dir.join(format!("{name}.recipe"));
    let sample = std::path::PathBuf::from(env!("CARGO_MANIFEST_DIR")).join("samples/odours.csv");
    let out = Command::new(env!("CARGO_BIN_EXE_popdecode"))
        .args(["power", sample.to_str().unwrap(), "--label", "odour"])
        .args(["--ignore", "session", "--classifier", "shrinkage-lda"])
        .args([
            "--per-class",
            "5,10,20,40",
            "--neurons",
            "4,52",
            "--added",
            "0,26",
        ])
        .args(["--subsamples", "4", "--quiet", "--plots"])
        .arg(dir.join(format!("{name}.plots")))
        .arg("--json")
        .arg(&json)
        .arg("--save-recipe")
        .arg(&recipe)
        .args(extra)
        .output()
        .unwrap();
    assert!(
        out.status.success(),
        "{}",
        String::from_utf8_lossy(&out.stderr)
    );
    (
        std::fs::read_to_string(json).unwrap(),
        std::fs::read_to_string(recipe).unwrap(),
    )
}

/// The command line writes the same bytes on 1 and 3 threads; the page's bridge (the recipe the command line saved,
/// the file's bytes, tasks and outcomes carried as JSON as the page's workers carry them) writes the same JSON; and
/// the figures keep the extrapolation apart and labelled.
#[test]
fn command_line_threads_and_page_bridge_agree() {
    let dir = std::env::temp_dir().join(format!("popdecode-power-{}", std::process::id()));
    std::fs::create_dir_all(&dir).unwrap();
    let (one, recipe_text) = cli_power(&dir, "one.json", &["--threads", "1"]);
    let (three, _) = cli_power(&dir, "three.json", &["--threads", "3"]);
    assert_eq!(one, three);

    // What the page does: the recipe and the file's bytes in, tasks out as JSON, outcomes back as JSON strings
    // joined unparsed, then finish.
    let recipe = Recipe::from_json("recipe", &recipe_text).unwrap();
    let bytes = std::fs::read(
        std::path::PathBuf::from(env!("CARGO_MANIFEST_DIR")).join("samples/odours.csv"),
    )
    .unwrap();
    let data = input::trial_table("odours.csv", &bytes, &recipe.columns).unwrap();
    let plan = PowerPlan::new(data, &recipe).unwrap();
    let tasks: Vec<String> = Analysis::tasks(&plan)
        .iter()
        .map(|t| serde_json::to_string(t).unwrap())
        .collect();
    let outcomes: Vec<String> = tasks
        .iter()
        .rev()
        .map(|t| {
            let task: PowerTask = serde_json::from_str(t).unwrap();
            serde_json::to_string(&Analysis::run(&plan, task)).unwrap()
        })
        .collect();
    let outcomes: Vec<PowerOutcome> =
        serde_json::from_str(&format!("[{}]", outcomes.join(","))).unwrap();
    let finished = Analysis::finish(&plan, &outcomes);
    assert_eq!(finished.json + "\n", one);

    let report: serde_json::Value = serde_json::from_str(&one).unwrap();
    assert_eq!(report["schema"], "popdecode-power/1");
    let measured: Vec<u64> = report["trials"]
        .as_array()
        .unwrap()
        .iter()
        .map(|t| t["per_class"].as_u64().unwrap())
        .collect();
    assert_eq!(measured, vec![5, 10, 20, 40]);
    assert!(
        report["neurons"][0]["accuracy"]["mean"].is_f64() && report["noise"][1]["power"].is_f64()
    );
    let e = &report["extrapolation"];
    assert_eq!(
        e["points"][0]["per_class"], 40,
        "the extrapolation starts where the measurements end"
    );
    let svg = std::fs::read_to_string(dir.join("one.json.plots/trials.svg")).unwrap();
    assert!(
        svg.contains("extrapolation, not measured") && svg.contains(r#"stroke-dasharray="6 4""#)
    );
    for name in ["neurons.svg", "noise.svg", "power.csv"] {
        assert!(dir.join("one.json.plots").join(name).exists(), "{name}");
    }
}

/// A bad power setting stops the command line with one line and exit code 2.
#[test]
fn bad_settings_exit_with_one_line() {
    let sample = std::path::PathBuf::from(env!("CARGO_MANIFEST_DIR")).join("samples/odours.csv");
    for extra in [
        ["--per-class", "500"],
        ["--alpha", "1.5"],
        ["--neurons", "0"],
    ] {
        let out = Command::new(env!("CARGO_BIN_EXE_popdecode"))
            .args([
                "power",
                sample.to_str().unwrap(),
                "--label",
                "odour",
                "--ignore",
                "session",
            ])
            .args(extra)
            .output()
            .unwrap();
        assert_eq!(out.status.code(), Some(2), "{extra:?}");
        let err = String::from_utf8_lossy(&out.stderr);
        assert_eq!(err.trim_end().lines().count(), 1, "{err}");
    }
}
