//! Who the trials are, without their activity: what resampling and the design checks read.

/// Who the trials are, without their activity: all that resampling and the design checks need.
#[derive(Debug, Clone, Copy)]
pub struct Trials<'a> {
    pub source: &'a str,
    pub y: &'a [usize],
    pub classes: &'a [String],
    pub groups: Option<&'a [usize]>,
    pub group_names: &'a [String],
    pub group_column: Option<&'a str>,
    /// The groups are recording sessions whose neurons are combined into pseudo-trials.
    pub pseudo: bool,
}

impl Trials<'_> {
    pub fn class_counts(&self) -> Vec<usize> {
        let mut counts = vec![0; self.classes.len()];
        for &c in self.y {
            counts[c] += 1;
        }
        counts
    }
}
