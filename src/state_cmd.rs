//! `kzero state`: one Bethe logarithm with its error estimate and diagnostics.

use crate::app_error::AppError;
use crate::output;
use kzero_engine::{compute, validate_state, BetheValue, Gauge, MethodChoice, Settings};
use serde_json::{json, Map, Value};

/// Arguments of `kzero state`.
#[derive(Debug, clap::Args)]
pub struct StateArgs {
    /// Principal quantum number n (1..=200).
    #[arg(value_name = "N", allow_negative_numbers = true)]
    pub n: i64,
    /// Orbital angular momentum l (0 <= l < n).
    #[arg(value_name = "L", allow_negative_numbers = true)]
    pub l: i64,
    /// Requested absolute accuracy: |error| < 10^-D (5..=200).
    #[arg(long, value_name = "D", default_value_t = 20, value_parser = crate::args::digits_parser())]
    pub digits: u32,
    /// Method; `both` cross-checks the two (exit 3 when they disagree
    /// beyond their combined error estimates).
    #[arg(long, default_value_t = MethodChoice::Green, value_parser = crate::args::method_parser())]
    pub method: MethodChoice,
    /// Dipole form of the spectral method.
    #[arg(long, default_value_t = Gauge::Velocity, value_parser = crate::args::gauge_parser())]
    pub gauge: Gauge,
    /// One JSON object instead of the text report.
    #[arg(long)]
    pub json: bool,
}

fn describe(v: &BetheValue) -> String {
    format!(
        "  {:<8} ln k0 = {}\n           estimated error {} (goal 1e-{}), {} bits, {} nodes, {} terms, {:.3} s\n",
        v.method.name(),
        v.value_string(),
        v.abs_err_string(),
        v.digits,
        v.bits,
        v.nodes,
        v.terms,
        v.seconds
    )
}

/// Runs `kzero state`.
pub fn run(a: &StateArgs) -> Result<(), AppError> {
    let (n, l) = validate_state(a.n, a.l, a.method)?;
    let settings = Settings::with_digits(a.digits);
    let c = compute(n, l, a.method, a.gauge, &settings)?;
    let p = c.primary();
    let agreement = c.agreement();
    if a.json {
        let mut m = Map::new();
        m.insert("n".into(), json!(n));
        m.insert("l".into(), json!(l));
        m.insert("ln_k0".into(), json!(p.value_string()));
        m.insert("abs_err".into(), json!(p.abs_err_string()));
        m.insert("digits".into(), json!(a.digits));
        m.insert("method".into(), json!(a.method.name()));
        m.insert("bits".into(), json!(p.bits));
        m.insert("seconds".into(), json!(c.seconds()));
        m.insert("nodes".into(), json!(p.nodes));
        m.insert("terms".into(), json!(p.terms));
        if a.method != MethodChoice::Green {
            m.insert("gauge".into(), json!(a.gauge.name()));
        }
        if let (Some(s), Some(agr)) = (c.spectral(), agreement) {
            let (d, ok) = (agr.digits, agr.consistent);
            m.insert("ln_k0_spectral".into(), json!(s.value_string()));
            m.insert("abs_err_spectral".into(), json!(s.abs_err_string()));
            m.insert("agreement_digits".into(), json!(d));
            m.insert("consistent".into(), json!(ok));
            m.insert("bits_spectral".into(), json!(s.bits));
            m.insert("nodes_spectral".into(), json!(s.nodes));
            m.insert("terms_spectral".into(), json!(s.terms));
            m.insert("seconds_spectral".into(), json!(s.seconds));
            if let Some(g) = c.green() {
                m.insert("seconds_green".into(), json!(g.seconds));
            }
        }
        let mut s = serde_json::to_string_pretty(&Value::Object(m)).unwrap_or_default();
        s.push('\n');
        output::print(&s)?;
    } else {
        let mut s = format!("ln k0({n},{l}) = {}\n", p.value_string());
        if let Some(g) = c.green() {
            s.push_str(&describe(g));
        }
        if let Some(sp) = c.spectral() {
            s.push_str(&describe(sp));
            if a.method != MethodChoice::Green {
                s.push_str(&format!("           ({} form)\n", a.gauge.name()));
            }
        }
        if let Some(agr) = agreement {
            let (d, ok) = (agr.digits, agr.consistent);
            s.push_str(&format!(
                "  agreement: {d} decimal digits, {}\n",
                if ok {
                    "within the combined error estimates"
                } else {
                    "NOT within the combined error estimates"
                }
            ));
        }
        output::print(&s)?;
    }
    Ok(c.check_agreement()?)
}
