//! The study plan: every session checked against the recipe, the sessions that cannot enter listed with their
//! reasons, and the tasks (session × repeat or shuffle, or the pooled population's repeats and shuffles).

use crate::analyses::across::{AcrossOutcome, AcrossPlan};
use crate::analyses::time_course::{TimeOutcome, TimePlan};
use crate::analyses::trial_table::{Outcome, Plan, TableTask};
use crate::data::{Dataset, SourceFile};
use crate::error::{Error, Result};
use crate::input::study::{base_name, from_rows, read, read_sessions, SessionData};
use crate::input::study::{SessionKind, StudyRow, StudyTable};
use crate::input::FileBytes;
use crate::recipe::limits::{MAX_REPEATS, MAX_RESULT_VALUES};
use crate::recipe::windows::Window;
use crate::recipe::{Folds, Recipe};
use crate::report::text::session_notes;
use crate::resample::Task;
use crate::rng::{task_rng, Stream};
use crate::stats::group::Units;
use rand_core::RngCore;
use serde::{Deserialize, Serialize};
use sha2::{Digest, Sha256};

/// Second-level draws of the group tests unless asked otherwise.
pub const GROUP_DRAWS: usize = 10_000;

/// How a study is combined: the study's own settings beside the recipe every session shares.
#[derive(Debug, Clone, PartialEq, Serialize, Deserialize)]
pub struct StudyOptions {
    /// Pool every session's neurons into one pseudo-population instead of decoding each session on its own.
    #[serde(default)]
    pub pool: bool,
    /// The user agreed to leave out the sessions that cannot enter the study as set up.
    #[serde(default)]
    pub leave_out_flagged: bool,
    /// Second-level draws of the group permutation test and the prevalence inference.
    #[serde(default = "default_draws")]
    pub group_draws: usize,
    /// Significance level of the group tests, the prevalence bound and the group clusters over time.
    #[serde(default = "default_alpha")]
    pub alpha: f64,
}

fn default_draws() -> usize {
    GROUP_DRAWS
}

fn default_alpha() -> f64 {
    0.05
}

impl Default for StudyOptions {
    fn default() -> StudyOptions {
        StudyOptions {
            pool: false,
            leave_out_flagged: false,
            group_draws: GROUP_DRAWS,
            alpha: 0.05,
        }
    }
}

impl StudyOptions {
    fn validate(&self) -> Result<()> {
        if self.group_draws == 0 {
            return Err(Error::Recipe(
                "the group tests need at least one draw".into(),
            ));
        }
        if self.group_draws > MAX_REPEATS {
            return Err(Error::Recipe(format!(
                "the group tests take at most {MAX_REPEATS} draws (enough to resolve a p-value to 1/{}); got {}",
                MAX_REPEATS + 1,
                self.group_draws
            )));
        }
        if !(self.alpha > 0.0 && self.alpha < 1.0) {
            return Err(Error::Recipe(format!(
                "alpha must lie between 0 and 1; got {}",
                self.alpha
            )));
        }
        Ok(())
    }
}

/// A session's or the pooled population's own analysis.
pub enum AnyPlan {
    Table(Plan),
    Time(TimePlan),
    /// Generalization across conditions (a trial table, or a recording at every window): the session's score is the
    /// generalization score.
    Across(AcrossPlan),
}

/// What a task of either kind produced.
#[derive(Debug, Clone, PartialEq, Serialize, Deserialize)]
#[serde(rename_all = "snake_case")]
pub enum AnyOutcome {
    Table(Outcome),
    Time(TimeOutcome),
    Across(AcrossOutcome),
}

impl AnyPlan {
    pub fn tasks(&self) -> Vec<Task> {
        match self {
            // Whole-table tasks only: pairwise decoding is refused for studies (`assess`).
            AnyPlan::Table(p) => p
                .tasks()
                .into_iter()
                .filter_map(|t| match t {
                    TableTask::Whole(t) => Some(t),
                    TableTask::Pair { .. } => None,
                })
                .collect(),
            AnyPlan::Time(p) => p.tasks(),
            AnyPlan::Across(p) => p.tasks(),
        }
    }

