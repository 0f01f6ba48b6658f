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

    /// int_0^inf f g dr / rho = (n/2) sum_(p,q) a_p b_q (p+q)!, summed in
    /// integers over a common denominator (rational sums would spend their
    /// time in gcds).
    fn inner(&self, other: &XPoly, n: u32, fact: &[Integer]) -> Rational {
        let (xa, da) = integer_form(&self.a);
        let (xb, db) = integer_form(&other.a);
        let mut s = Integer::new();
        let mut inner = Integer::new();
        for (p, x) in xa.iter().enumerate() {
            if *x == 0 {
                continue;
            }
            inner.assign(0);
            for (q, y) in xb.iter().enumerate() {
                if *y != 0 {
                    inner += Integer::from(y * &fact[p + q]);
                }
            }
            s += Integer::from(x * &inner);
        }
        Rational::from((s, da * db)) * Rational::from((n, 2u32))
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
            let mut phi = vec![phi0];
            if big_l < n {
                let u = trim(XPoly::from_polyexp(
                    &reduced_radial_function(&BoundState::hydrogen(
                        i64::from(n),
                        i64::from(big_l),
                    )?),
                    n,
                ));
                let uu = u.inner(&u, n, &fact);
                for _ in 0..depth {
                    let src = phi.last().expect("phi_0");
                    let next = solve(src, big_l, n, Some((&u, &uu)), &fact)?;
                    phi.push(next);
                }
            } else {
                for _ in 0..depth {
                    let src = phi.last().expect("phi_0");
                    let next = solve(src, big_l, n, None, &fact)?;
                    phi.push(next);
                }
            }
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
            for ch in &chains {
                let w = Rational::from(&ch.rho * &ch.weight);
                even += ch.phi[a].inner(&ch.phi[a], n, &fact) * &w;
                if a >= 1 {
                    odd += ch.phi[a].inner(&ch.phi[a - 1], n, &fact) * &w;
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
/// when it exists in this partial wave).
fn solve(
    src: &XPoly,
    big_l: u32,
    n: u32,
    same_n: Option<(&XPoly, &Rational)>,
    fact: &[Integer],
) -> Result<XPoly, BetheError> {
    let internal = |what: String| {
        BetheError::Basis(kzero_basis::BasisError::InvalidArgument(format!(
            "resolvent chain of (n={n}, L={big_l}): {what}"
        )))
    };
    if let Some((u, _)) = same_n {
        if src.inner(u, n, fact) != 0 {
            return Err(internal("source not orthogonal to the same-n state".into()));
        }
    }
    // rhs of [(L(L+1) - p(p-1)) x^(p-2) + (p - n) x^(p-1)] coefficients = (n^2/2) src
    let scale = Rational::from((n * n, 2u32));
    let s: Vec<Rational> = src.a.iter().map(|c| Rational::from(c * &scale)).collect();
    if s.is_empty() {
        return Ok(XPoly { a: vec![] });
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
    if let Some((u, uu)) = same_n {
        let c = phi.inner(u, n, fact) / uu.clone();
        let len = phi.a.len().max(u.a.len());
        phi.a.resize(len, Rational::new());
        for (p, v) in u.a.iter().enumerate() {
            phi.a[p] -= Rational::from(v * &c);
        }
        phi = trim(phi);
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
    Ok(phi)
}
