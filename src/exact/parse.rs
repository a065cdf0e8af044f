//! Parsers for the phase and weight texts of cycle files, with typed errors that say what was
//! expected. Both share one small expression language (see below); exactness is decided here.
//!
//! **Phases** ([`parse_phase`]): a number, a fraction or a product/quotient with `pi`, in a
//! default [`PhaseUnit`] that a suffix (`turn`/`turns`, `deg`/`°`, `rad`) overrides:
//! `1/3`, `0.25`, `-1/4` (turns); `120`, `33.3` (degrees); `2*pi/3`, `pi/2`, `-pi`, `3pi/4`,
//! `2.0944` (radians); `90deg`, `0.25turn`, `pi/2 rad`. Decimals are exact rationals
//! (`33.3 deg = 333/3600 turn`). In radians, `r*pi` with rational `r` is exact (`r/2` turn);
//! a plain decimal in radians is not a rational fraction of a turn and is returned as
//! [`PhaseValue::Approx`] (except 0). `pi` is refused in turns, degrees and grid units.
//! Results are not reduced into `[0, 1)`; use [`super::reduce_turn`].
//!
//! **Weights** ([`parse_weight`]): sums and products of exact decimals and fractions, `i`,
//! `exp(..)` and `e^(..)`, e.g. `1`, `-i`, `1/2+1/2i`, `0.5-0.25i`, `-1/27`, `exp(-i*2*pi/3)`,
//! `exp(-2*pi*i*1/3)`, `1/27*exp(-i*2*pi/3)`, `e^(i*pi/4)`, `(1+i)/2`. `exp(i*r*pi)` with
//! rational `r` is the exact root of unity `zeta_(2q)^p` (`r = p/q`). Division is allowed by
//! (Gaussian) rationals only; `pi` may appear only inside `exp`.
//!
//! **Rule for rounded decimals in weights:** a decimal literal is always read as the exact
//! rational it spells, but when it has 3 or more digits after the point and lies within
//! 1e-3 (relative) of an irrational value commonly written rounded — `|cos(2*pi*k/n)|` for
//! `n` in {5, 8, 10, 12, 16, 20, 24} (e.g. `0.7071 ~ 1/sqrt 2`, `0.866 ~ sqrt(3)/2`,
//! `0.2588 ~ sin 15 deg`), twice such a value (`1.4142`, `1.732`), or `1/sqrt 3` — the weight
//! is returned as [`WeightValue::Approx`], because the user almost certainly meant the
//! irrational number and an exact verdict on the rounded rational would mislead. Write such
//! weights as `exp(i*pi/4)` and similar to keep them exact.
//!
//! **Precision:** [`parse_phase_written`] and [`parse_weight_written`] also return the interval
//! the written digits stand for: a literal with a decimal point means half a unit in its last
//! digit (`0.866025` is `+- 5e-7`, `2.09` rad is `+- 0.005` rad), propagated through the
//! expression; integers, fractions and `pi` forms are exact. Scientific notation (`-9.07e-18`,
//! `1E-3`, `1.200000000000000000e+02` as numpy's `savetxt` writes) is read everywhere.
//!
//! **Syntax:** implicit multiplication (`3pi`, `2i`) has the same precedence as `*` and `/`,
//! evaluated left to right, so `1/2i` means `i/2` (as printed by [`Cyclo`]'s `Display`).
//! Texts longer than 256 characters are refused before parsing.

mod expr;

use num_complex::Complex64;
use num_rational::Ratio;
use num_traits::{ToPrimitive, Zero};

use self::expr::{approx_real, evaluate, q_int, q_to_f64, rational, ExprError, MAX_TEXT};
use super::cyclo::{Cyclo, Q};
use super::turns::Turns;
use super::ExactError;

/// The unit a phase text is in when it carries no suffix.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub enum PhaseUnit {
    /// Fractions of a full turn (1 turn = 360 deg = 2*pi rad).
    Turns,
    /// Degrees.
    Degrees,
    /// Radians.
    Radians,
    /// Steps of a grid with this many steps per turn (`k` means `k/M` turn).
    GridIndex(u32),
}

