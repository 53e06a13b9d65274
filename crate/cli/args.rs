//! Flags every analysis shares (columns, decoder, resampling, outputs), and the recipe they make.

use crate::files::{display_name, read};
use clap::Args;
use popdecode::recipe::{Classifier, Folds, Recipe};
use popdecode::Error;
use std::path::PathBuf;

/// A trial table and the flags that choose its columns and the decoder.
#[derive(Args)]
pub struct TableArgs {
    /// The trial table (CSV with a header; comma, semicolon or tab separated).
    pub csv: PathBuf,
    #[command(flatten)]
    pub columns: ColumnArgs,
}

/// Flags that choose columns and the decoder, shared by every subcommand.
#[derive(Args)]
pub struct ColumnArgs {
    /// Column holding the condition to decode.
    #[arg(long)]
    pub label: Option<String>,
    /// Comma-separated feature columns [default: every other numeric column].
    #[arg(long, value_delimiter = ',')]
    pub features: Option<Vec<String>>,
    /// Comma-separated columns never to use as features (trial numbers, times).
    #[arg(long, value_delimiter = ',')]
    pub ignore: Option<Vec<String>>,
    /// Leave out trials with missing cells instead of stopping.
    #[arg(long)]
    pub drop_missing: bool,
    /// Decoder: linear-svm, shrinkage-lda, logistic, gaussian-nb, poisson-nb, nearest-mean (correlation with class
    /// means; blind to a shift or gain shared by all neurons) or rbf-svm (Gaussian kernel); for a numeric label
    /// ridge, or circular-ridge for angles (with --angle-unit) [default: linear-svm].
    #[arg(long, value_parser = parse_classifier)]
    pub classifier: Option<Classifier>,
    /// Regularisation constant C of the linear SVM, the Gaussian-kernel SVM and logistic regression [default: 1].
    #[arg(long)]
    pub c: Option<f64>,
    /// Choose C (and for the Gaussian-kernel SVM the kernel width) inside each training fold by nested
    /// cross-validation (C from 0.001 to 1000; γ at 0.1, 1 and 10 times its default).
    #[arg(long)]
    pub tune: bool,
}

/// Resampling, statistics and output flags, shared by `decode` and `timecourse`.
#[derive(Args)]
pub struct RunArgs {
    /// Column naming the session, block or day; folds never split a group and shuffles stay within groups.
    #[arg(long)]
    pub group: Option<String>,
    /// Column naming the recording session when each neuron was recorded in one session only (empty cells in the
    /// other sessions' rows): trials are combined across sessions into pseudo-trials.
    #[arg(long, conflicts_with = "group")]
    pub pseudo: Option<String>,
    /// Folds per repeat, or 'loo' for leave-one-out [default: 5].
    #[arg(long, value_parser = parse_folds)]
    pub folds: Option<Folds>,
    /// Repeats of balancing and fold assignment [default: 100].
    #[arg(long)]
    pub repeats: Option<usize>,
    /// Label permutations for the shuffle control; 0 for none [default: 200].
    #[arg(long)]
    pub shuffles: Option<usize>,
    /// Repeats run for each permutation [default: min(repeats, 10)].
    #[arg(long)]
    pub shuffle_repeats: Option<usize>,
    /// Do not undersample classes to the smallest; balanced accuracy becomes the headline.
    #[arg(long)]
    pub no_balance: bool,
    /// Seed of every random stream [default: 1].
    #[arg(long, allow_hyphen_values = true, value_parser = parse_seed)]
    pub seed: Option<u64>,
    /// Threads to run tasks on [default: all cores]; results do not depend on it.
    #[arg(long)]
    pub threads: Option<usize>,
    /// Write the full result as JSON.
    #[arg(long)]
    pub json: Option<PathBuf>,
    /// Read settings from a recipe file; flags given as well override it.
    #[arg(long)]
    pub recipe: Option<PathBuf>,
    /// Write the settings used as a recipe file.
    #[arg(long)]
    pub save_recipe: Option<PathBuf>,
    /// Write the figures (SVG; for a time course also the curve and matrix as CSV) into this folder.
    #[arg(long)]
    pub plots: Option<PathBuf>,
    /// Print no progress bar.
    #[arg(long)]
    pub quiet: bool,
    /// Run only part K of N (tasks whose index i in the plan's task list has i mod N = K-1) and write a part file
    /// to --json instead of the result; `popdecode combine` joins the N parts into the result.
    #[arg(long, value_name = "K/N", value_parser = parse_part)]
    pub part: Option<Part>,
}

