//! The command line as a user runs it: exit codes, one-line errors, recipes, and thread-count independence.

use std::path::PathBuf;
use std::process::Command;

fn bin() -> Command {
    Command::new(env!("CARGO_BIN_EXE_popdecode"))
}

fn temp_dir(name: &str) -> PathBuf {
    let dir = std::env::temp_dir().join(format!("popdecode-cli-{name}-{}", std::process::id()));
    std::fs::create_dir_all(&dir).unwrap();
    dir
}

/// Fail with the command's stderr unless it exited successfully.
fn succeeded(out: &std::process::Output) {
    assert!(
        out.status.success(),
        "{}",
        String::from_utf8_lossy(&out.stderr)
    );
}

fn sample() -> PathBuf {
    PathBuf::from(env!("CARGO_MANIFEST_DIR")).join("samples/odours.csv")
}

fn decode_json(dir: &std::path::Path, name: &str, extra: &[&str]) -> String {
    let json = dir.join(name);
    let out = bin()
        .args([
            "decode",
            sample().to_str().unwrap(),
            "--label",
            "odour",
            "--group",
            "session",
        ])
        .args([
            "--repeats",
            "8",
            "--quiet",
            "--json",
            json.to_str().unwrap(),
        ])
        .args(extra)
        .output()
        .unwrap();
    succeeded(&out);
    std::fs::read_to_string(json).unwrap()
}

#[test]
fn thread_count_does_not_change_a_byte() {
    let dir = temp_dir("threads");
    let one = decode_json(&dir, "one.json", &["--threads", "1", "--shuffles", "12"]);
    let three = decode_json(&dir, "three.json", &["--threads", "3", "--shuffles", "12"]);
    assert_eq!(one, three);
    let v: serde_json::Value = serde_json::from_str(&one).unwrap();
    for key in ["accuracy", "balanced_accuracy"] {
        assert!(v["summary"][key]["mean"].is_f64() && v["summary"][key]["sd"].is_f64());
    }
    assert_eq!(v["classes"].as_array().unwrap().len(), 4);
    assert_eq!(v["shuffle"]["null"].as_array().unwrap().len(), 12);
    assert!(v["shuffle"]["p_value"].is_f64());
    let rows = v["summary"]["confusion"].as_array().unwrap();
    for row in rows {
        let sum: f64 = row
            .as_array()
            .unwrap()
            .iter()
            .map(|x| x.as_f64().unwrap())
            .sum();
        assert!(
            (sum - 1.0).abs() < 1e-9,
            "confusion rows are normalised: {sum}"
        );
    }
}

#[test]
fn a_saved_recipe_reproduces_the_run() {
    let dir = temp_dir("recipe");
    let recipe = dir.join("r.json");
    let first = decode_json(
        &dir,
        "a.json",
        &[
            "--classifier",
            "shrinkage-lda",
            "--shuffles",
            "5",
            "--save-recipe",
            recipe.to_str().unwrap(),
        ],
    );
    let json = dir.join("b.json");
    let out = bin()
        .args([
            "decode",
            sample().to_str().unwrap(),
            "--recipe",
            recipe.to_str().unwrap(),
            "--quiet",
        ])
        .args(["--json", json.to_str().unwrap()])
        .output()
        .unwrap();
    succeeded(&out);
    assert_eq!(first, std::fs::read_to_string(json).unwrap());
    assert!(std::fs::read_to_string(&recipe)
        .unwrap()
        .contains("\"classifier\": \"shrinkage-lda\""));
}

#[test]
fn no_shuffles_gives_a_null_p_value() {
    let dir = temp_dir("noshuffle");
    let json = decode_json(&dir, "n.json", &["--shuffles", "0"]);
    let v: serde_json::Value = serde_json::from_str(&json).unwrap();
    assert!(v["shuffle"]["p_value"].is_null());
    assert_eq!(v["shuffle"]["null"].as_array().unwrap().len(), 0);
}

