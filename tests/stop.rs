//! A thread asked to stop (`popdecode::stop`, set by the page for a worker it has let go) fits no more folds, and
//! the request never reaches another thread: the same split cross-validated on a thread not asked to stop fits
//! every fold.

use popdecode::decoders::{build, cross_validate, FoldSet, Nesting};
use popdecode::recipe::Classifier;
use std::sync::atomic::{AtomicU32, Ordering};

fn split() -> (Vec<f64>, Vec<usize>, Vec<usize>) {
    let (n, p) = (40, 3);
    let y: Vec<usize> = (0..n).map(|i| i % 2).collect();
    let x = (0..n * p)
        .map(|c| {
            (c % 7) as f64
                + if c % p == 0 {
                    2.0 * y[c / p] as f64
                } else {
                    0.0
                }
        })
        .collect();
    let fold = (0..n).map(|i| (i / 2) % 4).collect();
    (x, y, fold)
}

fn fits() -> u32 {
    let (x, y, fold) = split();
    let set = FoldSet {
        x: &x,
        p: 3,
        y: &y,
        fold: &fold,
        folds: 4,
        n_classes: 2,
    };
    cross_validate(
        build(Classifier::LinearSvm, 1.0, false).as_ref(),
        &set,
        &Nesting::plain(0),
        false,
    )
    .fits
}

#[test]
fn a_thread_asked_to_stop_fits_no_more_folds_and_no_other_thread_stops() {
    let stopped = std::thread::spawn(|| {
        // As the page does it: a write to the thread's flag at the address the thread gave.
        unsafe { (*(popdecode::stop::address() as *const AtomicU32)).store(1, Ordering::Relaxed) };
        assert!(popdecode::stop::requested());
        fits()
    })
    .join()
    .unwrap();
    assert_eq!(stopped, 0, "a stopped thread fitted {stopped} folds");
    assert!(!popdecode::stop::requested());
    assert_eq!(fits(), 4, "a thread not asked to stop fits every fold");
}
