//! 2D spectra as SVG: one map per panel (ideal, as measured, and the leak = measured - ideal,
//! all on one colour scale), detection frequency w3 on the horizontal axis and excitation
//! frequency w1 on the vertical axis (both increasing away from the origin), a diverging
//! blue-white-red colour map centred on zero for signed (real-part) data or a white-to-dark
//! map for magnitudes, contour lines, the diagonal w1 = w3, and a colour bar.

use super::contour::contour;
use super::fonts::{text_width, wrap};
use super::svg::Svg;
use crate::simulate::Spectrum2D;

/// Which component of the complex spectrum is drawn.
#[derive(Clone, Copy, Debug, PartialEq, Eq)]
pub enum Component {
    /// The real part (absorptive), signed: diverging colours.
    Real,
    /// The magnitude (rephasing, non-rephasing): sequential colours.
    Magnitude,
}

/// One panel: a caption and a spectrum.
pub struct Panel<'a> {
    /// Caption above the map.
    pub caption: String,
    /// The spectrum.
    pub spectrum: &'a Spectrum2D,
}

/// What to draw.
pub struct SpectrumPicture<'a> {
    /// Title (wrapped to the width).
    pub title: String,
    /// Panels side by side; all share the colour scale of the first.
    pub panels: Vec<Panel<'a>>,
    /// Component drawn.
    pub component: Component,
    /// Frequency window `[lo, hi]` shown on both axes, in the spectra's unit.
    pub window: [f64; 2],
}

const MAP: f64 = 260.0;
const LEFT: f64 = 70.0;
const GAP: f64 = 40.0;
const BAR: f64 = 90.0;
const MAX_CELLS: usize = 120;

/// Render the picture.
pub fn spectrum_svg(p: &SpectrumPicture) -> String {
    let n = p.panels.len().max(1) as f64;
    let width = LEFT + n * MAP + (n - 1.0) * GAP + BAR;
    let title = wrap(&p.title, 14.0, width - 20.0);
    let scale = p
        .panels
        .first()
        .map_or(1.0, |q| window_max(q.spectrum, p.window, p.component))
        .max(f64::MIN_POSITIVE);
    let captions: Vec<Vec<String>> = p
        .panels
        .iter()
        .map(|q| wrap(&caption(q, p, scale), 12.0, MAP + GAP - 8.0))
        .collect();
    let caption_lines = captions.iter().map(Vec::len).max().unwrap_or(1).max(1);
    let top = 30.0 + 18.0 * title.len() as f64 + 15.0 * (caption_lines - 1) as f64;
    let height = top + MAP + 60.0;
    let mut svg = Svg::new(width, height);
    for (k, line) in title.iter().enumerate() {
        svg.text(10.0, 22.0 + 18.0 * k as f64, 14.0, "start", "#222", line);
    }
    for (k, panel) in p.panels.iter().enumerate() {
        let x0 = LEFT + k as f64 * (MAP + GAP);
        draw_panel(&mut svg, panel, p, x0, top, scale);
        let lines = &captions[k];
        for (i, line) in lines.iter().enumerate() {
            let y = top - 8.0 - 15.0 * (lines.len() - 1 - i) as f64;
            svg.text(x0 + MAP / 2.0, y, 12.0, "middle", "#222", line);
        }
    }
    colour_bar(&mut svg, p.component, scale, width - BAR + 20.0, top);
    svg.finish()
}

/// A panel's caption; a panel beyond the shared scale saturates, and says by how much.
fn caption(panel: &Panel, p: &SpectrumPicture, scale: f64) -> String {
    let over = window_max(panel.spectrum, p.window, p.component) / scale;
    if over > 1.001 {
        let digits = if over >= 10.0 { 0 } else { 2 };
        format!(
            "{} (clipped: peak {over:.digits$}x the scale)",
            panel.caption
        )
    } else {
        panel.caption.clone()
    }
}

fn value(s: &Spectrum2D, i: usize, j: usize, c: Component) -> f64 {
    let v = s.at(i, j);
    match c {
        Component::Real => v.re,
        Component::Magnitude => v.norm(),
    }
}

fn indices(axis: &[f64], window: [f64; 2]) -> Vec<usize> {
    let inside: Vec<usize> = (0..axis.len())
        .filter(|&i| axis[i] >= window[0] && axis[i] <= window[1])
        .collect();
    let step = inside.len().div_ceil(MAX_CELLS).max(1);
    inside.into_iter().step_by(step).collect()
}

fn window_max(s: &Spectrum2D, window: [f64; 2], c: Component) -> f64 {
    let (rows, cols) = (
        indices(&s.excitation, window),
        indices(&s.detection, window),
    );
    rows.iter()
        .flat_map(|&i| cols.iter().map(move |&j| (i, j)))
        .map(|(i, j)| value(s, i, j, c).abs())
        .fold(0.0, f64::max)
}

