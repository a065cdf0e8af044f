//! Double-sided diagrams as SVG: two vertical lines (ket left, bra right), one arrow per
//! interaction, the density-matrix element written between the lines after each interaction,
//! and the detection step on top.

use super::svg::Svg;
use super::{element_label, sequence_label};
use crate::model::{Detection, Experiment};
use crate::pathways::{Direction, Pathway, Side};

const CELL_W: f64 = 190.0;
const STEP_H: f64 = 46.0;
const HEAD_H: f64 = 58.0;
const COLS: usize = 4;

/// Draw a sheet of diagrams, `COLS` per row, each captioned with its class and signature.
pub fn diagrams_svg(exp: &Experiment, pathways: &[Pathway], title: &str) -> String {
    let depth = pathways
        .iter()
        .map(|p| p.interactions.len().max(p.coherence_orders.len()))
        .max()
        .unwrap_or(1);
    let cell_h = HEAD_H + STEP_H * (depth as f64 + 1.5) + 30.0;
    let cols = COLS.min(pathways.len().max(1));
    let rows = pathways.len().div_ceil(cols).max(1);
    let mut svg = Svg::new(CELL_W * cols as f64 + 20.0, cell_h * rows as f64 + 40.0);
    svg.text(10.0, 22.0, 15.0, "start", "#222", title);
    for (k, p) in pathways.iter().enumerate() {
        let x0 = 10.0 + CELL_W * (k % cols) as f64;
        let y0 = 34.0 + cell_h * (k / cols) as f64;
        draw_one(&mut svg, exp, p, x0, y0, cell_h, k + 1);
    }
    svg.finish()
}

fn draw_one(svg: &mut Svg, exp: &Experiment, p: &Pathway, x0: f64, y0: f64, h: f64, number: usize) {
    svg.rect(x0 + 2.0, y0, CELL_W - 8.0, h - 8.0, "#fbfbf8", "#d8d8d0");
    let class = match p.population_class {
        Some(pc) => format!("{} {}", p.class.short(), pc.short()),
        None => p.class.short().to_string(),
    };
    let conj = if p.conjugate { " (c.c.)" } else { "" };
    svg.text(
        x0 + 10.0,
        y0 + 18.0,
        12.0,
        "start",
        "#222",
        &format!("#{number}  {class}{conj}  sign {:+}", p.sign),
    );
    svg.text(
        x0 + 10.0,
        y0 + 34.0,
        11.0,
        "start",
        "#555",
        &p.signature.to_string(),
    );
    if !p.coherence_orders.is_empty() {
        svg.text(
            x0 + 10.0,
            y0 + 52.0,
            11.0,
            "start",
            "#333",
            &format!("p: {}", sequence_label(exp, p)),
        );
        return;
    }
    let n = p.interactions.len();
    let (lx, rx) = (x0 + 70.0, x0 + 120.0);
    let bottom = y0 + h - 26.0;
    let top = bottom - STEP_H * (n as f64 + 1.0);
    svg.line(lx, top, lx, bottom, "#333", 1.6, false);
    svg.line(rx, top, rx, bottom, "#333", 1.6, false);
    let ground = exp.levels.as_ref().map(|l| l.ground).unwrap_or(0);
    let start = crate::pathways::Element {
        ket: ground,
        bra: ground,
    };
    label_between(svg, exp, &start, lx, rx, bottom - 10.0);
    for (i, inter) in p.interactions.iter().enumerate() {
        let y = bottom - STEP_H * (i as f64 + 1.0) + 12.0;
        let (x_line, outward) = match inter.side {
            Side::Ket => (lx, -1.0),
            Side::Bra => (rx, 1.0),
        };
        let colour = match inter.direction {
            Direction::Up => "#1f5fa8",
            Direction::Down => "#b5451b",
        };
        // Forward in time (upward), pointing at the line for absorption and away from it for
        // emission: the heading the text diagrams use too.
        let far = x_line + outward * 38.0;
        if super::arrow_heading(inter) as f64 == -outward {
            svg.arrow(far, y + 14.0, x_line, y, colour, false);
        } else {
            svg.arrow(x_line, y, far, y - 14.0, colour, false);
        }
        let sign = if inter.phase_sign() > 0 { "+" } else { "-" };
        let name = &exp.fields[inter.field].name;
        let anchor = if outward < 0.0 { "end" } else { "start" };
        svg.text(
            far + outward * 3.0,
            y + 4.0,
            10.5,
            anchor,
            colour,
            &format!("{sign}k{name}"),
        );
        label_between(svg, exp, &p.elements[i], lx, rx, y - 10.0);
    }
    // Detection step on top, above the two lines.
    let y = top - 4.0;
    match exp.detection {
        Detection::Population => {
            svg.text(
                (lx + rx) / 2.0,
                y - 2.0,
                10.0,
                "middle",
                "#2d7d46",
                &format!(
                    "detect {}  (w {:+.3})",
                    element_label(exp, &p.final_element),
                    p.weight
                ),
            );
        }
        _ => {
            let reference = exp
                .detector_field()
                .map(|j| exp.fields[j].name.clone())
                .unwrap_or_default();
            let side_x = if p.conjugate { rx } else { lx };
            let out = if p.conjugate { 1.0 } else { -1.0 };
            svg.arrow(
                side_x,
                y + 10.0,
                side_x + out * 38.0,
                y - 4.0,
                "#2d7d46",
                true,
            );
            svg.text(
                (lx + rx) / 2.0,
                y - 4.0,
                10.0,
                "middle",
                "#2d7d46",
                &format!("signal × {reference}"),
            );
        }
    }
}

fn label_between(
    svg: &mut Svg,
    exp: &Experiment,
    e: &crate::pathways::Element,
    lx: f64,
    rx: f64,
    y: f64,
) {
    svg.text(
        (lx + rx) / 2.0,
        y,
        11.0,
        "middle",
        "#111",
        &element_label(exp, e),
    );
}
