//! Invented neural populations, for the demo files, the tests and the benchmarks. Never real data.
//!
//! The scenario is our own: odour identity presented to a simulated olfactory-cortex population. Each unit has a
//! baseline rate and a log-normal tuning to each odour; a trial's rate is counted as Poisson spikes in a 0.5 s
//! window and written in Hz. Optionally the conditions are run in blocks, each block with its own offset on every
//! unit and a slow drift over the session — the situation in which random folds mistake "when" for "what".

use crate::rng::{normal, poisson, shuffle, task_rng, Stream};
use std::fmt::Write;

/// What to invent.
#[derive(Debug, Clone)]
pub struct Scenario {
    pub classes: Vec<String>,
    pub trials_per_class: Vec<usize>,
    pub units: usize,
    /// SD of the log-rate tuning to odour (0 = no information at all).
    pub tuning: f64,
    /// Fraction of units that carry the tuning.
    pub tuned_fraction: f64,
    /// Run conditions in this many blocks per condition (0 = interleaved), each with its own offset.
    pub blocks_per_class: usize,
    /// SD of each block's log-rate offset per unit.
    pub block_offset: f64,
    /// Sessions the trials are dealt to (interleaved designs), for the group column; 0 writes no group column (one
    /// session of a study).
    pub sessions: usize,
    pub seed: u64,
}

impl Scenario {
    /// Four odours, unequal trial counts, 52 units with modest tuning.
    pub fn odours() -> Scenario {
        Scenario {
            classes: ["citral", "eugenol", "hexanal", "limonene"]
                .map(String::from)
                .to_vec(),
            trials_per_class: vec![62, 58, 56, 56],
            units: 52,
            tuning: 0.15,
            tuned_fraction: 0.6,
            blocks_per_class: 0,
            block_offset: 0.0,
            sessions: 4,
            seed: 2026,
        }
    }
}

const WINDOW_S: f64 = 0.5;

/// Generate the table as CSV text: columns `trial_id`, `odour`, then `session` or `block`, then `unit_01`…
pub fn csv(s: &Scenario) -> String {
    let mut rng = task_rng(s.seed, Stream::Simulation, 0, 0);
    let baseline: Vec<f64> = (0..s.units)
        .map(|_| 2.0 + 18.0 * crate::rng::unit(&mut rng))
        .collect();
    let tuned = (s.units as f64 * s.tuned_fraction).round() as usize;
    let tuning: Vec<Vec<f64>> = (0..s.classes.len())
        .map(|_| {
            (0..s.units)
                .map(|u| {
                    if u < tuned {
                        s.tuning * normal(&mut rng)
                    } else {
                        0.0
                    }
                })
                .collect()
        })
        .collect();
    // Trial order: interleaved (shuffled), or blocks of one condition in shuffled block order.
    let mut order: Vec<(usize, usize)> = Vec::new(); // (class, block)
    if s.blocks_per_class == 0 {
        for (c, &n) in s.trials_per_class.iter().enumerate() {
            order.extend(std::iter::repeat_n((c, 0), n));
        }
        shuffle(&mut rng, &mut order);
    } else {
        let mut blocks: Vec<(usize, usize)> = Vec::new();
        for c in 0..s.classes.len() {
            for b in 0..s.blocks_per_class {
                blocks.push((c, b));
            }
        }
        shuffle(&mut rng, &mut blocks);
        for (number, &(c, b)) in blocks.iter().enumerate() {
            let n = s.trials_per_class[c] / s.blocks_per_class
                + usize::from(b < s.trials_per_class[c] % s.blocks_per_class);
            order.extend(std::iter::repeat_n((c, number), n));
        }
    }
    let n_blocks = s.classes.len() * s.blocks_per_class;
    let offsets: Vec<Vec<f64>> = (0..n_blocks)
        .map(|_| {
            (0..s.units)
                .map(|_| s.block_offset * normal(&mut rng))
                .collect()
        })
        .collect();

    let mut out = String::new();
    let group_name = if s.blocks_per_class > 0 {
        "block"
    } else {
        "session"
    };
    let grouped = s.blocks_per_class > 0 || s.sessions > 0;
    out.push_str("trial_id,odour");
    if grouped {
        write!(out, ",{group_name}").unwrap();
    }
    for u in 0..s.units {
        write!(out, ",unit_{:02}", u + 1).unwrap();
    }
    out.push('\n');
    let total = order.len();
    for (t, &(c, block)) in order.iter().enumerate() {
        let group = if s.blocks_per_class > 0 {
            block + 1
        } else {
            t * s.sessions.max(1) / total + 1
        };
        write!(out, "t{:04},{}", t + 1, s.classes[c]).unwrap();
        if grouped {
            write!(out, ",{}{:02}", &group_name[..1], group).unwrap();
        }
        for u in 0..s.units {
            let offset = if s.blocks_per_class > 0 {
                offsets[block][u]
            } else {
                0.0
            };
            let rate = baseline[u] * libm::exp(tuning[c][u] + offset);
            let spikes = poisson(&mut rng, rate * WINDOW_S);
            write!(out, ",{}", spikes as f64 / WINDOW_S).unwrap();
        }
        out.push('\n');
    }
    out
}

