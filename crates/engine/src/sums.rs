//! The logarithmic dipole sums of one state: S(k), L(k), ln I(k), and the
//! mean excitation energies I(k) in eV for a chosen nucleus.
//!
//! Every front end computes the sums through [`compute_sums`] and prints
//! them through [`row_text`], so that the same (n, l, k, settings) gives the
//! same digits everywhere. Definitions, units (Z^2 Ry) and the accuracy
//! contract are those of [`kzero_bethe::sums`].

use crate::batch::{compute_jobs, Batch};
use crate::error::EngineError;
use crate::method::MethodChoice;
use crate::shard::Key;
use kzero_bethe::sums::{self, DipoleSums, SumRow};
use kzero_bethe::value::printed;
use kzero_bethe::{Gauge, Method, Settings};
use kzero_qed::constants::{RYDBERG_ENERGY_EV, RYDBERG_ENERGY_EV_UNCERTAINTY};
use kzero_qed::Nucleus;
use rug::Float;
use serde_json::{json, Map, Value};

/// The sums of one state by the requested method(s).
#[derive(Debug, Clone)]
pub struct ComputedSums {
    green: Option<DipoleSums>,
    spectral: Option<DipoleSums>,
}

impl ComputedSums {
    /// A result put together from its parts (tests of what a front end
    /// does with results it cannot get from a computation, such as two
    /// methods that disagree).
    #[cfg(test)]
    pub(crate) fn from_parts(green: Option<DipoleSums>, spectral: Option<DipoleSums>) -> Self {
        ComputedSums { green, spectral }
    }

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

