//! The trial-table figures as SVG: the score distribution over repeats, the shuffle null and the confusion matrix.

use super::report::Report;
use crate::report::svg::{esc, histogram, open, Marker, BAR, INK, NULL_BAR, TOP};
use crate::report::text::{p_phrase, pct, pct_range, per_permutation};
use crate::resample::Headline;
use std::fmt::Write;

/// Distribution of the headline score over cross-validation repeats (its variability from the splits, not a
/// confidence interval), with chance, the binomial threshold, and the mean with its confidence interval.
pub fn score_distribution(r: &Report) -> String {
    let values: Vec<f64> = r
        .repeats
        .iter()
        .map(|x| {
            if r.design.headline == Headline::Accuracy {
                x.accuracy
            } else {
                x.balanced_accuracy
            }
        })
        .collect();
    let markers = [
        Marker {
            at: r.chance.level,
            label: format!("chance {}", pct(r.chance.level)),
            dash: "6 4",
            colour: INK,
        },
        Marker {
            at: r.chance.threshold,
            label: format!(
                "binomial α = {} threshold {}",
                r.chance.alpha,
                pct(r.chance.threshold)
            ),
            dash: "2 3",
            colour: "#7a4f9a",
        },
        Marker {
            at: r.headline().mean,
            label: match r.headline().ci {
                Some(ci) => format!(
                    "mean {} (95 % CI {})",
                    pct(r.headline().mean),
                    pct_range(ci)
                ),
                None => format!("mean {}", pct(r.headline().mean)),
            },
            dash: "none",
            colour: "#1d4e89",
        },
    ];
    let name = r.design.headline.name();
    histogram(
        &format!(
            "Variability of {name} over {} cross-validation repeats",
            values.len()
        ),
        name,
        &values,
        &markers,
        BAR,
    )
}

/// The shuffle null distribution with the observed score marked, or `None` without shuffles.
pub fn null_distribution(r: &Report) -> Option<String> {
    let p = r.shuffle.p_value?;
    let markers = [
        Marker {
            at: r.shuffle.observed,
            label: format!(
                "observed {} ({})",
                pct(r.shuffle.observed),
                p_phrase(p, r.shuffle.count)
            ),
            dash: "none",
            colour: "#1d4e89",
        },
        Marker {
            at: r.shuffle.null_p95.unwrap_or(f64::NAN),
            label: format!(
                "null 95th pct {}",
                pct(r.shuffle.null_p95.unwrap_or(f64::NAN))
            ),
            dash: "2 3",
            colour: INK,
        },
    ];
    let title = format!("Shuffled labels: {} permutations", r.shuffle.count);
    Some(histogram(
        &title,
        &per_permutation(r.design.headline.name(), r.shuffle.repeats_each),
        &r.shuffle.null,
        &markers,
        NULL_BAR,
    ))
}

/// Sequential light-to-dark blue (ColorBrewer "Blues" end points, Brewer 2003), readable by colour-blind viewers.
fn blue(v: f64) -> (String, &'static str) {
    let (a, b) = ([247.0, 251.0, 255.0], [8.0, 48.0, 107.0]);
    let t = v.clamp(0.0, 1.0);
    let c: Vec<u8> = (0..3)
        .map(|i| (a[i] + (b[i] - a[i]) * t).round() as u8)
        .collect();
    (
        format!("#{:02x}{:02x}{:02x}", c[0], c[1], c[2]),
        if t > 0.55 { "#ffffff" } else { INK },
    )
}