/// A parsed phase.
#[derive(Debug, Clone, PartialEq)]
pub enum PhaseValue {
    /// An exact fraction of a turn.
    Exact(Turns),
    /// A value that is not a rational fraction of a turn as written (e.g. decimal radians).
    Approx {
        /// The value in turns.
        turns: f64,
    },
}

/// A parsed step weight.
#[derive(Debug, Clone, PartialEq)]
pub enum WeightValue {
    /// An exact cyclotomic number.
    Exact(Cyclo),
    /// A floating-point value: the text used `exp` of a non-`pi` argument or a rounded
    /// decimal (see the module docs for the rule).
    Approx(Complex64),
}

const PHASE_FORMS: &str = "expected a fraction of a turn like 1/3 or 0.25, degrees like 120 or \
    33.3, radians like 2*pi/3 or 2.0944, optionally with a unit suffix (turn, deg, rad)";

/// Why a phase text was refused.
#[derive(Debug, Clone, PartialEq, thiserror::Error)]
pub enum PhaseParseError {
    /// Nothing to read.
    #[error("empty phase; {PHASE_FORMS}")]
    Empty,
    /// An approximate value beyond double precision (e.g. `exp(1000)`).
    #[error("phase '{text}' is not a finite number in double precision; give a phase between -1e300 and 1e300 (e.g. 0.25 or 90 deg)")]
    NotFinite {
        /// The text.
        text: String,
    },
    /// Text above the length limit.
    #[error("phase text of {len} characters exceeds the limit of {max}")]
    TooLong {
        /// Length found.
        len: usize,
        /// The limit.
        max: usize,
    },
    /// Not a valid expression.
    #[error("cannot read phase '{text}': {detail}; {PHASE_FORMS}")]
    Syntax {
        /// The text.
        text: String,
        /// What went wrong.
        detail: String,
    },
    /// A zero denominator.
    #[error("phase '{text}' divides by zero")]
    DivisionByZero {
        /// The text.
        text: String,
    },
    /// The value is complex, or mixes terms with and without `pi`.
    #[error("phase '{text}' is not a real number; {PHASE_FORMS}")]
    NotReal {
        /// The text.
        text: String,
    },
    /// `pi` used outside radians, or raised to a power.
    #[error("phase '{text}' uses pi but is not in radians; add the suffix 'rad' or write turns (pi rad = 1/2 turn)")]
    PiOutsideRadians {
        /// The text.
        text: String,
    },
    /// The exact value does not fit `i64 / i64` turns.
    #[error(
        "phase '{text}' is too large or too finely divided for an exact i64 fraction of a turn"
    )]
    TooLarge {
        /// The text.
        text: String,
    },
    /// `GridIndex(0)`.
    #[error("a phase grid needs at least 1 step per turn, got 0")]
    GridZero,
}

/// Why a weight text was refused.
#[derive(Debug, Clone, PartialEq, thiserror::Error)]
pub enum WeightParseError {
    /// Nothing to read.
    #[error("empty weight; expected e.g. 1, -1, i, 1/2+1/2i, -1/27 or exp(-i*2*pi/3)")]
    Empty,
    /// A value beyond double precision (e.g. `exp(1000)`): its verdicts would be NaN.
    #[error("weight '{text}' overflows double precision (|w| must stay below about 1.8e308); scale the weights down, e.g. divide them all by their largest")]
    NotFinite {
        /// The text.
        text: String,
    },
    /// Text above the length limit.
    #[error("weight text of {len} characters exceeds the limit of {max}")]
    TooLong {
        /// Length found.
        len: usize,
        /// The limit.
        max: usize,
    },
    /// Not a valid expression.
    #[error("cannot read weight '{text}': {detail}; expected e.g. 1, -i, 0.5-0.25i, 1/27*exp(-i*2*pi/3) or e^(i*pi/4)")]
    Syntax {
        /// The text.
        text: String,
        /// What went wrong.
        detail: String,
    },
    /// A zero denominator.
    #[error("weight '{text}' divides by zero")]
    DivisionByZero {
        /// The text.
        text: String,
    },
    /// `pi` outside an `exp` argument.
    #[error("weight '{text}' uses pi outside exp(...); pi may appear only in an exponent like exp(i*pi/4)")]
    PiOutsideExp {
        /// The text.
        text: String,
    },
    /// A sum of a term with `pi` and a term without it.
    #[error("weight '{text}' adds a multiple of pi to a number without pi; pi may appear only as i*r*pi inside exp(...)")]
    MixedPi {
        /// The text.
        text: String,
    },
    /// An `exp` argument that is not `i * rational * pi` or a plain number.
    #[error("weight '{text}' has an exp(...) argument that is not i times a rational multiple of pi; write it like exp(-i*2*pi/3)")]
    ExpArgument {
        /// The text.
        text: String,
    },
    /// Division by something that is not a (Gaussian) rational.
    #[error("weight '{text}' divides by a number that is not a rational or Gaussian rational; multiply by its inverse instead")]
    NotInvertible {
        /// The text.
        text: String,
    },
    /// An exact-arithmetic limit (e.g. the root-of-unity order) was exceeded.
    #[error("weight '{text}': {source}")]
    Limit {
        /// The text.
        text: String,
        /// The underlying limit.
        source: ExactError,
    },
}

