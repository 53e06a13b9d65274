//! Time courses of neurons recorded in separate sessions, pooled into one pseudo-population.
//!
//! The sessions stay apart in memory (each its own windows × trials × neurons), because a pooled array of every
//! trial by every neuron would be mostly empty and grows with the square of the study. A repeat deals every
//! session's trials of every condition into the folds ([`crate::resample::pseudo::deal`]); pseudo-trial t of
//! condition c in fold f joins, at every window, the activity of each session's neurons on that session's t-th trial
//! of c in f. The same pairing serves every window, as one repeat's folds serve every window of a single recording,
//! and training and test pseudo-trials come from disjoint real trials.

use crate::data::time::TimeDataset;
use crate::error::{Error, Result};
use crate::report::text::session_notes;
use crate::resample::pseudo::{deal, Dealt, PseudoTrial};
use ndarray::Array3;
use rand_core::RngCore;

/// The sessions of a pooled population, in the order their neurons are joined.
pub struct Pool {
    pub sessions: Vec<TimeDataset>,
    /// Where each session's trials start in the pooled trial order.
    offsets: Vec<usize>,
}

/// One repeat's pseudo-trials: who they are, and their conditions and folds.
pub struct PseudoDraw {
    pub dealt: Dealt,
    pub trials: Vec<PseudoTrial>,
    pub y: Vec<usize>,
    pub fold: Vec<usize>,
    pub folds: usize,
}

impl Pool {
    /// Pool sessions (name, recording) with the same windows and classes. Returns the description of the pooled
    /// population (every session's trials in order, with the session as their group, and every session's neurons
    /// named `session/neuron`; it holds no activity: `x` is empty) and the pool that holds the activity.
    pub fn new(sessions: Vec<(String, TimeDataset)>) -> Result<(TimeDataset, Pool)> {
        let (first_name, first) = sessions
            .first()
            .ok_or_else(|| Error::Design("a pooled population needs sessions".into()))?;
        for (name, s) in &sessions[1..] {
            if s.windows != first.windows {
                return Err(Error::Design(format!(
                    "session '{name}' has other time windows than session '{first_name}'; pooled sessions need the \
                     same windows"
                )));
            }
            if s.classes != first.classes {
                return Err(Error::Design(format!(
                    "session '{name}' has the conditions {} where session '{first_name}' has {}; pooled sessions need \
                     the same conditions",
                    s.classes.join(", "),
                    first.classes.join(", ")
                )));
            }
        }
        let mut data = TimeDataset {
            source: "the pooled sessions".into(),
            files: Vec::new(),
            x: Array3::zeros((first.windows.len(), 0, 0)).into_shared(),
            windows: first.windows.clone(),
            trial_ids: Vec::new(),
            y: Vec::new(),
            classes: first.classes.clone(),
            groups: Some(Vec::new()),
            group_names: Vec::new(),
            neurons: Vec::new(),
            label_column: first.label_column.clone(),
            group_column: Some("session".into()),
            spikes_outside: 0,
            spikes_total: 0,
            warnings: Vec::new(),
        };
        let mut offsets = Vec::new();
        let groups = data.groups.as_mut().expect("set above");
        for (s, (name, rec)) in sessions.iter().enumerate() {
            offsets.push(data.y.len());
            data.files.extend(rec.files.iter().cloned());
            data.trial_ids
                .extend(rec.trial_ids.iter().map(|t| format!("{name}/{t}")));
            data.y.extend_from_slice(&rec.y);
            groups.extend(std::iter::repeat_n(s, rec.y.len()));
            data.group_names.push(name.clone());
            data.neurons
                .extend(rec.neurons.iter().map(|n| format!("{name}/{n}")));
            data.spikes_outside += rec.spikes_outside;
            data.spikes_total += rec.spikes_total;
        }
        let notes: Vec<(&str, &[String])> = sessions
            .iter()
            .map(|(name, rec)| (name.as_str(), rec.warnings.as_slice()))
            .collect();
        data.warnings = session_notes(&notes);
        let pool = Pool {
            sessions: sessions.into_iter().map(|(_, rec)| rec).collect(),
            offsets,
        };
        Ok((data, pool))
    }

    /// Deal pseudo-trials for `labels` (observed or permuted, in the pooled trial order) into `k` folds.
    pub fn draw(
        &self,
        labels: &[usize],
        k: usize,
        n_classes: usize,
        rng: &mut impl RngCore,
    ) -> PseudoDraw {
        let per_session: Vec<Vec<usize>> = self
            .sessions
            .iter()
            .zip(&self.offsets)
            .map(|(s, &at)| labels[at..at + s.n_trials()].to_vec())
            .collect();
        let dealt = deal(&per_session, n_classes, k, rng);
        let trials = dealt.trials();
        PseudoDraw {
            y: trials.iter().map(|t| t.class).collect(),
            fold: trials.iter().map(|t| t.fold).collect(),
            folds: k,
            trials,
            dealt,
        }
    }

    /// Row-major activity at window `w` of the pseudo-trials at `positions`: every session's neurons, in session
    /// order, on the real trial the pseudo-trial takes from that session.
    pub fn rows(&self, draw: &PseudoDraw, w: usize, positions: &[usize]) -> Vec<f64> {
        let width: usize = self.sessions.iter().map(TimeDataset::n_neurons).sum();
        let mut out = Vec::with_capacity(positions.len() * width);
        for &pos in positions {
            let pt = draw.trials[pos];
            for (s, rec) in self.sessions.iter().enumerate() {
                let p = rec.n_neurons();
                let i = draw.dealt.member(s, pt);
                out.extend_from_slice(&rec.window(w)[i * p..(i + 1) * p]);
            }
        }
        out
    }
}
