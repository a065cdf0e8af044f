//! A compact terminal form of a double-sided diagram: one row per interaction, bottom (first)
//! to top (last), with the element after each step between the two lines.

use super::element_label;
use crate::model::Experiment;
use crate::pathways::{Direction, Pathway, Side};
use std::fmt::Write;

/// Render one pathway as lines of text, latest interaction on top.
pub fn diagram_text(exp: &Experiment, p: &Pathway) -> String {
    let mut rows: Vec<String> = Vec::new();
    if !p.coherence_orders.is_empty() {
        let orders: Vec<String> = p
            .coherence_orders
            .iter()
            .map(|o| format!("{o:+}"))
            .collect();
        return format!("  coherence orders: {}\n", orders.join(" → "));
    }
    let ground = exp.levels.as_ref().map(|l| l.ground).unwrap_or(0);
    rows.push(format!(
        "      {:^12}",
        element_label(
            exp,
            &crate::pathways::Element {
                ket: ground,
                bra: ground
            }
        )
    ));
    for (i, inter) in p.interactions.iter().enumerate() {
        let arrow = match inter.direction {
            Direction::Up => "↗",
            Direction::Down => "↘",
        };
        let name = &exp.fields[inter.field].name;
        let sign = if inter.phase_sign() > 0 { "+" } else { "-" };
        let row = match inter.side {
            Side::Ket => format!("{sign}k{name:<3}{arrow}|          |"),
            Side::Bra => format!("      |          |{arrow}{sign}k{name}"),
        };
        rows.push(row);
        rows.push(format!("      {:^12}", element_label(exp, &p.elements[i])));
    }
    let mut out = String::new();
    for r in rows.iter().rev() {
        let _ = writeln!(out, "  {r}");
    }
    out
}
