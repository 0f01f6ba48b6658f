//! `kzero state`: one Bethe logarithm with its error estimate and diagnostics.

use crate::app_error::AppError;
use crate::args::{goal_settings, refuse_unused_gauge, GaugeArg};
use crate::output;
use kzero_bethe::spectral::FormComparison;
use kzero_bethe::value::format_err;
use kzero_bethe::Goal;
use kzero_engine::{compute, validate_state, BetheValue, Gauge, MethodChoice};
use serde_json::{json, Map, Value};

/// Arguments of `kzero state`.
#[derive(Debug, clap::Args)]
pub struct StateArgs {
    /// Principal quantum number n (1..=1000).
    #[arg(value_name = "N", allow_negative_numbers = true)]
    pub n: i64,
    /// Orbital angular momentum l (0 <= l < n).
    #[arg(value_name = "L", allow_negative_numbers = true)]
    pub l: i64,
    /// Requested absolute accuracy: |error| < 10^-D (5..=200; default 20).
    #[arg(long, value_name = "D", value_parser = crate::args::digits_parser(), conflicts_with = "significant")]
    pub digits: Option<u32>,
    /// Requested relative accuracy instead: |error| <= 10^-D |ln k0|, that
    /// is D significant digits (5..=200).
    #[arg(long, value_name = "D", value_parser = crate::args::digits_parser())]
    pub significant: Option<u32>,
    /// Method; `both` cross-checks the two (exit 3 when they disagree
    /// beyond their combined error estimates).
    #[arg(long, default_value_t = MethodChoice::Green, value_parser = crate::args::method_parser())]
    pub method: MethodChoice,
    /// Dipole form of the spectral method (default velocity; refused with
    /// --method green). `all` computes the three forms independently and
    /// reports their spread (exit 3 when they disagree beyond their
    /// combined error estimates).
    #[arg(long, value_parser = crate::args::gauge_or_all_parser())]
    pub gauge: Option<GaugeArg>,
    /// One JSON object instead of the text report.
    #[arg(long)]
    pub json: bool,
}

/// The goal as text: `1e-20` or `1e-20 relative`.
fn goal_text(v: &BetheValue) -> String {
    match v.goal {
        Goal::Absolute => format!("1e-{}", v.digits),
        Goal::Significant => format!("1e-{} relative", v.digits),
    }
}

fn describe(v: &BetheValue) -> String {
    format!(
        "  {:<8} ln k0 = {}\n           estimated error {} (goal {}), {} bits, {} nodes, {} terms, {:.3} s\n",
        v.method.name(),
        v.value_string(),
        v.abs_err_string(),
        goal_text(v),
        v.bits,
        v.nodes,
        v.terms,
        v.seconds
    )
}

/// Seconds as a decimal string (JSON).
fn secs(x: f64) -> Value {
    json!(format!("{x:.3}"))
}

/// The fields of one value in JSON (suffix `_spectral` etc. added by the caller).
fn value_fields(v: &BetheValue) -> Map<String, Value> {
    let mut m = Map::new();
    m.insert("ln_k0".into(), json!(v.value_string()));
    m.insert("abs_err".into(), json!(v.abs_err_string()));
    m.insert("bits".into(), json!(v.bits));
    m.insert("nodes".into(), json!(v.nodes));
    m.insert("terms".into(), json!(v.terms));
    m.insert("seconds".into(), secs(v.seconds));
    m
}