    pub fn fits_in(&self, task: Task) -> usize {
        match self {
            AnyPlan::Table(p) => p.fits_in(task),
            AnyPlan::Time(p) => p.fits_in(task),
            AnyPlan::Across(p) => p.fits_in(task),
        }
    }

    /// The windows of a session decoded over time (its own, or its generalization across conditions at every
    /// window); none for a trial table.
    pub fn windows(&self) -> Option<&[Window]> {
        match self {
            AnyPlan::Table(_) => None,
            AnyPlan::Time(p) => Some(&p.data.windows),
            AnyPlan::Across(p) => Some(&p.data.features.windows).filter(|w| !w.is_empty()),
        }
        .map(Vec::as_slice)
    }

    pub fn run(&self, task: Task) -> AnyOutcome {
        match self {
            AnyPlan::Table(p) => AnyOutcome::Table(p.run(task)),
            AnyPlan::Time(p) => AnyOutcome::Time(p.run(task)),
            AnyPlan::Across(p) => AnyOutcome::Across(p.run(task)),
        }
    }
}

/// One task of a study: a repeat or shuffle of one session (`session` its index among the sessions that entered),
/// or of the pooled population (`session` null).
#[derive(Debug, Clone, Copy, PartialEq, Eq, Serialize, Deserialize)]
pub struct StudyTask {
    pub session: Option<usize>,
    pub task: Task,
}

/// What a study task produced.
#[derive(Debug, Clone, PartialEq, Serialize, Deserialize)]
pub struct StudyOutcome {
    pub session: Option<usize>,
    pub outcome: AnyOutcome,
}

/// A session that entered the study.
pub struct Session {
    pub name: String,
    pub subject: Option<String>,
    /// The seed of the session's own analysis, derived from the study's seed and the session's name: the session
    /// decoded alone with this seed gives the same numbers.
    pub seed: u64,
    pub files: Vec<SourceFile>,
    pub trials: usize,
    pub neurons: usize,
    pub class_counts: Vec<usize>,
    /// The session's own analysis (none when the sessions are pooled).
    pub plan: Option<AnyPlan>,
}

/// A session that cannot enter the study as set up, and why.
#[derive(Debug, Clone, PartialEq, Serialize, Deserialize)]
pub struct LeftOut {
    pub session: String,
    pub subject: Option<String>,
    pub reason: String,
}

/// Every session checked against one recipe, ready to hand out tasks. The plan owns its sessions' data.
pub struct StudyPlan {
    pub table: StudyTable,
    pub kind: SessionKind,
    pub recipe: Recipe,
    pub options: StudyOptions,
    /// The sessions that entered, in table order.
    pub sessions: Vec<Session>,
    /// The sessions left out (with the user's agreement), in table order.
    pub left_out: Vec<LeftOut>,
    pub classes: Vec<String>,
    /// The second level: subjects (sessions averaged within each) when the table names them, else sessions.
    pub units: Units,
    pub unit_names: Vec<String>,
    /// The pooled pseudo-population, when asked for.
    pub pooled: Option<AnyPlan>,
    pub warnings: Vec<String>,
}

/// What a page run hands the core for a study besides the files: the study's options and, instead of a study
/// table among the files, the session list.
#[derive(Debug, Clone, Default, Deserialize)]
pub struct StudyRequest {
    #[serde(flatten)]
    pub options: StudyOptions,
    /// The sessions, when no study table is among the files.
    #[serde(default)]
    pub sessions: Option<Vec<StudyRow>>,
    /// The name of the study table among the files (default: the first file).
    #[serde(default)]
    pub table: Option<String>,
}

/// A study from files held in memory (the page's dropped files, tests): the study table (or the session list in
/// the request) and every session's files, matched by name (or by the last part of the path the table gives).
pub fn from_files(
    files: &[FileBytes],
    recipe: &Recipe,
    request: StudyRequest,
) -> Result<StudyPlan> {
    assess_files(files, recipe, request)?.into_plan()
}