#[test]
fn bad_input_exits_non_zero_with_one_line() {
    let dir = temp_dir("bad");
    let file = dir.join("broken.csv");
    std::fs::write(&file, "odour,n1,n2\na,1,2\nb,3,oops\na,2,2\nb,4,1\n").unwrap();
    let out = bin()
        .args([
            "decode",
            file.to_str().unwrap(),
            "--label",
            "odour",
            "--quiet",
        ])
        .output()
        .unwrap();
    assert_eq!(out.status.code(), Some(2));
    let stderr = String::from_utf8_lossy(&out.stderr);
    assert_eq!(stderr.trim().lines().count(), 1, "{stderr}");
    assert!(
        stderr.contains("broken.csv, line 3, column 'n2': 'oops' is not a number"),
        "{stderr}"
    );
    assert!(out.stdout.is_empty());
}

#[test]
fn predict_uses_the_given_folds() {
    let dir = temp_dir("predict");
    let file = dir.join("f.csv");
    let mut text = String::from("odour,fold,n1\n");
    for i in 0..20 {
        let (class, x) = if i % 2 == 0 { ("a", -1.0) } else { ("b", 1.0) };
        text += &format!("{class},{},{}\n", i % 4, x + 0.01 * i as f64);
    }
    std::fs::write(&file, text).unwrap();
    let out = bin()
        .args([
            "predict",
            file.to_str().unwrap(),
            "--label",
            "odour",
            "--fold-column",
            "fold",
        ])
        .output()
        .unwrap();
    succeeded(&out);
    let stdout = String::from_utf8(out.stdout).unwrap();
    let lines: Vec<&str> = stdout.lines().collect();
    assert_eq!(lines[0], "line,fold,true,predicted");
    assert_eq!(lines.len(), 21);
    assert!(
        lines[1..].iter().all(|l| {
            let f: Vec<&str> = l.split(',').collect();
            f[2] == f[3]
        }),
        "{stdout}"
    );
}

fn samples(name: &str) -> String {
    PathBuf::from(env!("CARGO_MANIFEST_DIR"))
        .join("samples")
        .join(name)
        .to_str()
        .unwrap()
        .to_string()
}

fn timecourse(dir: &std::path::Path, name: &str, extra: &[&str]) -> String {
    let json = dir.join(name);
    let out = bin()
        .args(["timecourse", "--events", &samples("odour_spikes.csv")])
        .args(["--trials", &samples("odour_trials.csv"), "--label", "odour"])
        .args([
            "--start", "-0.5", "--end", "1", "--width", "0.2", "--step", "0.1",
        ])
        .args([
            "--classifier",
            "shrinkage-lda",
            "--repeats",
            "3",
            "--shuffles",
            "9",
        ])
        .args(["--quiet", "--json", json.to_str().unwrap()])
        .args(extra)
        .output()
        .unwrap();
    succeeded(&out);
    std::fs::read_to_string(json).unwrap()
}

/// The time course's JSON carries the keys the issue names, and threads do not change a byte of it.
#[test]
fn timecourse_json_is_complete_and_thread_independent() {
    let dir = temp_dir("timecourse");
    let one = timecourse(&dir, "one.json", &["--threads", "1", "--generalize"]);
    let three = timecourse(&dir, "three.json", &["--threads", "3", "--generalize"]);
    assert_eq!(one, three);
    let v: serde_json::Value = serde_json::from_str(&one).unwrap();
    assert_eq!(v["schema"], "popdecode-timecourse/1");
    let windows = v["windows"].as_array().unwrap();
    assert_eq!(windows.len(), 14); // starts -0.5, -0.4, ..., 0.8 (0.8 + 0.2 = 1, the end)
    assert_eq!(windows[0]["time"], -0.4);
    for w in windows {
        assert!(w["accuracy"]["mean"].is_f64() && w["accuracy"]["sd"].is_f64());
        assert!(w["null_p95"].is_f64());
    }
    for c in v["clusters"].as_array().unwrap() {
        assert!(c["start"].is_f64() && c["end"].is_f64() && c["p_value"].is_f64());
    }
    let g = v["generalization"]["scores"].as_array().unwrap();
    assert_eq!(g.len(), 14);
    assert_eq!(g[0].as_array().unwrap().len(), 14);
}

