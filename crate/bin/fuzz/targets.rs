//! What the fuzzer feeds and how: the library's entry points, called as the faces call them, on one input of one
//! kind, with a tiny recipe chosen from the input's own hash (so that replaying a saved input repeats the run).
//!
//! | kind | input | entry points |
//! | --- | --- | --- |
//! | `table` | a trial table | `input::trial_table`, `Plan::new`, a repeat and a shuffle, `finish` |
//! | `binned` | a binned table | `input::time_course` (binned), `TimePlan::new`, tasks, `finish` |
//! | `events` | spike events, [`SEPARATOR`], a trial table | `input::time_course` (events), `TimePlan::new`, ... |
//! | `nwb` | an NWB file or its extract | `extract::read_nwb`, `extract::read_any`, `summary`, `input::time_course` (NWB), `TimePlan::new`, ... |
//!
//! A library error is a good outcome (the message a user would read); a panic, a hang or an allocation beyond the
//! budget is a failure.

use hdf5_pure::{FileBuilder, ReadSeekSource};
use popdecode::analyses::time_course::TimePlan;
use popdecode::analyses::trial_table::Plan;
use popdecode::analyses::Analysis;
use popdecode::input::{self, extract, FileBytes};
use popdecode::recipe::{Classifier, Folds, Recipe, TimeInput, TimeSettings, UnitFilter};
use std::io::Cursor;
use std::path::Path;

/// The kinds of input the fuzzer mutates.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub enum Kind {
    Table,
    Binned,
    Events,
    Nwb,
}

impl Kind {
    pub const ALL: [Kind; 4] = [Kind::Table, Kind::Binned, Kind::Events, Kind::Nwb];

    /// The name on the command line and of the folder its regressions live in.
    pub fn name(self) -> &'static str {
        match self {
            Kind::Table => "table",
            Kind::Binned => "binned",
            Kind::Events => "events",
            Kind::Nwb => "nwb",
        }
    }

    pub fn from_name(name: &str) -> Option<Kind> {
        Kind::ALL.into_iter().find(|k| k.name() == name)
    }

    pub fn extension(self) -> &'static str {
        match self {
            Kind::Nwb => "nwb",
            _ => "csv",
        }
    }

    /// Text kinds get text mutations (numbers, delimiters, lines); NWB gets binary ones.
    pub fn is_text(self) -> bool {
        self != Kind::Nwb
    }
}

/// Separates the spike events from the trial table in one `events` input.
pub const SEPARATOR: &[u8] = b"\n--popdecode-fuzz: the trial table follows--\n";

/// Choices drawn from the input's hash (FNV-1a, then SplitMix64 steps).
struct Choices(u64);

impl Choices {
    fn of(input: &[u8]) -> Choices {
        let mut h = 0xcbf2_9ce4_8422_2325u64;
        for &b in input {
            h = (h ^ b as u64).wrapping_mul(0x0100_0000_01b3);
        }
        Choices(h)
    }

    fn next(&mut self) -> u64 {
        self.0 = self.0.wrapping_add(0x9e37_79b9_7f4a_7c15);
        let mut z = self.0;
        z = (z ^ (z >> 30)).wrapping_mul(0xbf58_476d_1ce4_e5b9);
        z = (z ^ (z >> 27)).wrapping_mul(0x94d0_49bb_1331_11eb);
        z ^ (z >> 31)
    }

    fn pick<T: Copy>(&mut self, options: &[T]) -> T {
        options[(self.next() % options.len() as u64) as usize]
    }

    /// True once in `n`.
    fn one_in(&mut self, n: u64) -> bool {
        self.next().is_multiple_of(n)
    }
}

/// A tiny protocol (one repeat, one shuffle of one repeat) with a decoder, folds and balancing chosen by `c`.
/// Leave-one-out and tuning, which multiply the fits by the trials or the grid, only for inputs of a few kB: the
/// watchdog looks for endless loops, and a kernel SVM left out one of 600 trials at a time is merely slow.
fn recipe(label: &str, c: &mut Choices, small: bool) -> Recipe {
    let mut r = Recipe::new(label);
    r.classifier = c.pick(&Classifier::ALL);
    r.repeats = 1;
    r.shuffles = 1;
    r.shuffle_repeats = Some(1);
    r.folds = if small && c.one_in(4) {
        Folds::LeaveOneOut
    } else {
        c.pick(&[Folds::K(2), Folds::K(3)])
    };
    r.balance = !c.one_in(4);
    r.tune = small && r.classifier.grid().is_some() && c.one_in(8);
    r.seed = c.next() % 1000;
    r
}

