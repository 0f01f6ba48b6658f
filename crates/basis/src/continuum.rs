//! Energy-normalized Coulomb continuum functions and bound-free dipole
//! integrals in closed form.
//!
//! ## Convention
//! For a photo-electron of energy E = k^2/2 > 0 (hartree; k in inverse bohr)
//! and angular momentum L in the attractive field of charge Z, the reduced
//! radial function is
//!
//! ```text
//! u_EL(r) = A_L(k) (kr)^(L+1) exp(-ikr) M(L+1+it, 2L+2, 2ikr),   t = Z/k,
//! A_L(k)^2 = (4t/k) 2^(2L) prod_{s=1..L} (s^2 + t^2) / ((2L+1)!^2 (1 - exp(-2 pi t)))
//! ```
//!
//! (M = Kummer's function). It is real, positive near the origin, and
//! *energy normalized*: int_0^inf u_EL(r) u_E'L(r) dr = delta(E - E'), that
//! is, u_EL(r) -> sqrt(2/(pi k)) sin(kr - L pi/2 + t ln(2kr) + sigma_L) at
//! large r. Near threshold it joins the Rydberg series: with the bound reduced
//! radial functions u_n'L of [`crate::radial`],
//! u_EL(r)^2 (1 - exp(-2 pi t)) is the analytic continuation in E of
//! (n'^3/Z^2) u_n'L(r)^2 at E = -Z^2/(2 n'^2).
//!
//! ## Closed form of the bound-free integrals
//! Every bound-side function f used here (r u_nl, the gradient functions of
//! [`crate::gradient`], Z u_nl / r^2) is exp(-kappa r) sum_j c_j r^j. With
//! the Laplace transform of M and Euler's transformation of the resulting
//! Gauss function,
//!
//! ```text
//! int_0^inf u_EL r^j e^(-kappa r) dr
//!   = A_L k^(L+1) s! rho^-(s+1) e^(-2 phi t) Re[ e^(iN phi) 2F1(L+1-it, -N; 2L+2; z) ],
//! s = L+1+j, N = j-L, rho = |kappa + ik|, phi = arg(kappa + ik), z = 2ik/(kappa + ik),
//! ```
//!
//! a terminating sum whenever j >= L. The lowest powers of the
//! acceleration form (L = l+1) give j = L-2 and L-1; they are removed exactly
//! by adding (H_L - E) applied to c r^L e^(-kappa r), which integrates to
//! zero against u_EL (the r^(L-1) coefficient then vanishes identically, which
//! is checked in exact arithmetic).
//!
//! The same derivation with the Laguerre form of the bound states gives, for
//! any real effective quantum number nu > n (E = -Z^2/(2 nu^2)),
//!
//! ```text
//! I_b(nu) = sqrt(B(nu)) sum_j c_j s! lambda^-(s+1) (1-z)^(nu-j-1) 2F1(L+1+nu, -N; 2L+2; z),
//! lambda = kappa + Z/nu, z = 2Z/(nu lambda), B = 2^(2L+2) Z^(2L+1) prod (1 - s^2/nu^2) / (2L+1)!^2,
//! ```
//!
//! which at integer nu = n' equals sqrt(n'^3/Z^2) int u_n'L f dr (Gordon's
//! closed form, continued to non-integer nu), and as a function of
//! E = -Z^2/(2 nu^2) continues the continuum integral times
//! sqrt(1 - exp(-2 pi t)) through threshold.
//!
//! ## Precision
//! The sums alternate and cancel (strongly at large n, and at high energy);
//! every evaluation measures the ratio of the largest partial magnitude to the
//! result and re-runs at a higher working precision until the requested
//! number of bits is left.

use crate::error::{check_prec, BasisError};
use crate::exact::factorial;
use crate::gradient::{gradient_function, Channel};
use crate::radial::radial_function;
use crate::state::BoundState;
use rug::float::Constant;
use rug::ops::Pow;
use rug::{Complex, Float, Rational};

/// The three equivalent forms of a dipole matrix element.
#[derive(Debug, Clone, Copy, PartialEq, Eq, Hash)]
pub enum DipoleForm {
    /// Radial integral of r: int u_EL r u_nl dr (bohr).
    Length,
    /// Radial part of p: int u_EL g_L dr with the gradient function g_L of
    /// [`crate::gradient::gradient_function`] (inverse bohr).
    Velocity,
    /// Radial part of grad V = Z r_hat / r^2: Z int u_EL u_nl / r^2 dr.
    Acceleration,
}

