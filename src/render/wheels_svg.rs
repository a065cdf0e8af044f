//! Phase wheels as SVG: one circle per field of a cycle, with a dot at every phase the field
//! visits (dot size grows with the number of steps using it), grid ticks when the cycle
//! declares a grid, and each phase labelled in turns and degrees. Angles run counter-clockwise
//! from 0 at the right (3 o'clock), as on the complex plane of exp(i phi). Laid out as a
//! [`Scene`]: ring labels are used only when their measured boxes touch nothing.

use super::fonts::{ascent_descent, wrap};
use super::scene::{Anchor, BBox, Label, Scene, Span};
use crate::cycle::text::format_phase;
use crate::cycle::{Cycle, Phase};

const R: f64 = 78.0;
const CELL_W: f64 = 300.0;
const CELL_H: f64 = 320.0;
/// Most lines of a wheel's heading (longer ones end in an ellipsis).
const HEAD_LINES: usize = 3;
const COLS: usize = 3;
/// Above this many distinct phases on one wheel, labels go in a list under it (fewer when the
/// measured labels would touch each other or a dot).
const MAX_RING_LABELS: usize = 12;
/// Segments of the drawn ring (a 72-gon is a circle at this size, and its sides are what the
/// overlap check sees).
const RING_SIDES: usize = 72;

/// Draw one wheel per field of `cycle`.
pub fn wheels_svg(cycle: &Cycle, title: &str) -> String {
    wheels_scene(cycle, title).to_svg()
}

/// The laid-out wheels.
pub fn wheels_scene(cycle: &Cycle, title: &str) -> Scene {
    let n = cycle.fields.len().max(1);
    let cols = COLS.min(n);
    let rows = n.div_ceil(cols);
    let mut scene = Scene::new();
    scene.width = CELL_W * cols as f64 + 20.0;
    // Title and explanation wrapped to the sheet (a one-wheel sheet is narrow).
    let mut y = 8.0;
    for (text, size, fill) in [
        (title, 15.0, "#222"),
        (
            "phase wheels: 0 at 3 o'clock, counter-clockwise; dot area ∝ steps using the phase; labels in turns and degrees",
            11.0,
            "#555",
        ),
    ] {
        let (a, d) = ascent_descent(size);
        for l in wrap(text, size, scene.width - 20.0) {
            scene.text(10.0, y + a, size, Anchor::Start, fill, &l);
            y += a + d + 1.0;
        }
    }
    let top = y + 4.0;
    scene.height = top + CELL_H * rows as f64 + 10.0;
    for (j, name) in cycle.fields.iter().enumerate() {
        let x0 = 10.0 + CELL_W * (j % cols) as f64;
        let y0 = top + CELL_H * (j / cols) as f64;
        let grid = cycle.meta.grid.as_ref().and_then(|g| g.get(j).copied());
        wheel(&mut scene, cycle, j, name, grid, (x0, y0));
    }
    scene
}

fn degrees_text(p: &Phase) -> String {
    let d = match p {
        Phase::Exact(t) => *t.numer() as f64 * 360.0 / *t.denom() as f64,
        Phase::Approx(x) => x * 360.0,
    };
    let r = (d * 100.0).round() / 100.0;
    if r.fract() == 0.0 {
        format!("{r:.0}°")
    } else {
        format!("{r}°")
    }
}

fn visits_of(cycle: &Cycle, j: usize) -> Vec<(Phase, usize)> {
    let mut visits: Vec<(Phase, usize)> = Vec::new();
    for row in &cycle.steps {
        let p = &row[j];
        match visits.iter_mut().find(|(q, _)| q == p) {
            Some((_, c)) => *c += 1,
            None => visits.push((p.clone(), 1)),
        }
    }
    visits.sort_by(|a, b| a.0.turns_f64().total_cmp(&b.0.turns_f64()));
    visits
}

