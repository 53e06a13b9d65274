//! Analyses split into parts (`--part K/N`) and joined by `popdecode combine`: the combined result is the single
//! run's, byte for byte (JSON, printed text and methods, figures and CSVs), for every analysis kind, several N and
//! any order of parts; a killed part is rerun alone; parts that do not belong together are refused by name.

use std::path::{Path, PathBuf};
use std::process::{Command, Output};

fn bin() -> Command {
    Command::new(env!("CARGO_BIN_EXE_popdecode"))
}

fn temp_dir(name: &str) -> PathBuf {
    let dir = std::env::temp_dir().join(format!("popdecode-parts-{name}-{}", std::process::id()));
    let _ = std::fs::remove_dir_all(&dir);
    std::fs::create_dir_all(&dir).unwrap();
    dir
}

fn sample(name: &str) -> String {
    Path::new(env!("CARGO_MANIFEST_DIR"))
        .join("samples")
        .join(name)
        .to_str()
        .unwrap()
        .to_string()
}

fn p(path: &Path) -> &str {
    path.to_str().unwrap()
}

/// Run the CLI; return its stdout, failing with its stderr unless it succeeded.
fn ok(args: &[&str]) -> String {
    let out = bin().args(args).output().unwrap();
    assert!(
        out.status.success(),
        "popdecode {}: {}",
        args.join(" "),
        String::from_utf8_lossy(&out.stderr)
    );
    String::from_utf8(out.stdout).unwrap()
}

/// Run the CLI expecting a refusal: exit code 2 and one line on stderr, which is returned.
fn refused(args: &[&str]) -> String {
    let out: Output = bin().args(args).output().unwrap();
    assert_eq!(out.status.code(), Some(2), "popdecode {}", args.join(" "));
    let err = String::from_utf8(out.stderr).unwrap();
    assert_eq!(err.lines().count(), 1, "{err}");
    err
}

/// Every file of a folder, by name.
fn files_in(dir: &Path) -> Vec<(String, Vec<u8>)> {
    let mut files: Vec<(String, Vec<u8>)> = std::fs::read_dir(dir)
        .unwrap()
        .map(|e| {
            let e = e.unwrap();
            (
                e.file_name().to_string_lossy().into_owned(),
                std::fs::read(e.path()).unwrap(),
            )
        })
        .collect();
    files.sort();
    files
}

/// A fixed, scrambled order of 1..=n (never ascending for n > 2): combine must not care.
fn scrambled(n: usize) -> Vec<usize> {
    let mut ks: Vec<usize> = (1..=n).collect();
    ks.reverse();
    ks.rotate_left(n / 2);
    ks
}

/// Run `analysis` once whole and then split into N parts for each N, combining the parts in a scrambled order:
/// the JSON, the printed text (with the methods paragraph) and every figure and table must be the same bytes.
fn combined_equals_single(name: &str, analysis: &[&str], ns: &[usize]) {
    let dir = temp_dir(name);
    let single_json = dir.join("single.json");
    let single_plots = dir.join("single-plots");
    let mut args: Vec<&str> = analysis.to_vec();
    args.extend([
        "--quiet",
        "--json",
        p(&single_json),
        "--plots",
        p(&single_plots),
    ]);
    let single_text = ok(&args);
    let single = std::fs::read(&single_json).unwrap();
    let single_files = files_in(&single_plots);
    assert!(!single_files.is_empty());
    for &n in ns {
        let parts: Vec<PathBuf> = (1..=n)
            .map(|k| dir.join(format!("part-{k}-of-{n}.json")))
            .collect();
        for k in 1..=n {
            let spec = format!("{k}/{n}");
            let mut args: Vec<&str> = analysis.to_vec();
            args.extend([
                "--quiet",
                "--threads",
                "1",
                "--part",
                &spec,
                "--json",
                p(&parts[k - 1]),
            ]);
            let said = ok(&args);
            assert!(said.starts_with(&format!("Part {k} of {n}: ")), "{said}");
        }
        let json = dir.join(format!("combined-{n}.json"));
        let plots = dir.join(format!("combined-{n}-plots"));
        let mut args = vec!["combine"];
        args.extend(scrambled(n).into_iter().map(|k| p(&parts[k - 1])));
        args.extend(["--json", p(&json), "--plots", p(&plots)]);
        let text = ok(&args);
        assert!(
            std::fs::read(&json).unwrap() == single,
            "{name}: the JSON of {n} parts differs from the single run's"
        );
        assert_eq!(text, single_text, "{name}: printed text of {n} parts");
        assert!(
            files_in(&plots) == single_files,
            "{name}: figures or tables of {n} parts differ"
        );
    }
    std::fs::remove_dir_all(&dir).unwrap();
}

