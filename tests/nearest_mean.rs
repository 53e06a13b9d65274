//! The nearest-class-mean decoder where a correlation across features cannot work (one or two features), and the
//! limitation it keeps on many (issue 13, items 1 and 6).

mod common;

use common::{analyse, recipe};
use popdecode::analyses::neurons::{run_all, NeuronsPlan};
use popdecode::analyses::trial_table::methods;
use popdecode::input;
use popdecode::recipe::Classifier;
use popdecode::simulate::{csv, Scenario};

fn two_odours() -> Scenario {
    Scenario {
        classes: vec!["a".into(), "b".into()],
        trials_per_class: vec![60, 60],
        units: 6,
        tuning: 0.5,
        tuned_fraction: 1.0,
        ..Scenario::odours()
    }
}

/// One informative neuron: a correlation across one feature is undefined and scored exactly chance (50.0 ± 0.0)
/// before the fix; the nearest mean by distance on one feature is the midpoint rule, which LDA with equal priors
/// also is, so the two agree to within a few trials (common practice, no source: both are the same threshold).
#[test]
fn one_or_two_features_decode_like_lda_not_at_chance() {
    for features in [
        vec!["unit_01".to_string()],
        vec!["unit_01".into(), "unit_02".into()],
    ] {
        let mut nm = recipe(Classifier::NearestMean, 20, 0);
        nm.columns.features = Some(features.clone());
        let mut lda = nm.clone();
        lda.classifier = Classifier::ShrinkageLda;
        let (a, b) = (analyse(&two_odours(), &nm), analyse(&two_odours(), &lda));
        let (a_acc, b_acc) = (a.summary.accuracy.mean, b.summary.accuracy.mean);
        assert!(b_acc > 0.6, "{features:?}: LDA {b_acc}");
        assert!(
            a.summary.accuracy.sd > 0.0,
            "{features:?}: no variation at all"
        );
        assert!(
            (a_acc - b_acc).abs() < 0.05,
            "{features:?}: nearest-mean {a_acc}, LDA {b_acc}"
        );
        let note = "nearest in Euclidean distance";
        assert!(
            a.warnings.iter().any(|w| w.contains(note)),
            "{:?}",
            a.warnings
        );
        assert!(
            methods::paragraph(&a).contains(note),
            "{}",
            methods::paragraph(&a)
        );
    }
}

/// The neuron analyses with nearest-mean: single neurons are ranked by what they carry (before the fix every one
/// scored exactly chance), and the report says which rule scored the smallest subsets.
#[test]
fn single_neurons_are_ranked_by_what_they_carry() {
    let scenario = Scenario {
        tuned_fraction: 0.5,
        ..two_odours()
    };
    let mut r = recipe(Classifier::NearestMean, 10, 0);
    r.columns.ignore = vec!["session".into()];
    let text = csv(&scenario);
    let data = input::trial_table("pop.csv", text.as_bytes(), &r.columns).unwrap();
    let report = run_all(&NeuronsPlan::new(data, &r, 3).unwrap());
    // Units 1-3 are tuned, 4-6 are not: the three best are the tuned ones, well above chance.
    let best: Vec<&str> = report.single[..3]
        .iter()
        .map(|s| s.neuron.as_str())
        .collect();
    for name in ["unit_01", "unit_02", "unit_03"] {
        assert!(best.contains(&name), "{best:?}");
    }
    assert!(
        report.single[0].accuracy.mean > 0.6,
        "{:?}",
        report.single[0]
    );
    assert!(
        report.warnings.iter().any(|w| w.contains("Euclidean")),
        "{:?}",
        report.warnings
    );
}

/// A condition that scales the whole population together (a shared gain): after per-neuron standardisation the
/// class means differ along a direction that is nearly flat across neurons, which a correlation removes with the
/// pattern's mean; LDA sees it. The methods paragraph says so (item 6; the simulation is our own).
#[test]
fn a_shared_gain_is_invisible_to_the_correlation_and_said() {
    use popdecode::rng::{normal, task_rng, Stream};
    use std::fmt::Write;
    let mut rng = task_rng(8, Stream::Simulation, 13, 0);
    let mut text = String::from("odour");
    for u in 0..20 {
        write!(text, ",n{u}").unwrap();
    }
    text.push('\n');
    for i in 0..160 {
        let (label, gain) = if i % 2 == 0 { ("a", 1.0) } else { ("b", 1.25) };
        text.push_str(label);
        for u in 0..20 {
            let rate = 10.0 + u as f64;
            write!(text, ",{}", gain * rate + 1.5 * normal(&mut rng)).unwrap();
        }
        text.push('\n');
    }
    let score = |classifier| {
        let r = recipe(classifier, 5, 0);
        let data = input::trial_table("gain.csv", text.as_bytes(), &r.columns).unwrap();
        let plan = popdecode::analyses::trial_table::Plan::new(data, &r).unwrap();
        popdecode::analyses::trial_table::run_all(&plan)
    };
    let (nm, lda) = (
        score(Classifier::NearestMean),
        score(Classifier::ShrinkageLda),
    );
    assert!(
        lda.summary.accuracy.mean > 0.8,
        "LDA {}",
        lda.summary.accuracy.mean
    );
    assert!(
        nm.summary.accuracy.mean < lda.summary.accuracy.mean - 0.2,
        "nearest-mean {} vs LDA {}",
        nm.summary.accuracy.mean,
        lda.summary.accuracy.mean
    );
    let m = methods::paragraph(&nm);
    assert!(m.contains("shared by all features"), "{m}");
}
