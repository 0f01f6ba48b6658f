//! The logarithmic dipole sums of one state: S(k), L(k), ln I(k), and the
//! mean excitation energies I(k) in eV for a chosen nucleus.
//!
//! Every front end computes the sums through [`compute_sums`] and prints
//! them through [`row_text`], so that the same (n, l, k, settings) gives the
//! same digits everywhere. Definitions, units (Z^2 Ry) and the accuracy
//! contract are those of [`kzero_bethe::sums`].

use crate::error::EngineError;
use crate::method::MethodChoice;
use kzero_bethe::sums::{self, DipoleSums, SumRow};
use kzero_bethe::value::printed;
use kzero_bethe::{Gauge, Method, Settings};
use kzero_qed::constants::{RYDBERG_ENERGY_EV, RYDBERG_ENERGY_EV_UNCERTAINTY};
use kzero_qed::Nucleus;
use rug::Float;

/// The sums of one state by the requested method(s).
#[derive(Debug, Clone)]
pub struct ComputedSums {
    green: Option<DipoleSums>,
    spectral: Option<DipoleSums>,
}

impl ComputedSums {
    /// The Green's-function result (methods `green` and `both`).
    pub fn green(&self) -> Option<&DipoleSums> {
        self.green.as_ref()
    }

    /// The spectral result (methods `spectral` and `both`).
    pub fn spectral(&self) -> Option<&DipoleSums> {
        self.spectral.as_ref()
    }

    /// The result reported: Green's function when computed, otherwise the
    /// spectral sum.
    pub fn primary(&self) -> &DipoleSums {
        match (&self.green, &self.spectral) {
            (Some(g), _) => g,
            (None, Some(s)) => s,
            (None, None) => unreachable!("a ComputedSums holds at least one result"),
        }
    }

    /// With both methods: every (k, quantity) where the two differ beyond
    /// their combined error estimates, as (k, "S" or "L", green, spectral).
    pub fn disagreements(&self) -> Vec<(i32, &'static str, String, String)> {
        let (Some(g), Some(s)) = (&self.green, &self.spectral) else {
            return Vec::new();
        };
        let mut out = Vec::new();
        for (a, b) in g.rows.iter().zip(&s.rows) {
            for (name, x, ex, y, ey) in [
                ("S", &a.s, a.s_err, &b.s, b.s_err),
                ("L", &a.log_sum, a.log_err, &b.log_sum, b.log_err),
            ] {
                let prec = x.prec().max(y.prec());
                let d = Float::with_val(prec, x - y).abs().to_f64();
                if d > ex + ey {
                    let pg = g.printed(x, ex);
                    let ps = s.printed(y, ey);
                    out.push((
                        a.k,
                        name,
                        format!("{} +- {}", pg.value, pg.abs_err),
                        format!("{} +- {}", ps.value, ps.abs_err),
                    ));
                }
            }
        }
        out
    }

    /// With both methods: `Err(`[`EngineError::SumsDisagree`]`)` for the
    /// first disagreement (class [`crate::ErrorClass::CheckFailed`]).
    ///
    /// # Errors
    /// [`EngineError::SumsDisagree`].
    pub fn check_agreement(&self) -> Result<(), EngineError> {
        let p = self.primary();
        match self.disagreements().into_iter().next() {
            Some((k, quantity, green, spectral)) => Err(EngineError::SumsDisagree {
                n: p.n,
                l: p.l,
                k,
                quantity,
                green,
                spectral,
            }),
            None => Ok(()),
        }
    }

    /// Total wall time (seconds).
    pub fn seconds(&self) -> f64 {
        self.green.as_ref().map_or(0.0, |v| v.seconds)
            + self.spectral.as_ref().map_or(0.0, |v| v.seconds)
    }
}

/// S(k), L(k) of (n, l) for the powers `ks` (each in
/// [`kzero_bethe::sums::K_MIN`]..=[`kzero_bethe::sums::K_MAX`]) with the
/// requested method(s); `gauge` is the dipole form of the spectral method.
///
/// # Accuracy
/// Every S(k) and L(k) carries its own estimate below 10^-digits (absolute
/// goal; see [`kzero_bethe::sums`]).
///
/// # Errors
/// Bad input (state, digits, a significant-digit goal, k out of range, an
/// empty list) or non-convergence.
pub fn compute_sums(
    n: i64,
    l: i64,
    ks: &[i64],
    method: MethodChoice,
    gauge: Gauge,
    settings: &Settings,
) -> Result<ComputedSums, EngineError> {
    let mut out = ComputedSums {
        green: None,
        spectral: None,
    };
    for &m in method.methods() {
        match m {
            Method::Green => out.green = Some(sums::green_sums(n, l, ks, settings)?),
            Method::Spectral => {
                out.spectral = Some(sums::spectral_sums(n, l, ks, gauge, settings)?)
            }
        }
    }
    Ok(out)
}