/// Colour of `x` in [-1, 1] (diverging) or [0, 1] (sequential).
pub fn colour(x: f64, c: Component) -> String {
    let x = x.clamp(-1.0, 1.0);
    let (r, g, b) = match c {
        Component::Real if x >= 0.0 => (1.0, 1.0 - 0.85 * x, 1.0 - 0.85 * x),
        Component::Real => (1.0 + 0.85 * x, 1.0 + 0.85 * x, 1.0),
        Component::Magnitude => (
            1.0 - 0.9 * x.abs(),
            1.0 - 0.8 * x.abs(),
            1.0 - 0.55 * x.abs(),
        ),
    };
    let to = |v: f64| (v.clamp(0.0, 1.0) * 255.0).round() as u8;
    format!("#{:02x}{:02x}{:02x}", to(r), to(g), to(b))
}

fn draw_panel(svg: &mut Svg, panel: &Panel, p: &SpectrumPicture, x0: f64, y0: f64, scale: f64) {
    let s = panel.spectrum;
    let (lo, hi) = (p.window[0], p.window[1]);
    let span = (hi - lo).max(f64::MIN_POSITIVE);
    let px = |w: f64| x0 + (w - lo) / span * MAP;
    let py = |w: f64| y0 + MAP - (w - lo) / span * MAP;
    let (rows, cols) = (
        indices(&s.excitation, p.window),
        indices(&s.detection, p.window),
    );
    let cell = |axis: &[f64], idx: &[usize], k: usize| {
        let here = axis[idx[k]];
        let next = idx
            .get(k + 1)
            .map_or(here + (here - axis[idx[k.max(1) - 1]]), |&i| axis[i]);
        (here, (next - here).abs().max(f64::MIN_POSITIVE))
    };
    for (ri, _) in rows.iter().enumerate() {
        let (w1, d1) = cell(&s.excitation, &rows, ri);
        for (ci, _) in cols.iter().enumerate() {
            let (w3, d3) = cell(&s.detection, &cols, ci);
            let v = value(s, rows[ri], cols[ci], p.component) / scale;
            let (x, y) = (px(w3 - d3 / 2.0).max(x0), py(w1 + d1 / 2.0).max(y0));
            let w = (px(w3 + d3 / 2.0).min(x0 + MAP) - x).max(0.0);
            let h = (py(w1 - d1 / 2.0).min(y0 + MAP) - y).max(0.0);
            svg.raw(&format!(
                "<rect x=\"{x:.2}\" y=\"{y:.2}\" width=\"{w:.2}\" height=\"{h:.2}\" fill=\"{}\"/>",
                colour(v, p.component)
            ));
        }
    }
    contours(svg, s, p, &rows, &cols, scale, &px, &py);
    svg.line(px(lo), py(lo), px(hi), py(hi), "#666", 0.8, true);
    svg.rect(x0, y0, MAP, MAP, "none", "#333");

    axes(svg, s, p.window, x0, y0, &px, &py);
}

#[allow(clippy::too_many_arguments)]
fn contours(
    svg: &mut Svg,
    s: &Spectrum2D,
    p: &SpectrumPicture,
    rows: &[usize],
    cols: &[usize],
    scale: f64,
    px: &dyn Fn(f64) -> f64,
    py: &dyn Fn(f64) -> f64,
) {
    let z: Vec<f64> = rows
        .iter()
        .flat_map(|&i| cols.iter().map(move |&j| (i, j)))
        .map(|(i, j)| value(s, i, j, p.component) / scale)
        .collect();
    let levels: Vec<f64> = [0.1, 0.3, 0.5, 0.7, 0.9]
        .iter()
        .flat_map(|&l| match p.component {
            Component::Real => vec![l, -l],
            Component::Magnitude => vec![l],
        })
        .collect();
    let at_x = |f: f64| interp(&s.detection, cols, f);
    let at_y = |f: f64| interp(&s.excitation, rows, f);
    // Positive levels solid, negative levels dashed (the usual way to tell signs apart in
    // print, common practice).
    let (mut solid, mut dashed) = (String::new(), String::new());
    for level in levels {
        let d = if level < 0.0 { &mut dashed } else { &mut solid };
        for ((xa, ya), (xb, yb)) in contour(&z, rows.len(), cols.len(), level) {
            d.push_str(&format!(
                "M{:.1},{:.1}L{:.1},{:.1}",
                px(at_x(xa)),
                py(at_y(ya)),
                px(at_x(xb)),
                py(at_y(yb))
            ));
        }
    }
    for (d, dash) in [(solid, ""), (dashed, " stroke-dasharray=\"2.5,2\"")] {
        if !d.is_empty() {
            svg.raw(&format!(
                "<path d=\"{d}\" stroke=\"#333\" stroke-width=\"0.6\" fill=\"none\"{dash}/>"
            ));
        }
    }
}

