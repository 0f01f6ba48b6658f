//! The result of a Bethe-logarithm computation: value, error estimate,
//! diagnostics; the names of the methods and gauges; the comparison of two
//! values ([`agreement`]).

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
        Self::ALL
            .into_iter()
            .find(|m| m.name() == s)
            .ok_or_else(|| UnknownName {
                given: s.to_string(),
                expected: Self::NAMES,
            })
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
    /// Every gauge, in the order of [`Gauge::NAMES`].
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
        Self::ALL
            .into_iter()
            .find(|g| g.name() == s)
            .ok_or_else(|| UnknownName {
                given: s.to_string(),
                expected: Self::NAMES,
            })
    }
}

/// A Bethe logarithm ln k0(n, l) with its error estimate and diagnostics.
///
/// `value` is held at `bits` of precision; `abs_err` is an *estimate* of
/// |value - exact| obtained by refinement (see the crate documentation), not a
/// rigorous bound.
#[derive(Debug, Clone)]
pub struct BetheValue {
    /// Principal quantum number.
    pub n: u32,
    /// Orbital angular momentum.
    pub l: u32,
    /// ln k0(n, l), energies in units of Z^2 Ry.
    pub value: Float,
    /// Estimated absolute error of `value`.
    pub abs_err: f64,
    /// Requested digits D (goal: abs_err < 10^-D).
    pub digits: u32,
    /// Method that produced the value.
    pub method: Method,
    /// Working precision of the final evaluation (bits).
    pub bits: u32,
    /// Quadrature nodes used by the final evaluation (0 if none).
    pub nodes: usize,
    /// Series terms (or spectral terms) used by the final evaluation.
    pub terms: usize,
    /// Wall time in seconds.
    pub seconds: f64,
}

impl BetheValue {
    /// The value as a decimal string with `digits + 2` digits after the point
    /// (rounded to nearest), for example `2.98412855576549841...`.
    pub fn value_string(&self) -> String {
        decimal_string(&self.value, self.digits as usize + 2)
    }

    /// The error estimate as a short decimal string, e.g. `3.1e-24`.
    pub fn abs_err_string(&self) -> String {
        format_err(self.abs_err)
    }
}

/// Formats `x` with exactly `frac` digits after the decimal point (no
/// exponent), rounding to nearest. Deterministic for a given `x`.
pub fn decimal_string(x: &Float, frac: usize) -> String {
    let prec = x.prec().max(64);
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
    let _ = write!(s, "{}.{}", &digits[..split], &digits[split..]);
    s
}

/// Formats an error estimate with two significant digits in exponent form.
pub fn format_err(e: f64) -> String {
    if e == 0.0 {
        "0".to_string()
    } else {
        format!("{e:.1e}")
    }
}

/// How two values of the same ln k0 compare (see [`agreement`]).
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct Agreement {
    /// Agreeing decimal digits after the point: floor(-log10 |a - b|),
    /// clipped to 0..=max(digits)+2 (the decimals printed); identical values
    /// give max(digits) + 2.
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
    let cap = a.digits.max(b.digits) + 2;
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
