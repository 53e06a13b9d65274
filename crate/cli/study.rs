//! `popdecode study`: many sessions (and animals) in one analysis, with group-level statistics or one pooled
//! pseudo-population.

use crate::args::{base_recipe, show, ColumnArgs, RunArgs};
use crate::files::{display_name, open_source, read, sha256_file};
use crate::inputs::Inputs;
use crate::run::{analyse, Loaded};
use crate::targets::TargetArgs;
use crate::timecourse::{time_settings, Source, TimeFlags};
use clap::Args;
use popdecode::analyses::study::plan::assess;
use popdecode::analyses::study::{StudyOptions, StudyPlan};
use popdecode::data::SourceFile;
use popdecode::input::extract;
use popdecode::input::study::{self, base_name, SessionKind};
use popdecode::Error;
use std::path::Path;
use std::path::PathBuf;

/// The subcommand's name, as part files record it.
pub const NAME: &str = "study";

/// Decode every session of a study and combine them: group mean with its permutation test, prevalence, and over
/// time the group curve with its clusters; or pool every session's neurons into one pseudo-population.
#[derive(Args)]
pub struct StudyArgs {
    /// The study table (CSV): one row per session with columns file, session, optional subject, and for spike
    /// events trials (the session's trial table); paths relative to the table. Sessions are trial tables, binned
    /// tables (--binned), spike events (a trials column) or NWB files (.nwb), all of one kind.
    pub table: PathBuf,
    /// The sessions are binned tables (one row per trial and time bin).
    #[arg(long)]
    pub binned: bool,
    /// Pool every session's neurons into one pseudo-population instead of decoding each session on its own.
    #[arg(long)]
    pub pool: bool,
    /// Leave out the sessions that cannot enter the study as set up (they are listed with the reason).
    #[arg(long)]
    pub leave_out_flagged: bool,
    /// Second-level draws of the group permutation test and the prevalence inference [default: 10000].
    #[arg(long)]
    pub group_draws: Option<usize>,
    #[command(flatten)]
    pub time: TimeFlags,
    /// Generalization across conditions: every session's score is its generalization score (over time, at every
    /// window).
    #[command(flatten)]
    pub targets: TargetArgs,
    #[command(flatten)]
    pub columns: ColumnArgs,
    #[command(flatten)]
    pub run: RunArgs,
}

/// The kind of the sessions: from the recipe file when it has time settings, else from the table and the flags.
fn kind_of(args: &StudyArgs, table: &study::StudyTable, recipe_kind: SessionKind) -> SessionKind {
    if recipe_kind != SessionKind::TrialTable {
        return recipe_kind;
    }
    let nwb = |f: &str| f.to_ascii_lowercase().ends_with(".nwb");
    if table.sessions.iter().all(|r| nwb(&r.file)) {
        SessionKind::Nwb
    } else if table.sessions.iter().any(|r| r.trials.is_some()) {
        SessionKind::Events
    } else if args.binned {
        SessionKind::Binned
    } else {
        SessionKind::TrialTable
    }
}