fn check_len(text: &str) -> Option<usize> {
    let len = text.chars().count();
    (len > MAX_TEXT).then_some(len)
}

/// Split off a unit suffix (`turn`, `turns`, `deg`, `°`, `rad`), case-insensitive.
fn split_unit(text: &str) -> (&str, Option<PhaseUnit>) {
    let lower = text.to_ascii_lowercase();
    for (suffix, unit) in [
        ("turns", PhaseUnit::Turns),
        ("turn", PhaseUnit::Turns),
        ("deg", PhaseUnit::Degrees),
        ("°", PhaseUnit::Degrees),
        ("rad", PhaseUnit::Radians),
    ] {
        if lower.ends_with(suffix) {
            // ASCII lowering keeps byte offsets, so this slice is valid.
            let body = &text[..text.len() - suffix.len()];
            return (body.trim_end(), Some(unit));
        }
    }
    (text, None)
}

/// Parse one phase text in the default `unit` (a suffix overrides it). See the module docs.
pub fn parse_phase(text: &str, unit: PhaseUnit) -> Result<PhaseValue, PhaseParseError> {
    parse_phase_written(text, unit).map(|w| w.value)
}

/// A phase as written: its value and the half-width, in turns, of the interval its written
/// digits stand for (half a unit in the last digit of each decimal literal, propagated; 0 for
/// exact forms such as `1/3`, `120`, `2*pi/3`).
#[derive(Debug, Clone, PartialEq)]
pub struct WrittenPhase {
    /// The value as written.
    pub value: PhaseValue,
    /// Half-width of the written precision, in turns.
    pub half_width_turns: f64,
}

/// A weight as written: its value and the radius of the disc its written digits stand for.
#[derive(Debug, Clone, PartialEq)]
pub struct WrittenWeight {
    /// The value as written.
    pub value: WeightValue,
    /// Radius of the written precision (0 for exact forms such as `1/27` or `exp(-i*2*pi/3)`).
    pub radius: f64,
}

