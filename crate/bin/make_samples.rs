//! Writes the invented demo tables in `samples/`: `cargo run --release --example make-samples`.

use popdecode::simulate::{binned, csv, spike_events, Scenario, TimeScenario};

fn main() -> std::io::Result<()> {
    let dir = std::path::Path::new(env!("CARGO_MANIFEST_DIR")).join("samples");
    std::fs::create_dir_all(&dir)?;
    std::fs::write(dir.join("odours.csv"), csv(&Scenario::odours()))?;
    let blocked = Scenario {
        blocks_per_class: 3,
        block_offset: 0.25,
        tuning: 0.2,
        seed: 2027,
        ..Scenario::odours()
    };
    std::fs::write(dir.join("odours_blocked.csv"), csv(&blocked))?;
    let timed = spike_events(&TimeScenario::odours());
    std::fs::write(dir.join("odour_spikes.csv"), timed.events)?;
    std::fs::write(dir.join("odour_trials.csv"), timed.trials)?;
    std::fs::write(
        dir.join("odours_binned.csv"),
        binned(&TimeScenario::odours(), 0.1),
    )?;
    println!("wrote {}", dir.display());
    Ok(())
}
