//! Exact reduced resolvents of the dipole source and the exact power sums.
//!
//! For one intermediate partial wave L of |n l> (Z = 1), with x = 2r/n, every
//! function here is `sqrt(rho) exp(-x/2) sum_p a_p x^p` with exact rational
//! a_p and the radicand rho of the state's normalization. The chain
//!
//! ```text
//! phi_0 = g_L (the gradient function),   (H_L - E_n) phi_a = phi_(a-1),   phi_a orthogonal to u_nL
//! ```
//!
//! stays in that form: (H_L - E_n) maps x^p e^(-x/2) to
//! (2/n^2) [(L(L+1) - p(p-1)) x^(p-2) + (p - n) x^(p-1)] e^(-x/2), so the
//! equation is solved coefficient by coefficient from the top power down; the
//! coefficient of x^n is free (it is fixed by the orthogonality to u_nL) and
//! the equation for x^(n-1) is the solvability condition, which holds
//! because phi_(a-1) is orthogonal to u_nL (checked, never assumed). The
//! same-n state is thus left out, as the sums require: phi_a is the sum over
//! every other state m (bound, lower or upper, and continuum) of
//! |m> <m|g_L> / d_m^a, d_m = E_m - E_n in hartree.
//!
//! With c_m = w_L |<m|p|n l>|^2 (angular weight w_L), the velocity-form power
//! sums M_j = sum_m c_m d_m^j are then exact rational numbers:
//! M_(-2a) = sum_L w_L <phi_a|phi_a>, M_(1-2a) = sum_L w_L <phi_a|phi_(a-1)>,
//! and M_1 = sum_L w_L <g_L|(H_L - E_n)|g_L>.

use kzero_basis::exact::PolyExp;
use kzero_basis::gradient::{gradient_function, Channel};
use kzero_basis::radial::reduced_radial_function;
use kzero_basis::BoundState;
use rug::{Assign, Integer, Rational};

use crate::BetheError;

/// A function sqrt(rho) exp(-x/2) sum_p a[p] x^p, x = 2r/n (rho implicit).
#[derive(Debug, Clone, PartialEq)]
pub(crate) struct XPoly {
    pub a: Vec<Rational>,
}

impl XPoly {
    fn from_polyexp(f: &PolyExp, n: u32) -> Self {
        // c_p r^p = c_p (n/2)^p x^p
        let half_n = Rational::from((n, 2u32));
        let mut pw = Rational::from(1);
        let mut a = Vec::new();
        for c in f.rational_coeffs() {
            a.push(Rational::from(&c * &pw));
            pw *= &half_n;
        }
        XPoly { a }
    }

    /// The same function as a [`PolyExp`] in r with radicand `rho`.
    pub fn to_polyexp(&self, n: u32, rho: &Rational) -> PolyExp {
        let two_over_n = Rational::from((2u32, n));
        let mut pw = Rational::from(1);
        let mut c = Vec::with_capacity(self.a.len());
        for a in &self.a {
            c.push(Rational::from(a * &pw));
            pw *= &two_over_n;
        }
        PolyExp::from_rational(Rational::from((1u32, n)), rho.clone(), &c)
    }

    /// The coefficients of the polynomial part in Laguerre polynomials
    /// (see [`Laguerre`]).
    fn laguerre(&self) -> Laguerre {
        let (x, den) = integer_form(&self.a);
        // alpha_k = sum_(p >= k) x_p p! p!/(p - k)!, the falling factorial
        // carried along k for each p
        let mut alpha = vec![Integer::new(); x.len()];
        let mut r = Integer::new();
        let mut pf = Integer::from(1); // p!
        for (p, xp) in x.iter().enumerate() {
            if p > 0 {
                pf *= p as u32;
            }
            if *xp == 0 {
                continue;
            }
            r.assign(&pf);
            for (k, ak) in alpha.iter_mut().enumerate().take(p + 1) {
                *ak += Integer::from(xp * &r);
                r *= (p - k) as u32;
            }
        }
        Laguerre { alpha, den }
    }

