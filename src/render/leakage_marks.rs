//! The marks of the leakage chart — one shape per kind of term, the legend that explains
//! them — and the three-significant-digit form of |F| its labels use.

use super::fonts::{ascent_descent, text_width};
use super::scene::{Anchor, BBox, Scene};

/// A value with three significant digits: `0.500`, `9.12e-6`, `1`.
pub fn significant(x: f64) -> String {
    if x == 0.0 || !x.is_finite() {
        return format!("{x}");
    }
    let e = x.abs().log10().floor() as i32;
    if (-2..3).contains(&e) {
        let decimals = (2 - e).max(0) as usize;
        format!("{x:.decimals$}")
    } else {
        let m = x / 10f64.powi(e);
        // Rounding can carry the mantissa to 10.0.
        let (m, e) = if (m.abs() * 100.0).round() >= 1000.0 {
            (m / 10.0, e + 1)
        } else {
            (m, e)
        };
        format!("{m:.2}e{e}")
    }
}

/// The legend in rows no wider than `w`; returns the y below it.
pub(super) fn legend(scene: &mut Scene, x0: f64, y: f64, w: f64) -> f64 {
    let items: [(&str, &str); 5] = [
        ("wanted", "wanted term"),
        ("leak", "leak (F ≠ 0)"),
        ("conj", "conjugate of a wanted term"),
        ("exact0", "F = 0 exactly"),
        ("num0", "F ≈ 0 within the table's precision"),
    ];
    let (a, d) = ascent_descent(11.0);
    let (mut x, mut y) = (x0, y + a);
    for (kind, text) in items {
        let item_w = 16.0 + text_width(text, 11.0) + 18.0;
        if x > x0 && x + item_w > x0 + w {
            x = x0;
            y += a + d + 4.0;
        }
        marker(scene, kind, x + 6.0, y - 0.35 * 11.0);
        scene.text(x + 16.0, y, 11.0, Anchor::Start, "#333", text);
        x += item_w;
    }
    y + d
}

pub(super) fn marker(scene: &mut Scene, kind: &str, x: f64, y: f64) {
    let (markup, r) = match kind {
        "wanted" => (format!(
            "<polygon points=\"{:.1},{:.1} {:.1},{:.1} {:.1},{:.1} {:.1},{:.1}\" fill=\"#2d7d46\"/>",
            x, y - 6.0, x + 6.0, y, x, y + 6.0, x - 6.0, y
        ), 6.0),
        "lost" => (format!(
            "<polygon points=\"{:.1},{:.1} {:.1},{:.1} {:.1},{:.1} {:.1},{:.1}\" fill=\"none\" stroke=\"#2d7d46\" stroke-width=\"1.5\"/>",
            x, y - 6.0, x + 6.0, y, x, y + 6.0, x - 6.0, y
        ), 6.8),
        "leak" => (circle(x, y, "#c0392b", "#7b241c"), 4.1),
        "conj" => (circle(x, y, "#8e44ad", "#5b2c6f"), 4.1),
        "exact0" => (format!(
            "<rect x=\"{:.1}\" y=\"{:.1}\" width=\"6.4\" height=\"6.4\" fill=\"none\" stroke=\"#888\"/>",
            x - 3.2, y - 3.2
        ), 3.7),
        _ => (format!(
            "<polygon points=\"{:.1},{:.1} {:.1},{:.1} {:.1},{:.1}\" fill=\"none\" stroke=\"#d68910\"/>",
            x, y - 4.0, x + 4.0, y + 3.5, x - 4.0, y + 3.5
        ), 4.5),
    };
    let bbox = BBox {
        x0: x - r,
        y0: y - r,
        x1: x + r,
        y1: y + r,
    };
    scene.mark(markup, bbox, true);
}

fn circle(x: f64, y: f64, fill: &str, stroke: &str) -> String {
    format!("<circle cx=\"{x:.1}\" cy=\"{y:.1}\" r=\"3.6\" fill=\"{fill}\" stroke=\"{stroke}\"/>")
}
