//! The confidence interval of a cross-validated accuracy (issue 13, item 4): its coverage of the true expected
//! accuracy on invented data, and how it is reported beside the variability over repeats.

use popdecode::analyses::trial_table::report::Report;
use popdecode::analyses::trial_table::{run_all, Plan};
use popdecode::decoders::{build, FittedPipeline};
use popdecode::input;
use popdecode::recipe::{Classifier, Recipe};
use popdecode::rng::{normal, task_rng, Stream};
use popdecode::stats::{self, binomial};
use std::fmt::Write;

const P: usize = 10;
const SHIFT: f64 = 0.7;

/// `n` trials alternating between two classes; class b's mean is shifted by SHIFT on the first two of P
/// independent unit-variance features (our own invented population).
fn draw(rng: &mut impl rand_core::RngCore, n: usize) -> (Vec<f64>, Vec<usize>) {
    let mut x = Vec::with_capacity(n * P);
    let y: Vec<usize> = (0..n).map(|i| i % 2).collect();
    for &c in &y {
        for j in 0..P {
            x.push(if c == 1 && j < 2 { SHIFT } else { 0.0 } + normal(rng));
        }
    }
    (x, y)
}

fn table(x: &[f64], y: &[usize]) -> String {
    let mut text = String::from("side");
    for j in 0..P {
        write!(text, ",f{j}").unwrap();
    }
    text.push('\n');
    for (i, &c) in y.iter().enumerate() {
        text.push_str(if c == 0 { "a" } else { "b" });
        for v in &x[i * P..(i + 1) * P] {
            write!(text, ",{v}").unwrap();
        }
        text.push('\n');
    }
    text
}

fn analyse(x: &[f64], y: &[usize], seed: u64) -> Report {
    let mut r = Recipe::new("side");
    r.classifier = Classifier::ShrinkageLda;
    r.repeats = 10;
    r.shuffles = 0;
    r.seed = seed;
    let data = input::trial_table("sim.csv", table(x, y).as_bytes(), &r.columns).unwrap();
    run_all(&Plan::new(data, &r).unwrap())
}

/// Coverage over 300 invented datasets of 100 trials (5 folds, 10 repeats, shrinkage LDA; the expected accuracy is
/// about 0.65). The target is what cross-validation estimates: the expected accuracy of the decoder trained on a
/// training fold's worth of trials (80), here by Monte Carlo over 400 training sets each tested on 4000 fresh
/// trials (its standard error, about 0.002, is small beside the intervals' half-width of about 0.10). The fraction of intervals holding it must lie
/// within the binomial 99 % bounds around 0.95. The variability over repeats (2.5th–97.5th percentiles) is no
/// such interval: it must hold the target far less often (the issue measured 78 %; it is lower here).
#[test]
fn the_interval_covers_the_expected_accuracy() {
    let decoder = build(Classifier::ShrinkageLda, 1.0, false);
    let mut rng = task_rng(99, Stream::Simulation, 1, 0);
    let truth = stats::mean(
        &(0..400)
            .map(|_| {
                let (xt, yt) = draw(&mut rng, 80);
                let model = FittedPipeline::fit(decoder.as_ref(), &xt, P, &yt, 2);
                let (xs, ys) = draw(&mut rng, 4000);
                let correct = model
                    .predict(xs)
                    .iter()
                    .zip(&ys)
                    .filter(|(a, b)| a == b)
                    .count();
                correct as f64 / 4000.0
            })
            .collect::<Vec<_>>(),
    );
    let datasets = 300;
    let (mut covered, mut in_range) = (0, 0);
    for d in 0..datasets {
        let (x, y) = draw(&mut task_rng(2000 + d, Stream::Simulation, 2, 0), 100);
        let s = analyse(&x, &y, d).summary.accuracy;
        let [lo, hi] = s.ci.unwrap();
        covered += u64::from(lo <= truth && truth <= hi);
        in_range += u64::from(s.p2_5 <= truth && truth <= s.p97_5);
    }
    let (lo, hi) = (
        binomial::quantile(0.005, datasets, 0.95),
        binomial::quantile(0.995, datasets, 0.95),
    );
    assert!(
        lo <= covered && covered <= hi,
        "{covered} of {datasets} intervals held {truth:.4}; 99 % bounds {lo}..={hi}"
    );
    assert!(
        in_range < lo,
        "the spread over repeats held it {in_range} times"
    );
}

/// The JSON names the interval and its method, and the effect size is the headline on the chance-corrected
/// scale: (score − chance)/(1 − chance), its interval transformed the same way.
#[test]
fn interval_and_effect_size_are_reported_together() {
    let (x, y) = draw(&mut task_rng(5, Stream::Simulation, 3, 0), 60);
    let r = analyse(&x, &y, 1);
    let json: serde_json::Value = serde_json::from_str(&r.to_json()).unwrap();
    let ci = json["summary"]["accuracy"]["ci"].as_array().unwrap();
    assert_eq!(ci.len(), 2);
    assert!(json["summary"]["accuracy"]["ci_method"]
        .as_str()
        .unwrap()
        .contains("Nadeau & Bengio"));
    let s = &r.summary.accuracy;
    let [lo, hi] = s.ci.unwrap();
    assert!(lo < s.mean && s.mean < hi);
    let e = r.summary.effect_size.as_ref().unwrap();
    assert!((e.above_chance - (s.mean - 0.5)).abs() < 1e-12);
    assert!((e.kappa - (s.mean - 0.5) / 0.5).abs() < 1e-12);
    assert!((e.kappa_ci[0] - (lo - 0.5) / 0.5).abs() < 1e-12);
    assert!(
        (e.above_chance_ci[0] - (lo - 0.5)).abs() < 1e-12
            && (e.above_chance_ci[1] - (hi - 0.5)).abs() < 1e-12
    );
    assert_eq!(json["summary"]["effect_size"]["score"], "accuracy");
    let text = popdecode::analyses::trial_table::text::render(&r);
    assert!(text.contains("95 % CI") && text.contains("variability over cross-validation repeats"));
}
