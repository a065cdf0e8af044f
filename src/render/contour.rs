//! Contour lines of a sampled 2D field by marching squares: for each level, the line segments
//! where the bilinear interpolant crosses it, in grid coordinates (column, row).

/// One contour segment `((x1, y1), (x2, y2))` in fractional grid indices.
pub type Segment = ((f64, f64), (f64, f64));

/// Segments of the level `level` of `z` (row-major, `rows x cols`).
pub fn contour(z: &[f64], rows: usize, cols: usize, level: f64) -> Vec<Segment> {
    let mut out = Vec::new();
    if rows < 2 || cols < 2 {
        return out;
    }
    let at = |r: usize, c: usize| z[r * cols + c];
    // Crossing point on the edge from corner a to corner b.
    let cross = |pa: (f64, f64), va: f64, pb: (f64, f64), vb: f64| {
        let t = if (vb - va).abs() < f64::MIN_POSITIVE {
            0.5
        } else {
            (level - va) / (vb - va)
        };
        (pa.0 + t * (pb.0 - pa.0), pa.1 + t * (pb.1 - pa.1))
    };
    for r in 0..rows - 1 {
        for c in 0..cols - 1 {
            let p = [
                ((c as f64, r as f64), at(r, c)),
                ((c as f64 + 1.0, r as f64), at(r, c + 1)),
                ((c as f64 + 1.0, r as f64 + 1.0), at(r + 1, c + 1)),
                ((c as f64, r as f64 + 1.0), at(r + 1, c)),
            ];
            let mut pts = Vec::with_capacity(4);
            for k in 0..4 {
                let (a, b) = (p[k], p[(k + 1) % 4]);
                if (a.1 >= level) != (b.1 >= level) {
                    pts.push(cross(a.0, a.1, b.0, b.1));
                }
            }
            match pts.len() {
                2 => out.push((pts[0], pts[1])),
                4 => {
                    out.push((pts[0], pts[1]));
                    out.push((pts[2], pts[3]));
                }
                _ => {}
            }
        }
    }
    out
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn a_cone_has_a_closed_ring_of_segments_at_the_right_radius() {
        let n = 21;
        let z: Vec<f64> = (0..n * n)
            .map(|i| {
                let (r, c) = ((i / n) as f64 - 10.0, (i % n) as f64 - 10.0);
                (r * r + c * c).sqrt()
            })
            .collect();
        let segs = contour(&z, n, n, 5.0);
        assert!(segs.len() > 20);
        for ((x, y), _) in segs {
            let d = ((x - 10.0).powi(2) + (y - 10.0).powi(2)).sqrt();
            assert!((d - 5.0).abs() < 0.3, "{d}");
        }
    }
}
