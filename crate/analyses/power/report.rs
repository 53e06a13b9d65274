//! The power analysis's result: a stable JSON schema.
//!
//! Schema `popdecode-power/1` (every face writes exactly this; fields are only ever added):
//! * `schema`, `software` {`name`, `version`}, `file`, `sha256`, `recipe` (the recipe file, its `power` settings
//!   included)
//! * `classes`, `class_counts`, `recorded_neurons`, `chance` (1 / classes), `headline` (`accuracy`, or
//!   `balanced_accuracy` when classes are not balanced)
//! * `protocol` {`folds`, `repeats`, `shuffles`, `shuffle_repeats`}: what every subsample ran; `alpha`; `test_size`,
//!   the rate at which a subsample is significant when the data hold no information, ⌊α(m + 1)⌋/(m + 1) for m
//!   shuffles
//! * `spread`: what `accuracy.sd` and the percentiles describe (the spread over subsamples, not a confidence
//!   interval)
//! * `trials`: per size {`per_class`, `subsamples`, `accuracy` {`mean`, `sd`, `p2_5`, `p97_5`}, `significant`,
//!   `power`}; `neurons`: the same with `size` (recorded neurons kept); `noise`: the same with `added` (noise
//!   neurons appended), and `noise_simulation`, how the noise neurons were made
//! * `extrapolation` (null when the curve cannot be fitted): {`model`, `method`, `fitted_to` (the trials sizes),
//!   `a`, `b`, `c`, `bounded` (a held at 1), `level`, `df`, `points` [{`per_class`, `accuracy`, `low`, `high`}]}
//!   from the largest measured size on, kept apart from the measured `trials`; `extrapolation_note` says why it is
//!   null, or what it is not
//! * `fits` {`total`, `capped`, `single_class`}, `warnings`
//!
//! Nothing time- or machine-dependent is written, so equal recipes and files give byte-identical JSON.

use super::plan::{PowerOutcome, PowerPlan, PowerTask};
use crate::recipe::{Folds, Recipe};
use crate::report::text::pct;
use crate::report::{Fits, Software};
use crate::stats::learning_curve;
use crate::stats::Spread;
use serde::{Deserialize, Serialize};

pub const POWER_SCHEMA: &str = "popdecode-power/1";

/// Two-sided level of the extrapolation's interval.
pub const EXTRAPOLATION_LEVEL: f64 = 0.95;
/// Points of the extrapolated curve, from the largest measured size to the farthest.
const EXTRAPOLATION_STEPS: usize = 12;

/// What the spread of accuracies describes, on every face.
pub const SPREAD_NOTE: &str =
    "accuracy is the mean over subsamples of each subsample's mean over its repeats; SD and \
     percentiles are the spread over subsamples, not a confidence interval";

/// How noise neurons are made, on every face.
pub const NOISE_SIMULATION: &str = "each noise neuron is a copy of one recorded neuron (the recorded neurons taken in \
     a random order, cycled through again when more are added than were recorded) with its values permuted across \
     all trials: its distribution of values equals the recorded neuron's, and it holds no relation to the condition \
     or to any other neuron (so it also carries no shared noise)";

/// The model of the extrapolation, on every face.
pub const EXTRAPOLATION_MODEL: &str = "accuracy = a − b·n^(−c), n = trials per class";

/// How it was fitted, on every face.
pub const EXTRAPOLATION_METHOD: &str = "inverse power law fitted to the mean accuracy at each measured size by weighted \
     least squares, weights proportional to n (Figueroa et al., 2012), with the asymptote a at most 1 (held at 1 \
     when the points ask for more, the interval then being conditional on it); pointwise 95 % confidence interval \
     of the fitted curve by the delta method with Student's t on (sizes − estimated parameters) degrees of freedom, \
     clipped to [0, 1]";

/// What an extrapolation is not, on every face.
pub const EXTRAPOLATION_CAVEAT: &str = "values beyond the recorded trials are predictions of a curve fitted to the \
     measured points, not measurements; the interval covers the fit's uncertainty under the model, not whether \
     accuracy keeps following it";

/// A grid point's subsamples summarised.
#[derive(Debug, Clone, PartialEq, Serialize, Deserialize)]
pub struct Summary {
    /// Subsamples (or subsets, or noise draws) run at this point.
    pub subsamples: usize,
    /// Over subsamples, of each subsample's headline score (mean over its repeats).
    pub accuracy: Spread,
    /// Subsamples whose shuffle p-value was at most α.
    pub significant: usize,
    /// `significant / subsamples`: the empirical power.
    pub power: f64,
}

#[derive(Debug, Clone, PartialEq, Serialize, Deserialize)]
pub struct TrialsPoint {
    pub per_class: usize,
    #[serde(flatten)]
    pub summary: Summary,
}