fn wheel(
    scene: &mut Scene,
    cycle: &Cycle,
    j: usize,
    name: &str,
    grid: Option<u32>,
    (x0, y0): (f64, f64),
) {
    // Distinct phases with their step counts, in turn order.
    let visits = visits_of(cycle, j);
    let head = format!(
        "field {name} — {} phase{}{}",
        visits.len(),
        if visits.len() == 1 { "" } else { "s" },
        grid.map_or(String::new(), |g| format!(", grid {g}"))
    );
    let head_h = heading(scene, &head, (x0 + CELL_W / 2.0, y0 + 6.0));
    let centre = (x0 + CELL_W / 2.0, y0 + 6.0 + head_h + 40.0 + R);
    frame(scene, centre, grid);
    let dots = dots(scene, &visits, centre);
    let ring = ring_labels(&visits, centre);
    let cell = BBox {
        x0,
        y0,
        x1: x0 + CELL_W,
        y1: y0 + CELL_H,
    };
    let fits = visits.len() <= MAX_RING_LABELS && {
        let boxes: Vec<BBox> = ring.iter().map(Label::bbox).collect();
        boxes.iter().enumerate().all(|(i, b)| {
            b.x0 >= cell.x0
                && b.x1 <= cell.x1
                && b.y0 >= cell.y0
                && b.y1 <= cell.y1
                && !boxes[i + 1..].iter().any(|o| o.overlaps(b))
                && !dots.iter().any(|o| o.overlaps(b))
        })
    };
    if fits {
        for l in ring {
            scene.push_label(l);
        }
    } else {
        phase_list(scene, &visits, (centre.0, centre.1 + R + 24.0));
    }
}

/// The wheel's heading, centred at `x` from `y` down, at most [`HEAD_LINES`] lines; returns
/// the height reserved for it (the same for every wheel, so the wheels line up).
fn heading(scene: &mut Scene, head: &str, (x, y): (f64, f64)) -> f64 {
    let (a, d) = ascent_descent(13.0);
    let lines = wrap(head, 13.0, CELL_W - 24.0);
    let mut y = y;
    for (i, l) in lines.iter().take(HEAD_LINES).enumerate() {
        let more = if i + 1 == HEAD_LINES && lines.len() > HEAD_LINES {
            "…"
        } else {
            ""
        };
        scene.text(
            x,
            y + a,
            13.0,
            Anchor::Middle,
            "#222",
            &format!("{l}{more}"),
        );
        y += a + d + 1.0;
    }
    HEAD_LINES as f64 * (a + d + 1.0)
}

/// The point at `turns` on a circle of radius `r` about `(cx, cy)`, counter-clockwise from 3
/// o'clock.
fn at((cx, cy): (f64, f64), turns: f64, r: f64) -> (f64, f64) {
    let a = std::f64::consts::TAU * turns;
    (cx + a.cos() * r, cy - a.sin() * r)
}

/// The disc, its axes, the ring (as the sides the overlap check sees) and the grid ticks.
fn frame(scene: &mut Scene, c: (f64, f64), grid: Option<u32>) {
    let (cx, cy) = c;
    scene.mark(
        format!(
            "<circle cx=\"{cx:.1}\" cy=\"{cy:.1}\" r=\"{R:.1}\" fill=\"#fbfbf8\" stroke=\"none\"/>"
        ),
        BBox {
            x0: cx - R,
            y0: cy - R,
            x1: cx + R,
            y1: cy + R,
        },
        false,
    );
    let (l, r, t, b) = (
        (cx - R - 6.0, cy),
        (cx + R + 6.0, cy),
        (cx, cy - R - 6.0),
        (cx, cy + R + 6.0),
    );
    scene.line(l, r, "#ddd", 1.0, true, false);
    scene.line(t, b, "#ddd", 1.0, true, false);
    let side = |k: usize| k as f64 / RING_SIDES as f64;
    for k in 0..RING_SIDES {
        scene.line(
            at(c, side(k), R),
            at(c, side(k + 1), R),
            "#555",
            1.0,
            false,
            true,
        );
    }
    if let Some(g) = grid.filter(|&g| (2..=72).contains(&g)) {
        for k in 0..g {
            let t = f64::from(k) / f64::from(g);
            scene.line(
                at(c, t, R - 5.0),
                at(c, t, R + 5.0),
                "#999",
                1.0,
                false,
                false,
            );
        }
    }
}

