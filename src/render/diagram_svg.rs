//! Double-sided diagrams as SVG: two vertical lines (ket left, bra right, time upward), one
//! arrow per interaction labelled with its wavevector (k with the field name as subscript), the
//! density-matrix element written between the lines in each interval, the delays t1, t2, ...
//! bracketed at the right, and the detection step on top. Every size comes from the bundled
//! font's metrics ([`super::fonts`]), so labels never overlap each other or a line; the layout
//! is a [`Scene`] whose boxes the tests check. NMR experiments get coherence-transfer pathway
//! diagrams instead ([`super::ctp_svg`]).

use super::fonts::{ascent_descent, text_width, wrap};
use super::scene::{Anchor, Scene, Span};
use super::{arrow_heading, element_label};
use crate::model::{Detection, Experiment};
use crate::pathways::{Direction, Element, Interaction, Pathway, Side};

/// Vertical distance between successive interactions.
const STEP: f64 = 46.0;
/// Horizontal and vertical extent of an interaction arrow.
const ADX: f64 = 34.0;
const ADY: f64 = 16.0;
/// Inner margin of a cell.
const PAD: f64 = 9.0;
/// Clearance between an element label and each line.
const GAP_PAD: f64 = 7.0;
/// Text sizes: element labels, arrow labels, header, signature, detection, title.
const EL: f64 = 11.0;
const KS: f64 = 11.0;
pub(super) const HS: f64 = 12.0;
pub(super) const SS: f64 = 10.5;
const DS: f64 = 10.0;
const TS: f64 = 15.0;
/// Narrowest cell and widest sheet (columns are dropped beyond it).
const MIN_CELL_W: f64 = 190.0;
const MAX_SHEET_W: f64 = 1100.0;
const MAX_COLS: usize = 4;
/// A sheet is at least this wide when its title needs it.
const MIN_TITLE_W: f64 = 640.0;
/// Colours of absorption, emission and the detected signal.
const UP: &str = "#1f5fa8";
const DOWN: &str = "#b5451b";
const SIGNAL: &str = "#2d7d46";

/// The SVG of a sheet of diagrams, several per row, each captioned with its class and signature.
pub fn diagrams_svg(exp: &Experiment, pathways: &[Pathway], title: &str) -> String {
    diagrams_scene(exp, pathways, title).to_svg()
}

/// The laid-out sheet (NMR experiments: coherence-transfer pathway diagrams).
pub fn diagrams_scene(exp: &Experiment, pathways: &[Pathway], title: &str) -> Scene {
    if matches!(exp.detection, Detection::Nmr { .. })
        || pathways.iter().any(|p| !p.coherence_orders.is_empty())
    {
        return super::ctp_svg::ctp_scene(exp, pathways, title);
    }
    let m = Measures::of(exp, pathways);
    let cols = grid_columns(pathways.len(), m.cell_w);
    let rows = pathways.len().div_ceil(cols).max(1);
    let mut scene = Scene::new();
    scene.width = sheet_width(m.cell_w * cols as f64 + 20.0, title);
    let title_w = scene.width - 20.0;
    let top = title_block(&mut scene, title, title_w);
    let cell_h = pathways
        .iter()
        .enumerate()
        .map(|(k, p)| cell_height(exp, p, k + 1, &m))
        .fold(0.0, f64::max);
    scene.height = top + cell_h * rows as f64 + 10.0;
    for (k, p) in pathways.iter().enumerate() {
        let x0 = 10.0 + m.cell_w * (k % cols) as f64;
        let y0 = top + cell_h * (k / cols) as f64;
        draw_one(&mut scene, exp, p, (x0, y0), cell_h, k + 1, &m);
    }
    scene
}

/// How many cells side by side: at most four, and no wider than the sheet allows.
pub(super) fn grid_columns(n: usize, cell_w: f64) -> usize {
    let fit = ((MAX_SHEET_W - 20.0) / cell_w).floor().max(1.0) as usize;
    MAX_COLS.min(n.max(1)).min(fit)
}