#[derive(Debug, Clone, PartialEq, Serialize, Deserialize)]
pub struct NeuronsPoint {
    pub size: usize,
    #[serde(flatten)]
    pub summary: Summary,
}

#[derive(Debug, Clone, PartialEq, Serialize, Deserialize)]
pub struct NoisePoint {
    pub added: usize,
    #[serde(flatten)]
    pub summary: Summary,
}

/// What every subsample ran.
#[derive(Debug, Clone, PartialEq, Serialize, Deserialize)]
pub struct Protocol {
    pub folds: Folds,
    pub repeats: usize,
    pub shuffles: usize,
    pub shuffle_repeats: usize,
}

/// The learning curve beyond the recorded trials.
#[derive(Debug, Clone, PartialEq, Serialize, Deserialize)]
pub struct Extrapolation {
    pub model: String,
    pub method: String,
    /// The measured trials sizes the curve was fitted to.
    pub fitted_to: Vec<usize>,
    pub a: f64,
    pub b: f64,
    pub c: f64,
    /// The asymptote was held at its bound of 1 (b and c alone were estimated).
    pub bounded: bool,
    pub level: f64,
    pub df: usize,
    pub points: Vec<ExtrapolatedPoint>,
}

#[derive(Debug, Clone, PartialEq, Serialize, Deserialize)]
pub struct ExtrapolatedPoint {
    pub per_class: usize,
    /// The fitted curve, clipped to [0, 1].
    pub accuracy: f64,
    pub low: f64,
    pub high: f64,
}

#[derive(Debug, Clone, PartialEq, Serialize, Deserialize)]
pub struct PowerReport {
    pub schema: String,
    pub software: Software,
    pub file: String,
    pub sha256: String,
    pub recipe: Recipe,
    pub classes: Vec<String>,
    pub class_counts: Vec<usize>,
    pub recorded_neurons: usize,
    pub chance: f64,
    pub headline: String,
    pub protocol: Protocol,
    pub alpha: f64,
    pub test_size: f64,
    pub spread: String,
    pub trials: Vec<TrialsPoint>,
    pub neurons: Vec<NeuronsPoint>,
    pub noise: Vec<NoisePoint>,
    pub noise_simulation: String,
    pub extrapolation: Option<Extrapolation>,
    pub extrapolation_note: String,
    pub fits: Fits,
    pub warnings: Vec<String>,
}

impl PowerReport {
    /// Assemble the outcomes, in any order.
    pub fn build(plan: &PowerPlan, outcomes: &[PowerOutcome]) -> PowerReport {
        let data = &plan.plan.data;
        let alpha = plan.settings.alpha;
        let shuffles = plan.recipe.shuffles;
        let summary = |at: &dyn Fn(PowerTask) -> bool| -> Summary {
            let mut picked: Vec<&PowerOutcome> = outcomes.iter().filter(|o| at(o.task)).collect();
            picked.sort_by_key(|o| draw_of(o.task));
            let scores: Vec<f64> = picked.iter().map(|o| o.score).collect();
            let significant = picked.iter().filter(|o| o.p_value <= alpha).count();
            Summary {
                subsamples: picked.len(),
                accuracy: Spread::of(&scores),
                significant,
                power: significant as f64 / picked.len().max(1) as f64,
            }
        };
        let g = &plan.grids;
        let trials: Vec<TrialsPoint> = g
            .trials
            .iter()
            .map(|&n| TrialsPoint {
                per_class: n,
                summary: summary(
                    &|t| matches!(t, PowerTask::Trials { per_class, .. } if per_class == n),
                ),
            })
            .collect();
        let neurons = g
            .neurons
            .iter()
            .map(|&m| NeuronsPoint {
                size: m,
                summary: summary(&|t| matches!(t, PowerTask::Neurons { size, .. } if size == m)),
            })
            .collect();
        let noise = g
            .noise
            .iter()
            .map(|&m| NoisePoint {
                added: m,
                summary: summary(&|t| matches!(t, PowerTask::Noise { added, .. } if added == m)),
            })
            .collect();
        let (extrapolation, extrapolation_note) = match extrapolate(&trials, g.extrapolate_to) {
            Ok(e) => (Some(e), EXTRAPOLATION_CAVEAT.to_string()),
            Err(reason) => (None, reason),
        };
        let fits = Fits::sum(
            outcomes
                .iter()
                .map(|o| (o.fits, o.capped_fits, o.single_class_fits)),
        );
        let protocol = Protocol {
            folds: plan.recipe.folds,
            repeats: plan.recipe.repeats,
            shuffles,
            shuffle_repeats: plan.recipe.shuffle_repeats(),
        };
        let mut warnings = fits.with_warnings(&plan.plan.scheme.warnings);
        let largest = g.trials.last().copied().unwrap_or(0);
        warnings.extend(cautions(&data.class_counts(), largest, &protocol, alpha));
        PowerReport {
            schema: POWER_SCHEMA.into(),
            software: Software::current(),
            file: data.source.clone(),
            sha256: data.sha256.clone(),
            recipe: plan.recipe.clone(),
            classes: data.classes.clone(),
            class_counts: data.class_counts(),
            recorded_neurons: data.n_features(),
            chance: 1.0 / data.classes.len() as f64,
            headline: if plan.recipe.balance {
                "accuracy"
            } else {
                "balanced_accuracy"
            }
            .into(),
            protocol,
            alpha,
            test_size: test_size(alpha, shuffles),
            spread: SPREAD_NOTE.into(),
            trials,
            neurons,
            noise,
            noise_simulation: NOISE_SIMULATION.into(),
            extrapolation,
            extrapolation_note,
            fits,
            warnings,
        }
    }

