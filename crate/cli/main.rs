//! The command-line face: one file per subcommand, the arguments they share in [`args`], and where tasks run in
//! [`run`]. Each subcommand turns its flags into a recipe, reads its files, builds the analysis's plan and hands it
//! to [`run::analyse`]; the core does the rest.

mod args;
mod combine;
mod decode;
mod files;
mod inputs;
mod inspect;
mod neurons;
mod part;
mod power;
mod predict;
mod run;
mod study;
mod targets;
mod timecourse;

/// In the statically linked (musl) build, an allocator that keeps freed memory for reuse (Cargo.toml says why).
#[cfg(target_env = "musl")]
#[global_allocator]
static ALLOCATOR: dlmalloc::GlobalDlmalloc = dlmalloc::GlobalDlmalloc;

use clap::{Parser, Subcommand};
use std::io::Write;
use std::process::ExitCode;

#[derive(Parser)]
#[command(
    name = "popdecode",
    version,
    about = "Decode task conditions from neural population activity"
)]
struct Cli {
    #[command(subcommand)]
    command: Command,
}

#[derive(Subcommand)]
enum Command {
    /// Cross-validated decoding with repeats, class balancing and a label-shuffle control.
    Decode(decode::DecodeArgs),
    /// Decoding at every time window, with cluster-corrected significance and temporal generalization.
    Timecourse(Box<timecourse::TimecourseArgs>),
    /// What each neuron contributes: neuron-dropping curve, each neuron alone, weights and activation patterns.
    Neurons(neurons::NeuronsArgs),
    /// Planning the next recording: accuracy and power against trials per class, neurons and added noise neurons.
    Power(Box<power::PowerArgs>),
    /// What an NWB file holds: units, spikes, trials and the trials table's columns.
    Inspect(inspect::InspectArgs),
    /// Cross-validated predictions on fold numbers you supply in a column (no balancing, no repeats).
    Predict(predict::PredictArgs),
    /// Join the part files of a run split with --part K/N into the result a single run writes.
    Combine(combine::CombineArgs),
    /// Many sessions and animals: each session decoded, then group statistics (or one pooled pseudo-population).
    Study(Box<study::StudyArgs>),
}

fn main() -> ExitCode {
    popdecode::memory::keep_freed_memory();
    let cli = Cli::parse();
    let result = match cli.command {
        Command::Decode(args) => decode::run(args),
        Command::Timecourse(args) => timecourse::run(*args),
        Command::Neurons(args) => neurons::run(args),
        Command::Power(args) => power::run(*args),
        Command::Inspect(args) => inspect::run(args),
        Command::Predict(args) => predict::run(args),
        Command::Combine(args) => combine::run(args),
        Command::Study(args) => study::run(*args),
    };
    match result {
        Ok(()) => ExitCode::SUCCESS,
        Err(message) => {
            // Not eprintln!, which panics when the standard error is closed too.
            let _ = writeln!(std::io::stderr(), "popdecode: error: {message}");
            ExitCode::from(2)
        }
    }
}
