//! `kzero radial` and `kzero oscillator`: exact bound-state quantities.

use crate::app_error::AppError;
use crate::output;
use kzero_basis::exact::Surd;
use kzero_basis::radial::radial_integral;
use kzero_basis::BoundState;
use kzero_bethe::value::{printed, Printed};
use rug::{Float, Rational};
use serde_json::json;

/// Arguments of `kzero radial`.
#[derive(Debug, clap::Args)]
pub struct RadialArgs {
    /// n of the bra.
    #[arg(value_name = "N", allow_negative_numbers = true)]
    pub n: i64,
    /// l of the bra.
    #[arg(value_name = "L", allow_negative_numbers = true)]
    pub l: i64,
    /// n of the ket.
    #[arg(value_name = "N2", allow_negative_numbers = true)]
    pub n2: i64,
    /// l of the ket.
    #[arg(value_name = "L2", allow_negative_numbers = true)]
    pub l2: i64,
    /// Power K of r (integer). The integrand behaves like r^(L+L2+2+K) at
    /// the origin, so the integral converges for K >= -(L + L2 + 2): K >= -2
    /// for two S states, K = -3 from L + L2 = 1 on; a divergent K is refused
    /// (exit 2).
    #[arg(
        long,
        value_name = "K",
        default_value_t = 1,
        allow_negative_numbers = true
    )]
    pub power: i32,
    /// Decimals printed: absolute error below 10^-D (5..=200).
    #[arg(long, value_name = "D", default_value_t = 20, value_parser = crate::args::digits_parser())]
    pub digits: u32,
    /// One JSON object instead of text.
    #[arg(long)]
    pub json: bool,
}

/// Arguments of `kzero oscillator`.
#[derive(Debug, clap::Args)]
pub struct OscillatorArgs {
    /// n of the initial state.
    #[arg(value_name = "N", allow_negative_numbers = true)]
    pub n: i64,
    /// l of the initial state.
    #[arg(value_name = "L", allow_negative_numbers = true)]
    pub l: i64,
    /// n of the final state.
    #[arg(value_name = "N2", allow_negative_numbers = true)]
    pub n2: i64,
    /// l of the final state (|l - l2| = 1).
    #[arg(value_name = "L2", allow_negative_numbers = true)]
    pub l2: i64,
    /// Decimals printed: absolute error below 10^-D (5..=200).
    #[arg(long, value_name = "D", default_value_t = 20, value_parser = crate::args::digits_parser())]
    pub digits: u32,
    /// One JSON object instead of text.
    #[arg(long)]
    pub json: bool,
}

/// Bits needed to print `x` (of magnitude about 2^exp) with `digits` decimals.
fn bits_for(exp: i32, digits: u32) -> u32 {
    let int_bits = exp.max(0) as u32;
    (f64::from(digits) * std::f64::consts::LOG2_10).ceil() as u32 + int_bits + 64
}

/// An exact surd as a decimal with `digits` decimals (rounded to nearest)
/// and its printed error: the rounding plus the bound on the conversion to
/// binary (at most half a unit of the last decimal in all).
pub fn surd_decimal(s: &Surd, digits: u32) -> Printed {
    let rough = s.to_float(64);
    let exp = rough.get_exp().unwrap_or(0);
    let bits = bits_for(exp, digits);
    let x = s.to_float(bits);
    printed(&x, conversion_bound(&x, bits), digits as usize)
}

/// An exact rational as a decimal with `digits` decimals and its printed
/// error (see [`surd_decimal`]).
pub fn rational_decimal(q: &Rational, digits: u32) -> Printed {
    let rough = Float::with_val(64, q);
    let exp = rough.get_exp().unwrap_or(0);
    let bits = bits_for(exp, digits);
    let x = Float::with_val(bits, q);
    printed(&x, conversion_bound(&x, bits), digits as usize)
}

/// A bound on the error of an exact number converted to `bits` bits by a
/// few correctly rounded operations: 8 |x| 2^-bits.
fn conversion_bound(x: &Float, bits: u32) -> f64 {
    let e = x.get_exp().unwrap_or(0);
    f64::from(e + 3 - bits as i32).exp2()
}

/// The exact form of a surd: `c` or `c*sqrt(r)`.
pub fn surd_exact(s: &Surd) -> String {
    if s.radicand == 1 || s.coef == 0 {
        s.coef.to_string()
    } else {
        format!("{}*sqrt({})", s.coef, s.radicand)
    }
}

/// Runs `kzero radial`.
pub fn run_radial(a: &RadialArgs) -> Result<(), AppError> {
    let s1 = BoundState::hydrogen(a.n, a.l)?;
    let s2 = BoundState::hydrogen(a.n2, a.l2)?;
    let v = radial_integral(&s1, &s2, a.power)?;
    let p = surd_decimal(&v, a.digits);
    let dec = &p.value;
    let exact = surd_exact(&v);
    if a.json {
        let j = json!({
            "n": s1.n(), "l": s1.l(), "n2": s2.n(), "l2": s2.l(), "power": a.power,
            "value": dec, "abs_err": p.abs_err, "exact": exact, "digits": a.digits,
            "units": format!("bohr^{}", a.power),
        });
        output::print(&format!(
            "{}\n",
            serde_json::to_string_pretty(&j).unwrap_or_default()
        ))
    } else {
        output::print(&format!(
            "<{} {}| r^{} |{} {}> = {dec} bohr^{}\n  exact: {exact}\n",
            s1.n(),
            s1.l(),
            a.power,
            s2.n(),
            s2.l(),
            a.power
        ))
    }
}

/// Runs `kzero oscillator`.
pub fn run_oscillator(a: &OscillatorArgs) -> Result<(), AppError> {
    let s1 = BoundState::hydrogen(a.n, a.l)?;
    let s2 = BoundState::hydrogen(a.n2, a.l2)?;
    let f = kzero_basis::oscillator::oscillator_strength(&s1, &s2)?;
    let p = rational_decimal(&f, a.digits);
    let dec = &p.value;
    if a.json {
        let j = json!({
            "n": s1.n(), "l": s1.l(), "n2": s2.n(), "l2": s2.l(),
            "f": dec, "abs_err": p.abs_err, "exact": f.to_string(), "digits": a.digits,
        });
        output::print(&format!(
            "{}\n",
            serde_json::to_string_pretty(&j).unwrap_or_default()
        ))
    } else {
        output::print(&format!(
            "f({} {} -> {} {}) = {dec}\n  exact: {f}\n",
            s1.n(),
            s1.l(),
            s2.n(),
            s2.l()
        ))
    }
}
