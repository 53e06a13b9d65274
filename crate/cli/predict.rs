//! `popdecode predict`: cross-validated predictions on folds the user assigns.

use crate::args::{apply_column_flags, show, TableArgs};
use crate::files::{display_name, print, read, write};
use clap::Args;
use popdecode::analyses::trial_table::predict::{
    decisions_with_folds, fold_cautions, predict_with_folds,
};
use popdecode::input::{table::Table, trial_table};
use popdecode::recipe::Recipe;
use std::path::PathBuf;

#[derive(Args)]
pub struct PredictArgs {
    #[command(flatten)]
    pub table: TableArgs,
    /// Column holding each trial's fold number.
    #[arg(long)]
    pub fold_column: String,
    /// Write predictions here as CSV (line, fold, true, predicted) instead of standard output.
    #[arg(long)]
    pub out: Option<PathBuf>,
    /// Two classes: add each trial's decision value (larger favours the second class) as a column, and print the
    /// area under the ROC curve of those values pooled over the folds on standard error.
    #[arg(long)]
    pub decision: bool,
}

pub fn run(args: PredictArgs) -> Result<(), String> {
    let mut recipe = Recipe::new(
        args.table
            .columns
            .label
            .as_deref()
            .ok_or("name the label column with --label <COLUMN>")?,
    );
    apply_column_flags(&mut recipe, &args.table.columns);
    recipe.columns.ignore.push(args.fold_column.clone());
    let bytes = read(&args.table.csv)?;
    let name = display_name(&args.table.csv);
    let table = Table::parse(&name, &bytes).map_err(show)?;
    if recipe.columns.drop_missing {
        return Err(
            "predict keeps every trial, so that each has its fold; fill in missing values first"
                .into(),
        );
    }
    let data = trial_table::from_table(&table, &recipe.columns).map_err(show)?;
    let fold_col = table.column(&args.fold_column).map_err(show)?;
    let folds: Vec<usize> = (0..table.rows.len())
        .map(|r| {
            table.rows[r][fold_col]
                .trim()
                .parse::<usize>()
                .map_err(|_| {
                    format!(
                        "{}: {} is not a fold number",
                        table.at(r, fold_col),
                        popdecode::input::table::quoted_cell(&table.rows[r][fold_col])
                    )
                })
        })
        .collect::<Result<_, _>>()?;
    let (predicted, decision, auc) = if args.decision {
        let (labels, decision, auc) = decisions_with_folds(&data, &recipe, &folds).map_err(show)?;
        (labels, Some(decision), Some(auc))
    } else {
        let labels = predict_with_folds(&data, &recipe, &folds).map_err(show)?;
        (labels, None, None)
    };
    // The CSV holds only the predictions: what they came from goes to standard error with the cautions.
    eprintln!(
        "predictions of '{}' in {} (SHA-256 {}) by {}, each trial predicted by the pipeline fitted on the trials \
         of the other folds of column '{}' (no balancing, no repeats)",
        data.label_column,
        data.source,
        popdecode::input::sha256_hex(&bytes),
        match (recipe.tune, recipe.classifier.uses_c()) {
            (true, _) => format!("{} with its setting chosen inside each training fold", recipe.classifier.name()),
            (false, true) => format!("{} (C = {})", recipe.classifier.name(), recipe.c),
            (false, false) => recipe.classifier.name().to_string(),
        },
        args.fold_column
    );
    for caution in fold_cautions(&data, &folds) {
        eprintln!("caution: {caution}");
    }
    if let Some(auc) = auc {
        eprintln!(
            "AUC {auc} (decision values pooled over the folds; '{}' positive)",
            data.classes[1]
        );
    }
    let mut writer = csv::Writer::from_writer(Vec::new());
    let csv_err = |e: csv::Error| e.to_string();
    let mut header = vec!["line", "fold", "true", "predicted"];
    if decision.is_some() {
        header.push("decision");
    }
    writer.write_record(&header).map_err(csv_err)?;
    for (i, &p) in predicted.iter().enumerate() {
        let (line, fold) = (table.lines[i].to_string(), folds[i].to_string());
        let mut record = vec![
            line,
            fold,
            data.classes[data.y[i]].clone(),
            data.classes[p].clone(),
        ];
        if let Some(d) = &decision {
            record.push(d[i].to_string());
        }
        writer.write_record(&record).map_err(csv_err)?;
    }
    let out = String::from_utf8(writer.into_inner().map_err(|e| e.to_string())?)
        .expect("UTF-8 in, UTF-8 out");
    match &args.out {
        Some(path) => write(path, &out),
        None => print(&out),
    }
}
