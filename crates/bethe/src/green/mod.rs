//! Bethe logarithms from the photon-energy integral with the Sturmian Coulomb
//! Green's function.
//!
//! ## Method
//! With D_m = E_m - E_n in hartree (Z = 1), the integral is written for
//! S_h = sum_m |p_nm|^2 D_m ln|D_m| (logarithm of D in hartree):
//!
//! ```text
//! S_h = sum_lower c D ln|D| + Dsum_up ln(w0) - int_0^inf [f_up(w) - Dsum_up/(w + w0)] dw
//! ```
//!
//! where the lower bound states (E_m < E_n, poles on the path for n > 1) are
//! taken out of f(w) = <p^2> - w <p (H - E_n + w)^-1 p> with their exact
//! matrix elements, so the remaining integrand has no poles. The numerator
//! of ln k0 takes D in units of Z^2 Ry (twice the value in hartree at
//! Z = 1), so S = S_h + Dsum ln 2 with Dsum = sum_m |p_nm|^2 D_m (2/n^3 for
//! S states, else 0); the exact part adds this term explicitly, and
//! ln k0 = S n^3 / 2. The resolvent of each intermediate partial wave is the
//! Sturmian sum, summed in closed form through Meixner polynomials. The
//! integral runs over nu in (0, n]: a first panel [0, nu1] with a
//! logarithmic product rule (the integrand is analytic plus analytic times
//! ln nu there), then Gauss–Legendre panels in u = ln(nu / (n + 1 - nu)),
//! which sends nu = 0 and the pole of the first upper state at nu = n + 1
//! to infinity and leaves the integrand analytic in the strip
//! |Im u| < pi, so that a few panels of length up to 4 in u cover the rest.
//! The derivations are in docs/physics.md:
//! section 3 (the integral, the lower states, the variable nu, the units),
//! section 3.6 (the panels), section 4 (the Sturmian Green's function and
//! its closed form) and section 6 (the error estimate).
//!
//! ## Error estimate
//! Panel by panel: a pair of Gauss rules (N nodes at p bits, and about
//! N + max(N/8, 4) nodes at p +- 32 bits) is compared; the finer value is kept and
//! |difference| estimates the error of the cruder one, so it is conservative
//! for the value kept as long as the rule converges. Each panel must meet an
//! equal share of the goal; the estimate returned is the sum over panels. N
//! starts from the panel's size (seen by the pilot) and the convergence rate
//! the panel's length in u predicts, and grows (at that rate, at most 4 bits
//! per node) while the difference misses the share.
//!
//! Working bits p = goal bits + guard, per panel. The guard is the loss to
//! cancellation measured by a pilot, on the absolute scale of ln k0, plus a
//! margin. The pilot evaluates the integrand at two precisions 32 bits apart
//! at a few points per panel: in the first panel from about its smallest
//! node up to nu1, on the mapped panels at both ends and at most 2 apart in
//! u; where the higher evaluation kept too few bits, it is repeated at a
//! higher precision. The meter of every node raises the guard when it
//! sees more, and the 32-bit offset within a pair exposes rounding errors
//! both missed. A panel
//! that does not converge makes the call fail with
//! [`BetheError::NoConvergence`](crate::BetheError::NoConvergence); no
//! number is returned then.
//!
//! ## Range
//! 1 <= n <= 1000 ([`crate::settings::MAX_N`]), 0 <= l < n; the value does
//! not depend on Z and the computation runs at Z = 1. The working precision
//! follows the loss the pilot and the meters measure at each n; nothing in
//! the method is tuned to a largest n.
//!
//! ## Layout
//! Only [`ln_k0`] and [`cost_estimate`] are public. Inside the crate:
//! `channel` (exact data of one partial wave and its lower states),
//! `stieltjes` and `meixner` (the closed-form Sturmian sum of one channel),
//! `integrand` (the sampled integrand at one precision), `meter`
//! (cancellation bookkeeping), `quad` (Gauss–Legendre and logarithmic
//! product rules), `exact_part` (the exact data of the state and the exact
//! part of S), `panels` (the panel layout and one rule on one panel),
//! `rates` (node counts and convergence rates), `pilot` (the loss profile
//! and each panel's starting plan), `refine` (the adaptive pair of rules on
//! one panel), `scale` (the n^3/2 scale and precision rounding) and
//! `driver` (the method itself).

pub(crate) mod channel;
pub(crate) mod driver;
pub(crate) mod exact_part;
pub(crate) mod integrand;
pub(crate) mod meixner;
pub(crate) mod meter;
pub(crate) mod panels;
pub(crate) mod pilot;
pub(crate) mod quad;
pub(crate) mod rates;
pub(crate) mod refine;
pub(crate) mod scale;
pub(crate) mod stieltjes;

#[cfg(test)]
mod tests;

pub use driver::{cost_estimate, ln_k0};
