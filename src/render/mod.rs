//! Renderers that turn library results into text or SVG bytes. No rendering here decides
//! anything: each takes a finished result struct.

pub mod combine_text;
pub mod contour;
pub mod ctp_svg;
pub mod design_summary;
pub mod diagram_svg;
pub mod diagram_text;
pub mod fonts;
pub mod leakage;
pub mod leakage_marks;
pub mod leakage_svg;
pub mod origin;
#[cfg(feature = "png")]
pub mod png;
pub mod scene;
pub mod spectrum_svg;
pub mod svg;
pub mod weight_text;
pub mod wheels_svg;

use crate::model::Experiment;
use crate::pathways::{Direction, Element, Interaction, Pathway, Side};

/// The horizontal way an interaction's arrow points in a double-sided diagram (time upward,
/// ket line left, bra line right; every arrow goes forward in time): absorption points at its
/// line, emission away from it. `1` is rightward, `-1` leftward; it equals the interaction's
/// phase sign (a `+k` arrow points right). The SVG and the text diagrams both draw from it.
pub fn arrow_heading(i: &Interaction) -> i64 {
    match (i.side, i.direction) {
        (Side::Ket, Direction::Up) | (Side::Bra, Direction::Down) => 1,
        (Side::Ket, Direction::Down) | (Side::Bra, Direction::Up) => -1,
    }
}

/// `|ket><bra|` with state names.
pub fn element_label(exp: &Experiment, e: &Element) -> String {
    match &exp.levels {
        Some(l) => format!("|{}><{}|", l.name(e.ket), l.name(e.bra)),
        None => format!("|{}><{}|", e.ket, e.bra),
    }
}

/// A compact form of one interaction: `p1:bra↑`.
pub fn interaction_label(exp: &Experiment, i: &Interaction) -> String {
    let side = match i.side {
        Side::Ket => "ket",
        Side::Bra => "bra",
    };
    let arrow = match i.direction {
        Direction::Up => "↑",
        Direction::Down => "↓",
    };
    format!("{}:{side}{arrow}", exp.fields[i.field].name)
}

/// The whole interaction sequence of a pathway, or its coherence orders for NMR.
pub fn sequence_label(exp: &Experiment, p: &Pathway) -> String {
    if !p.coherence_orders.is_empty() {
        return p
            .coherence_orders
            .iter()
            .map(|o| o.to_string())
            .collect::<Vec<_>>()
            .join(" → ");
    }
    p.interactions
        .iter()
        .map(|i| interaction_label(exp, i))
        .collect::<Vec<_>>()
        .join(" ")
}

/// The elements in each delay joined by arrows.
pub fn delays_label(exp: &Experiment, p: &Pathway) -> String {
    p.delays
        .iter()
        .map(|e| element_label(exp, e))
        .collect::<Vec<_>>()
        .join(" → ")
}
