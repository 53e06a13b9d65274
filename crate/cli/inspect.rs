//! `popdecode inspect`: what an NWB file holds.

use crate::args::show;
use crate::files::{display_name, open_source, print, write};
use clap::Args;
use popdecode::input::nwb::{ColumnSummary, Recording};
use std::path::PathBuf;

#[derive(Args)]
pub struct InspectArgs {
    /// The NWB file.
    pub file: PathBuf,
    /// Also write every spike as read (unit, time in s) to this CSV.
    #[arg(long)]
    pub spikes: Option<PathBuf>,
}

/// `popdecode inspect FILE.nwb`: what the file holds, and optionally every spike as read.
pub fn run(args: InspectArgs) -> Result<(), String> {
    let name = display_name(&args.file);
    let rec = Recording::read_from(&name, open_source(&args.file)?).map_err(show)?;
    let s = rec.summary();
    let mut text = format!(
        "{name}: {} units, {} spikes, {} trials over {:.3} s\n",
        s.units, s.spikes, s.trials, s.duration
    );
    text.push_str("trials columns (candidate labels, groups and alignment times):\n");
    describe_columns(&s.columns, &mut text);
    if !s.unit_columns.is_empty() {
        text.push_str("units columns (what --units can keep units by):\n");
        describe_columns(&s.unit_columns, &mut text);
    }
    print(&text)?;
    if let Some(path) = &args.spikes {
        let mut out = String::from("unit,time\n");
        for (u, times) in rec.units.iter().zip(&rec.spikes) {
            for t in times {
                out.push_str(&format!("{u},{t:?}\n"));
            }
        }
        write(path, &out)?;
    }
    Ok(())
}

fn describe_columns(columns: &[ColumnSummary], text: &mut String) {
    for c in columns {
        let values: Vec<String> = c.values.iter().map(|(v, n)| format!("{v} ({n})")).collect();
        let described = match (values.is_empty(), c.range) {
            (false, _) => values.join(", "),
            (true, Some((lo, hi))) => format!("{} distinct values from {lo} to {hi}", c.distinct),
            (true, None) => format!("{} distinct values", c.distinct),
        };
        text.push_str(&format!(
            "  {:<20} {:<7} {described}\n",
            c.name,
            if c.numeric { "number" } else { "text" }
        ));
    }
}
