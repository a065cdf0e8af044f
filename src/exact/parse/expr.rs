//! Tokenizer and recursive-descent evaluator for the small expression language shared by phase
//! and weight texts: numbers (exact decimals), `i`, `pi`, `exp(..)`, `e^..`, `+ - * /`,
//! parentheses and implicit multiplication (same precedence as `*` and `/`, left to right, so
//! `1/2i` is `i/2` and `3pi/4` is `3*pi/4`). Numbers may carry a decimal exponent (`-9.07e-18`,
//! `1E-3`). Every value also carries the radius of its written precision: a literal with a
//! decimal point means the interval of half a unit in its last written digit (`0.866025` is
//! `0.866025 +- 5e-7`, `1.20e+02` is `120 +- 0.5`); integer literals (`120`, `1E-3`) are exact.
//! Radii propagate by midpoint-radius arithmetic through `+ - * /` and `exp`.

use num_bigint::BigInt;
use num_complex::Complex64;
use num_traits::{One, Pow, Signed, ToPrimitive, Zero};

use crate::exact::cyclo::{Cyclo, Q};
use crate::exact::ExactError;

/// Longest accepted text, checked before any work.
/// Long enough for any `f64` in positional notation, twice (an approximate complex weight
/// `~re+imi` of two subnormals is 656 characters), since writers never use exponents.
pub(crate) const MAX_TEXT: usize = 1024;
/// Deepest accepted nesting of parentheses, `exp` and unary signs.
const MAX_DEPTH: usize = 32;

/// Why an expression could not be evaluated (mapped to the public errors by the caller).
#[derive(Debug, Clone, PartialEq)]
pub(crate) enum ExprError {
    Syntax(String),
    DivisionByZero,
    MixedPi,
    ExpArgument,
    NotInvertible,
    Exact(ExactError),
}

impl From<ExactError> for ExprError {
    fn from(e: ExactError) -> Self {
        ExprError::Exact(e)
    }
}

type R<T> = Result<T, ExprError>;

#[derive(Debug, Clone, PartialEq)]
enum Tok {
    /// Value, looks like a rounded irrational, half unit of the last written digit (0 if exact).
    Num(Q, bool, f64),
    I,
    Pi,
    E,
    Exp,
    Plus,
    Minus,
    Star,
    Slash,
    Caret,
    LParen,
    RParen,
}

/// A value `x * pi^pi_pow`, with `x` exact when possible (always with a float copy).
#[derive(Debug, Clone)]
pub(crate) struct Value {
    pub exact: Option<Cyclo>,
    pub approx: Complex64,
    pub pi_pow: i32,
    /// Some decimal literal looked like a rounded irrational (see `looks_rounded`).
    pub rounded_literal: bool,
    /// Radius of the written precision: the true value lies within this distance of `approx`
    /// (0 when every literal was exact).
    pub radius: f64,
}

/// Evaluate `text` completely.
pub(crate) fn evaluate(text: &str) -> R<Value> {
    let toks = tokenize(text)?;
    let mut p = Parser {
        toks,
        pos: 0,
        depth: 0,
        rounded: false,
    };
    let mut v = p.sum()?;
    if let Some(t) = p.toks.get(p.pos) {
        return Err(ExprError::Syntax(format!("unexpected {}", describe(t))));
    }
    v.rounded_literal = p.rounded;
    Ok(v)
}

fn describe(t: &Tok) -> String {
    match t {
        Tok::Num(q, _, _) => format!("number {q}"),
        Tok::I => "'i'".into(),
        Tok::Pi => "'pi'".into(),
        Tok::E => "'e'".into(),
        Tok::Exp => "'exp'".into(),
        Tok::Plus => "'+'".into(),
        Tok::Minus => "'-'".into(),
        Tok::Star => "'*'".into(),
        Tok::Slash => "'/'".into(),
        Tok::Caret => "'^'".into(),
        Tok::LParen => "'('".into(),
        Tok::RParen => "')'".into(),
    }
}

