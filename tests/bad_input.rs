//! Every malformed input gets a message that names the file, the line and the column where it can, and says what
//! to change. One row per case: (what is wrong, file text, options, words the message must contain).

use popdecode::analyses::trial_table::Plan;
use popdecode::input;
use popdecode::recipe::Columns;
use popdecode::recipe::{Folds, Recipe};

fn columns(label: &str) -> Columns {
    Columns {
        label: label.into(),
        ..Columns::default()
    }
}

fn read_error(text: &[u8], cols: &Columns) -> String {
    input::trial_table("rec.csv", text, cols)
        .expect_err("the file must be refused")
        .to_string()
}

#[test]
fn malformed_tables_name_line_and_column() {
    let cases: Vec<(&str, &[u8], &[&str])> = vec![
        (
            "empty cell",
            b"odour,n1,n2\na,1,2\nb,,4\n",
            &["rec.csv", "line 3", "'n1'", "missing", "--drop-missing"],
        ),
        (
            "NA cell",
            b"odour,n1,n2\na,1,2\nb,3,NA\n",
            &["line 3", "'n2'", "'NA'", "missing"],
        ),
        (
            "NaN cell",
            b"odour,n1,n2\na,1,NaN\nb,3,4\n",
            &["line 2", "'n2'", "missing"],
        ),
        (
            "text in a numeric column",
            b"odour,n1\na,1\nb,2\na,x7\nb,3\n",
            &["line 4", "'n1'", "'x7'", "not a number"],
        ),
        (
            "decimal comma in a comma file",
            b"odour,n1\na,\"1,5\"\nb,2\na,3\n",
            &["line 2", "'1,5'", "semicolon"],
        ),
        (
            "ragged row",
            b"odour,n1,n2\na,1,2\nb,3\n",
            &["line 3", "2 fields", "header has 3"],
        ),
        (
            "missing label cell",
            b"odour,n1\na,1\n,2\n",
            &["line 3", "'odour'", "missing"],
        ),
        (
            "duplicate header",
            b"odour,n1,n1\na,1,2\n",
            &["line 1", "'n1'", "twice"],
        ),
        (
            "unnamed column",
            b"odour,,n2\na,1,2\n",
            &["line 1", "column 2", "no name"],
        ),
        ("empty file", b"", &["rec.csv", "empty"]),
        ("header only", b"odour,n1\n", &["no data rows"]),
        (
            "single class",
            b"odour,n1\na,1\na,2\n",
            &["only one class", "'a'", "at least two"],
        ),
        (
            "no features",
            b"odour,note\na,x\nb,y\n",
            &["no numeric feature", "'note'"],
        ),
        ("not UTF-8", b"odour,n1\n\xff,1\n", &["UTF-8"]),
    ];
    for (what, text, words) in cases {
        let message = read_error(text, &columns("odour"));
        for w in words {
            assert!(
                message.contains(w),
                "{what}: message {message:?} lacks {w:?}"
            );
        }
    }
}

#[test]
fn a_text_cell_after_a_semicolon_decimal_is_named() {
    let message = read_error(
        "odour;n1\na;1,5\nb;2,x\nb;3,0\n".as_bytes(),
        &columns("odour"),
    );
    assert!(
        message.contains("line 3") && message.contains("'2,x'"),
        "{message}"
    );
}

#[test]
fn unknown_columns_list_the_real_ones() {
    let message = read_error(b"odour,n1\na,1\nb,2\n", &columns("smell"));
    assert!(
        message.contains("'smell'") && message.contains("'odour', 'n1'"),
        "{message}"
    );
    let mut cols = columns("odour");
    cols.features = Some(vec!["n9".into()]);
    assert!(read_error(b"odour,n1\na,1\nb,2\n", &cols).contains("'n9'"));
}

#[test]
fn drop_missing_reports_the_dropped_lines() {
    let mut cols = columns("odour");
    cols.drop_missing = true;
    let ds = input::trial_table(
        "rec.csv",
        b"odour,n1,n2\na,1,2\nb,,4\na,5,6\nb,7,n/a\nb,1,1\n",
        &cols,
    )
    .unwrap();
    assert_eq!(ds.n_trials(), 3);
    assert_eq!(ds.dropped_lines, vec![3, 5]);
}

