//! `kzero check`: the bundled outside checks (data-checks/), exact sum rules
//! and a cross-method sample, as one pass/fail table. The runner is the
//! library's (`kzero_engine::check`); this file parses, prints and sets the
//! exit code.

use crate::app_error::AppError;
use crate::output;
use kzero_engine::check::{bundled_files, data_files_in, run_checks};
use serde_json::json;
use std::path::PathBuf;

/// Arguments of `kzero check`.
#[derive(Debug, clap::Args)]
#[command(after_long_help = "\
Runs, and prints as a table (quantity, source, expected, computed, difference,
pass):
  * every line of every data-checks/*.csv file (bundled into the binary at
    build time; --data-dir reads a folder instead; format in
    data-checks/README.md);
  * exact sum rules by closure, for a sample of states: sum_m |p_nm|^2 =
    Z^2/n^2, sum_m |p_nm|^2 (E_m - E_n) = 2 Z^4/n^3 for l = 0 and 0 otherwise,
    and the Thomas-Reiche-Kuhn sum of oscillator strengths = 1;
  * green against spectral for a sample of states, within their combined
    error estimates.
A line passes when |computed - expected| <= tolerance + the computed value's
error estimate, and every ln k0 behind it has an error estimate below the goal
10^-D (an estimate above the goal fails the line instead of widening it). A
level interval also fails when its truncation uncertainty exceeds 0.3 % of the
measured interval. Exit code 0 when every line passes, 3 otherwise.")]
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

/// Runs `kzero check`.
pub fn run(a: &CheckArgs) -> Result<(), AppError> {
    let files = match &a.data_dir {
        None => bundled_files(),
        Some(dir) => data_files_in(dir).map_err(kzero_engine::EngineError::from)?,
    };
    let lines = run_checks(&files, a.digits);
    let failed = lines.iter().filter(|l| !l.pass).count();
    if a.json {
        let v: Vec<_> = lines
            .iter()
            .map(|l| {
                json!({
                    "quantity": l.quantity, "source": l.source, "expected": l.expected,
                    "computed": l.computed, "difference": l.difference, "pass": l.pass,
                    "ln_k0_err": l.ln_k0_err, "ln_k0_goal": l.ln_k0_goal,
                })
            })
            .collect();
        output::print(&format!(
            "{}\n",
            serde_json::to_string_pretty(&v).unwrap_or_default()
        ))?;
    } else {
        let rows: Vec<Vec<String>> = lines
            .iter()
            .map(|l| {
                vec![
                    l.quantity.clone(),
                    l.source.clone(),
                    l.expected.clone(),
                    l.computed.clone(),
                    l.difference.clone(),
                    if l.pass { "pass".into() } else { "FAIL".into() },
                ]
            })
            .collect();
        let mut s = output::text_table(
            &[
                "quantity",
                "source",
                "expected",
                "computed",
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
