//! The faces of generalization across conditions and of continuous decoding agree byte for byte: the CLI's `--json`
//! (tasks on threads) against the page's path (the same `from_files` door its loaders call, every task and outcome
//! passed through JSON as a worker passes them, outcomes in reverse order); a saved recipe reproduces the run; bad
//! settings stop the CLI with one line and exit code 2.

use popdecode::analyses::across::AcrossPlan;
use popdecode::analyses::continuous::ContinuousPlan;
use popdecode::analyses::Analysis;
use popdecode::input::FileBytes;
use popdecode::recipe::Recipe;
use std::path::{Path, PathBuf};
use std::process::Command;

fn sample(name: &str) -> PathBuf {
    PathBuf::from(env!("CARGO_MANIFEST_DIR"))
        .join("samples")
        .join(name)
}

fn temp_dir(name: &str) -> PathBuf {
    let dir = std::env::temp_dir().join(format!("popdecode-bridge-{name}-{}", std::process::id()));
    std::fs::create_dir_all(&dir).unwrap();
    dir
}

/// Run the CLI; return its result JSON and the recipe it saved.
fn cli(dir: &Path, args: &[&str]) -> (String, Recipe) {
    let (json, recipe) = (dir.join("result.json"), dir.join("recipe.json"));
    let out = Command::new(env!("CARGO_BIN_EXE_popdecode"))
        .args(args)
        .args([
            "--quiet",
            "--threads",
            "3",
            "--json",
            json.to_str().unwrap(),
        ])
        .args(["--save-recipe", recipe.to_str().unwrap()])
        .output()
        .unwrap();
    assert!(
        out.status.success(),
        "{}",
        String::from_utf8_lossy(&out.stderr)
    );
    let recipe =
        Recipe::from_json("recipe.json", &std::fs::read_to_string(recipe).unwrap()).unwrap();
    (
        std::fs::read_to_string(json)
            .unwrap()
            .trim_end()
            .to_string(),
        recipe,
    )
}

/// What a page run does with a plan: tasks and outcomes as JSON strings, outcomes joined in any order.
fn as_the_page_does<A: Analysis>(plan: &A) -> String {
    let outcomes: Vec<String> = plan
        .tasks()
        .iter()
        .rev()
        .map(|t| {
            let task: A::Task = serde_json::from_str(&serde_json::to_string(t).unwrap()).unwrap();
            serde_json::to_string(&plan.run(task)).unwrap()
        })
        .collect();
    let joined = format!("[{}]", outcomes.join(","));
    let outcomes: Vec<A::Outcome> = serde_json::from_str(&joined).unwrap();
    plan.finish(&outcomes).json
}

fn file_bytes(name: &str) -> Vec<u8> {
    std::fs::read(sample(name)).unwrap()
}

#[test]
fn across_a_trial_table_page_equals_cli() {
    let dir = temp_dir("across-table");
    let csv = sample("choices.csv");
    let (json, recipe) = cli(
        &dir,
        &[
            "decode",
            csv.to_str().unwrap(),
            "--label",
            "choice",
            "--across",
            "context",
            "--train-levels",
            "citral",
            "--test-levels",
            "hexanal",
            "--group",
            "session",
            "--repeats",
            "6",
            "--shuffles",
            "8",
            "--classifier",
            "logistic",
        ],
    );
    let bytes = file_bytes("choices.csv");
    let files = [FileBytes {
        name: "choices.csv",
        bytes: &bytes,
    }];
    let plan = AcrossPlan::from_files(&files, &recipe).unwrap();
    assert_eq!(as_the_page_does(&plan), json);
    assert!(json.contains("\"schema\": \"popdecode-across/1\""));
    // The saved recipe reproduces the run exactly.
    let (again, _) = cli(
        &dir,
        &[
            "decode",
            csv.to_str().unwrap(),
            "--recipe",
            dir.join("recipe.json").to_str().unwrap(),
        ],
    );
    assert_eq!(again, json);
}

