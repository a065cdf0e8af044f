//! Exact arithmetic for phase cycles: phases as rational fractions of a turn
//! ([`turns`]), cyclotomic polynomials ([`cyclotomic`]), exact numbers in cyclotomic fields
//! ([`cyclo`]), fast exact evaluation of cycle filters ([`filter`]), the text forms of phases
//! and weights used by cycle files with their written precision ([`parse`]) and snapping such
//! values to the simplest exact ones ([`snap`]). Decisions on leakage are made here, never with
//! floats; floats appear only in `to_complex`/`approx` helpers meant for display.
//!
//! ```
//! use pathsieve::exact::{parse_phase, parse_weight, ExactFilter, PhaseUnit, PhaseValue, WeightValue};
//!
//! // Two steps, phases 0 and 1/2 turn on one field, weights +1/2 and -1/2.
//! let phase = |s| match parse_phase(s, PhaseUnit::Degrees) {
//!     Ok(PhaseValue::Exact(t)) => t,
//!     other => panic!("{other:?}"),
//! };
//! let weight = |s| match parse_weight(s) {
//!     Ok(WeightValue::Exact(c)) => c,
//!     other => panic!("{other:?}"),
//! };
//! let f = ExactFilter::new(
//!     &[vec![phase("0")], vec![phase("180")]],
//!     &[weight("1/2"), weight("-1/2")],
//! )
//! .unwrap();
//! assert!(f.is_zero(&[0]).unwrap()); // b = 0 is cancelled exactly
//! assert_eq!(f.eval(&[1]).unwrap().to_string(), "1"); // b = 1 passes with F = 1
//! ```

mod binomial_reduce;
pub mod cyclo;
pub mod cyclotomic;
pub mod filter;
pub mod group_table;
pub mod parse;
pub mod polar;
pub mod snap;
pub mod tensor;
pub mod turns;

pub use cyclo::{Cyclo, Q};
pub use cyclotomic::{cyclotomic_polynomial, euler_phi};

pub use filter::{ExactFilter, Scratch, ShownValue};
pub use parse::{
    parse_phase, parse_phase_written, parse_weight, parse_weight_written, PhaseParseError,
    PhaseUnit, PhaseValue, WeightParseError, WeightValue, WrittenPhase, WrittenWeight,
};
pub use turns::{common_denominator, reduce_turn, snap_to_fraction, Turns};

/// Largest cyclotomic order `n` (field `Q(zeta_n)`, common phase denominator) accepted by this
/// module. Checked before any work so that a bad input cannot make the program allocate or loop
/// without bound; snap phases to a coarser grid if a cycle needs more.
pub const MAX_ORDER: u32 = 100_000;

/// Errors of the exact-arithmetic layer. Each message names the bad value and the way out.
#[derive(Debug, Clone, PartialEq, Eq, thiserror::Error)]
pub enum ExactError {
    /// A cyclotomic order (or common denominator) of zero was requested.
    #[error("cyclotomic order 0 is not defined; orders start at 1 (zeta_1 = 1)")]
    ZeroOrder,
    /// A cyclotomic order (or common denominator) above [`MAX_ORDER`].
    #[error(
        "order {order} exceeds the limit {max}; put the phases on a coarser grid \
         (fewer decimals or a smaller denominator)"
    )]
    OrderTooLarge {
        /// The order that was asked for.
        order: u64,
        /// The limit, [`MAX_ORDER`].
        max: u32,
    },
    /// `lift` to an order that is not a multiple of the current one.
    #[error("cannot lift from Q(zeta_{from}) to Q(zeta_{to}): {from} does not divide {to}; lift to a multiple of {from}")]
    NotADivisor {
        /// Current order.
        from: u32,
        /// Requested order.
        to: u32,
    },
    /// An integer result did not fit the fixed-width type the API promises.
    #[error("integer overflow while computing {what}; the values are too large for exact fixed-width arithmetic")]
    Overflow {
        /// What was being computed.
        what: &'static str,
    },
    /// Two inputs that must have matching lengths do not.
    #[error("{what}: expected {expected} entries, found {found}")]
    LengthMismatch {
        /// Which input.
        what: &'static str,
        /// Expected length.
        expected: usize,
        /// Length found.
        found: usize,
    },
    /// Division by an exact zero.
    #[error("division by zero in exact arithmetic")]
    DivisionByZero,
}

/// Check `n` against `1..=MAX_ORDER` and return it as `u32`.
pub(crate) fn check_order(n: u64) -> Result<u32, ExactError> {
    if n == 0 {
        return Err(ExactError::ZeroOrder);
    }
    if n > MAX_ORDER as u64 {
        return Err(ExactError::OrderTooLarge {
            order: n,
            max: MAX_ORDER,
        });
    }
    Ok(n as u32)
}

/// Least common multiple with an order-limit check.
pub(crate) fn lcm_order(a: u32, b: u32) -> Result<u32, ExactError> {
    let l = num_integer::lcm(a as u64, b as u64);
    check_order(l)
}

/// Least common multiple of two `u64`, or `None` when it does not fit (never wraps).
pub fn checked_lcm_u64(a: u64, b: u64) -> Option<u64> {
    if a == 0 || b == 0 {
        return Some(0);
    }
    (a / num_integer::gcd(a, b)).checked_mul(b)
}