pub fn run(args: StudyArgs) -> Result<(), String> {
    let mut recipe = base_recipe(&args.run, &args.columns)?;
    args.targets.apply(&mut recipe)?;
    let table = study::read(&display_name(&args.table), &read(&args.table)?).map_err(show)?;
    let kind = kind_of(&args, &table, SessionKind::of(&recipe));
    let source = match kind {
        SessionKind::TrialTable => None,
        SessionKind::Binned => Some(Source::Binned),
        SessionKind::Events => Some(Source::Events),
        SessionKind::Nwb => Some(Source::Nwb),
    };
    match source {
        Some(source) => {
            if recipe.columns.drop_missing {
                return Err(
                    "a time course needs every value; --drop-missing applies to trial tables only"
                        .into(),
                );
            }
            recipe.time = Some(time_settings(source, &args.time, recipe.time.take())?);
        }
        None => {
            let t = &args.time;
            if t.trial.is_some()
                || t.time.is_some()
                || t.neuron.is_some()
                || t.align.is_some()
                || t.width.is_some()
                || t.step.is_some()
                || t.start.is_some()
                || t.end.is_some()
                || t.generalize
                || !t.units.is_empty()
            {
                return Err("the sessions are read as trial tables, and the time flags apply to sessions over \
                            time: give --binned for binned tables (spike events need a trials column, NWB files \
                            end in .nwb)"
                    .into());
            }
        }
    }
    recipe.validate().map_err(show)?;
    let mut options = StudyOptions {
        pool: args.pool,
        leave_out_flagged: args.leave_out_flagged,
        ..StudyOptions::default()
    };
    if let Some(d) = args.group_draws {
        options.group_draws = d;
    }
    if let Some(a) = args.time.alpha {
        options.alpha = a;
    }
    // The study table first, then every session's files in table order: a part file records each with its
    // SHA-256, so that `combine` refuses a study whose sessions changed since the parts ran.
    let dir = args.table.parent().unwrap_or(Path::new("")).to_path_buf();
    let mut paths = vec![args.table.clone()];
    for row in &table.sessions {
        paths.push(dir.join(&row.file));
        if let Some(trials) = &row.trials {
            paths.push(dir.join(trials));
        }
    }
    let inputs = Inputs {
        analysis: NAME.into(),
        recipe,
        options: serde_json::to_value(options).expect("options serialise"),
        paths,
    };
    analyse(&inputs, load, &args.run)
}

/// Read the study table and its sessions, one at a time, and build the plan (also how `combine` builds it again).
/// The sessions' kind is the recipe's (`run` settled it from the table and the flags).
pub fn load(inputs: &Inputs) -> Result<Loaded<StudyPlan>, String> {
    let options: StudyOptions = serde_json::from_value(inputs.options.clone())
        .map_err(|e| format!("the study's options are damaged: {e}"))?;
    let recipe = &inputs.recipe;
    let table_path = &inputs.paths[0];
    let table = study::read(&display_name(table_path), &read(table_path)?).map_err(show)?;
    let kind = SessionKind::of(recipe);
    let dir = table_path.parent().unwrap_or(Path::new("")).to_path_buf();
    // One session at a time: an NWB file is read into its extract (units and trials only), as the page does.
    let data = study::read_sessions(&table, recipe, |path| {
        let full = dir.join(path);
        let bytes = if kind == SessionKind::Nwb {
            extract::read_nwb(base_name(path), open_source(&full).map_err(Error::Input)?)?
        } else {
            read(&full).map_err(Error::Input)?
        };
        Ok(bytes)
    })
    .map_err(show)?;
    let leave_out = options.leave_out_flagged;
    let assessed = assess(table, data, recipe, options).map_err(show)?;
    if !assessed.left_out.is_empty() && !leave_out {
        let list: Vec<String> = assessed
            .left_out
            .iter()
            .map(|l| format!("'{}': {}", l.session, l.reason))
            .collect();
        return Err(format!(
            "{}: {} session{} cannot enter the study as it is set up: {}. Fix {}, or run again with \
             --leave-out-flagged to leave {} out (the result lists {} with the reason)",
            assessed.table.source,
            assessed.left_out.len(),
            if assessed.left_out.len() == 1 { "" } else { "s" },
            list.join("; "),
            them(assessed.left_out.len()),
            them(assessed.left_out.len()),
            them(assessed.left_out.len()),
        ));
    }
    let plan = assessed.into_plan().map_err(show)?;
    let files = inputs
        .paths
        .iter()
        .map(|p| {
            Ok(SourceFile {
                file: display_name(p),
                sha256: sha256_file(p)?,
            })
        })
        .collect::<Result<Vec<_>, String>>()?;
    Ok(Loaded { plan, files })
}

fn them(n: usize) -> &'static str {
    if n == 1 {
        "it"
    } else {
        "them"
    }
}
