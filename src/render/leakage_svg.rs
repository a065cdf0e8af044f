//! The leakage chart as SVG: one panel per output, |F(b)| of every term on a log axis, terms
//! grouped by the selection's term order (NMR: coherence level; wanted terms in their own
//! group on the left), leaks as filled red dots, conjugates of wanted terms in purple, and terms with F = 0 in a band below the axis —
//! hollow grey squares for exact zeros, hollow orange triangles for zeros only within the
//! numeric bound.

use super::leakage::{LeakageChart, LeakageSeries, TermKind, TermPoint};
use super::svg::Svg;
use crate::selection::LeakMeasure;
use std::collections::BTreeMap;

const LEFT: f64 = 78.0;
const RIGHT: f64 = 24.0;
const PLOT_H: f64 = 230.0;
const BAND_H: f64 = 34.0;
const PANEL_GAP: f64 = 96.0;
const TOP: f64 = 90.0;
/// Smallest plotted nonzero |F| (smaller values are drawn on the axis floor).
const FLOOR_DECADE: i32 = -16;
/// Most leaks labelled with their signature per panel.
const MAX_LABELS: usize = 10;

struct Group<'a> {
    label: String,
    terms: Vec<&'a TermPoint>,
}

fn groups(s: &LeakageSeries, measure: LeakMeasure) -> Vec<Group<'_>> {
    let wanted: Vec<&TermPoint> = s
        .terms
        .iter()
        .filter(|t| t.kind == TermKind::Wanted)
        .collect();
    let mut by_order: BTreeMap<i64, Vec<&TermPoint>> = BTreeMap::new();
    for t in s.terms.iter().filter(|t| t.kind != TermKind::Wanted) {
        by_order.entry(t.order).or_default().push(t);
    }
    let mut g = vec![Group {
        label: "wanted".into(),
        terms: wanted,
    }];
    for (k, terms) in by_order {
        g.push(Group {
            label: match measure {
                LeakMeasure::Order => format!("order {k}"),
                LeakMeasure::CoherenceLevel => format!("|p| = {k}"),
            },
            terms,
        });
    }
    g
}

fn group_width(n: usize) -> f64 {
    (n as f64 * 7.0 + 24.0).clamp(70.0, 420.0)
}

/// Draw the chart.
pub fn leakage_svg(chart: &LeakageChart) -> String {
    let all: Vec<Vec<Group>> = chart
        .series
        .iter()
        .map(|s| groups(s, chart.measure))
        .collect();
    let plot_w = all
        .iter()
        .map(|gs| gs.iter().map(|g| group_width(g.terms.len())).sum::<f64>())
        .fold(650.0, f64::max);
    let max_abs = chart
        .series
        .iter()
        .flat_map(|s| &s.terms)
        .map(|t| t.abs)
        .fold(1.0, f64::max);
    // Headroom above the largest value so dots at |F| = 1 do not sit on the frame.
    let top_decade = (2.0 * max_abs).log10().ceil().max(1.0) as i32;
    let panel_h = PLOT_H + BAND_H + PANEL_GAP;
    let width = LEFT + plot_w + RIGHT;
    let height = TOP + panel_h * chart.series.len().max(1) as f64;
    let mut svg = Svg::new(width, height);
    svg.text(
        10.0,
        22.0,
        15.0,
        "start",
        "#222",
        &format!(
            "Leakage |F(b)| of each rejected term — {} steps, order {}",
            chart.steps, chart.order
        ),
    );
    svg.text(10.0, 40.0, 11.5, "start", "#555", &chart.title);
    legend(&mut svg, 10.0, 62.0);
    for (i, (s, gs)) in chart.series.iter().zip(&all).enumerate() {
        let y0 = TOP + panel_h * i as f64 + 20.0;
        panel(&mut svg, s, gs, y0, plot_w, top_decade);
    }
    svg.finish()
}

fn legend(svg: &mut Svg, x: f64, y: f64) {
    let mut x = x;
    let items: [(&str, &str); 5] = [
        ("wanted", "wanted term"),
        ("leak", "leak (F ≠ 0)"),
        ("conj", "conjugate of a wanted term"),
        ("exact0", "F = 0 exactly"),
        ("num0", "F ≈ 0 (numeric only)"),
    ];
    for (kind, text) in items {
        marker(svg, kind, x + 6.0, y - 4.0);
        svg.text(x + 16.0, y, 11.0, "start", "#333", text);
        x += 34.0 + text.chars().count() as f64 * 6.6;
    }
}

fn marker(svg: &mut Svg, kind: &str, x: f64, y: f64) {
    match kind {
        "wanted" => svg.raw(&format!(
            "<polygon points=\"{:.1},{:.1} {:.1},{:.1} {:.1},{:.1} {:.1},{:.1}\" fill=\"#2d7d46\"/>",
            x, y - 6.0, x + 6.0, y, x, y + 6.0, x - 6.0, y
        )),
        "leak" => svg.circle(x, y, 3.6, "#c0392b", "#7b241c"),
        "conj" => svg.circle(x, y, 3.6, "#8e44ad", "#5b2c6f"),
        "exact0" => svg.rect(x - 3.2, y - 3.2, 6.4, 6.4, "none", "#888"),
        _ => svg.raw(&format!(
            "<polygon points=\"{:.1},{:.1} {:.1},{:.1} {:.1},{:.1}\" fill=\"none\" stroke=\"#d68910\"/>",
            x, y - 4.0, x + 4.0, y + 3.5, x - 4.0, y + 3.5
        )),
    }
}

