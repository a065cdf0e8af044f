//! The leakage chart as SVG: one panel per output, |F(b)| of every term of the rejection set on
//! a log axis that spans only the decades holding leaks, terms grouped by the selection's term
//! order (NMR: coherence level; wanted terms in their own group on the left). Leaks are filled
//! red dots, conjugates of wanted terms purple, and terms with F = 0 sit in a band of their
//! own below the axis: hollow grey squares for exact zeros, hollow orange triangles for zeros
//! only within the table's precision. Wanted terms far from the leak decades get a band above
//! the axis with their |F| written, so they are never clipped. Counts are the checker's
//! ([`super::leakage::LeakageSeries::leak_count`]). Laid out as a [`Scene`] with measured boxes.

use super::fonts::{ascent_descent, text_width, wrap};
use super::leakage::{LeakageChart, LeakageSeries, TermKind, TermPoint};
pub use super::leakage_marks::significant;
use super::leakage_marks::{legend, marker};
use super::scene::{Anchor, Scene, Span};
use crate::selection::LeakMeasure;
use std::collections::BTreeMap;

const RIGHT: f64 = 24.0;
const PLOT_H: f64 = 200.0;
const BAND_H: f64 = 34.0;
const OFF_H: f64 = 30.0;
/// Inner margin of the plot so markers at the axis ends stay inside the frame.
const INSET: f64 = 9.0;
/// Most leaks listed with their signature per panel.
const MAX_LABELS: usize = 10;
/// Wanted terms at most this many decades outside the leak decades widen the axis; farther
/// ones go to the off-scale band.
const WIDEN: i32 = 2;
const TICK: f64 = 10.0;

struct Group<'a> {
    label: String,
    note: String,
    terms: Vec<&'a TermPoint>,
    width: f64,
}

fn groups(s: &LeakageSeries, measure: LeakMeasure) -> Vec<Group<'_>> {
    let mut by_order: BTreeMap<i64, Vec<&TermPoint>> = BTreeMap::new();
    for t in s.terms.iter().filter(|t| t.kind != TermKind::Wanted) {
        by_order.entry(t.order).or_default().push(t);
    }
    let wanted: Vec<&TermPoint> = s
        .terms
        .iter()
        .filter(|t| t.kind == TermKind::Wanted)
        .collect();
    let mut g = vec![make_group(
        "wanted".into(),
        format!("{} kept", wanted.len()),
        wanted,
    )];
    for (k, terms) in by_order {
        let label = match measure {
            LeakMeasure::Order => format!("order {k}"),
            LeakMeasure::CoherenceLevel => format!("|p| = {k}"),
        };
        let zeros = terms.iter().filter(|t| t.zero).count();
        let n = terms.len();
        let note = format!("{n} term{}, {zeros} zero", if n == 1 { "" } else { "s" });
        g.push(make_group(label, note, terms));
    }
    g
}

fn make_group<'a>(label: String, note: String, terms: Vec<&'a TermPoint>) -> Group<'a> {
    let text = text_width(&label, 11.0).max(text_width(&note, 9.5)) + 14.0;
    let width = (terms.len() as f64 * 7.0 + 24.0)
        .clamp(70.0, 420.0)
        .max(text);
    Group {
        label,
        note,
        terms,
        width,
    }
}

/// The ends of the log axis in decades: the whole decades holding nonzero rejected terms,
/// widened to take wanted terms within [`WIDEN`] decades; data within one decade value gets
/// half a decade either side. `None` when nothing nonzero is rejected.
fn decades(s: &[&LeakageSeries]) -> Option<(f64, f64)> {
    let leak_logs: Vec<f64> = s
        .iter()
        .flat_map(|s| &s.terms)
        .filter(|t| t.kind != TermKind::Wanted && !t.zero && t.abs > 0.0)
        .map(|t| t.abs.log10())
        .collect();
    if leak_logs.is_empty() {
        return None;
    }
    let mut lo = leak_logs
        .iter()
        .copied()
        .fold(f64::INFINITY, f64::min)
        .floor() as i32;
    let mut hi = leak_logs
        .iter()
        .copied()
        .fold(f64::NEG_INFINITY, f64::max)
        .ceil() as i32;
    for t in s.iter().flat_map(|s| &s.terms) {
        if t.kind == TermKind::Wanted && !t.zero && t.abs > 0.0 {
            let l = t.abs.log10();
            if l >= f64::from(lo - WIDEN) && l <= f64::from(hi + WIDEN) {
                lo = lo.min(l.floor() as i32);
                hi = hi.max(l.ceil() as i32);
            }
        }
    }
    if hi <= lo {
        return Some((f64::from(lo) - 0.5, f64::from(hi) + 0.5));
    }
    Some((f64::from(lo), f64::from(hi)))
}

