//! `kzero shift`: the leading one-loop QED shift of a hydrogenic level from
//! its Bethe logarithm, term by term, with an estimate of what is left out.
//!
//! The Bethe logarithm comes from the engine's `compute` (Green's-function
//! method, `kzero_engine::shift`); the assembly (coefficients, mass factors,
//! constants, uncertainty rules) is the `kzero-qed` library.
//!
//! Table output (`--table --n-max N`): one row per level (n, l, j), sorted
//! by (n, l, j), in the shift-table format of `kzero_engine::shift` (columns
//! listed there), with the same provenance keys as every kzero table.

use crate::app_error::AppError;
use crate::output;
use kzero_bethe::value::format_err;
use kzero_bethe::{BetheValue, Settings};
use kzero_engine::build_info::command_line;
use kzero_engine::shift::{
    self, fmt_mhz, fmt_unc_mhz, mass_text, radius_text, shift_level, ShiftTable, DEFAULT_DIGITS,
    TRUNCATION_NOTE,
};
use kzero_engine::{EngineError, TableFormat};
use kzero_qed::{
    constants, shift::UNCERTAINTY_RULE, CutoffEstimate, Level, LevelShift, Nucleus, QedError,
};
use std::fmt::Write as _;

/// Arguments of `kzero shift`.
#[derive(clap::Args, Debug)]
#[command(after_long_help = SHIFT_HELP)]
pub struct ShiftArgs {
    /// Principal quantum number n (1..=200); omitted with --table.
    #[arg(allow_negative_numbers = true)]
    pub n: Option<String>,
    /// Orbital angular momentum l (0 <= l < n).
    #[arg(allow_negative_numbers = true)]
    pub l: Option<String>,
    /// Total angular momentum J, written like 1/2 or 3/2 (|l - 1/2| <= J <= l + 1/2).
    #[arg(allow_negative_numbers = true)]
    pub j: Option<String>,
    /// Nuclear charge Z (1..=10; default: the charge of the nucleus).
    #[arg(long, value_name = "Z", allow_negative_numbers = true)]
    pub z: Option<i64>,
    /// Nucleus preset: H (proton), D (deuteron), He4 (alpha particle). Default H.
    #[arg(long, value_name = "NAME", conflicts_with = "mass")]
    pub nucleus: Option<String>,
    /// Nuclear mass in electron masses (>= 100), or `inf` for an infinitely heavy nucleus.
    #[arg(long, value_name = "M", allow_negative_numbers = true)]
    pub mass: Option<String>,
    /// rms nuclear charge radius in fm, for the estimate of the omitted
    /// nuclear-size term (default: the preset's value; 1.2 fm A^(1/3) with --mass).
    #[arg(long, value_name = "FM", allow_negative_numbers = true)]
    pub radius: Option<f64>,
    /// Requested digits of ln k0: |error| < 10^-D (5..=200; the default is
    /// far more than the shifts need).
    #[arg(long, value_name = "D", default_value_t = DEFAULT_DIGITS, value_parser = crate::args::digits_parser(), allow_negative_numbers = true)]
    pub digits: u32,
    /// Print JSON instead of text (with --table: same as --format json).
    #[arg(long)]
    pub json: bool,
    /// Also show the original nonrelativistic estimate with the virtual-photon
    /// energy cut off at the electron rest energy.
    #[arg(long)]
    pub cutoff_estimate: bool,
    /// Every level (n, l, j) with n <= --n-max, as a table.
    #[arg(long)]
    pub table: bool,
    /// Largest n of --table (1..=200).
    #[arg(long, value_name = "N", allow_negative_numbers = true)]
    pub n_max: Option<i64>,
    /// Table format (with --table).
    #[arg(long, value_parser = crate::args::format_parser())]
    pub format: Option<TableFormat>,
}

