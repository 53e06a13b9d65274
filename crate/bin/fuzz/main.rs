//! popdecode-fuzz: a seeded mutation fuzzer of the library's readers and plans, on the stable toolchain.
//!
//! ```text
//! popdecode-fuzz [--kinds table,binned,events,nwb] [--seconds N] [--seed S] [--nwb-seeds DIR]
//!                [--regressions DIR] [--hang-seconds N]
//! ```
//!
//! For each kind, a worker process (this binary, `worker ...`) mutates the seeds ([`targets::seeds`]) and runs each
//! input through the library's entry points ([`targets::run`]) under `catch_unwind`, with a per-input memory
//! budget enforced by a counting allocator ([`alloc`]). Before each input it writes the input to a file and its
//! number to the supervisor. The supervisor (this process) is the watchdog: a worker silent for `--hang-seconds`
//! is killed, and its input is a hang when, run again alone (`replay`), it is still running after that long (else
//! the machine paused, and the fuzzing goes on); a worker that dies is an abort (an allocation beyond the budget, a
//! stack overflow); either way the input it was running is kept. Panics are kept by the worker itself. Every kept input goes to
//! `<regressions>/<kind>/<sha256 prefix>.<ext>`, where `tests/fuzz_regressions.rs` replays it forever after.
//! The exit code is 1 when anything was kept.

mod alloc;
mod mutate;
mod targets;

use std::io::{BufRead, BufReader, Write};
use std::path::{Path, PathBuf};
use std::process::{Child, Command, ExitCode, Stdio};
use std::sync::mpsc;
use std::time::{Duration, Instant};
use targets::Kind;

#[global_allocator]
static ALLOC: alloc::Counting = alloc::Counting;

/// Largest mutated text input: large enough for many repeated lines, small enough for many inputs a second.
const MAX_TEXT: usize = 512 << 10;

struct Options {
    kinds: Vec<Kind>,
    seconds: f64,
    seed: u64,
    nwb_seeds: Option<PathBuf>,
    regressions: PathBuf,
    hang_seconds: f64,
}

fn main() -> ExitCode {
    let args: Vec<String> = std::env::args().skip(1).collect();
    match args.first().map(String::as_str) {
        Some("worker") => return worker(&args[1..]),
        Some("replay") => return replay(&args[1..]),
        _ => {}
    }
    match parse(&args) {
        Ok(o) => supervise(&o),
        Err(e) => {
            eprintln!("popdecode-fuzz: {e}");
            ExitCode::from(2)
        }
    }
}

fn parse(args: &[String]) -> Result<Options, String> {
    let mut o = Options {
        kinds: Kind::ALL.to_vec(),
        seconds: 60.0,
        seed: std::time::SystemTime::now()
            .duration_since(std::time::UNIX_EPOCH)
            .map_or(1, |d| d.as_secs()),
        nwb_seeds: None,
        regressions: PathBuf::from("tests/fuzz-regressions"),
        hang_seconds: 10.0,
    };
    let mut it = args.iter();
    while let Some(flag) = it.next() {
        let mut value = || it.next().cloned().ok_or(format!("{flag} needs a value"));
        let number = |v: String| {
            v.parse::<f64>()
                .map_err(|_| format!("{flag}: not a number: {v}"))
        };
        match flag.as_str() {
            "--kinds" => {
                o.kinds = value()?
                    .split(',')
                    .map(|k| Kind::from_name(k).ok_or(format!("unknown kind '{k}'")))
                    .collect::<Result<_, _>>()?
            }
            "--seconds" => o.seconds = number(value()?)?,
            "--seed" => {
                o.seed = value()?
                    .parse()
                    .map_err(|_| "--seed: not a whole number".to_string())?
            }
            "--nwb-seeds" => o.nwb_seeds = Some(PathBuf::from(value()?)),
            "--regressions" => o.regressions = PathBuf::from(value()?),
            "--hang-seconds" => o.hang_seconds = number(value()?)?,
            _ => return Err(format!("unknown flag '{flag}'")),
        }
    }
    Ok(o)
}