fn panel(svg: &mut Svg, s: &LeakageSeries, gs: &[Group], y0: f64, plot_w: f64, top: i32) {
    let leaks = s
        .terms
        .iter()
        .filter(|t| t.kind != TermKind::Wanted && !t.zero)
        .count();
    let rejected = s
        .terms
        .iter()
        .filter(|t| t.kind != TermKind::Wanted)
        .count();
    svg.text(
        LEFT,
        y0 - 8.0,
        13.0,
        "start",
        "#222",
        &format!(
            "output {} — {} terms checked, {} leak{} ({})",
            s.name,
            rejected,
            leaks,
            if leaks == 1 { "" } else { "s" },
            if s.exact {
                "exact arithmetic"
            } else {
                "numeric, not exact"
            }
        ),
    );
    let decades = (top - FLOOR_DECADE) as f64;
    let y_of = |abs: f64| {
        let l = abs.max(10f64.powi(FLOOR_DECADE)).log10();
        y0 + PLOT_H * (top as f64 - l) / decades
    };
    let x1 = LEFT + plot_w;
    svg.rect(LEFT, y0, plot_w, PLOT_H, "#fcfcfa", "#bbb");
    for d in (FLOOR_DECADE..=top).step_by(2) {
        let y = y_of(10f64.powi(d));
        svg.line(LEFT, y, x1, y, "#e4e4e0", 1.0, false);
        svg.text(LEFT - 6.0, y + 4.0, 10.0, "end", "#555", &format!("1e{d}"));
    }
    let y1 = y_of(1.0);
    svg.line(LEFT, y1, x1, y1, "#9ab", 1.0, true);
    svg.raw(&format!(
        "<text x=\"16\" y=\"{:.1}\" font-size=\"11\" fill=\"#333\" text-anchor=\"middle\" transform=\"rotate(-90 16 {:.1})\">|F(b)| (log)</text>",
        y0 + PLOT_H / 2.0,
        y0 + PLOT_H / 2.0
    ));
    let band_y = y0 + PLOT_H;
    svg.rect(LEFT, band_y, plot_w, BAND_H, "#f1f1ee", "#bbb");
    svg.text(
        LEFT - 6.0,
        band_y + BAND_H / 2.0 + 4.0,
        10.0,
        "end",
        "#555",
        "F = 0",
    );
    let mut x = LEFT;
    for g in gs {
        let w = group_width(g.terms.len()) * plot_w
            / gs.iter().map(|g| group_width(g.terms.len())).sum::<f64>();
        svg.line(x, y0, x, band_y + BAND_H, "#ccc", 1.0, false);
        let n = g.terms.len().max(1) as f64;
        let step = (w - 16.0) / n;
        for (i, t) in g.terms.iter().enumerate() {
            let px = x + 8.0 + step * (i as f64 + 0.5);
            if t.zero && t.kind != TermKind::Wanted {
                let py = band_y + 10.0 + 14.0 * (i % 2) as f64;
                marker(svg, if t.exact_zero { "exact0" } else { "num0" }, px, py);
                continue;
            }
            let py = y_of(t.abs);
            let kind = match t.kind {
                TermKind::Wanted => "wanted",
                TermKind::Conjugate => "conj",
                TermKind::Rejected => "leak",
            };
            if t.kind == TermKind::Wanted && t.zero {
                // A lost wanted term: on the band, in the wanted colour.
                marker(svg, "wanted", px, band_y + BAND_H / 2.0);
                continue;
            }
            marker(svg, kind, px, py);
        }
        let zeros = g.terms.iter().filter(|t| t.zero).count();
        svg.text(
            x + w / 2.0,
            band_y + BAND_H + 16.0,
            11.0,
            "middle",
            "#222",
            &g.label,
        );
        svg.text(
            x + w / 2.0,
            band_y + BAND_H + 30.0,
            9.5,
            "middle",
            "#666",
            &if g.label == "wanted" {
                format!("{} kept", g.terms.len())
            } else {
                format!(
                    "{} term{}, {} zero",
                    g.terms.len(),
                    if g.terms.len() == 1 { "" } else { "s" },
                    zeros
                )
            },
        );
        x += w;
    }
    // The leaking signatures, largest |F| first, as a text line under the panel.
    let mut leaking: Vec<&TermPoint> = s
        .terms
        .iter()
        .filter(|t| t.kind != TermKind::Wanted && !t.zero)
        .collect();
    leaking.sort_by(|a, b| b.abs.total_cmp(&a.abs));
    if !leaking.is_empty() {
        let mut parts: Vec<String> = leaking
            .iter()
            .take(MAX_LABELS)
            .map(|t| format!("{} |F|={:.3}", t.signature, t.abs))
            .collect();
        if leaking.len() > MAX_LABELS {
            parts.push(format!("… {} more", leaking.len() - MAX_LABELS));
        }
        let per_line = ((plot_w / 150.0) as usize).max(1);
        for (i, chunk) in parts.chunks(per_line).take(2).enumerate() {
            svg.text(
                LEFT,
                band_y + BAND_H + 46.0 + 12.0 * i as f64,
                9.5,
                "start",
                "#7b241c",
                &format!(
                    "{}{}",
                    if i == 0 { "leaks: " } else { "" },
                    chunk.join("; ")
                ),
            );
        }
    }
}