impl DipoleForm {
    /// Power p of the transition energy D = E_m - E_n such that
    /// |<m|O|n>|^2 D^(p) equals |<m|p|n>|^2 (length: 2, velocity: 0,
    /// acceleration: -2).
    pub fn velocity_power_shift(self) -> i32 {
        match self {
            DipoleForm::Length => 2,
            DipoleForm::Velocity => 0,
            DipoleForm::Acceleration => -2,
        }
    }
}

/// A radial integral evaluated in MPFR together with the precision bookkeeping.
#[derive(Debug, Clone)]
pub struct RadialValue {
    /// The value, rounded to the requested precision.
    pub value: Float,
    /// Bits lost to cancellation in the sum (measured).
    pub lost_bits: u32,
    /// Working precision of the final evaluation.
    pub work_bits: u32,
}

/// Bound-side data of one bound-free dipole integral: the function f(r) =
/// exp(-kappa r) sum_j c_j r^j that multiplies u_EL in the chosen form, with
/// the lowest powers of the acceleration form removed.
///
/// Built once per (state, channel, form) and evaluated at many energies.
/// It holds no state that changes with use: an evaluation depends only on
/// its arguments (and on the [`LossHint`] a caller passes explicitly).
#[derive(Debug, Clone)]
pub struct BoundFreeKernel {
    state: BoundState,
    channel: Channel,
    form: DipoleForm,
    big_l: u32,
    /// Exact coefficients c_j (index j - j0), normalization excluded.
    coeffs: Vec<Rational>,
    /// Exact coefficient `a` of the energy-dependent term a (kappa^2/2 + E) r^L
    /// (acceleration form, L = l+1), zero otherwise.
    energy_coef: Rational,
    /// Normalization: the function carries sqrt(radicand).
    radicand: Rational,
}

/// The loss to cancellation measured by the previous evaluation of a
/// sequence, from which the next evaluation starts its working precision.
///
/// Neighbouring energies cancel alike, so a caller that evaluates a kernel
/// at a sequence of energies and passes the same `LossHint` to each call
/// (the `*_hinted` methods of [`BoundFreeKernel`]) saves the re-runs at
/// higher precision that a fixed first guess would cost. The hint is owned
/// by the caller: what it changes (the working precision of the first try,
/// hence the cost and, in the last bits, the rounding) depends only on the
/// caller's own sequence of calls, never on other users of the kernel. A
/// fresh hint (`LossHint::default()`) starts from a guess that grows with n;
/// the methods without a hint use a fresh one every time.
#[derive(Debug, Clone, Copy, Default, PartialEq, Eq)]
pub struct LossHint {
    /// Bits lost at the last evaluation plus one, if there was one.
    last: Option<u32>,
}

impl LossHint {
    /// A hint with no evaluation recorded yet.
    pub fn new() -> Self {
        LossHint::default()
    }
}

impl BoundFreeKernel {
    /// Prepares the bound side of <E L| O |n l> for `channel` (L = l +- 1) and
    /// `form`.
    ///
    /// # Errors
    /// [`BasisError::InvalidArgument`] for the `Down` channel with l = 0.
    pub fn new(state: &BoundState, channel: Channel, form: DipoleForm) -> Result<Self, BasisError> {
        let l = state.l();
        if channel == Channel::Down && l == 0 {
            return Err(BasisError::InvalidArgument(
                "the l-1 channel does not exist for l = 0".into(),
            ));
        }
        let big_l = channel.big_l(l);
        let z = state.z().clone();
        let kappa = state.kappa();
        // Coefficients c_p of f(r) = e^{-kappa r} sum_p c_p r^p with offset.
        let (offset, rc, radicand): (i64, Vec<Rational>, Rational) = match form {
            DipoleForm::Length => {
                let f = radial_function(state).times_r_pow(2);
                (0, f.rational_coeffs(), f.radicand.clone())
            }
            DipoleForm::Velocity => {
                let f = gradient_function(state, channel)?;
                (0, f.rational_coeffs(), f.radicand.clone())
            }
            DipoleForm::Acceleration => {
                let f = radial_function(state);
                let c: Vec<Rational> = f.rational_coeffs().into_iter().map(|c| c * &z).collect();
                (-1, c, f.radicand.clone())
            }
        };
        // map power -> coefficient, drop zeros below L
        let mut lowest: Option<i64> = None;
        for (p, c) in rc.iter().enumerate() {
            if *c != 0 {
                lowest = Some(p as i64 + offset);
                break;
            }
        }
        let lowest = lowest.ok_or_else(|| BasisError::InvalidArgument("zero function".into()))?;
        let lbig = i64::from(big_l);
        let coef_at = |j: i64| -> Rational {
            let p = j - offset;
            if p < 0 || p as usize >= rc.len() {
                Rational::new()
            } else {
                rc[p as usize].clone()
            }
        };
        let top = rc.len() as i64 - 1 + offset;
        let mut energy_coef = Rational::new();
        let mut coeffs: Vec<Rational> = (lbig..=top.max(lbig)).map(coef_at).collect();
        if lowest < lbig {
            // Only the acceleration form with L = l + 1 gets here: powers L-2, L-1.
            if lowest < lbig - 2 || form != DipoleForm::Acceleration {
                return Err(BasisError::InvalidArgument(format!(
                    "bound-side function starts at r^{lowest}, below r^{}",
                    lbig - 2
                )));
            }
            let c_m2 = coef_at(lbig - 2);
            let c_m1 = coef_at(lbig - 1);
            // add -(c_m2/alpha) (H_L - E)[r^L e^{-kappa r}], alpha = L,
            // beta = kappa L - Z, gamma = -kappa^2/2 - E
            let alpha = Rational::from(big_l);
            let beta = Rational::from(&kappa * big_l) - &z;
            let rem = c_m1 - Rational::from(&c_m2 * &beta) / &alpha;
            if rem != 0 {
                return Err(BasisError::InvalidArgument(
                    "acceleration-form reduction left an r^(L-1) term (not a hydrogenic state?)"
                        .into(),
                ));
            }
            // c_L += (c_m2/alpha)(kappa^2/2 + E): the kappa^2/2 part is exact here.
            energy_coef = c_m2 / &alpha;
            let half_k2 = Rational::from(&kappa * &kappa) / 2u32;
            coeffs[0] += Rational::from(&energy_coef * &half_k2);
        }
        while coeffs.len() > 1 && coeffs.last().is_some_and(|c| *c == 0) {
            coeffs.pop();
        }
        Ok(BoundFreeKernel {
            state: state.clone(),
            channel,
            form,
            big_l,
            coeffs,
            energy_coef,
            radicand,
        })
    }

