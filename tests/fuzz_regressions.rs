//! Every input the fuzzer (crate/bin/fuzz/, scripts/fuzz.sh) ever found failing, replayed: each must now end with
//! a result or a message, within its memory budget (the fuzzer's counting allocator is this test's allocator too)
//! and without hanging. The inputs live in tests/fuzz-regressions/<kind>/, where the fuzzer writes them.

#[path = "../crate/bin/fuzz/alloc.rs"]
mod alloc;
// The fuzzer's other entry points (kind names, recipes shown on replay) are not used here.
#[allow(dead_code)]
#[path = "../crate/bin/fuzz/targets.rs"]
mod targets;

use std::sync::mpsc;
use std::time::Duration;
use targets::Kind;

#[global_allocator]
static ALLOC: alloc::Counting = alloc::Counting;

/// Far beyond the seconds any kept input takes; only an endless loop reaches it.
const HANG: Duration = Duration::from_secs(120);

#[test]
fn every_input_the_fuzzer_kept_ends_with_a_result_or_a_message() {
    let root = std::path::Path::new(env!("CARGO_MANIFEST_DIR")).join("tests/fuzz-regressions");
    let mut replayed = 0;
    // One input at a time, so that the allocator's budget is this input's alone.
    for kind in Kind::ALL {
        let mut paths: Vec<_> = std::fs::read_dir(root.join(kind.name()))
            .into_iter()
            .flatten()
            .flatten()
            .map(|e| e.path())
            .collect();
        paths.sort();
        for path in paths {
            let input = std::fs::read(&path).unwrap();
            let (tx, rx) = mpsc::channel();
            std::thread::spawn(move || {
                let outcome = alloc::with_budget(alloc::budget(input.len()), || {
                    std::panic::catch_unwind(|| targets::run(kind, &input))
                });
                let _ = tx.send(outcome.is_ok());
            });
            match rx.recv_timeout(HANG) {
                Ok(no_panic) => assert!(no_panic, "{}: panicked", path.display()),
                Err(_) => panic!("{}: no end after {HANG:?}", path.display()),
            }
            replayed += 1;
        }
    }
    // The harness itself: each kind's seeds run too (a seed that fails would make every mutation of it noise).
    for kind in Kind::ALL {
        for seed in targets::seeds(kind, None) {
            let outcome = std::panic::catch_unwind(|| targets::run(kind, &seed));
            assert!(outcome.is_ok(), "a {} seed panicked", kind.name());
        }
    }
    println!("{replayed} kept inputs replayed");
}