fn on_axis(t: &TermPoint, axis: Option<(f64, f64)>) -> bool {
    match axis {
        Some((lo, hi)) if !t.zero && t.abs > 0.0 => {
            let l = t.abs.log10();
            l >= lo - 1e-9 && l <= hi + 1e-9
        }
        _ => false,
    }
}

/// The whole decades on the axis.
fn ticks(lo: f64, hi: f64) -> std::ops::RangeInclusive<i32> {
    (lo.ceil() as i32)..=(hi.floor() as i32)
}

/// Height of the log plot: about 50 px a decade, within bounds.
fn plot_h(lo: f64, hi: f64) -> f64 {
    (50.0 * (hi - lo) + 50.0).clamp(100.0, PLOT_H)
}

/// Draw the chart.
pub fn leakage_svg(chart: &LeakageChart) -> String {
    leakage_scene(chart).to_svg()
}

/// The laid-out chart.
pub fn leakage_scene(chart: &LeakageChart) -> Scene {
    let all: Vec<Vec<Group>> = chart
        .series
        .iter()
        .map(|s| groups(s, chart.measure))
        .collect();
    let axis = decades(&chart.series.iter().collect::<Vec<_>>());
    let plot_w = all
        .iter()
        .map(|gs| gs.iter().map(|g| g.width).sum::<f64>())
        .fold(560.0, f64::max);
    let left = left_margin(axis);
    let width = left + plot_w + RIGHT;
    let mut scene = Scene::new();
    scene.width = width;
    let mut y = 8.0;
    let heading = format!(
        "Leakage |F(b)| of each term of the rejection set — {} steps, order {}",
        chart.steps, chart.order
    );
    y = lines(&mut scene, &heading, 15.0, "#222", 10.0, y, width - 20.0);
    y = lines(
        &mut scene,
        &chart.title,
        11.5,
        "#555",
        10.0,
        y,
        width - 20.0,
    );
    y = legend(&mut scene, 10.0, y + 6.0, width - 20.0) + 10.0;
    for (s, gs) in chart.series.iter().zip(&all) {
        y = panel(&mut scene, s, gs, axis, (left, y), plot_w) + 18.0;
    }
    scene.height = y;
    scene
}

/// Room for the tick labels, band names and the rotated axis title.
fn left_margin(axis: Option<(f64, f64)>) -> f64 {
    let ticks = axis.map_or(0.0, |(lo, hi)| {
        ticks(lo, hi)
            .map(|d| text_width("10", TICK) + text_width(&sup_text(d), TICK * 0.72))
            .fold(0.0, f64::max)
    });
    let bands = ["F = 0", "wanted"]
        .iter()
        .map(|t| text_width(t, TICK))
        .fold(0.0, f64::max);
    let (a, d) = ascent_descent(11.0);
    10.0 + a + d + 8.0 + ticks.max(bands) + 8.0
}

fn sup_text(d: i32) -> String {
    if d < 0 {
        format!("\u{2212}{}", -d)
    } else {
        d.to_string()
    }
}

/// Wrapped lines of text from `y` (top); returns the y below them.
fn lines(scene: &mut Scene, text: &str, size: f64, fill: &str, x: f64, y: f64, w: f64) -> f64 {
    let (a, d) = ascent_descent(size);
    let mut y = y;
    for l in wrap(text, size, w) {
        scene.text(x, y + a, size, Anchor::Start, fill, &l);
        y += a + d + 1.0;
    }
    y
}

/// One output's panel from `y` (top); returns the y below it.
fn panel(
    scene: &mut Scene,
    s: &LeakageSeries,
    gs: &[Group],
    axis: Option<(f64, f64)>,
    (left, y): (f64, f64),
    plot_w: f64,
) -> f64 {
    let head = panel_title(s);
    let mut y = lines(scene, &head, 13.0, "#222", left, y, plot_w) + 6.0;
    let off: Vec<&TermPoint> = s
        .terms
        .iter()
        .filter(|t| t.kind == TermKind::Wanted && !t.zero && !on_axis(t, axis))
        .collect();
    let columns = column_x(gs, left, plot_w);
    if !off.is_empty() {
        y = off_scale_band(scene, &off, gs, &columns, (left, y), plot_w, axis.is_some());
    }
    if let Some((lo, hi)) = axis {
        y = log_axis(scene, gs, &columns, (lo, hi), (left, y), plot_w);
    } else {
        y = no_leak_line(scene, s.exact, (left, y), plot_w);
    }
    y = zero_band(scene, gs, &columns, (left, y), plot_w);
    y = group_names(scene, gs, &columns, y);
    leak_list(scene, s, (left, y), plot_w)
}

