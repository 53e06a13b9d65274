//! Mutations: a seed input changed in one to eight places, the way a damaged file, a careless export or an
//! attacker would change it. Text kinds get number, delimiter, quote and line edits; NWB gets bit flips and
//! overwritten integers (sizes, counts, addresses), biased towards the start of the file where HDF5 keeps most of
//! its structure.

/// SplitMix64: a small generator, seeded per input from (run seed, kind, input number).
pub struct Rng(u64);

impl Rng {
    pub fn new(seed: u64, kind: u64, index: u64) -> Rng {
        let mut r = Rng(seed ^ kind.wrapping_mul(0xa076_1d64_78bd_642f));
        r.0 ^= r
            .next()
            .wrapping_add(index.wrapping_mul(0xe703_7ed1_a0b4_28db));
        r
    }

    pub fn next(&mut self) -> u64 {
        self.0 = self.0.wrapping_add(0x9e37_79b9_7f4a_7c15);
        let mut z = self.0;
        z = (z ^ (z >> 30)).wrapping_mul(0xbf58_476d_1ce4_e5b9);
        z = (z ^ (z >> 27)).wrapping_mul(0x94d0_49bb_1331_11eb);
        z ^ (z >> 31)
    }

    /// Uniform in 0..n (n > 0).
    pub fn below(&mut self, n: usize) -> usize {
        (self.next() % n as u64) as usize
    }

    fn pick<'a, T>(&mut self, options: &'a [T]) -> &'a T {
        &options[self.below(options.len())]
    }

    /// A position in `0..len`, biased towards the start when `early` (the cube of a uniform fraction).
    fn position(&mut self, len: usize, early: bool) -> usize {
        if len == 0 {
            return 0;
        }
        if early {
            let u = (self.next() >> 11) as f64 / (1u64 << 53) as f64;
            ((u * u * u) * len as f64) as usize
        } else {
            self.below(len)
        }
    }
}

/// Text that breaks parsers and numbers that break arithmetic.
const TOKENS: &[&str] = &[
    "1e308",
    "-1e308",
    "1e200",
    "-1e200",
    "1e100",
    "1.0000001e100",
    "1e-320",
    "-0",
    "0",
    "NaN",
    "inf",
    "-inf",
    "NA",
    "",
    " ",
    "\"",
    "\"\"",
    "a\"b",
    ",",
    ";",
    "\t",
    "\n",
    "\r\n",
    "\r",
    ",,,,",
    "\u{feff}",
    "é",
    "\u{0}",
    "<b>x</b>",
    "18446744073709551616",
    "9223372036854775807",
    "-1",
    "4294967296",
    "1,5",
    "0x10",
    "1e",
    "e5",
    ".",
    "-",
    "99999999999999999999999999999",
    "0.000000001",
    "1e-9",
    "3e-5",
    "trial",
    "odour",
    "session",
    "time",
    "neuron",
];

/// Integers that are sizes, counts and addresses at their edges.
const INTEGERS: &[u64] = &[
    0,
    1,
    2,
    7,
    8,
    0x7f,
    0x80,
    0xff,
    0x100,
    0x7fff,
    0xffff,
    0x1_0000,
    0x7fff_ffff,
    0x8000_0000,
    0xffff_ffff,
    0x1_0000_0000,
    1 << 27,
    1 << 40,
    0x7fff_ffff_ffff_ffff,
    0x8000_0000_0000_0000,
    u64::MAX,
    u64::MAX - 1,
];

/// One mutated input from the seeds, at most `max_len` bytes.
pub fn mutate(rng: &mut Rng, seeds: &[Vec<u8>], text: bool, max_len: usize) -> Vec<u8> {
    let mut data = rng.pick(seeds).clone();
    let edits = 1 + rng.below(8);
    for _ in 0..edits {
        if text {
            text_edit(rng, &mut data, seeds);
        } else {
            binary_edit(rng, &mut data, seeds);
        }
    }
    data.truncate(max_len);
    data
}

