//! The one font every picture is set in and measured with: DejaVu Sans, shipped in
//! `src/render/fonts_data/` (Bitstream Vera licence, which allows redistribution; see
//! `src/render/fonts_data/LICENSE-DejaVu.txt`). Embedding it means the PNG renderer draws text on a
//! fresh machine with no system fonts, and layout tests measure with the same advance widths
//! the renderer uses. SVG files name `DejaVu Sans` first; a viewer without it substitutes a
//! narrower sans-serif, so measured boxes stay conservative.

use std::sync::OnceLock;

/// The TrueType bytes of DejaVu Sans.
pub static DEJAVU_SANS: &[u8] = include_bytes!("fonts_data/DejaVuSans.ttf");

/// The family name written in SVG files.
pub const FAMILY: &str = "DejaVu Sans";

struct Metrics {
    units_per_em: f64,
    ascender: f64,
    descender: f64,
    /// Advance widths of code points 0..0x3000 (font units); `None` where the font has no glyph.
    advances: Vec<Option<u16>>,
}

fn metrics() -> &'static Metrics {
    static M: OnceLock<Metrics> = OnceLock::new();
    M.get_or_init(|| {
        let face = ttf_parser::Face::parse(DEJAVU_SANS, 0).expect("the bundled font parses");
        let advances = (0u32..0x3000)
            .map(|c| {
                char::from_u32(c)
                    .and_then(|ch| face.glyph_index(ch))
                    .and_then(|g| face.glyph_hor_advance(g))
            })
            .collect();
        Metrics {
            units_per_em: f64::from(face.units_per_em()),
            ascender: f64::from(face.ascender()),
            descender: f64::from(face.descender()),
            advances,
        }
    })
}

/// Width in px of `text` set at `size` px (a missing glyph counts as one em, wider than any).
pub fn text_width(text: &str, size: f64) -> f64 {
    let m = metrics();
    let units: f64 = text
        .chars()
        .map(|c| {
            m.advances
                .get(c as usize)
                .copied()
                .flatten()
                .map_or(m.units_per_em, f64::from)
        })
        .sum();
    units / m.units_per_em * size
}

/// Height above the baseline and depth below it (both positive) at `size` px.
pub fn ascent_descent(size: f64) -> (f64, f64) {
    let m = metrics();
    (
        m.ascender / m.units_per_em * size,
        -m.descender / m.units_per_em * size,
    )
}

/// Split `text` into lines no wider than `max_width` px at `size`, breaking at spaces (a
/// single word longer than the width is broken between characters).
pub fn wrap(text: &str, size: f64, max_width: f64) -> Vec<String> {
    let mut lines: Vec<String> = Vec::new();
    let mut line = String::new();
    for word in text.split_whitespace() {
        let candidate = if line.is_empty() {
            word.to_string()
        } else {
            format!("{line} {word}")
        };
        if text_width(&candidate, size) <= max_width {
            line = candidate;
            continue;
        }
        if !line.is_empty() {
            lines.push(std::mem::take(&mut line));
        }
        for ch in word.chars() {
            line.push(ch);
            if text_width(&line, size) > max_width && line.chars().count() > 1 {
                let last = line.pop().expect("non-empty");
                lines.push(std::mem::take(&mut line));
                line.push(last);
            }
        }
    }
    if !line.is_empty() || lines.is_empty() {
        lines.push(line);
    }
    lines
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn widths_follow_the_font() {
        // DejaVu Sans: 'i' is narrower than 'm'; widths scale with size (font design).
        assert!(text_width("i", 10.0) < text_width("m", 10.0));
        let w = text_width("kpu2", 12.0);
        assert!((text_width("kpu2", 24.0) - 2.0 * w).abs() < 1e-9);
        let lines = wrap("a title that is far too long to fit", 12.0, 80.0);
        assert!(lines.len() > 1 && lines.iter().all(|l| text_width(l, 12.0) <= 80.0));
    }
}
