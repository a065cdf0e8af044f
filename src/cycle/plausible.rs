//! The plausibility test of a declared phase unit: degrees in a file declared as turns become
//! whole turns (phase 0 everywhere) without complaint, so a column whose values do not fit its
//! unit gets a warning with the unit that fits. Rules (common practice): turns or radians with
//! most nonzero cells beyond one turn suggest degrees; degrees with every nonzero cell below
//! 1 deg suggest turns.

use super::text::unit_name;
use crate::exact::PhaseUnit;

/// A warning for one column whose values (in turns, as written, not reduced) do not fit the
/// declared `unit`, or `None`. `column` names the column in the message.
pub fn unit_warning(column: &str, unit: PhaseUnit, raw_turns: &[f64]) -> Option<String> {
    let nonzero: Vec<f64> = raw_turns
        .iter()
        .map(|x| x.abs())
        .filter(|&x| x > 1e-12)
        .collect();
    if nonzero.is_empty() {
        return None;
    }
    let beyond = nonzero.iter().filter(|&&x| x > 1.0 + 1e-9).count();
    let most_beyond = 2 * beyond > nonzero.len();
    let suggest = match unit {
        PhaseUnit::Turns | PhaseUnit::Radians if most_beyond => PhaseUnit::Degrees,
        PhaseUnit::Degrees if nonzero.iter().all(|&x| x * 360.0 < 1.0) => PhaseUnit::Turns,
        _ => return None,
    };
    let largest = nonzero.iter().cloned().fold(0.0, f64::max);
    let shown = match unit {
        PhaseUnit::Turns => largest,
        PhaseUnit::Degrees => largest * 360.0,
        PhaseUnit::Radians => largest * std::f64::consts::TAU,
        PhaseUnit::GridIndex(m) => largest * f64::from(m),
    };
    Some(format!(
        "column {column}: the values do not look like {} (largest {shown}); is the unit {}? \
         Declare it (`# unit = {}`, a header suffix like `{column} ({})`, or --unit)",
        unit_name(unit),
        unit_name(suggest),
        unit_name(suggest),
        match suggest {
            PhaseUnit::Degrees => "deg",
            PhaseUnit::Radians => "rad",
            _ => "turns",
        }
    ))
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn degrees_declared_as_turns_are_flagged() {
        let w = unit_warning("pu2", PhaseUnit::Turns, &[0.0, 120.0, 240.0]).unwrap();
        assert!(w.contains("is the unit degrees"), "{w}");
        assert!(unit_warning("pu2", PhaseUnit::Turns, &[0.0, 1.0 / 3.0, 2.0 / 3.0]).is_none());
        // Radians with most cells beyond one turn: degrees.
        assert!(unit_warning(
            "a",
            PhaseUnit::Radians,
            &[0.0, 90.0 / std::f64::consts::TAU, 3.0]
        )
        .unwrap()
        .contains("degrees"));
    }

    #[test]
    fn turns_declared_as_degrees_are_flagged() {
        // 0.25 and 0.5 written in a degrees file: all below 1 deg.
        let raw = [0.0, 0.25 / 360.0, 0.5 / 360.0];
        assert!(unit_warning("a", PhaseUnit::Degrees, &raw)
            .unwrap()
            .contains("is the unit turns"));
        assert!(unit_warning("a", PhaseUnit::Degrees, &[0.0, 0.25, 0.5]).is_none());
    }
}
