//! Hostile and extreme input (issue 12): every case gives a correct result or one clear message, before any work
//! starts; nothing panics, hangs or asks for memory the data do not back. Each test is a case that once gave a
//! silent wrong answer, a panic, an endless loop or an abort.

use hdf5_pure::FileBuilder;
use popdecode::analyses::time_course::TimePlan;
use popdecode::analyses::trial_table::{run_all, Plan};
use popdecode::input::{self, FileBytes};
use popdecode::recipe::limits::{MAX_MAGNITUDE, MAX_WINDOWS};
use popdecode::recipe::{Classifier, Folds, Recipe, TimeInput, TimeSettings};
use std::fmt::Write;

fn recipe(label: &str, repeats: usize) -> Recipe {
    let mut r = Recipe::new(label);
    r.repeats = repeats;
    r.shuffles = 0;
    r
}

fn plan_error(name: &str, csv: &str, recipe: &Recipe) -> String {
    let data = input::trial_table(name, csv.as_bytes(), &recipe.columns).unwrap();
    match Plan::new(data, recipe) {
        Ok(_) => panic!("{name}: the plan was accepted"),
        Err(e) => e.to_string(),
    }
}

/// Two classes separated by which of two features is large, at magnitude `m` (values all positive, so that the
/// table also suits a decoder of counts).
fn separated(m: f64) -> String {
    let mut csv = String::from("label,x,y\n");
    for i in 0..40 {
        let u = (i * 7 % 10) as f64 / 10.0; // 0 … 0.9, deterministic
        let (hi, lo) = (m * (1.0 + 0.3 * u), m * 0.1 * u);
        let (x, y, c) = if i % 2 == 0 {
            (hi, lo, "a")
        } else {
            (lo, hi, "b")
        };
        writeln!(csv, "{c},{x:e},{y:e}").unwrap();
    }
    csv
}

#[test]
fn values_beyond_the_largest_magnitude_are_refused_by_line_and_column() {
    // Near 1e200 the standardiser's sums of squares overflowed and three decoders reported chance, exit 0.
    let csv = separated(1e200);
    let e = input::trial_table("big.csv", csv.as_bytes(), &recipe("label", 1).columns)
        .unwrap_err()
        .to_string();
    assert!(
        e.starts_with("big.csv, line 2, column 'x': 1e200 is beyond ±1e100"),
        "{e}"
    );
    // The same limit in a binned table and a spike events file.
    let binned = "trial,time,label,u1\nt1,0,a,1\nt1,0.1,a,-3e150\n";
    let settings = TimeSettings::binned("trial", "time");
    let e = input::time_course(
        &[FileBytes {
            name: "b.csv",
            bytes: binned.as_bytes(),
        }],
        &recipe("label", 1).columns,
        &settings.input,
    )
    .unwrap_err()
    .to_string();
    assert!(
        e.starts_with("b.csv, line 3, column 'u1': -3e150 is beyond"),
        "{e}"
    );
}

#[test]
fn every_decoder_decodes_at_the_largest_magnitude_and_in_small_units() {
    // The limit's promise (README "Limits"): up to ±1e100 every decoder is still exact enough to separate two
    // perfectly separable classes. And a feature measured in small units (1e-13) is not a constant: the linear
    // SVM once treated every SD below 1e-12 as zero and decoded at chance.
    for m in [MAX_MAGNITUDE / 1.3, 1e-13, 1e-200] {
        let csv = separated(m);
        for c in Classifier::ALL {
            if m < 1e-100 && matches!(c, Classifier::ShrinkageLda | Classifier::NearestMean) {
                // README "Limits": shrinkage LDA treats an SD below 2e-15 as a constant, and nearest mean's sums of
                // squares vanish below about 1e-154.
                continue;
            }
            if c == Classifier::PoissonNb && m < 1.0 {
                continue; // counts are whole numbers
            }
            let mut r = recipe("label", 3);
            r.classifier = c;
            let data = input::trial_table("m.csv", csv.as_bytes(), &r.columns).unwrap();
            let result = run_all(&Plan::new(data, &r).unwrap());
            assert_eq!(
                result.summary.accuracy.mean,
                1.0,
                "{} at magnitude {m:e}",
                c.name()
            );
        }
    }
}