/// Every session of a study held in memory, checked ([`assess`]) but not yet a plan: what a face lists before the
/// user agrees to leave flagged sessions out.
pub fn assess_files(
    files: &[FileBytes],
    recipe: &Recipe,
    request: StudyRequest,
) -> Result<Assessed> {
    let table = match (request.sessions, &request.table) {
        (Some(rows), _) => from_rows("the session list", rows)?,
        (None, name) => {
            let file = match name {
                Some(n) => find(files, n)?,
                None => files
                    .first()
                    .ok_or_else(|| Error::Input("no study table was given".into()))?,
            };
            read(file.name, file.bytes)?
        }
    };
    let data = read_sessions(&table, recipe, |path| Ok(find(files, path)?.bytes.to_vec()))?;
    assess(table, data, recipe, request.options)
}

/// The file a study table names: by its full name, else by the last part of its path.
fn find<'a>(files: &'a [FileBytes<'a>], path: &str) -> Result<&'a FileBytes<'a>> {
    files
        .iter()
        .find(|f| f.name == path)
        .or_else(|| files.iter().find(|f| f.name == base_name(path)))
        .ok_or_else(|| {
            Error::Input(format!(
                "the study lists '{path}', which is not among the files given"
            ))
        })
}

/// The seed of a session's own analysis: from the study's seed and the session's name, so a session's numbers do
/// not depend on the other sessions or on their order.
pub fn session_seed(seed: u64, name: &str) -> u64 {
    let digest = Sha256::digest(name.as_bytes());
    let key = u64::from_le_bytes(digest[..8].try_into().expect("8 bytes"));
    task_rng(seed, Stream::Session, key, 0).next_u64()
}

/// Every session checked against the recipe, before the user's agreement to leave flagged sessions out is asked
/// for: what a face lists.
pub struct Assessed {
    pub table: StudyTable,
    pub kind: SessionKind,
    pub recipe: Recipe,
    pub options: StudyOptions,
    /// The sessions that can enter, in table order.
    pub sessions: Vec<Session>,
    /// The sessions that cannot enter as set up, with the reason.
    pub left_out: Vec<LeftOut>,
    pub classes: Vec<String>,
    /// Pooled studies: the data of the sessions that can enter.
    pooled_data: Vec<(String, SessionData)>,
}

impl StudyPlan {
    /// Check every session ([`assess`]) and build the study: flagged sessions are left out only when the options
    /// say the user agreed; otherwise this is an error listing them.
    pub fn new(
        table: StudyTable,
        data: Vec<SessionData>,
        recipe: &Recipe,
        options: StudyOptions,
    ) -> Result<StudyPlan> {
        assess(table, data, recipe, options)?.into_plan()
    }

    /// Every task: each session's repeats and shuffles in session order, or the pooled population's.
    pub fn tasks(&self) -> Vec<StudyTask> {
        if let Some(p) = &self.pooled {
            return p
                .tasks()
                .into_iter()
                .map(|task| StudyTask {
                    session: None,
                    task,
                })
                .collect();
        }
        self.sessions
            .iter()
            .enumerate()
            .flat_map(|(s, session)| {
                session
                    .plan()
                    .tasks()
                    .into_iter()
                    .map(move |task| StudyTask {
                        session: Some(s),
                        task,
                    })
            })
            .collect()
    }

    /// The plan a task belongs to.
    pub fn plan_of(&self, session: Option<usize>) -> &AnyPlan {
        match session {
            Some(s) => self.sessions[s].plan(),
            None => self
                .pooled
                .as_ref()
                .expect("a pooled task of a pooled study"),
        }
    }

    pub fn fits_in(&self, t: StudyTask) -> usize {
        self.plan_of(t.session).fits_in(t.task)
    }

    pub fn run(&self, t: StudyTask) -> StudyOutcome {
        StudyOutcome {
            session: t.session,
            outcome: self.plan_of(t.session).run(t.task),
        }
    }