/// Width of a sheet whose cells need `cells`: wide enough for the title on one line up to
/// [`MIN_TITLE_W`], so a sheet of one narrow cell does not stack its title word by word.
pub(super) fn sheet_width(cells: f64, title: &str) -> f64 {
    cells.max((text_width(title, TS) + 20.0).min(MIN_TITLE_W))
}

/// The sheet title wrapped to `width`; returns the y where the cells start.
pub(super) fn title_block(scene: &mut Scene, title: &str, width: f64) -> f64 {
    let (a, d) = ascent_descent(TS);
    let mut y = 8.0 + a;
    for line in wrap(title, TS, width) {
        scene.text(10.0, y, TS, Anchor::Start, "#222", &line);
        y += a + d + 2.0;
    }
    y - a + 6.0
}

/// Widths shared by every cell of a sheet.
struct Measures {
    /// Widest ket-side and bra-side arrow label.
    ket_w: f64,
    bra_w: f64,
    /// Distance between the two lines.
    gap: f64,
    /// Widest delay label.
    delay_w: f64,
    /// Width of the drawing (without header), and of the cell.
    content_w: f64,
    cell_w: f64,
}

impl Measures {
    fn of(exp: &Experiment, pathways: &[Pathway]) -> Measures {
        let ground = ground(exp);
        let mut el_w: f64 = text_width(&element_label(exp, &ground), EL);
        let (mut ket_w, mut bra_w, mut delays) = (0.0f64, 0.0f64, 1usize);
        for p in pathways {
            for e in &p.elements {
                el_w = el_w.max(text_width(&element_label(exp, e), EL));
            }
            for i in &p.interactions {
                let w = scene_width(&k_label(exp, i));
                match i.side {
                    Side::Ket => ket_w = ket_w.max(w),
                    Side::Bra => bra_w = bra_w.max(w),
                }
            }
            delays = delays.max(delay_intervals(exp, p, 0.0, 0.0).len());
        }
        let gap = (el_w + 2.0 * GAP_PAD).max(56.0);
        let delay_w = scene_width(&delay_spans(delays.max(1)));
        let content_w = PAD + ket_w + 5.0 + ADX + gap + ADX + 5.0 + bra_w + 12.0 + delay_w + PAD;
        Measures {
            ket_w,
            bra_w,
            gap,
            delay_w,
            content_w,
            cell_w: content_w.max(MIN_CELL_W),
        }
    }
}

fn scene_width(spans: &[Span]) -> f64 {
    super::scene::Label {
        x: 0.0,
        y: 0.0,
        size: KS,
        anchor: Anchor::Start,
        fill: String::new(),
        spans: spans.to_vec(),
        vertical: false,
    }
    .advance()
}

fn ground(exp: &Experiment) -> Element {
    let g = exp.levels.as_ref().map(|l| l.ground).unwrap_or(0);
    Element { ket: g, bra: g }
}

/// Text with each hyphen-minus set as the typographic minus sign (U+2212).
pub(super) fn minus(text: &str) -> String {
    text.replace('-', "\u{2212}")
}

/// `+k` or `−k` with the field name as subscript.
fn k_label(exp: &Experiment, i: &Interaction) -> Vec<Span> {
    let sign = if i.phase_sign() > 0 { "+" } else { "\u{2212}" };
    vec![
        Span::base(format!("{sign}k")),
        Span::sub(exp.fields[i.field].name.clone()),
    ]
}

fn delay_spans(k: usize) -> Vec<Span> {
    vec![Span::base("t"), Span::sub(k.to_string())]
}