/// A spoke and a dot per visited phase (area grows with its step count); returns the dots'
/// boxes.
fn dots(scene: &mut Scene, visits: &[(Phase, usize)], c: (f64, f64)) -> Vec<BBox> {
    let max_count = visits.iter().map(|v| v.1).max().unwrap_or(1) as f64;
    // Shrink dots on crowded wheels so neighbours do not touch.
    let spacing = std::f64::consts::TAU * R / visits.len().max(1) as f64;
    let mut out = Vec::new();
    for (p, count) in visits {
        let r_dot = (4.0 + 4.0 * (*count as f64 / max_count).sqrt()).min(spacing / 2.6);
        let (px, py) = at(c, p.turns_f64(), R);
        scene.line(c, (px, py), "#c9d6e8", 1.0, false, false);
        let b = BBox {
            x0: px - r_dot,
            y0: py - r_dot,
            x1: px + r_dot,
            y1: py + r_dot,
        };
        out.push(b);
        scene.mark(
            format!("<circle cx=\"{px:.1}\" cy=\"{py:.1}\" r=\"{r_dot:.1}\" fill=\"#1f5fa8\" stroke=\"#12396a\"/>"),
            b,
            true,
        );
    }
    out
}

/// The phases in turns, wrapped under the wheel (at most three lines).
fn phase_list(scene: &mut Scene, visits: &[(Phase, usize)], (x, y): (f64, f64)) {
    let mut list: Vec<String> = vec!["turns:".into()];
    list.extend(visits.iter().map(|(p, _)| format_phase(p)));
    let (a, d) = ascent_descent(9.5);
    let lines = wrap(&list.join("  "), 9.5, CELL_W - 16.0);
    let shown = lines.len().min(3);
    let mut y = y;
    for (i, l) in lines.iter().take(shown).enumerate() {
        let more = if i + 1 == shown && lines.len() > shown {
            " …"
        } else {
            ""
        };
        scene.text(x, y + a, 9.5, Anchor::Middle, "#333", &format!("{l}{more}"));
        y += a + d + 1.0;
    }
}

/// Two lines beside each dot: the phase in turns and in degrees with its step count.
fn ring_labels(visits: &[(Phase, usize)], (cx, cy): (f64, f64)) -> Vec<Label> {
    let mut out = Vec::new();
    for (p, count) in visits {
        let a = std::f64::consts::TAU * p.turns_f64();
        let (c, s) = (a.cos(), -a.sin());
        let (lx, ly) = (cx + c * (R + 14.0), cy + s * (R + 14.0));
        let anchor = if c > 0.3 {
            Anchor::Start
        } else if c < -0.3 {
            Anchor::End
        } else {
            Anchor::Middle
        };
        // Below the wheel the two lines hang down, above it they stand up, at the sides they
        // straddle the dot's height.
        let first = if s > 0.3 {
            ly + 10.0
        } else if s < -0.3 {
            ly - 14.0
        } else {
            ly - 2.0
        };
        let label = |y: f64, size: f64, fill: &str, text: String| Label {
            x: lx,
            y,
            size,
            anchor,
            fill: fill.into(),
            spans: vec![Span::base(text)],
            vertical: false,
        };
        out.push(label(
            first,
            10.5,
            "#222",
            format!("{} turn", format_phase(p)),
        ));
        out.push(label(
            first + 12.5,
            10.0,
            "#666",
            format!("{} ×{count}", degrees_text(p)),
        ));
    }
    out
}
