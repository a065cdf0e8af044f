//! A picture as laid-out items — texts with their boxes measured from the bundled font, line
//! segments, marks — serialised to SVG only at the end. The layout code places every item, so
//! the boxes here are the ones drawn, and [`Scene::problems`] can prove a picture has no text
//! over another text, no text over a line that must stay clear, and nothing off the canvas.

use super::fonts::{ascent_descent, text_width};
use super::svg::{escape, Svg};
use std::fmt::Write;

/// An axis-aligned box: `x0 <= x1`, `y0 <= y1` (SVG units, y downward).
#[derive(Clone, Copy, Debug, PartialEq)]
pub struct BBox {
    /// Left.
    pub x0: f64,
    /// Top.
    pub y0: f64,
    /// Right.
    pub x1: f64,
    /// Bottom.
    pub y1: f64,
}

impl BBox {
    /// True when the two boxes share interior area.
    pub fn overlaps(&self, o: &BBox) -> bool {
        self.x0 < o.x1 && o.x0 < self.x1 && self.y0 < o.y1 && o.y0 < self.y1
    }

    /// The box grown by `d` on every side.
    pub fn grown(&self, d: f64) -> BBox {
        BBox {
            x0: self.x0 - d,
            y0: self.y0 - d,
            x1: self.x1 + d,
            y1: self.y1 + d,
        }
    }

    /// True when the segment (x1, y1)-(x2, y2) passes through the box (Liang–Barsky clip).
    pub fn meets_segment(&self, x1: f64, y1: f64, x2: f64, y2: f64) -> bool {
        let (dx, dy) = (x2 - x1, y2 - y1);
        let (mut t0, mut t1) = (0.0f64, 1.0f64);
        for (p, q) in [
            (-dx, x1 - self.x0),
            (dx, self.x1 - x1),
            (-dy, y1 - self.y0),
            (dy, self.y1 - y1),
        ] {
            if p == 0.0 {
                if q <= 0.0 {
                    return false;
                }
            } else {
                let r = q / p;
                if p < 0.0 {
                    t0 = t0.max(r);
                } else {
                    t1 = t1.min(r);
                }
            }
        }
        t0 < t1
    }
}

/// Where a run of text sits relative to the baseline.
#[derive(Clone, Copy, Debug, PartialEq, Eq)]
pub enum Shift {
    /// On the baseline, full size.
    Base,
    /// A subscript: smaller, below the baseline.
    Sub,
    /// A superscript: smaller, above the baseline.
    Sup,
}

/// Size of a subscript or superscript relative to its text.
const SCRIPT_SIZE: f64 = 0.72;
/// Drop of a subscript's baseline, relative to the text's size.
const SUB_DROP: f64 = 0.28;
/// Rise of a superscript's baseline, relative to the text's size.
const SUP_RISE: f64 = 0.42;

/// A run of text in one position.
#[derive(Clone, Debug, PartialEq)]
pub struct Span {
    /// The characters.
    pub text: String,
    /// Baseline position.
    pub shift: Shift,
}

impl Span {
    /// A run on the baseline.
    pub fn base(text: impl Into<String>) -> Span {
        Span {
            text: text.into(),
            shift: Shift::Base,
        }
    }
    /// A subscript run.
    pub fn sub(text: impl Into<String>) -> Span {
        Span {
            text: text.into(),
            shift: Shift::Sub,
        }
    }
    /// A superscript run.
    pub fn sup(text: impl Into<String>) -> Span {
        Span {
            text: text.into(),
            shift: Shift::Sup,
        }
    }
}

/// Horizontal anchor of a text.
#[derive(Clone, Copy, Debug, PartialEq, Eq)]
pub enum Anchor {
    /// `x` is the left end.
    Start,
    /// `x` is the middle.
    Middle,
    /// `x` is the right end.
    End,
}

/// One placed text.
#[derive(Clone, Debug, PartialEq)]
pub struct Label {
    /// Anchor point x.
    pub x: f64,
    /// Baseline y (for a vertical text: the anchor point's y).
    pub y: f64,
    /// Font size in px.
    pub size: f64,
    /// How `x` anchors the text.
    pub anchor: Anchor,
    /// Fill colour.
    pub fill: String,
    /// The runs, left to right.
    pub spans: Vec<Span>,
    /// Rotated by -90 degrees about (x, y), reading upward.
    pub vertical: bool,
}

impl Label {
    /// Width of the text along its reading direction.
    pub fn advance(&self) -> f64 {
        self.spans
            .iter()
            .map(|s| text_width(&s.text, span_size(self.size, s.shift)))
            .sum()
    }

    /// The text as plain characters.
    pub fn plain(&self) -> String {
        self.spans.iter().map(|s| s.text.as_str()).collect()
    }