const SHIFT_HELP: &str = "\
Terms included (Z alpha expansion of the one-loop self-energy and vacuum polarization,
coefficients and reduced-mass factors as in the CODATA 2018 adjustment, CODATA 2018
constants): A41 L, A40 (with ln k0 from the engine), A50 (Z alpha), A62 (Z alpha)^2 L^2,
A61 (Z alpha)^2 L, V40, V50 (Z alpha); L = ln[(m_e/m_r)(Z alpha)^-2].

The uncertainty is the quadrature sum of estimated sizes of what is left out: the
one-loop remainder at (Z alpha)^6 (taken as large as the largest included (Z alpha)^6
term), two-loop QED (natural size), recoil beyond the reduced mass and the finite
nuclear size (leading orders). It is an estimate, not a bound.

Examples:
  kzero shift 2 0 1/2
  kzero shift 2 1 1/2 --nucleus D --json
  kzero shift 1 0 1/2 --z 3 --mass 12781.5 --cutoff-estimate
  kzero shift --table --n-max 4 --format json";

fn bad(e: QedError) -> AppError {
    AppError::BadInput(e.to_string())
}

/// An engine error of `kzero shift`: QED input errors are bad input.
fn qed_bad(e: EngineError) -> AppError {
    match e {
        EngineError::Qed(q) => bad(q),
        other => AppError::from(other),
    }
}

fn parse_int(text: &str, what: &str) -> Result<i64, AppError> {
    text.trim()
        .parse::<i64>()
        .map_err(|_| AppError::BadInput(format!("{what} must be an integer, got {text:?}")))
}

/// The nucleus from --nucleus / --mass / --z / --radius (rules and
/// messages in `kzero_engine::shift::nucleus`).
fn nucleus_from_args(a: &ShiftArgs) -> Result<Nucleus, AppError> {
    nucleus_from_options(a.nucleus.as_deref(), a.mass.as_deref(), a.z, a.radius)
}

/// The nucleus from the options --nucleus NAME / --mass M / --z Z /
/// --radius FM shared by the commands that need one (default: H; rules and
/// messages in `kzero_engine::shift::nucleus`).
pub(crate) fn nucleus_from_options(
    nucleus_name: Option<&str>,
    mass: Option<&str>,
    z: Option<i64>,
    radius: Option<f64>,
) -> Result<Nucleus, AppError> {
    Ok(shift::nucleus(nucleus_name, z, mass, radius)?)
}

/// Runs `kzero shift`, printing to standard output.
///
/// # Errors
/// Bad input (exit 2): malformed or out-of-range numbers, J not allowed for
/// l, unknown nucleus, contradicting options. Non-convergence of the engine
/// and output failures: other (exit 1).
pub fn run(args: &ShiftArgs) -> Result<(), AppError> {
    output::print(&render(args)?)
}

