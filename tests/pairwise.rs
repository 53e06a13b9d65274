//! Per-class and pairwise results (issue 13, item 15): every pair of conditions decoded on its own with the same
//! protocol, per-class recall with its own shuffle p-value, and the area under the ROC curve of two-class problems.

use popdecode::analyses::trial_table::report::Report;
use popdecode::analyses::trial_table::{run_all, Plan};
use popdecode::analyses::Analysis;
use popdecode::input;
use popdecode::recipe::{Classifier, Recipe};
use popdecode::rng::{normal, task_rng, Stream};
use std::fmt::Write;

mod common;

/// Four conditions over six features: 'a' at the origin, 'b' shifted on feature 0, 'c' and 'd' both shifted on
/// feature 1, so that 'c' and 'd' cannot be told apart (our own invented design).
fn four_conditions() -> String {
    let mut rng = task_rng(4, Stream::Simulation, 15, 0);
    let mut text = String::from("cond,f0,f1,f2,f3,f4,f5\n");
    for i in 0..120 {
        let (name, shift) = match i % 4 {
            0 => ("a", [0.0, 0.0]),
            1 => ("b", [2.5, 0.0]),
            2 => ("c", [0.0, 2.5]),
            _ => ("d", [0.0, 2.5]),
        };
        text.push_str(name);
        for s in shift.iter().chain(&[0.0; 4]) {
            write!(text, ",{}", s + normal(&mut rng)).unwrap();
        }
        text.push('\n');
    }
    text
}

fn recipe(shuffles: usize) -> Recipe {
    let mut r = Recipe::new("cond");
    r.classifier = Classifier::ShrinkageLda;
    r.repeats = 6;
    r.shuffles = shuffles;
    r.pairwise = true;
    r
}

/// Each pair's result is exactly a two-class analysis of its trials with the same recipe; the indistinguishable
/// pair sits near chance and the others far above; the matrix is symmetric; p-values are adjusted across pairs.
#[test]
fn every_pair_is_decoded_on_its_own_with_the_same_protocol() {
    let text = four_conditions();
    // 99 shuffles: with 19, the smallest p (1/20) cannot pass the BH step for six pairs.
    let r = recipe(99);
    let data = input::trial_table("four.csv", text.as_bytes(), &r.columns).unwrap();
    let plan = Plan::new(data.clone(), &r).unwrap();
    let report = run_all(&plan);
    let pw = report.pairwise.as_ref().expect("pairwise results");
    assert_eq!(pw.pairs.len(), 6);
    let mut alone = r.clone();
    alone.pairwise = false;
    let mut k = 0;
    for a in 0..4 {
        for b in a + 1..4 {
            let own = run_all(&Plan::new(data.with_classes(&[a, b]), &alone).unwrap());
            let pair = &pw.pairs[k];
            assert_eq!(
                pair.classes,
                [data.classes[a].clone(), data.classes[b].clone()]
            );
            assert_eq!(pair.accuracy, own.summary.accuracy, "{:?}", pair.classes);
            assert_eq!(pair.auc, own.summary.auc);
            assert_eq!(pair.p_value, own.shuffle.p_value);
            assert_eq!(pw.matrix[a][b], Some(own.summary.accuracy.mean));
            assert_eq!(pw.matrix[b][a], pw.matrix[a][b]);
            k += 1;
        }
        assert_eq!(pw.matrix[a][a], None);
    }
    let cd = pw.matrix[2][3].unwrap();
    assert!((cd - 0.5).abs() < 0.12, "c vs d {cd}");
    assert!(pw.matrix[0][1].unwrap() > 0.75 && pw.matrix[1][2].unwrap() > 0.75);
    assert!(pw.pairs[5].discovery == Some(false) && pw.pairs[0].discovery == Some(true));
    // The whole analysis is unchanged by the pairs.
    let mut whole = r.clone();
    whole.pairwise = false;
    let without = run_all(&Plan::new(data.clone(), &whole).unwrap());
    assert_eq!(without.summary, report.summary);
    // Faces: the table, the JSON key and the heatmap.
    let finished = plan.finish(
        &plan
            .tasks()
            .into_iter()
            .map(|t| plan.run(t))
            .collect::<Vec<_>>(),
    );
    assert!(finished.text.contains("pairwise decoding"));
    assert!(finished.json.contains("\"pairwise\""));
    let svg = &finished
        .files
        .iter()
        .find(|(n, _)| *n == "pairwise.svg")
        .unwrap()
        .1;
    assert!(svg.contains("Pairwise decoding") && svg.contains("*"));
}

