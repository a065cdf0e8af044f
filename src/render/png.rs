//! PNG output of any picture, rendered in pure Rust with resvg and the bundled DejaVu Sans
//! (no system fonts, no external program), so a user can paste a picture into slides and the
//! tests can render every one. Behind the default `png` feature.

use super::fonts::{DEJAVU_SANS, FAMILY};
use std::sync::Arc;

/// Why a picture could not be rendered.
#[derive(Debug, Clone, PartialEq, thiserror::Error)]
pub enum PngError {
    /// The SVG did not parse (a bug in a renderer: please report it).
    #[error("the SVG picture did not parse: {0}")]
    Parse(String),
    /// The picture is empty or too large to rasterise.
    #[error("the picture's size {0} x {1} px at this scale cannot be rasterised; use a smaller --png-scale")]
    Size(u32, u32),
    /// Encoding failed.
    #[error("PNG encoding failed: {0}")]
    Encode(String),
}

/// Largest width or height of a PNG in pixels.
pub const MAX_PNG_SIDE: u32 = 16_384;

/// Render `svg` to PNG bytes at `scale` pixels per SVG unit (2.0 suits slides).
pub fn svg_to_png(svg: &str, scale: f32) -> Result<Vec<u8>, PngError> {
    let mut opt = resvg::usvg::Options {
        font_family: FAMILY.to_string(),
        ..Default::default()
    };
    let mut db = resvg::usvg::fontdb::Database::new();
    db.load_font_data(DEJAVU_SANS.to_vec());
    opt.fontdb = Arc::new(db);
    let tree =
        resvg::usvg::Tree::from_str(svg, &opt).map_err(|e| PngError::Parse(e.to_string()))?;
    let size = tree.size();
    let (w, h) = (
        (size.width() * scale).ceil() as u32,
        (size.height() * scale).ceil() as u32,
    );
    if w == 0 || h == 0 || w > MAX_PNG_SIDE || h > MAX_PNG_SIDE {
        return Err(PngError::Size(w, h));
    }
    let mut pixmap = resvg::tiny_skia::Pixmap::new(w, h).ok_or(PngError::Size(w, h))?;
    resvg::render(
        &tree,
        resvg::tiny_skia::Transform::from_scale(scale, scale),
        &mut pixmap.as_mut(),
    );
    pixmap
        .encode_png()
        .map_err(|e| PngError::Encode(e.to_string()))
}