    /// (H_L - E_n) applied exactly; index i of the result is the power
    /// x^(i - 2) (a function that starts like x^L gives x^(L-2)).
    fn apply_offset(&self, big_l: u32, n: u32) -> Vec<Rational> {
        let ll = i64::from(big_l) * i64::from(big_l + 1);
        let mut out = vec![Rational::new(); self.a.len() + 2];
        let k = Rational::from((2u32, n * n));
        for (p, x) in self.a.iter().enumerate() {
            if *x == 0 {
                continue;
            }
            let pi = p as i64;
            let c2 = ll - pi * (pi - 1);
            if c2 != 0 {
                out[p] += Rational::from(x * c2) * &k;
            }
            let c1 = pi - i64::from(n);
            if c1 != 0 {
                out[p + 1] += Rational::from(x * c1) * &k;
            }
        }
        out
    }

    /// <self|(H_L - E_n)|self> / rho (`None` if the integral diverges at
    /// the origin).
    fn energy_form(&self, big_l: u32, n: u32, fact: &[Integer]) -> Option<Rational> {
        let (xa, da) = integer_form(&self.a);
        let (xh, dh) = integer_form(&self.apply_offset(big_l, n));
        let mut s = Integer::new();
        for (p, x) in xa.iter().enumerate() {
            if *x == 0 {
                continue;
            }
            for (q, y) in xh.iter().enumerate() {
                if *y != 0 {
                    // power p + q - 2 of x: int x^m e^-x dx = m!
                    let m = (p + q).checked_sub(2)?;
                    s += Integer::from(x * y) * &fact[m];
                }
            }
        }
        Some(Rational::from((s, da * dh)) * Rational::from((n, 2u32)))
    }
}

/// Integer numerators over the least common denominator.
fn integer_form(a: &[Rational]) -> (Vec<Integer>, Integer) {
    let mut den = Integer::from(1);
    for c in a {
        if *c != 0 {
            den.lcm_mut(c.denom());
        }
    }
    let nums = a
        .iter()
        .map(|c| c.numer() * Integer::from(&den / c.denom()))
        .collect();
    (nums, den)
}

/// A polynomial part P(x) = sum_k A_k L_k(x) in the Laguerre polynomials
/// L_k (orthonormal under e^(-x) on [0, inf)), with
/// A_k = (-1)^k alpha_k / (k! den) (from x^p = p! sum_k (-1)^k C(p, k) L_k,
/// so that alpha_k = sum_p x_p p! p!/(p - k)! for P = sum_p x_p x^p / den):
/// the inner product of two functions of the chain is then a single sum.
#[derive(Debug, Clone)]
struct Laguerre {
    alpha: Vec<Integer>,
    den: Integer,
}

impl Laguerre {
    /// int_0^inf f g dr / rho = (n/2) int_0^inf e^(-x) P Q dx
    /// = (n/2) sum_k A_k B_k, summed in integers over the common
    /// denominator (K!)^2 den_f den_g (Horner in k: each step multiplies by
    /// k^2).
    fn inner(&self, other: &Laguerre, n: u32) -> Rational {
        let top = self.alpha.len().min(other.alpha.len());
        let mut t = Integer::new();
        let mut kf = Integer::from(1);
        for k in 0..top {
            if k > 0 {
                t *= (k * k) as u64;
                kf *= k as u32;
            }
            t += Integer::from(&self.alpha[k] * &other.alpha[k]);
        }
        let den = Integer::from(&kf * &kf) * &self.den * &other.den;
        Rational::from((t, den)) * Rational::from((n, 2u32))
    }

    /// self - c other (exact).
    fn minus(&self, c: &Rational, other: &Laguerre) -> Laguerre {
        // A_k - c B_k = (alpha_k den_o c_den - c_num beta_k den) / (k! den den_o c_den)
        let len = self.alpha.len().max(other.alpha.len());
        let f_self = Integer::from(&other.den * c.denom());
        let f_other = Integer::from(c.numer() * &self.den);
        let zero = Integer::new();
        let alpha = (0..len)
            .map(|k| {
                let a = self.alpha.get(k).unwrap_or(&zero);
                let b = other.alpha.get(k).unwrap_or(&zero);
                Integer::from(a * &f_self) - Integer::from(b * &f_other)
            })
            .collect();
        Laguerre {
            alpha,
            den: Integer::from(&f_self * &self.den),
        }
    }
}

