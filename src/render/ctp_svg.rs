//! Coherence-transfer pathway diagrams for NMR experiments (the form NMR papers draw: one
//! horizontal line per coherence order p, the pulses as bars above, the pathway as a thick line
//! that holds its order between pulses and jumps at each pulse). One panel per pathway, laid
//! out as a [`Scene`] with measured boxes, like the double-sided diagrams.

use super::diagram_svg::{grid_columns, header_block, line_h, sheet_width, title_block, HS};
use super::fonts::{ascent_descent, text_width};
use super::scene::{Anchor, Scene, Span};
use crate::model::{Detection, Experiment};
use crate::pathways::Pathway;

const PAD: f64 = 9.0;
/// Vertical distance between coherence levels.
const ROW: f64 = 18.0;
/// Narrowest interval between pulses.
const MIN_SEG: f64 = 46.0;
const LS: f64 = 10.0;
const MIN_CELL_W: f64 = 200.0;
const PATH: &str = "#1f5fa8";

/// Coherence orders of `p` written with signs: `0 → +3 → +1 → −1`.
fn orders_text(p: &Pathway) -> String {
    p.coherence_orders
        .iter()
        .map(|o| signed(i64::from(*o)))
        .collect::<Vec<_>>()
        .join(" → ")
}

fn signed(v: i64) -> String {
    match v {
        0 => "0".into(),
        v if v > 0 => format!("+{v}"),
        v => format!("\u{2212}{}", -v),
    }
}

struct Grid {
    /// Largest |p| drawn.
    levels: i64,
    /// Width of the widest level label.
    label_w: f64,
    /// Interval between pulses.
    seg: f64,
    /// Number of pulses drawn.
    pulses: usize,
    cell_w: f64,
}

/// The laid-out sheet of coherence-transfer pathway diagrams.
pub fn ctp_scene(exp: &Experiment, pathways: &[Pathway], title: &str) -> Scene {
    let g = grid_of(exp, pathways);
    let cols = grid_columns(pathways.len(), g.cell_w);
    let rows = pathways.len().div_ceil(cols).max(1);
    let mut scene = Scene::new();
    scene.width = sheet_width(g.cell_w * cols as f64 + 20.0, title);
    let title_w = scene.width - 20.0;
    let top = title_block(&mut scene, title, title_w);
    let cell_h = pathways
        .iter()
        .enumerate()
        .map(|(k, p)| header(p, k + 1, g.cell_w - 2.0 * PAD).len() as f64)
        .fold(0.0, f64::max)
        * line_h(HS)
        + body_h(&g)
        + 2.0 * PAD
        + 6.0;
    scene.height = top + cell_h * rows as f64 + 10.0;
    for (k, p) in pathways.iter().enumerate() {
        let x0 = 10.0 + g.cell_w * (k % cols) as f64;
        let y0 = top + cell_h * (k / cols) as f64;
        panel(&mut scene, exp, p, &g, (x0, y0), cell_h, k + 1);
    }
    scene
}

/// Pulse names, the grid of levels, the delay labels below it.
fn body_h(g: &Grid) -> f64 {
    line_h(LS) + 14.0 + ROW * (2 * g.levels) as f64 + 12.0 + line_h(LS) + 4.0
}

fn grid_of(exp: &Experiment, pathways: &[Pathway]) -> Grid {
    let declared = match exp.detection {
        Detection::Nmr { max_coherence, .. } => i64::from(max_coherence),
        _ => 1,
    };
    let levels = pathways
        .iter()
        .flat_map(|p| p.coherence_orders.iter().map(|o| i64::from(o.abs())))
        .fold(declared.max(1), i64::max);
    let label_w = (-levels..=levels)
        .map(|v| text_width(&signed(v), LS))
        .fold(0.0, f64::max);
    let pulses = pathways
        .iter()
        .map(|p| p.coherence_orders.len().saturating_sub(1))
        .max()
        .unwrap_or(0);
    let names = exp
        .pulse_indices()
        .into_iter()
        .map(|j| text_width(&exp.fields[j].name, LS))
        .fold(0.0, f64::max);
    let delay_w = text_width("t", LS) + text_width(&pulses.to_string(), LS * 0.72);
    let seg = MIN_SEG.max(names + 12.0).max(delay_w + 12.0);
    let grid_w = seg * (pulses as f64 + 1.0);
    let cell_w = (PAD + label_w + 8.0 + grid_w + PAD).max(MIN_CELL_W);
    Grid {
        levels,
        label_w,
        seg,
        pulses,
        cell_w,
    }
}

