//! The kernels' two copies (baseline x86-64 and AVX2, chosen at run time: crate/decoders/simd.rs) give the same
//! bytes: every decoder with shuffles, a time course with temporal generalization and the neuron analyses, run
//! once on the processor's choice and once with `POPDECODE_SIMD=baseline`. On a processor without AVX2 both runs
//! take the baseline copies and the test says so instead of passing silently.

use std::path::{Path, PathBuf};
use std::process::Command;

fn samples() -> PathBuf {
    PathBuf::from(env!("CARGO_MANIFEST_DIR")).join("samples")
}

/// Run the CLI with `args` plus `--json`, with or without the baseline forced, and return the JSON.
fn json(dir: &Path, name: &str, baseline: bool, args: &[&str]) -> String {
    let out_path = dir.join(format!(
        "{name}-{}.json",
        if baseline { "baseline" } else { "chosen" }
    ));
    let mut cmd = Command::new(env!("CARGO_BIN_EXE_popdecode"));
    if baseline {
        cmd.env("POPDECODE_SIMD", "baseline");
    } else {
        cmd.env_remove("POPDECODE_SIMD");
    }
    let out = cmd
        .args(args)
        .args(["--quiet", "--json", out_path.to_str().unwrap()])
        .output()
        .unwrap();
    assert!(
        out.status.success(),
        "{name}: {}",
        String::from_utf8_lossy(&out.stderr)
    );
    std::fs::read_to_string(out_path).unwrap()
}

#[test]
fn baseline_and_wider_kernels_write_the_same_bytes() {
    if !std::arch::is_x86_feature_detected!("avx2") {
        eprintln!("this processor has no AVX2: both runs take the baseline kernels");
    }
    let dir = std::env::temp_dir().join(format!("popdecode-simd-{}", std::process::id()));
    std::fs::create_dir_all(&dir).unwrap();
    let table = samples().join("odours.csv");
    let table = table.to_str().unwrap();
    let binned = samples().join("odours_binned.csv");
    let binned = binned.to_str().unwrap();
    let mut cases: Vec<(String, Vec<&str>)> = Vec::new();
    for classifier in [
        "shrinkage-lda",
        "linear-svm",
        "logistic",
        "nearest-mean",
        "gaussian-nb",
        "poisson-nb",
        "rbf-svm",
    ] {
        cases.push((
            format!("decode-{classifier}"),
            vec![
                "decode",
                table,
                "--label",
                "odour",
                "--group",
                "session",
                "--classifier",
                classifier,
                "--repeats",
                "3",
                "--shuffles",
                "4",
            ],
        ));
    }
    cases.push((
        "timecourse".into(),
        vec![
            "timecourse",
            binned,
            "--label",
            "odour",
            "--ignore",
            "session",
            "--generalize",
            "--repeats",
            "2",
            "--shuffles",
            "3",
        ],
    ));
    cases.push((
        "neurons".into(),
        vec![
            "neurons",
            table,
            "--label",
            "odour",
            "--repeats",
            "2",
            "--draws",
            "3",
        ],
    ));
    // The linear SVM's other routes, where it works partly in single precision (its dual's passes and `dot_single`):
    // invented tables of 1.3 training trials per feature (the dual) and of 3.7 per feature with 150 features (a short
    // dual, then the primal), written here.
    let wide = [("dual", 100, 60), ("short-dual", 700, 150)].map(|(name, trials, units)| {
        let path = dir.join(format!("{name}.csv"));
        std::fs::write(&path, invented_table(trials, units)).unwrap();
        (name, path.to_str().unwrap().to_owned())
    });
    for (name, path) in &wide {
        cases.push((
            format!("linear-svm-{name}"),
            vec![
                "decode",
                path,
                "--label",
                "odour",
                "--classifier",
                "linear-svm",
                "--repeats",
                "2",
                "--shuffles",
                "2",
            ],
        ));
    }
    for (name, args) in &cases {
        let chosen = json(&dir, name, false, args);
        let baseline = json(&dir, name, true, args);
        assert_eq!(chosen, baseline, "{name}: the two kernel copies disagree");
    }
    let _ = std::fs::remove_dir_all(&dir);
}

/// `trials` invented trials of 4 odours × `units` neurons with a weak odour signal, from a fixed integer recurrence
/// (no random-number crate, so the table is the same everywhere).
fn invented_table(trials: usize, units: usize) -> String {
    let mut state: u64 = 0x2545_f491_4f6c_dd1d;
    let mut next = move || {
        state ^= state << 13;
        state ^= state >> 7;
        state ^= state << 17;
        (state >> 11) as f64 / (1u64 << 53) as f64
    };
    let mut csv = String::from("odour");
    for u in 0..units {
        csv.push_str(&format!(",unit_{u}"));
    }
    csv.push('\n');
    for t in 0..trials {
        let odour = t % 4;
        csv.push_str(&format!("odour_{odour}"));
        for u in 0..units {
            let signal = if u < 10 && u % 4 == odour { 0.8 } else { 0.0 };
            csv.push_str(&format!(",{:.6}", next() + next() - 1.0 + signal));
        }
        csv.push('\n');
    }
    csv
}