/// The header lines of a cell: number, class, sign; then the signature.
fn header_lines(p: &Pathway, number: usize, width: f64) -> Vec<(f64, String)> {
    let class = match p.population_class {
        Some(pc) => format!("{} {}", p.class.short(), pc.short()),
        None => p.class.short().to_string(),
    };
    let conj = if p.conjugate { " (c.c.)" } else { "" };
    let first = format!(
        "#{number}  {class}{conj}  sign {}",
        minus(&format!("{:+}", p.sign))
    );
    header_block(&first, p, width)
}

/// A cell's header: `first` wrapped in the header size, then the pathway's signature `b = ...`
/// in the smaller size (shared with the coherence-transfer diagrams).
pub(super) fn header_block(first: &str, p: &Pathway, width: f64) -> Vec<(f64, String)> {
    let mut out: Vec<(f64, String)> = wrap(first, HS, width)
        .into_iter()
        .map(|l| (HS, l))
        .collect();
    out.extend(
        wrap(
            &format!("b = {}", minus(&p.signature.to_string())),
            SS,
            width,
        )
        .into_iter()
        .map(|l| (SS, l)),
    );
    out
}

/// The text above the diagram: what is detected.
fn detection_lines(exp: &Experiment, p: &Pathway, width: f64) -> Vec<String> {
    let text = match exp.detection {
        Detection::Population => format!(
            "detect {}, weight {:+.3}",
            element_label(exp, &p.final_element),
            p.weight
        ),
        _ => {
            let reference = exp
                .detector_field()
                .map(|j| exp.fields[j].name.clone())
                .unwrap_or_default();
            format!("signal × {reference}")
        }
    };
    wrap(&text, DS, width)
}

/// Height of one text line of `size` (ascent, descent and a point of leading).
pub(super) fn line_h(size: f64) -> f64 {
    let (a, d) = ascent_descent(size);
    a + d + 1.0
}

fn cell_height(exp: &Experiment, p: &Pathway, number: usize, m: &Measures) -> f64 {
    let w = m.cell_w - 2.0 * PAD;
    let head: f64 = header_lines(p, number, w)
        .iter()
        .map(|(s, _)| line_h(*s))
        .sum();
    let det = detection_lines(exp, p, w).len() as f64 * line_h(DS);
    PAD + head + 4.0 + det + 4.0 + ADY + STEP * (p.interactions.len() as f64 + 1.0) + PAD + 8.0
}

/// The delays of a pathway as (label number, lower y, upper y): between interactions of
/// different pulses, and after the last one for coherent detection (the emitting coherence).
fn delay_intervals(exp: &Experiment, p: &Pathway, bottom: f64, top: f64) -> Vec<(f64, f64)> {
    let y = |i: usize| bottom - STEP * (i as f64 + 1.0);
    let n = p.interactions.len();
    let mut out = Vec::new();
    for i in 0..n.saturating_sub(1) {
        if p.interactions[i].field != p.interactions[i + 1].field {
            out.push((y(i), y(i + 1)));
        }
    }
    if n > 0 && !matches!(exp.detection, Detection::Population) {
        out.push((y(n - 1), top));
    }
    out
}