fn header(p: &Pathway, number: usize, width: f64) -> Vec<(f64, String)> {
    header_block(&format!("#{number}  p: {}", orders_text(p)), p, width)
}

fn panel(
    scene: &mut Scene,
    exp: &Experiment,
    p: &Pathway,
    g: &Grid,
    (x0, y0): (f64, f64),
    h: f64,
    number: usize,
) {
    scene.rect(x0 + 2.0, y0, g.cell_w - 4.0, h - 6.0, "#fbfbf8", "#d8d8d0");
    let mut y = y0 + PAD;
    for (size, line) in header(p, number, g.cell_w - 2.0 * PAD) {
        let (a, d) = ascent_descent(size);
        scene.text(x0 + PAD, y + a, size, Anchor::Start, "#222", &line);
        y += a + d + 1.0;
    }
    let body_top = y0 + h - 6.0 - PAD - body_h(g);
    let gx = x0 + PAD + g.label_w + 8.0;
    let gx1 = gx + g.seg * (g.pulses as f64 + 1.0);
    let (a, _) = ascent_descent(LS);
    let names_y = body_top + a;
    let bar_top = body_top + line_h(LS) + 2.0;
    let level_top = bar_top + 12.0;
    let y_of = |o: i64| level_top + ROW * (g.levels - o) as f64;
    let px = |j: usize| gx + g.seg * (j as f64 + 1.0);
    let pulses = exp.pulse_indices();
    for j in 0..g.pulses {
        let name = pulses
            .get(j)
            .map_or_else(|| format!("{}", j + 1), |&f| exp.fields[f].name.clone());
        scene.text(px(j), names_y, LS, Anchor::Middle, "#333", &name);
        scene.rect(px(j) - 3.0, bar_top, 6.0, 9.0, "#555", "#333");
        scene.line(
            (px(j), level_top - 4.0),
            (px(j), y_of(-g.levels) + 4.0),
            "#ccc",
            1.0,
            true,
            false,
        );
    }
    for o in -g.levels..=g.levels {
        let stroke = if o == 0 { "#999" } else { "#e0e0dc" };
        scene.line((gx, y_of(o)), (gx1, y_of(o)), stroke, 1.0, false, false);
        scene.text(
            gx - 6.0,
            y_of(o) + 0.35 * LS,
            LS,
            Anchor::End,
            "#555",
            &signed(o),
        );
    }
    // The pathway: hold each order through its interval, jump at each pulse.
    let orders: Vec<i64> = p.coherence_orders.iter().map(|&o| i64::from(o)).collect();
    for (k, &o) in orders.iter().enumerate() {
        let xa = if k == 0 { gx } else { px(k - 1) };
        let xb = if k + 1 < orders.len() { px(k) } else { gx1 };
        scene.line((xa, y_of(o)), (xb, y_of(o)), PATH, 2.4, false, true);
        if let Some(&next) = orders.get(k + 1) {
            scene.line((xb, y_of(o)), (xb, y_of(next)), PATH, 2.4, false, true);
        }
    }
    // The delays: t_k after pulse k, under the grid.
    let ty = y_of(-g.levels) + 12.0 + a;
    for j in 0..g.pulses {
        let xa = px(j);
        let xb = if j + 1 < g.pulses { px(j + 1) } else { gx1 };
        scene.rich(
            (xa + xb) / 2.0,
            ty,
            LS,
            Anchor::Middle,
            "#555",
            vec![Span::base("t"), Span::sub((j + 1).to_string())],
        );
    }
}