fn tokenize(text: &str) -> R<Vec<Tok>> {
    let chars: Vec<char> = text.chars().collect();
    let mut out = Vec::new();
    let mut i = 0;
    while i < chars.len() {
        let c = chars[i];
        if c.is_whitespace() {
            i += 1;
            continue;
        }
        if c.is_ascii_digit() || c == '.' {
            let start = i;
            while i < chars.len() && (chars[i].is_ascii_digit() || chars[i] == '.') {
                i += 1;
            }
            // A decimal exponent: e/E, an optional sign, then at least one digit (so `2e^(..)`
            // stays Euler's number).
            if i < chars.len() && matches!(chars[i], 'e' | 'E') {
                let mut j = i + 1;
                if j < chars.len() && matches!(chars[j], '+' | '-' | '\u{2212}') {
                    j += 1;
                }
                if j < chars.len() && chars[j].is_ascii_digit() {
                    while j < chars.len() && chars[j].is_ascii_digit() {
                        j += 1;
                    }
                    i = j;
                }
            }
            let lit: String = chars[start..i]
                .iter()
                .map(|&c| if c == '\u{2212}' { '-' } else { c })
                .collect();
            out.push(number(&lit)?);
            continue;
        }
        if c.is_alphabetic() && c != 'π' {
            let start = i;
            while i < chars.len() && chars[i].is_alphabetic() && chars[i] != 'π' {
                i += 1;
            }
            let word: String = chars[start..i].iter().collect();
            out.push(match word.to_ascii_lowercase().as_str() {
                "i" => Tok::I,
                "pi" => Tok::Pi,
                "e" => Tok::E,
                "exp" => Tok::Exp,
                _ => {
                    return Err(ExprError::Syntax(format!(
                        "unknown name '{word}'; expected a number, i, pi, exp(...) or e^(...)"
                    )))
                }
            });
            continue;
        }
        out.push(match c {
            'π' => Tok::Pi,
            '+' => Tok::Plus,
            '-' | '\u{2212}' => Tok::Minus,
            '*' | '\u{b7}' | '\u{d7}' => Tok::Star,
            '/' => Tok::Slash,
            '^' => Tok::Caret,
            '(' => Tok::LParen,
            ')' => Tok::RParen,
            _ => return Err(ExprError::Syntax(format!("unexpected character '{c}'"))),
        });
        i += 1;
    }
    Ok(out)
}

/// Largest accepted decimal exponent magnitude (`1e400` is refused before any big power).
const MAX_EXPONENT: i32 = 400;

/// An exact decimal literal like `12`, `0.25`, `.5`, `3.`, `-9.07e-18` (sign handled by the
/// parser), `1E-3`, with the half unit of its last written digit (0 without a decimal point).
fn number(lit: &str) -> R<Tok> {
    let bad = || ExprError::Syntax(format!("malformed number '{lit}'"));
    let (mantissa, exponent) = match lit.find(['e', 'E']) {
        Some(k) => {
            let e: i32 = lit[k + 1..].parse().map_err(|_| bad())?;
            if e.abs() > MAX_EXPONENT {
                return Err(ExprError::Syntax(format!(
                    "number '{lit}': exponent beyond +-{MAX_EXPONENT}"
                )));
            }
            (&lit[..k], e)
        }
        None => (lit, 0),
    };
    let (int, frac, pointed) = match mantissa.split_once('.') {
        Some((a, b)) => (a, b, true),
        None => (mantissa, "", false),
    };
    if frac.contains('.') || (int.is_empty() && frac.is_empty()) {
        return Err(bad());
    }
    let digits = format!("{int}{frac}");
    let n = BigInt::parse_bytes(digits.as_bytes(), 10).ok_or_else(bad)?;
    let scale = exponent - frac.len() as i32;
    let ten = BigInt::from(10u32);
    let q = if scale >= 0 {
        Q::from_integer(n * ten.pow(scale as u32))
    } else {
        Q::new(n, ten.pow(scale.unsigned_abs()))
    };
    let f = q.to_f64().unwrap_or(f64::INFINITY);
    // Half a unit in the last written digit, rounded up a little so that the interval is closed
    // outward despite the float conversion.
    let half = if pointed {
        0.5 * 10f64.powi(scale) * (1.0 + 4.0 * f64::EPSILON)
    } else {
        0.0
    };
    Ok(Tok::Num(q, frac.len() >= 3 && looks_rounded(f), half))
}