/// The axis value at fractional position `f` among the selected indices.
fn interp(axis: &[f64], idx: &[usize], f: f64) -> f64 {
    let k = (f.floor() as usize).min(idx.len().saturating_sub(2));
    let t = f - k as f64;
    let a = axis[idx[k]];
    let b = idx.get(k + 1).map_or(a, |&i| axis[i]);
    a + t * (b - a)
}

/// A round tick step giving about five ticks over `span`.
pub fn tick_step(span: f64) -> f64 {
    let raw = span / 5.0;
    let mag = 10f64.powf(raw.log10().floor());
    [1.0, 2.0, 5.0, 10.0]
        .iter()
        .map(|m| m * mag)
        .find(|&s| s >= raw)
        .unwrap_or(10.0 * mag)
}

fn axes(
    svg: &mut Svg,
    s: &Spectrum2D,
    window: [f64; 2],
    x0: f64,
    y0: f64,
    px: &dyn Fn(f64) -> f64,
    py: &dyn Fn(f64) -> f64,
) {
    let unit = s.unit.label();
    let step = tick_step(window[1] - window[0]);
    let mut t = (window[0] / step).ceil() * step;
    while t <= window[1] + 1e-9 * step {
        let label = format_tick(t, step);
        svg.line(px(t), y0 + MAP, px(t), y0 + MAP + 4.0, "#333", 1.0, false);
        svg.text(px(t), y0 + MAP + 16.0, 10.0, "middle", "#333", &label);
        if x0 < LEFT + 1.0 {
            svg.line(x0 - 4.0, py(t), x0, py(t), "#333", 1.0, false);
            svg.text(x0 - 6.0, py(t) + 3.5, 10.0, "end", "#333", &label);
        }
        t += step;
    }
    svg.text(
        x0 + MAP / 2.0,
        y0 + MAP + 34.0,
        11.0,
        "middle",
        "#222",
        &format!("detection ω3 ({unit})"),
    );
    if x0 < LEFT + 1.0 {
        let label = format!("excitation ω1 ({unit})");
        let y = y0 + MAP / 2.0;
        let x = 14.0;
        let _ = text_width(&label, 11.0);
        svg.raw(&format!(
            "<text x=\"{x}\" y=\"{y}\" font-size=\"11\" text-anchor=\"middle\" fill=\"#222\" transform=\"rotate(-90 {x} {y})\">{}</text>",
            super::svg::escape(&label)
        ));
    }
}

fn format_tick(t: f64, step: f64) -> String {
    let decimals = if step >= 1.0 {
        0
    } else {
        (-step.log10()).ceil() as usize
    };
    format!("{t:.decimals$}")
}

fn colour_bar(svg: &mut Svg, c: Component, scale: f64, x: f64, y0: f64) {
    let n = 50;
    let (lo, hi) = match c {
        Component::Real => (-1.0, 1.0),
        Component::Magnitude => (0.0, 1.0),
    };
    for k in 0..n {
        let v = hi - (hi - lo) * (k as f64 + 0.5) / n as f64;
        let h = MAP / n as f64;
        svg.raw(&format!(
            "<rect x=\"{x:.1}\" y=\"{:.2}\" width=\"14\" height=\"{:.2}\" fill=\"{}\"/>",
            y0 + k as f64 * h,
            h + 0.3,
            colour(v, c)
        ));
    }
    svg.rect(x, y0, 14.0, MAP, "none", "#333");
    for (frac, v) in [(0.0, hi), (0.5, (hi + lo) / 2.0), (1.0, lo)] {
        let y = y0 + frac * MAP;
        svg.line(x + 14.0, y, x + 18.0, y, "#333", 1.0, false);
        svg.text(
            x + 20.0,
            y + 3.5,
            10.0,
            "start",
            "#333",
            &format!("{:.2}", v),
        );
    }
    svg.text(
        x,
        y0 + MAP + 30.0,
        10.0,
        "start",
        "#333",
        &format!("× {scale:.2e}"),
    );
    let label = match c {
        Component::Real => "real part / scale",
        Component::Magnitude => "magnitude / scale",
    };
    let (lx, ly) = (x + 58.0, y0 + MAP / 2.0);
    svg.raw(&format!(
        "<text x=\"{lx}\" y=\"{ly}\" font-size=\"10\" text-anchor=\"middle\" fill=\"#333\" transform=\"rotate(-90 {lx} {ly})\">{label}</text>"
    ));
}
