//! Exact bound-state quantities of hydrogen: radial integrals
//! <n l| r^k |n2 l2> (bohr^k) and absorption oscillator strengths, with
//! their decimal forms.

use crate::error::EngineError;
use kzero_basis::exact::Surd;
use kzero_basis::radial::radial_integral;
use kzero_basis::BoundState;
use kzero_bethe::value::{printed, Printed};
use rug::{Float, Rational};

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

/// An exact radial integral of hydrogen.
#[derive(Debug, Clone)]
pub struct RadialResult {
    /// The bra.
    pub bra: BoundState,
    /// The ket.
    pub ket: BoundState,
    /// The power k of r.
    pub power: i32,
    /// The exact value (bohr^k).
    pub value: Surd,
    /// The value with `digits` decimals and its printed error.
    pub decimal: Printed,
    /// The exact form, `c` or `c*sqrt(r)`.
    pub exact: String,
}

/// <n l| r^power |n2 l2> for hydrogen (Z = 1), in bohr^power, exact and
/// with `digits` decimals.
///
/// # Accuracy
/// Exact; the decimal is rounded to nearest (error below 10^-digits).
///
/// # Errors
/// Invalid states or a divergent integral (bad input).
pub fn radial(
    n: i64,
    l: i64,
    n2: i64,
    l2: i64,
    power: i32,
    digits: u32,
) -> Result<RadialResult, EngineError> {
    let bra = BoundState::hydrogen(n, l)?;
    let ket = BoundState::hydrogen(n2, l2)?;
    let value = radial_integral(&bra, &ket, power)?;
    Ok(RadialResult {
        decimal: surd_decimal(&value, digits),
        exact: surd_exact(&value),
        bra,
        ket,
        power,
        value,
    })
}

/// An exact absorption oscillator strength of hydrogen.
#[derive(Debug, Clone)]
pub struct OscillatorResult {
    /// The initial state.
    pub from: BoundState,
    /// The final state.
    pub to: BoundState,
    /// The exact value (positive for absorption, negative for emission).
    pub value: Rational,
    /// The value with `digits` decimals and its printed error.
    pub decimal: Printed,
}

/// f(n l -> n2 l2) for hydrogen, exact and with `digits` decimals.
///
/// # Accuracy
/// Exact; the decimal is rounded to nearest (error below 10^-digits).
///
/// # Errors
/// Invalid states or a transition that is not dipole-allowed (bad input).
pub fn oscillator(
    n: i64,
    l: i64,
    n2: i64,
    l2: i64,
    digits: u32,
) -> Result<OscillatorResult, EngineError> {
    let from = BoundState::hydrogen(n, l)?;
    let to = BoundState::hydrogen(n2, l2)?;
    let value = kzero_basis::oscillator::oscillator_strength(&from, &to)?;
    Ok(OscillatorResult {
        decimal: rational_decimal(&value, digits),
        from,
        to,
        value,
    })
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn lyman_alpha_values() {
        // f(1s -> 2p) = 2^13/3^9 = 0.41619671797998... (Bethe & Salpeter 1957).
        let f = oscillator(1, 0, 2, 1, 20).unwrap();
        assert_eq!(f.value, Rational::from((8192, 19683)));
        assert_eq!(f.decimal.value, "0.41619671797998272621");
        // <1s| r |2p> = 2^8/3^4 sqrt(1/6) bohr (closed form; Bethe & Salpeter 1957).
        let r = radial(1, 0, 2, 1, 1, 20).unwrap();
        assert_eq!(r.exact, "256/81*sqrt(1/6)");
        assert!(oscillator(1, 0, 2, 0, 20).is_err());
    }
}