/// Relative cost of [`compute_sums`] with `count` powers (load balancing
/// only; comparable with [`crate::cost`]).
pub fn sums_cost(n: u32, l: u32, digits: u32, count: usize, method: MethodChoice) -> f64 {
    let c: f64 = method
        .methods()
        .iter()
        .map(|m| match m {
            Method::Green => sums::green_cost_estimate(n, l, digits, count),
            Method::Spectral => sums::spectral_cost_estimate(n, l, digits, count),
        })
        .sum();
    if c.is_finite() && c > 0.0 {
        c
    } else {
        1.0
    }
}

/// The energy unit Z^2 Ry of a nucleus in eV: Z^2 R_inf h c m_r/m_e
/// (CODATA 2018 R_inf h c, reduced-mass factor of the nucleus).
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct EnergyUnit {
    /// Z^2 Ry in eV.
    pub ev: f64,
    /// Relative uncertainty: that of R_inf h c (CODATA 2018) plus the f64
    /// rounding of the products.
    pub rel_err: f64,
}

impl EnergyUnit {
    /// The unit of `nucleus`.
    pub fn of(nucleus: &Nucleus) -> Self {
        let z2 = f64::from(nucleus.z * nucleus.z);
        EnergyUnit {
            ev: z2 * RYDBERG_ENERGY_EV * nucleus.reduced_mass_ratio(),
            rel_err: RYDBERG_ENERGY_EV_UNCERTAINTY / RYDBERG_ENERGY_EV + 1e-15,
        }
    }
}

/// One row as printed: every value with its error as decimal strings
/// (the printed-value rule of [`kzero_bethe::value::printed`]).
#[derive(Debug, Clone, PartialEq, Eq)]
pub struct RowText {
    /// The power k.
    pub k: i32,
    /// S(k).
    pub s: String,
    /// Error of `s`.
    pub s_err: String,
    /// L(k).
    pub l: String,
    /// Error of `l`.
    pub l_err: String,
    /// ln I(k) = L(k)/S(k) (`None` when S(k) is zero within its error).
    pub ln_i: Option<(String, String)>,
    /// I(k) in eV with its error (`None` as `ln_i`, or without a unit).
    pub i_ev: Option<(String, String)>,
}

/// The printed row of `row` in `sums`; I(k) in eV when `unit` is given.
///
/// # Accuracy
/// Values are printed with D + 2 decimals (ln I(k) as well); I(k) in eV
/// with decimals down to its error, which is exp(ln I) unit (dlnI +
/// relative uncertainty of the unit), rounded up.
pub fn row_text(sums: &DipoleSums, row: &SumRow, unit: Option<EnergyUnit>) -> RowText {
    let ps = sums.printed(&row.s, row.s_err);
    let pl = sums.printed(&row.log_sum, row.log_err);
    let li = row.ln_i();
    let ln_i = li.as_ref().map(|(v, e)| {
        let p = sums.printed(v, *e);
        (p.value, p.abs_err)
    });
    let i_ev = match (li, unit) {
        (Some((v, e)), Some(u)) => {
            let prec = v.prec();
            let x = Float::with_val(prec, v.exp_ref()) * u.ev;
            let err = x.to_f64().abs() * (e.exp_m1() + u.rel_err);
            // decimals: one past the first significant digit of the error
            let decimals = if err > 0.0 {
                ((-err.log10()).ceil() as i64 + 1).clamp(0, i64::from(sums.digits) + 2)
            } else {
                i64::from(sums.digits) + 2
            };
            let p = printed(&x, err, decimals as usize);
            Some((p.value, p.abs_err))
        }
        _ => None,
    };
    RowText {
        k: row.k,
        s: ps.value,
        s_err: ps.abs_err,
        l: pl.value,
        l_err: pl.abs_err,
        ln_i,
        i_ev,
    }
}