/// [`parse_phase`] that also returns the written precision (see [`WrittenPhase`]).
pub fn parse_phase_written(text: &str, unit: PhaseUnit) -> Result<WrittenPhase, PhaseParseError> {
    if let Some(len) = check_len(text) {
        return Err(PhaseParseError::TooLong { len, max: MAX_TEXT });
    }
    let (body, suffix) = split_unit(text.trim());
    let unit = suffix.unwrap_or(unit);
    if body.is_empty() {
        return Err(PhaseParseError::Empty);
    }
    let owned = || text.trim().to_string();
    let v = evaluate(body).map_err(|e| match e {
        ExprError::DivisionByZero => PhaseParseError::DivisionByZero { text: owned() },
        ExprError::MixedPi | ExprError::ExpArgument | ExprError::NotInvertible => {
            PhaseParseError::NotReal { text: owned() }
        }
        ExprError::Exact(_) => PhaseParseError::TooLarge { text: owned() },
        ExprError::Syntax(detail) => PhaseParseError::Syntax {
            text: owned(),
            detail,
        },
    })?;
    let real = match &v.exact {
        Some(_) => rational(&v),
        None if approx_real(&v) => None,
        None => return Err(PhaseParseError::NotReal { text: owned() }),
    };
    if v.exact.is_some() && real.is_none() {
        return Err(PhaseParseError::NotReal { text: owned() });
    }
    // Exact turns = real * factor, or approximate turns = approx * float factor.
    let (factor, pi_allowed) = match unit {
        PhaseUnit::Turns => (q_int(1, 1), false),
        PhaseUnit::Degrees => (q_int(1, 360), false),
        PhaseUnit::GridIndex(0) => return Err(PhaseParseError::GridZero),
        PhaseUnit::GridIndex(m) => (q_int(1, m as i64), false),
        PhaseUnit::Radians => (q_int(1, 2), true),
    };
    match (v.pi_pow, pi_allowed) {
        (0, _) | (1, true) => {}
        _ => return Err(PhaseParseError::PiOutsideRadians { text: owned() }),
    }
    let radians_plain = unit == PhaseUnit::Radians && v.pi_pow == 0;
    // Half-width in turns: the radius scaled like the value.
    let half_width_turns = if v.radius == 0.0 {
        0.0
    } else if radians_plain {
        v.radius / std::f64::consts::TAU
    } else if unit == PhaseUnit::Radians {
        v.radius / 2.0
    } else {
        v.radius * q_to_f64(&factor)
    };
    let value = match real {
        Some(q) if radians_plain && !q.is_zero() => Ok(PhaseValue::Approx {
            turns: q_to_f64(&q) / std::f64::consts::TAU,
        }),
        Some(q) => {
            let t = if radians_plain { q } else { q * factor };
            to_turns(&t).ok_or(PhaseParseError::TooLarge { text: owned() })
        }
        None => {
            let x = v.approx.re;
            let turns = if radians_plain {
                x / std::f64::consts::TAU
            } else {
                x * q_to_f64(&factor)
            };
            if !turns.is_finite() {
                return Err(PhaseParseError::NotFinite { text: owned() });
            }
            Ok(PhaseValue::Approx { turns })
        }
    }?;
    Ok(WrittenPhase {
        value,
        half_width_turns,
    })
}

fn to_turns(q: &Q) -> Option<PhaseValue> {
    let n = q.numer().to_i64()?;
    let d = q.denom().to_i64()?;
    Some(PhaseValue::Exact(Ratio::new(n, d)))
}

/// Parse one weight text. See the module docs for the forms and the rounded-decimal rule.
pub fn parse_weight(text: &str) -> Result<WeightValue, WeightParseError> {
    parse_weight_written(text).map(|w| w.value)
}

/// [`parse_weight`] that also returns the written precision (see [`WrittenWeight`]).
pub fn parse_weight_written(text: &str) -> Result<WrittenWeight, WeightParseError> {
    if let Some(len) = check_len(text) {
        return Err(WeightParseError::TooLong { len, max: MAX_TEXT });
    }
    let body = text.trim();
    if body.is_empty() {
        return Err(WeightParseError::Empty);
    }
    let owned = || body.to_string();
    let v = evaluate(body).map_err(|e| match e {
        ExprError::DivisionByZero => WeightParseError::DivisionByZero { text: owned() },
        ExprError::MixedPi => WeightParseError::MixedPi { text: owned() },
        ExprError::ExpArgument => WeightParseError::ExpArgument { text: owned() },
        ExprError::NotInvertible => WeightParseError::NotInvertible { text: owned() },
        ExprError::Exact(source) => WeightParseError::Limit {
            text: owned(),
            source,
        },
        ExprError::Syntax(detail) => WeightParseError::Syntax {
            text: owned(),
            detail,
        },
    })?;
    if v.pi_pow != 0 {
        return Err(WeightParseError::PiOutsideExp { text: owned() });
    }
    if !(v.approx.re.is_finite() && v.approx.im.is_finite()) {
        return Err(WeightParseError::NotFinite { text: owned() });
    }
    let value = match v.exact {
        Some(c) if !v.rounded_literal => WeightValue::Exact(c),
        _ => WeightValue::Approx(v.approx),
    };
    Ok(WrittenWeight {
        value,
        radius: v.radius,
    })
}

#[cfg(test)]
mod tests;
