//! The bridge between the driver and the Bethe-logarithm engines.
//!
//! Every command that computes ln k0 goes through [`compute`], so that a
//! table row, a `state` report and a `check` line for the same (n, l) and
//! settings come from the same computation and are formatted the same way.

use crate::app_error::AppError;
use kzero_bethe::{BetheValue, Gauge, Settings};
use rug::Float;

/// The method choice on the command line.
#[derive(Debug, Clone, Copy, PartialEq, Eq, Hash, clap::ValueEnum)]
pub enum MethodChoice {
    /// Photon-energy integral with the Sturmian Coulomb Green's function.
    Green,
    /// Explicit sum over the bound and continuum spectrum.
    Spectral,
    /// Both, with a cross-check of their agreement.
    Both,
}

impl MethodChoice {
    /// The name used on the command line and in tables.
    pub fn name(self) -> &'static str {
        match self {
            MethodChoice::Green => "green",
            MethodChoice::Spectral => "spectral",
            MethodChoice::Both => "both",
        }
    }

    /// Parses a name written by [`MethodChoice::name`].
    pub fn from_name(s: &str) -> Option<Self> {
        match s {
            "green" => Some(MethodChoice::Green),
            "spectral" => Some(MethodChoice::Spectral),
            "both" => Some(MethodChoice::Both),
            _ => None,
        }
    }
}

/// The dipole form on the command line (used by the spectral method).
#[derive(Debug, Clone, Copy, PartialEq, Eq, Hash, Default, clap::ValueEnum)]
pub enum GaugeChoice {
    /// |p|^2 D ln D.
    #[default]
    Velocity,
    /// |r|^2 D^3 ln D.
    Length,
    /// |grad V|^2 D^-1 ln D.
    Acceleration,
}

impl GaugeChoice {
    /// The library gauge.
    pub fn gauge(self) -> Gauge {
        match self {
            GaugeChoice::Velocity => Gauge::Velocity,
            GaugeChoice::Length => Gauge::Length,
            GaugeChoice::Acceleration => Gauge::Acceleration,
        }
    }

    /// The name used on the command line and in tables.
    pub fn name(self) -> &'static str {
        self.gauge().name()
    }
}

/// One state computed with the requested method(s).
#[derive(Debug, Clone)]
pub struct Computed {
    /// The Green's-function value (methods `green` and `both`).
    pub green: Option<BetheValue>,
    /// The spectral value (methods `spectral` and `both`).
    pub spectral: Option<BetheValue>,
}

impl Computed {
    /// The value reported as `ln_k0`: Green's function when computed,
    /// otherwise the spectral sum.
    pub fn primary(&self) -> &BetheValue {
        match (&self.green, &self.spectral) {
            (Some(g), _) => g,
            (None, Some(s)) => s,
            (None, None) => unreachable!("compute always fills one method"),
        }
    }

    /// With both methods: (agreement digits, consistent?) where `consistent`
    /// means |green - spectral| <= abs_err_green + abs_err_spectral.
    pub fn agreement(&self) -> Option<(u32, bool)> {
        match (&self.green, &self.spectral) {
            (Some(g), Some(s)) => Some(agreement(g, s)),
            _ => None,
        }
    }

    /// Total wall time of the computation (seconds).
    pub fn seconds(&self) -> f64 {
        self.green.as_ref().map_or(0.0, |v| v.seconds)
            + self.spectral.as_ref().map_or(0.0, |v| v.seconds)
    }
}

/// Number of agreeing decimal digits after the point of two values, and
/// whether they agree within their combined error estimates.
///
/// The digit count is floor(-log10 |a - b|), clipped to 0..=digits+2 (the
/// decimals printed); identical values give digits + 2.
pub fn agreement(a: &BetheValue, b: &BetheValue) -> (u32, bool) {
    let prec = a.value.prec().max(b.value.prec());
    let diff = Float::with_val(prec, &a.value - &b.value).abs();
    let cap = a.digits.max(b.digits) + 2;
    let digits = if diff.is_zero() {
        cap
    } else {
        let l = -diff.clone().log10().to_f64();
        if l <= 0.0 {
            0
        } else {
            (l.floor() as u32).min(cap)
        }
    };
    let tol = a.abs_err + b.abs_err;
    let consistent = diff.to_f64() <= tol;
    (digits, consistent)
}

/// Validates the numbers of a state request (n >= 1, 0 <= l < n, n in the
/// supported range) and returns them as unsigned integers.
pub fn validate_state(n: i64, l: i64, method: MethodChoice) -> Result<(u32, u32), AppError> {
    let name = match method {
        MethodChoice::Green | MethodChoice::Both => "green",
        MethodChoice::Spectral => "spectral",
    };
    Ok(kzero_bethe::settings::validate_state(n, l, name)?)
}

/// Computes ln k0(n, l) with the requested method(s).
///
/// # Errors
/// Invalid state or settings (bad input), non-convergence (other).
pub fn compute(
    n: u32,
    l: u32,
    method: MethodChoice,
    gauge: GaugeChoice,
    settings: &Settings,
) -> Result<Computed, AppError> {
    settings.validate()?;
    let green = match method {
        MethodChoice::Green | MethodChoice::Both => Some(green_value(n, l, settings)?),
        MethodChoice::Spectral => None,
    };
    let spectral = match method {
        MethodChoice::Spectral | MethodChoice::Both => Some(spectral_value(n, l, gauge, settings)?),
        MethodChoice::Green => None,
    };
    Ok(Computed { green, spectral })
}

/// Relative cost of computing (n, l) at `digits` with `method` (for load
/// balancing only: larger means slower).
pub fn cost(n: u32, l: u32, digits: u32, method: MethodChoice) -> f64 {
    let c = match method {
        MethodChoice::Green => green_cost(n, l, digits),
        MethodChoice::Spectral => spectral_cost(n, l, digits),
        MethodChoice::Both => green_cost(n, l, digits) + spectral_cost(n, l, digits),
    };
    if c.is_finite() && c > 0.0 {
        c
    } else {
        1.0
    }
}

fn green_value(n: u32, l: u32, settings: &Settings) -> Result<BetheValue, AppError> {
    Ok(kzero_bethe::green::ln_k0(
        i64::from(n),
        i64::from(l),
        settings,
    )?)
}

fn spectral_value(
    n: u32,
    l: u32,
    gauge: GaugeChoice,
    settings: &Settings,
) -> Result<BetheValue, AppError> {
    Ok(kzero_bethe::spectral::ln_k0(
        i64::from(n),
        i64::from(l),
        gauge.gauge(),
        settings,
    )?)
}

fn green_cost(n: u32, l: u32, digits: u32) -> f64 {
    kzero_bethe::green::cost_estimate(n, l, digits)
}

fn spectral_cost(n: u32, l: u32, digits: u32) -> f64 {
    kzero_bethe::spectral::cost_estimate(n, l, digits)
}
