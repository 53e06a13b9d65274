//! What reports say, where the words carry the statistics (issue 13, items 3, 7, 8 and 9): methods paragraphs
//! generated from what was done, p-values at their floor, no uncorrected per-window threshold in a time course's
//! methods, and the generalization caveat in every face of the result.

mod common;

use common::{analyse, recipe};
use popdecode::analyses::time_course::{methods as time_methods, text as time_text, TimePlan};
use popdecode::analyses::trial_table::{methods, text};
use popdecode::input::{self, FileBytes};
use popdecode::recipe::{Classifier, TimeSettings};
use popdecode::simulate::{spike_events, Scenario, TimeScenario};

/// Poisson naive Bayes is fitted on counts as given: its methods paragraph never says the features were
/// standardised (before, it said both).
#[test]
fn methods_say_what_the_decoder_did() {
    let r = analyse(&Scenario::odours(), &recipe(Classifier::PoissonNb, 2, 0));
    let m = methods::paragraph(&r);
    assert!(!m.contains("standardised with the mean"), "{m}");
    assert!(m.contains("without standardisation"), "{m}");
    let r = analyse(&Scenario::odours(), &recipe(Classifier::ShrinkageLda, 2, 0));
    assert!(methods::paragraph(&r).contains("standardised with the mean"));
}

/// When no shuffle reaches the observed score, p is the smallest value m shuffles can give: written "p ≤ 1/(m+1)"
/// with the reason, in the text and the methods paragraph.
#[test]
fn a_p_value_at_its_floor_is_written_as_a_bound() {
    let scenario = Scenario {
        tuning: 0.5,
        ..Scenario::odours()
    };
    let r = analyse(&scenario, &recipe(Classifier::ShrinkageLda, 3, 19));
    assert_eq!(r.shuffle.p_value, Some(0.05));
    let (t, m) = (text::render(&r), methods::paragraph(&r));
    for words in [&t, &m] {
        assert!(words.contains("p ≤ 0.050"), "{words}");
        assert!(
            words.contains("smallest p that m = 19 permutations can give"),
            "{words}"
        );
        assert!(!words.contains("p = 0.050"), "{words}");
    }
}

fn time_report(generalize: bool) -> popdecode::analyses::time_course::TimeReport {
    let scenario = TimeScenario {
        trials_per_class: 12,
        units: 6,
        ..TimeScenario::odours()
    };
    let files = spike_events(&scenario);
    let mut r = recipe(Classifier::ShrinkageLda, 2, 9);
    let mut settings = TimeSettings::events(-0.2, 0.6);
    settings.generalize = generalize;
    r.time = Some(settings);
    let f = [
        FileBytes {
            name: "spikes.csv",
            bytes: files.events.as_bytes(),
        },
        FileBytes {
            name: "trials.csv",
            bytes: files.trials.as_bytes(),
        },
    ];
    let data = input::time_course(&f, &r.columns, &r.time.as_ref().unwrap().input).unwrap();
    popdecode::analyses::time_course::run_all(&TimePlan::new(data, &r).unwrap())
}

/// A time course's inference is the cluster test: its methods paragraph gives no per-window binomial threshold
/// (an uncorrected test at every window); the temporal generalization caveat is in the text, the JSON warnings and
/// the methods paragraph, naming the null the matrix was tested against.
#[test]
fn time_course_methods_and_the_generalization_caveat() {
    let r = time_report(false);
    let m = time_methods::paragraph(&r);
    assert!(!m.contains("binomial threshold"), "{m}");
    assert!(!m.contains("generalization"), "{m}");

    let r = time_report(true);
    let caveat = "permuted only the training trials' labels";
    assert!(
        r.warnings.iter().any(|w| w.contains(caveat)),
        "{:?}",
        r.warnings
    );
    assert!(time_text::render(&r).contains(caveat));
    let m = time_methods::paragraph(&r);
    assert!(
        m.contains("Caution: temporal generalization") && m.contains(caveat),
        "{m}"
    );
    let json: serde_json::Value = serde_json::from_str(&r.to_json()).unwrap();
    assert_eq!(json["generalization"]["null_method"], "training-labels");
    assert_eq!(
        json["recipe"]["time"]["generalization_null"],
        "training-labels"
    );
}
