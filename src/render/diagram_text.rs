//! A compact terminal form of a double-sided diagram: one row per interaction, bottom (first)
//! to top (last), with the element after each step between the two lines. Arrows point as in
//! the SVG diagrams ([`super::arrow_heading`]): forward in time, at the line for absorption.

use super::{arrow_heading, element_label};
use crate::model::Experiment;
use crate::pathways::{Pathway, Side};
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
    // Ket-side labels are right-aligned against the ket line, as wide as the widest one, so
    // the two lines stay straight for long field names too.
    let label = |inter: &crate::pathways::Interaction| {
        let sign = if inter.phase_sign() > 0 { "+" } else { "-" };
        format!("{sign}k{}", exp.fields[inter.field].name)
    };
    let ket_w = p
        .interactions
        .iter()
        .filter(|i| i.side == Side::Ket)
        .map(|i| label(i).chars().count())
        .max()
        .unwrap_or(0)
        .max(5);
    // The two lines as far apart as the widest element label needs.
    let start = crate::pathways::Element {
        ket: ground,
        bra: ground,
    };
    let inner = std::iter::once(&start)
        .chain(&p.elements)
        .map(|e| element_label(exp, e).chars().count() + 2)
        .max()
        .unwrap_or(0)
        .max(10);
    let indent = " ".repeat(ket_w + 1);
    let lines = format!("|{}|", " ".repeat(inner));
    let cell = inner + 2;
    let between = |e: &crate::pathways::Element| {
        format!("{indent}{:^cell$}", element_label(exp, e))
            .trim_end()
            .to_string()
    };
    rows.push(between(&start));
    for (i, inter) in p.interactions.iter().enumerate() {
        let arrow = if arrow_heading(inter) > 0 {
            "↗"
        } else {
            "↖"
        };
        let row = match inter.side {
            Side::Ket => format!("{:>ket_w$}{arrow}{lines}", label(inter)),
            Side::Bra => format!("{indent}{lines}{arrow}{}", label(inter)),
        };
        rows.push(row);
        rows.push(between(&p.elements[i]));
    }
    let mut out = String::new();
    for r in rows.iter().rev() {
        let _ = writeln!(out, "  {r}");
    }
    out
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::experiment_file::parse_experiment;
    use crate::pathways::{for_each_pathway, Direction, Interaction, Scope};

    #[test]
    fn arrows_point_at_the_line_for_absorption_and_away_for_emission() {
        // Double-sided diagram convention (Mukamel, Principles of Nonlinear Optical
        // Spectroscopy, 1995, ch. 6; Hamm & Zanni, 2011, ch. 4 (memory)): time runs upward,
        // the ket line is on the left, absorption arrows point at their line.
        let at = |side, direction| Interaction {
            field: 0,
            side,
            direction,
            from: 0,
            to: 0,
        };
        assert_eq!(arrow_heading(&at(Side::Ket, Direction::Up)), 1);
        assert_eq!(arrow_heading(&at(Side::Ket, Direction::Down)), -1);
        assert_eq!(arrow_heading(&at(Side::Bra, Direction::Up)), -1);
        assert_eq!(arrow_heading(&at(Side::Bra, Direction::Down)), 1);
    }

    #[test]
    fn text_and_svg_arrows_point_the_same_way() {
        // The rephasing ESA pathway of the g-e-f ladder: bra up (pulse 1), ket up (2), ket up
        // (3). Text: one row per interaction, latest on top, the glyph beside its line; SVG:
        // one arrow per interaction in the laid-out scene, its head at the segment's end.
        let text = "order = 3\n[detection]\nmode = \"emission\"\n[[field]]\nname = \"1\"\n[[field]]\nname = \"2\"\n[[field]]\nname = \"3\"\n[[field]]\nname = \"LO\"\nkind = \"lo\"\n[levels]\nstates = [{ name = \"g\", manifold = 0 }, { name = \"e\", manifold = 1 }, { name = \"f\", manifold = 2 }]\n";
        let e = parse_experiment(text, "t.toml".as_ref()).unwrap();
        let mut all = Vec::new();
        for_each_pathway(&e, Scope::Signal, |p| all.push(p.clone())).unwrap();
        for p in all.iter().flat_map(|p| [p.clone(), p.conjugated()]) {
            let glyphs: Vec<i64> = diagram_text(&e, &p)
                .lines()
                .rev()
                .filter_map(|l| {
                    if l.contains('↗') {
                        Some(1)
                    } else if l.contains('↖') {
                        Some(-1)
                    } else {
                        None
                    }
                })
                .collect();
            let scene =
                crate::render::diagram_svg::diagrams_scene(&e, std::slice::from_ref(&p), "t");
            // The interaction arrows are the first segments with a head, in time order.
            let heads: Vec<i64> = scene
                .segments
                .iter()
                .filter(|s| s.head)
                .take(p.interactions.len())
                .map(|s| {
                    assert!(s.y2 < s.y1, "forward in time: {s:?}");
                    (s.x2 - s.x1).signum() as i64
                })
                .collect();
            let svg = scene.to_svg();
            assert_eq!(svg.matches("<polygon").count(), p.interactions.len() + 1);
            let expected: Vec<i64> = p.interactions.iter().map(arrow_heading).collect();
            assert_eq!(glyphs, expected, "text {:?}", p.interactions);
            assert_eq!(heads, expected, "svg {:?}", p.interactions);
        }
    }
}