    /// Whether the second level is subjects (else sessions).
    pub fn by_subject(&self) -> bool {
        self.table.has_subjects
    }
}

/// Check every session against the recipe: sessions whose label values or time windows differ from most
/// sessions', or on which the recipe cannot run (too few trials of a class for the folds, ...), are flagged with
/// the reason; the others get their own plan (under their own seed), or are kept for the pooled population.
pub fn assess(
    table: StudyTable,
    data: Vec<SessionData>,
    recipe: &Recipe,
    options: StudyOptions,
) -> Result<Assessed> {
    recipe.validate()?;
    options.validate()?;
    let kind = SessionKind::of(recipe);
    if recipe.columns.pseudo.is_some() {
        return Err(Error::Recipe(
                "a study pools sessions itself when asked to; the recipe must not name a session column for \
                 pseudo-populations"
                    .into(),
            ));
    }
    if recipe.pairwise {
        return Err(Error::Recipe(
            "pairwise decoding is made per recording; decode a session on its own for its pairs"
                .into(),
        ));
    }
    // Said once for the study, not once per session.
    crate::decoders::require_classes(recipe.classifier)?;
    if options.pool && recipe.columns.group.is_some() {
        return Err(Error::Recipe(
                "pooled sessions are shuffled within sessions and split by their own folds; a group column cannot \
                 be used with pooling"
                    .into(),
            ));
    }
    if !options.pool && recipe.time.as_ref().is_some_and(|t| t.generalize) {
        return Err(Error::Recipe(
            "temporal generalization is not combined across sessions; decode the sessions pooled, or a session on \
             its own, for its matrix"
                .into(),
        ));
    }
    if recipe.across.is_some() && options.pool {
        return Err(Error::Recipe(
            "generalization across conditions is combined across sessions decoded each on its own; pooled \
             sessions are not generalized across conditions"
                .into(),
        ));
    }
    if options.pool && recipe.folds == Folds::LeaveOneOut {
        return Err(Error::Recipe(
                "pseudo-populations need k folds (each fold builds its own pseudo-trials), not leave-one-out".into(),
            ));
    }
    let classes_of = |d: &SessionData| match d {
        SessionData::Table(t) => t.classes.clone(),
        SessionData::Time(t) => t.classes.clone(),
        SessionData::Across(a) => a.classes.clone(),
    };
    let class_sets: Vec<Vec<String>> = data.iter().map(classes_of).collect();
    let classes = most_common(&class_sets).clone();
    let windows: Vec<Option<String>> = data
        .iter()
        .map(|d| match d {
            SessionData::Time(t) => Some(serde_json::to_string(&t.windows).expect("windows")),
            SessionData::Across(a) if a.features.is_time() => {
                Some(serde_json::to_string(&a.features.windows).expect("windows"))
            }
            SessionData::Table(_) | SessionData::Across(_) => None,
        })
        .collect();
    let study_windows = most_common(&windows).clone();
    // The group null keeps one value per draw and window, and the draws one pick per session: checked before any
    // session is decoded.
    let most_windows = data
        .iter()
        .map(|d| match d {
            SessionData::Time(t) => t.windows.len(),
            SessionData::Across(a) if a.features.is_time() => a.features.windows.len(),
            SessionData::Table(_) | SessionData::Across(_) => 1,
        })
        .max()
        .unwrap_or(1);
    let values = options
        .group_draws
        .saturating_mul(most_windows.saturating_add(data.len()));
    if values > MAX_RESULT_VALUES {
        return Err(Error::Recipe(format!(
            "{} group draws would keep {values} numbers (one per draw and time window, and one per draw and \
             session), more than the {MAX_RESULT_VALUES} a run may hold; use fewer draws",
            options.group_draws
        )));
    }

    let mut sessions = Vec::new();
    let mut pooled_data = Vec::new();
    let mut left_out = Vec::new();
    for ((row, d), (set, win)) in table
        .sessions
        .iter()
        .zip(data)
        .zip(class_sets.iter().zip(&windows))
    {
        let reason = if *set != classes {
            Some(format!(
                "its label values ({}) differ from the study's ({})",
                set.join(", "),
                classes.join(", ")
            ))
        } else if *win != study_windows {
            Some("its time bins differ from the other sessions'".to_string())
        } else {
            None
        };
        let seed = session_seed(recipe.seed, &row.session);
        let mut session = describe(row, seed, &d);
        // The data move into the session's plan (or the pool), so no session is held twice.
        let entered = match reason {
            Some(r) => Err(r),
            None if options.pool => {
                pool_check(&d, recipe).map(|()| pooled_data.push((row.session.clone(), d)))
            }
            None => session_plan(d, recipe, seed).map(|p| session.plan = Some(p)),
        };
        match entered {
            Ok(()) => sessions.push(session),
            Err(reason) => left_out.push(LeftOut {
                session: row.session.clone(),
                subject: row.subject.clone(),
                reason,
            }),
        }
    }
    Ok(Assessed {
        table,
        kind,
        recipe: recipe.clone(),
        options,
        sessions,
        left_out,
        classes,
        pooled_data,
    })
}