/// True if `x` (>= 0) is within 1e-3 relative of an irrational value commonly typed as a
/// rounded decimal: `|cos(2*pi*k/n)|` for `n` in {5, 8, 10, 12, 16, 20, 24}, twice such a
/// value (sqrt 2, sqrt 3, ..), or 1/sqrt 3.
pub(crate) fn looks_rounded(x: f64) -> bool {
    let x = x.abs();
    let near = |a: f64| (x - a).abs() <= 1e-3 * a;
    let rational = |a: f64| [0.0, 0.5, 1.0].iter().any(|r| (a - r).abs() < 1e-12);
    for n in [5u32, 8, 10, 12, 16, 20, 24] {
        for k in 0..n {
            let c = (std::f64::consts::TAU * k as f64 / n as f64).cos().abs();
            if !rational(c) && (near(c) || near(2.0 * c)) {
                return true;
            }
        }
    }
    near(1.0 / 3f64.sqrt())
}

struct Parser {
    toks: Vec<Tok>,
    pos: usize,
    depth: usize,
    rounded: bool,
}

fn exact_value(c: Cyclo, pi_pow: i32) -> Value {
    Value {
        approx: c.to_complex(),
        exact: Some(c),
        pi_pow,
        rounded_literal: false,
        radius: 0.0,
    }
}

/// Round a propagated radius up by a relative margin that covers the float operations.
fn up(r: f64) -> f64 {
    if r == 0.0 {
        0.0
    } else {
        r * (1.0 + 16.0 * f64::EPSILON)
    }
}

impl Parser {
    fn peek(&self) -> Option<&Tok> {
        self.toks.get(self.pos)
    }

    fn next(&mut self) -> Option<Tok> {
        let t = self.toks.get(self.pos).cloned();
        self.pos += 1;
        t
    }

    fn expect(&mut self, want: Tok, what: &str) -> R<()> {
        match self.next() {
            Some(t) if t == want => Ok(()),
            Some(t) => Err(ExprError::Syntax(format!(
                "expected {what}, found {}",
                describe(&t)
            ))),
            None => Err(ExprError::Syntax(format!("expected {what}, found the end"))),
        }
    }

    fn enter(&mut self) -> R<()> {
        self.depth += 1;
        if self.depth > MAX_DEPTH {
            return Err(ExprError::Syntax(format!(
                "nested more than {MAX_DEPTH} levels deep"
            )));
        }
        Ok(())
    }

    fn sum(&mut self) -> R<Value> {
        let mut v = self.term()?;
        loop {
            match self.peek() {
                Some(Tok::Plus) => {
                    self.pos += 1;
                    let t = self.term()?;
                    v = add(v, t)?;
                }
                Some(Tok::Minus) => {
                    self.pos += 1;
                    let t = self.term()?;
                    v = add(v, neg(t))?;
                }
                _ => return Ok(v),
            }
        }
    }

    fn term(&mut self) -> R<Value> {
        let mut v = self.factor()?;
        loop {
            match self.peek() {
                Some(Tok::Star) => {
                    self.pos += 1;
                    let f = self.factor()?;
                    v = mul(v, f)?;
                }
                Some(Tok::Slash) => {
                    self.pos += 1;
                    let f = self.factor()?;
                    v = div(v, f)?;
                }
                Some(Tok::I | Tok::Pi | Tok::E | Tok::Exp | Tok::LParen) => {
                    let f = self.factor()?;
                    v = mul(v, f)?;
                }
                _ => return Ok(v),
            }
        }
    }

