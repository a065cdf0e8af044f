//! The delay grid of a simulation: one axis per delay `t1, t2, ...` (the element each pathway
//! holds between pulses, the last one the detection time for emission and pump-probe), each
//! a list of times in fs written as a range `START:STEP:STOP` or a list.

use serde::Serialize;

/// Largest number of grid points (all delays together) of one simulation.
pub const MAX_GRID_POINTS: usize = 1 << 22;
/// Largest number of points on one delay axis.
pub const MAX_AXIS_POINTS: usize = 1 << 16;

/// One delay axis.
#[derive(Clone, Debug, PartialEq, Serialize)]
pub struct DelayAxis {
    /// `t1`, `t2`, ...
    pub name: String,
    /// Delay values in fs, increasing.
    pub times_fs: Vec<f64>,
}

impl DelayAxis {
    /// The sampling step in fs (`None` for a single point or an uneven list).
    pub fn step(&self) -> Option<f64> {
        let t = &self.times_fs;
        if t.len() < 2 {
            return None;
        }
        let dt = t[1] - t[0];
        let even = t
            .windows(2)
            .all(|w| ((w[1] - w[0]) - dt).abs() <= 1e-9 * dt.abs().max(1.0));
        even.then_some(dt)
    }
}

/// All delay axes; data on the grid are stored in C order (the last axis fastest).
#[derive(Clone, Debug, PartialEq, Serialize)]
pub struct DelayGrid {
    /// The axes in time order.
    pub axes: Vec<DelayAxis>,
}

impl DelayGrid {
    /// Points per axis.
    pub fn shape(&self) -> Vec<usize> {
        self.axes.iter().map(|a| a.times_fs.len()).collect()
    }

    /// Number of grid points.
    pub fn len(&self) -> usize {
        self.axes.iter().map(|a| a.times_fs.len()).product()
    }

    /// True when some axis is empty.
    pub fn is_empty(&self) -> bool {
        self.len() == 0
    }

    /// The delays (fs) of the grid point with flat C-order index `i`.
    pub fn point(&self, mut i: usize, out: &mut [f64]) {
        for (k, axis) in self.axes.iter().enumerate().rev() {
            let n = axis.times_fs.len();
            out[k] = axis.times_fs[i % n];
            i /= n;
        }
    }
}

/// Parse delays in `unit_fs` femtoseconds per unit: `START:STEP:STOP` (inclusive, STEP > 0),
/// a comma list, or one value. Returns the times in fs or a message saying the fix.
pub fn parse_delays(text: &str, unit_fs: f64) -> Result<Vec<f64>, String> {
    let num = |s: &str| -> Result<f64, String> {
        s.trim()
            .parse::<f64>()
            .ok()
            .filter(|x| x.is_finite() && *x >= 0.0)
            .ok_or_else(|| {
                format!("`{s}` is not a delay >= 0: write plain numbers (fs) inside START:STEP:STOP and one unit suffix at the end of the whole value (`fs` or `ps`, e.g. t1=0:4:1500 or t2=0:0.1:2ps)")
            })
    };
    let times: Vec<f64> = if text.contains(':') {
        let parts: Vec<&str> = text.split(':').collect();
        let [a, s, b] = parts.as_slice() else {
            return Err(format!("`{text}` is not START:STEP:STOP (e.g. 0:10:500)"));
        };
        let (a, s, b) = (num(a)?, num(s)?, num(b)?);
        if s <= 0.0 || b < a {
            return Err(format!(
                "`{text}`: STEP must be > 0 and STOP >= START (e.g. 0:10:500)"
            ));
        }
        let n = ((b - a) / s + 1e-9).floor() + 1.0;
        if n > MAX_AXIS_POINTS as f64 {
            return Err(format!(
                "`{text}` has {n} points, above the limit of {MAX_AXIS_POINTS}; take a larger STEP"
            ));
        }
        (0..n as usize).map(|k| a + s * k as f64).collect()
    } else {
        let v = text.split(',').map(num).collect::<Result<Vec<_>, _>>()?;
        if v.windows(2).any(|w| w[1] <= w[0]) {
            return Err(format!("`{text}`: list the delays in increasing order"));
        }
        v
    };
    if times.len() > MAX_AXIS_POINTS {
        return Err(format!(
            "{} delays are above the limit of {MAX_AXIS_POINTS}",
            times.len()
        ));
    }
    Ok(times.into_iter().map(|t| t * unit_fs).collect())
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn ranges_lists_and_errors() {
        assert_eq!(
            parse_delays("0:10:30", 1.0).unwrap(),
            vec![0.0, 10.0, 20.0, 30.0]
        );
        assert_eq!(parse_delays("0.5", 1000.0).unwrap(), vec![500.0]);
        assert_eq!(parse_delays("0,5,20", 1.0).unwrap(), vec![0.0, 5.0, 20.0]);
        assert!(parse_delays("0:0:10", 1.0).is_err());
        assert!(parse_delays("5,1", 1.0).is_err());
        assert!(parse_delays("0:1e-9:1", 1.0).unwrap_err().contains("limit"));
        let grid = DelayGrid {
            axes: vec![
                DelayAxis {
                    name: "t1".into(),
                    times_fs: vec![0.0, 1.0],
                },
                DelayAxis {
                    name: "t2".into(),
                    times_fs: vec![5.0, 6.0, 7.0],
                },
            ],
        };
        let mut p = [0.0; 2];
        grid.point(4, &mut p);
        assert_eq!(p, [1.0, 6.0]);
        assert_eq!(grid.axes[1].step(), Some(1.0));
    }
}
