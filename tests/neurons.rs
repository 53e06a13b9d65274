//! What each neuron contributes: weights against activation patterns, the dropping curve, single neurons.

use popdecode::analyses::neurons::report::linear;
use popdecode::analyses::neurons::report::NeuronsReport;
use popdecode::analyses::neurons::{run_all, NeuronsPlan};
use popdecode::input;
use popdecode::recipe::Classifier;
use popdecode::recipe::Recipe;
use popdecode::rng::{normal, task_rng, unit, Stream};
use popdecode::simulate::{csv, Scenario};
use std::fmt::Write;

/// Haufe et al. (2014), their two-channel example in spirit: neuron 1 = signal + shared noise, neuron 2 = the shared
/// noise alone. The best decoder subtracts neuron 2 from neuron 1, so neuron 2 gets a weight about as large as
/// neuron 1's; but it does not covary with the decoder's output, so its activation pattern is about zero.
#[test]
fn a_noise_cancelling_neuron_has_a_large_weight_and_no_pattern() {
    let mut rng = task_rng(5, Stream::Simulation, 9, 0);
    let mut text = String::from("side,n1,n2\n");
    for i in 0..2000 {
        let (label, s) = if i % 2 == 0 {
            ("left", -1.0)
        } else {
            ("right", 1.0)
        };
        let noise = 3.0 * normal(&mut rng);
        let jitter = 0.3 * normal(&mut rng);
        writeln!(
            text,
            "{label},{},{}",
            s + jitter + noise,
            noise + 0.01 * unit(&mut rng)
        )
        .unwrap();
    }
    for classifier in [
        Classifier::LinearSvm,
        Classifier::ShrinkageLda,
        Classifier::Logistic,
    ] {
        let mut recipe = Recipe::new("side");
        recipe.classifier = classifier;
        let data = input::trial_table("two.csv", text.as_bytes(), &recipe.columns).unwrap();
        let l = linear(&data, &recipe).expect("a linear decoder");
        assert_eq!(l.weights.len(), 2, "one row per neuron");
        // Two classes: one output per neuron for SVM and logistic; LDA has one per class, use the difference.
        let (w, a): (Vec<f64>, Vec<f64>) = (0..2)
            .map(|j| {
                let last = l.weights[j].len() - 1;
                (
                    l.weights[j][last] - if last > 0 { l.weights[j][0] } else { 0.0 },
                    l.patterns[j][last] - if last > 0 { l.patterns[j][0] } else { 0.0 },
                )
            })
            .unzip();
        assert!(
            w[1].abs() > 0.5 * w[0].abs(),
            "{classifier:?}: weights {w:?}"
        );
        assert!(
            a[1].abs() < 0.1 * a[0].abs(),
            "{classifier:?}: patterns {a:?}"
        );
        assert!(
            w[1] * w[0] < 0.0,
            "{classifier:?}: the noise is subtracted: {w:?}"
        );
    }
    let recipe = Recipe {
        classifier: Classifier::NearestMean,
        ..Recipe::new("side")
    };
    let data = input::trial_table("two.csv", text.as_bytes(), &recipe.columns).unwrap();
    assert!(
        linear(&data, &recipe).is_none(),
        "nearest-mean has no weights"
    );
}

/// With independent informative neurons, adding neurons can only add information: the mean over random subsets
/// does not fall as the population grows (common practice, no source), and all neurons beat one.
#[test]
fn dropping_curve_rises_with_independent_informative_neurons() {
    let scenario = Scenario {
        classes: vec!["a".into(), "b".into(), "c".into()],
        trials_per_class: vec![40; 3],
        units: 16,
        tuning: 0.35,
        tuned_fraction: 1.0,
        ..Scenario::odours()
    };
    let mut recipe = Recipe::new("odour");
    recipe.classifier = Classifier::ShrinkageLda;
    recipe.repeats = 10;
    recipe.columns.ignore = vec!["session".into()];
    let text = csv(&scenario);
    let data = input::trial_table("pop.csv", text.as_bytes(), &recipe.columns).unwrap();
    let plan = NeuronsPlan::new(data.clone(), &recipe, 12).unwrap();
    let r = run_all(&plan);
    let sizes: Vec<usize> = r.dropping.iter().map(|d| d.size).collect();
    assert_eq!(sizes, vec![1, 2, 4, 8, 16]);
    let means: Vec<f64> = r.dropping.iter().map(|d| d.accuracy.mean).collect();
    for pair in means.windows(2) {
        assert!(pair[1] >= pair[0] - 0.01, "{means:?}");
    }
    assert!(means[4] > means[0] + 0.2, "{means:?}");
    assert_eq!(r.single.len(), 16);
    assert!(
        r.single
            .windows(2)
            .all(|p| p[0].accuracy.mean >= p[1].accuracy.mean),
        "sorted best first"
    );
    assert_eq!(r.dropping[4].draws, 1);
}

/// The report does not depend on the order outcomes arrive in (the CLI runs them on threads).
#[test]
fn outcome_order_does_not_matter() {
    let mut recipe = Recipe::new("odour");
    recipe.repeats = 3;
    recipe.columns.ignore = vec!["session".into()];
    let text = csv(&Scenario {
        units: 6,
        ..Scenario::odours()
    });
    let data = input::trial_table("o.csv", text.as_bytes(), &recipe.columns).unwrap();
    let plan = NeuronsPlan::new(data.clone(), &recipe, 3).unwrap();
    let forward: Vec<_> = plan.tasks().into_iter().map(|t| plan.run(t)).collect();
    let mut backward: Vec<_> = plan
        .tasks()
        .into_iter()
        .rev()
        .map(|t| plan.run(t))
        .collect();
    assert_eq!(
        NeuronsReport::build(&plan, &forward).to_json(),
        NeuronsReport::build(&plan, &backward).to_json()
    );
    backward.reverse();
    assert_eq!(forward, backward);
}