/// A saved time-course recipe re-runs the identical analysis from the recipe alone.
#[test]
fn timecourse_recipe_reproduces_the_run() {
    let dir = temp_dir("timecourse-recipe");
    let recipe = dir.join("r.json");
    let first = timecourse(&dir, "a.json", &["--save-recipe", recipe.to_str().unwrap()]);
    let json = dir.join("b.json");
    let out = bin()
        .args(["timecourse", "--events", &samples("odour_spikes.csv")])
        .args(["--trials", &samples("odour_trials.csv")])
        .args(["--recipe", recipe.to_str().unwrap(), "--quiet"])
        .args(["--json", json.to_str().unwrap()])
        .output()
        .unwrap();
    succeeded(&out);
    assert_eq!(first, std::fs::read_to_string(json).unwrap());
    let text = std::fs::read_to_string(&recipe).unwrap();
    assert!(text.contains("\"width\": 0.2"), "{text}");
}

#[test]
fn timecourse_without_a_span_says_what_to_add() {
    let out = bin()
        .args(["timecourse", "--events", &samples("odour_spikes.csv")])
        .args(["--trials", &samples("odour_trials.csv"), "--label", "odour"])
        .output()
        .unwrap();
    assert_eq!(out.status.code(), Some(2));
    let stderr = String::from_utf8_lossy(&out.stderr);
    assert!(stderr.contains("--start and --end"), "{stderr}");
}

/// Help names every decoder (the kernel SVM included, and where C and tuning apply to it) and prints each default
/// once (issue 13, item 13).
#[test]
fn help_names_every_decoder_and_each_default_once() {
    let help = |sub: &str| {
        let out = bin().args([sub, "--help"]).output().unwrap();
        succeeded(&out);
        String::from_utf8(out.stdout).unwrap()
    };
    for sub in ["decode", "timecourse", "neurons"] {
        let text = help(sub);
        for c in popdecode::recipe::Classifier::ALL {
            assert!(text.contains(c.name()), "{sub} --help omits {}", c.name());
        }
        let c_help = text.split("--c <C>").nth(1).unwrap();
        assert!(
            c_help[..c_help.find("--tune").unwrap()].contains("kernel SVM"),
            "{sub}: --c"
        );
        let tune_help = text.split("--tune").nth(1).unwrap();
        assert!(tune_help[..300].contains("kernel"), "{sub}: --tune");
        for line in text.lines() {
            assert!(line.matches("[default:").count() <= 1, "{sub}: {line}");
        }
    }
}

/// `decode --pairwise` writes the pairs in the JSON (key `pairwise`), a table in the text and the heatmap with the
/// other figures (issue 13, item 15).
#[test]
fn pairwise_decoding_reaches_every_output() {
    let dir = temp_dir("pairwise");
    let json = dir.join("r.json");
    let plots = dir.join("plots");
    let out = bin()
        .args(["decode", sample().to_str().unwrap(), "--label", "odour"])
        .args([
            "--ignore",
            "session",
            "--pairwise",
            "--repeats",
            "3",
            "--shuffles",
            "4",
        ])
        .args(["--classifier", "shrinkage-lda", "--quiet"])
        .args([
            "--json",
            json.to_str().unwrap(),
            "--plots",
            plots.to_str().unwrap(),
        ])
        .output()
        .unwrap();
    succeeded(&out);
    let text = String::from_utf8_lossy(&out.stdout);
    assert!(text.contains("pairwise decoding"), "{text}");
    let v: serde_json::Value =
        serde_json::from_str(&std::fs::read_to_string(json).unwrap()).unwrap();
    assert_eq!(v["pairwise"]["pairs"].as_array().unwrap().len(), 6);
    assert_eq!(v["recipe"]["pairwise"], true);
    assert!(std::fs::read_to_string(plots.join("pairwise.svg"))
        .unwrap()
        .contains("Pairwise decoding"));
}

