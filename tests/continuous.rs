//! Decoding continuous and circular variables: against closed-form expectations on invented populations with known
//! tuning, against chance without tuning, over time, and through the face-independent task/outcome bridge.

use popdecode::analyses::continuous::{run_all, run_all_time, ContinuousPlan};
use popdecode::analyses::Analysis;
use popdecode::decoders::linalg::{cholesky, cholesky_solve};
use popdecode::input::{self, FileBytes};
use popdecode::recipe::{AngleUnit, Classifier, Recipe, TimeSettings};
use popdecode::simulate::{motion_binned, motion_csv, MotionScenario, MotionUnits};

mod common;

fn recipe(label: &str, classifier: Classifier, repeats: usize, shuffles: usize) -> Recipe {
    let mut r = Recipe::new(label);
    r.classifier = classifier;
    if classifier == Classifier::CircularRidge {
        r.angle_unit = Some(AngleUnit::Degrees);
    }
    r.repeats = repeats;
    r.shuffles = shuffles;
    r.columns.ignore = vec![if label == "speed" { "heading" } else { "speed" }.into()];
    r
}

fn plan(s: &MotionScenario, r: &Recipe) -> ContinuousPlan {
    let csv = motion_csv(s);
    let data = input::target::trial_table("running.csv", csv.as_bytes(), &r.columns)
        .expect("a valid table");
    ContinuousPlan::new(data, r).expect("a valid plan")
}

/// Modified Bessel function of the first kind, I_ν(x) = Σ_k (x/2)^(2k+ν) / (k! (k+ν)!) (Abramowitz & Stegun 9.6.10).
fn bessel_i(nu: u32, x: f64) -> f64 {
    let mut term = (x / 2.0).powi(nu as i32) / (1..=nu).map(f64::from).product::<f64>();
    let mut total = term;
    for k in 1..60 {
        term *= (x / 2.0).powi(2) / (k as f64 * (k + nu) as f64);
        total += term;
    }
    total
}

/// Covariance of the units' rates over trials: speed, heading and noise are independent, so their covariances add.
/// Speed is uniform: Var = (max − min)²/12. Heading tuning h_i = A_i exp(κ(cos(θ − φ_i) − 1)) with θ uniform has
/// E[h_i] = A_i e^{−κ} I₀(κ) and E[h_i h_j] = A_i A_j e^{−2κ} I₀(2κ |cos((φ_i − φ_j)/2)|) (the sum of two cosines of
/// θ is one cosine of amplitude 2κ|cos(Δ/2)|; the mean of exp(a cos θ) over the circle is I₀(a)).
fn rate_covariance(s: &MotionScenario, u: &MotionUnits) -> Vec<f64> {
    let p = s.units;
    let var_speed = (s.speed_max - s.speed_min).powi(2) / 12.0;
    let k = s.kappa;
    let mut c = vec![0.0; p * p];
    for i in 0..p {
        for j in 0..p {
            let d = (u.preferred[i] - u.preferred[j]) / 2.0;
            let heading = u.amplitude[i]
                * u.amplitude[j]
                * (-2.0 * k).exp()
                * (bessel_i(0, 2.0 * k * d.cos().abs()) - bessel_i(0, k).powi(2));
            c[i * p + j] = var_speed * u.slope[i] * u.slope[j] + heading;
        }
        c[i * p + i] += s.noise * s.noise;
    }
    c
}

/// R² of the best linear predictor of a variable from the rates: cᵀ Σ⁻¹ c / Var, c = Cov(rates, variable).
fn linear_r2(cov: &[f64], c: &[f64], var: f64) -> f64 {
    let u = cholesky(cov, c.len()).expect("a covariance with noise is positive definite");
    let mut x = c.to_vec();
    cholesky_solve(&u, c.len(), &mut x);
    x.iter().zip(c).map(|(a, b)| a * b).sum::<f64>() / var
}

/// Expected out-of-sample R² of least squares with an intercept on `n` training trials and `p` features, when
/// features and target are jointly Gaussian: the prediction error grows by (n − 1)/(n − p − 2) over the
/// population's residual variance (the expected prediction error of ordinary least squares with a random design;
/// Stein 1960). Ridge with a well-chosen penalty does no worse, so this is a lower reference.
fn finite_sample(r2: f64, n: usize, p: usize) -> f64 {
    1.0 - (1.0 - r2) * (n - 1) as f64 / (n - p - 2) as f64
}