    /// The method setting that produced this result: `both` when both
    /// methods ran, else the one that did.
    pub fn method(&self) -> MethodChoice {
        match (&self.green, &self.spectral) {
            (Some(_), Some(_)) => MethodChoice::Both,
            (Some(_), None) => MethodChoice::Green,
            _ => MethodChoice::Spectral,
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

/// The sums of many states in parallel: [`compute_sums`] with the same
/// powers and settings for every state of `states` (duplicates dropped),
/// scheduled most expensive first by [`sums_cost`], the results sorted by
/// (n, l) ([`crate::batch::compute_jobs`]: `threads = None` uses every CPU;
/// `cancel` is checked before each state starts; a panic of one state is
/// that state's [`EngineError::Internal`]).
///
/// # Accuracy
/// Each state as [`compute_sums`]; the values do not depend on the thread
/// count or the other states.
///
/// # Errors
/// [`EngineError::Threads`] only; the errors of single states are in
/// [`crate::StateResult::result`].
pub fn compute_sums_states(
    states: &[Key],
    ks: &[i64],
    method: MethodChoice,
    gauge: Gauge,
    settings: &Settings,
    threads: Option<usize>,
    cancel: &(dyn Fn() -> bool + Sync),
) -> Result<Batch<ComputedSums>, EngineError> {
    let count = ks.len();
    compute_jobs(
        states,
        threads,
        cancel,
        &|(n, l)| sums_cost(n, l, settings.digits, count, method),
        &|n, l| compute_sums(i64::from(n), i64::from(l), ks, method, gauge, settings),
    )
}

/// Estimated single-core CPU seconds of [`compute_sums`] with `count`
/// powers (a fit to measured times, within a factor of about 1.5 to 2; used
/// for shard plans and `table --estimate`, never for results; same unit as
/// [`crate::cost`]).
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
    /// Decimals of the printed unit (CODATA 2018 gives R_inf h c to 12).
    pub const DECIMALS: usize = 12;

    /// The unit in eV as printed, with its error (the uncertainty of
    /// R_inf h c plus the rounding of the decimal, rounded up): the
    /// printed-value rule of [`kzero_bethe::value::printed`].
    pub fn printed(&self) -> (String, String) {
        let p = printed(
            &Float::with_val(64, self.ev),
            self.ev * self.rel_err,
            Self::DECIMALS,
        );
        (p.value, p.abs_err)
    }

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

/// The dipole form of the spectral method for the sums when none is given.
pub const SUMS_DEFAULT_GAUGE: Gauge = Gauge::Length;

/// The dipole form of a request for the sums: `given`, or
/// [`SUMS_DEFAULT_GAUGE`] when none is given. A form given with the Green's
/// function method alone is refused, as for ln k0 ([`MethodChoice::gauge`]).
///
/// # Errors
/// [`EngineError::UnusedGauge`] for a form given with `green`.
pub fn sums_gauge(method: MethodChoice, given: Option<Gauge>) -> Result<Gauge, EngineError> {
    let form = method.gauge(given)?;
    Ok(if given.is_some() {
        form
    } else {
        SUMS_DEFAULT_GAUGE
    })
}

/// The powers of a request: `ks` as given, or every supported power
/// ([`kzero_bethe::sums::all_powers`], in increasing k) when `None`.
pub fn requested_powers(ks: Option<&[i64]>) -> Vec<i64> {
    match ks {
        Some(ks) => ks.to_vec(),
        None => sums::all_powers().into_iter().map(i64::from).collect(),
    }
}

/// One printed row as a JSON object: `k` (integer), `S`, `S_err`, `L`,
/// `L_err`, `ln_I`, `ln_I_err`, `I_eV`, `I_eV_err` (decimal strings; `null`
/// where [`RowText::ln_i`] or [`RowText::i_ev`] is `None`).
pub fn row_json(r: &RowText) -> Value {
    let mut m = Map::new();
    m.insert("k".into(), json!(r.k));
    m.insert("S".into(), json!(r.s));
    m.insert("S_err".into(), json!(r.s_err));
    m.insert("L".into(), json!(r.l));
    m.insert("L_err".into(), json!(r.l_err));
    let pair = |p: &Option<(String, String)>| match p {
        Some((v, e)) => (json!(v), json!(e)),
        None => (Value::Null, Value::Null),
    };
    let (li, lie) = pair(&r.ln_i);
    m.insert("ln_I".into(), li);
    m.insert("ln_I_err".into(), lie);
    let (iv, ie) = pair(&r.i_ev);
    m.insert("I_eV".into(), iv);
    m.insert("I_eV_err".into(), ie);
    Value::Object(m)
}

/// The printed rows of one method's result, I(k) in the energy unit of
/// `nucleus`.
pub fn rows_text(sums: &DipoleSums, nucleus: &Nucleus) -> Vec<RowText> {
    let unit = EnergyUnit::of(nucleus);
    sums.rows
        .iter()
        .map(|r| row_text(sums, r, Some(unit)))
        .collect()
}

/// The whole JSON object of `kzero sums --json` for a computed result and
/// the nucleus of I(k) in eV: `n`, `l`, `digits`, `method`, `gauge` (only
/// when the spectral method ran), `nucleus`, `z`, `energy_unit_eV` and
/// `energy_unit_eV_err` (Z^2 Ry of the nucleus in eV, [`EnergyUnit::printed`]), `rows` (one [`row_json`] per k, of
/// the primary result), with both methods `rows_spectral` and `consistent`
/// (no disagreement, see [`ComputedSums::disagreements`]), `bits` and
/// `nodes` (of the primary result) and `seconds` (all methods, a decimal string as in every JSON output).
///
/// Every front end prints the sums through this function, so the same
/// request gives the same strings everywhere.
pub fn sums_json(c: &ComputedSums, nucleus: &Nucleus) -> Value {
    let p = c.primary();
    let method = c.method();
    let mut m = Map::new();
    m.insert("n".into(), json!(p.n));
    m.insert("l".into(), json!(p.l));
    m.insert("digits".into(), json!(p.digits));
    m.insert("method".into(), json!(method.name()));
    if let Some(g) = c.spectral().and_then(|s| s.gauge) {
        m.insert("gauge".into(), json!(g.name()));
    }
    m.insert("nucleus".into(), json!(nucleus.name));
    m.insert("z".into(), json!(nucleus.z));
    let (unit, unit_err) = EnergyUnit::of(nucleus).printed();
    m.insert("energy_unit_eV".into(), json!(unit));
    m.insert("energy_unit_eV_err".into(), json!(unit_err));
    let rows = |s: &DipoleSums| Value::Array(rows_text(s, nucleus).iter().map(row_json).collect());
    m.insert("rows".into(), rows(p));
    if method == MethodChoice::Both {
        if let Some(s) = c.spectral() {
            m.insert("rows_spectral".into(), rows(s));
            m.insert("consistent".into(), json!(c.disagreements().is_empty()));
        }
    }
    m.insert("bits".into(), json!(p.bits));
    m.insert("nodes".into(), json!(p.nodes));
    m.insert("seconds".into(), json!(format!("{:.3}", c.seconds())));
    Value::Object(m)
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn a_form_is_refused_with_green_and_defaults_to_length() {
        assert!(matches!(
            sums_gauge(MethodChoice::Green, Some(Gauge::Length)),
            Err(EngineError::UnusedGauge)
        ));
        assert_eq!(
            sums_gauge(MethodChoice::Green, None).ok(),
            Some(SUMS_DEFAULT_GAUGE)
        );
        assert_eq!(
            sums_gauge(MethodChoice::Spectral, None).ok(),
            Some(Gauge::Length)
        );
        assert_eq!(
            sums_gauge(MethodChoice::Both, Some(Gauge::Velocity)).ok(),
            Some(Gauge::Velocity)
        );
        assert_eq!(requested_powers(None), vec![-4, -3, -2, -1, 0, 1, 2]);
        assert_eq!(requested_powers(Some(&[2, 0])), vec![2, 0]);
    }

    /// The JSON object: the fixed names, S(0) = 1 printed within its error
    /// (Thomas-Reiche-Kuhn, common practice), and with both methods the
    /// spectral rows, the gauge and `consistent`.
    #[test]
    fn the_json_object_has_the_fixed_names() {
        let settings = Settings::with_digits(10);
        let nucleus = crate::shift::nucleus(None, None, Some("inf"), None).expect("nucleus");
        let c = compute_sums(2, 1, &[0, 2], MethodChoice::Both, Gauge::Length, &settings)
            .expect("sums");
        assert_eq!(c.method(), MethodChoice::Both);
        let v = sums_json(&c, &nucleus);
        for key in [
            "n",
            "l",
            "digits",
            "method",
            "gauge",
            "nucleus",
            "z",
            "rows",
            "consistent",
        ] {
            assert!(v.get(key).is_some(), "missing {key}");
        }
        assert_eq!(v["method"], "both");
        assert_eq!(v["gauge"], "length");
        assert_eq!(v["consistent"], true);
        let rows = v["rows"].as_array().expect("rows");
        assert_eq!(rows.len(), 2);
        assert_eq!(rows[0]["k"], 0);
        let s: f64 = rows[0]["S"].as_str().expect("S").parse().expect("number");
        let e: f64 = rows[0]["S_err"]
            .as_str()
            .expect("S_err")
            .parse()
            .expect("number");
        assert!((s - 1.0).abs() <= e, "S(0) = {s} +- {e}");
        // S(2) = 0 for l >= 1: no ln I(2), no I(2).
        assert!(rows[1]["ln_I"].is_null() && rows[1]["I_eV"].is_null());
        assert_eq!(v["rows_spectral"].as_array().map(Vec::len), Some(2));
        let g =
            compute_sums(2, 1, &[0], MethodChoice::Green, Gauge::Length, &settings).expect("sums");
        let v = sums_json(&g, &nucleus);
        assert!(v.get("gauge").is_none() && v.get("rows_spectral").is_none());
        assert!(v.get("consistent").is_none());
    }

    #[test]
    fn many_states_come_sorted_and_equal_single_calls() {
        let settings = Settings::with_digits(10);
        let states = [(3, 2), (1, 0), (2, 1), (3, 2)];
        let never = || false;
        let ks = [-1, 0];
        let run = |threads| {
            compute_sums_states(
                &states,
                &ks,
                MethodChoice::Green,
                SUMS_DEFAULT_GAUGE,
                &settings,
                Some(threads),
                &never,
            )
            .expect("batch")
        };
        let (a, b) = (run(1), run(2));
        assert!(a.complete && b.complete);
        let keys: Vec<Key> = a.results.iter().map(|r| (r.n, r.l)).collect();
        assert_eq!(keys, [(1, 0), (2, 1), (3, 2)]);
        let nucleus = crate::shift::nucleus(None, None, None, None).expect("nucleus");
        for (x, y) in a.results.iter().zip(&b.results) {
            let (x, y) = (x.result.as_ref().expect("x"), y.result.as_ref().expect("y"));
            let one = compute_sums(
                i64::from(x.primary().n),
                i64::from(x.primary().l),
                &ks,
                MethodChoice::Green,
                SUMS_DEFAULT_GAUGE,
                &settings,
            )
            .expect("one");
            let rows = |c: &ComputedSums| sums_json(c, &nucleus)["rows"].clone();
            assert_eq!(rows(x), rows(y));
            assert_eq!(rows(x), rows(&one));
        }
        // A cancelled batch starts nothing.
        let stop = || true;
        let c = compute_sums_states(
            &states,
            &ks,
            MethodChoice::Green,
            SUMS_DEFAULT_GAUGE,
            &settings,
            Some(1),
            &stop,
        )
        .expect("batch");
        assert!(!c.complete && c.results.is_empty());
    }
}
