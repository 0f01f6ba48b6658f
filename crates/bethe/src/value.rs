//! The result of a Bethe-logarithm computation: value, error estimate,
//! diagnostics; the names of the methods and gauges; the comparison of two
//! values ([`agreement`]).

use crate::settings::Goal;
use rug::Float;
use std::fmt::Write as _;
use std::str::FromStr;
use thiserror::Error;

/// A name that is not one of the accepted spellings (of a method, a gauge or
/// another named choice).
#[derive(Debug, Clone, PartialEq, Eq, Error)]
#[error("'{given}' is not one of: {}", expected.join(", "))]
pub struct UnknownName {
    /// The text given.
    pub given: String,
    /// The accepted names.
    pub expected: &'static [&'static str],
}

impl UnknownName {
    /// The choice among `all` whose `name` is `given` (exact, lower case):
    /// the one parser behind the `FromStr` of every named choice.
    ///
    /// # Errors
    /// [`UnknownName`] listing `expected` when no choice has that name.
    pub fn find<T: Copy>(
        given: &str,
        all: &[T],
        name: impl Fn(T) -> &'static str,
        expected: &'static [&'static str],
    ) -> Result<T, UnknownName> {
        all.iter()
            .copied()
            .find(|&c| name(c) == given)
            .ok_or_else(|| UnknownName {
                given: given.to_string(),
                expected,
            })
    }
}

/// Which method produced a value.
#[derive(Debug, Clone, Copy, PartialEq, Eq, Hash)]
pub enum Method {
    /// Photon-energy integral with the Sturmian Coulomb Green's function.
    Green,
    /// Explicit sum over the bound and continuum spectrum.
    Spectral,
}

impl Method {
    /// Every method, in the order of [`Method::NAMES`].
    pub const ALL: [Method; 2] = [Method::Green, Method::Spectral];
    /// The accepted names, the only spelling of the methods anywhere.
    pub const NAMES: &'static [&'static str] = &["green", "spectral"];

    /// The name used on the command line and in tables: `green` or `spectral`.
    pub fn name(self) -> &'static str {
        Self::NAMES[self as usize]
    }
}

impl std::fmt::Display for Method {
    fn fmt(&self, f: &mut std::fmt::Formatter<'_>) -> std::fmt::Result {
        f.write_str(self.name())
    }
}

impl FromStr for Method {
    type Err = UnknownName;

    /// Parses a name written by [`Method::name`] (exact, lower case).
    fn from_str(s: &str) -> Result<Self, UnknownName> {
        UnknownName::find(s, &Self::ALL, Self::name, Self::NAMES)
    }
}

/// Dipole form used in the spectral sum (all equal in exact arithmetic).
#[derive(Debug, Clone, Copy, PartialEq, Eq, Hash, Default)]
pub enum Gauge {
    /// |p|^2 D ln D.
    #[default]
    Velocity,
    /// |r|^2 D^3 ln D.
    Length,
    /// |grad V|^2 D^-1 ln D.
    Acceleration,
}

impl Gauge {
    /// The three forms, in the order velocity, length, acceleration (the
    /// order of [`Gauge::NAMES`]).
    pub const ALL: [Gauge; 3] = [Gauge::Velocity, Gauge::Length, Gauge::Acceleration];
    /// The accepted names, the only spelling of the gauges anywhere.
    pub const NAMES: &'static [&'static str] = &["velocity", "length", "acceleration"];

    /// The name used on the command line: `velocity`, `length`, `acceleration`.
    pub fn name(self) -> &'static str {
        Self::NAMES[self as usize]
    }

    /// One line saying which dipole matrix element the form uses.
    pub fn description(self) -> &'static str {
        match self {
            Gauge::Velocity => "|p|^2 D ln D",
            Gauge::Length => "|r|^2 D^3 ln D",
            Gauge::Acceleration => "|grad V|^2 D^-1 ln D",
        }
    }
}

impl std::fmt::Display for Gauge {
    fn fmt(&self, f: &mut std::fmt::Formatter<'_>) -> std::fmt::Result {
        f.write_str(self.name())
    }
}

impl FromStr for Gauge {
    type Err = UnknownName;

    /// Parses a name written by [`Gauge::name`] (exact, lower case).
    fn from_str(s: &str) -> Result<Self, UnknownName> {
        UnknownName::find(s, &Self::ALL, Self::name, Self::NAMES)
    }
}