fn trim(mut f: XPoly) -> XPoly {
    while f.a.last().is_some_and(|c| *c == 0) {
        f.a.pop();
    }
    f
}

/// The chain phi_0 .. phi_depth of one channel and its exact data.
#[derive(Debug, Clone)]
pub(crate) struct ChannelChain {
    /// Intermediate angular momentum L.
    pub big_l: u32,
    /// Angular weight w_L.
    pub weight: Rational,
    /// Radicand of the state's normalization (common to all phi_a).
    pub rho: Rational,
    /// phi_0 = g_L, phi_1, ... (x = 2r/n).
    pub phi: Vec<XPoly>,
}

/// Exact data of a state: the chains of its channels, enough factorials, and
/// the exact power sums M_j (hartree, velocity form) for j = 1 - 2 depth ..= 1.
#[derive(Debug, Clone)]
pub(crate) struct StateChains {
    pub n: u32,
    pub l: u32,
    pub chains: Vec<ChannelChain>,
    /// (j, M_j).
    pub moments: Vec<(i32, Rational)>,
}

impl StateChains {
    /// Builds phi_0 .. phi_depth for every channel of (n, l).
    pub fn new(n: u32, l: u32, depth: u32) -> Result<Self, BetheError> {
        let st = BoundState::hydrogen(i64::from(n), i64::from(l))?;
        let mut chains = Vec::new();
        // the Laguerre forms of phi_0 .. phi_depth, channel by channel
        let mut lags: Vec<Vec<Laguerre>> = Vec::new();
        // factorials up to the largest degree sum: 2 (n + depth + 2)
        let top = 2 * (n + depth + 4) as usize;
        let mut fact = Vec::with_capacity(top + 1);
        fact.push(Integer::from(1));
        for i in 1..=top {
            let v = Integer::from(&fact[i - 1] * i as u32);
            fact.push(v);
        }
        for dir in Channel::open(l) {
            let big_l = dir.big_l(l);
            let g = gradient_function(&st, dir)?;
            let rho = g.radicand.clone();
            let phi0 = trim(XPoly::from_polyexp(&g, n));
            let mut lag = vec![phi0.laguerre()];
            let mut phi = vec![phi0];
            let same_n = if big_l < n {
                let u = trim(XPoly::from_polyexp(
                    &reduced_radial_function(&BoundState::hydrogen(
                        i64::from(n),
                        i64::from(big_l),
                    )?),
                    n,
                ));
                let u_lag = u.laguerre();
                let uu = u_lag.inner(&u_lag, n);
                Some((u, u_lag, uu))
            } else {
                None
            };
            for _ in 0..depth {
                let src = phi.last().expect("phi_0");
                let src_lag = lag.last().expect("phi_0");
                let (next, next_lag) = solve(
                    src,
                    src_lag,
                    big_l,
                    n,
                    same_n.as_ref().map(|(u, ul, uu)| (u, ul, uu)),
                )?;
                phi.push(next);
                lag.push(next_lag);
            }
            lags.push(lag);
            chains.push(ChannelChain {
                big_l,
                weight: dir.weight(l),
                rho,
                phi,
            });
        }
        let mut moments = Vec::new();
        let mut m1 = Rational::new();
        for ch in &chains {
            let e = ch.phi[0].energy_form(ch.big_l, n, &fact).ok_or_else(|| {
                BetheError::Basis(kzero_basis::BasisError::InvalidArgument(format!(
                    "<g|H - E|g> diverges for (n={n}, L={})",
                    ch.big_l
                )))
            })?;
            m1 += e * &ch.rho * &ch.weight;
        }
        moments.push((1, m1));
        for a in 0..=depth as usize {
            let mut even = Rational::new();
            let mut odd = Rational::new();
            for (ch, lag) in chains.iter().zip(&lags) {
                let w = Rational::from(&ch.rho * &ch.weight);
                even += lag[a].inner(&lag[a], n) * &w;
                if a >= 1 {
                    odd += lag[a].inner(&lag[a - 1], n) * &w;
                }
            }
            if a >= 1 {
                moments.push((1 - 2 * a as i32, odd));
            }
            moments.push((-2 * a as i32, even));
        }
        Ok(StateChains {
            n,
            l,
            chains,
            moments,
        })
    }

