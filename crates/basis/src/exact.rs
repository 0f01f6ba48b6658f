//! Exact numbers and exact "polynomial times exponential" functions.
//!
//! Every hydrogenic radial function, and everything derived from it by
//! differentiation or multiplication by powers of r, has the form
//!
//! ```text
//! f(r) = sqrt(radicand) * scale * exp(-kappa r) * sum_p c_p r^p
//! ```
//!
//! with rational `radicand`, `scale`, `kappa` and integer `c_p`. Integrals of
//! products of such functions against r^k are exact: a rational number times
//! the square root of a rational number ([`Surd`]).

use crate::error::BasisError;
use rug::ops::Pow;
use rug::{Float, Integer, Rational};

/// An exact real number `coef * sqrt(radicand)` with rational `coef` and
/// non-negative rational `radicand`.
#[derive(Debug, Clone, PartialEq, Eq)]
pub struct Surd {
    /// Rational factor (carries the sign).
    pub coef: Rational,
    /// Non-negative rational under the square root.
    pub radicand: Rational,
}

impl Surd {
    /// The exact square `coef^2 * radicand`.
    pub fn square(&self) -> Rational {
        Rational::from(&self.coef * &self.coef) * &self.radicand
    }

    /// The value rounded to `prec` bits (correctly rounded square root, then
    /// one multiplication: relative error below 2^(1-prec)).
    pub fn to_float(&self, prec: u32) -> Float {
        let s = Float::with_val(prec, &self.radicand).sqrt();
        s * &self.coef
    }
}

/// `k!` as an exact integer.
pub fn factorial(k: u32) -> Integer {
    Integer::from(Integer::factorial(k))
}

/// Binomial coefficient C(n, k) as an exact integer (0 when k > n).
pub fn binomial(n: u32, k: u32) -> Integer {
    if k > n {
        Integer::new()
    } else {
        Integer::from(Integer::binomial_u(n, k))
    }
}

/// An exact function `sqrt(radicand) * scale * exp(-kappa r) * sum_p c_p r^p`
/// (r in bohr). Index p of `coeffs` is the power of r.
#[derive(Debug, Clone, PartialEq)]
pub struct PolyExp {
    /// Decay constant kappa > 0 (inverse bohr).
    pub kappa: Rational,
    /// Rational prefactor.
    pub scale: Rational,
    /// Integer coefficients, index = power of r.
    pub coeffs: Vec<Integer>,
    /// Non-negative rational under the square root (normalization).
    pub radicand: Rational,
}

impl PolyExp {
    /// Builds the function from rational coefficients (index = power of r),
    /// pulling the least common denominator into `scale`.
    pub fn from_rational(kappa: Rational, radicand: Rational, coeffs: &[Rational]) -> Self {
        let mut lcm = Integer::from(1);
        for c in coeffs {
            if *c != 0 {
                lcm.lcm_mut(c.denom());
            }
        }
        let ints: Vec<Integer> = coeffs
            .iter()
            .map(|c| c.numer() * Integer::from(&lcm / c.denom()))
            .collect();
        let mut f = PolyExp {
            kappa,
            scale: Rational::from((Integer::from(1), lcm)),
            coeffs: ints,
            radicand,
        };
        f.normalize();
        f
    }

    /// Removes trailing zero coefficients and a common integer factor.
    fn normalize(&mut self) {
        while self.coeffs.last().is_some_and(|c| *c == 0) {
            self.coeffs.pop();
        }
        let mut g = Integer::new();
        for c in &self.coeffs {
            g.gcd_mut(c);
        }
        if g > 1 {
            for c in &mut self.coeffs {
                c.div_exact_mut(&g);
            }
            self.scale *= Rational::from(g);
        }
    }

    /// The coefficients as exact rationals including `scale` (index = power).
    pub fn rational_coeffs(&self) -> Vec<Rational> {
        self.coeffs
            .iter()
            .map(|c| Rational::from(c) * &self.scale)
            .collect()
    }

    /// Lowest power of r with a non-zero coefficient (`None` for the zero function).
    pub fn lowest_power(&self) -> Option<usize> {
        self.coeffs.iter().position(|c| *c != 0)
    }

    /// Degree of the polynomial part (`None` for the zero function).
    pub fn degree(&self) -> Option<usize> {
        if self.coeffs.iter().all(|c| *c == 0) {
            None
        } else {
            Some(self.coeffs.len() - 1)
        }
    }

    /// `r^k f(r)` for k >= 0.
    pub fn times_r_pow(&self, k: usize) -> Self {
        let mut c = vec![Integer::new(); k];
        c.extend(self.coeffs.iter().cloned());
        PolyExp {
            kappa: self.kappa.clone(),
            scale: self.scale.clone(),
            coeffs: c,
            radicand: self.radicand.clone(),
        }
    }

    /// `r f'(r)` (exact).
    pub fn r_derivative(&self) -> Self {
        // r d/dr [e^{-kr} sum c_p r^p] = e^{-kr} sum (p c_p - k c_{p-1}) r^p
        let rc = self.rational_coeffs();
        let mut out = vec![Rational::new(); rc.len() + 1];
        for (p, c) in rc.iter().enumerate() {
            out[p] += Rational::from(c * p as u64);
            out[p + 1] -= Rational::from(c * &self.kappa);
        }
        PolyExp::from_rational(self.kappa.clone(), self.radicand.clone(), &out)
    }