    /// The box the text occupies: advance widths and the font's ascent and descent.
    pub fn bbox(&self) -> BBox {
        let w = self.advance();
        let (a, d) = ascent_descent(self.size);
        let mut up = a;
        let mut down = d;
        for s in &self.spans {
            let (sa, sd) = ascent_descent(span_size(self.size, s.shift));
            match s.shift {
                Shift::Base => {}
                Shift::Sub => down = down.max(SUB_DROP * self.size + sd),
                Shift::Sup => up = up.max(SUP_RISE * self.size + sa),
            }
        }
        let start = match self.anchor {
            Anchor::Start => 0.0,
            Anchor::Middle => -w / 2.0,
            Anchor::End => -w,
        };
        if self.vertical {
            // Reading upward: the advance runs along -y, the ascent along -x.
            BBox {
                x0: self.x - up,
                x1: self.x + down,
                y0: self.y - start - w,
                y1: self.y - start,
            }
        } else {
            BBox {
                x0: self.x + start,
                x1: self.x + start + w,
                y0: self.y - up,
                y1: self.y + down,
            }
        }
    }
}

fn span_size(size: f64, shift: Shift) -> f64 {
    match shift {
        Shift::Base => size,
        Shift::Sub | Shift::Sup => size * SCRIPT_SIZE,
    }
}

/// A straight segment.
#[derive(Clone, Debug, PartialEq)]
pub struct Segment {
    /// Start x.
    pub x1: f64,
    /// Start y.
    pub y1: f64,
    /// End x.
    pub x2: f64,
    /// End y.
    pub y2: f64,
    /// Stroke colour.
    pub stroke: String,
    /// Stroke width.
    pub width: f64,
    /// Dashed.
    pub dash: bool,
    /// No text may touch it (diagram lines, arrows, data); grid lines and ticks are `false`.
    pub keep_clear: bool,
    /// An arrow head at the end.
    pub head: bool,
}

/// A filled or outlined shape: its SVG markup and its box.
#[derive(Clone, Debug, PartialEq)]
pub struct Mark {
    /// Already-escaped SVG markup.
    pub markup: String,
    /// Its extent.
    pub bbox: BBox,
    /// No text may touch it (data markers); backgrounds and frames are `false`.
    pub keep_clear: bool,
    /// A framed rectangle: a text lies wholly inside it or wholly outside, never across its edge.
    pub frame: bool,
}

#[derive(Clone, Debug, PartialEq)]
enum Item {
    Text(usize),
    Line(usize),
    Mark(usize),
}

/// A whole picture: its size and its items in drawing order.
#[derive(Clone, Debug, Default, PartialEq)]
pub struct Scene {
    /// Width in px.
    pub width: f64,
    /// Height in px.
    pub height: f64,
    /// Every text.
    pub labels: Vec<Label>,
    /// Every segment.
    pub segments: Vec<Segment>,
    /// Every shape.
    pub marks: Vec<Mark>,
    order: Vec<Item>,
}

/// Length of an arrow head.
pub const HEAD: f64 = 7.0;

impl Scene {
    /// An empty picture; set `width` and `height` once the layout knows them.
    pub fn new() -> Scene {
        Scene::default()
    }

    /// Place a text of plain runs and return its box.
    pub fn text(
        &mut self,
        x: f64,
        y: f64,
        size: f64,
        anchor: Anchor,
        fill: &str,
        text: &str,
    ) -> BBox {
        self.rich(x, y, size, anchor, fill, vec![Span::base(text)])
    }

    /// Place a text of several runs and return its box.
    #[allow(clippy::too_many_arguments)]
    pub fn rich(
        &mut self,
        x: f64,
        y: f64,
        size: f64,
        anchor: Anchor,
        fill: &str,
        spans: Vec<Span>,
    ) -> BBox {
        self.push_label(Label {
            x,
            y,
            size,
            anchor,
            fill: fill.to_string(),
            spans,
            vertical: false,
        })
    }

    /// Place a prepared label and return its box.
    pub fn push_label(&mut self, l: Label) -> BBox {
        let b = l.bbox();
        self.order.push(Item::Text(self.labels.len()));
        self.labels.push(l);
        b
    }

    /// A segment; `keep_clear` forbids text over it.
    #[allow(clippy::too_many_arguments)]
    pub fn line(
        &mut self,
        (x1, y1): (f64, f64),
        (x2, y2): (f64, f64),
        stroke: &str,
        width: f64,
        dash: bool,
        keep_clear: bool,
    ) {
        self.order.push(Item::Line(self.segments.len()));
        self.segments.push(Segment {
            x1,
            y1,
            x2,
            y2,
            stroke: stroke.to_string(),
            width,
            dash,
            keep_clear,
            head: false,
        });
    }