/// Row-normalised confusion matrix as a heatmap with percentages in the cells.
pub fn confusion(r: &Report) -> String {
    let k = r.classes.len();
    let cell = (360.0 / k as f64).clamp(28.0, 72.0);
    let label_w = 130.0;
    let (w, h) = (
        (label_w + cell * k as f64 + 30.0).max(400.0), // at least as wide as the title
        TOP + 30.0 + cell * k as f64 + 40.0,
    );
    let x0 = label_w;
    let y0 = TOP + 30.0;
    let mut svg = String::new();
    open(&mut svg, "Confusion matrix (% of each true class)", w, h);
    let short = |s: &str| {
        if s.chars().count() > 16 {
            format!("{}…", s.chars().take(15).collect::<String>())
        } else {
            s.to_string()
        }
    };
    for (j, c) in r.classes.iter().enumerate() {
        write!(
            svg,
            r#"<text x="{:.1}" y="{:.1}" text-anchor="middle" fill="{INK}"><title>{full}</title>{}</text>"#,
            x0 + cell * (j as f64 + 0.5),
            y0 - 8.0,
            esc(&short(c)),
            full = esc(c)
        )
        .unwrap();
    }
    for (i, row) in r.summary.confusion.iter().enumerate() {
        write!(
            svg,
            r#"<text x="{:.1}" y="{:.1}" text-anchor="end" fill="{INK}"><title>{full}</title>{}</text>"#,
            x0 - 8.0,
            y0 + cell * (i as f64 + 0.5) + 4.0,
            esc(&short(&r.classes[i])),
            full = esc(&r.classes[i])
        )
        .unwrap();
        for (j, &v) in row.iter().enumerate() {
            let (fill, ink) = blue(v);
            write!(
                svg,
                r#"<rect x="{:.1}" y="{:.1}" width="{cell:.1}" height="{cell:.1}" fill="{fill}" stroke="white"/><text x="{:.1}" y="{:.1}" text-anchor="middle" fill="{ink}"{bold}>{:.0}</text>"#,
                x0 + cell * j as f64,
                y0 + cell * i as f64,
                x0 + cell * (j as f64 + 0.5),
                y0 + cell * (i as f64 + 0.5) + 4.0,
                100.0 * v,
                bold = if i == j { r#" font-weight="700""# } else { "" }
            )
            .unwrap();
        }
    }
    write!(
        svg,
        r#"<text x="{:.1}" y="{:.1}" text-anchor="middle" fill="{INK}">predicted class</text><text transform="translate(14 {:.1}) rotate(-90)" text-anchor="middle" fill="{INK}">true class</text></svg>"#,
        x0 + cell * k as f64 / 2.0,
        h - 10.0,
        y0 + cell * k as f64 / 2.0
    )
    .unwrap();
    svg
}

/// Pairwise decoding as a heatmap: the headline score of every pair of classes decoded on its own (symmetric,
/// diagonal empty), light-to-dark blue from chance (50 %) to 100 %, the percentage in every cell, and an asterisk
/// on pairs that are discoveries at the false-discovery rate across pairs. `None` without pairwise decoding.
pub fn pairwise(r: &Report) -> Option<String> {
    let pw = r.pairwise.as_ref()?;
    let k = r.classes.len();
    let discovery = |a: usize, b: usize| {
        pw.pairs.iter().any(|p| {
            p.discovery == Some(true)
                && ((p.classes[0] == r.classes[a] && p.classes[1] == r.classes[b])
                    || (p.classes[0] == r.classes[b] && p.classes[1] == r.classes[a]))
        })
    };
    let cell = (360.0 / k as f64).clamp(28.0, 72.0);
    let label_w = 130.0;
    let (w, h) = (
        (label_w + cell * k as f64 + 30.0).max(560.0),
        TOP + 30.0 + cell * k as f64 + 58.0,
    );
    let (x0, y0) = (label_w, TOP + 30.0);
    let mut svg = String::new();
    open(
        &mut svg,
        &format!(
            "Pairwise decoding ({} of each pair, chance 50 %)",
            r.design.headline.name()
        ),
        w,
        h,
    );
    let short = |s: &str| {
        if s.chars().count() > 16 {
            format!("{}…", s.chars().take(15).collect::<String>())
        } else {
            s.to_string()
        }
    };
    for (i, name) in r.classes.iter().enumerate() {
        let c = i as f64 * cell + cell / 2.0;
        write!(
            svg,
            r#"<text x="{lx}" y="{ly:.1}" text-anchor="end" fill="{INK}">{n}</text><text x="{tx:.1}" y="{ty}" text-anchor="middle" fill="{INK}">{n}</text>"#,
            lx = x0 - 6.0,
            ly = y0 + c + 4.0,
            tx = x0 + c,
            ty = y0 - 8.0,
            n = esc(&short(name))
        )
        .unwrap();
    }
    for a in 0..k {
        for b in 0..k {
            let (x, y) = (x0 + b as f64 * cell, y0 + a as f64 * cell);
            match pw.matrix[a][b] {
                None => write!(
                    svg,
                    r##"<rect x="{x:.1}" y="{y:.1}" width="{cell:.1}" height="{cell:.1}" fill="#ffffff" stroke="#d0d4d9"/>"##
                )
                .unwrap(),
                Some(v) => {
                    let (fill, ink) = blue((v - 0.5) / 0.5);
                    write!(
                        svg,
                        r##"<rect x="{x:.1}" y="{y:.1}" width="{cell:.1}" height="{cell:.1}" fill="{fill}" stroke="#ffffff"/><text x="{tx:.1}" y="{ty:.1}" text-anchor="middle" fill="{ink}">{p:.1}{star}</text>"##,
                        tx = x + cell / 2.0,
                        ty = y + cell / 2.0 + 4.0,
                        p = 100.0 * v,
                        star = if discovery(a, b) { "*" } else { "" }
                    )
                    .unwrap()
                }
            }
        }
    }
    let second = match pw.fdr {
        Some(q) => format!("* discovery at a false-discovery rate of {q} across pairs"),
        None => "no shuffles, so no test".to_string(),
    };
    for (i, line) in ["% of test trials; each pair decoded on its own", &second]
        .iter()
        .enumerate()
    {
        write!(
            svg,
            r#"<text x="{x}" y="{y:.1}" fill="{INK}">{n}</text>"#,
            x = 12.0,
            y = y0 + cell * k as f64 + 24.0 + 16.0 * i as f64,
            n = esc(line)
        )
        .unwrap();
    }
    svg.push_str("</svg>");
    Some(svg)
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn colour_scale_runs_light_to_dark() {
        assert_eq!(blue(0.0).0, "#f7fbff");
        assert_eq!(blue(1.0).0, "#08306b");
    }
}