/// A Bethe logarithm ln k0(n, l) with its error estimate and diagnostics.
///
/// `value` is held at `bits` of precision; `abs_err` is an *estimate* of
/// |value - exact| obtained by refinement (see the crate documentation), not a
/// rigorous bound. What is printed is [`BetheValue::printed`]: a decimal and
/// an error that covers that decimal (the printed-value rule below).
#[derive(Debug, Clone)]
pub struct BetheValue {
    /// Principal quantum number.
    pub n: u32,
    /// Orbital angular momentum.
    pub l: u32,
    /// ln k0(n, l), energies in units of Z^2 Ry.
    pub value: Float,
    /// Estimated absolute error of `value` (not of its printed decimal).
    pub abs_err: f64,
    /// Requested digits D: abs_err < 10^-D (absolute goal) or
    /// abs_err <= 10^-D |value| (significant goal).
    pub digits: u32,
    /// The kind of goal `digits` sets.
    pub goal: Goal,
    /// Method that produced the value.
    pub method: Method,
    /// Working precision of the final evaluation (bits).
    pub bits: u32,
    /// Quadrature nodes used by the final evaluation (0 if none).
    pub nodes: usize,
    /// Series terms (or spectral terms) used by the final evaluation.
    pub terms: usize,
    /// Wall time in seconds (all runs, for a significant goal).
    pub seconds: f64,
}

impl BetheValue {
    /// Digits after the decimal point of the printed value: D + 2 for an
    /// absolute goal; for a significant goal, as many as give D + 2
    /// significant digits.
    pub fn decimals(&self) -> usize {
        decimals_for(&self.value, self.digits, self.goal)
    }

    /// The printed value and its printed error (the printed-value rule of
    /// [`printed`]).
    pub fn printed(&self) -> Printed {
        printed(&self.value, self.abs_err, self.decimals())
    }

    /// The value as a decimal string with [`BetheValue::decimals`] digits
    /// after the point (rounded to nearest), for example `2.98412855576549841...`.
    pub fn value_string(&self) -> String {
        self.printed().value
    }

    /// |printed decimal - `reference.value`|: the actual error of what is
    /// printed, judged against a (more precise) reference value. Rounded up.
    pub fn printed_distance(&self, reference: &BetheValue) -> f64 {
        let p = self.value_string();
        let prec = self.value.prec().max(reference.value.prec()) + 64;
        let x = Float::with_val(prec, Float::parse(&p).expect("a printed decimal parses"));
        let d = Float::with_val(prec, x - &reference.value).abs();
        Float::with_val_round(53, &d, rug::float::Round::Up)
            .0
            .to_f64()
    }

    /// The value rounded to the nearest f64, with an error that covers that
    /// f64: `abs_err` plus the conversion |f64 - value| (measured exactly,
    /// rounded up). For passing ln k0 on to code that works in f64.
    pub fn to_f64_with_err(&self) -> (f64, f64) {
        let x = self.value.to_f64();
        let mut d = Float::with_val(self.value.prec().max(64) + 64, x);
        d -= &self.value;
        let conv = Float::with_val_round(53, d.abs_ref(), rug::float::Round::Up)
            .0
            .to_f64();
        (x, up(self.abs_err + conv))
    }

    /// The error of the printed value, rounded up to two significant digits,
    /// e.g. `3.1e-24`: it covers the estimated error and the rounding of the
    /// decimal of [`BetheValue::value_string`].
    pub fn abs_err_string(&self) -> String {
        self.printed().abs_err
    }
}

/// Digits after the point that print `x` to the goal `digits`/`goal` (see
/// [`BetheValue::decimals`]).
pub fn decimals_for(x: &Float, digits: u32, goal: Goal) -> usize {
    let base = digits as usize + 2;
    match goal {
        Goal::Absolute => base,
        Goal::Significant => {
            if x.is_zero() || !x.is_finite() {
                return base;
            }
            // x = m 2^e with 1/2 <= |m| < 1: floor(log10 |x|) from a 53-bit copy
            let lead = Float::with_val(53, x.abs_ref()).log10().to_f64().floor();
            let lead = if lead.is_finite() { lead as i64 } else { 0 };
            // D + 2 significant digits: the last one at 10^(lead - D - 1)
            (base as i64 - 1 - lead).max(0) as usize
        }
    }
}

/// A value as it is printed: a decimal, and an error that covers it.
#[derive(Debug, Clone, PartialEq)]
pub struct Printed {
    /// The decimal, rounded to nearest, e.g. `2.9841286`.
    pub value: String,
    /// The printed error, e.g. `4.5e-8`: two significant digits, rounded up.
    pub abs_err: String,
    /// `abs_err` as a number (at least the true printed error).
    pub err: f64,
}

/// The printed-value rule, used by every output of the workspace.
///
/// `x` is rounded to `frac` digits after the point (the decimal v_p), and the
/// printed error is `abs_err` + |v_p - x| (the rounding, measured exactly),
/// rounded *up* to two significant digits ([`format_err`]). So if `abs_err`
/// covers |x - exact|, the printed error covers |v_p - exact|. The rounding
/// adds at most half a unit of the last printed decimal.
pub fn printed(x: &Float, abs_err: f64, frac: usize) -> Printed {
    let (value, int) = decimal_parts(x, frac);
    // |v_p - x| at enough precision that the difference is exact to 2^-64 relative
    let prec = x.prec().max(64) + (frac as f64 * std::f64::consts::LOG2_10).ceil() as u32 + 64;
    let scale = rug::Integer::from(10).pow(frac as u32);
    let vp = rug::Rational::from((int, scale));
    let mut diff = Float::with_val(prec, &vp);
    diff -= x;
    let rounding = Float::with_val_round(53, diff.abs_ref(), rug::float::Round::Up)
        .0
        .to_f64();
    let total = up(abs_err + rounding);
    let abs_err = format_err(total);
    let err = abs_err.parse::<f64>().unwrap_or(total);
    Printed {
        value,
        abs_err,
        err,
    }
}