impl Assessed {
    /// The sessions as a face lists them: who they are, their data, and those that cannot enter with the reason.
    pub fn listing(&self) -> serde_json::Value {
        let sessions: Vec<serde_json::Value> = self.sessions.iter().map(Session::listing).collect();
        serde_json::json!({
            "study": self.table.source,
            "kind": self.kind,
            "classes": self.classes,
            "subjects": self.table.has_subjects,
            "sessions": sessions,
            "left_out": self.left_out,
        })
    }

    /// The study, with the flagged sessions left out if the user agreed (else an error listing them).
    pub fn into_plan(self) -> Result<StudyPlan> {
        let Assessed {
            table,
            kind,
            recipe,
            options,
            sessions,
            left_out,
            classes,
            pooled_data,
        } = self;
        if !left_out.is_empty() && !options.leave_out_flagged {
            let list: Vec<String> = left_out
                .iter()
                .map(|l| format!("'{}': {}", l.session, l.reason))
                .collect();
            return Err(Error::Design(format!(
                "{}: {} cannot enter the study as it is set up: {}. Fix {}, or agree to leave {} out",
                table.source,
                plural(left_out.len(), "session"),
                list.join("; "),
                if left_out.len() == 1 { "it" } else { "them" },
                if left_out.len() == 1 { "it" } else { "them" },
            )));
        }
        let (units, unit_names) = units_of(&sessions, table.has_subjects);
        let level = if table.has_subjects {
            "subjects"
        } else {
            "sessions"
        };
        if sessions.len() < 2 || (!options.pool && units.len() < 2) {
            return Err(Error::Design(format!(
                "{}: {} entered the study; a study needs at least two {level}",
                table.source,
                if options.pool {
                    plural(sessions.len(), "session")
                } else {
                    plural(units.len(), &level[..level.len() - 1])
                }
            )));
        }
        let mut warnings = Vec::new();
        if !left_out.is_empty() {
            warnings.push(format!(
                "{} left out at the user's request: {}",
                plural(left_out.len(), "session"),
                left_out
                    .iter()
                    .map(|l| format!("'{}' ({})", l.session, l.reason))
                    .collect::<Vec<_>>()
                    .join("; ")
            ));
        }
        let pooled = if options.pool {
            Some(pooled_plan(pooled_data, &recipe, &table)?)
        } else {
            if recipe.shuffles == 0 {
                warnings.push(
                    "no shuffles: the group permutation test and the prevalence inference need each session's \
                     shuffle null, so only the group mean and its spread are given"
                        .into(),
                );
            }
            None
        };
        Ok(StudyPlan {
            table,
            kind,
            recipe,
            options,
            sessions,
            left_out,
            classes,
            units,
            unit_names,
            pooled,
            warnings,
        })
    }
}