    fn factor(&mut self) -> R<Value> {
        self.enter()?;
        let v = match self.peek() {
            Some(Tok::Minus) => {
                self.pos += 1;
                self.factor().map(neg)
            }
            Some(Tok::Plus) => {
                self.pos += 1;
                self.factor()
            }
            _ => self.atom(),
        };
        self.depth -= 1;
        v
    }

    fn atom(&mut self) -> R<Value> {
        match self.next() {
            Some(Tok::Num(q, rounded, half)) => {
                self.rounded |= rounded;
                let mut v = exact_value(Cyclo::from_rational(&q), 0);
                v.radius = half;
                Ok(v)
            }
            Some(Tok::I) => Ok(exact_value(Cyclo::root_of_unity(4, 1)?, 0)),
            Some(Tok::Pi) => Ok(exact_value(Cyclo::one(1)?, 1)),
            Some(Tok::LParen) => {
                let v = self.sum()?;
                self.expect(Tok::RParen, "')'")?;
                Ok(v)
            }
            Some(Tok::Exp) => {
                self.expect(Tok::LParen, "'(' after exp")?;
                let v = self.sum()?;
                self.expect(Tok::RParen, "')' closing exp(")?;
                exp(v)
            }
            Some(Tok::E) => {
                self.expect(Tok::Caret, "'^' after e (write e^(i*pi/4))")?;
                let v = self.factor()?;
                exp(v)
            }
            Some(t) => Err(ExprError::Syntax(format!(
                "expected a number, i, pi, exp(...) or '(', found {}",
                describe(&t)
            ))),
            None => Err(ExprError::Syntax(
                "expected a number, i, pi, exp(...) or '(', found the end".into(),
            )),
        }
    }
}

fn neg(v: Value) -> Value {
    Value {
        exact: v.exact.map(|c| c.neg()),
        approx: -v.approx,
        ..v
    }
}

fn add(a: Value, b: Value) -> R<Value> {
    let a_zero = a.exact.as_ref().is_some_and(Cyclo::is_zero);
    let b_zero = b.exact.as_ref().is_some_and(Cyclo::is_zero);
    if a.pi_pow != b.pi_pow && !a_zero && !b_zero {
        return Err(ExprError::MixedPi);
    }
    let pi_pow = if a_zero { b.pi_pow } else { a.pi_pow };
    let exact = match (a.exact, b.exact) {
        (Some(x), Some(y)) => Some(x.add(&y)?),
        _ => None,
    };
    Ok(Value {
        exact,
        approx: a.approx + b.approx,
        pi_pow,
        rounded_literal: false,
        radius: up(a.radius + b.radius),
    })
}

fn mul(a: Value, b: Value) -> R<Value> {
    let radius = up(a.approx.norm() * b.radius + b.approx.norm() * a.radius + a.radius * b.radius);
    let exact = match (a.exact, b.exact) {
        (Some(x), Some(y)) => Some(x.mul(&y)?),
        _ => None,
    };
    Ok(Value {
        exact,
        approx: a.approx * b.approx,
        pi_pow: a.pi_pow.saturating_add(b.pi_pow),
        rounded_literal: false,
        radius,
    })
}

fn div(a: Value, b: Value) -> R<Value> {
    // |a/b - a'/b'| <= (ra |b| + |a| rb) / (|b| (|b| - rb)), unbounded when rb >= |b|.
    let nb = b.approx.norm();
    let radius = if a.radius == 0.0 && b.radius == 0.0 {
        0.0
    } else if b.radius < nb {
        up((a.radius * nb + a.approx.norm() * b.radius) / (nb * (nb - b.radius)))
    } else {
        f64::INFINITY
    };
    let inv = match &b.exact {
        Some(c) if c.is_zero() => return Err(ExprError::DivisionByZero),
        Some(c) => {
            let (re, im) = c.gaussian_parts().ok_or(ExprError::NotInvertible)?;
            let n2 = &re * &re + &im * &im;
            Some(Cyclo::from_gaussian(&(&re / &n2), &(-&im / &n2)))
        }
        None if b.approx.norm() == 0.0 => return Err(ExprError::DivisionByZero),
        None => None,
    };
    let exact = match (a.exact, inv) {
        (Some(x), Some(y)) => Some(x.mul(&y)?),
        _ => None,
    };
    Ok(Value {
        exact,
        approx: a.approx / b.approx,
        pi_pow: a.pi_pow.saturating_sub(b.pi_pow),
        rounded_literal: false,
        radius,
    })
}