/// Part K of N of an analysis's tasks (`--part K/N`).
#[derive(Clone, Copy, Debug, PartialEq, Eq)]
pub struct Part {
    /// 1 to `n`.
    pub k: usize,
    pub n: usize,
}

impl Part {
    /// The task indices of this part among `total` tasks, in increasing order. The fixed rule that splits tasks:
    /// task index `i` (counted from 0 in the plan's task list) belongs to part `i mod n + 1`. Dealing tasks out in
    /// turn gives every part a similar mix of cheap and costly tasks (observed repeats and shuffles, small and
    /// large neuron subsets).
    pub fn indices(self, total: usize) -> impl Iterator<Item = usize> {
        (self.k - 1..total).step_by(self.n)
    }
}

/// A seed: a whole number, 0 or more. A negative one (`--seed -1`) got clap's advice about values that start with a
/// hyphen, which says nothing about seeds.
fn parse_seed(text: &str) -> Result<u64, String> {
    text.trim().parse::<u64>().map_err(|_| {
        format!(
            "a seed is a whole number from 0 to {}; got '{text}'",
            u64::MAX
        )
    })
}

fn parse_part(s: &str) -> Result<Part, String> {
    let bad = || format!("'{s}' is not a part: give K/N with 1 <= K <= N, e.g. --part 2/8");
    let (k, n) = s.split_once('/').ok_or_else(bad)?;
    let (k, n): (usize, usize) = (
        k.trim().parse().map_err(|_| bad())?,
        n.trim().parse().map_err(|_| bad())?,
    );
    if k == 0 || k > n {
        return Err(bad());
    }
    Ok(Part { k, n })
}

fn parse_classifier(s: &str) -> Result<Classifier, String> {
    Classifier::from_name(s).ok_or_else(|| {
        let names: Vec<&str> = Classifier::ALL
            .iter()
            .chain(&Classifier::REGRESSORS)
            .map(|c| c.name())
            .collect();
        format!(
            "unknown classifier '{s}'; choose one of: {}",
            names.join(", ")
        )
    })
}

fn parse_folds(s: &str) -> Result<Folds, String> {
    Folds::parse(s).map_err(|e| e.to_string())
}

/// Apply the column and decoder flags to a recipe.
pub fn apply_column_flags(recipe: &mut Recipe, t: &ColumnArgs) {
    if let Some(l) = &t.label {
        recipe.columns.label = l.clone();
    }
    if let Some(f) = &t.features {
        recipe.columns.features = Some(f.clone());
    }
    if let Some(i) = &t.ignore {
        recipe.columns.ignore = i.clone();
    }
    recipe.columns.drop_missing |= t.drop_missing;
    if let Some(c) = t.classifier {
        recipe.classifier = c;
    }
    if let Some(c) = t.c {
        recipe.c = c;
    }
    recipe.tune |= t.tune;
}

/// The recipe a run starts from: a recipe file, or the defaults for the label column.
pub fn base_recipe(run: &RunArgs, columns: &ColumnArgs) -> Result<Recipe, String> {
    let mut recipe = match &run.recipe {
        Some(path) => {
            let text = String::from_utf8_lossy(&read(path)?).into_owned();
            Recipe::from_json(&display_name(path), &text).map_err(show)?
        }
        None => Recipe::new(
            columns
                .label
                .as_deref()
                .ok_or("name the label column with --label <COLUMN>")?,
        ),
    };
    apply_column_flags(&mut recipe, columns);
    if let Some(g) = &run.group {
        recipe.columns.group = Some(g.clone());
    }
    if let Some(s) = &run.pseudo {
        recipe.columns.pseudo = Some(s.clone());
    }
    if let Some(f) = run.folds {
        recipe.folds = f;
    }
    if let Some(r) = run.repeats {
        recipe.repeats = r;
    }
    if let Some(s) = run.shuffles {
        recipe.shuffles = s;
    }
    if run.shuffle_repeats.is_some() {
        recipe.shuffle_repeats = run.shuffle_repeats;
    }
    recipe.balance &= !run.no_balance;
    if let Some(s) = run.seed {
        recipe.seed = s;
    }
    Ok(recipe)
}

/// A core error in the CLI's words (the core's messages are already written for the user).
pub fn show(e: Error) -> String {
    e.to_string()
}
