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
    /// Sessions the trials are dealt to (interleaved designs), for the group column.
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
    write!(out, "trial_id,odour,{group_name}").unwrap();
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
        write!(
            out,
            "t{:04},{},{}{:02}",
            t + 1,
            s.classes[c],
            &group_name[..1],
            group
        )
        .unwrap();
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
