//! Scales and precisions shared by the pilot, the panels and the refinement.

use rug::Float;

/// Binary exponent of |x| (x = m 2^e, 1/2 <= |m| < 1), with zero and
/// non-finite values mapped to a very negative exponent.
pub(crate) fn exp2_of(x: &Float) -> i32 {
    x.get_exp().unwrap_or(-(1 << 20))
}

/// The factor n^3/2 that turns the photon-energy integral (hartree, Z = 1)
/// into ln k0: ln k0 = S / D0 with D0 = 2/n^3.
pub(crate) fn ln_k0_scale(n: u32) -> f64 {
    f64::from(n).powi(3) / 2.0
}

/// Binary exponent of [`ln_k0_scale`].
pub(crate) fn ln_k0_scale_exp(n: u32) -> i32 {
    ln_k0_scale(n).log2().ceil() as i32
}

/// Rounds a precision up to a multiple of 32 bits.
pub(crate) fn quantize(prec: u32) -> u32 {
    prec.div_ceil(32) * 32
}