/// An invented time-resolved recording: odour identity is carried only between `info_start` and `info_end`
/// seconds after odour onset, by a fraction of the units. Everything else is baseline firing.
#[derive(Debug, Clone)]
pub struct TimeScenario {
    pub classes: Vec<String>,
    pub trials_per_class: usize,
    pub units: usize,
    /// SD of the log-rate tuning to odour inside the informative period.
    pub tuning: f64,
    pub tuned_fraction: f64,
    pub info_start: f64,
    pub info_end: f64,
    /// Recorded span around odour onset, s.
    pub start: f64,
    pub end: f64,
    /// Sessions the trials are dealt to, for the trial table's or binned table's `session` column; 0 writes none in
    /// a binned table (one session of a study).
    pub sessions: usize,
    /// Write spike times on one session clock, with each trial's onset time in the trial table.
    pub absolute_times: bool,
    pub seed: u64,
}

impl TimeScenario {
    /// Three odours, 40 trials each, 24 units, information from 0.2 to 0.6 s after onset, recorded -0.5 to 1 s.
    pub fn odours() -> TimeScenario {
        TimeScenario {
            classes: ["citral", "eugenol", "hexanal"].map(String::from).to_vec(),
            trials_per_class: 40,
            units: 24,
            tuning: 0.6,
            tuned_fraction: 0.5,
            info_start: 0.2,
            info_end: 0.6,
            start: -0.5,
            end: 1.0,
            sessions: 3,
            absolute_times: false,
            seed: 2027,
        }
    }

    fn baseline_and_tuning(&self, rng: &mut impl rand_core::RngCore) -> (Vec<f64>, Vec<Vec<f64>>) {
        let baseline: Vec<f64> = (0..self.units)
            .map(|_| 4.0 + 16.0 * crate::rng::unit(rng))
            .collect();
        let tuned = (self.units as f64 * self.tuned_fraction).round() as usize;
        let tuning = (0..self.classes.len())
            .map(|_| {
                (0..self.units)
                    .map(|u| {
                        if u < tuned {
                            self.tuning * normal(rng)
                        } else {
                            0.0
                        }
                    })
                    .collect()
            })
            .collect();
        (baseline, tuning)
    }

    /// Trial order (class of each trial), shuffled.
    fn order(&self, rng: &mut impl rand_core::RngCore) -> Vec<usize> {
        let mut order: Vec<usize> = (0..self.classes.len())
            .flat_map(|c| std::iter::repeat_n(c, self.trials_per_class))
            .collect();
        shuffle(rng, &mut order);
        order
    }
}

/// The two files of a spike-event recording.
pub struct EventFiles {
    /// `trial,neuron,time`: one row per spike.
    pub events: String,
    /// `trial,odour,session[,onset]`: one row per trial.
    pub trials: String,
}

