//! Phase wheels as SVG: one circle per field of a cycle, with a dot at every phase the field
//! visits (dot size grows with the number of steps using it), grid ticks when the cycle
//! declares a grid, and each phase labelled in turns and degrees. Angles run counter-clockwise
//! from 0 at the right (3 o'clock), as on the complex plane of exp(i phi).

use super::fonts::wrap;
use super::svg::Svg;
use crate::cycle::text::format_phase;
use crate::cycle::{Cycle, Phase};

const R: f64 = 78.0;
const CELL_W: f64 = 300.0;
const CELL_H: f64 = 300.0;
const COLS: usize = 3;
/// Above this many distinct phases on one wheel, labels go in a list under it.
const MAX_RING_LABELS: usize = 12;

/// Draw one wheel per field of `cycle`.
pub fn wheels_svg(cycle: &Cycle, title: &str) -> String {
    let n = cycle.fields.len().max(1);
    let cols = COLS.min(n);
    let rows = n.div_ceil(cols);
    let width = CELL_W * cols as f64 + 20.0;
    // Title and explanation wrapped to the sheet (a one-wheel sheet is narrow).
    let title_lines = wrap(title, 15.0, width - 20.0);
    let note_lines = wrap(
        "phase wheels: 0 at 3 o'clock, counter-clockwise; dot area ∝ steps using the phase; labels in turns and degrees",
        11.0,
        width - 20.0,
    );
    let top = 8.0 + 19.0 * title_lines.len() as f64 + 14.0 * note_lines.len() as f64;
    let mut svg = Svg::new(width, CELL_H * rows as f64 + top + 24.0);
    let mut y = 8.0;
    for l in &title_lines {
        y += 19.0;
        svg.text(10.0, y - 4.0, 15.0, "start", "#222", l);
    }
    for l in &note_lines {
        y += 14.0;
        svg.text(10.0, y - 2.0, 11.0, "start", "#555", l);
    }
    for (j, name) in cycle.fields.iter().enumerate() {
        let cx = 10.0 + CELL_W * (j % cols) as f64 + CELL_W / 2.0;
        let cy = top + 16.0 + CELL_H * (j / cols) as f64 + CELL_H / 2.0 - 10.0;
        let grid = cycle.meta.grid.as_ref().and_then(|g| g.get(j).copied());
        wheel(&mut svg, cycle, j, name, grid, cx, cy);
    }
    svg.finish()
}

fn degrees_text(p: &Phase) -> String {
    let d = match p {
        Phase::Exact(t) => *t.numer() as f64 * 360.0 / *t.denom() as f64,
        Phase::Approx(x) => x * 360.0,
    };
    let r = (d * 100.0).round() / 100.0;
    if r.fract() == 0.0 {
        format!("{r:.0}°")
    } else {
        format!("{r}°")
    }
}

fn wheel(svg: &mut Svg, cycle: &Cycle, j: usize, name: &str, grid: Option<u32>, cx: f64, cy: f64) {
    // Distinct phases with their step counts, in turn order.
    let mut visits: Vec<(Phase, usize)> = Vec::new();
    for row in &cycle.steps {
        let p = &row[j];
        match visits.iter_mut().find(|(q, _)| q == p) {
            Some((_, c)) => *c += 1,
            None => visits.push((p.clone(), 1)),
        }
    }
    visits.sort_by(|a, b| a.0.turns_f64().total_cmp(&b.0.turns_f64()));
    let head = format!(
        "field {name} — {} phase{}{}",
        visits.len(),
        if visits.len() == 1 { "" } else { "s" },
        grid.map_or(String::new(), |g| format!(", grid {g}"))
    );
    let lines = wrap(&head, 13.0, CELL_W - 16.0);
    for (i, l) in lines.iter().take(2).enumerate() {
        let y = cy - R - 46.0 - 15.0 * (lines.len().min(2) - 1 - i) as f64;
        svg.text(cx, y, 13.0, "middle", "#222", l);
    }
    svg.circle(cx, cy, R, "#fbfbf8", "#555");
    svg.line(cx - R - 6.0, cy, cx + R + 6.0, cy, "#ddd", 1.0, true);
    svg.line(cx, cy - R - 6.0, cx, cy + R + 6.0, "#ddd", 1.0, true);
    if let Some(g) = grid.filter(|&g| (2..=72).contains(&g)) {
        for k in 0..g {
            let a = std::f64::consts::TAU * f64::from(k) / f64::from(g);
            let (c, s) = (a.cos(), -a.sin());
            svg.line(
                cx + c * (R - 5.0),
                cy + s * (R - 5.0),
                cx + c * (R + 5.0),
                cy + s * (R + 5.0),
                "#999",
                1.0,
                false,
            );
        }
    }
    let max_count = visits.iter().map(|v| v.1).max().unwrap_or(1) as f64;
    let ring_labels = visits.len() <= MAX_RING_LABELS;
    for (p, count) in &visits {
        let a = std::f64::consts::TAU * p.turns_f64();
        let (c, s) = (a.cos(), -a.sin());
        // Shrink dots on crowded wheels so neighbours do not touch.
        let spacing = std::f64::consts::TAU * R / visits.len().max(1) as f64;
        let r_dot = (4.0 + 4.0 * (*count as f64 / max_count).sqrt()).min(spacing / 2.6);
        svg.line(cx, cy, cx + c * R, cy + s * R, "#c9d6e8", 1.0, false);
        svg.circle(cx + c * R, cy + s * R, r_dot, "#1f5fa8", "#12396a");
        if ring_labels {
            let (lx, ly) = (cx + c * (R + 16.0), cy + s * (R + 16.0));
            let anchor = if c > 0.3 {
                "start"
            } else if c < -0.3 {
                "end"
            } else {
                "middle"
            };
            let dy = if s > 0.3 {
                12.0
            } else if s < -0.3 {
                -2.0
            } else {
                4.0
            };
            svg.text(
                lx,
                ly + dy - 6.0,
                10.5,
                anchor,
                "#222",
                &format!("{} turn", format_phase(p)),
            );
            svg.text(
                lx,
                ly + dy + 6.0,
                10.0,
                anchor,
                "#666",
                &format!("{} ×{count}", degrees_text(p)),
            );
        }
    }
    if !ring_labels {
        let mut list: Vec<String> = vec!["turns:".into()];
        list.extend(visits.iter().map(|(p, _)| format_phase(p)));
        for (i, chunk) in list.chunks(8).take(3).enumerate() {
            svg.text(
                cx,
                cy + R + 30.0 + 12.0 * i as f64,
                9.5,
                "middle",
                "#333",
                &chunk.join("  "),
            );
        }
    }
}