#[test]
fn decode_with_shuffles_in_parts_equals_one_run() {
    let csv = sample("odours.csv");
    let analysis = [
        "decode",
        &csv,
        "--label",
        "odour",
        "--group",
        "session",
        "--repeats",
        "6",
        "--shuffles",
        "15",
    ];
    combined_equals_single("decode", &analysis, &[1, 3, 7]);
}

/// Nested tuning of C: the outcomes carry each fit's chosen C, which the report counts.
#[test]
fn tuned_decode_in_parts_equals_one_run() {
    let csv = sample("odours_blocked.csv");
    let analysis = [
        "decode",
        &csv,
        "--label",
        "odour",
        "--ignore",
        "block",
        "--classifier",
        "linear-svm",
        "--tune",
        "--repeats",
        "2",
        "--shuffles",
        "3",
        "--shuffle-repeats",
        "1",
        "--folds",
        "3",
    ];
    combined_equals_single("tuned", &analysis, &[1, 3, 7]);
}

#[test]
fn timecourse_from_events_with_generalization_in_parts_equals_one_run() {
    let (events, trials) = (sample("odour_spikes.csv"), sample("odour_trials.csv"));
    let analysis = [
        "timecourse",
        "--events",
        &events,
        "--trials",
        &trials,
        "--label",
        "odour",
        "--start",
        "-0.5",
        "--end",
        "1",
        "--width",
        "0.25",
        "--step",
        "0.25",
        "--classifier",
        "shrinkage-lda",
        "--repeats",
        "3",
        "--shuffles",
        "8",
        "--generalize",
    ];
    combined_equals_single("events", &analysis, &[1, 3, 7]);
}

#[test]
fn binned_timecourse_in_parts_equals_one_run() {
    let csv = sample("odours_binned.csv");
    let analysis = [
        "timecourse",
        &csv,
        "--label",
        "odour",
        "--group",
        "session",
        "--classifier",
        "nearest-mean",
        "--repeats",
        "3",
        "--shuffles",
        "6",
    ];
    combined_equals_single("binned", &analysis, &[1, 3, 7]);
}

/// The neuron analyses: their options (draws) travel in the part file, and `finish` fits on all the data again.
#[test]
fn neuron_analyses_in_parts_equal_one_run() {
    let csv = sample("odours.csv");
    let analysis = [
        "neurons",
        &csv,
        "--label",
        "odour",
        "--ignore",
        "session",
        "--classifier",
        "shrinkage-lda",
        "--repeats",
        "2",
        "--draws",
        "3",
    ];
    combined_equals_single("neurons", &analysis, &[1, 3, 7]);
}

/// A study: every session's files are recorded in the part file, and the group statistics are made from all of
/// the sessions' outcomes once they are combined.
#[test]
fn study_in_parts_equals_one_run() {
    let table = sample("study/study.csv");
    let analysis = [
        "study",
        &table,
        "--label",
        "odour",
        "--classifier",
        "nearest-mean",
        "--repeats",
        "2",
        "--shuffles",
        "4",
        "--group-draws",
        "200",
    ];
    combined_equals_single("study", &analysis, &[1, 3, 7]);
}