/// Spike trains as inhomogeneous Poisson processes with piecewise-constant rates, times rounded to 0.1 ms.
pub fn spike_events(s: &TimeScenario) -> EventFiles {
    let mut rng = task_rng(s.seed, Stream::Simulation, 1, 0);
    let (baseline, tuning) = s.baseline_and_tuning(&mut rng);
    let order = s.order(&mut rng);
    let mut events = String::from("trial,neuron,time\n");
    let mut trials = format!(
        "trial,odour,session{}\n",
        if s.absolute_times { ",onset" } else { "" }
    );
    let segments = [
        (s.start, s.info_start, false),
        (s.info_start, s.info_end, true),
        (s.info_end, s.end, false),
    ];
    for (t, &c) in order.iter().enumerate() {
        let id = format!("tr{:03}", t + 1);
        let session = t * s.sessions.max(1) / order.len() + 1;
        // Trials 4 s apart on the session clock, onset 1 s into each.
        let onset = if s.absolute_times {
            4.0 * t as f64 + 1.0
        } else {
            0.0
        };
        write!(trials, "{id},{},s{session}", s.classes[c]).unwrap();
        if s.absolute_times {
            write!(trials, ",{onset}").unwrap();
        }
        trials.push('\n');
        for u in 0..s.units {
            let mut times = Vec::new();
            for &(a, b, informative) in &segments {
                let gain = if informative {
                    libm::exp(tuning[c][u])
                } else {
                    1.0
                };
                let n = poisson(&mut rng, baseline[u] * gain * (b - a));
                for _ in 0..n {
                    times.push(a + (b - a) * crate::rng::unit(&mut rng));
                }
            }
            times.sort_by(f64::total_cmp);
            for time in times {
                writeln!(events, "{id},u{:02},{:.4}", u + 1, time + onset).unwrap();
            }
        }
    }
    EventFiles { events, trials }
}

/// One bin of one trial of [`binned_trials`]: which trial and bin, and the units' rates in Hz.
pub struct Bin<'a> {
    pub trial: usize,
    pub class: usize,
    pub session: usize,
    pub bin: usize,
    pub centre: f64,
    pub rates: &'a [f64],
}

/// Trials binned at `bin` seconds: Poisson counts at each bin's rate, in Hz, handed to `emit` trial by trial.
pub fn binned_trials(s: &TimeScenario, bin: f64, mut emit: impl FnMut(Bin)) {
    let mut rng = task_rng(s.seed, Stream::Simulation, 2, 0);
    let (baseline, tuning) = s.baseline_and_tuning(&mut rng);
    let order = s.order(&mut rng);
    let bins = ((s.end - s.start) / bin).round() as usize;
    let mut rates = vec![0.0; s.units];
    for (t, &c) in order.iter().enumerate() {
        let session = t * s.sessions.max(1) / order.len() + 1;
        for b in 0..bins {
            let centre = s.start + (b as f64 + 0.5) * bin;
            let informative = centre >= s.info_start && centre < s.info_end;
            for (u, r) in rates.iter_mut().enumerate() {
                let gain = if informative {
                    libm::exp(tuning[c][u])
                } else {
                    1.0
                };
                *r = poisson(&mut rng, baseline[u] * gain * bin) as f64 / bin;
            }
            emit(Bin {
                trial: t,
                class: c,
                session,
                bin: b,
                centre,
                rates: &rates,
            });
        }
    }
}

/// A binned table (one row per trial × bin of `bin` seconds), from [`binned_trials`].
pub fn binned(s: &TimeScenario, bin: f64) -> String {
    let mut out = String::from("trial,time,odour");
    if s.sessions > 0 {
        out.push_str(",session");
    }
    for u in 0..s.units {
        write!(out, ",u{:02}", u + 1).unwrap();
    }
    out.push('\n');
    binned_trials(s, bin, |b| {
        write!(
            out,
            "tr{:03},{:.4},{}",
            b.trial + 1,
            b.centre,
            s.classes[b.class]
        )
        .unwrap();
        if s.sessions > 0 {
            write!(out, ",s{}", b.session).unwrap();
        }
        for r in b.rates {
            write!(out, ",{r}").unwrap();
        }
        out.push('\n');
    });
    out
}