#[test]
fn c_outside_its_range_is_refused() {
    // C = 1e300 and 1e-300 predicted one class for every trial (25.0 % ± 0.0, no warning).
    for c in [1e300, 1e-300, 2e6, 5e-7] {
        let mut r = recipe("odour", 1);
        r.c = c;
        let e = r.validate().unwrap_err().to_string();
        assert!(e.starts_with("C must lie between 1e-6 and 1e6"), "{e}");
    }
    let mut r = recipe("odour", 1);
    r.c = 1e6;
    r.validate().unwrap();
}

#[test]
fn a_class_with_one_trial_is_a_design_error() {
    // It was "decoded at 0.0 %", exit 0, with a note blaming groups that were never set.
    let csv = "label,x,y\na,1,2\na,2,3\na,1,1\nb,5,6\nb,3,3\nb,4,4\nd,6,5\n";
    for (balance, folds) in [(true, Folds::K(5)), (false, Folds::LeaveOneOut)] {
        let mut r = recipe("label", 2);
        r.balance = balance;
        r.folds = folds;
        let e = plan_error("one.csv", csv, &r);
        assert!(
            e.starts_with("one.csv: class 'd' has a single trial"),
            "{e}"
        );
    }
}

/// A continuous column chosen as the label by mistake is named as such, with what to do, not as a broken class.
#[test]
fn a_continuous_label_is_told_apart_from_a_class_with_one_trial() {
    let rows: String = (0..12)
        .map(|i| format!("{:.3},{},{}\n", 3.0 + 0.37 * i as f64, i % 3, (i * 7) % 5))
        .collect();
    let e = plan_error(
        "speed.csv",
        &format!("speed,x,y\n{rows}"),
        &recipe("speed", 2),
    );
    assert!(
        e.starts_with("speed.csv: 'speed' holds 12 different numbers among 12 trials, 12 of them on a single trial")
            && e.contains("regression decoder"),
        "{e}"
    );
    // A few numeric classes with one rare level are still a class with one trial.
    let e = plan_error(
        "one.csv",
        "label,x\n1,1\n1,2\n2,3\n2,4\n3,2\n",
        &recipe("label", 2),
    );
    assert!(
        e.starts_with("one.csv: class '3' has a single trial"),
        "{e}"
    );
}

#[test]
fn a_draw_that_could_keep_a_single_group_is_refused() {
    // Balanced to 2 trials per class, group g1 alone holds 2 of each: 1 draw in 9 kept only g1 and the run
    // panicked (predicted class out of range) on this 8-row file.
    let csv = "label,g,x\nc,g1,1\nc,g1,2\na,g1,3\na,g1,4\na,g2,5\nb,g1,6\nb,g1,7\nb,g2,1\n";
    let mut r = recipe("label", 20);
    r.columns.group = Some("g".into());
    let e = plan_error("grp.csv", csv, &r);
    assert!(
        e.starts_with("grp.csv: balancing keeps 2 trials of every class, and group 'g1'"),
        "{e}"
    );
    // Without balancing every trial is used, so both groups always are: it runs.
    r.balance = false;
    let data = input::trial_table("grp.csv", csv.as_bytes(), &r.columns).unwrap();
    run_all(&Plan::new(data, &r).unwrap());
}

#[test]
fn window_counts_are_checked_before_anything_is_allocated() {
    let events = |start: f64, end: f64, step: f64, generalize: bool| {
        let mut r = recipe("odour", 1);
        let mut t = TimeSettings::events(start, end);
        if let TimeInput::Events { step: s, .. } = &mut t.input {
            *s = step;
        }
        t.generalize = generalize;
        r.time = Some(t);
        r.validate().map_err(|e| e.to_string())
    };
    // The count saturated and wrapped to 0, then panicked; or passed the old cap of 100 000 and ran for minutes,
    // or with generalization asked for 313 GB.
    let e = events(-1e308, 1e308, 0.05, false).unwrap_err();
    assert!(e.contains("reaches beyond ±1e6 s"), "{e}");
    let e = events(0.0, 1e5, 1e-9, false).unwrap_err();
    assert!(
        e.contains(&format!("windows are more than the {MAX_WINDOWS}")),
        "{e}"
    );
    let e = events(-0.5, 1.0, 1.5e-5, false).unwrap_err();
    assert!(e.contains("windows are more than the 10000"), "{e}");
    let e = events(-0.5, 1.0, 1e-3, true).unwrap_err();
    assert!(
        e.contains("temporal generalization over 1401 windows"),
        "{e}"
    );
    events(-0.5, 1.0, 1.5e-3, true).unwrap();
    let e = events(0.0, 1.0, 1e-10, false).unwrap_err();
    assert!(e.contains("at least 1e-9 s"), "{e}");
}