    /// The bound state.
    pub fn state(&self) -> &BoundState {
        &self.state
    }

    /// The channel (L = l +- 1).
    pub fn channel(&self) -> Channel {
        self.channel
    }

    /// The dipole form.
    pub fn form(&self) -> DipoleForm {
        self.form
    }

    /// The continuum (or intermediate) angular momentum L.
    pub fn big_l(&self) -> u32 {
        self.big_l
    }

    /// Largest power N = j - L of the terminating sums (cost grows like N^2).
    pub fn max_terms(&self) -> usize {
        self.coeffs.len()
    }

    /// Coefficients c_j at energy `e` (MPFR), index j - L.
    fn coeffs_at(&self, e: &Float, prec: u32) -> Vec<Float> {
        let mut v: Vec<Float> = self
            .coeffs
            .iter()
            .map(|c| Float::with_val(prec, c))
            .collect();
        if self.energy_coef != 0 {
            let add = Float::with_val(prec, e * &self.energy_coef);
            v[0] += add;
        }
        v
    }

    /// The energy-normalized bound-free radial integral
    /// int_0^inf u_EL(r) f(r) dr at photo-electron energy `energy` = k^2/2 >= 0
    /// (hartree); E = 0 gives the threshold limit.
    ///
    /// Units: hartree^(-1/2) times bohr (length), inverse bohr (velocity) or
    /// Z / bohr^2 (acceleration).
    ///
    /// # Accuracy
    /// Relative error about 2^(-prec) of the magnitude of the result: the
    /// cancellation in the sums is measured and compensated by re-running at
    /// a higher working precision (reported in [`RadialValue`]). Only where
    /// the integral vanishes to within 2^(-7 prec) of its largest term (a
    /// zero of the amplitude as a function of energy) is the accuracy
    /// absolute instead: about 2^(-7 prec) of that term.
    ///
    /// # Errors
    /// [`BasisError::PrecisionTooLow`] below 53 bits;
    /// [`BasisError::InvalidArgument`] for a negative or non-finite energy.
    pub fn continuum(&self, energy: &Float, prec: u32) -> Result<RadialValue, BasisError> {
        self.continuum_hinted(energy, prec, &mut LossHint::new())
    }

    /// As [`BoundFreeKernel::continuum`], starting from the loss recorded in
    /// `hint` and recording this evaluation's loss in it (see [`LossHint`]).
    ///
    /// # Errors
    /// As [`BoundFreeKernel::continuum`].
    pub fn continuum_hinted(
        &self,
        energy: &Float,
        prec: u32,
        hint: &mut LossHint,
    ) -> Result<RadialValue, BasisError> {
        check_prec(prec)?;
        if !energy.is_finite() || *energy < 0 {
            return Err(BasisError::InvalidArgument(format!(
                "photo-electron energy must be finite and >= 0, got {}",
                energy.to_f64()
            )));
        }
        self.with_precision(prec, hint, |p| {
            let e = Float::with_val(p, energy);
            let k = Float::with_val(p, Float::with_val(p, &e * 2u32).sqrt());
            self.continuum_k_at(&k, &e, p)
        })
    }

