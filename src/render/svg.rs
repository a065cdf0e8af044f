//! A tiny SVG writer: escaped text, lines, arrows and a document frame, shared by every picture.

use std::fmt::Write;

/// An SVG document under construction.
pub struct Svg {
    body: String,
    width: f64,
    height: f64,
}

/// Escape text for XML.
pub fn escape(text: &str) -> String {
    text.replace('&', "&amp;")
        .replace('<', "&lt;")
        .replace('>', "&gt;")
        .replace('"', "&quot;")
}

impl Svg {
    /// A new drawing of the given size in pixels.
    pub fn new(width: f64, height: f64) -> Self {
        Svg {
            body: String::new(),
            width,
            height,
        }
    }

    /// A straight line.
    #[allow(clippy::too_many_arguments)]
    pub fn line(
        &mut self,
        x1: f64,
        y1: f64,
        x2: f64,
        y2: f64,
        stroke: &str,
        width: f64,
        dash: bool,
    ) {
        let dash = if dash {
            " stroke-dasharray=\"4 3\""
        } else {
            ""
        };
        let _ = writeln!(
            self.body,
            "<line x1=\"{x1:.1}\" y1=\"{y1:.1}\" x2=\"{x2:.1}\" y2=\"{y2:.1}\" stroke=\"{stroke}\" stroke-width=\"{width}\"{dash}/>"
        );
    }

    /// A line with an arrow head at (x2, y2).
    pub fn arrow(&mut self, x1: f64, y1: f64, x2: f64, y2: f64, stroke: &str, dash: bool) {
        self.line(x1, y1, x2, y2, stroke, 1.6, dash);
        let (dx, dy) = (x2 - x1, y2 - y1);
        let len = (dx * dx + dy * dy).sqrt().max(1e-9);
        let (ux, uy) = (dx / len, dy / len);
        let (px, py) = (-uy, ux);
        let s = 7.0;
        let _ = writeln!(
            self.body,
            "<polygon points=\"{:.1},{:.1} {:.1},{:.1} {:.1},{:.1}\" fill=\"{stroke}\"/>",
            x2,
            y2,
            x2 - ux * s + px * s * 0.45,
            y2 - uy * s + py * s * 0.45,
            x2 - ux * s - px * s * 0.45,
            y2 - uy * s - py * s * 0.45
        );
    }

    /// Text anchored at (x, y); `anchor` is start, middle or end.
    pub fn text(&mut self, x: f64, y: f64, size: f64, anchor: &str, fill: &str, text: &str) {
        let _ = writeln!(
            self.body,
            "<text x=\"{x:.1}\" y=\"{y:.1}\" font-size=\"{size}\" text-anchor=\"{anchor}\" fill=\"{fill}\">{}</text>",
            escape(text)
        );
    }

    /// A rectangle.
    pub fn rect(&mut self, x: f64, y: f64, w: f64, h: f64, fill: &str, stroke: &str) {
        let _ = writeln!(
            self.body,
            "<rect x=\"{x:.1}\" y=\"{y:.1}\" width=\"{w:.1}\" height=\"{h:.1}\" fill=\"{fill}\" stroke=\"{stroke}\"/>"
        );
    }

    /// A circle.
    pub fn circle(&mut self, cx: f64, cy: f64, r: f64, fill: &str, stroke: &str) {
        let _ = writeln!(
            self.body,
            "<circle cx=\"{cx:.1}\" cy=\"{cy:.1}\" r=\"{r:.1}\" fill=\"{fill}\" stroke=\"{stroke}\"/>"
        );
    }

    /// Raw SVG markup (already escaped).
    pub fn raw(&mut self, markup: &str) {
        self.body.push_str(markup);
        self.body.push('\n');
    }

    /// The finished document.
    pub fn finish(self) -> String {
        format!(
            "<?xml version=\"1.0\" encoding=\"UTF-8\"?>\n<svg xmlns=\"http://www.w3.org/2000/svg\" width=\"{w}\" height=\"{h}\" viewBox=\"0 0 {w} {h}\" font-family=\"DejaVu Sans, Helvetica, Arial, sans-serif\">\n<rect width=\"100%\" height=\"100%\" fill=\"white\"/>\n{}</svg>\n",
            self.body,
            w = self.width,
            h = self.height
        )
    }
}