#[test]
fn too_few_trials_for_the_folds_says_what_to_change() {
    let text = b"odour,n1\na,1\na,2\na,3\nb,4\nb,5\nb,6\nb,7\nb,8\nb,9\nb,1\n";
    let ds = input::trial_table("rec.csv", text, &columns("odour")).unwrap();
    let recipe = Recipe::new("odour");
    let message = Plan::new(ds.clone(), &recipe)
        .err()
        .expect("refused")
        .to_string();
    for w in [
        "class 'a'",
        "3 trials",
        "5 folds",
        "3 or fewer",
        "leave-one-out",
    ] {
        assert!(message.contains(w), "{message:?} lacks {w:?}");
    }
    let mut loo = recipe.clone();
    loo.folds = Folds::LeaveOneOut;
    assert!(Plan::new(ds.clone(), &loo).is_ok());
}

#[test]
fn group_problems_are_explained() {
    let text = b"odour,day,n1\na,d1,1\nb,d1,2\na,d1,3\nb,d1,1\n";
    let mut recipe = Recipe::new("odour");
    recipe.columns.group = Some("day".into());
    let ds = input::trial_table("rec.csv", text, &recipe.columns).unwrap();
    let message = Plan::new(ds.clone(), &recipe)
        .err()
        .expect("refused")
        .to_string();
    assert!(message.contains("single group"), "{message}");

    // Each day holds one condition: leaving a day out leaves one class to train on.
    let text = b"odour,day,n1\na,d1,1\na,d1,3\nb,d2,2\nb,d2,4\n";
    let ds = input::trial_table("rec.csv", text, &recipe.columns).unwrap();
    let message = Plan::new(ds.clone(), &recipe)
        .err()
        .expect("refused")
        .to_string();
    assert!(message.contains("leaving out group 'd1'"), "{message}");
}

/// A column counting 1, 2, 3, … down the file is a trial number: left out of the features chosen by default (as the
/// page leaves it unticked, so both faces decode the same columns), kept with a caution when named as a feature.
#[test]
fn a_trial_counter_column_is_left_out_unless_named() {
    let text = b"trial,odour,n1\n1,a,0.3\n2,b,0.1\n3,a,0.7\n4,b,0.2\n";
    let ds = input::trial_table("rec.csv", text, &columns("odour")).unwrap();
    assert_eq!(ds.feature_names, vec!["n1"]);
    assert_eq!(ds.x.ncols(), 1);
    assert_eq!(ds.x[[2, 0]], 0.7);
    assert!(
        ds.warnings[0].contains("'trial'") && ds.warnings[0].contains("left out of the features"),
        "{:?}",
        ds.warnings
    );
    let mut named = columns("odour");
    named.features = Some(vec!["trial".into(), "n1".into()]);
    let ds = input::trial_table("rec.csv", text, &named).unwrap();
    assert_eq!(ds.feature_names, vec!["trial", "n1"]);
    assert_eq!(ds.x[[3, 0]], 4.0);
    assert!(
        ds.warnings[0].contains("is used as a feature") && ds.warnings[0].contains("--ignore"),
        "{:?}",
        ds.warnings
    );
    // Features that never vary: cautioned, and refused when no other is left (found by a hostile review).
    let ds = input::trial_table(
        "rec.csv",
        b"odour,n1,flat\na,0.3,5\nb,0.1,5\na,0.7,5\nb,0.2,5\n",
        &columns("odour"),
    )
    .unwrap();
    assert!(
        ds.warnings
            .iter()
            .any(|w| w == "'flat' holds the same value on every trial and carries no information; it is kept among the features"),
        "{:?}",
        ds.warnings
    );
    let message =
        match input::trial_table("rec.csv", b"odour,n1\na,1\nb,1\na,1\n", &columns("odour")) {
            Ok(_) => panic!("constant features were decoded"),
            Err(e) => e.to_string(),
        };
    assert!(
        message.contains("every feature column holds one value on every trial ('n1')"),
        "{message}"
    );
    // Named as a feature and to be ignored: refused (it was used silently).
    let mut both = named.clone();
    both.ignore = vec!["trial".into()];
    let message = match input::trial_table("rec.csv", text, &both) {
        Ok(_) => panic!("a column both named and ignored was accepted"),
        Err(e) => e.to_string(),
    };
    assert!(
        message.contains("'trial' is both named as a feature and to be left out"),
        "{message}"
    );
    // Nothing else to decode from: refused, saying why.
    let message = match input::trial_table(
        "rec.csv",
        b"trial,odour\n1,a\n2,b\n3,a\n4,b\n",
        &columns("odour"),
    ) {
        Ok(_) => panic!("a counter alone was taken as the features"),
        Err(e) => e.to_string(),
    };
    assert!(message.contains("'trial' counts up by one"), "{message}");
}
