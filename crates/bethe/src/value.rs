//! The result of a Bethe-logarithm computation: value, error estimate, diagnostics.

use rug::Float;
use std::fmt::Write as _;

/// Which method produced a value.
#[derive(Debug, Clone, Copy, PartialEq, Eq, Hash)]
pub enum Method {
    /// Photon-energy integral with the Sturmian Coulomb Green's function.
    Green,
    /// Explicit sum over the bound and continuum spectrum.
    Spectral,
}

impl Method {
    /// The name used on the command line and in tables: `green` or `spectral`.
    pub fn name(self) -> &'static str {
        match self {
            Method::Green => "green",
            Method::Spectral => "spectral",
        }
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
    /// The name used on the command line: `velocity`, `length`, `acceleration`.
    pub fn name(self) -> &'static str {
        match self {
            Gauge::Velocity => "velocity",
            Gauge::Length => "length",
            Gauge::Acceleration => "acceleration",
        }
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

/// Hint for `rug::Integer::pow` in `decimal_string`.
use rug::ops::Pow as _;