/// Every task of a plan, each outcome carried through JSON as the page's workers carry it, then the result.
fn analyse<A: Analysis>(plan: &A) {
    let _ = plan.overview();
    let outcomes: Vec<A::Outcome> = plan
        .tasks()
        .into_iter()
        .map(|t| {
            let json = serde_json::to_string(&plan.run(t)).expect("an outcome serialises");
            serde_json::from_str(&json).expect("an outcome reads back")
        })
        .collect();
    let _ = plan.finish(&outcomes);
}

/// The recipe an input runs with, chosen from its hash: with time settings for the time-resolved kinds.
pub fn recipe_for(kind: Kind, input: &[u8]) -> Recipe {
    let mut c = Choices::of(input);
    let mut r = recipe("odour", &mut c, input.len() < 8 << 10);
    match kind {
        Kind::Table => {
            r.columns.group = c
                .pick(&[None, Some("session"), Some("block")])
                .map(str::to_string);
            r.columns.drop_missing = c.one_in(4);
            if c.one_in(8) {
                r.columns.group = None;
                r.columns.pseudo = Some("session".into());
            }
        }
        Kind::Binned => {
            r.columns.group = c.pick(&[None, Some("session")]).map(str::to_string);
            let mut t = TimeSettings::binned("trial", "time");
            t.generalize = c.one_in(4);
            r.time = Some(t);
        }
        Kind::Events => {
            r.columns.group = c.pick(&[None, Some("session")]).map(str::to_string);
            let mut t = windows(&mut c, TimeSettings::events(-0.5, 1.0));
            t.generalize = c.one_in(4);
            r.time = Some(t);
        }
        Kind::Nwb => {
            let mut t = windows(&mut c, TimeSettings::nwb(-0.5, 1.0));
            if let TimeInput::Nwb { units, align, .. } = &mut t.input {
                if c.one_in(4) {
                    units.push(UnitFilter::parse("quality=good").expect("a valid filter"));
                }
                if c.one_in(8) {
                    *align = Some("stop_time".into());
                }
            }
            t.generalize = c.one_in(4);
            r.time = Some(t);
        }
    }
    r
}

/// Run one input through its kind's entry points. `Err` is the library's message for bad input.
pub fn run(kind: Kind, input: &[u8]) -> Result<(), String> {
    let r = recipe_for(kind, input);
    let e = |e: popdecode::Error| e.to_string();
    let time = |files: &[FileBytes]| {
        let settings = r.time.as_ref().expect("time settings for a time course");
        let data = input::time_course(files, &r.columns, &settings.input).map_err(e)?;
        analyse(&TimePlan::new(data, &r).map_err(e)?);
        Ok(())
    };
    match kind {
        Kind::Table => {
            let data = input::trial_table("fuzz.csv", input, &r.columns).map_err(e)?;
            analyse(&Plan::new(data, &r).map_err(e)?);
            Ok(())
        }
        Kind::Binned => time(&[FileBytes {
            name: "fuzz.csv",
            bytes: input,
        }]),
        Kind::Events => {
            let (events, trials) = match find(input, SEPARATOR) {
                Some(at) => (&input[..at], &input[at + SEPARATOR.len()..]),
                None => (input, &[][..]),
            };
            time(&[
                FileBytes {
                    name: "events.csv",
                    bytes: events,
                },
                FileBytes {
                    name: "trials.csv",
                    bytes: trials,
                },
            ])
        }
        Kind::Nwb => {
            let extract_bytes = nwb_extract(input)?;
            time(&[FileBytes {
                name: "fuzz.nwb",
                bytes: &extract_bytes,
            }])
        }
    }
}

/// Window settings chosen by `c` (at most 30 windows).
fn windows(c: &mut Choices, mut t: TimeSettings) -> TimeSettings {
    if let TimeInput::Events {
        width,
        step,
        start,
        end,
        ..
    }
    | TimeInput::Nwb {
        width,
        step,
        start,
        end,
        ..
    } = &mut t.input
    {
        *start = c.pick(&[-0.5, -1.0, 0.0]);
        *end = c.pick(&[1.0, 0.5]);
        *width = c.pick(&[0.1, 0.2, 0.05]);
        *step = c.pick(&[0.1, 0.2, 0.05]);
    }
    t
}

