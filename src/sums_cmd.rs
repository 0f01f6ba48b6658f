//! `kzero sums`: the logarithmic dipole sums S(k), L(k), ln I(k) of one
//! state, and the mean excitation energies I(k) in eV.

use crate::app_error::AppError;
use crate::output;
use crate::shift_cmd::nucleus_from_options;
use kzero_bethe::sums::{K_MAX, K_MIN};
use kzero_engine::sums::{requested_powers, rows_text, sums_gauge, sums_json};
use kzero_engine::{compute_sums, EnergyUnit, Gauge, MethodChoice, RowText, Settings};

/// Arguments of `kzero sums`.
#[derive(Debug, clap::Args)]
#[command(after_help = "\
S(k) = sum_m f_m D_m^k and L(k) = sum_m f_m D_m^k ln|D_m| over every dipole-connected
state m (bound and continuum, same-n states left out), D_m = (E_m - E_n)/(Z^2 Ry), f_m the
absorption oscillator strength; ln I(k) = L(k)/S(k) and I(k) = exp(ln I(k)) Z^2 Ry.
S(0) = 1, 4 S(-2) is the static polarizability (bohr^3/Z^4), I(0) the mean excitation
energy of the stopping formula, L(2) = 16 ln k0/(3 n^3). --digits D is an absolute goal on
every S(k) and L(k); I(k) in eV uses the reduced-mass Rydberg energy of the nucleus
(CODATA 2018).

Examples:
  kzero sums 1 0
  kzero sums 2 1 --k -2,0,2 --json
  kzero sums 3 2 --method both --nucleus D")]
pub struct SumsArgs {
    /// Principal quantum number n.
    #[arg(value_name = "N", allow_negative_numbers = true)]
    pub n: i64,
    /// Orbital angular momentum l (0 <= l < n).
    #[arg(value_name = "L", allow_negative_numbers = true)]
    pub l: i64,
    /// Powers k, comma-separated (each in -4..=2; default: all of them).
    #[arg(
        long = "k",
        value_name = "LIST",
        value_delimiter = ',',
        allow_hyphen_values = true
    )]
    pub k: Vec<i64>,
    /// Requested absolute accuracy of every S(k) and L(k): |error| < 10^-D (5..=200).
    #[arg(long, value_name = "D", default_value_t = 20, value_parser = crate::args::digits_parser())]
    pub digits: u32,
    /// Method; `both` cross-checks the two (exit 3 when a sum differs
    /// beyond the combined error estimates).
    #[arg(long, default_value_t = MethodChoice::Green, value_parser = crate::args::method_parser())]
    pub method: MethodChoice,
    /// Dipole form of the spectral method (default: length; refused with
    /// `--method green`, which has none).
    #[arg(long, value_parser = crate::args::gauge_parser())]
    pub gauge: Option<Gauge>,
    /// Nucleus preset for I(k) in eV: H (proton), D (deuteron), He4 (alpha particle). Default H.
    #[arg(long, value_name = "NAME", conflicts_with = "mass")]
    pub nucleus: Option<String>,
    /// Nuclear mass in electron masses (>= 100), or `inf` for an infinitely heavy nucleus.
    #[arg(long, value_name = "M", allow_negative_numbers = true)]
    pub mass: Option<String>,
    /// Nuclear charge Z (1..=10; default: the charge of the nucleus).
    #[arg(long, value_name = "Z", allow_negative_numbers = true)]
    pub z: Option<i64>,
    /// One JSON object instead of the text report.
    #[arg(long)]
    pub json: bool,
}

fn row_lines(r: &RowText) -> String {
    let mut s = format!("k = {}\n", r.k);
    s.push_str(&format!("  S(k)    = {}  +- {}\n", r.s, r.s_err));
    s.push_str(&format!("  L(k)    = {}  +- {}\n", r.l, r.l_err));
    match (&r.ln_i, &r.i_ev) {
        (Some((v, e)), i) => {
            s.push_str(&format!("  ln I(k) = {v}  +- {e}\n"));
            if let Some((iv, ie)) = i {
                s.push_str(&format!("  I(k)    = {iv} eV  +- {ie}\n"));
            }
        }
        (None, _) => s.push_str("  ln I(k)   not defined: S(k) is zero within its error\n"),
    }
    s
}

/// Runs `kzero sums`.
pub fn run(a: &SumsArgs) -> Result<(), AppError> {
    let gauge = sums_gauge(a.method, a.gauge)?;
    let nucleus = nucleus_from_options(a.nucleus.as_deref(), a.mass.as_deref(), a.z, None)?;
    let unit = EnergyUnit::of(&nucleus);
    let ks = requested_powers((!a.k.is_empty()).then_some(a.k.as_slice()));
    let settings = Settings::with_digits(a.digits);
    let c = compute_sums(a.n, a.l, &ks, a.method, gauge, &settings)?;
    if a.json {
        let mut s = serde_json::to_string_pretty(&sums_json(&c, &nucleus)).unwrap_or_default();
        s.push('\n');
        output::print(&s)?;
        return Ok(c.check_agreement()?);
    }
    let p = c.primary();
    let rows: Vec<RowText> = rows_text(p, &nucleus);
    let disagreements = c.disagreements();
    let mut s = format!(
        "Dipole sums of ({},{}) in units of Z^2 Ry, k in {K_MIN}..={K_MAX}; goal 1e-{} on every S(k), L(k)\n",
        p.n, p.l, a.digits
    );
    let (unit_ev, unit_err) = unit.printed();
    s.push_str(&format!(
        "I(k) in eV for {} (Z = {}): Z^2 Ry = {unit_ev} eV +- {unit_err} (reduced mass, CODATA 2018)\n",
        nucleus.name, nucleus.z
    ));
    for r in &rows {
        s.push_str(&row_lines(r));
    }
    for d in [c.green(), c.spectral()].into_iter().flatten() {
        s.push_str(&format!(
            "  {:<8} {} bits, {} nodes, {} terms, {:.3} s{}\n",
            d.method.name(),
            d.bits,
            d.nodes,
            d.terms,
            d.seconds,
            d.gauge
                .map(|g| format!(" ({} form)", g.name()))
                .unwrap_or_default()
        ));
    }
    if a.method == MethodChoice::Both {
        if disagreements.is_empty() {
            s.push_str("  agreement: every S(k) and L(k) within the combined error estimates\n");
        } else {
            for (k, q, g, sp) in &disagreements {
                s.push_str(&format!(
                    "  NOT within the combined error estimates: {q}({k}) green {g} vs spectral {sp}\n"
                ));
            }
        }
    }
    output::print(&s)?;
    Ok(c.check_agreement()?)
}