impl Session {
    /// Who the session is and what it holds, as faces list it.
    pub fn listing(&self) -> serde_json::Value {
        serde_json::json!({
            "session": self.name,
            "subject": self.subject,
            "files": self.files,
            "trials": self.trials,
            "neurons": self.neurons,
            "class_counts": self.class_counts,
            "seed": self.seed,
        })
    }

    /// The session's own analysis (sessions of a pooled study have none).
    pub fn plan(&self) -> &AnyPlan {
        self.plan
            .as_ref()
            .expect("a session decoded on its own has a plan")
    }
}

fn plural(n: usize, what: &str) -> String {
    format!("{n} {what}{}", if n == 1 { "" } else { "s" })
}

/// The value most sessions share (ties: the one that comes first).
fn most_common<T: PartialEq>(values: &[T]) -> &T {
    let count = |v: &T| values.iter().filter(|o| *o == v).count();
    let mut best = &values[0];
    for v in values {
        if count(v) > count(best) {
            best = v;
        }
    }
    best
}

/// A session's own analysis under its own seed, or the reason the recipe cannot run on it.
fn session_plan(
    d: SessionData,
    recipe: &Recipe,
    seed: u64,
) -> std::result::Result<AnyPlan, String> {
    let mut rc = recipe.clone();
    rc.seed = seed;
    let built = match d {
        SessionData::Table(t) => Plan::new(t, &rc).map(AnyPlan::Table),
        SessionData::Time(t) => TimePlan::new(t, &rc).map(AnyPlan::Time),
        SessionData::Across(a) => AcrossPlan::new(a, &rc).map(AnyPlan::Across),
    };
    built.map_err(|e| match e {
        Error::Design(m) => m,
        other => other.to_string(),
    })
}

/// Pseudo-trials need, in every session, at least one trial of every condition per fold.
fn pool_check(d: &SessionData, recipe: &Recipe) -> std::result::Result<(), String> {
    let k = match recipe.folds {
        Folds::K(k) => k,
        Folds::LeaveOneOut => unreachable!("refused before"),
    };
    let (classes, counts) = match d {
        SessionData::Table(t) => (&t.classes, t.class_counts()),
        SessionData::Time(t) => (&t.classes, t.class_counts()),
        SessionData::Across(_) => {
            unreachable!("generalization across conditions is refused with pooling")
        }
    };
    match counts.iter().position(|&m| m < k) {
        Some(c) => Err(format!(
            "it has {} of '{}', fewer than the {k} folds; every session needs at least {k} trials of every \
             condition for pseudo-trials",
            plural(counts[c], "trial"),
            classes[c]
        )),
        None => Ok(()),
    }
}

fn describe(row: &StudyRow, seed: u64, d: &SessionData) -> Session {
    let (files, trials, neurons, class_counts) = match d {
        SessionData::Table(t) => (
            vec![SourceFile {
                file: t.source.clone(),
                sha256: t.sha256.clone(),
            }],
            t.n_trials(),
            t.n_features(),
            t.class_counts(),
        ),
        SessionData::Time(t) => (
            t.files.clone(),
            t.n_trials(),
            t.n_neurons(),
            t.class_counts(),
        ),
        SessionData::Across(a) => {
            let mut counts = vec![0; a.classes.len()];
            a.y.iter().for_each(|&c| counts[c] += 1);
            (
                a.features.files.clone(),
                a.features.n_trials,
                a.features.names.len(),
                counts,
            )
        }
    };
    Session {
        name: row.session.clone(),
        subject: row.subject.clone(),
        seed,
        files,
        trials,
        neurons,
        class_counts,
        plan: None,
    }
}

/// Subjects in order of first appearance, each with its sessions; or every session on its own.
fn units_of(sessions: &[Session], by_subject: bool) -> (Units, Vec<String>) {
    let mut names: Vec<String> = Vec::new();
    let mut members: Vec<Vec<usize>> = Vec::new();
    for (s, session) in sessions.iter().enumerate() {
        let name = match (&session.subject, by_subject) {
            (Some(subject), true) => subject.clone(),
            _ => session.name.clone(),
        };
        match names.iter().position(|n| *n == name) {
            Some(u) => members[u].push(s),
            None => {
                names.push(name);
                members.push(vec![s]);
            }
        }
    }
    (Units { members }, names)
}