/// Everything `kzero shift` prints, as one string (errors as [`run`]).
fn render(args: &ShiftArgs) -> Result<String, AppError> {
    let settings = Settings::with_digits(args.digits);
    let nucleus = nucleus_from_args(args)?;
    if args.table {
        if args.n.is_some() || args.l.is_some() || args.j.is_some() {
            return Err(AppError::BadInput(
                "--table takes no N L J; give --n-max N".to_string(),
            ));
        }
        let n_max = args
            .n_max
            .ok_or_else(|| AppError::BadInput("--table needs --n-max N".to_string()))?;
        let format = match (args.json, args.format) {
            (true, Some(TableFormat::Csv)) => {
                return Err(AppError::BadInput(
                    "--json contradicts --format csv".to_string(),
                ))
            }
            (true, _) => TableFormat::Json,
            (false, f) => f.unwrap_or_default(),
        };
        let table = ShiftTable::compute(
            n_max,
            &nucleus,
            &settings,
            args.cutoff_estimate,
            &command_line(),
        )
        .map_err(qed_bad)?;
        return Ok(table.render(format));
    }
    if args.n_max.is_some() || args.format.is_some() {
        return Err(AppError::BadInput(
            "--n-max and --format belong to --table".to_string(),
        ));
    }
    let (n, l, j) =
        match (&args.n, &args.l, &args.j) {
            (Some(n), Some(l), Some(j)) => (n, l, j),
            _ => return Err(AppError::BadInput(
                "give the level as N L J (for example `kzero shift 2 0 1/2`), or --table --n-max N"
                    .to_string(),
            )),
        };
    let n = parse_int(n, "N")?;
    let l = parse_int(l, "L")?;
    let j2 = kzero_qed::level::parse_j(j).map_err(bad)?;
    let level = Level::new(n, l, i64::from(j2)).map_err(bad)?;

    let r = shift_level(&level, &nucleus, &settings, args.cutoff_estimate).map_err(qed_bad)?;
    let (shift, cutoff) = (&r.shift, r.cutoff.as_ref());
    let text = if args.json {
        let v = shift::level_json(&r, &settings);
        let mut s = serde_json::to_string_pretty(&v)
            .map_err(|e| AppError::Other(format!("cannot format JSON: {e}")))?;
        s.push('\n');
        s
    } else {
        level_text(shift, &r.ln_k0, cutoff)
    };
    Ok(text)
}

fn fmt_coef(x: f64) -> String {
    if x == 0.0 {
        "0".to_string()
    } else {
        format!("{x:.12}")
    }
}

fn level_text(s: &LevelShift, lk: &BetheValue, cutoff: Option<&CutoffEstimate>) -> String {
    let nuc = &s.nucleus;
    let mut t = String::new();
    let _ = writeln!(
        t,
        "Leading one-loop QED shift of {} for nucleus {} (Z = {}, M = {}, r = {} fm)",
        s.level.label(),
        nuc.name,
        nuc.z,
        mass_text(nuc),
        radius_text(nuc.radius_fm)
    );
    let _ = writeln!(t, "NOTE: {TRUNCATION_NOTE}");
    let _ = writeln!(t);
    let _ = writeln!(
        t,
        "ln k0({},{}) = {} +- {}  (Green's-function engine, --digits {})",
        lk.n,
        lk.l,
        lk.value_string(),
        lk.abs_err_string(),
        lk.digits
    );
    let _ = writeln!(
        t,
        "Z alpha = {:.13}   m_r/m_e = {:.15}   L = ln[(m_e/m_r)(Z alpha)^-2] = {:.12}",
        s.z_alpha, s.reduced_mass_ratio, s.log_l
    );
    let _ = writeln!(
        t,
        "unit (alpha/pi)(Z alpha)^4/n^3 m_e c^2 / h = {} MHz",
        fmt_mhz(s.unit_mhz)
    );
    let _ = writeln!(t);
    let rows: Vec<Vec<String>> = s
        .terms
        .iter()
        .map(|x| {
            vec![
                x.name.to_string(),
                x.order.to_string(),
                fmt_coef(x.coefficient),
                format!("{:.9e}", x.multiplier),
                format!("{:.12}", x.mass_factor),
                fmt_mhz(x.mhz),
            ]
        })
        .collect();
    t.push_str(&output::text_table(
        &[
            "term",
            "order",
            "coefficient",
            "factor",
            "mass factor",
            "MHz",
        ],
        &rows,
    ));
    let _ = writeln!(t);
    let _ = writeln!(
        t,
        "self-energy          {:>16} MHz",
        fmt_mhz(s.self_energy_mhz)
    );
    let _ = writeln!(
        t,
        "vacuum polarization  {:>16} MHz",
        fmt_mhz(s.vacuum_polarization_mhz)
    );
    let _ = writeln!(t, "total                {:>16} MHz", fmt_mhz(s.total_mhz));
    let _ = writeln!(
        t,
        "uncertainty          {:>16} MHz  (estimated size of what is left out)",
        fmt_unc_mhz(s.uncertainty_mhz)
    );
    let _ = writeln!(t);
    let _ = writeln!(t, "Left out, estimated sizes ({UNCERTAINTY_RULE}):");
    for o in &s.omitted {
        let _ = writeln!(t, "  {:<20} {:>14} MHz  {}", o.name, fmt_mhz(o.mhz), o.rule);
    }
    let _ = writeln!(
        t,
        "  {:<20} {:>14} MHz  (4/3) x error of ln k0 x unit x (m_r/m_e)^3",
        "ln k0 error",
        format_err(s.ln_k0_error_mhz)
    );
    if let Some(c) = cutoff {
        let _ = writeln!(t);
        let _ = writeln!(
            t,
            "Cutoff estimate (nonrelativistic, virtual-photon energy cut off at m_e c^2):"
        );
        let _ = writeln!(
            t,
            "  (4/3)[delta_l0 ln(m_e c^2/(Z^2 Ry_M)) - ln k0] = {:.12}, with ln(m_e c^2/(Z^2 Ry_M)) = {:.12}",
            c.coefficient, c.cutoff_log
        );
        let _ = writeln!(
            t,
            "  estimate {} MHz (+- {} MHz from ln k0); the expansion above gives {} MHz",
            fmt_mhz(c.mhz),
            format_err(c.ln_k0_error_mhz),
            fmt_mhz(s.total_mhz)
        );
    }
    let _ = writeln!(t);
    let _ = writeln!(
        t,
        "Constants: CODATA 2018 (alpha = {}, m_e c^2 / h = {:.11e} MHz); nucleus: {}",
        constants::ALPHA,
        constants::electron_rest_frequency_mhz(),
        nuc.source
    );
    t
}