    /// As [`BoundFreeKernel::continuum`], with the wave number k = sqrt(2E)
    /// (inverse bohr) given directly.
    ///
    /// # Errors
    /// As [`BoundFreeKernel::continuum`].
    pub fn continuum_k(&self, k: &Float, prec: u32) -> Result<RadialValue, BasisError> {
        self.continuum_k_hinted(k, prec, &mut LossHint::new())
    }

    /// As [`BoundFreeKernel::continuum_k`], starting from the loss recorded
    /// in `hint` and recording this evaluation's loss in it (see
    /// [`LossHint`]).
    ///
    /// # Errors
    /// As [`BoundFreeKernel::continuum`].
    pub fn continuum_k_hinted(
        &self,
        k: &Float,
        prec: u32,
        hint: &mut LossHint,
    ) -> Result<RadialValue, BasisError> {
        check_prec(prec)?;
        if !k.is_finite() || *k < 0 {
            return Err(BasisError::InvalidArgument(format!(
                "wave number must be finite and >= 0, got {}",
                k.to_f64()
            )));
        }
        self.with_precision(prec, hint, |p| {
            let k = Float::with_val(p, k);
            let e = Float::with_val(p, k.clone().square() / 2u32);
            self.continuum_k_at(&k, &e, p)
        })
    }

    /// The analytic continuation of the bound-bound integral to a real
    /// effective quantum number nu > n: sqrt(nu^3/Z^2) int u_nu,L f dr, with
    /// u_nu,L the (non-normalizable for non-integer nu) regular solution at
    /// E = -Z^2/(2 nu^2) normalized as in the module documentation. At
    /// integer nu = n' it equals sqrt(n'^3/Z^2) times the exact bound-bound
    /// integral; as nu -> inf it tends to the threshold value
    /// `continuum(0)`.
    ///
    /// # Accuracy
    /// As [`BoundFreeKernel::continuum`].
    ///
    /// # Errors
    /// [`BasisError::InvalidArgument`] unless nu > n; precision as above.
    pub fn bound_continued(&self, nu: &Float, prec: u32) -> Result<RadialValue, BasisError> {
        self.bound_continued_hinted(nu, prec, &mut LossHint::new())
    }

    /// As [`BoundFreeKernel::bound_continued`], starting from the loss
    /// recorded in `hint` and recording this evaluation's loss in it (see
    /// [`LossHint`]).
    ///
    /// # Errors
    /// As [`BoundFreeKernel::bound_continued`].
    pub fn bound_continued_hinted(
        &self,
        nu: &Float,
        prec: u32,
        hint: &mut LossHint,
    ) -> Result<RadialValue, BasisError> {
        check_prec(prec)?;
        if !nu.is_finite() || *nu <= self.state.n() {
            return Err(BasisError::InvalidArgument(format!(
                "effective quantum number must exceed n = {}, got {}",
                self.state.n(),
                nu.to_f64()
            )));
        }
        self.with_precision(prec, hint, |p| {
            self.bound_at(&Float::with_val(p, nu), None, p)
        })
    }

    /// The bound-bound integral sqrt(n'^3/Z^2) int u_n'L f dr for an integer
    /// n' >= L+1, n' != n, from the same closed form as
    /// [`BoundFreeKernel::bound_continued`] (for n' < n with integer powers of
    /// the then negative 1 - z). An MPFR alternative to the exact rational
    /// integrals of [`crate::radial`], whose cost grows like n^2 instead of
    /// about n^4 for large n.
    ///
    /// # Accuracy
    /// As [`BoundFreeKernel::continuum`].
    ///
    /// # Errors
    /// [`BasisError::InvalidArgument`] for n' <= L or n' = n; precision as above.
    pub fn bound_bound(&self, n_prime: u32, prec: u32) -> Result<RadialValue, BasisError> {
        self.bound_bound_hinted(n_prime, prec, &mut LossHint::new())
    }