    pub fn to_json(&self) -> String {
        serde_json::to_string_pretty(self).expect("a report always serialises")
    }
}

/// The rate at which a permutation test with `shuffles` permutations rejects at `alpha` when observed and permuted
/// analyses are exchangeable: ⌊α(m + 1)⌋/(m + 1) (the observed score's rank among m + 1 is uniform).
pub fn test_size(alpha: f64, shuffles: usize) -> f64 {
    let m1 = (shuffles + 1) as f64;
    libm::floor(alpha * m1 + 1e-9) / m1
}

/// The cautions that belong to this result, from the class counts, the largest trials size, the protocol and α
/// (in the JSON `warnings`, the text and the methods paragraph).
pub fn cautions(
    class_counts: &[usize],
    largest: usize,
    protocol: &Protocol,
    alpha: f64,
) -> Vec<String> {
    let smallest = class_counts.iter().copied().min().unwrap_or(0);
    let mut out = vec![format!(
        "trial subsamples are drawn from the recorded trials, so two subsamples of n trials per class share on \
         average n/N of each class's trials (at {largest} of the {smallest} trials of the smallest class: {}); near \
         the recorded size the power measured describes this recording more than new recordings of that size",
        pct(largest as f64 / smallest.max(1) as f64)
    )];
    if protocol.shuffle_repeats < protocol.repeats {
        out.push(format!(
            "each shuffle ran {} repeats against the observed {}: the test stays valid but is conservative, so \
             without information subsamples are significant less often than {}, and power is underestimated",
            protocol.shuffle_repeats,
            protocol.repeats,
            pct(test_size(alpha, protocol.shuffles))
        ));
    }
    out
}

impl PowerReport {
    /// This result's cautions (they are also among `warnings`).
    pub fn cautions(&self) -> Vec<String> {
        let largest = self.trials.last().map_or(0, |t| t.per_class);
        cautions(&self.class_counts, largest, &self.protocol, self.alpha)
    }
}

/// The draw of a task (to order a grid point's subsamples).
fn draw_of(t: PowerTask) -> usize {
    match t {
        PowerTask::Trials { draw, .. }
        | PowerTask::Neurons { draw, .. }
        | PowerTask::Noise { draw, .. } => draw,
    }
}

/// The learning curve fitted to the measured trials points and continued to `to` trials per class.
fn extrapolate(trials: &[TrialsPoint], to: usize) -> Result<Extrapolation, String> {
    let n: Vec<f64> = trials.iter().map(|t| t.per_class as f64).collect();
    let y: Vec<f64> = trials.iter().map(|t| t.summary.accuracy.mean).collect();
    if y.iter().any(|v| !v.is_finite()) {
        return Err("no learning curve: some sizes have no subsamples".into());
    }
    let curve = learning_curve::fit(&n, &y, &n, EXTRAPOLATION_LEVEL)
        .map_err(|reason| format!("no extrapolation: {reason}"))?;
    let from = trials.last().expect("a grid is never empty").per_class;
    let mut sizes: Vec<usize> = (0..=EXTRAPOLATION_STEPS)
        .map(|i| {
            from + libm::round((to - from) as f64 * i as f64 / EXTRAPOLATION_STEPS as f64) as usize
        })
        .collect();
    sizes.dedup();
    let clip = |v: f64| v.clamp(0.0, 1.0);
    Ok(Extrapolation {
        model: EXTRAPOLATION_MODEL.into(),
        method: EXTRAPOLATION_METHOD.into(),
        fitted_to: trials.iter().map(|t| t.per_class).collect(),
        a: curve.a,
        b: curve.b,
        c: curve.c,
        bounded: curve.bounded,
        level: curve.level,
        df: curve.df,
        points: sizes
            .into_iter()
            .map(|m| {
                let p = curve.predict(m as f64);
                ExtrapolatedPoint {
                    per_class: m,
                    accuracy: clip(p.fit),
                    low: clip(p.low),
                    high: clip(p.high),
                }
            })
            .collect(),
    })
}