    /// An arrow from `a` to `b` with its head at `b`; text may not touch it.
    pub fn arrow(&mut self, a: (f64, f64), b: (f64, f64), stroke: &str, dash: bool) {
        self.line(a, b, stroke, 1.6, dash, true);
        if let Some(s) = self.segments.last_mut() {
            s.head = true;
        }
    }

    /// A shape with its box.
    pub fn mark(&mut self, markup: String, bbox: BBox, keep_clear: bool) {
        self.order.push(Item::Mark(self.marks.len()));
        self.marks.push(Mark {
            markup,
            bbox,
            keep_clear,
            frame: false,
        });
    }

    /// A rectangle (background or frame: text may sit on it).
    pub fn rect(&mut self, x: f64, y: f64, w: f64, h: f64, fill: &str, stroke: &str) {
        self.mark(
            format!("<rect x=\"{x:.1}\" y=\"{y:.1}\" width=\"{w:.1}\" height=\"{h:.1}\" fill=\"{fill}\" stroke=\"{stroke}\"/>"),
            BBox {
                x0: x,
                y0: y,
                x1: x + w,
                y1: y + h,
            },
            false,
        );
        if let Some(m) = self.marks.last_mut() {
            m.frame = true;
        }
    }

    /// Every way the layout breaks the rules: a text, segment or shape outside the canvas, two
    /// texts sharing area, a text over a keep-clear segment (its stroke and head included) or
    /// keep-clear shape, a text across the edge of a rectangle. Empty for a good picture.
    pub fn problems(&self) -> Vec<String> {
        let mut out = Vec::new();
        let canvas = BBox {
            x0: 0.0,
            y0: 0.0,
            x1: self.width,
            y1: self.height,
        };
        let inside = |b: &BBox| {
            b.x0 >= canvas.x0 - 1e-9
                && b.y0 >= canvas.y0 - 1e-9
                && b.x1 <= canvas.x1 + 1e-9
                && b.y1 <= canvas.y1 + 1e-9
        };
        let boxes: Vec<BBox> = self.labels.iter().map(Label::bbox).collect();
        for (l, b) in self.labels.iter().zip(&boxes) {
            if !inside(b) {
                out.push(format!("text `{}` at {b:?} leaves the canvas", l.plain()));
            }
        }
        for s in &self.segments {
            let b = segment_box(s);
            if !inside(&b) {
                out.push(format!("segment {s:?} leaves the canvas"));
            }
        }
        for m in &self.marks {
            if !inside(&m.bbox) {
                out.push(format!("shape {} leaves the canvas", m.markup));
            }
        }
        for i in 0..boxes.len() {
            for j in i + 1..boxes.len() {
                if boxes[i].overlaps(&boxes[j]) {
                    out.push(format!(
                        "text `{}` overlaps text `{}`",
                        self.labels[i].plain(),
                        self.labels[j].plain()
                    ));
                }
            }
            for s in self.segments.iter().filter(|s| s.keep_clear) {
                let reach = s.width / 2.0 + if s.head { HEAD * 0.45 } else { 0.0 };
                if boxes[i].grown(reach).meets_segment(s.x1, s.y1, s.x2, s.y2) {
                    out.push(format!(
                        "text `{}` touches the line ({:.1},{:.1})-({:.1},{:.1})",
                        self.labels[i].plain(),
                        s.x1,
                        s.y1,
                        s.x2,
                        s.y2
                    ));
                }
            }
            for m in self.marks.iter().filter(|m| m.frame) {
                let b = &boxes[i];
                let within = b.x0 >= m.bbox.x0
                    && b.x1 <= m.bbox.x1
                    && b.y0 >= m.bbox.y0
                    && b.y1 <= m.bbox.y1;
                if b.overlaps(&m.bbox) && !within {
                    out.push(format!(
                        "text `{}` crosses the edge of {}",
                        self.labels[i].plain(),
                        m.markup
                    ));
                }
            }
            for m in self.marks.iter().filter(|m| m.keep_clear) {
                if boxes[i].overlaps(&m.bbox) {
                    out.push(format!(
                        "text `{}` touches the shape {}",
                        self.labels[i].plain(),
                        m.markup
                    ));
                }
            }
        }
        out
    }

    /// The SVG document.
    pub fn to_svg(&self) -> String {
        let mut svg = Svg::new(self.width, self.height);
        for item in &self.order {
            match item {
                Item::Text(i) => svg.raw(&label_markup(&self.labels[*i])),
                Item::Line(i) => {
                    let s = &self.segments[*i];
                    if s.head {
                        svg.arrow(s.x1, s.y1, s.x2, s.y2, &s.stroke, s.dash);
                    } else {
                        svg.line(s.x1, s.y1, s.x2, s.y2, &s.stroke, s.width, s.dash);
                    }
                }
                Item::Mark(i) => svg.raw(&self.marks[*i].markup),
            }
        }
        svg.finish()
    }
}