/// A study pooled over time: sessions' neurons as one pseudo-population at every window.
#[test]
fn pooled_study_over_time_in_parts_equals_one_run() {
    let table = sample("study/study_time.csv");
    let analysis = [
        "study",
        &table,
        "--binned",
        "--pool",
        "--label",
        "odour",
        "--classifier",
        "nearest-mean",
        "--repeats",
        "2",
        "--shuffles",
        "3",
    ];
    combined_equals_single("study-pooled", &analysis, &[1, 3]);
}

/// Generalization across conditions, routed from `decode`: the part file names the analysis it was routed to.
#[test]
fn across_conditions_in_parts_equals_one_run() {
    let csv = sample("choices.csv");
    let analysis = [
        "decode",
        &csv,
        "--label",
        "choice",
        "--ignore",
        "session",
        "--across",
        "context",
        "--classifier",
        "shrinkage-lda",
        "--repeats",
        "3",
        "--shuffles",
        "4",
    ];
    combined_equals_single("across", &analysis, &[1, 3, 7]);
}

/// A continuous variable over time, routed from `timecourse`.
#[test]
fn continuous_time_course_in_parts_equals_one_run() {
    let csv = sample("running_binned.csv");
    let analysis = [
        "timecourse",
        &csv,
        "--label",
        "speed",
        "--ignore",
        "heading,session",
        "--classifier",
        "ridge",
        "--repeats",
        "2",
        "--shuffles",
        "3",
    ];
    combined_equals_single("continuous", &analysis, &[1, 3]);
}

/// The power analysis: its grids travel in the recipe, and the learning curve is fitted once every part is in.
#[test]
fn power_analysis_in_parts_equals_one_run() {
    let csv = sample("odours.csv");
    let analysis = [
        "power",
        &csv,
        "--label",
        "odour",
        "--ignore",
        "session",
        "--classifier",
        "nearest-mean",
        "--per-class",
        "20,40",
        "--neurons",
        "4,16",
        "--added",
        "0,20",
        "--subsamples",
        "3",
        "--repeats",
        "2",
        "--shuffles",
        "19",
        "--shuffle-repeats",
        "1",
    ];
    combined_equals_single("power", &analysis, &[1, 3, 7]);
}

/// A small decode split into 3 parts in `dir`, on a copy of the sample there (so a test may change it).
fn three_parts(dir: &Path, extra: &[&str]) -> Vec<PathBuf> {
    let csv = dir.join("data.csv");
    if !csv.exists() {
        std::fs::copy(sample("odours.csv"), &csv).unwrap();
    }
    (1..=3)
        .map(|k| {
            let part = dir.join(format!("part-{k}.json"));
            let spec = format!("{k}/3");
            let mut args = vec![
                "decode",
                p(&csv),
                "--label",
                "odour",
                "--ignore",
                "session",
                "--repeats",
                "4",
                "--shuffles",
                "5",
                "--quiet",
                "--part",
                &spec,
                "--json",
                p(&part),
            ];
            args.extend(extra);
            ok(&args);
            part
        })
        .collect()
}