#[test]
fn a_binned_table_of_distinct_trials_at_distinct_times_is_refused_without_rows_squared() {
    // 60 000 rows, each its own trial and its own time: trials × bins would be 3.6e9 cells (29 GB) before the
    // missing bins were noticed.
    let mut csv = String::from("trial,time,label,u1\n");
    for i in 0..60_000 {
        writeln!(csv, "t{i},{},{},1", i as f64 * 0.001, ["a", "b"][i % 2]).unwrap();
    }
    let e = input::time_course(
        &[FileBytes {
            name: "wide.csv",
            bytes: csv.as_bytes(),
        }],
        &recipe("label", 1).columns,
        &TimeSettings::binned("trial", "time").input,
    )
    .unwrap_err()
    .to_string();
    assert!(
        e.starts_with("wide.csv: trial 't0' (first on line 2) has no row for time 0.001"),
        "{e}"
    );
}

/// A table of one row per trial given where a binned table is expected (the page's binned mode, `--trial`/`--time`)
/// is named as such, not only as a cell that is not a number.
#[test]
fn a_trial_table_read_as_binned_is_named_as_such() {
    let csv = "trial,odour,u1,u2\nt1,eugenol,3,4\nt2,citral,5,1\n";
    let e = input::time_course(
        &[FileBytes {
            name: "odours.csv",
            bytes: csv.as_bytes(),
        }],
        &recipe("odour", 1).columns,
        &TimeSettings::binned("trial", "u1").input,
    )
    .unwrap_err()
    .to_string();
    // The time column is a number here, and the binned reader's own message stays.
    assert!(!e.contains("one row per trial rather"), "{e}");
    let e = input::time_course(
        &[FileBytes {
            name: "odours.csv",
            bytes: csv.as_bytes(),
        }],
        &recipe("u2", 1).columns,
        &TimeSettings::binned("trial", "odour").input,
    )
    .unwrap_err()
    .to_string();
    assert_eq!(
        e,
        "odours.csv, line 2, column 'odour': 'eugenol' is not a number (bin time in seconds); column 'odour' holds \
         text from its first row, so this looks like a table with one row per trial rather than one row per trial \
         and time bin"
    );
}

#[test]
fn a_binned_table_with_too_many_bins_for_generalization_is_refused_by_the_plan() {
    let mut csv = String::from("trial,time,label,u1\n");
    for t in 0..4 {
        for k in 0..1001 {
            writeln!(csv, "t{t},{k},{},{}", ["a", "b"][t % 2], (t * k) % 7).unwrap();
        }
    }
    let mut r = recipe("label", 1);
    r.folds = Folds::K(2);
    let mut settings = TimeSettings::binned("trial", "time");
    settings.generalize = true;
    let data = input::time_course(
        &[FileBytes {
            name: "bins.csv",
            bytes: csv.as_bytes(),
        }],
        &r.columns,
        &settings.input,
    )
    .unwrap();
    r.time = Some(settings);
    let e = TimePlan::new(data, &r).err().unwrap().to_string();
    assert!(
        e.contains("temporal generalization over 1001 windows"),
        "{e}"
    );
}