/// Run every kind for its time, restarting the worker after each failure, and keep what failed.
fn supervise(o: &Options) -> ExitCode {
    let work = std::env::temp_dir().join(format!("popdecode-fuzz-{}", std::process::id()));
    if let Err(e) = std::fs::create_dir_all(&work) {
        eprintln!("popdecode-fuzz: cannot create {}: {e}", work.display());
        return ExitCode::from(2);
    }
    println!(
        "popdecode-fuzz: seed {} (rerun with --seed {0}), {} s per kind",
        o.seed, o.seconds
    );
    let mut kept = 0;
    for &kind in &o.kinds {
        let deadline = Instant::now() + Duration::from_secs_f64(o.seconds);
        let mut next = 0u64;
        let (mut inputs, mut failures) = (0u64, 0u64);
        while Instant::now() < deadline {
            let current = work.join(format!("current-{}", kind.name()));
            let mut child = match spawn(o, kind, next, deadline, &current) {
                Ok(c) => c,
                Err(e) => {
                    eprintln!("popdecode-fuzz: cannot start a worker: {e}");
                    return ExitCode::from(2);
                }
            };
            let (last, outcome) = watch(&mut child, o.hang_seconds);
            inputs += last.map_or(0, |l| l + 1 - next);
            match outcome {
                Outcome::Done => break,
                Outcome::Hang | Outcome::Died(_) => {
                    let what = match outcome {
                        Outcome::Hang => format!("no answer for {} s (a hang)", o.hang_seconds),
                        Outcome::Died(status) => format!("the worker died ({status})"),
                        Outcome::Done => unreachable!(),
                    };
                    // A silence can be the machine's, not the input's: twice on 2026-12-05 a worker said nothing
                    // for 10 s on inputs that replay in 0.00 s (once at the end of the suite's run, once beside a
                    // build). A hang is kept only when the input, run again on its own, is still running past the
                    // limit.
                    if matches!(outcome, Outcome::Hang)
                        && finishes_alone(kind, &current, o.hang_seconds)
                    {
                        println!(
                            "{}: input {}: no answer for {} s, but it finishes when run again alone: a pause of \
                             the machine, not kept",
                            kind.name(),
                            last.unwrap_or(next),
                            o.hang_seconds
                        );
                        next = last.map_or(next + 1, |l| l + 1);
                        continue;
                    }
                    failures += 1;
                    match std::fs::read(&current) {
                        Ok(input) => {
                            let path = keep(&o.regressions, kind, &input);
                            println!(
                                "{}: input {}: {what}; kept as {}",
                                kind.name(),
                                last.unwrap_or(next),
                                path
                            );
                        }
                        Err(_) => println!("{}: {what} before its first input", kind.name()),
                    }
                    next = last.map_or(next + 1, |l| l + 1);
                }
            }
        }
        // Panics were kept by the worker, which said so on its output (counted there).
        failures += PANICS.with(|p| std::mem::take(&mut *p.borrow_mut()));
        kept += failures;
        println!("{}: {inputs} inputs, {failures} failure(s)", kind.name());
    }
    let _ = std::fs::remove_dir_all(&work);
    if kept > 0 {
        println!(
            "popdecode-fuzz: {kept} failing input(s) kept under {}",
            o.regressions.display()
        );
        ExitCode::from(1)
    } else {
        ExitCode::SUCCESS
    }
}

/// Whether the input in `current` runs to its end (an answer or a message) within `seconds` in a process of its
/// own (`replay`); a process still running then is killed.
fn finishes_alone(kind: Kind, current: &Path, seconds: f64) -> bool {
    let Ok(exe) = std::env::current_exe() else {
        return false;
    };
    let Ok(mut child) = Command::new(exe)
        .args(["replay", kind.name()])
        .arg(current)
        .stdout(Stdio::null())
        .stderr(Stdio::null())
        .spawn()
    else {
        return false;
    };
    let end = Instant::now() + Duration::from_secs_f64(seconds);
    while Instant::now() < end {
        match child.try_wait() {
            Ok(Some(status)) => return status.success(),
            Ok(None) => std::thread::sleep(Duration::from_millis(20)),
            Err(_) => break,
        }
    }
    let _ = child.kill();
    let _ = child.wait();
    false
}

thread_local! {
    /// Panics the current kind's workers reported.
    static PANICS: std::cell::RefCell<u64> = const { std::cell::RefCell::new(0) };
}

enum Outcome {
    /// The worker reached the deadline.
    Done,
    Hang,
    Died(std::process::ExitStatus),
}

fn spawn(
    o: &Options,
    kind: Kind,
    from: u64,
    deadline: Instant,
    current: &Path,
) -> std::io::Result<Child> {
    let mut cmd = Command::new(std::env::current_exe()?);
    cmd.args(["worker", kind.name()])
        .arg(o.seed.to_string())
        .arg(from.to_string())
        .arg(
            deadline
                .saturating_duration_since(Instant::now())
                .as_secs_f64()
                .to_string(),
        )
        .arg(current)
        .arg(&o.regressions)
        .arg(o.nwb_seeds.as_deref().unwrap_or(Path::new("")))
        .stdout(Stdio::piped())
        .stderr(Stdio::null());
    cmd.spawn()
}

/// Read the worker's lines ("input N", "kept ...") until it ends or falls silent; the last input number it began.
fn watch(child: &mut Child, hang_seconds: f64) -> (Option<u64>, Outcome) {
    let stdout = child.stdout.take().expect("piped");
    let (tx, rx) = mpsc::channel();
    std::thread::spawn(move || {
        for line in BufReader::new(stdout).lines() {
            if tx.send(line.unwrap_or_default()).is_err() {
                break;
            }
        }
    });
    let mut last = None;
    loop {
        match rx.recv_timeout(Duration::from_secs_f64(hang_seconds)) {
            Ok(line) => {
                if let Some(n) = line.strip_prefix("input ") {
                    last = n.parse().ok();
                } else {
                    if line.contains(": panic") {
                        PANICS.with(|p| *p.borrow_mut() += 1);
                    }
                    println!("{line}");
                }
            }
            Err(mpsc::RecvTimeoutError::Timeout) => {
                let _ = child.kill();
                let _ = child.wait();
                return (last, Outcome::Hang);
            }
            Err(mpsc::RecvTimeoutError::Disconnected) => {
                let status = child.wait().expect("a started worker");
                return (
                    last,
                    if status.success() {
                        Outcome::Done
                    } else {
                        Outcome::Died(status)
                    },
                );
            }
        }
    }
}