/// An invented study: sessions recorded from several animals, each session its own recording with its own units
/// and trial count, some sessions without any information.
#[derive(Debug, Clone)]
pub struct StudyScenario {
    /// (subject, session, informative), in table order.
    pub sessions: Vec<(String, String, bool)>,
    /// Every session's trial table is made from this, with its own seed, a few units and trials fewer in some
    /// sessions, and no tuning where the session is not informative.
    pub table: Scenario,
    /// When set, sessions are binned tables over time made from this (and `bin` s bins) instead.
    pub time: Option<(TimeScenario, f64)>,
    /// Write the `subject` column.
    pub with_subjects: bool,
}

/// A study table and its sessions' files (name, contents).
pub struct StudyFiles {
    pub table: String,
    pub files: Vec<(String, String)>,
}

impl StudyScenario {
    /// Four mice, ten sessions of three odours in a simulated piriform-cortex population; the probe of mouse m3 sat
    /// outside the odour-responsive layer in both its sessions, so they carry no information.
    pub fn mice() -> StudyScenario {
        let plan = [("m1", 3), ("m2", 2), ("m3", 2), ("m4", 3)];
        let sessions = plan
            .iter()
            .flat_map(|&(m, n)| {
                (1..=n).map(move |d| (m.to_string(), format!("{m}-d{d}"), m != "m3"))
            })
            .collect();
        StudyScenario {
            sessions,
            table: Scenario {
                classes: ["citral", "eugenol", "hexanal"].map(String::from).to_vec(),
                trials_per_class: vec![30, 30, 30],
                units: 20,
                tuning: 0.35,
                tuned_fraction: 0.4,
                blocks_per_class: 0,
                block_offset: 0.0,
                sessions: 0,
                seed: 3100,
            },
            time: None,
            with_subjects: true,
        }
    }

    /// The same study over time: binned tables of 0.1 s bins from −0.4 to 0.8 s, information from 0.1 to 0.5 s.
    pub fn mice_over_time() -> StudyScenario {
        let mut s = StudyScenario::mice();
        s.time = Some((
            TimeScenario {
                classes: s.table.classes.clone(),
                trials_per_class: 30,
                units: 16,
                tuning: 0.5,
                tuned_fraction: 0.5,
                info_start: 0.1,
                info_end: 0.5,
                start: -0.4,
                end: 0.8,
                sessions: 0,
                absolute_times: false,
                seed: 3200,
            },
            0.1,
        ));
        s
    }
}

/// Write an invented study: the study table (`file,session[,subject]`) and each session's file, named after the
/// session (`<session>.csv`, or `<session>_binned.csv` over time).
pub fn study(s: &StudyScenario) -> StudyFiles {
    let mut table = String::from(if s.with_subjects {
        "file,session,subject\n"
    } else {
        "file,session\n"
    });
    let mut files = Vec::new();
    for (i, (subject, session, informative)) in s.sessions.iter().enumerate() {
        let fewer = 2 * (i % 3);
        let (name, text) = match &s.time {
            None => {
                let sc = Scenario {
                    trials_per_class: s
                        .table
                        .trials_per_class
                        .iter()
                        .map(|&n| n - fewer)
                        .collect(),
                    units: s.table.units - fewer,
                    tuning: if *informative { s.table.tuning } else { 0.0 },
                    seed: s.table.seed + i as u64,
                    ..s.table.clone()
                };
                (format!("{session}.csv"), csv(&sc))
            }
            Some((template, bin)) => {
                let sc = TimeScenario {
                    trials_per_class: template.trials_per_class - fewer,
                    units: template.units - fewer,
                    tuning: if *informative { template.tuning } else { 0.0 },
                    seed: template.seed + i as u64,
                    ..template.clone()
                };
                (format!("{session}_binned.csv"), binned(&sc, *bin))
            }
        };
        if s.with_subjects {
            writeln!(table, "{name},{session},{subject}").unwrap();
        } else {
            writeln!(table, "{name},{session}").unwrap();
        }
        files.push((name, text));
    }
    StudyFiles { table, files }
}
