//! What a subcommand builds its plan from, and reading those files: shared by a single run (`run.rs`) and the part
//! files that record it for `combine` (`part.rs`), so that neither needs the other for it.

use crate::args::show;
use crate::files::{display_name, open_source, read};
use popdecode::input::extract;
use popdecode::recipe::{Recipe, TimeInput};
use serde::{Deserialize, Serialize};
use std::path::PathBuf;

/// What a subcommand builds its plan from. A part file records it, so that `combine` can build the same plan
/// again with the subcommand's own `load` and call `finish` on it.
#[derive(Clone, Debug, Serialize, Deserialize)]
pub struct Inputs {
    /// The subcommand (`decode`, `timecourse`, `neurons`).
    pub analysis: String,
    /// The recipe the plan is built from, after the flags were applied.
    pub recipe: Recipe,
    /// Settings of the analysis that are not in the recipe (the neuron analyses' draws), as a JSON object.
    pub options: serde_json::Value,
    /// The input files in the order the subcommand's `load` expects them.
    pub paths: Vec<PathBuf>,
}

/// The input files' names and bytes; an NWB file is read lazily into its extract (units and trials only), exactly
/// as the page does.
pub fn read_inputs(inputs: &Inputs) -> Result<Vec<(String, Vec<u8>)>, String> {
    let nwb = inputs
        .recipe
        .time
        .as_ref()
        .is_some_and(|t| matches!(t.input, TimeInput::Nwb { .. }));
    inputs
        .paths
        .iter()
        .map(|p| {
            let name = display_name(p);
            let bytes = if nwb {
                extract::read_nwb(&name, open_source(p)?).map_err(show)?
            } else {
                read(p)?
            };
            Ok((name, bytes))
        })
        .collect()
}