/// `e` made slightly larger, so that the sum of two rounded f64 terms is not
/// below the exact sum.
fn up(e: f64) -> f64 {
    if e == 0.0 {
        0.0
    } else {
        e * (1.0 + 4.0 * f64::EPSILON)
    }
}

/// Formats `x` with exactly `frac` digits after the decimal point (no
/// exponent), rounding to nearest. Deterministic for a given `x`.
///
/// This is the bare decimal: an error printed beside it must include the
/// rounding (see [`printed`]).
pub fn decimal_string(x: &Float, frac: usize) -> String {
    decimal_parts(x, frac).0
}

/// The decimal of `x` with `frac` digits after the point, and the integer
/// round(x 10^frac) it shows.
fn decimal_parts(x: &Float, frac: usize) -> (String, rug::Integer) {
    let prec = x.prec().max(64) + (frac as f64 * std::f64::consts::LOG2_10).ceil() as u32;
    let scale = rug::Integer::from(10).pow(frac as u32);
    let scaled = Float::with_val(prec + 64, x * &scale);
    let int = scaled.round().to_integer().unwrap_or_default();
    let mut digits = int.clone().abs().to_string();
    if digits.len() <= frac {
        digits = "0".repeat(frac + 1 - digits.len()) + &digits;
    }
    let split = digits.len() - frac;
    let mut s = String::new();
    if int < 0 {
        s.push('-');
    }
    if frac == 0 {
        s.push_str(&digits);
    } else {
        let _ = write!(s, "{}.{}", &digits[..split], &digits[split..]);
    }
    (s, int)
}

/// Formats an error estimate with two significant digits in exponent form,
/// rounding *up* (1.04e-23 prints as 1.1e-23), so that the printed error is
/// never below `e`. Zero prints as `0`.
pub fn format_err(e: f64) -> String {
    if e == 0.0 || !e.is_finite() {
        return if e == 0.0 { "0".into() } else { format!("{e}") };
    }
    let s = format!("{e:.1e}");
    if s.parse::<f64>().is_ok_and(|p| p >= e) {
        return s;
    }
    // bump the second digit: "a.be-x" -> one unit up
    let (mant, exp) = s.split_once('e').unwrap_or((&s, "0"));
    let mut exp: i32 = exp.parse().unwrap_or(0);
    let m: u32 = mant.replace('.', "").parse().unwrap_or(99) + 1;
    let m = if m >= 100 {
        exp += 1;
        10
    } else {
        m
    };
    format!("{}.{}e{exp}", m / 10, m % 10)
}

/// How two values of the same ln k0 compare (see [`agreement`]).
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct Agreement {
    /// Agreeing decimal digits after the point: floor(-log10 |a - b|),
    /// clipped to the larger number of decimals printed
    /// ([`BetheValue::decimals`]); identical values give that number.
    pub digits: u32,
    /// |a - b| <= a.abs_err + b.abs_err: the values agree within their
    /// combined error estimates.
    pub consistent: bool,
    /// a - b, rounded to f64 (signed).
    pub difference: f64,
}

/// Compares two values of the same quantity: the one comparison used by the
/// cross-method checks, `--method both`, `kzero check` and precision sweeps.
///
/// The difference is formed at the larger of the two working precisions and
/// rounded once to f64.
///
/// # Accuracy
/// `consistent` compares that f64 difference with the sum of the two error
/// estimates; both are estimates, so this is a statistical statement, not a
/// proof.
pub fn agreement(a: &BetheValue, b: &BetheValue) -> Agreement {
    let prec = a.value.prec().max(b.value.prec());
    let signed = Float::with_val(prec, &a.value - &b.value);
    let diff = signed.clone().abs();
    let cap = a.decimals().max(b.decimals()) as u32;
    let digits = if diff.is_zero() {
        cap
    } else {
        let l = -diff.clone().log10().to_f64();
        if l <= 0.0 {
            0
        } else {
            (l.floor() as u32).min(cap)
        }
    };
    let tol = a.abs_err + b.abs_err;
    Agreement {
        digits,
        consistent: diff.to_f64() <= tol,
        difference: signed.to_f64(),
    }
}

/// Hint for `rug::Integer::pow` in `decimal_string`.
use rug::ops::Pow as _;