#[test]
fn task_counts_are_checked_before_the_task_list_is_built() {
    // usize::MAX repeats overflowed a capacity (panic); a billion shuffles built a 16 GB task list first.
    for (repeats, shuffles) in [(usize::MAX, 0), (1, 1_000_000_000), (100_001, 0)] {
        let mut r = recipe("odour", repeats);
        r.shuffles = shuffles;
        let e = r.validate().unwrap_err().to_string();
        assert!(e.contains("must be at most 100000"), "{e}");
    }
    // Each count within its limit, but 100 000 repeats of 40 classes keep 1.6e8 confusion counts.
    let mut csv = String::from("label,x\n");
    for i in 0..80 {
        writeln!(csv, "c{},{}", i % 40, i % 7).unwrap();
    }
    let mut r = recipe("label", 100_000);
    r.folds = Folds::K(2);
    let e = plan_error("many.csv", &csv, &r);
    assert!(e.contains("would hold 160200000 numbers"), "{e}");
    r.repeats = 10_000;
    let data = input::trial_table("many.csv", csv.as_bytes(), &r.columns).unwrap();
    assert!(Plan::new(data, &r).is_ok());
}

#[test]
fn fits_per_task_are_checked_before_the_plan_runs() {
    // Leave-one-out over 40 trials × 10 000 windows × 100 000 repeats per shuffle: 4e10 fits in one task, whose
    // 32-bit counter would wrap.
    let mut trials = String::from("trial,odour\n");
    let mut events = String::from("trial,neuron,time\n");
    for i in 0..40 {
        writeln!(trials, "t{i},{}", ["a", "b"][i % 2]).unwrap();
        writeln!(events, "t{i},n1,0.5").unwrap();
    }
    let mut r = recipe("odour", 1);
    r.folds = Folds::LeaveOneOut;
    r.shuffles = 1;
    r.repeats = 100_000;
    r.shuffle_repeats = Some(100_000);
    let mut t = TimeSettings::events(0.0, 1.0);
    if let TimeInput::Events { width, step, .. } = &mut t.input {
        (*width, *step) = (1e-4, 1e-4);
    }
    let files = [
        FileBytes {
            name: "ev.csv",
            bytes: events.as_bytes(),
        },
        FileBytes {
            name: "tr.csv",
            bytes: trials.as_bytes(),
        },
    ];
    let data = input::time_course(&files, &r.columns, &t.input).unwrap();
    r.time = Some(t);
    let e = TimePlan::new(data, &r).err().unwrap().to_string();
    assert!(e.contains("one task would fit 40000000000 decoders"), "{e}");
}

#[test]
fn spike_events_naming_more_neurons_than_can_be_held_are_refused_as_they_appear() {
    // 3000 trials × 1000 windows × one neuron per events row: 3e6 values per neuron, refused at the 34th neuron
    // instead of asking for 12 GB of counts.
    let mut trials = String::from("trial,odour\n");
    for i in 0..3000 {
        writeln!(trials, "t{i},{}", ["a", "b"][i % 2]).unwrap();
    }
    let mut events = String::from("trial,neuron,time\n");
    for u in 0..4000 {
        writeln!(events, "t{},n{u},0.5", u % 3000).unwrap();
    }
    let mut t = TimeSettings::events(0.0, 1.0);
    if let TimeInput::Events { width, step, .. } = &mut t.input {
        (*width, *step) = (0.001, 0.001);
    }
    let e = input::time_course(
        &[
            FileBytes {
                name: "ev.csv",
                bytes: events.as_bytes(),
            },
            FileBytes {
                name: "tr.csv",
                bytes: trials.as_bytes(),
            },
        ],
        &recipe("odour", 1).columns,
        &t.input,
    )
    .unwrap_err()
    .to_string();
    assert!(
        e.starts_with("ev.csv: 3000 trials × 34 neurons × 1000 windows make 102000000 values"),
        "{e}"
    );
}

/// An NWB layout with 12 trials (labels alternating), two units, and extra trials columns as given.
fn nwb(columns: &[(&str, Vec<f64>)], label: &[&str]) -> Vec<u8> {
    let mut b = FileBuilder::new();
    let mut units = b.create_group("units");
    let times: Vec<f64> = (0..24).map(|i| i as f64 * 0.5 + 0.1).collect();
    units.create_dataset("spike_times").with_f64_data(&times);
    units
        .create_dataset("spike_times_index")
        .with_i64_data(&[12, 24]);
    b.add_group(units.finish());
    let mut intervals = b.create_group("intervals");
    let mut trials = intervals.create_group("trials");
    let starts: Vec<f64> = (0..12).map(|i| i as f64).collect();
    trials.create_dataset("start_time").with_f64_data(&starts);
    let stops: Vec<f64> = starts.iter().map(|s| s + 0.9).collect();
    trials.create_dataset("stop_time").with_f64_data(&stops);
    for (name, values) in columns {
        trials.create_dataset(name).with_f64_data(values);
    }
    trials.create_dataset("odour").with_vlen_strings(label);
    intervals.add_group(trials.finish());
    b.add_group(intervals.finish());
    b.finish().unwrap()
}