fn text_edit(rng: &mut Rng, data: &mut Vec<u8>, seeds: &[Vec<u8>]) {
    let len = data.len();
    match rng.below(11) {
        0 => {
            // Replace a run of number characters with a token.
            let at = rng.position(len, false);
            let is_num = |b: u8| b.is_ascii_digit() || b == b'.' || b == b'-' || b == b'e';
            let start = (0..=at.min(len))
                .rev()
                .find(|&i| i == 0 || !is_num(data[i - 1]))
                .unwrap_or(0);
            let end = (start..len).find(|&i| !is_num(data[i])).unwrap_or(len);
            let token = rng.pick(TOKENS).as_bytes().to_vec();
            data.splice(start..end, token);
        }
        1 => {
            let at = rng.position(len, false);
            let token = rng.pick(TOKENS).as_bytes().to_vec();
            data.splice(at..at, token);
        }
        2 => {
            // Delete a short range.
            let at = rng.position(len, false);
            let n = (1 + rng.below(64)).min(len - at.min(len));
            data.drain(at..at + n);
        }
        3 | 4 => line_edit(rng, data),
        5 => {
            if let Some(b) = data.get_mut(rng.position(len, false)) {
                *b ^= 1 << rng.below(8);
            }
        }
        6 => {
            // Splice: this input's start with another seed's end.
            let other = rng.pick(seeds);
            let cut = rng.position(len, false);
            let from = rng.position(other.len(), false);
            data.truncate(cut);
            data.extend_from_slice(&other[from..]);
        }
        7 => data.truncate(rng.position(len, false)),
        8 => {
            // Many copies of one line: many trials, neurons or bins from a few bytes.
            if let Some(line) = lines(data)
                .get(rng.below(lines(data).len().max(1)))
                .cloned()
            {
                let copies = 1 + rng.below(2000);
                let at = line.end;
                let piece = data[line].to_vec();
                let mut inserted = Vec::with_capacity(piece.len() * copies);
                for _ in 0..copies {
                    inserted.extend_from_slice(&piece);
                }
                data.splice(at..at, inserted);
            }
        }
        9 => {
            // A numeric cell of one line renumbered (distinct trials, neurons, times).
            let all = lines(data);
            if !all.is_empty() {
                let line = all[rng.below(all.len())].clone();
                let n = rng.next() % 100_000;
                let text = format!("{n}");
                let at = line.start + rng.below(line.len().max(1)).min(line.len());
                data.splice(at..at, text.into_bytes());
            }
        }
        _ => {
            if let Some(b) = data.get_mut(rng.position(len, false)) {
                *b = *rng.pick(b",;\t\n\r\"0123456789.-eE ");
            }
        }
    }
}

/// Byte ranges of the lines (with their line ends).
fn lines(data: &[u8]) -> Vec<std::ops::Range<usize>> {
    let mut out = Vec::new();
    let mut start = 0;
    for (i, &b) in data.iter().enumerate() {
        if b == b'\n' {
            out.push(start..i + 1);
            start = i + 1;
        }
    }
    if start < data.len() {
        out.push(start..data.len());
    }
    out
}

fn line_edit(rng: &mut Rng, data: &mut Vec<u8>) {
    let all = lines(data);
    if all.len() < 2 {
        return;
    }
    let a = all[rng.below(all.len())].clone();
    match rng.below(3) {
        0 => {
            data.drain(a);
        }
        1 => {
            let piece = data[a.clone()].to_vec();
            let b = all[rng.below(all.len())].start;
            data.splice(b..b, piece);
        }
        _ => {
            // Keep only the first cells of a line (a ragged row).
            let line = &data[a.clone()];
            if let Some(cut) = line
                .iter()
                .position(|&b| b == b',' || b == b';' || b == b'\t')
            {
                data.drain(a.start + cut..a.end.saturating_sub(1).max(a.start + cut));
            }
        }
    }
}

fn binary_edit(rng: &mut Rng, data: &mut Vec<u8>, seeds: &[Vec<u8>]) {
    let len = data.len();
    if len == 0 {
        data.extend_from_slice(rng.pick(seeds).as_slice());
        return;
    }
    let early = rng.below(4) != 0;
    match rng.below(8) {
        0..=2 => {
            // An integer of 1, 2, 4 or 8 bytes, aligned, overwritten with an edge value (or that value ± 1).
            let width = *rng.pick(&[1usize, 2, 4, 8]);
            let at = rng.position(len, early) / width * width;
            let v = rng
                .pick(INTEGERS)
                .wrapping_add(rng.below(3) as u64)
                .wrapping_sub(1);
            let bytes = v.to_le_bytes();
            for (i, b) in bytes[..width].iter().enumerate() {
                if let Some(d) = data.get_mut(at + i) {
                    *d = *b;
                }
            }
        }
        3 | 4 => {
            let at = rng.position(len, early);
            data[at] ^= 1 << rng.below(8);
        }
        5 => {
            // A random byte.
            let at = rng.position(len, early);
            data[at] = rng.next() as u8;
        }
        6 => {
            // A block copied over another (a misplaced write).
            let n = 1 + rng.below(256);
            let from = rng.position(len, false);
            let to = rng.position(len, early);
            let piece: Vec<u8> = data[from..(from + n).min(len)].to_vec();
            for (i, b) in piece.into_iter().enumerate() {
                if let Some(d) = data.get_mut(to + i) {
                    *d = b;
                }
            }
        }
        _ => data.truncate(rng.position(len, false).max(8)),
    }
}