fn draw_one(
    scene: &mut Scene,
    exp: &Experiment,
    p: &Pathway,
    (x0, y0): (f64, f64),
    h: f64,
    number: usize,
    m: &Measures,
) {
    scene.rect(x0 + 2.0, y0, m.cell_w - 4.0, h - 6.0, "#fbfbf8", "#d8d8d0");
    let w = m.cell_w - 2.0 * PAD;
    let mut y = y0 + PAD;
    for (size, line) in header_lines(p, number, w) {
        let (a, d) = ascent_descent(size);
        let fill = if size == HS { "#222" } else { "#555" };
        scene.text(x0 + PAD, y + a, size, Anchor::Start, fill, &line);
        y += a + d + 1.0;
    }
    let n = p.interactions.len();
    let bottom = y0 + h - 6.0 - PAD - 8.0;
    let top = bottom - STEP * (n as f64 + 1.0);
    let shift = x0 + (m.cell_w - m.content_w) / 2.0;
    let lx = shift + PAD + m.ket_w + 5.0 + ADX;
    let rx = lx + m.gap;
    // The detection text, then the diagram below it.
    let det = detection_lines(exp, p, w);
    let (a, d) = ascent_descent(DS);
    let mut ty = top - ADY / 2.0 - 4.0 - (det.len() as f64 - 1.0) * line_h(DS) - d;
    for line in &det {
        scene.text((lx + rx) / 2.0, ty, DS, Anchor::Middle, SIGNAL, line);
        ty += a + d + 1.0;
    }
    scene.line((lx, top), (lx, bottom), "#333", 1.6, false, true);
    scene.line((rx, top), (rx, bottom), "#333", 1.6, false, true);
    element_text(
        scene,
        exp,
        &ground(exp),
        (lx + rx) / 2.0,
        bottom - STEP / 2.0,
    );
    for (i, inter) in p.interactions.iter().enumerate() {
        let yc = bottom - STEP * (i as f64 + 1.0);
        interaction_arrow(scene, exp, inter, (lx, rx), yc);
        element_text(scene, exp, &p.elements[i], (lx + rx) / 2.0, yc - STEP / 2.0);
    }
    if !matches!(exp.detection, Detection::Population) {
        // The emitted signal leaves the ket (the bra for the conjugate partner), dashed.
        let (x, out) = if p.conjugate { (rx, 1.0) } else { (lx, -1.0) };
        scene.arrow(
            (x, top + ADY / 2.0),
            (x + out * ADX, top - ADY / 2.0),
            SIGNAL,
            true,
        );
    }
    let xd = rx + ADX + 5.0 + m.bra_w + 8.0;
    for (k, (lo, hi)) in delay_intervals(exp, p, bottom, top).into_iter().enumerate() {
        let (y1, y2) = (lo - 5.0, hi + 5.0);
        scene.line((xd, y1), (xd, y2), "#888", 1.0, false, true);
        scene.line((xd, y1), (xd + 3.0, y1), "#888", 1.0, false, true);
        scene.line((xd, y2), (xd + 3.0, y2), "#888", 1.0, false, true);
        let mid = (y1 + y2) / 2.0 + 0.35 * KS;
        scene.rich(xd + 5.0, mid, KS, Anchor::Start, "#555", delay_spans(k + 1));
    }
    debug_assert!(xd + 5.0 + m.delay_w <= shift + m.content_w + 1e-6);
}

/// One interaction: forward in time (upward), pointing at its line for absorption and away
/// from it for emission — the heading [`arrow_heading`] gives the text diagrams too.
fn interaction_arrow(
    scene: &mut Scene,
    exp: &Experiment,
    i: &Interaction,
    (lx, rx): (f64, f64),
    yc: f64,
) {
    let (x_line, outward) = match i.side {
        Side::Ket => (lx, -1.0),
        Side::Bra => (rx, 1.0),
    };
    let colour = match i.direction {
        Direction::Up => UP,
        Direction::Down => DOWN,
    };
    let far = x_line + outward * ADX;
    let (lo, hi) = (yc + ADY / 2.0, yc - ADY / 2.0);
    if arrow_heading(i) as f64 == -outward {
        scene.arrow((far, lo), (x_line, hi), colour, false);
    } else {
        scene.arrow((x_line, lo), (far, hi), colour, false);
    }
    let anchor = if outward < 0.0 {
        Anchor::End
    } else {
        Anchor::Start
    };
    scene.rich(
        far + outward * 5.0,
        yc + 0.35 * KS,
        KS,
        anchor,
        colour,
        k_label(exp, i),
    );
}

fn element_text(scene: &mut Scene, exp: &Experiment, e: &Element, x: f64, y_mid: f64) {
    scene.text(
        x,
        y_mid + 0.35 * EL,
        EL,
        Anchor::Middle,
        "#111",
        &element_label(exp, e),
    );
}