fn nwb_error(bytes: &[u8], align: Option<&str>) -> String {
    let mut r = recipe("odour", 1);
    r.folds = Folds::K(2);
    let mut t = TimeSettings::nwb(0.0, 0.4);
    if let TimeInput::Nwb {
        align: a,
        width,
        step,
        ..
    } = &mut t.input
    {
        *a = align.map(str::to_string);
        (*width, *step) = (0.2, 0.2);
    }
    let files = [FileBytes {
        name: "t.nwb",
        bytes,
    }];
    match input::time_course(&files, &r.columns, &t.input) {
        Err(e) => e.to_string(),
        Ok(data) => {
            r.time = Some(t);
            match TimePlan::new(data, &r) {
                Err(e) => e.to_string(),
                Ok(_) => "accepted".into(),
            }
        }
    }
}

#[test]
fn nwb_trials_columns_need_one_value_per_trial() {
    let twelve: Vec<&str> = (0..12).map(|i| ["a", "b"][i % 2]).collect();
    assert_eq!(nwb_error(&nwb(&[], &twelve), None), "accepted");
    // 8 labels for 12 trials: ran, exit 0, with 8 trials in the methods and misaligned windows.
    let e = nwb_error(&nwb(&[], &twelve[..8]), None);
    assert!(
        e.starts_with("t.nwb: the trials column 'odour' holds 8 values for 12 trials"),
        "{e}"
    );
    // Longer, empty, and a shorter alignment column: four different panics.
    let mut fourteen = twelve.clone();
    fourteen.extend(["a", "b"]);
    let e = nwb_error(&nwb(&[], &fourteen), None);
    assert!(e.contains("'odour' holds 14 values for 12 trials"), "{e}");
    let e = nwb_error(&nwb(&[], &[]), None);
    assert!(e.contains("'odour' holds 0 values for 12 trials"), "{e}");
    let cue: Vec<f64> = (0..8).map(|i| i as f64).collect();
    let e = nwb_error(&nwb(&[("cue", cue)], &twelve), Some("cue"));
    assert!(e.contains("'cue' holds 8 values for 12 trials"), "{e}");
}

#[test]
fn the_command_line_exits_quietly_on_a_closed_pipe_and_refuses_with_one_line() {
    use std::process::{Command, Stdio};
    let sample = concat!(env!("CARGO_MANIFEST_DIR"), "/samples/odours.csv");
    let bin = env!("CARGO_BIN_EXE_popdecode");
    // `popdecode decode … | head`: the reader is gone before the text is printed. It panicked (exit 101).
    let mut child = Command::new(bin)
        .args([
            "decode",
            sample,
            "--label",
            "odour",
            "--repeats",
            "3",
            "--shuffles",
            "0",
            "--quiet",
        ])
        .stdout(Stdio::piped())
        .stderr(Stdio::piped())
        .spawn()
        .unwrap();
    drop(child.stdout.take());
    let out = child.wait_with_output().unwrap();
    let stderr = String::from_utf8_lossy(&out.stderr);
    assert!(
        out.status.success() && stderr.is_empty(),
        "{:?} {stderr}",
        out.status
    );
    // A billion shuffles: one line, exit 2, before any task list is built.
    let out = Command::new(bin)
        .args([
            "decode",
            sample,
            "--label",
            "odour",
            "--shuffles",
            "1000000000",
        ])
        .output()
        .unwrap();
    assert_eq!(out.status.code(), Some(2));
    assert_eq!(
        String::from_utf8_lossy(&out.stderr),
        "popdecode: error: shuffles must be at most 100000; got 1000000000\n"
    );
}