/// Save a failing input under its kind, named by its content; the path as shown.
fn keep(dir: &Path, kind: Kind, input: &[u8]) -> String {
    use sha2::{Digest, Sha256};
    let hash: String = Sha256::digest(input)
        .iter()
        .take(8)
        .map(|b| format!("{b:02x}"))
        .collect();
    let folder = dir.join(kind.name());
    let path = folder.join(format!("{hash}.{}", kind.extension()));
    let saved = std::fs::create_dir_all(&folder).and_then(|()| std::fs::write(&path, input));
    match saved {
        Ok(()) => path.display().to_string(),
        Err(e) => format!("(not saved: {e})"),
    }
}

/// `replay KIND FILE...`: run kept inputs again (without the memory budget), saying what each did and how long it
/// took, with the recipe it was run with.
fn replay(args: &[String]) -> ExitCode {
    let Some(kind) = args.first().and_then(|k| Kind::from_name(k)) else {
        eprintln!("popdecode-fuzz replay KIND FILE...");
        return ExitCode::from(2);
    };
    for path in &args[1..] {
        let Ok(input) = std::fs::read(path) else {
            eprintln!("{path}: cannot read");
            return ExitCode::from(2);
        };
        println!(
            "{path}: recipe {}",
            targets::recipe_for(kind, &input)
                .to_json()
                .replace('\n', " ")
        );
        let start = Instant::now();
        let result = std::panic::catch_unwind(|| targets::run(kind, &input));
        println!(
            "{path}: {:?} after {:.2} s",
            result,
            start.elapsed().as_secs_f64()
        );
    }
    ExitCode::SUCCESS
}

/// `worker KIND SEED FROM SECONDS CURRENT REGRESSIONS NWB_SEEDS`: mutate and run inputs FROM, FROM + 1, ... until
/// the time is up.
fn worker(args: &[String]) -> ExitCode {
    let [kind, seed, from, seconds, current, regressions, nwb_seeds] = args else {
        return ExitCode::from(2);
    };
    let (Some(kind), Ok(seed), Ok(from), Ok(seconds)) = (
        Kind::from_name(kind),
        seed.parse::<u64>(),
        from.parse::<u64>(),
        seconds.parse::<f64>(),
    ) else {
        return ExitCode::from(2);
    };
    let deadline = Instant::now() + Duration::from_secs_f64(seconds.max(0.0));
    let nwb_dir = (!nwb_seeds.is_empty()).then(|| Path::new(nwb_seeds.as_str()));
    let seeds = targets::seeds(kind, nwb_dir);
    let max_len = if kind.is_text() {
        MAX_TEXT
    } else {
        seeds.iter().map(Vec::len).max().unwrap_or(0) + (64 << 10)
    };
    let message = std::sync::Arc::new(std::sync::Mutex::new(String::new()));
    let hook_message = message.clone();
    std::panic::set_hook(Box::new(move |info| {
        *hook_message.lock().unwrap_or_else(|e| e.into_inner()) = info.to_string();
    }));
    let mut out = std::io::stdout();
    let mut i = from;
    let (mut decoded, mut refused) = (0u64, 0u64);
    while Instant::now() < deadline {
        let mut rng = mutate::Rng::new(seed, kind as u64, i);
        let input = mutate::mutate(&mut rng, &seeds, kind.is_text(), max_len);
        if std::fs::write(current, &input).is_err()
            || writeln!(out, "input {i}")
                .and_then(|()| out.flush())
                .is_err()
        {
            return ExitCode::from(2);
        }
        let result = alloc::with_budget(alloc::budget(input.len()), || {
            std::panic::catch_unwind(|| targets::run(kind, &input))
        });
        match &result {
            Ok(Ok(())) => decoded += 1,
            Ok(Err(_)) => refused += 1,
            Err(_) => {}
        }
        if result.is_err() {
            let what = message
                .lock()
                .unwrap_or_else(|e| e.into_inner())
                .replace('\n', " ");
            let path = keep(Path::new(regressions), kind, &input);
            let _ = writeln!(
                out,
                "{}: input {i}: panic: {what}; kept as {path}",
                kind.name()
            );
        }
        i += 1;
    }
    let _ = writeln!(
        out,
        "{}: {decoded} inputs decoded, {refused} refused with a message",
        kind.name()
    );
    ExitCode::SUCCESS
}