/// Runs `kzero state`.
pub fn run(a: &StateArgs) -> Result<(), AppError> {
    refuse_unused_gauge(a.method, a.gauge)?;
    let (n, l) = validate_state(a.n, a.l, a.method)?;
    let settings = goal_settings(a.digits, a.significant);
    let gauge = match a.gauge {
        Some(GaugeArg::One(g)) => g,
        _ => Gauge::Velocity,
    };
    let c = compute(n, l, a.method, gauge, &settings)?;
    // --gauge all: the other two forms, each its own computation
    let forms = match (a.gauge, c.spectral()) {
        (Some(GaugeArg::All), Some(v)) => {
            let mut values = vec![v.clone()];
            for g in &Gauge::ALL[1..] {
                values.push(compute(n, l, MethodChoice::Spectral, *g, &settings)?.into_primary());
            }
            Some(FormComparison::from_values(values))
        }
        _ => None,
    };
    let p = c.primary();
    let agreement = c.agreement();
    let seconds = c.seconds()
        + forms
            .as_ref()
            .map_or(0.0, |f| f.values[1..].iter().map(|v| v.seconds).sum());
    if a.json {
        let mut m = Map::new();
        m.insert("n".into(), json!(n));
        m.insert("l".into(), json!(l));
        m.insert("ln_k0".into(), json!(p.value_string()));
        m.insert("abs_err".into(), json!(p.abs_err_string()));
        m.insert("digits".into(), json!(settings.digits));
        m.insert("goal".into(), json!(settings.goal.name()));
        m.insert("method".into(), json!(a.method.name()));
        m.insert("bits".into(), json!(p.bits));
        m.insert("seconds".into(), secs(seconds));
        m.insert("nodes".into(), json!(p.nodes));
        m.insert("terms".into(), json!(p.terms));
        if a.method != MethodChoice::Green {
            let name = if forms.is_some() { "all" } else { gauge.name() };
            m.insert("gauge".into(), json!(name));
        }
        if let (Some(s), Some(agr)) = (c.spectral(), agreement) {
            m.insert("ln_k0_spectral".into(), json!(s.value_string()));
            m.insert("abs_err_spectral".into(), json!(s.abs_err_string()));
            m.insert("agreement_digits".into(), json!(agr.digits));
            m.insert("consistent".into(), json!(agr.consistent));
            m.insert("bits_spectral".into(), json!(s.bits));
            m.insert("nodes_spectral".into(), json!(s.nodes));
            m.insert("terms_spectral".into(), json!(s.terms));
            m.insert("seconds_spectral".into(), secs(s.seconds));
            if let Some(g) = c.green() {
                m.insert("seconds_green".into(), secs(g.seconds));
            }
        }
        if let Some(f) = &forms {
            let list: Vec<Value> = Gauge::ALL
                .iter()
                .zip(&f.values)
                .map(|(g, v)| {
                    let mut o = value_fields(v);
                    o.insert("gauge".into(), json!(g.name()));
                    Value::Object(o)
                })
                .collect();
            m.insert(
                "gauges".into(),
                json!({
                    "forms": list,
                    "spread": format_err(f.spread_f64()),
                    "consistent": f.consistent,
                }),
            );
        }
        let mut s = serde_json::to_string_pretty(&Value::Object(m)).unwrap_or_default();
        s.push('\n');
        output::print(&s)?;
    } else {
        let mut s = format!("ln k0({n},{l}) = {}\n", p.value_string());
        if let Some(g) = c.green() {
            s.push_str(&describe(g));
        }
        match (&forms, c.spectral()) {
            (Some(f), _) => {
                for (g, v) in Gauge::ALL.iter().zip(&f.values) {
                    s.push_str(&describe(v));
                    s.push_str(&format!("           ({} form)\n", g.name()));
                }
                s.push_str(&format!(
                    "  forms: spread {} between the three, {}\n",
                    format_err(f.spread_f64()),
                    if f.consistent {
                        "within the combined error estimates"
                    } else {
                        "NOT within the combined error estimates"
                    }
                ));
            }
            (None, Some(sp)) => {
                s.push_str(&describe(sp));
                s.push_str(&format!("           ({} form)\n", gauge.name()));
            }
            (None, None) => {}
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
    c.check_agreement()?;
    if let Some(f) = forms.filter(|f| !f.consistent) {
        return Err(AppError::CheckFailed(format!(
            "the dipole forms disagree at (n={n}, l={l}): spread {} beyond their combined error estimates",
            format_err(f.spread_f64())
        )));
    }
    Ok(())
}