#[test]
fn across_a_recording_page_equals_cli() {
    let dir = temp_dir("across-time");
    let csv = sample("choices_binned.csv");
    let (json, recipe) = cli(
        &dir,
        &[
            "timecourse",
            csv.to_str().unwrap(),
            "--label",
            "choice",
            "--across",
            "context",
            "--ignore",
            "session",
            "--repeats",
            "2",
            "--shuffles",
            "4",
            "--generalize",
        ],
    );
    let bytes = file_bytes("choices_binned.csv");
    let files = [FileBytes {
        name: "choices_binned.csv",
        bytes: &bytes,
    }];
    let plan = AcrossPlan::from_files(&files, &recipe).unwrap();
    assert_eq!(as_the_page_does(&plan), json);
    assert!(json.contains("\"schema\": \"popdecode-across-timecourse/1\""));
}

#[test]
fn continuous_and_circular_page_equals_cli() {
    let dir = temp_dir("continuous");
    let csv = sample("running.csv");
    let bytes = file_bytes("running.csv");
    let files = [FileBytes {
        name: "running.csv",
        bytes: &bytes,
    }];
    for (label, other, extra) in [
        ("speed", "heading", vec!["--classifier", "ridge"]),
        (
            "heading",
            "speed",
            vec!["--classifier", "circular-ridge", "--angle-unit", "degrees"],
        ),
    ] {
        let mut args = vec![
            "decode",
            csv.to_str().unwrap(),
            "--label",
            label,
            "--ignore",
            other,
        ];
        args.extend(["--repeats", "4", "--shuffles", "6", "--group", "session"]);
        args.extend(extra);
        let (json, recipe) = cli(&dir, &args);
        let plan = ContinuousPlan::from_files(&files, &recipe).unwrap();
        assert_eq!(as_the_page_does(&plan), json, "{label}");
        let v: serde_json::Value = serde_json::from_str(&json).unwrap();
        assert!(v["summary"]["r2"]["mean"].is_f64() && v["shuffle"]["p_value"].is_f64());
        assert_eq!(
            v["summary"]["angular_error"]["mean"].is_f64(),
            label == "heading"
        );
    }
    let binned = sample("running_binned.csv");
    let (json, recipe) = cli(
        &dir,
        &[
            "timecourse",
            binned.to_str().unwrap(),
            "--label",
            "speed",
            "--ignore",
            "heading,session",
            "--classifier",
            "ridge",
            "--repeats",
            "2",
            "--shuffles",
            "4",
        ],
    );
    let bytes = file_bytes("running_binned.csv");
    let files = [FileBytes {
        name: "running_binned.csv",
        bytes: &bytes,
    }];
    assert_eq!(
        as_the_page_does(&ContinuousPlan::from_files(&files, &recipe).unwrap()),
        json
    );
}

/// Each face speaks its own language: the CLI names its flags, exits with code 2 and prints one line.
#[test]
fn bad_settings_stop_the_cli_with_one_line() {
    let run = |args: &[&str]| {
        let out = Command::new(env!("CARGO_BIN_EXE_popdecode"))
            .args(args)
            .output()
            .unwrap();
        (
            out.status.code(),
            String::from_utf8_lossy(&out.stderr).into_owned(),
        )
    };
    let running = sample("running.csv");
    let choices = sample("choices.csv");
    let cases: [(&[&str], &str); 5] = [
        (
            &[
                "decode",
                running.to_str().unwrap(),
                "--label",
                "heading",
                "--classifier",
                "circular-ridge",
            ],
            "--angle-unit",
        ),
        (
            &[
                "decode",
                running.to_str().unwrap(),
                "--label",
                "speed",
                "--angle-unit",
                "degrees",
            ],
            "circular-ridge only",
        ),
        (
            &[
                "decode",
                running.to_str().unwrap(),
                "--label",
                "session",
                "--classifier",
                "ridge",
            ],
            "is not a number",
        ),
        (
            &[
                "decode",
                choices.to_str().unwrap(),
                "--label",
                "choice",
                "--across",
                "context",
                "--train-levels",
                "citral",
            ],
            "in pairs",
        ),
        (
            &[
                "neurons",
                running.to_str().unwrap(),
                "--label",
                "speed",
                "--classifier",
                "ridge",
            ],
            "decodes a continuous variable",
        ),
    ];
    for (args, expected) in cases {
        let (code, stderr) = run(args);
        assert_eq!(code, Some(2), "{args:?}: {stderr}");
        assert!(
            stderr.contains(expected) && stderr.trim().lines().count() == 1,
            "{args:?}: {stderr}"
        );
    }
}