/// A part killed before it wrote its file is rerun alone: the combine refuses until then, naming the part and its
/// task indices, and the rerun part is the same bytes as before.
#[test]
fn a_missing_part_is_named_and_rerun_alone() {
    let dir = temp_dir("resume");
    let parts = three_parts(&dir, &[]);
    let before = std::fs::read(&parts[1]).unwrap();
    std::fs::remove_file(&parts[1]).unwrap();
    let err = refused(&["combine", p(&parts[0]), p(&parts[2])]);
    // 9 tasks (4 repeats, 5 shuffles); part 2 of 3 holds indices 1, 4, 7 (index mod 3 = 1).
    assert!(
        err.contains("part 2 of 3 is missing (task indices 1, 4, 7)") && err.contains("--part 2/3"),
        "{err}"
    );
    let untouched: Vec<_> = [&parts[0], &parts[2]]
        .iter()
        .map(|f| std::fs::metadata(f).unwrap().modified().unwrap())
        .collect();
    let csv = dir.join("data.csv");
    ok(&[
        "decode",
        p(&csv),
        "--label",
        "odour",
        "--ignore",
        "session",
        "--repeats",
        "4",
        "--shuffles",
        "5",
        "--quiet",
        "--part",
        "2/3",
        "--json",
        p(&parts[1]),
    ]);
    assert!(std::fs::read(&parts[1]).unwrap() == before);
    let after: Vec<_> = [&parts[0], &parts[2]]
        .iter()
        .map(|f| std::fs::metadata(f).unwrap().modified().unwrap())
        .collect();
    assert_eq!(untouched, after);
    let json = dir.join("result.json");
    ok(&[
        "combine",
        p(&parts[2]),
        p(&parts[1]),
        p(&parts[0]),
        "--json",
        p(&json),
    ]);
    let single = dir.join("single.json");
    ok(&[
        "decode",
        p(&csv),
        "--label",
        "odour",
        "--ignore",
        "session",
        "--repeats",
        "4",
        "--shuffles",
        "5",
        "--quiet",
        "--json",
        p(&single),
    ]);
    assert!(std::fs::read(json).unwrap() == std::fs::read(single).unwrap());
    std::fs::remove_dir_all(&dir).unwrap();
}

/// A part given twice, a part of another recipe, of other data, of another split or of another version, and a file
/// that is not a part are each refused with the file named and the reason.
#[test]
fn parts_that_do_not_belong_together_are_refused() {
    let dir = temp_dir("foreign");
    let parts = three_parts(&dir, &[]);
    let (a, b, c) = (p(&parts[0]), p(&parts[1]), p(&parts[2]));

    let err = refused(&["combine", a, b, b, c]);
    assert!(err.contains("are both part 2 of 3"), "{err}");

    let other_dir = dir.join("other");
    std::fs::create_dir_all(&other_dir).unwrap();
    let other = three_parts(&other_dir, &["--seed", "2", "--folds", "4"]);
    let err = refused(&["combine", a, b, p(&other[2])]);
    assert!(
        err.contains(p(&other[2])) && err.contains("its recipe differs (folds, seed)"),
        "{err}"
    );

    // The same settings on a file with one changed cell.
    let changed_dir = dir.join("changed");
    std::fs::create_dir_all(&changed_dir).unwrap();
    let text = std::fs::read_to_string(sample("odours.csv")).unwrap();
    let edited = text.replacen(",14,12,10,", ",14,12,11,", 1);
    assert_ne!(text, edited);
    std::fs::write(changed_dir.join("data.csv"), edited).unwrap();
    let changed = three_parts(&changed_dir, &[]);
    let err = refused(&["combine", a, p(&changed[1]), c]);
    assert!(
        err.contains(p(&changed[1])) && err.contains("other data (data.csv"),
        "{err}"
    );

    // Part 2 of a split into 4 among parts of 3.
    let spec_dir = dir.join("four");
    std::fs::create_dir_all(&spec_dir).unwrap();
    let four = spec_dir.join("part-2-of-4.json");
    ok(&[
        "decode",
        p(&dir.join("data.csv")),
        "--label",
        "odour",
        "--ignore",
        "session",
        "--repeats",
        "4",
        "--shuffles",
        "5",
        "--quiet",
        "--part",
        "2/4",
        "--json",
        p(&four),
    ]);
    let err = refused(&["combine", a, p(&four), c]);
    assert!(err.contains("part 2 of 4, the other part 1 of 3"), "{err}");

    // Another version of the program wrote it.
    let mut v: serde_json::Value =
        serde_json::from_slice(&std::fs::read(&parts[1]).unwrap()).unwrap();
    v["software"]["version"] = "0.0.1-other".into();
    let old = dir.join("old.json");
    std::fs::write(&old, v.to_string()).unwrap();
    let err = refused(&["combine", a, p(&old), c]);
    assert!(err.contains("version 0.0.1-other"), "{err}");
    let err = refused(&["combine", p(&old), a, c]);
    assert!(
        err.contains(p(&old)) && err.contains("run every part and combine with one version"),
        "{err}"
    );

    // A part whose tasks are not those of its K (edited by hand).
    let mut v: serde_json::Value =
        serde_json::from_slice(&std::fs::read(&parts[1]).unwrap()).unwrap();
    v["tasks"][0]["index"] = 0.into();
    let damaged = dir.join("damaged.json");
    std::fs::write(&damaged, v.to_string()).unwrap();
    let err = refused(&["combine", a, p(&damaged), c]);
    assert!(
        err.contains(p(&damaged)) && err.contains("not those of part 2 of 3"),
        "{err}"
    );

    v["part"] = 0.into();
    std::fs::write(&damaged, v.to_string()).unwrap();
    let err = refused(&["combine", a, p(&damaged), c]);
    assert!(err.contains("a damaged part file: part 0 of 3"), "{err}");

    // A result is not a part.
    let result = dir.join("result.json");
    ok(&["combine", a, b, c, "--json", p(&result)]);
    let err = refused(&["combine", p(&result)]);
    assert!(
        err.contains("not a part file (a file of schema popdecode-result/1)"),
        "{err}"
    );

    // The data changed on disk after the parts ran.
    std::fs::write(dir.join("data.csv"), "odour,u1\na,1\nb,2\n").unwrap();
    let err = refused(&["combine", a, b, c]);
    assert!(
        err.contains("data.csv: the file has changed since the parts ran"),
        "{err}"
    );
    std::fs::remove_dir_all(&dir).unwrap();
}