    /// `a f + b g` for two functions with equal `kappa` and `radicand`.
    ///
    /// # Errors
    /// [`BasisError::InvalidArgument`] if kappa or radicand differ.
    pub fn lin_comb(&self, a: &Rational, other: &Self, b: &Rational) -> Result<Self, BasisError> {
        if self.kappa != other.kappa || self.radicand != other.radicand {
            return Err(BasisError::InvalidArgument(
                "linear combination of functions with different exponent or normalization".into(),
            ));
        }
        let x = self.rational_coeffs();
        let y = other.rational_coeffs();
        let len = x.len().max(y.len());
        let mut out = vec![Rational::new(); len];
        for (p, c) in x.iter().enumerate() {
            out[p] += Rational::from(c * a);
        }
        for (p, c) in y.iter().enumerate() {
            out[p] += Rational::from(c * b);
        }
        Ok(PolyExp::from_rational(
            self.kappa.clone(),
            self.radicand.clone(),
            &out,
        ))
    }

    /// Value at `r` (bohr) at `prec` bits.
    ///
    /// # Accuracy
    /// Horner evaluation in MPFR; cancellation in the polynomial (large n at
    /// large r) is not compensated: raise `prec` by the digits the terms lose.
    pub fn eval(&self, r: &Float, prec: u32) -> Float {
        let r = Float::with_val(prec, r);
        let mut acc = Float::with_val(prec, 0);
        for c in self.coeffs.iter().rev() {
            acc *= &r;
            acc += c;
        }
        let e = Float::with_val(prec, -(Float::with_val(prec, &self.kappa) * &r)).exp();
        let s = Float::with_val(prec, &self.radicand).sqrt();
        acc * e * s * &self.scale
    }

    /// The exact integral `int_0^inf f(r) g(r) r^k dr`.
    ///
    /// # Errors
    /// [`BasisError::Divergent`] (with zeros as quantum numbers) when the
    /// integrand behaves like r^m with m <= -1 at the origin.
    pub fn integral_with(&self, other: &Self, k: i32) -> Result<Surd, BasisError> {
        let (p0, q0) = match (self.lowest_power(), other.lowest_power()) {
            (Some(p), Some(q)) => (p, q),
            _ => {
                return Ok(Surd {
                    coef: Rational::new(),
                    radicand: Rational::from(1),
                })
            }
        };
        if (p0 + q0) as i64 + i64::from(k) < 0 {
            return Err(BasisError::Divergent {
                n: 0,
                l: 0,
                n2: 0,
                l2: 0,
                power: k,
            });
        }
        let lambda = Rational::from(&self.kappa + &other.kappa);
        let (ln, ld) = (lambda.numer().clone(), lambda.denom().clone());
        let dp = self.coeffs.len() - 1;
        let dq = other.coeffs.len() - 1;
        let smax = dp + dq;
        // conv_s = sum_{p+q=s} a_p b_q
        let mut conv = vec![Integer::new(); smax + 1];
        for (p, a) in self.coeffs.iter().enumerate().skip(p0) {
            if *a == 0 {
                continue;
            }
            for (q, b) in other.coeffs.iter().enumerate().skip(q0) {
                if *b == 0 {
                    continue;
                }
                conv[p + q] += Integer::from(a * b);
            }
        }
        // sum_s conv_s (s+k)! / lambda^{s+k+1}
        //   = [sum_s conv_s (s+k)! ld^{s+k+1} ln^{smax-s}] / ln^{smax+k+1}
        let mut num = Integer::new();
        let base = ((p0 + q0) as i64 + i64::from(k)) as u32;
        let mut fact = factorial(base);
        let mut ldpow = ld.clone().pow(base + 1);
        let mut lnpow = ln.clone().pow((smax - p0 - q0) as u32);
        for (s, cs) in conv.iter().enumerate().skip(p0 + q0) {
            if *cs != 0 {
                num += Integer::from(cs * &fact) * &ldpow * &lnpow;
            }
            // advance to s+1
            let m = (s as i64 + i64::from(k) + 1) as u32;
            fact *= m;
            ldpow *= &ld;
            if s < smax {
                lnpow.div_exact_mut(&ln);
            }
        }
        let den = ln.pow((smax as i64 + i64::from(k) + 1) as u32);
        let coef = Rational::from((num, den)) * &self.scale * &other.scale;
        let radicand = Rational::from(&self.radicand * &other.radicand);
        Ok(simplify_surd(coef, radicand))
    }
}

/// Pulls perfect-square factors out of the radicand where cheap (exact
/// squares of numerator and denominator), leaving the value unchanged.
pub fn simplify_surd(coef: Rational, radicand: Rational) -> Surd {
    let (num, den) = radicand.into_numer_denom();
    let (sn, rn) = num.sqrt_rem(Integer::new());
    let (sd, rd) = den.sqrt_rem(Integer::new());
    if rn == 0 && rd == 0 {
        Surd {
            coef: coef * Rational::from((sn, sd)),
            radicand: Rational::from(1),
        }
    } else {
        let n2 = Integer::from(&sn * &sn) + rn;
        let d2 = Integer::from(&sd * &sd) + rd;
        Surd {
            coef,
            radicand: Rational::from((n2, d2)),
        }
    }
}
