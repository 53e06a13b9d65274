//! Writes the invented demo tables in `samples/`: `cargo run --release --example make-samples`.

use popdecode::simulate::{
    binned, context_binned, context_csv, csv, motion_binned, motion_csv, spike_events, study,
    ContextScenario, MotionScenario, Scenario, StudyScenario, TimeScenario,
};

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
    // A study of ten sessions from four mice, as trial tables and as binned tables over time.
    let studies = dir.join("study");
    std::fs::create_dir_all(&studies)?;
    for (table, scenario) in [
        ("study.csv", StudyScenario::mice()),
        ("study_time.csv", StudyScenario::mice_over_time()),
    ] {
        let files = study(&scenario);
        std::fs::write(studies.join(table), files.table)?;
        for (name, text) in files.files {
            std::fs::write(studies.join(name), text)?;
        }
    }
    let choices = ContextScenario::choices();
    std::fs::write(dir.join("choices.csv"), context_csv(&choices))?;
    let over_time = ContextScenario {
        trials_per_cell: 30,
        units: 24,
        choice_gain: 8.0,
        seed: 2030,
        ..choices
    };
    std::fs::write(
        dir.join("choices_binned.csv"),
        context_binned(&over_time, -0.4, 1.0, 0.1, (0.2, 0.6)),
    )?;
    let running = MotionScenario::running();
    std::fs::write(dir.join("running.csv"), motion_csv(&running))?;
    let running_over_time = MotionScenario {
        trials: 150,
        units: 16,
        ..running
    };
    std::fs::write(
        dir.join("running_binned.csv"),
        motion_binned(&running_over_time, -0.4, 1.0, 0.1, (0.2, 0.6)),
    )?;
    println!("wrote {}", dir.display());
    Ok(())
}