/// The panel's title: counts as `check` reports them, and how they were decided.
fn panel_title(s: &LeakageSeries) -> String {
    let plural = |n: usize| if n == 1 { "" } else { "s" };
    let leaks = s.leak_count();
    let mut head = format!(
        "output {} — {} terms checked, {leaks} leak{}",
        s.name,
        s.rejected_checked(),
        plural(leaks)
    );
    match s.conjugates_passing() {
        0 => {}
        1 => head.push_str(", 1 conjugate passes"),
        n => head.push_str(&format!(", {n} conjugates pass")),
    }
    let lost = s.lost();
    if lost > 0 {
        head.push_str(&format!(", {lost} wanted term{} lost", plural(lost)));
    }
    head.push_str(if s.exact {
        " (exact arithmetic)"
    } else {
        " (within the table's precision, not exact)"
    });
    head
}

/// The line that replaces the log axis when nothing leaks.
fn no_leak_line(scene: &mut Scene, exact: bool, (left, y): (f64, f64), plot_w: f64) -> f64 {
    scene.rect(left, y, plot_w, 26.0, "#fcfcfa", "#bbb");
    let (a, _) = ascent_descent(11.0);
    let text = if exact {
        "no leak: every rejected term has F = 0 exactly"
    } else {
        "no leak: every rejected term has F = 0 within the table's precision"
    };
    scene.text(
        left + 8.0,
        y + 13.0 + a / 2.0 - 1.0,
        11.0,
        Anchor::Start,
        "#2d7d46",
        text,
    );
    y + 26.0
}

/// A band across the plot of height `h` with its name left of it, in the tick labels' place.
fn labelled_band(
    scene: &mut Scene,
    (left, y): (f64, f64),
    plot_w: f64,
    h: f64,
    fill: &str,
    name: &str,
) {
    scene.rect(left, y, plot_w, h, fill, "#bbb");
    scene.text(
        left - 8.0,
        y + h / 2.0 + 3.5,
        TICK,
        Anchor::End,
        "#555",
        name,
    );
}

/// The band of terms with F = 0 (lost wanted terms too); returns the y below it.
fn zero_band(
    scene: &mut Scene,
    gs: &[Group],
    columns: &[(f64, f64)],
    (left, y): (f64, f64),
    plot_w: f64,
) -> f64 {
    labelled_band(scene, (left, y), plot_w, BAND_H, "#f1f1ee", "F = 0");
    for (g, &(x, w)) in gs.iter().zip(columns) {
        let step = (w - 16.0) / g.terms.len().max(1) as f64;
        for (i, t) in g.terms.iter().enumerate().filter(|(_, t)| t.zero) {
            let px = x + 8.0 + step * (i as f64 + 0.5);
            let (kind, py) = match (t.kind, t.exact_zero) {
                (TermKind::Wanted, _) => ("lost", y + BAND_H / 2.0),
                (_, true) => ("exact0", y + 10.0 + 14.0 * (i % 2) as f64),
                _ => ("num0", y + 10.0 + 14.0 * (i % 2) as f64),
            };
            marker(scene, kind, px, py);
        }
    }
    for &(x, _) in columns.iter().skip(1) {
        scene.line((x, y), (x, y + BAND_H), "#ccc", 1.0, false, false);
    }
    y + BAND_H
}

/// Group names and counts under the band; returns the y below them.
fn group_names(scene: &mut Scene, gs: &[Group], columns: &[(f64, f64)], y: f64) -> f64 {
    let (a, d) = ascent_descent(11.0);
    let (a2, d2) = ascent_descent(9.5);
    for (g, &(x, w)) in gs.iter().zip(columns) {
        let xm = x + w / 2.0;
        scene.text(xm, y + 4.0 + a, 11.0, Anchor::Middle, "#222", &g.label);
        let y2 = y + 4.0 + a + d + 1.0 + a2;
        scene.text(xm, y2, 9.5, Anchor::Middle, "#666", &g.note);
    }
    y + 4.0 + a + d + 1.0 + a2 + d2 + 6.0
}

/// Left edge and width of every group's column.
fn column_x(gs: &[Group], left: f64, plot_w: f64) -> Vec<(f64, f64)> {
    let total: f64 = gs.iter().map(|g| g.width).sum::<f64>().max(1.0);
    let mut x = left;
    gs.iter()
        .map(|g| {
            let w = g.width * plot_w / total;
            x += w;
            (x - w, w)
        })
        .collect()
}