/// The extract of an NWB input, as the faces make it (`read_nwb`, from a random-access source), or the input
/// itself when it is an extract; with the summary the page and `popdecode inspect` show.
fn nwb_extract(input: &[u8]) -> Result<Vec<u8>, String> {
    let e = |e: popdecode::Error| e.to_string();
    let bytes = if extract::is_extract(input) {
        input.to_vec()
    } else {
        extract::read_nwb("fuzz.nwb", source(input)).map_err(e)?
    };
    let (rec, _) = extract::read_any("fuzz.nwb", &bytes).map_err(e)?;
    let _ = rec.summary();
    Ok(bytes)
}

/// Bytes as a random-access source, as the CLI reads a file on disk.
fn source(bytes: &[u8]) -> ReadSeekSource<Cursor<Vec<u8>>> {
    ReadSeekSource::new(Cursor::new(bytes.to_vec())).expect("a cursor can be measured")
}

fn find(haystack: &[u8], needle: &[u8]) -> Option<usize> {
    haystack.windows(needle.len()).position(|w| w == needle)
}

/// The inputs mutation starts from: the samples (the spike events cut to their first 3000 lines, so that a run
/// tries many inputs), and for NWB a minimal file in the NWB layout, the pynwb-written files in `nwb_dir`
/// (scripts/fuzz.sh writes them with the reference venv) and the extract of each.
pub fn seeds(kind: Kind, nwb_dir: Option<&Path>) -> Vec<Vec<u8>> {
    match kind {
        Kind::Table => vec![
            include_bytes!("../../../samples/odours.csv").to_vec(),
            include_bytes!("../../../samples/odours_blocked.csv").to_vec(),
        ],
        Kind::Binned => vec![include_bytes!("../../../samples/odours_binned.csv").to_vec()],
        Kind::Events => {
            let spikes = include_bytes!("../../../samples/odour_spikes.csv");
            let cut = spikes
                .iter()
                .enumerate()
                .filter(|(_, &b)| b == b'\n')
                .nth(3000)
                .map_or(spikes.len(), |(i, _)| i + 1);
            let mut input = spikes[..cut].to_vec();
            input.extend_from_slice(SEPARATOR);
            input.extend_from_slice(include_bytes!("../../../samples/odour_trials.csv"));
            vec![input]
        }
        Kind::Nwb => {
            let mut files = vec![minimal_nwb()];
            if let Some(dir) = nwb_dir {
                let mut paths: Vec<_> = std::fs::read_dir(dir)
                    .into_iter()
                    .flatten()
                    .flatten()
                    .map(|e| e.path())
                    .filter(|p| p.extension().is_some_and(|x| x == "nwb"))
                    .collect();
                paths.sort();
                files.extend(paths.iter().filter_map(|p| std::fs::read(p).ok()));
            }
            let extracts: Vec<Vec<u8>> = files
                .iter()
                .filter_map(|f| extract::read_nwb("seed.nwb", source(f)).ok())
                .collect();
            files.extend(extracts);
            files
        }
    }
}

/// Twelve trials of two odours, two units, a units column to keep units by: the NWB layout in a few kB.
fn minimal_nwb() -> Vec<u8> {
    let mut b = FileBuilder::new();
    let mut units = b.create_group("units");
    let times: Vec<f64> = (0..48).map(|i| i as f64 * 0.25 + 0.05).collect();
    units.create_dataset("spike_times").with_f64_data(&times);
    units
        .create_dataset("spike_times_index")
        .with_i64_data(&[20, 48]);
    units.create_dataset("id").with_i64_data(&[3, 8]);
    units
        .create_dataset("quality")
        .with_vlen_strings(&["good", "mua"]);
    b.add_group(units.finish());
    let mut intervals = b.create_group("intervals");
    let mut trials = intervals.create_group("trials");
    let starts: Vec<f64> = (0..12).map(|i| i as f64).collect();
    let stops: Vec<f64> = starts.iter().map(|s| s + 0.9).collect();
    trials.create_dataset("start_time").with_f64_data(&starts);
    trials.create_dataset("stop_time").with_f64_data(&stops);
    let odours: Vec<&str> = (0..12).map(|i| ["citral", "eugenol"][i % 2]).collect();
    trials.create_dataset("odour").with_vlen_strings(&odours);
    intervals.add_group(trials.finish());
    b.add_group(intervals.finish());
    b.finish().expect("a minimal NWB layout")
}
