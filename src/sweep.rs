//! `kzero sweep`: one state at a ladder of precision settings, to choose
//! settings before a large run.

use crate::app_error::AppError;
use crate::args::refuse_unused_gauge;
use crate::output;
use crate::plot::{self, SweepPoint};
use kzero_bethe::value::format_err;
use kzero_bethe::Goal;
use kzero_engine::sweep::{sweep, DEFAULT_LADDER};
use kzero_engine::{Gauge, MethodChoice};
use serde_json::json;
use std::path::PathBuf;

/// Arguments of `kzero sweep`.
#[derive(Debug, clap::Args)]
#[command(after_long_help = "\
For each requested digits D the state is computed from scratch. The actual
error of each setting is the distance of its printed decimal from the value
at the highest D (itself uncertain by that value's estimated error, so the
last row has none). 'covered' says whether the printed error is at least that
actual error plus the reference's own estimated error.")]
pub struct SweepArgs {
    /// Principal quantum number n (1..=1000).
    #[arg(value_name = "N", allow_negative_numbers = true)]
    pub n: i64,
    /// Orbital angular momentum l (0 <= l < n).
    #[arg(value_name = "L", allow_negative_numbers = true)]
    pub l: i64,
    /// Precision ladder of absolute goals, --digits D (each 5..=200;
    /// default 10,15,20,30,40,60).
    #[arg(long, value_name = "LIST", value_delimiter = ',', value_parser = crate::args::digits_parser(), conflicts_with = "significant")]
    pub digits: Option<Vec<u32>>,
    /// Precision ladder of significant-digit goals instead (each 5..=200).
    #[arg(long, value_name = "LIST", value_delimiter = ',', value_parser = crate::args::digits_parser())]
    pub significant: Option<Vec<u32>>,
    /// Method (green or spectral).
    #[arg(long, default_value_t = MethodChoice::Green, value_parser = crate::args::method_parser())]
    pub method: MethodChoice,
    /// Dipole form of the spectral method (default velocity; refused with
    /// --method green).
    #[arg(long, value_parser = crate::args::gauge_parser())]
    pub gauge: Option<Gauge>,
    /// Write an SVG plot of estimated and actual error, and time, against digits.
    #[arg(long, value_name = "FILE.svg")]
    pub plot: Option<PathBuf>,
    /// One JSON object instead of the text table.
    #[arg(long)]
    pub json: bool,
    /// Replace an existing --plot file instead of refusing.
    #[arg(long, requires = "plot")]
    pub force: bool,
}

/// Runs `kzero sweep`.
pub fn run(a: &SweepArgs) -> Result<(), AppError> {
    if a.method == MethodChoice::Both {
        return Err(kzero_engine::EngineError::SweepMethod.into());
    }
    refuse_unused_gauge(a.method, a.gauge)?;
    kzero_engine::sweep::validate(a.n, a.l, a.method)?;
    let gauge = a.gauge.unwrap_or(Gauge::Velocity);
    if let Some(p) = &a.plot {
        kzero_engine::table::files::check_plot(p, a.force)?;
    }
    let (ladder, goal) = match (&a.digits, &a.significant) {
        (_, Some(s)) => (s.clone(), Goal::Significant),
        (Some(d), None) => (d.clone(), Goal::Absolute),
        (None, None) => (DEFAULT_LADDER.to_vec(), Goal::Absolute),
    };
    let sw = sweep(a.n, a.l, a.method, gauge, &ladder, goal)?;
    let (n, l) = (sw.n, sw.l);
    let ref_digits = sw.reference_digits();
    let mut points = Vec::new();
    let mut rows = Vec::new();
    let mut jrows = Vec::new();
    for pt in &sw.points {
        // the printed decimal is judged, against the most precise value
        let (v, printed, actual, covered) = (&pt.value, &pt.printed, pt.actual_err, pt.covered);
        points.push(SweepPoint {
            digits: v.digits,
            est_err: printed.err,
            actual_err: actual,
            seconds: v.seconds,
        });
        let cov = match covered {
            Some(true) => "yes",
            Some(false) => "NO",
            None => "-",
        };
        rows.push(vec![
            v.digits.to_string(),
            printed.value.clone(),
            printed.abs_err.clone(),
            actual.map_or("-".into(), format_err),
            cov.to_string(),
            v.bits.to_string(),
            v.nodes.to_string(),
            v.terms.to_string(),
            format!("{:.3}", v.seconds),
        ]);
        jrows.push(json!({
            "digits": v.digits,
            "ln_k0": printed.value,
            "abs_err": printed.abs_err,
            "actual_err": actual.map(format_err),
            "covered": covered,
            "bits": v.bits,
            "nodes": v.nodes,
            "terms": v.terms,
            "seconds": format!("{:.3}", v.seconds),
        }));
    }
    if a.json {
        let mut j = json!({
            "n": n, "l": l, "method": a.method.name(),
            "goal": goal.name(),
            "reference_digits": ref_digits,
            "rows": jrows,
        });
        // the provenance keys of every kzero table
        let meta: serde_json::Map<String, serde_json::Value> = sw
            .provenance
            .pairs()
            .into_iter()
            .map(|(k, v)| (k, json!(v)))
            .collect();
        if let Some(m) = j.as_object_mut() {
            m.insert("meta".into(), serde_json::Value::Object(meta));
        }
        if let (MethodChoice::Spectral, Some(m)) = (a.method, j.as_object_mut()) {
            m.insert("gauge".into(), json!(gauge.name()));
        }
        output::print(&format!(
            "{}\n",
            serde_json::to_string_pretty(&j).unwrap_or_default()
        ))?;
    } else {
        let mut s = format!(
            "precision sweep for (n={n}, l={l}), method {}{}; actual error of the printed value against {} = {}\n",
            a.method.name(),
            if a.method == MethodChoice::Spectral {
                format!(" ({} form)", gauge.name())
            } else {
                String::new()
            },
            goal.option(),
            ref_digits
        );
        s.push_str(&output::text_table(
            &[
                "digits",
                "ln_k0",
                "est_err",
                "actual_err",
                "covered",
                "bits",
                "nodes",
                "terms",
                "seconds",
            ],
            &rows,
        ));
        output::print(&s)?;
    }
    if let Some(p) = &a.plot {
        plot::sweep_plot(
            &format!(
                "ln k0({n},{l}), {} method: precision sweep",
                a.method.name()
            ),
            &points,
            p,
        )?;
    }
    Ok(())
}
