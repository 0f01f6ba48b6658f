//! `kzero excitation`: the mean excitation energy I(k) of order k against n
//! for a few l, as a listing and optionally as an SVG plot.

use crate::app_error::AppError;
use crate::output;
use crate::plot::{self, Curves};
use crate::shift_cmd::nucleus_from_options;
use kzero_engine::{compute_sums, row_text, EnergyUnit, Gauge, MethodChoice, Settings};
use rayon::prelude::*;
use std::path::PathBuf;

/// Arguments of `kzero excitation`.
#[derive(Debug, clap::Args)]
#[command(after_help = "\
For every state (n, l) with l in LIST and l < n <= N-MAX: ln I(k) = L(k)/S(k) (energies in
Z^2 Ry) and I(k) in eV for the nucleus, from the same engine as `kzero sums` (Green's
function, absolute goal 10^-D on S(k) and L(k)). States whose S(k) vanishes are skipped
with a note.

Example:
  kzero excitation --k 0 --l 0,1,2 --n-max 12 --plot docs/mean_excitation.svg --force")]
pub struct ExcitationArgs {
    /// The power k (-4..=2).
    #[arg(
        long = "k",
        value_name = "K",
        default_value_t = 0,
        allow_hyphen_values = true
    )]
    pub k: i64,
    /// Orbital angular momenta, comma-separated.
    #[arg(
        long = "l",
        value_name = "LIST",
        value_delimiter = ',',
        default_value = "0,1,2"
    )]
    pub l: Vec<u32>,
    /// Largest n.
    #[arg(long, value_name = "N", default_value_t = 12)]
    pub n_max: u32,
    /// Requested absolute accuracy of S(k) and L(k): |error| < 10^-D (5..=200).
    #[arg(long, value_name = "D", default_value_t = 12, value_parser = crate::args::digits_parser())]
    pub digits: u32,
    /// Nucleus preset for I(k) in eV: H, D, He4. Default H.
    #[arg(long, value_name = "NAME", conflicts_with = "mass")]
    pub nucleus: Option<String>,
    /// Nuclear mass in electron masses (>= 100), or `inf`.
    #[arg(long, value_name = "M", allow_negative_numbers = true)]
    pub mass: Option<String>,
    /// Also draw I(k) (in Z^2 Ry) against n, one curve per l, to this SVG file.
    #[arg(long, value_name = "FILE.svg")]
    pub plot: Option<PathBuf>,
    /// Replace an existing --plot file instead of refusing.
    #[arg(long, requires = "plot")]
    pub force: bool,
}

/// Runs `kzero excitation`.
pub fn run(a: &ExcitationArgs) -> Result<(), AppError> {
    let nucleus = nucleus_from_options(a.nucleus.as_deref(), a.mass.as_deref(), None, None)?;
    let unit = EnergyUnit::of(&nucleus);
    kzero_bethe::sums::validate_powers(&[a.k]).map_err(|e| AppError::BadInput(e.to_string()))?;
    if let Some(p) = &a.plot {
        kzero_engine::table::files::check_plot(p, a.force)?;
    }
    let max_n = kzero_bethe::settings::MAX_N;
    if a.n_max < 1 || a.n_max > max_n {
        return Err(AppError::BadInput(format!(
            "--n-max {} is outside 1..={max_n}",
            a.n_max
        )));
    }
    let mut ls = a.l.clone();
    ls.sort_unstable();
    ls.dedup();
    let states: Vec<(u32, u32)> = ls
        .iter()
        .flat_map(|&l| (l + 1..=a.n_max).map(move |n| (n, l)))
        .collect();
    if states.is_empty() {
        return Err(AppError::BadInput(format!(
            "no state with l in {ls:?} and n <= {}",
            a.n_max
        )));
    }
    let settings = Settings::with_digits(a.digits);
    let results: Vec<Result<_, AppError>> = states
        .par_iter()
        .map(|&(n, l)| {
            let c = compute_sums(
                i64::from(n),
                i64::from(l),
                &[a.k],
                MethodChoice::Green,
                Gauge::Length,
                &settings,
            )?;
            let p = c.primary();
            let row = p.rows[0].clone();
            let ln_i = row.ln_i().map(|(v, _)| v.to_f64());
            Ok((n, l, row_text(p, &row, Some(unit)), ln_i))
        })
        .collect();
    let (unit_ev, unit_err) = unit.printed();
    let mut text = format!(
        "Mean excitation energy of order k = {}: ln I(k) (Z^2 Ry) and I(k) in eV for {} (Z^2 Ry = {unit_ev} eV +- {unit_err})\n",
        a.k, nucleus.name
    );
    text.push_str("n,l,ln_I,ln_I_err,I_eV,I_eV_err\n");
    let mut curves: Curves = Curves::new();
    for r in results {
        let (n, l, row, ln_i) = r?;
        match (&row.ln_i, &row.i_ev, ln_i) {
            (Some((v, e)), Some((iv, ie)), Some(x)) => {
                text.push_str(&format!("{n},{l},{v},{e},{iv},{ie}\n"));
                curves.entry(l).or_default().push((f64::from(n), x.exp()));
            }
            _ => text.push_str(&format!("# ({n},{l}): S(k) is zero within its error\n")),
        }
    }
    output::print(&text)?;
    if let Some(path) = &a.plot {
        plot::curves_plot(
            &format!("Mean excitation energy I({}) of hydrogenic states", a.k),
            &format!("I({}) (energies in Z^2 Ry)", a.k),
            &curves,
            path,
        )?;
    }
    Ok(())
}
