//! Keeping an NWB recording's units by a column of its units table (the rule is the recipe's
//! [`UnitFilter`]).

use super::nwb::{Column, Recording};
use crate::error::{Error, Result};
use crate::recipe::UnitFilter;

/// The recording with only the units that pass every filter, and a note saying how many were kept (none without
/// filters). Refuses a filter on a column the units table does not have, a comparison on a text column, and a
/// filter that keeps no unit.
pub fn keep_units(
    source: &str,
    rec: Recording,
    filters: &[UnitFilter],
) -> Result<(Recording, Option<String>)> {
    if filters.is_empty() {
        return Ok((rec, None));
    }
    let mut keep = vec![true; rec.units.len()];
    for filter in filters {
        let column = rec
            .unit_columns
            .iter()
            .find(|(n, _)| *n == filter.column)
            .map(|(_, c)| c)
            .ok_or_else(|| {
                let names: Vec<String> = rec
                    .unit_columns
                    .iter()
                    .map(|(n, _)| format!("'{n}'"))
                    .collect();
                Error::Input(format!(
                    "{source}: the units table has no column '{}' to keep units by; {}",
                    filter.column,
                    if names.is_empty() {
                        "it has no per-unit columns".to_string()
                    } else {
                        format!("its columns are: {}", names.join(", "))
                    }
                ))
            })?;
        let texts = column.texts();
        let numbers = match column {
            Column::Numbers(v) => Some(v),
            Column::Texts(_) if filter.op.compares() => {
                return Err(Error::Input(format!(
                    "{source}: the units column '{}' holds text, so '{filter}' cannot compare it; use = or !=",
                    filter.column
                )))
            }
            Column::Texts(_) => None,
        };
        for (u, k) in keep.iter_mut().enumerate() {
            *k &= filter.keeps(&texts[u], numbers.map(|v| v[u]));
        }
    }
    let kept = keep.iter().filter(|&&k| k).count();
    let rule = filters
        .iter()
        .map(ToString::to_string)
        .collect::<Vec<_>>()
        .join(" and ");
    if kept == 0 {
        return Err(Error::Input(format!(
            "{source}: no unit passes {rule} (of {} units)",
            rec.units.len()
        )));
    }
    let note = format!("{kept} of {} units kept ({rule})", rec.units.len());
    let unit_columns = rec
        .unit_columns
        .into_iter()
        .map(|(name, c)| {
            let c = match c {
                Column::Numbers(v) => Column::Numbers(pick(v, &keep)),
                Column::Texts(t) => Column::Texts(pick(t, &keep)),
            };
            (name, c)
        })
        .collect();
    Ok((
        Recording {
            units: pick(rec.units, &keep),
            spikes: pick(rec.spikes, &keep),
            unit_columns,
            trials: rec.trials,
        },
        Some(note),
    ))
}

fn pick<T>(values: Vec<T>, keep: &[bool]) -> Vec<T> {
    values
        .into_iter()
        .zip(keep)
        .filter(|(_, &k)| k)
        .map(|(x, _)| x)
        .collect()
}

#[cfg(test)]
mod tests {
    use super::*;

    fn recording() -> Recording {
        Recording {
            units: (0..4).map(|u| format!("unit {u}")).collect(),
            spikes: (0..4).map(|u| vec![u as f64]).collect(),
            unit_columns: vec![
                (
                    "quality".into(),
                    Column::Texts(vec![
                        "good".into(),
                        "mua".into(),
                        "good".into(),
                        "noise".into(),
                    ]),
                ),
                ("snr".into(), Column::Numbers(vec![5.0, 1.0, f64::NAN, 3.0])),
            ],
            trials: vec![],
        }
    }

    fn kept(filters: &[&str]) -> Result<Vec<String>> {
        let filters: Vec<UnitFilter> = filters
            .iter()
            .map(|f| UnitFilter::parse(f))
            .collect::<Result<_>>()?;
        Ok(keep_units("r.nwb", recording(), &filters)?.0.units)
    }

    #[test]
    fn keeps_units_by_text_and_number() {
        assert_eq!(kept(&["quality=good"]).unwrap(), ["unit 0", "unit 2"]);
        assert_eq!(
            kept(&["quality = good,mua"]).unwrap(),
            ["unit 0", "unit 1", "unit 2"]
        );
        assert_eq!(
            kept(&["quality!=noise"]).unwrap(),
            ["unit 0", "unit 1", "unit 2"]
        );
        // The unit with no SNR (NaN) passes no comparison.
        assert_eq!(kept(&["snr>=3"]).unwrap(), ["unit 0", "unit 3"]);
        assert_eq!(kept(&["snr>3"]).unwrap(), ["unit 0"]);
        assert_eq!(kept(&["snr<3"]).unwrap(), ["unit 1"]);
        assert_eq!(kept(&["snr<=3"]).unwrap(), ["unit 1", "unit 3"]);
        assert_eq!(kept(&["snr=3.0"]).unwrap(), ["unit 3"]);
        assert_eq!(kept(&["quality=good", "snr>=3"]).unwrap(), ["unit 0"]);
        let (rec, note) = keep_units(
            "r.nwb",
            recording(),
            &[UnitFilter::parse("quality=good").unwrap()],
        )
        .unwrap();
        assert_eq!(rec.spikes, vec![vec![0.0], vec![2.0]]);
        assert_eq!(
            rec.unit_columns[0].1,
            Column::Texts(vec!["good".into(), "good".into()])
        );
        assert_eq!(note.unwrap(), "2 of 4 units kept (quality = good)");
    }

    #[test]
    fn refusals_say_what_to_change() {
        let e = |f: &[&str]| kept(f).unwrap_err().to_string();
        assert!(e(&["snr"]).contains("write COLUMN=VALUE"));
        assert!(e(&["snr>=high"]).contains("needs one number after >="));
        assert!(e(&["quality="]).contains("has an empty value"));
        assert!(e(&["=good"]).contains("names no units column"));
        let m = e(&["area=piriform"]);
        assert!(
            m.contains("r.nwb: the units table has no column 'area'")
                && m.contains("'quality', 'snr'"),
            "{m}"
        );
        assert!(e(&["quality>1"]).contains("holds text, so 'quality > 1' cannot compare it"));
        assert!(e(&["quality=bad"]).contains("no unit passes quality = bad (of 4 units)"));
    }
}