#[cfg(test)]
mod tests {
    use super::*;
    use serde_json::Value;

    #[derive(clap::Parser)]
    struct Cli {
        #[command(flatten)]
        a: ShiftArgs,
    }

    fn try_args(extra: &[&str]) -> Result<ShiftArgs, clap::Error> {
        use clap::Parser;
        let mut v = vec!["kzero-shift"];
        v.extend_from_slice(extra);
        Cli::try_parse_from(v).map(|c| c.a)
    }

    fn args(extra: &[&str]) -> ShiftArgs {
        try_args(extra).expect("parse")
    }

    #[test]
    fn nucleus_choices() {
        assert_eq!(
            nucleus_from_args(&args(&["2", "0", "1/2"])).unwrap().name,
            "H"
        );
        assert_eq!(
            nucleus_from_args(&args(&["2", "0", "1/2", "--nucleus", "He4"]))
                .unwrap()
                .z,
            2
        );
        let c = nucleus_from_args(&args(&["1", "0", "1/2", "--z", "3", "--mass", "inf"])).unwrap();
        assert_eq!((c.z, c.mass_me), (3, None));
        for bad_args in [
            &["2", "0", "1/2", "--z", "2"][..],
            &["2", "0", "1/2", "--nucleus", "D", "--z", "2"],
            &["2", "0", "1/2", "--nucleus", "Xx"],
            &["2", "0", "1/2", "--mass", "abc"],
            &["2", "0", "1/2", "--mass", "10"],
            &["2", "0", "1/2", "--mass", "2000", "--z", "0"],
            &["2", "0", "1/2", "--radius", "-1"],
        ] {
            let e = nucleus_from_args(&args(bad_args)).unwrap_err();
            assert_eq!(e.exit_code(), 2, "{bad_args:?}: {e}");
        }
    }

    fn json_of(extra: &[&str]) -> Value {
        serde_json::from_str(&render(&args(extra)).unwrap()).unwrap()
    }

