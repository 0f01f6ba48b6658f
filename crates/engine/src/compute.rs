//! Computing one state: the only bridge from a front end to the methods.
//!
//! Every front end computes ln k0 through [`compute`], so that a table row,
//! a `state` report, a `check` line, a sweep point and a level shift for the
//! same (n, l) and settings come from the same computation.

use crate::error::EngineError;
use crate::method::MethodChoice;
use kzero_bethe::{agreement, Agreement, BetheValue, Gauge, Method, Settings};

/// One state computed with the requested method(s).
#[derive(Debug, Clone)]
pub struct Computed {
    green: Option<BetheValue>,
    spectral: Option<BetheValue>,
}

impl Computed {
    /// The Green's-function value (methods `green` and `both`).
    pub fn green(&self) -> Option<&BetheValue> {
        self.green.as_ref()
    }

    /// The spectral value (methods `spectral` and `both`).
    pub fn spectral(&self) -> Option<&BetheValue> {
        self.spectral.as_ref()
    }

    /// The value reported as `ln_k0`: Green's function when computed,
    /// otherwise the spectral sum.
    pub fn primary(&self) -> &BetheValue {
        match (&self.green, &self.spectral) {
            (Some(g), _) => g,
            (None, Some(s)) => s,
            // `compute` always fills at least one method.
            (None, None) => unreachable!("a Computed holds at least one value"),
        }
    }

    /// Consumes the result, returning the primary value.
    pub fn into_primary(self) -> BetheValue {
        match (self.green, self.spectral) {
            (Some(g), _) => g,
            (None, Some(s)) => s,
            (None, None) => unreachable!("a Computed holds at least one value"),
        }
    }

    /// With both methods: their [`agreement`] (green compared with spectral).
    pub fn agreement(&self) -> Option<Agreement> {
        match (&self.green, &self.spectral) {
            (Some(g), Some(s)) => Some(agreement(g, s)),
            _ => None,
        }
    }

    /// With both methods: `Err(`[`EngineError::MethodsDisagree`]`)` when they
    /// differ beyond their combined error estimates; `Ok` otherwise (and
    /// with one method).
    ///
    /// # Errors
    /// [`EngineError::MethodsDisagree`] (class
    /// [`crate::ErrorClass::CheckFailed`]).
    pub fn check_agreement(&self) -> Result<(), EngineError> {
        match (&self.green, &self.spectral, self.agreement()) {
            (Some(g), Some(s), Some(a)) if !a.consistent => Err(EngineError::MethodsDisagree {
                n: g.n,
                l: g.l,
                green: g.value_string(),
                green_err: g.abs_err_string(),
                spectral: s.value_string(),
                spectral_err: s.abs_err_string(),
                digits: a.digits,
            }),
            _ => Ok(()),
        }
    }

    /// Total wall time of the computation (seconds).
    pub fn seconds(&self) -> f64 {
        self.green.as_ref().map_or(0.0, |v| v.seconds)
            + self.spectral.as_ref().map_or(0.0, |v| v.seconds)
    }
}

/// Validates the numbers of a state request (n >= 1, 0 <= l < n, n in the
/// range of the method) and returns them as unsigned integers.
///
/// # Errors
/// [`kzero_bethe::BetheError::InvalidState`] or
/// [`kzero_bethe::BetheError::OutOfRange`] (bad input).
pub fn validate_state(n: i64, l: i64, method: MethodChoice) -> Result<(u32, u32), EngineError> {
    Ok(kzero_bethe::settings::validate_state(
        n,
        l,
        method.primary().name(),
    )?)
}

/// Computes ln k0(n, l) with the requested method(s). `gauge` is the dipole
/// form of the spectral method (ignored by `green`).
///
/// Units and conventions as in [`kzero_bethe`]: energies in units of Z^2 Ry,
/// D0 = 2 Z^4/n^3 for every l. Deterministic: the same (n, l, method, gauge,
/// settings) gives the same digits, bits and nodes.
///
/// # Accuracy
/// Each value carries its own estimate `abs_err` < 10^-digits (see the
/// accuracy contract of [`kzero_bethe`]).
///
/// # Errors
/// Invalid state or settings (bad input), a gauge not available for the
/// state (bad input), non-convergence (failure).
pub fn compute(
    n: u32,
    l: u32,
    method: MethodChoice,
    gauge: Gauge,
    settings: &Settings,
) -> Result<Computed, EngineError> {
    settings.validate()?;
    let mut out = Computed {
        green: None,
        spectral: None,
    };
    for &m in method.methods() {
        let v = value(n, l, m, gauge, settings)?;
        match m {
            Method::Green => out.green = Some(v),
            Method::Spectral => out.spectral = Some(v),
        }
    }
    Ok(out)
}

/// One method's value (the calls into kzero-bethe).
fn value(
    n: u32,
    l: u32,
    method: Method,
    gauge: Gauge,
    settings: &Settings,
) -> Result<BetheValue, EngineError> {
    let (n, l) = (i64::from(n), i64::from(l));
    Ok(match method {
        Method::Green => kzero_bethe::green::ln_k0(n, l, settings)?,
        Method::Spectral => kzero_bethe::spectral::ln_k0(n, l, gauge, settings)?,
    })
}

/// Estimated cost of computing (n, l) at `digits` with `method`: the sum of
/// the methods' own models, in single-core CPU seconds on the reference
/// machine of benches/README.md (an estimate within a factor of about 1.6,
/// see [`crate::estimate`](mod@crate::estimate)); used to balance shards and
/// to estimate a run.
/// Always finite and > 0 (1 where a method's own estimate is not).
pub fn cost(n: u32, l: u32, digits: u32, method: MethodChoice) -> f64 {
    let c: f64 = method
        .methods()
        .iter()
        .map(|m| match m {
            Method::Green => kzero_bethe::green::cost_estimate(n, l, digits),
            Method::Spectral => kzero_bethe::spectral::cost_estimate(n, l, digits),
        })
        .sum();
    if c.is_finite() && c > 0.0 {
        c
    } else {
        1.0
    }
}
