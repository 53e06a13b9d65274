//! Test rows are predicted a block at a time (`decoders::cross_validate`, so that a worker never copies a whole
//! test fold): that is only allowed because every decoder predicts a row from that row alone. Checked here for
//! every decoder, tuned and not, two and three classes: predictions and decision values of a whole set equal those
//! of the same rows cut into blocks of 1, 3 and 7, bit for bit.

use popdecode::decoders::{build, FittedPipeline};
use popdecode::recipe::Classifier;

/// Invented counts: `n` trials × `p` neurons, the class shifting a few neurons (a small linear congruential stream,
/// so the test needs no data files).
fn invented(n: usize, p: usize, k: usize) -> (Vec<f64>, Vec<usize>) {
    let mut s: u64 = 12345;
    let mut next = || {
        s = s
            .wrapping_mul(6364136223846793005)
            .wrapping_add(1442695040888963407);
        (s >> 11) as f64 / (1u64 << 53) as f64
    };
    let y: Vec<usize> = (0..n).map(|i| i % k).collect();
    let x = (0..n * p)
        .map(|c| {
            let (i, j) = (c / p, c % p);
            (3.0 + if j % k == y[i] { 1.5 } else { 0.0 } + 4.0 * next()).floor()
        })
        .collect();
    (x, y)
}

#[test]
fn predicting_in_blocks_changes_nothing() {
    let p = 6;
    for k in [2, 3] {
        let (x, y) = invented(60, p, k);
        let (x_train, y_train) = (&x[..40 * p], &y[..40]);
        let x_test = x[40 * p..].to_vec();
        for classifier in Classifier::ALL {
            for tune in [false, true] {
                let decoder = build(classifier, 1.0, tune);
                let model = FittedPipeline::fit(decoder.as_ref(), x_train, p, y_train, k);
                let whole = model.predict(x_test.clone());
                let whole_decision = (k == 2).then(|| model.decision(x_test.clone()));
                for block in [1, 3, 7] {
                    let mut labels = Vec::new();
                    let mut decision = Vec::new();
                    for rows in x_test.chunks(block * p) {
                        labels.extend(model.predict(rows.to_vec()));
                        if k == 2 {
                            decision.extend(model.decision(rows.to_vec()));
                        }
                    }
                    assert_eq!(
                        labels, whole,
                        "{classifier:?} (tuned: {tune}), {k} classes, blocks of {block}"
                    );
                    if let Some(d) = &whole_decision {
                        let bits = |v: &[f64]| v.iter().map(|d| d.to_bits()).collect::<Vec<u64>>();
                        assert_eq!(
                            bits(&decision),
                            bits(d),
                            "{classifier:?} (tuned: {tune}), decisions, blocks of {block}"
                        );
                    }
                }
                // The test is only worth something if the decoders predict more than one class here.
                assert!(
                    whole.iter().any(|&c| c != whole[0]),
                    "{classifier:?} predicted one class for every row"
                );
            }
        }
    }
}