/// The band above the axis for wanted terms far from the leak decades, with their |F|.
fn off_scale_band(
    scene: &mut Scene,
    off: &[&TermPoint],
    gs: &[Group],
    columns: &[(f64, f64)],
    (left, y): (f64, f64),
    plot_w: f64,
    has_axis: bool,
) -> f64 {
    labelled_band(scene, (left, y), plot_w, OFF_H, "#eef5ef", "wanted");
    let (x, w) = columns[0];
    let step = (w - 16.0) / gs[0].terms.len().max(1) as f64;
    for (i, t) in gs[0].terms.iter().enumerate() {
        if off.iter().any(|o| std::ptr::eq(*o, *t)) {
            marker(
                scene,
                "wanted",
                x + 8.0 + step * (i as f64 + 0.5),
                y + OFF_H / 2.0,
            );
        }
    }
    let mut values: Vec<String> = off.iter().map(|t| significant(t.abs)).collect();
    values.dedup();
    let far = if has_axis {
        " (far from the leak decades)"
    } else {
        ""
    };
    let text = format!("wanted |F| = {}{far}", values.join(", "));
    let room = plot_w - w - 16.0;
    let mut shown = text.clone();
    while text_width(&shown, 10.0) > room && shown.chars().count() > 1 {
        shown = text
            .chars()
            .take(shown.chars().count().saturating_sub(2))
            .collect::<String>()
            + "…";
    }
    scene.text(
        x + w + 8.0,
        y + OFF_H / 2.0 + 3.5,
        10.0,
        Anchor::Start,
        "#2d7d46",
        &shown,
    );
    y + OFF_H + 4.0
}

/// The log axis with its decades and the nonzero terms; returns the y below it.
fn log_axis(
    scene: &mut Scene,
    gs: &[Group],
    columns: &[(f64, f64)],
    (lo, hi): (f64, f64),
    (left, y0): (f64, f64),
    plot_w: f64,
) -> f64 {
    let x1 = left + plot_w;
    let h = plot_h(lo, hi);
    let y_of = |abs: f64| y0 + INSET + (h - 2.0 * INSET) * (hi - abs.log10()) / (hi - lo);
    scene.rect(left, y0, plot_w, h, "#fcfcfa", "#bbb");
    let every = ((hi - lo) as usize).div_ceil(8).max(1);
    for d in ticks(lo, hi).rev().step_by(every) {
        let y = y_of(10f64.powi(d));
        scene.line((left, y), (x1, y), "#e4e4e0", 1.0, false, false);
        scene.line((left - 4.0, y), (left, y), "#888", 1.0, false, false);
        scene.rich(
            left - 8.0,
            y + 3.5,
            TICK,
            Anchor::End,
            "#555",
            vec![Span::base("10"), Span::sup(sup_text(d))],
        );
    }
    if ticks(lo, hi).contains(&0) {
        let y = y_of(1.0);
        scene.line((left, y), (x1, y), "#9ab", 1.0, true, false);
    }
    let (a, _) = ascent_descent(11.0);
    scene.push_label(super::scene::Label {
        x: 10.0 + a,
        y: y0 + h / 2.0,
        size: 11.0,
        anchor: Anchor::Middle,
        fill: "#333".into(),
        spans: vec![Span::base("|F(b)|, log scale")],
        vertical: true,
    });
    for &(x, _) in columns.iter().skip(1) {
        scene.line((x, y0), (x, y0 + h), "#ccc", 1.0, false, false);
    }
    for (g, &(x, w)) in gs.iter().zip(columns) {
        let step = (w - 16.0) / g.terms.len().max(1) as f64;
        for (i, t) in g.terms.iter().enumerate() {
            if t.zero || !on_axis(t, Some((lo, hi))) {
                continue;
            }
            let kind = match t.kind {
                TermKind::Wanted => "wanted",
                TermKind::Conjugate => "conj",
                TermKind::Rejected => "leak",
            };
            marker(scene, kind, x + 8.0 + step * (i as f64 + 0.5), y_of(t.abs));
        }
    }
    y0 + h
}

/// The leaking signatures, largest |F| first, wrapped under the panel.
fn leak_list(scene: &mut Scene, s: &LeakageSeries, (left, y): (f64, f64), plot_w: f64) -> f64 {
    let mut leaking: Vec<&TermPoint> = s
        .terms
        .iter()
        .filter(|t| t.kind != TermKind::Wanted && !t.zero)
        .collect();
    if leaking.is_empty() {
        return y;
    }
    leaking.sort_by(|a, b| b.abs.total_cmp(&a.abs));
    let mut parts: Vec<String> = leaking
        .iter()
        .take(MAX_LABELS)
        .map(|t| {
            let conj = if t.kind == TermKind::Conjugate {
                " (conj.)"
            } else {
                ""
            };
            let sig = t.signature.to_string().replace('-', "\u{2212}");
            format!(
                "|F{sig}|={}{conj};",
                significant(t.abs).replace('-', "\u{2212}")
            )
        })
        .collect();
    if leaking.len() > MAX_LABELS {
        parts.push(format!("… {} more", leaking.len() - MAX_LABELS));
    }
    let text = format!("largest first: {}", parts.join(" "));
    lines(
        scene,
        text.trim_end_matches(';'),
        9.5,
        "#7b241c",
        left,
        y,
        plot_w,
    )
}