    /// As [`BoundFreeKernel::bound_bound`], starting from the loss recorded
    /// in `hint` and recording this evaluation's loss in it (see
    /// [`LossHint`]).
    ///
    /// # Errors
    /// As [`BoundFreeKernel::bound_bound`].
    pub fn bound_bound_hinted(
        &self,
        n_prime: u32,
        prec: u32,
        hint: &mut LossHint,
    ) -> Result<RadialValue, BasisError> {
        check_prec(prec)?;
        if n_prime <= self.big_l || n_prime == self.state.n() {
            return Err(BasisError::InvalidArgument(format!(
                "bound-bound closed form needs n' > L = {} and n' != n = {}, got {n_prime}",
                self.big_l,
                self.state.n()
            )));
        }
        self.with_precision(prec, hint, |p| {
            self.bound_at(&Float::with_val(p, n_prime), Some(n_prime), p)
        })
    }

    /// Runs `f` at increasing working precision until the measured loss
    /// leaves `prec` bits, starting from `hint` and recording the loss there.
    fn with_precision<F>(
        &self,
        prec: u32,
        hint: &mut LossHint,
        f: F,
    ) -> Result<RadialValue, BasisError>
    where
        F: Fn(u32) -> (Float, f64),
    {
        // start from the loss measured at the caller's previous evaluation
        // (neighbouring energies cancel alike), else from a guess growing
        // with n
        let guess = match hint.last {
            Some(h) => h + 24,
            None => 40 + 3 * self.state.n().min(1000),
        };
        let mut work = prec + guess;
        let mut last = None;
        // up to 4 steps by the measured loss; a start far below the loss
        // (a hint carried from a node that cancelled much less) measures
        // only part of it, so 4 more steps at least double the precision
        for attempt in 0..8 {
            let (v, mag) = f(work);
            let lost = if v.is_zero() {
                f64::from(work)
            } else {
                let vm = v.clone().abs().log2().to_f64();
                (mag - vm).max(0.0)
            };
            if f64::from(work) - lost >= f64::from(prec) + 8.0 {
                hint.last = Some(lost.ceil() as u32 + 1);
                return Ok(RadialValue {
                    value: Float::with_val(prec, &v),
                    lost_bits: lost.ceil() as u32,
                    work_bits: work,
                });
            }
            last = Some((v, lost, work));
            let next = (f64::from(prec) + lost + 48.0).ceil() as u32;
            work = if attempt < 3 {
                next.max(prec + 64).min(8 * prec + 8 * guess)
            } else {
                next.max(2 * work)
                    .min(8 * prec + 8 * guess.max(lost.ceil() as u32))
            };
        }
        // Total cancellation (the integral vanishes at this energy, as near a
        // zero of the photo-ionization amplitude): the value is returned with
        // its absolute accuracy, 2^(8 - work) times the largest term.
        let (v, lost, work) = last.expect("at least one evaluation");
        Ok(RadialValue {
            value: Float::with_val(prec, &v),
            lost_bits: lost.ceil() as u32,
            work_bits: work,
        })
    }