/// Settings of one analysis given to another are refused with one message, never silently ignored: pairwise
/// decoding across conditions or of a continuous variable, and a decoder of numbers for a study (said once for the
/// study, not once per session).
#[test]
fn settings_that_do_not_combine_are_refused_once() {
    let samples = PathBuf::from(env!("CARGO_MANIFEST_DIR")).join("samples");
    let s = |name: &str| samples.join(name).to_str().unwrap().to_string();
    let cases: [(Vec<String>, &str); 3] = [
        (
            vec![
                "decode".into(),
                s("choices.csv"),
                "--label".into(),
                "choice".into(),
                "--across".into(),
                "context".into(),
                "--pairwise".into(),
            ],
            "not combined with training and testing across conditions",
        ),
        (
            vec![
                "decode".into(),
                s("running.csv"),
                "--label".into(),
                "speed".into(),
                "--classifier".into(),
                "ridge".into(),
                "--pairwise".into(),
            ],
            "a continuous variable has no pairs",
        ),
        (
            vec![
                "study".into(),
                s("study/study.csv"),
                "--label".into(),
                "odour".into(),
                "--classifier".into(),
                "ridge".into(),
            ],
            "this analysis decodes classes",
        ),
    ];
    for (args, expected) in cases {
        let out = bin().args(&args).output().unwrap();
        assert_eq!(out.status.code(), Some(2), "{args:?}");
        let err = String::from_utf8_lossy(&out.stderr);
        assert!(err.contains(expected), "{args:?}: {err}");
        assert_eq!(
            err.matches("decodes classes").count().max(1),
            1,
            "said once: {err}"
        );
        assert_eq!(err.lines().count(), 1, "one line: {err}");
    }
}

/// Runs a command expected to be refused before any work: exit code 2, one line naming the problem, nothing on
/// standard output (no result printed, so no work was done), and the input untouched.
fn refused(args: &[&str], expected: &str) {
    let out = bin().args(args).output().unwrap();
    let stderr = String::from_utf8_lossy(&out.stderr);
    assert_eq!(out.status.code(), Some(2), "{args:?}: {stderr}");
    assert_eq!(stderr.trim().lines().count(), 1, "{stderr}");
    assert!(stderr.contains(expected), "{args:?}: {stderr}");
    assert!(!stderr.contains("panicked"), "{stderr}");
    assert!(out.stdout.is_empty(), "{args:?} did the work");
}

/// Found by a hostile review: `predict` on folds where one fold holds a whole class wrote all-wrong predictions for
/// it with no word, and the CSV said nothing of where it came from. Now standard error names the data and decoder
/// and cautions about the class; folds whose training trials hold one class are refused.
#[test]
fn predict_says_what_it_predicted_and_which_folds_cannot_work() {
    let dir = temp_dir("predict-folds");
    let data = dir.join("f.csv");
    let mut csv = String::from("odour,n1,n2,fold\n");
    for i in 0..24 {
        let (odour, fold) = match i % 3 {
            0 => ("a", 1),
            1 => ("b", 2 + i % 2),
            _ => ("c", 2 + (i / 3) % 2),
        };
        csv += &format!(
            "{odour},{},{},{fold}\n",
            (i * 7 % 5) as f64 + 0.5,
            (i * 3 % 4) as f64
        );
    }
    std::fs::write(&data, &csv).unwrap();
    let d = data.to_str().unwrap();
    let out = bin()
        .args(["predict", d, "--label", "odour", "--fold-column", "fold"])
        .output()
        .unwrap();
    let stderr = String::from_utf8_lossy(&out.stderr);
    assert!(out.status.success(), "{stderr}");
    assert!(
        stderr.contains("predictions of 'odour' in f.csv (SHA-256 "),
        "{stderr}"
    );
    assert!(stderr.contains("by linear-svm (C = 1)"), "{stderr}");
    assert!(
        stderr.contains("caution: fold 1 holds every trial of 'a': the decoder that predicts it never saw that class"),
        "{stderr}"
    );
    let predictions = String::from_utf8_lossy(&out.stdout);
    assert_eq!(predictions.lines().count(), 25);
    // Two classes, one of them only in fold 1: fold 1's training trials hold one class.
    let two: String = csv
        .lines()
        .filter(|l| !l.starts_with("c,"))
        .map(|l| l.to_string() + "\n")
        .collect();
    std::fs::write(&data, two).unwrap();
    refused(
        &["predict", d, "--label", "odour", "--fold-column", "fold"],
        "the trials outside fold 1 are all of class 'b'",
    );
}