/// The pooled pseudo-population of the sessions' neurons.
fn pooled_plan(
    sessions: Vec<(String, SessionData)>,
    recipe: &Recipe,
    table: &StudyTable,
) -> Result<AnyPlan> {
    let mut tables = Vec::new();
    let mut recordings = Vec::new();
    for (name, d) in sessions {
        match d {
            SessionData::Table(t) => tables.push((name, t)),
            SessionData::Time(t) => recordings.push((name, t)),
            SessionData::Across(_) => {
                unreachable!("generalization across conditions is refused with pooling")
            }
        }
    }
    if recordings.is_empty() {
        Plan::new(stack_tables(tables, table), recipe).map(AnyPlan::Table)
    } else {
        TimePlan::pooled(recordings, recipe).map(AnyPlan::Time)
    }
}

/// Trial tables of separate sessions as one pseudo-population table: every session's trials in order, every
/// session's neurons (named `session/neuron`), each neuron's cells filled in its own session's rows and empty (NaN)
/// in the others, exactly as a table read with a session column for pseudo-populations. It is named after the
/// study table (the sessions' own files are listed in the study's report).
fn stack_tables(sessions: Vec<(String, Dataset)>, table: &StudyTable) -> Dataset {
    let width: usize = sessions.iter().map(|(_, t)| t.n_features()).sum();
    let total: usize = sessions.iter().map(|(_, t)| t.n_trials()).sum();
    let first = &sessions[0].1;
    let mut x = ndarray::Array2::from_elem((total, width), f64::NAN);
    let (mut row, mut col) = (0, 0);
    let mut out = Dataset {
        source: table.source.clone(),
        sha256: table.sha256.clone(),
        delimiter: first.delimiter.clone(),
        decimal_comma: first.decimal_comma,
        x: ndarray::ArcArray2::zeros((0, 0)),
        y: Vec::new(),
        classes: first.classes.clone(),
        groups: Some(Vec::new()),
        group_names: Vec::new(),
        feature_names: Vec::new(),
        label_column: first.label_column.clone(),
        group_column: Some("session".into()),
        dropped_lines: Vec::new(),
        skipped_columns: Vec::new(),
        warnings: Vec::new(),
        pseudo: Some(Vec::new()),
    };
    for (s, (name, t)) in sessions.iter().enumerate() {
        let (n, p) = (t.n_trials(), t.n_features());
        x.slice_mut(ndarray::s![row..row + n, col..col + p])
            .assign(&t.x);
        out.y.extend_from_slice(&t.y);
        out.groups
            .as_mut()
            .expect("set above")
            .extend(std::iter::repeat_n(s, n));
        out.group_names.push(name.clone());
        out.feature_names
            .extend(t.feature_names.iter().map(|f| format!("{name}/{f}")));
        out.pseudo
            .as_mut()
            .expect("set above")
            .extend(std::iter::repeat_n(s, p));
        (row, col) = (row + n, col + p);
    }
    let notes: Vec<(&str, &[String])> = sessions
        .iter()
        .map(|(name, t)| (name.as_str(), t.warnings.as_slice()))
        .collect();
    out.warnings = session_notes(&notes);
    out.x = x.into_shared();
    out
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn session_seeds_depend_on_name_and_seed_only() {
        assert_eq!(session_seed(1, "m1-d1"), session_seed(1, "m1-d1"));
        assert_ne!(session_seed(1, "m1-d1"), session_seed(1, "m1-d2"));
        assert_ne!(session_seed(1, "m1-d1"), session_seed(2, "m1-d1"));
    }

    #[test]
    fn the_most_common_value_wins_and_ties_go_to_the_first() {
        assert_eq!(*most_common(&[1, 2, 2, 3]), 2);
        assert_eq!(*most_common(&[4, 5]), 4);
    }
}
