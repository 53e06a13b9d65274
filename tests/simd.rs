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
    for (name, args) in &cases {
        let chosen = json(&dir, name, false, args);
        let baseline = json(&dir, name, true, args);
        assert_eq!(chosen, baseline, "{name}: the two kernel copies disagree");
    }
    let _ = std::fs::remove_dir_all(&dir);
}