/// `--part` is checked before work starts: a malformed K/N, a part without a file to write, or figures asked of a
/// part are refused with what to do instead.
#[test]
fn part_flags_are_checked() {
    let csv = sample("odours.csv");
    let base = ["decode", &csv, "--label", "odour", "--quiet"];
    for bad in ["0/3", "4/3", "2", "a/b", "1/0"] {
        let out = bin().args(base).args(["--part", bad]).output().unwrap();
        assert_eq!(out.status.code(), Some(2), "--part {bad}");
        let err = String::from_utf8_lossy(&out.stderr);
        assert!(err.contains("give K/N with 1 <= K <= N"), "{err}");
    }
    let err = refused(&[&base[..], &["--part", "2/3"]].concat());
    assert!(err.contains("name it with --json"), "{err}");
    let err = refused(
        &[
            &base[..],
            &["--part", "2/3", "--json", "x.json", "--plots", "d"],
        ]
        .concat(),
    );
    assert!(err.contains("give it to 'popdecode combine'"), "{err}");
}

/// Parts with no task (more parts than tasks) are valid and combine like the others.
#[test]
fn more_parts_than_tasks_still_combine() {
    let dir = temp_dir("empty-part");
    let csv = sample("odours.csv");
    let analysis = [
        "decode",
        &csv,
        "--label",
        "odour",
        "--ignore",
        "session",
        "--repeats",
        "2",
        "--shuffles",
        "1",
    ];
    // 3 tasks in 7 parts: parts 4 to 7 hold none.
    combined_equals_single("empty", &analysis, &[7]);
    let part = dir.join("p.json");
    let said = ok(&[
        &analysis[..],
        &["--quiet", "--part", "5/7", "--json", p(&part)],
    ]
    .concat());
    assert!(said.contains("0 of the 3 tasks"), "{said}");
    std::fs::remove_dir_all(&dir).unwrap();
}