/// Per-class recall gets its own shuffle p-value: 'a' and 'b' are recognised (smallest p), while 'c' and 'd',
/// confused with each other, are still above chance (a quarter) since they are told apart from 'a' and 'b'.
#[test]
fn per_class_recall_has_its_own_p_value() {
    let text = four_conditions();
    let mut r = recipe(19);
    r.pairwise = false;
    let data = input::trial_table("four.csv", text.as_bytes(), &r.columns).unwrap();
    let report: Report = run_all(&Plan::new(data, &r).unwrap());
    let p = report.shuffle.recall_p_values.as_ref().unwrap();
    assert_eq!(p.len(), 4);
    assert_eq!(p[0], 0.05);
    assert_eq!(p[1], 0.05);
    assert_eq!(report.shuffle.recall_null.len(), 19);
    // Two classes: the report carries the AUC over repeats, and its pooling rule.
    let two = four_conditions()
        .lines()
        .filter(|l| l.starts_with("cond") || l.starts_with("a,") || l.starts_with("b,"))
        .collect::<Vec<_>>()
        .join("\n");
    let data = input::trial_table("two.csv", two.as_bytes(), &r.columns).unwrap();
    let report = run_all(&Plan::new(data, &r).unwrap());
    let auc = report.summary.auc.as_ref().unwrap();
    assert!(auc.mean > 0.8 && auc.mean <= 1.0, "{auc:?}");
    assert!(report
        .summary
        .auc_pooling
        .as_ref()
        .unwrap()
        .contains("pooled"));
}

/// A table of three conditions without any information: 20 trials each over four features of pure noise.
fn three_without_information(seed: u64) -> String {
    let mut rng = task_rng(seed, Stream::Simulation, 16, 0);
    let mut text = String::from("cond,f0,f1,f2,f3\n");
    for i in 0..60 {
        text.push_str(["a", "b", "c"][i % 3]);
        for _ in 0..4 {
            write!(text, ",{}", normal(&mut rng)).unwrap();
        }
        text.push('\n');
    }
    text
}

/// Each pair's own shuffle p-value is calibrated: without information, the first pair's p < 0.05 in a share of 300
/// tables inside the binomial 99 % interval around 0.05 (one pair per table, so the tables are independent; P(p <
/// 0.05) = 9/200 for m = 199, Phipson & Smyth 2010; ties only lower it). The pair's permutations are those of the
/// pair's own trials, so the test is the two-class test on them.
#[test]
fn a_pairs_shuffle_p_value_is_calibrated() {
    let datasets = 300;
    let mut rejections = 0;
    for d in 0..datasets {
        let text = three_without_information(20_000 + d);
        let mut r = recipe(199);
        r.repeats = 2;
        r.shuffle_repeats = Some(2);
        r.seed = d;
        let data = input::trial_table("three.csv", text.as_bytes(), &r.columns).unwrap();
        let report = run_all(&Plan::new(data, &r).unwrap());
        let pairs = &report.pairwise.as_ref().unwrap().pairs;
        rejections += u64::from(pairs[0].p_value.unwrap() < 0.05);
    }
    common::assert_calibrated("a pair's own p-value", rejections, datasets);
}