/// Three standard errors of an R² estimated on `n` trials: SE(R²) ≈ 2√R²(1 − R²)/√n (the delta method on the
/// sampling variance of a squared correlation, (1 − ρ²)²/n for r; from memory).
fn three_standard_errors(r2: f64, n: usize) -> f64 {
    3.0 * 2.0 * r2.sqrt() * (1.0 - r2) / (n as f64).sqrt()
}

fn scenario() -> MotionScenario {
    MotionScenario {
        trials: 2000,
        units: 12,
        ..MotionScenario::running()
    }
}

/// Linear tuning to speed: out-of-sample R² matches the best linear predictor's R² computed from the tuning.
#[test]
fn speed_r2_matches_the_closed_form() {
    let s = scenario();
    let u = s.units();
    let var_speed = (s.speed_max - s.speed_min).powi(2) / 12.0;
    let c: Vec<f64> = u.slope.iter().map(|b| b * var_speed).collect();
    let expected = linear_r2(&rate_covariance(&s, &u), &c, var_speed);
    let lower = finite_sample(expected, s.trials * 4 / 5, s.units);
    let r = run_all(&plan(&s, &recipe("speed", Classifier::Ridge, 5, 0)));
    let got = r.summary.r2.mean;
    println!("R² {got:.4}, population {expected:.4}, least squares {lower:.4}");
    let tol = three_standard_errors(expected, s.trials);
    assert!(
        got > lower - tol && got < expected + tol,
        "R² {got:.4}: expected {expected:.4} (population), {lower:.4} (least squares on the training size)"
    );
    assert!(
        expected > 0.3 && expected < 0.9,
        "a scenario in the useful range: {expected}"
    );
    // The correlation of a calibrated linear predictor is about √R².
    assert!((r.summary.correlation.mean - expected.sqrt()).abs() < 0.03);
}

/// Von Mises tuning to heading: the R² of the decoded (cosine, sine) pair matches the closed form, and the angular
/// error is far below the 90° of guessing.
#[test]
fn heading_r2_matches_the_closed_form() {
    let s = scenario();
    let u = s.units();
    let k = s.kappa;
    let cov = rate_covariance(&s, &u);
    // Cov(h_i, cos θ) = A_i e^{−κ} I₁(κ) cos φ_i (and sin for sin θ); Var(cos θ) = Var(sin θ) = 1/2.
    let gain = (-k).exp() * bessel_i(1, k);
    let c_cos: Vec<f64> = (0..s.units)
        .map(|i| u.amplitude[i] * gain * u.preferred[i].cos())
        .collect();
    let c_sin: Vec<f64> = (0..s.units)
        .map(|i| u.amplitude[i] * gain * u.preferred[i].sin())
        .collect();
    let expected = 0.5 * (linear_r2(&cov, &c_cos, 0.5) + linear_r2(&cov, &c_sin, 0.5));
    let lower = finite_sample(expected, s.trials * 4 / 5, s.units);
    let r = run_all(&plan(
        &s,
        &recipe("heading", Classifier::CircularRidge, 5, 0),
    ));
    let got = r.summary.r2.mean;
    println!("R² {got:.4}, population {expected:.4}, least squares {lower:.4}");
    let tol = three_standard_errors(expected, s.trials);
    assert!(
        got > lower - tol && got < expected + tol,
        "R² {got:.4}: expected {expected:.4} (population), {lower:.4} (least squares on the training size)"
    );
    let error = r.summary.angular_error.as_ref().unwrap().mean;
    assert!(error < 60.0, "mean absolute angular error {error}°");
    assert!(r.summary.correlation.mean > 0.3);
}

/// Without tuning, R² is at or below 0 (a decoder that learnt nothing predicts about the training mean) and the
/// shuffle control does not reject; with tuning it does, and the null's R² sits below 0.
#[test]
fn shuffles_separate_information_from_none() {
    let none = MotionScenario {
        trials: 200,
        speed_slope: 0.0,
        ..scenario()
    };
    let r = run_all(&plan(&none, &recipe("speed", Classifier::Ridge, 5, 40)));
    assert!(r.summary.r2.mean < 0.02, "{}", r.summary.r2.mean);
    assert!(r.shuffle.p_value.unwrap() > 0.05);
    let some = MotionScenario {
        trials: 200,
        ..scenario()
    };
    let r = run_all(&plan(&some, &recipe("speed", Classifier::Ridge, 5, 40)));
    assert!(r.shuffle.p_value.unwrap() < 0.05 && r.shuffle.observed > 0.2);
    assert!(r.shuffle.null_mean.unwrap() < 0.02);
    // Circular: the shuffled angles' error sits near 90° (uniform angles guessed), the observed one far below.
    let r = run_all(&plan(
        &some,
        &recipe("heading", Classifier::CircularRidge, 3, 30),
    ));
    let null = r.shuffle.null_mean.unwrap();
    assert!((null - 90.0).abs() < 10.0, "null angular error {null}");
    assert!(r.shuffle.p_value.unwrap() < 0.05);
}