    /// M_j = sum_m c_m d_m^j (hartree^j times bohr^-2 weights; velocity form).
    pub fn moment(&self, j: i32) -> Option<&Rational> {
        self.moments.iter().find(|(i, _)| *i == j).map(|(_, m)| m)
    }
}

/// Solves (H_L - E_n) phi = src with phi orthogonal to u (the same-n state,
/// when it exists in this partial wave, given with its Laguerre form and
/// <u|u>); returns phi and its Laguerre form.
fn solve(
    src: &XPoly,
    src_lag: &Laguerre,
    big_l: u32,
    n: u32,
    same_n: Option<(&XPoly, &Laguerre, &Rational)>,
) -> Result<(XPoly, Laguerre), BetheError> {
    let internal = |what: String| {
        BetheError::Basis(kzero_basis::BasisError::InvalidArgument(format!(
            "resolvent chain of (n={n}, L={big_l}): {what}"
        )))
    };
    if let Some((_, u_lag, _)) = same_n {
        if src_lag.inner(u_lag, n) != 0 {
            return Err(internal("source not orthogonal to the same-n state".into()));
        }
    }
    // rhs of [(L(L+1) - p(p-1)) x^(p-2) + (p - n) x^(p-1)] coefficients = (n^2/2) src
    let scale = Rational::from((n * n, 2u32));
    let s: Vec<Rational> = src.a.iter().map(|c| Rational::from(c * &scale)).collect();
    if s.is_empty() {
        let phi = XPoly { a: vec![] };
        let lag = phi.laguerre();
        return Ok((phi, lag));
    }
    let dmax = s.len() - 1; // highest power of the source
    let ll = i64::from(big_l) * i64::from(big_l + 1);
    let mut x = vec![Rational::new(); dmax + 3];
    // equation for power q: (ll - (q+2)(q+1)) x_(q+2) + (q + 1 - n) x_(q+1) = s_q
    for q in (0..=dmax).rev() {
        let qi = q as i64;
        let c2 = ll - (qi + 2) * (qi + 1);
        let lhs2 = Rational::from(&x[q + 2] * c2);
        let c1 = qi + 1 - i64::from(n);
        let rhs = Rational::from(&s[q] - &lhs2);
        if c1 == 0 {
            if rhs != 0 {
                return Err(internal("solvability condition fails".into()));
            }
            // x_n free: fixed below by orthogonality
        } else {
            x[q + 1] = rhs / c1;
        }
    }
    if x[0] != 0 {
        return Err(internal("solution not regular at the origin".into()));
    }
    let mut phi = trim(XPoly { a: x });
    let mut lag = phi.laguerre();
    if let Some((u, u_lag, uu)) = same_n {
        let c = lag.inner(u_lag, n) / uu.clone();
        let len = phi.a.len().max(u.a.len());
        phi.a.resize(len, Rational::new());
        for (p, v) in u.a.iter().enumerate() {
            phi.a[p] -= Rational::from(v * &c);
        }
        phi = trim(phi);
        lag = lag.minus(&c, u_lag);
    }
    // check the equation exactly
    let back = phi.apply_offset(big_l, n);
    let matches = back[0] == 0
        && back[1] == 0
        && (0..back.len() - 2).all(|i| {
            let want = src.a.get(i).cloned().unwrap_or_default();
            back[i + 2] == want
        })
        && src.a.len() <= back.len() - 2;
    if !matches {
        return Err(internal("solution does not satisfy the equation".into()));
    }
    Ok((phi, lag))
}