/// `exp(v)`: exact only for `v = i * r * pi` with rational `r` (a root of unity).
fn exp(v: Value) -> R<Value> {
    if v.radius > 0.0 {
        return exp_written(v);
    }
    if v.exact.as_ref().is_some_and(Cyclo::is_zero) {
        return Ok(exact_value(Cyclo::one(1)?, 0));
    }
    match (v.pi_pow, &v.exact) {
        (1, Some(c)) => {
            let (re, im) = c.gaussian_parts().ok_or(ExprError::ExpArgument)?;
            if !re.is_zero() {
                return Err(ExprError::ExpArgument);
            }
            // exp(i r pi) = zeta_2q^p for r = p/q: the turn r/2.
            let turn = im / Q::from_integer(BigInt::from(2));
            let too_large = || ExactError::OrderTooLarge {
                order: u64::MAX,
                max: crate::exact::MAX_ORDER,
            };
            let den = turn.denom().to_u32().ok_or_else(too_large)?;
            let num = (turn.numer() % turn.denom())
                .to_i64()
                .ok_or_else(too_large)?;
            Ok(exact_value(Cyclo::root_of_unity(den, num)?, 0))
        }
        (1, None) => Ok(Value {
            exact: None,
            approx: (v.approx * std::f64::consts::PI).exp(),
            pi_pow: 0,
            rounded_literal: false,
            radius: 0.0,
        }),
        (0, _) => Ok(Value {
            exact: None,
            approx: v.approx.exp(),
            pi_pow: 0,
            rounded_literal: false,
            radius: 0.0,
        }),
        _ => Err(ExprError::ExpArgument),
    }
}

/// `exp(v)` of an argument known only to its written precision: the float value with the
/// radius `|e^z| (e^(s r) - 1)` (`s = pi` for an argument in units of pi), since
/// `|e^z' - e^z| <= |e^z| (e^|z' - z| - 1)`. Exact only when the written digits are exact.
fn exp_written(v: Value) -> R<Value> {
    let (z, s) = match v.pi_pow {
        0 => (v.approx, 1.0),
        1 => (v.approx * std::f64::consts::PI, std::f64::consts::PI),
        _ => return Err(ExprError::ExpArgument),
    };
    let e = z.exp();
    let exact = match &v.exact {
        Some(_) => {
            exp(Value {
                radius: 0.0,
                ..v.clone()
            })?
            .exact
        }
        None => None,
    };
    Ok(Value {
        exact,
        approx: e,
        pi_pow: 0,
        rounded_literal: false,
        radius: up(e.norm() * (s * v.radius).exp_m1()),
    })
}

/// Helper for callers: `Some(q)` if the exact value is a rational number.
pub(crate) fn rational(v: &Value) -> Option<Q> {
    v.exact.as_ref().and_then(Cyclo::as_rational)
}

/// Helper: `true` if the float copy is real within rounding.
pub(crate) fn approx_real(v: &Value) -> bool {
    v.approx.im.abs() <= 1e-12 * v.approx.re.abs().max(1.0)
}

/// `q` as a float in `[-inf, inf]`.
pub(crate) fn q_to_f64(q: &Q) -> f64 {
    q.to_f64().unwrap_or(if q.is_negative() {
        f64::NEG_INFINITY
    } else {
        f64::INFINITY
    })
}

/// Exact `Q` from two small integers (for unit conversion factors).
pub(crate) fn q_int(n: i64, d: i64) -> Q {
    if d == 0 {
        return Q::one();
    }
    Q::new(BigInt::from(n), BigInt::from(d))
}
