//! The rule for keeping an NWB recording's units by a column of its units table: `quality = good`, `snr >= 3`,
//! `location = piriform,olfactory tubercle`.
//!
//! Spike sorters label units (well isolated or multi-unit activity) and record quality measures; an analysis often
//! keeps only some. The filter is part of the recipe, so the same units are kept on every face and on a re-run, and
//! the methods paragraph says which were kept. The rule is applied to a recording by `input::units`.

use crate::error::{Error, Result};
use serde::{Deserialize, Serialize};
use std::fmt;

/// Keep the units whose value in `column` passes `op`: for `=` and `!=`, against any of `values`; for the
/// comparisons, against the one number in `values`. Several filters keep the units that pass all of them.
#[derive(Debug, Clone, PartialEq, Serialize, Deserialize)]
pub struct UnitFilter {
    pub column: String,
    pub op: Op,
    pub values: Vec<String>,
}

#[derive(Debug, Clone, Copy, PartialEq, Eq, Serialize, Deserialize)]
pub enum Op {
    #[serde(rename = "=")]
    Is,
    #[serde(rename = "!=")]
    IsNot,
    #[serde(rename = ">=")]
    AtLeast,
    #[serde(rename = "<=")]
    AtMost,
    #[serde(rename = ">")]
    Above,
    #[serde(rename = "<")]
    Below,
}

impl Op {
    /// Longest spellings first, so that `>=` is not read as `>`.
    const SPELLINGS: [(&'static str, Op); 6] = [
        ("!=", Op::IsNot),
        (">=", Op::AtLeast),
        ("<=", Op::AtMost),
        ("=", Op::Is),
        (">", Op::Above),
        ("<", Op::Below),
    ];

    fn spelling(self) -> &'static str {
        Op::SPELLINGS
            .iter()
            .find(|(_, op)| *op == self)
            .map(|(s, _)| *s)
            .expect("every op has a spelling")
    }

    pub fn compares(self) -> bool {
        !matches!(self, Op::Is | Op::IsNot)
    }
}

impl UnitFilter {
    /// Read `COLUMN=VALUE[,VALUE...]`, `COLUMN!=VALUE[,...]` or `COLUMN>=NUMBER` (also `<=`, `>`, `<`), as given
    /// on the command line.
    pub fn parse(text: &str) -> Result<UnitFilter> {
        let refuse = || {
            Error::Recipe(format!(
                "'{text}' is not a unit filter; write COLUMN=VALUE (several values separated by commas), \
                 COLUMN!=VALUE, or COLUMN>=NUMBER (also <=, >, <), e.g. quality=good"
            ))
        };
        let at = text.find(['=', '!', '<', '>']).ok_or_else(refuse)?;
        let rest = &text[at..];
        let (spelling, op) = Op::SPELLINGS
            .iter()
            .find(|(s, _)| rest.starts_with(s))
            .copied()
            .ok_or_else(refuse)?;
        // "quality==good" (found by a hostile review) read as the value "=good" and came back as "quality = =good".
        if rest[spelling.len()..]
            .trim_start()
            .starts_with(['=', '!', '<', '>'])
        {
            return Err(Error::Recipe(format!(
                "'{text}' is not a unit filter: it has one operator too many; write COLUMN=VALUE with a single '=', \
                 COLUMN!=VALUE, or COLUMN>=NUMBER (also <=, >, <), e.g. quality=good"
            )));
        }
        let filter = UnitFilter {
            column: text[..at].trim().to_string(),
            op,
            values: rest[spelling.len()..]
                .split(',')
                .map(|v| v.trim().to_string())
                .collect(),
        };
        filter.validate()?;
        Ok(filter)
    }

    pub fn validate(&self) -> Result<()> {
        if self.column.is_empty() {
            return Err(Error::Recipe(format!(
                "the unit filter '{self}' names no units column"
            )));
        }
        if self.values.is_empty() || self.values.iter().any(String::is_empty) {
            return Err(Error::Recipe(format!(
                "the unit filter '{self}' has an empty value"
            )));
        }
        if self.op.compares() && (self.values.len() != 1 || self.number().is_none()) {
            return Err(Error::Recipe(format!(
                "the unit filter '{self}' compares, so it needs one number after {}",
                self.op.spelling()
            )));
        }
        Ok(())
    }

    fn number(&self) -> Option<f64> {
        self.values[0].parse::<f64>().ok().filter(|v| !v.is_nan())
    }

    /// Whether a unit whose value is `text` (and `number`, in a numeric column) passes. A missing number (NaN)
    /// passes no comparison and equals nothing.
    pub fn keeps(&self, text: &str, number: Option<f64>) -> bool {
        let equal = |v: &String| match number {
            Some(x) => v.parse::<f64>().is_ok_and(|w| w == x),
            None => v == text,
        };
        match self.op {
            Op::Is => self.values.iter().any(equal),
            Op::IsNot => !self.values.iter().any(equal),
            op => {
                let (Some(x), Some(limit)) = (number.filter(|x| !x.is_nan()), self.number()) else {
                    return false;
                };
                match op {
                    Op::AtLeast => x >= limit,
                    Op::AtMost => x <= limit,
                    Op::Above => x > limit,
                    _ => x < limit,
                }
            }
        }
    }
}

impl fmt::Display for UnitFilter {
    fn fmt(&self, f: &mut fmt::Formatter<'_>) -> fmt::Result {
        write!(
            f,
            "{} {} {}",
            self.column,
            self.op.spelling(),
            self.values.join(",")
        )
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn a_doubled_operator_is_refused() {
        for text in ["quality==good", "snr>==2", "quality=!good"] {
            let e = UnitFilter::parse(text).unwrap_err().to_string();
            assert!(e.contains("one operator too many"), "{text}: {e}");
        }
        assert_eq!(
            UnitFilter::parse("quality!=noise").unwrap().values,
            vec!["noise"]
        );
    }

    #[test]
    fn round_trips_through_json() {
        let f = UnitFilter::parse("snr>=2.5").unwrap();
        let json = serde_json::to_string(&f).unwrap();
        assert_eq!(json, r#"{"column":"snr","op":">=","values":["2.5"]}"#);
        assert_eq!(serde_json::from_str::<UnitFilter>(&json).unwrap(), f);
    }
}
