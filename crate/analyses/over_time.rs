//! What the analyses over time share beyond the time course itself: clusters of a curve from a cluster test, with
//! their times, the onset, and the methods sentences on windows and on the cluster test. Scores enter the test
//! oriented so that larger is better.

use super::time_course::report::{Onset, TimeCluster};
use crate::recipe::windows::Window;
use crate::recipe::{Recipe, TimeInput};
use crate::report::text::seconds as s;
use crate::stats::clusters::{self, ClusterTest, CLUSTER_PERCENTILE};

/// The cluster test of a curve: `observed` per window, one curve per shuffle (both larger-is-better).
pub fn curve_test(observed: &[f64], null: &[Vec<f64>]) -> Option<ClusterTest> {
    (!null.is_empty()).then(|| {
        let refs: Vec<&[f64]> = null.iter().map(Vec::as_slice).collect();
        clusters::test(observed, &refs, 1, observed.len())
    })
}

/// The clusters of a curve test, in time, significant below `alpha`.
pub fn time_clusters(
    test: Option<&ClusterTest>,
    windows: &[Window],
    alpha: f64,
) -> Vec<TimeCluster> {
    test.iter()
        .flat_map(|t| &t.clusters)
        .map(|c| {
            let (a, b) = (c.cells[0], *c.cells.last().expect("a cluster has cells"));
            TimeCluster {
                start: windows[a].time,
                end: windows[b].time,
                window_start: windows[a].start,
                window_end: windows[b].end,
                first_window: a,
                last_window: b,
                mass: c.mass,
                p_value: c.p_value,
                significant: c.p_value < alpha,
            }
        })
        .collect()
}

/// The first window of the earliest significant cluster.
pub fn onset(clusters: &[TimeCluster], windows: &[Window]) -> Option<Onset> {
    clusters.iter().find(|c| c.significant).map(|c| Onset {
        time: windows[c.first_window].time,
        window: c.first_window,
        window_start: windows[c.first_window].start,
    })
}

/// Whether window `w` lies inside a significant cluster.
pub fn in_significant(clusters: &[TimeCluster], w: usize) -> bool {
    clusters
        .iter()
        .any(|c| c.significant && (c.first_window..=c.last_window).contains(&w))
}

/// The methods sentence saying where the windows came from (spikes counted in sliding windows, or bins given).
pub fn windows_sentence(recipe: &Recipe, windows: &[Window], neurons: usize) -> String {
    match recipe.time.as_ref().map(|t| &t.input) {
        Some(TimeInput::Events { width, step, start, end, align, .. }) => format!(
            "Spikes were counted in windows of {} s stepped by {} s from {} s to {} s relative to {} (each window \
             covering [start, start + width)), giving {} windows, and converted to rates in Hz.",
            s(*width),
            s(*step),
            s(*start),
            s(*end),
            match align {
                Some(a) => format!("each trial's '{a}' time"),
                None => "the alignment event the spike times were given relative to".to_string(),
            },
            windows.len()
        ),
        Some(TimeInput::Nwb { width, step, start, end, align, units }) => format!(
            "Spike times of {neurons} units{} were read from the NWB file's units table and counted in windows of {} \
             s stepped by {} s from {} s to {} s relative to each trial's '{}' time (trials table; each window \
             covering [start, start + width)), giving {} windows, and converted to rates in Hz.",
            if units.is_empty() {
                String::new()
            } else {
                let rule: Vec<String> = units.iter().map(ToString::to_string).collect();
                format!(" (those with {})", rule.join(" and "))
            },
            s(*width),
            s(*step),
            s(*start),
            s(*end),
            align.as_deref().unwrap_or("start_time"),
            windows.len()
        ),
        _ => format!(
            "The activity was given in {} time bins from {} s to {} s, each decoded as one window.",
            windows.len(),
            s(windows[0].time),
            s(windows[windows.len() - 1].time)
        ),
    }
}

/// The cluster-test sentence: how thresholds, clusters, masses and p-values were made.
pub fn cluster_sentence(
    shuffles: usize,
    repeats_each: usize,
    within: &str,
    what: &str,
    alpha: f64,
) -> String {
    format!(
        "Significance over time was assessed by cluster-based permutation inference (Maris & Oostenveld, 2007): \
         {what} were permuted{within} {shuffles} times, each permutation analysed with the identical protocol at every \
         window over {repeats_each} repeats; windows whose score was better than the {CLUSTER_PERCENTILE}th \
         percentile of their own null formed clusters of adjacent windows, a cluster's mass was its summed excess \
         over those thresholds, and its p = (b + 1)/(m + 1), b the number of the m permutations whose largest cluster \
         mass was at least as large (Phipson & Smyth, 2010). Clusters with p < {alpha} are reported as significant."
    )
}