fn segment_box(s: &Segment) -> BBox {
    let r = s.width / 2.0 + if s.head { HEAD * 0.45 } else { 0.0 };
    BBox {
        x0: s.x1.min(s.x2),
        y0: s.y1.min(s.y2),
        x1: s.x1.max(s.x2),
        y1: s.y1.max(s.y2),
    }
    .grown(r)
}

/// One `<text>` element; scripts are `<tspan>`s moved by `dy` and set smaller.
fn label_markup(l: &Label) -> String {
    let anchor = match l.anchor {
        Anchor::Start => "start",
        Anchor::Middle => "middle",
        Anchor::End => "end",
    };
    let rotate = if l.vertical {
        format!(" transform=\"rotate(-90 {:.1} {:.1})\"", l.x, l.y)
    } else {
        String::new()
    };
    let mut s = format!(
        "<text x=\"{:.1}\" y=\"{:.1}\" font-size=\"{}\" text-anchor=\"{anchor}\" fill=\"{}\"{rotate}>",
        l.x, l.y, l.size, l.fill
    );
    let mut offset = 0.0f64;
    for sp in &l.spans {
        let target = match sp.shift {
            Shift::Base => 0.0,
            Shift::Sub => SUB_DROP * l.size,
            Shift::Sup => -SUP_RISE * l.size,
        };
        let dy = target - offset;
        offset = target;
        if sp.shift == Shift::Base && dy.abs() < 1e-9 {
            s.push_str(&escape(&sp.text));
            continue;
        }
        let size = if sp.shift == Shift::Base {
            String::new()
        } else {
            format!(" font-size=\"{:.2}\"", span_size(l.size, sp.shift))
        };
        let _ = write!(
            s,
            "<tspan dy=\"{dy:.2}\"{size}>{}</tspan>",
            escape(&sp.text)
        );
    }
    s.push_str("</text>");
    s
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn boxes_and_segments_meet_where_geometry_says() {
        let b = BBox {
            x0: 0.0,
            y0: 0.0,
            x1: 10.0,
            y1: 10.0,
        };
        assert!(b.meets_segment(-5.0, 5.0, 15.0, 5.0));
        assert!(b.meets_segment(5.0, 5.0, 6.0, 6.0));
        assert!(!b.meets_segment(-5.0, 11.0, 15.0, 11.0));
        assert!(!b.meets_segment(11.0, -5.0, 20.0, 20.0));
        assert!(
            !b.meets_segment(10.0, -5.0, 10.0, 20.0),
            "touching an edge is not inside"
        );
    }

    #[test]
    fn the_checker_finds_overlap_clipping_and_crossed_lines() {
        let mut s = Scene::new();
        s.width = 100.0;
        s.height = 50.0;
        s.text(2.0, 20.0, 12.0, Anchor::Start, "#000", "hello");
        assert!(s.problems().is_empty(), "{:?}", s.problems());
        s.text(4.0, 22.0, 12.0, Anchor::Start, "#000", "world");
        s.text(2.0, 20.0, 12.0, Anchor::End, "#000", "+k");
        s.line((20.0, 0.0), (20.0, 40.0), "#000", 1.0, false, true);
        s.rect(60.0, 10.0, 30.0, 30.0, "none", "#000");
        s.text(58.0, 30.0, 10.0, Anchor::Start, "#000", "x");
        let p = s.problems();
        assert!(p.iter().any(|m| m.contains("crosses the edge")), "{p:?}");
        assert!(p.iter().any(|m| m.contains("overlaps")), "{p:?}");
        assert!(p.iter().any(|m| m.contains("leaves the canvas")), "{p:?}");
        assert!(p.iter().any(|m| m.contains("touches the line")), "{p:?}");
    }

    #[test]
    fn subscripts_are_tspans_and_widen_the_box() {
        let mut s = Scene::new();
        s.width = 100.0;
        s.height = 40.0;
        let plain = s.text(10.0, 20.0, 12.0, Anchor::Start, "#000", "k");
        let sub = s.rich(
            10.0,
            20.0,
            12.0,
            Anchor::Start,
            "#000",
            vec![Span::base("k"), Span::sub("pu2")],
        );
        assert!(sub.x1 > plain.x1 && sub.y1 > plain.y1);
        let svg = s.to_svg();
        assert!(
            svg.contains(">k<tspan dy=\"3.36\" font-size=\"8.64\">pu2</tspan></text>"),
            "{svg}"
        );
    }
}