    #[test]
    fn hydrogen_lamb_shift_through_the_engine() {
        // The whole pipeline: engine ln k0, assembly, JSON. Measured
        // 2S1/2 - 2P1/2 = 1057.845(9) MHz (Lundeen & Pipkin, Phys. Rev. Lett.
        // 46, 232 (1981)).
        let s = json_of(&["2", "0", "1/2", "--json", "--digits", "10"]);
        let p = json_of(&["2", "1", "1/2", "--json", "--digits", "10"]);
        // numbers and errors are decimal strings
        let num = |v: &Value| v.as_str().unwrap().parse::<f64>().unwrap();
        let f = |v: &Value, k: &str| num(&v[k]);
        let lamb = f(&s, "total_mhz") - f(&p, "total_mhz");
        let unc = f(&s, "uncertainty_mhz").hypot(f(&p, "uncertainty_mhz"));
        assert!(
            (lamb - 1057.845).abs() <= unc.hypot(0.009),
            "{lamb} +- {unc}"
        );
        let terms = s["terms"].as_array().unwrap();
        let sum: f64 = terms.iter().map(|t| num(&t["mhz"])).sum();
        assert!((sum - f(&s, "total_mhz")).abs() < 1e-9);
        assert!(terms
            .iter()
            .all(|t| t["name"].is_string() && t["coefficient"].is_string()));
        assert!(s["note"].as_str().unwrap().contains("truncated expansion"));
        assert_eq!(s["constants"]["set"], "CODATA 2018");
    }

    #[test]
    fn table_rows_and_provenance() {
        let csv = render(&args(&[
            "--table",
            "--n-max",
            "2",
            "--digits",
            "8",
            "--cutoff-estimate",
        ]))
        .unwrap();
        let body: Vec<&str> = csv.lines().filter(|l| !l.starts_with('#')).collect();
        assert!(body[0].starts_with("n,l,j,ln_k0,abs_err,a41_mhz"));
        assert!(body[0].ends_with("total_mhz,uncertainty_mhz,cutoff_mhz"));
        let keys: Vec<String> = body[1..]
            .iter()
            .map(|l| l.split(',').take(3).collect::<Vec<_>>().join(" "))
            .collect();
        assert_eq!(keys, ["1 0 1/2", "2 0 1/2", "2 1 1/2", "2 1 3/2"]);
        assert!(csv.contains("# note: This is a truncated expansion"));
        assert!(csv.contains("# constants: CODATA 2018"));
        let v: Value = serde_json::from_str(
            &render(&args(&[
                "--table", "--n-max", "2", "--digits", "8", "--json",
            ]))
            .unwrap(),
        )
        .unwrap();
        assert_eq!(v["rows"].as_array().unwrap().len(), 4);
        assert_eq!(v["rows"][3]["j"], "3/2");
        assert_eq!(v["meta"]["constants"], "CODATA 2018");
    }

    #[test]
    fn bad_levels_are_bad_input_before_any_computation() {
        for bad_args in [
            &["2", "0", "3/2"][..],
            &["2", "2", "5/2"],
            &["0", "0", "1/2"],
            &["-1", "0", "1/2"],
            &["2", "1", "1"],
            &["x", "0", "1/2"],
            &["2", "0"],
            &["--table"],
            &["2", "0", "1/2", "--table", "--n-max", "2"],
            &["--table", "--n-max", "0"],
            &["--table", "--n-max", "201"],
            &["2", "0", "1/2", "--n-max", "3"],
            &["2", "0", "1/2", "--format", "json"],
        ] {
            let e = run(&args(bad_args)).unwrap_err();
            assert_eq!(e.exit_code(), 2, "{bad_args:?}: {e}");
        }
        // Digits out of range are refused by the shared --digits parser
        // (a clap error: exit 2 in the binary).
        for bad_args in [
            &["2", "0", "1/2", "--digits", "4"][..],
            &["2", "0", "1/2", "--digits", "-3"],
        ] {
            let e = try_args(bad_args).expect_err("refused");
            assert_eq!(e.exit_code(), 2, "{bad_args:?}: {e}");
        }
    }
}
