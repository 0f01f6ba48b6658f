//! `kzero radial` and `kzero oscillator`: exact bound-state quantities.

use crate::app_error::AppError;
use crate::output;
use kzero_engine::exact::{oscillator, radial};
use serde_json::json;

/// Arguments of `kzero radial`.
#[derive(Debug, clap::Args)]
pub struct RadialArgs {
    /// n of the bra.
    #[arg(value_name = "N", allow_negative_numbers = true)]
    pub n: i64,
    /// l of the bra.
    #[arg(value_name = "L", allow_negative_numbers = true)]
    pub l: i64,
    /// n of the ket.
    #[arg(value_name = "N2", allow_negative_numbers = true)]
    pub n2: i64,
    /// l of the ket.
    #[arg(value_name = "L2", allow_negative_numbers = true)]
    pub l2: i64,
    /// Power K of r (integer). The integrand behaves like r^(L+L2+2+K) at
    /// the origin, so the integral converges for K >= -(L + L2 + 2): K >= -2
    /// for two S states, K = -3 from L + L2 = 1 on; a divergent K is refused
    /// (exit 2).
    #[arg(
        long,
        value_name = "K",
        default_value_t = 1,
        allow_negative_numbers = true
    )]
    pub power: i32,
    /// Decimals printed: absolute error below 10^-D (5..=200).
    #[arg(long, value_name = "D", default_value_t = 20, value_parser = crate::args::digits_parser())]
    pub digits: u32,
    /// One JSON object instead of text.
    #[arg(long)]
    pub json: bool,
}

/// Arguments of `kzero oscillator`.
#[derive(Debug, clap::Args)]
pub struct OscillatorArgs {
    /// n of the initial state.
    #[arg(value_name = "N", allow_negative_numbers = true)]
    pub n: i64,
    /// l of the initial state.
    #[arg(value_name = "L", allow_negative_numbers = true)]
    pub l: i64,
    /// n of the final state.
    #[arg(value_name = "N2", allow_negative_numbers = true)]
    pub n2: i64,
    /// l of the final state (|l - l2| = 1).
    #[arg(value_name = "L2", allow_negative_numbers = true)]
    pub l2: i64,
    /// Decimals printed: absolute error below 10^-D (5..=200).
    #[arg(long, value_name = "D", default_value_t = 20, value_parser = crate::args::digits_parser())]
    pub digits: u32,
    /// One JSON object instead of text.
    #[arg(long)]
    pub json: bool,
}

/// Runs `kzero radial`.
pub fn run_radial(a: &RadialArgs) -> Result<(), AppError> {
    let r = radial(a.n, a.l, a.n2, a.l2, a.power, a.digits)?;
    let (s1, s2, p, exact) = (&r.bra, &r.ket, &r.decimal, &r.exact);
    let dec = &p.value;
    if a.json {
        let j = json!({
            "n": s1.n(), "l": s1.l(), "n2": s2.n(), "l2": s2.l(), "power": a.power,
            "value": dec, "abs_err": p.abs_err, "exact": exact, "digits": a.digits,
            "units": format!("bohr^{}", a.power),
        });
        output::print(&format!(
            "{}\n",
            serde_json::to_string_pretty(&j).unwrap_or_default()
        ))
    } else {
        output::print(&format!(
            "<{} {}| r^{} |{} {}> = {dec} bohr^{}\n  exact: {exact}\n",
            s1.n(),
            s1.l(),
            a.power,
            s2.n(),
            s2.l(),
            a.power
        ))
    }
}

/// Runs `kzero oscillator`.
pub fn run_oscillator(a: &OscillatorArgs) -> Result<(), AppError> {
    let r = oscillator(a.n, a.l, a.n2, a.l2, a.digits)?;
    let (s1, s2, f, p) = (&r.from, &r.to, &r.value, &r.decimal);
    let dec = &p.value;
    if a.json {
        let j = json!({
            "n": s1.n(), "l": s1.l(), "n2": s2.n(), "l2": s2.l(),
            "f": dec, "abs_err": p.abs_err, "exact": f.to_string(), "digits": a.digits,
        });
        output::print(&format!(
            "{}\n",
            serde_json::to_string_pretty(&j).unwrap_or_default()
        ))
    } else {
        output::print(&format!(
            "f({} {} -> {} {}) = {dec}\n  exact: {f}\n",
            s1.n(),
            s1.l(),
            s2.n(),
            s2.l()
        ))
    }
}