    /// Returns (value, log2 of the largest term magnitude).
    fn continuum_k_at(&self, k: &Float, e: &Float, p: u32) -> (Float, f64) {
        let l = self.big_l;
        let z = Float::with_val(p, self.state.z());
        let kap = Float::with_val(p, &self.state.kappa());
        let c = self.coeffs_at(e, p);
        let nmax = c.len();
        let k2 = Float::with_val(p, k * k);
        let rho2 = Float::with_val(p, &kap * &kap) + &k2;
        let rho = Float::with_val(p, rho2.sqrt_ref());
        let sinp = Float::with_val(p, k / &rho);
        let cosp = Float::with_val(p, &kap / &rho);
        // analytic normalization B = 4 Z 2^{2L} prod (s^2 k^2 + Z^2) / (2L+1)!^2
        let mut b = Float::with_val(p, &z * 4u32);
        b <<= 2 * l;
        let z2 = Float::with_val(p, &z * &z);
        for s in 1..=l {
            let f = Float::with_val(p, &k2 * (s * s)) + &z2;
            b *= f;
        }
        let fl = Float::with_val(p, &factorial(2 * l + 1));
        b /= Float::with_val(p, &fl * &fl);
        let (sommer, phit) = if k.is_zero() {
            (Float::with_val(p, 1), Float::with_val(p, &z / &kap))
        } else {
            let t = Float::with_val(p, &z / k);
            let two_pi_t = Float::with_val(p, Constant::Pi) * &t * 2u32;
            let s = -Float::with_val(p, -two_pi_t).exp_m1();
            let phi = Float::with_val(p, k.atan2_ref(&kap));
            (s, phi * t)
        };
        let mut norm = Float::with_val(p, &b / &sommer).sqrt();
        norm *= Float::with_val(p, -(phit * 2u32)).exp();
        norm *= Float::with_val(p, &self.radicand).sqrt();
        // T_q = (L+1-it)_q/(2L+2)_q * (2 sin phi (sin phi + i cos phi))^q
        let w = Complex::with_val(
            p,
            (
                Float::with_val(p, &sinp * &sinp) * 2u32,
                Float::with_val(p, &sinp * &cosp) * 2u32,
            ),
        );
        let mut tq: Vec<Complex> = Vec::with_capacity(nmax);
        let mut cur = Complex::with_val(p, 1);
        for q in 0..nmax {
            tq.push(cur.clone());
            let qq = q as u32;
            // (L+1+q - i t) / (2L+2+q) ; at k = 0 the product (-it)(2 sin phi)... is finite:
            // handle by folding k into the factor: (L+1+q)k - iZ over k.
            let re = Float::with_val(p, l + 1 + qq);
            let a = if k.is_zero() {
                // limit: (-i Z/k) * 2 (k/rho) (sin + i cos) -> (-i Z) 2/kap * (i) = 2Z/kap
                Complex::with_val(p, (Float::with_val(p, &z / &kap) * 2u32, 0))
            } else {
                let t = Float::with_val(p, &z / k);
                let f = Complex::with_val(p, (re, -t));
                f * &w
            };
            cur *= a;
            cur /= 2 * l + 2 + qq;
        }
        // X_N = sum_q (-1)^q C(N,q) T_q for all N (difference table)
        let (xs, ms) = difference_tables(tq, |t| Float::with_val(53, t.abs_ref()));
        let mut total = Float::with_val(p, 0);
        let mut mag = Float::with_val(53, 0);
        // e^{iN phi} incrementally
        let mut cis = Complex::with_val(p, (1, 0));
        let step = Complex::with_val(p, (&cosp, &sinp));
        // s! rho^{-(s+1)} with s = 2L+1+N
        let s0 = 2 * l + 1;
        let mut pref = Float::with_val(p, &factorial(s0)) / Float::with_val(p, (&rho).pow(s0 + 1));
        for (nn, cj) in c.iter().enumerate() {
            if !cj.is_zero() {
                let x = &xs[nn];
                let val = Float::with_val(p, cis.real() * x.real())
                    - Float::with_val(p, cis.imag() * x.imag());
                let pc = Float::with_val(p, cj * &pref);
                total += Float::with_val(p, &pc * &val);
                mag += Float::with_val(53, pc.abs() * &ms[nn]);
            }
            cis *= &step;
            let s = s0 + 1 + nn as u32;
            pref *= s;
            pref /= &rho;
        }
        scale_by_norm(total, mag, &norm)
    }

    fn bound_at(&self, nu: &Float, integer: Option<u32>, p: u32) -> (Float, f64) {
        let l = self.big_l;
        let z = Float::with_val(p, self.state.z());
        let kap = Float::with_val(p, &self.state.kappa());
        let znu = Float::with_val(p, &z / nu);
        // E = -Z^2/(2 nu^2)
        let e = -Float::with_val(p, znu.clone().square() / 2u32);
        let c = self.coeffs_at(&e, p);
        let nmax = c.len();
        let lam = Float::with_val(p, &kap + &znu);
        let zz = Float::with_val(p, Float::with_val(p, &znu * 2u32) / &lam);
        let omz = Float::with_val(p, Float::with_val(p, &kap - &znu) / &lam);
        let mut b = Float::with_val(p, 1);
        b <<= 2 * l + 2;
        b *= Float::with_val(p, (&z).pow(2 * l + 1));
        let nu2 = Float::with_val(p, nu * nu);
        for s in 1..=l {
            let f = Float::with_val(p, 1) - Float::with_val(p, nu2.recip_ref()) * (s * s);
            b *= f;
        }
        let fl = Float::with_val(p, &factorial(2 * l + 1));
        b /= Float::with_val(p, &fl * &fl);
        let mut norm = b.sqrt();
        match integer {
            // (1-z)^nu with 1 - z < 0 for nu < n: integer power
            Some(m) => norm *= Float::with_val(p, (&omz).pow(m)),
            None => {
                let ln_omz = Float::with_val(p, omz.ln_ref());
                norm *= Float::with_val(p, &ln_omz * nu).exp();
            }
        }
        norm *= Float::with_val(p, &self.radicand).sqrt();
        let mut tq: Vec<Float> = Vec::with_capacity(nmax);
        let mut cur = Float::with_val(p, 1);
        for q in 0..nmax {
            tq.push(cur.clone());
            let qq = q as u32;
            cur *= Float::with_val(p, nu + (l + 1 + qq)) * &zz;
            cur /= 2 * l + 2 + qq;
        }
        let (xs, ms) = difference_tables(tq, |t| Float::with_val(53, t.abs_ref()));
        let mut total = Float::with_val(p, 0);
        let mut mag = Float::with_val(53, 0);
        let s0 = 2 * l + 1;
        // pref = s! lambda^{-(s+1)} (1-z)^{-(j+1)}, j = L + N
        let mut pref = Float::with_val(p, &factorial(s0))
            / Float::with_val(p, (&lam).pow(s0 + 1))
            / Float::with_val(p, (&omz).pow(l + 1));
        for (nn, cj) in c.iter().enumerate() {
            if !cj.is_zero() {
                let pc = Float::with_val(p, cj * &pref);
                total += Float::with_val(p, &pc * &xs[nn]);
                mag += Float::with_val(53, pc.abs() * &ms[nn]);
            }
            let s = s0 + 1 + nn as u32;
            pref *= s;
            pref /= &lam;
            pref /= &omz;
        }
        scale_by_norm(total, mag, &norm)
    }
}

