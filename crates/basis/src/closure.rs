//! Closure sum rules: sums over the complete spectrum (bound and continuum)
//! of a state's dipole matrix elements, evaluated exactly by closure as
//! expectation values in the state itself.
//!
//! For a bound state |n l> with the radial parts g_L of p|n l> in the
//! channels L = l +- 1 (weights w_L, [`Channel::weight`]) and
//! H_L = -(1/2) d^2/dr^2 + L(L+1)/(2 r^2) - Z/r:
//!
//! * sum_m |p_nm|^2 = sum_L w_L <g_L|g_L> = <p^2> = Z^2/n^2 (virial
//!   theorem);
//! * sum_m |p_nm|^2 (E_m - E_n) = sum_L w_L <g_L| H_L - E_n |g_L>
//!   = 2 pi Z |psi(0)|^2, that is 2 Z^4/n^3 for l = 0 and 0 otherwise;
//! * the Thomas-Reiche-Kuhn sum sum_m f_nm = (2/3) sum_m |r_nm|^2
//!   (E_m - E_n) = 1, with r|n l> in place of p|n l>.
//!
//! Atomic units (hartree, bohr). Exact rational arithmetic throughout: each
//! rule holds with zero difference, which makes them a check of the exact
//! basis (radial functions, gradients, angular weights).

use crate::error::BasisError;
use crate::exact::PolyExp;
use crate::gradient::{gradient_function, Channel};
use crate::radial::radial_function;
use crate::state::BoundState;
use rug::Rational;

/// The three closure sums of one state, exact (see the module docs).
#[derive(Debug, Clone, PartialEq, Eq)]
pub struct ClosureSums {
    /// sum_m |p_nm|^2 (hartree times electron mass, a.u.).
    pub p_squared: Rational,
    /// sum_m |p_nm|^2 (E_m - E_n) (a.u.).
    pub p_squared_energy: Rational,
    /// Thomas-Reiche-Kuhn sum of oscillator strengths (dimensionless).
    pub oscillator_strength: Rational,
}

impl ClosureSums {
    /// What the rules say for (n, l) at charge Z: Z^2/n^2, 2 Z^4/n^3 for
    /// l = 0 (0 otherwise), and 1.
    pub fn expected(state: &BoundState) -> ClosureSums {
        let n = Rational::from(state.n());
        let z = state.z().clone();
        let z2 = Rational::from(&z * &z);
        let p_squared = Rational::from(&z2 / &n) / &n;
        let p_squared_energy = if state.l() == 0 {
            Rational::from(&z2 * &z2) * 2u32 / Rational::from(&n * &n) / &n
        } else {
            Rational::new()
        };
        ClosureSums {
            p_squared,
            p_squared_energy,
            oscillator_strength: Rational::from(1),
        }
    }
}

/// <f| f> r^k integrated exactly, required to be rational.
fn rational_integral(a: &PolyExp, k: i32) -> Result<Rational, BasisError> {
    let s = a.integral_with(a, k)?;
    if s.radicand == 1 {
        Ok(s.coef)
    } else {
        Err(BasisError::NotRational)
    }
}

/// <f| H_L - E |f> for a reduced radial function f vanishing at the origin:
/// (1/2) int f'^2 + L(L+1)/2 int f^2/r^2 - Z int f^2/r - E int f^2 (hartree).
fn h_minus_e(f: &PolyExp, big_l: u32, z: &Rational, e: &Rational) -> Result<Rational, BasisError> {
    let rf = f.r_derivative();
    let ll = Rational::from(big_l * (big_l + 1));
    let kin = rational_integral(&rf, -2)? / 2u32;
    let cent = rational_integral(f, -2)? * ll / 2u32;
    let coul = rational_integral(f, -1)? * z;
    let norm = rational_integral(f, 0)? * e;
    Ok(kin + cent - coul - norm)
}

/// The three closure sums of `state`, evaluated exactly by closure.
///
/// # Accuracy
/// Exact (rational arithmetic).
///
/// # Errors
/// [`BasisError`] from the exact integrals (none for a valid state), or
/// [`BasisError::NotRational`] if an integral that must be rational is not.
pub fn closure_sums(state: &BoundState) -> Result<ClosureSums, BasisError> {
    let l = state.l();
    let z = state.z().clone();
    let e = state.energy();
    let mut p2 = Rational::new();
    let mut pde = Rational::new();
    let mut trk = Rational::new();
    let v = radial_function(state).times_r_pow(2);
    for ch in Channel::open(l) {
        let w = ch.weight(l);
        let big_l = ch.big_l(l);
        let g = gradient_function(state, ch)?;
        p2 += Rational::from(&w * &rational_integral(&g, 0)?);
        pde += Rational::from(&w * &h_minus_e(&g, big_l, &z, &e)?);
        trk += Rational::from(&w * &h_minus_e(&v, big_l, &z, &e)?);
    }
    trk *= Rational::from((2, 3));
    Ok(ClosureSums {
        p_squared: p2,
        p_squared_energy: pde,
        oscillator_strength: trk,
    })
}

#[cfg(test)]
mod tests {
    use super::*;

    /// The rules hold exactly (Bethe & Salpeter 1957 for the sum rules).
    #[test]
    fn closure_rules_hold_exactly() {
        for (n, l) in [
            (1, 0),
            (2, 0),
            (2, 1),
            (3, 0),
            (3, 2),
            (5, 1),
            (8, 3),
            (12, 0),
        ] {
            let s = BoundState::hydrogen(n, l).unwrap();
            assert_eq!(
                closure_sums(&s).unwrap(),
                ClosureSums::expected(&s),
                "({n},{l})"
            );
        }
    }

    /// At Z = 2 the rules scale as Z^2 and Z^4 (2p and 1s of He+).
    #[test]
    fn closure_rules_scale_with_the_charge() {
        for (n, l) in [(1, 0), (2, 1), (3, 0)] {
            let s = BoundState::new(n, l, Rational::from(2)).unwrap();
            let got = closure_sums(&s).unwrap();
            assert_eq!(got, ClosureSums::expected(&s), "({n},{l})");
            let h = ClosureSums::expected(&BoundState::hydrogen(n, l).unwrap());
            assert_eq!(got.p_squared, h.p_squared * 4u32);
        }
    }

    /// A wrong expectation is detected: the rules are not vacuous.
    #[test]
    fn a_wrong_rule_fails() {
        let s = BoundState::hydrogen(2, 0).unwrap();
        let got = closure_sums(&s).unwrap();
        assert_ne!(got.p_squared, Rational::from((1, 2)));
        assert_ne!(got.p_squared_energy, Rational::new());
    }
}