/// Over time: a binned recording whose units follow speed only from 0.2 to 0.6 s is decoded there, with a
/// significant cluster covering that span and nothing outside it.
#[test]
fn information_in_a_span_is_found_there() {
    let s = MotionScenario {
        trials: 150,
        units: 10,
        ..MotionScenario::running()
    };
    let table = motion_binned(&s, -0.4, 1.0, 0.1, (0.2, 0.6));
    let mut r = recipe("speed", Classifier::Ridge, 3, 40);
    r.time = Some(TimeSettings::binned("trial", "time"));
    r.columns.ignore.push("session".into());
    let files = [FileBytes {
        name: "binned.csv",
        bytes: table.as_bytes(),
    }];
    let data =
        input::target::time_course(&files, &r.columns, &r.time.as_ref().unwrap().input).unwrap();
    let plan = ContinuousPlan::new(data, &r).unwrap();
    let report = run_all_time(&plan);
    for w in &report.windows {
        let inside = w.time > 0.2 && w.time < 0.6;
        if inside {
            assert!(
                w.r2.mean > 0.2 && w.significant,
                "{} s: R² {}",
                w.time,
                w.r2.mean
            );
        } else {
            assert!(
                w.r2.mean < 0.05 && !w.significant,
                "{} s: R² {}",
                w.time,
                w.r2.mean
            );
        }
    }
    assert!(report.onset.is_some());
}

/// The page runs tasks in workers and sends outcomes as JSON; the CLI runs them on threads: both must give the same
/// bytes, in any order of outcomes.
#[test]
fn outcomes_through_json_in_reverse_give_the_same_result() {
    let s = MotionScenario {
        trials: 120,
        ..scenario()
    };
    let p = plan(&s, &recipe("heading", Classifier::CircularRidge, 4, 6));
    let direct: Vec<_> = p
        .tasks()
        .into_iter()
        .map(|t| Analysis::run(&p, t))
        .collect();
    let through: Vec<_> = p
        .tasks()
        .into_iter()
        .rev()
        .map(|t| {
            let task = serde_json::from_str(&serde_json::to_string(&t).unwrap()).unwrap();
            let outcome = serde_json::to_string(&Analysis::run(&p, task)).unwrap();
            serde_json::from_str(&outcome).unwrap()
        })
        .collect();
    assert_eq!(p.finish(&direct).json, p.finish(&through).json);
}

/// Classification-only code refuses the regressors and the continuous analysis refuses classifiers.
#[test]
fn each_analysis_refuses_the_other_kind_of_decoder() {
    let s = MotionScenario {
        trials: 60,
        ..scenario()
    };
    let csv = motion_csv(&s);
    let mut r = recipe("speed", Classifier::LinearSvm, 2, 0);
    let data = input::target::trial_table("running.csv", csv.as_bytes(), &r.columns).unwrap();
    let e = ContinuousPlan::new(data, &r).err().unwrap().to_string();
    assert!(e.contains("linear-svm decodes classes"), "{e}");
    r.classifier = Classifier::Ridge;
    let classes = input::trial_table("running.csv", csv.as_bytes(), &r.columns).unwrap();
    let e = popdecode::analyses::trial_table::Plan::new(classes, &r)
        .err()
        .unwrap()
        .to_string();
    assert!(e.contains("ridge decodes a continuous variable"), "{e}");
}

/// The shuffle control of a continuous variable is calibrated: speed without any tuning (slope 0), ridge
/// regression, 199 shuffles of the values, 2 repeats observed and 2 per shuffle; p < 0.05 in a share of 300 tables
/// inside the binomial 99 % interval around 0.05 (P(p < 0.05) = 9/200 for m = 199, Phipson & Smyth 2010).
#[test]
fn continuous_shuffle_control_is_calibrated() {
    let datasets = 300;
    let mut rejections = 0;
    for d in 0..datasets {
        let none = MotionScenario {
            trials: 60,
            units: 5,
            speed_slope: 0.0,
            seed: 11_000 + d,
            ..MotionScenario::running()
        };
        let mut r = recipe("speed", Classifier::Ridge, 2, 199);
        r.shuffle_repeats = Some(2);
        r.seed = d;
        let report = run_all(&plan(&none, &r));
        rejections += u64::from(report.shuffle.p_value.unwrap() < 0.05);
    }
    common::assert_calibrated("a continuous variable", rejections, datasets);
}