/// The energy-normalized continuum function u_EL(r) and its derivative
/// du/dr at photo-electron energy E = k^2/2 > 0, from the power series of
/// Kummer's function (convention in the module documentation).
///
/// Meant for checks and plots, not for integration: the series cancels
/// like exp(2kr) at large kr, which is measured and compensated by raising
/// the working precision.
///
/// # Accuracy
/// Relative error about 2^(-prec) of max(|u|, |u'|/k).
///
/// # Errors
/// [`BasisError::PrecisionTooLow`]; [`BasisError::InvalidArgument`] unless
/// k > 0, r >= 0 and Z > 0.
pub fn continuum_function(
    k: &Float,
    big_l: u32,
    z: &Rational,
    r: &Float,
    prec: u32,
) -> Result<(Float, Float), BasisError> {
    check_prec(prec)?;
    if !k.is_finite() || *k <= 0 || !r.is_finite() || *r < 0 || *z <= 0 {
        return Err(BasisError::InvalidArgument(
            "continuum function needs k > 0, r >= 0, Z > 0".into(),
        ));
    }
    let kr = k.to_f64() * r.to_f64();
    let mut work = prec + 32 + (3.0 * kr) as u32;
    for _ in 0..6 {
        let p = work;
        let k = Float::with_val(p, k);
        let r = Float::with_val(p, r);
        let z = Float::with_val(p, z);
        let t = Float::with_val(p, &z / &k);
        let x = Complex::with_val(p, (0, Float::with_val(p, &k * &r) * 2u32));
        // M(a, c, x) and M'(a, c, x) by the series
        let a = Complex::with_val(p, (big_l + 1, &t));
        let cc = 2 * big_l + 2;
        let mut term = Complex::with_val(p, 1);
        let mut m = Complex::with_val(p, 0);
        let mut dm = Complex::with_val(p, 0);
        let mut maxabs = Float::with_val(53, 1);
        let mut q = 0u32;
        loop {
            m += &term;
            // derivative: d/dx of term_q x^q... accumulate q term_q / x later
            let qt = Complex::with_val(p, &term * q);
            dm += qt;
            let next = Complex::with_val(p, &a + q) * &x / ((cc + q) * (q + 1));
            term *= next;
            q += 1;
            let ta = Float::with_val(53, term.abs_ref());
            if ta > maxabs {
                maxabs = ta.clone();
            }
            let ma = Float::with_val(53, m.abs_ref());
            if q > 8 && ta < ma * Float::with_val(53, Float::i_exp(1, -(p as i32) - 8)) {
                break;
            }
            if q > 200_000 {
                return Err(BasisError::InvalidArgument(
                    "continuum function series did not converge".into(),
                ));
            }
        }
        // dM/dx = dm / x (x != 0); for r = 0, u = 0 and u' = 0 unless L = 0.
        // u = A (kr)^{L+1} e^{-ikr} M;  du/dr = k d/d(kr)
        let mut b = Float::with_val(p, &z * 4u32);
        b <<= 2 * big_l;
        let z2 = Float::with_val(p, &z * &z);
        let k2 = Float::with_val(p, &k * &k);
        for s in 1..=big_l {
            b *= Float::with_val(p, &k2 * (s * s)) + &z2;
        }
        let fl = Float::with_val(p, &factorial(2 * big_l + 1));
        b /= Float::with_val(p, &fl * &fl);
        let two_pi_t = Float::with_val(p, Constant::Pi) * &t * 2u32;
        let som = -Float::with_val(p, -two_pi_t).exp_m1();
        // A k^{L+1} = sqrt(B / som); u = A k^{L+1} r^{L+1} e^{-ikr} M
        let amp = Float::with_val(p, &b / &som).sqrt();
        let rl = Float::with_val(p, (&r).pow(big_l + 1));
        let phase = Complex::with_val(p, (0, -Float::with_val(p, &k * &r))).exp();
        let mm = Complex::with_val(p, &m * &phase);
        let u = Float::with_val(p, mm.real() * &rl) * &amp;
        // derivative: d/dr [r^{L+1} e^{-ikr} M(2ikr)]
        //   = r^L e^{-ikr} [(L+1) M - ikr M + r * 2ik M'(x)],  with x M'(x) = dm
        let dmx = if r.is_zero() {
            Complex::with_val(p, 0)
        } else {
            Complex::with_val(p, &dm) // x M'(x); r * 2ik M'(x) = x M'(x)
        };
        let ikr = Complex::with_val(p, (0, Float::with_val(p, &k * &r)));
        let bracket =
            Complex::with_val(p, &m * (big_l + 1)) - Complex::with_val(p, &ikr * &m) + dmx;
        let rlm = if big_l == 0 {
            Float::with_val(p, 1)
        } else {
            Float::with_val(p, (&r).pow(big_l))
        };
        let du = Float::with_val(p, Complex::with_val(p, &bracket * &phase).real() * &rlm) * &amp;
        // loss: largest series term relative to the result's scale
        let duk = Float::with_val(53, du.abs_ref()) / &k;
        let scale = Float::with_val(53, u.abs_ref()).max(&duk);
        let ampm = Float::with_val(53, &amp * Float::with_val(53, &rl));
        let lost = if scale.is_zero() {
            0.0
        } else {
            (Float::with_val(53, &maxabs * &ampm) / &scale)
                .log2()
                .to_f64()
                .max(0.0)
        };
        if f64::from(p) - lost >= f64::from(prec) + 8.0 {
            return Ok((Float::with_val(prec, &u), Float::with_val(prec, &du)));
        }
        work = (f64::from(prec) + lost + 48.0).ceil() as u32;
    }
    Err(BasisError::InvalidArgument(
        "continuum function lost all precision".into(),
    ))
}

