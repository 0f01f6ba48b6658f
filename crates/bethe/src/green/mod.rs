//! Bethe logarithms from the photon-energy integral with the Sturmian Coulomb
//! Green's function (in progress).

pub mod channel;
pub mod meixner;
pub mod meter;
pub mod quad;
pub mod stieltjes;
#[cfg(test)]
mod tests;
