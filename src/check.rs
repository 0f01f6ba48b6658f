//! `kzero check`: the bundled outside checks (data-checks/), exact sum rules
//! and a cross-method sample, as one pass/fail table. The runner is the
//! library's (`kzero_engine::check`); this file parses, prints and sets the
//! exit code.

use crate::app_error::AppError;
use crate::output;
use kzero_bethe::value::format_err;
use kzero_engine::check::{bundled_files, data_files_in, run_checks, CheckLine, LevelRef};
use serde_json::{json, Map, Value};
use std::path::PathBuf;

/// Arguments of `kzero check`.
#[derive(Debug, clap::Args)]
#[command(after_long_help = "\
Runs, and prints as a table (quantity, source, expected +- tolerance,
computed +- error, difference, pass; with --json one object per line with
the fields quantity, label, state {n, l}, state2, source, expected,
tolerance, computed, error, difference, pass):
  * every line of every data-checks/*.csv file (bundled into the binary at
    build time; --data-dir reads a folder instead; format in
    data-checks/README.md);
  * exact sum rules by closure, for a sample of states: sum_m |p_nm|^2 =
    Z^2/n^2, sum_m |p_nm|^2 (E_m - E_n) = 2 Z^4/n^3 for l = 0 and 0 otherwise,
    and the Thomas-Reiche-Kuhn sum of oscillator strengths = 1;
  * green against spectral for a sample of states, within their combined
    error estimates.
A line passes when |computed - expected| <= tolerance + the computed value's
error estimate (a measured interval: within the quadrature sum of both), and
every ln k0 behind it has an error estimate below the goal 10^-D (an estimate
above the goal fails the line instead of widening it). A level interval also
fails when its truncation uncertainty exceeds 0.3 % of the measured interval.
The printed error covers the printed computed decimal. Exit code 0 when every
line passes, 3 otherwise.")]
pub struct CheckArgs {
    /// Requested digits of the Bethe-logarithm computations (5..=200).
    #[arg(long, value_name = "D", default_value_t = 20, value_parser = crate::args::digits_parser())]
    pub digits: u32,
    /// Read the data checks from this folder instead of the bundled copy.
    #[arg(long, value_name = "DIR")]
    pub data_dir: Option<PathBuf>,
    /// A JSON array of check objects instead of the text table.
    #[arg(long)]
    pub json: bool,
}

/// A state of a check line as JSON: {"n", "l"} (and "j" as text for levels).
fn level_json(s: &LevelRef) -> Value {
    let mut m = Map::new();
    m.insert("n".into(), json!(s.n));
    m.insert("l".into(), json!(s.l));
    if let Some(j2) = s.j2 {
        m.insert("j".into(), json!(format!("{j2}/2")));
    }
    Value::Object(m)
}

/// One check line as a JSON object: every part in a named field (numbers
/// as decimal strings, null where a part does not apply).
fn line_json(l: &CheckLine) -> Value {
    let mut m = Map::new();
    m.insert("quantity".into(), json!(l.quantity));
    m.insert("label".into(), json!(l.label));
    m.insert(
        "state".into(),
        l.state.as_ref().map_or(Value::Null, level_json),
    );
    if let Some(s2) = &l.state2 {
        m.insert("state2".into(), level_json(s2));
    }
    for (k, v) in &l.parameters {
        m.insert(k.clone(), json!(v));
    }
    m.insert("source".into(), json!(l.source));
    m.insert("expected".into(), json!(l.expected));
    m.insert("tolerance".into(), json!(l.tolerance));
    m.insert("computed".into(), json!(l.computed));
    m.insert("error".into(), json!(l.error));
    m.insert("difference".into(), json!(l.difference));
    m.insert("pass".into(), json!(l.pass));
    if let Some(f) = &l.failure {
        m.insert("failure".into(), json!(f));
    }
    if let Some(n) = &l.note {
        m.insert("note".into(), json!(n));
    }
    // the ln k0 estimates behind the line and their goal (null for exact
    // quantities), as decimal strings
    m.insert("ln_k0_err".into(), json!(l.ln_k0_err.map(format_err)));
    m.insert(
        "ln_k0_goal".into(),
        json!(l.ln_k0_goal.map(|g| format!("{g:.0e}"))),
    );
    Value::Object(m)
}

/// Runs `kzero check`.
pub fn run(a: &CheckArgs) -> Result<(), AppError> {
    let files = match &a.data_dir {
        None => bundled_files(),
        Some(dir) => data_files_in(dir).map_err(kzero_engine::EngineError::from)?,
    };
    let lines = run_checks(&files, a.digits);
    let failed = lines.iter().filter(|l| !l.pass).count();
    if a.json {
        let v: Vec<_> = lines.iter().map(line_json).collect();
        output::print(&format!(
            "{}\n",
            serde_json::to_string_pretty(&v).unwrap_or_default()
        ))?;
    } else {
        let dash = |x: &Option<String>| x.clone().unwrap_or_else(|| "-".into());
        let rows: Vec<Vec<String>> = lines
            .iter()
            .map(|l| {
                let with_err = |v: &Option<String>, e: &Option<String>| match (v, e) {
                    (Some(v), Some(e)) if e != "0" => format!("{v} +- {e}"),
                    (Some(v), _) => v.clone(),
                    (None, _) => "-".into(),
                };
                vec![
                    l.label.clone(),
                    l.source.clone(),
                    with_err(&l.expected, &l.tolerance),
                    match &l.failure {
                        Some(why) => why.clone(),
                        None => with_err(&l.computed, &l.error),
                    },
                    match &l.note {
                        Some(n) => format!("{} ({n})", dash(&l.difference)),
                        None => dash(&l.difference),
                    },
                    if l.pass { "pass".into() } else { "FAIL".into() },
                ]
            })
            .collect();
        let mut s = output::text_table(
            &[
                "quantity",
                "source",
                "expected +- tolerance",
                "computed +- error",
                "difference",
                "pass",
            ],
            &rows,
        );
        s.push_str(&format!(
            "{} checks, {} passed, {failed} failed (digits {})\n",
            lines.len(),
            lines.len() - failed,
            a.digits
        ));
        output::print(&s)?;
    }
    if failed > 0 {
        return Err(AppError::CheckFailed(format!(
            "{failed} of {} checks failed",
            lines.len()
        )));
    }
    Ok(())
}