/// The signed difference table X_N = sum_q (-1)^q C(N,q) T_q of the terms
/// `tq` (all N at once), with the same table built from |T_q| and all signs
/// positive: the bound on the magnitudes that cancel in each X_N.
fn difference_tables<T>(tq: Vec<T>, abs: impl Fn(&T) -> Float) -> (Vec<T>, Vec<Float>)
where
    T: Clone + for<'a> std::ops::SubAssign<&'a T>,
{
    let mag_t: Vec<Float> = tq.iter().map(abs).collect();
    let xs = binomial_transform(tq, |a, b| *a -= b);
    let ms = binomial_transform(mag_t, |a, b| *a += b);
    (xs, ms)
}

/// The sum `total` scaled by the normalization `norm`, with log2 of the
/// magnitude bound `mag * |norm|` (negative infinity when the bound is zero).
fn scale_by_norm(total: Float, mag: Float, norm: &Float) -> (Float, f64) {
    let value = total * norm;
    let magn = if mag.is_zero() {
        f64::NEG_INFINITY
    } else {
        (mag * Float::with_val(53, norm.abs_ref())).log2().to_f64()
    };
    (value, magn)
}

/// X_N = sum_q (-1)^q C(N,q) T_q (with `sub`) or sum_q C(N,q) T_q (with an
/// addition) for N = 0..len, by the difference table (len^2/2 operations).
fn binomial_transform<T, F>(mut d: Vec<T>, op: F) -> Vec<T>
where
    T: Clone,
    F: Fn(&mut T, &T),
{
    let len = d.len();
    let mut out = Vec::with_capacity(len);
    if len == 0 {
        return out;
    }
    out.push(d[0].clone());
    for i in 1..len {
        for q in 0..len - i {
            let (lo, hi) = d.split_at_mut(q + 1);
            op(&mut lo[q], &hi[0]);
        }
        out.push(d[0].clone());
    }
    out
}

/// Convenience: the bound-free integral <E L| O |n l> of `form` for the
/// channel `channel` at photo-electron energy `energy` (hartree), at `prec`
/// bits. See [`BoundFreeKernel::continuum`].
///
/// The squared matrix element summed over final and averaged over initial
/// magnetic substates is `channel.weight(l)` times the square of this value.
///
/// # Errors
/// As [`BoundFreeKernel::new`] and [`BoundFreeKernel::continuum`].
pub fn bound_free(
    state: &BoundState,
    channel: Channel,
    form: DipoleForm,
    energy: &Float,
    prec: u32,
) -> Result<Float, BasisError> {
    Ok(BoundFreeKernel::new(state, channel, form)?
        .continuum(energy, prec)?
        .value)
}