/// Found by a hostile review: with standard error not a terminal (a log file, a cluster job) the progress bar is not
/// drawn, and a run of millions of fits said nothing of its size. It now says it first; `--quiet` says nothing.
#[test]
fn a_run_logged_to_a_file_says_its_size_first() {
    let s = sample();
    let args = [
        "decode",
        s.to_str().unwrap(),
        "--label",
        "odour",
        "--repeats",
        "3",
        "--shuffles",
        "4",
    ];
    let out = bin().args(args).output().unwrap();
    assert!(out.status.success());
    let stderr = String::from_utf8_lossy(&out.stderr);
    // 3 repeats (a task each) and 4 shuffles (a task each, of min(repeats, 10) = 3 repeats), 5 folds a repeat.
    assert_eq!(
        stderr.lines().next(),
        Some("popdecode: 75 fits in 7 tasks, run in parallel"),
        "{stderr}"
    );
    let quiet = bin().args(args).arg("--quiet").output().unwrap();
    assert!(
        quiet.stderr.is_empty(),
        "{}",
        String::from_utf8_lossy(&quiet.stderr)
    );
}

/// Found by a hostile review: the demo's binned table given to `decode` was decoded with its 1800 time bins as
/// trials; it is refused, naming the file, lines and column.
#[test]
fn a_binned_table_given_as_trials_is_refused() {
    let binned = PathBuf::from(env!("CARGO_MANIFEST_DIR")).join("samples/odours_binned.csv");
    refused(
        &["decode", binned.to_str().unwrap(), "--label", "odour"],
        "odours_binned.csv, lines 2 and 3, column 'trial': trial 'tr001' is on two rows in a row, as in a binned table",
    );
}

/// Found by a hostile review: `--json` naming the input overwrote the data after the run, a missing folder or a file
/// given to `--plots` failed only at the end of the work, and `--threads 100000` spent minutes starting threads.
#[test]
fn outputs_and_threads_are_checked_before_any_work() {
    let dir = temp_dir("outputs");
    let data = dir.join("odours.csv");
    std::fs::copy(sample(), &data).unwrap();
    let before = std::fs::read(&data).unwrap();
    let d = data.to_str().unwrap();
    let base = ["decode", d, "--label", "odour", "--quiet"];
    fn with<'a>(base: &[&'a str], extra: &[&'a str]) -> Vec<&'a str> {
        [base, extra].concat()
    }
    refused(&with(&base, &["--json", d]), "this is the input file");
    refused(
        &with(&base, &["--save-recipe", d]),
        "this is the input file",
    );
    let missing = dir.join("no-such-folder").join("r.json");
    refused(
        &with(&base, &["--json", missing.to_str().unwrap()]),
        "does not exist",
    );
    refused(
        &with(&base, &["--plots", d]),
        "this is a file; name a folder",
    );
    refused(
        &with(&base, &["--json", dir.to_str().unwrap()]),
        "this is a folder",
    );
    refused(
        &with(&base, &["--threads", "100000"]),
        "--threads takes at most 1024",
    );
    refused(
        &with(&base, &["--threads", "0"]),
        "--threads must be at least 1",
    );
    assert_eq!(std::fs::read(&data).unwrap(), before);
}

/// Found by a hostile review: 10¹¹ group draws decoded every session, then aborted allocating 2.4 TB.
#[test]
fn group_draws_are_capped_before_any_session_is_decoded() {
    let study = PathBuf::from(env!("CARGO_MANIFEST_DIR")).join("samples/study/study.csv");
    refused(
        &[
            "study",
            study.to_str().unwrap(),
            "--label",
            "odour",
            "--quiet",
            "--group-draws",
            "100000000000",
        ],
        "the group tests take at most 100000 draws",
    );
}
