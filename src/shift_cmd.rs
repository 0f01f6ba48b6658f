//! `kzero shift`: the leading one-loop QED shift of a hydrogenic level from
//! its Bethe logarithm, term by term, with an estimate of what is left out.
//!
//! The Bethe logarithm comes from the Green's-function engine; the assembly
//! (coefficients, mass factors, constants, uncertainty rules) is the
//! `kzero-qed` library.
//!
//! Table output (`--table --n-max N`), one row per level (n, l, j), sorted by
//! (n, l, j). CSV columns (all shifts E/h in MHz, positive raises the level):
//!
//! | column | meaning |
//! |---|---|
//! | `n`, `l`, `j` | the level, j written like `1/2` |
//! | `ln_k0`, `abs_err` | Bethe logarithm (units of Z^2 Ry) and the error of the printed value (as in `kzero table`) |
//! | `a41_mhz` ... `v50_mhz` | the included terms: A41 L, A40 (Bethe-log and magnetic-moment parts together), A50 (Z alpha), A62 (Z alpha)^2 L^2, A61 (Z alpha)^2 L, V40, V50 (Z alpha) |
//! | `total_mhz` | their sum |
//! | `uncertainty_mhz` | estimated size of the omitted terms (quadrature sum) |
//! | `cutoff_mhz` | only with `--cutoff-estimate`: the nonrelativistic estimate with the photon energy cut off at m_e c^2 |
//!
//! The CSV starts with `#` lines carrying provenance and the constants; JSON
//! is one object with `"meta"` and `"rows"`.

use crate::app_error::AppError;
use crate::output;
use kzero_bethe::value::format_err;
use kzero_bethe::{BetheValue, Settings};
use kzero_engine::build_info as provenance;
use kzero_qed::{
    constants, cutoff_estimate, level_shift, nucleus, shift::UNCERTAINTY_RULE, BetheLog,
    CutoffEstimate, Level, LevelShift, Nucleus, QedError,
};
use rayon::prelude::*;
use serde_json::{json, Value};
use std::fmt::Write as _;

/// Default `--digits` for the Bethe logarithm (far more than the shifts need).
const DEFAULT_DIGITS: u32 = 15;

/// The statement printed with every result.
const TRUNCATION_NOTE: &str = "This is a truncated expansion in Z alpha (one-loop self-energy \
and vacuum polarization at the orders listed), not a complete bound-state QED evaluation; \
published level evaluations include further terms (all-order one-loop remainders, two-loop \
QED, recoil and nuclear-structure corrections), whose sizes are only estimated here.";

/// Output format of `--table`.
#[derive(Debug, Clone, Copy, PartialEq, Eq, Default, clap::ValueEnum)]
pub enum ShiftFormat {
    /// Comma-separated values with `#` provenance lines.
    #[default]
    Csv,
    /// One JSON object with "meta" and "rows".
    Json,
}

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
    /// Requested digits of ln k0 (5..=200; default 15, far more than the shifts need).
    #[arg(long, value_name = "D", allow_negative_numbers = true)]
    pub digits: Option<i64>,
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
    #[arg(long, value_enum)]
    pub format: Option<ShiftFormat>,
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

fn parse_int(text: &str, what: &str) -> Result<i64, AppError> {
    text.trim()
        .parse::<i64>()
        .map_err(|_| AppError::BadInput(format!("{what} must be an integer, got {text:?}")))
}

/// The nucleus from --nucleus / --mass / --z / --radius.
fn nucleus_from_args(a: &ShiftArgs) -> Result<Nucleus, AppError> {
    if let Some(r) = a.radius {
        if !r.is_finite() {
            return Err(AppError::BadInput(format!(
                "--radius {r} is not a finite number of fm"
            )));
        }
    }
    let nuc = match (&a.nucleus, &a.mass) {
        (Some(_), Some(_)) => {
            return Err(AppError::BadInput(
                "give either --nucleus or --mass, not both".to_string(),
            ))
        }
        (None, Some(m)) => {
            let mass = match m.trim().to_ascii_lowercase().as_str() {
                "inf" | "infinity" | "infinite" => f64::INFINITY,
                t => t.parse::<f64>().map_err(|_| {
                    AppError::BadInput(format!(
                        "--mass must be a number of electron masses or inf, got {m:?}"
                    ))
                })?,
            };
            Nucleus::custom(a.z.unwrap_or(1), mass, a.radius).map_err(bad)?
        }
        (preset, None) => {
            let name = preset.as_deref().unwrap_or("H");
            let nuc = Nucleus::preset(name).map_err(bad)?;
            if let Some(z) = a.z {
                nucleus::check_z(z).map_err(bad)?;
                if z != i64::from(nuc.z) {
                    return Err(AppError::BadInput(if preset.is_some() {
                        format!("--z {z} contradicts --nucleus {name} (Z = {})", nuc.z)
                    } else {
                        format!(
                            "--z {z} needs --mass M (nuclear mass in electron masses, or inf) \
                             or a --nucleus preset with that charge"
                        )
                    }));
                }
            }
            match a.radius {
                Some(r) => nuc.with_radius(r).map_err(bad)?,
                None => nuc,
            }
        }
    };
    Ok(nuc)
}

fn settings_from_args(a: &ShiftArgs) -> Result<Settings, AppError> {
    let d = a.digits.unwrap_or(i64::from(DEFAULT_DIGITS));
    let digits = u32::try_from(d).map_err(|_| {
        AppError::BadInput(format!(
            "--digits {d} is outside the accepted range {}..={}",
            kzero_bethe::settings::MIN_DIGITS,
            kzero_bethe::settings::MAX_DIGITS
        ))
    })?;
    let s = Settings::with_digits(digits);
    s.validate()?;
    Ok(s)
}

/// One computed (n, l): the engine's value and the library's input form.
struct Lnk0 {
    engine: BetheValue,
    input: BetheLog,
}

fn compute_ln_k0(n: u32, l: u32, settings: &Settings) -> Result<Lnk0, AppError> {
    let engine = kzero_bethe::green::ln_k0(i64::from(n), i64::from(l), settings)?;
    // the f64 handed on carries the conversion in its error
    let (x, err) = engine.to_f64_with_err();
    let input = BetheLog::new(n, l, x, err)
        .map_err(|e| AppError::Other(format!("the engine returned an unusable ln k0: {e}")))?;
    Ok(Lnk0 { engine, input })
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
    let settings = settings_from_args(args)?;
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
            (true, Some(ShiftFormat::Csv)) => {
                return Err(AppError::BadInput(
                    "--json contradicts --format csv".to_string(),
                ))
            }
            (true, _) => ShiftFormat::Json,
            (false, f) => f.unwrap_or_default(),
        };
        return render_table(args, n_max, format, &nucleus, &settings);
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

    let lk = compute_ln_k0(level.n(), level.l(), &settings)?;
    let shift = level_shift(&level, &nucleus, &lk.input).map_err(bad)?;
    let cutoff = if args.cutoff_estimate {
        Some(cutoff_estimate(&level, &nucleus, &lk.input).map_err(bad)?)
    } else {
        None
    };
    let text = if args.json {
        let mut v = level_json(&shift, &lk.engine, cutoff.as_ref());
        if let Value::Object(m) = &mut v {
            m.insert("note".into(), json!(TRUNCATION_NOTE));
            m.insert("uncertainty_rule".into(), json!(UNCERTAINTY_RULE));
            m.insert("nucleus".into(), nucleus_json(&nucleus));
            m.insert("constants".into(), constants_json());
            m.insert(
                "settings".into(),
                json!({ "digits": settings.digits, "goal": settings.goal.name(), "method": "green" }),
            );
        }
        let mut s = serde_json::to_string_pretty(&v)
            .map_err(|e| AppError::Other(format!("cannot format JSON: {e}")))?;
        s.push('\n');
        s
    } else {
        level_text(&shift, &lk.engine, cutoff.as_ref())
    };
    Ok(text)
}

fn fmt_mhz(x: f64) -> String {
    format!("{x:.6}")
}

/// An uncertainty in MHz printed beside values of [`fmt_mhz`]: the
/// uncertainty plus the rounding of those values (half a unit of the 6th
/// decimal), rounded *up* to 6 decimals.
fn fmt_unc_mhz(x: f64) -> String {
    let up = ((x + 5e-7) * 1e6 * (1.0 + 1e-12)).ceil() / 1e6;
    format!("{up:.6}")
}

/// An f64 as a decimal string for JSON: the shortest one that reads back as
/// the same f64 (exponent form for very small or large magnitudes).
fn dec(x: f64) -> Value {
    json!(fmt_const(x))
}

/// An error estimate as a decimal string, rounded up (for JSON).
fn err(x: f64) -> Value {
    json!(format_err(x))
}

/// A constant with all its digits: plain decimal for moderate magnitudes,
/// exponent form otherwise (both round-trip exactly).
fn fmt_const(x: f64) -> String {
    if x != 0.0 && (x.abs() < 1e-3 || x.abs() >= 1e7) {
        format!("{x:e}")
    } else {
        format!("{x}")
    }
}

fn fmt_coef(x: f64) -> String {
    if x == 0.0 {
        "0".to_string()
    } else {
        format!("{x:.12}")
    }
}

/// A radius in fm with at most 5 decimals, trailing zeros dropped.
fn radius_text(r: f64) -> String {
    let s = format!("{r:.5}");
    let s = s.trim_end_matches('0');
    s.strip_suffix('.').unwrap_or(s).to_string()
}

fn mass_text(nuc: &Nucleus) -> String {
    match nuc.mass_me {
        Some(m) => format!("{m} m_e"),
        None => "infinite".to_string(),
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

fn nucleus_json(nuc: &Nucleus) -> Value {
    json!({
        "name": nuc.name,
        "z": nuc.z,
        "mass_me": nuc.mass_me.map(dec),
        "radius_fm": dec(nuc.radius_fm),
        "source": nuc.source,
    })
}

fn constants_json() -> Value {
    let mut m = serde_json::Map::new();
    m.insert("set".into(), json!("CODATA 2018"));
    for (name, value, unit) in constants::listing() {
        m.insert(name.into(), json!({ "value": dec(value), "unit": unit }));
    }
    Value::Object(m)
}

fn level_json(s: &LevelShift, lk: &BetheValue, cutoff: Option<&CutoffEstimate>) -> Value {
    let terms: Vec<Value> = s
        .terms
        .iter()
        .map(|t| {
            json!({
                "name": t.name,
                "order": t.order,
                "coefficient": dec(t.coefficient),
                "multiplier": dec(t.multiplier),
                "mass_factor": dec(t.mass_factor),
                "mhz": dec(t.mhz),
            })
        })
        .collect();
    let omitted: Vec<Value> = s
        .omitted
        .iter()
        .map(|o| json!({ "name": o.name, "estimate_mhz": err(o.mhz), "rule": o.rule }))
        .collect();
    let mut v = json!({
        "level": {
            "n": s.level.n(),
            "l": s.level.l(),
            "j": s.level.j_text(),
            "kappa": s.level.kappa(),
            "label": s.level.label(),
        },
        "ln_k0": {
            "value": lk.value_string(),
            "abs_err": lk.abs_err_string(),
            "method": lk.method.name(),
            "digits": lk.digits,
        },
        "z_alpha": dec(s.z_alpha),
        "reduced_mass_ratio": dec(s.reduced_mass_ratio),
        "log_l": dec(s.log_l),
        "unit_mhz": dec(s.unit_mhz),
        "terms": terms,
        "self_energy_mhz": dec(s.self_energy_mhz),
        "vacuum_polarization_mhz": dec(s.vacuum_polarization_mhz),
        "total_mhz": dec(s.total_mhz),
        "uncertainty_mhz": err(s.uncertainty_mhz),
        "omitted": omitted,
        "ln_k0_error_mhz": err(s.ln_k0_error_mhz),
    });
    if let (Some(c), Value::Object(m)) = (cutoff, &mut v) {
        m.insert(
            "cutoff_estimate".into(),
            json!({
                "coefficient": dec(c.coefficient),
                "cutoff_log": dec(c.cutoff_log),
                "mhz": dec(c.mhz),
                "ln_k0_error_mhz": err(c.ln_k0_error_mhz),
            }),
        );
    }
    v
}

/// One table row: the level with its shift (and cutoff estimate).
struct TableRow {
    shift: LevelShift,
    ln_k0: String,
    ln_k0_err: String,
    cutoff: Option<CutoffEstimate>,
}

fn term_mhz(s: &LevelShift, prefix: &str) -> f64 {
    s.terms
        .iter()
        .filter(|t| t.name.starts_with(prefix))
        .map(|t| t.mhz)
        .sum()
}

const TERM_COLUMNS: [(&str, &str); 7] = [
    ("a41_mhz", "A41"),
    ("a40_mhz", "A40"),
    ("a50_mhz", "A50"),
    ("a62_mhz", "A62"),
    ("a61_mhz", "A61"),
    ("v40_mhz", "V40"),
    ("v50_mhz", "V50"),
];

fn render_table(
    args: &ShiftArgs,
    n_max: i64,
    format: ShiftFormat,
    nucleus: &Nucleus,
    settings: &Settings,
) -> Result<String, AppError> {
    let started = provenance::utc_now();
    let levels = Level::all_up_to(n_max).map_err(bad)?;
    let mut pairs: Vec<(u32, u32)> = levels.iter().map(|v| (v.n(), v.l())).collect();
    pairs.dedup();
    // One engine call per (n, l), shared by both j; collected in order.
    let values: Vec<Result<Lnk0, AppError>> = pairs
        .par_iter()
        .map(|&(n, l)| compute_ln_k0(n, l, settings))
        .collect();
    let mut by_pair = std::collections::BTreeMap::new();
    for (p, v) in pairs.iter().zip(values) {
        by_pair.insert(*p, v?);
    }
    let mut rows = Vec::with_capacity(levels.len());
    for level in &levels {
        let lk = &by_pair[&(level.n(), level.l())];
        let shift = level_shift(level, nucleus, &lk.input).map_err(bad)?;
        let cutoff = if args.cutoff_estimate {
            Some(cutoff_estimate(level, nucleus, &lk.input).map_err(bad)?)
        } else {
            None
        };
        rows.push(TableRow {
            shift,
            ln_k0: lk.engine.value_string(),
            ln_k0_err: lk.engine.abs_err_string(),
            cutoff,
        });
    }

    // the provenance keys of every kzero table, the settings (as
    // `setting.KEY` lines / a `settings` object, like `kzero table`), then
    // what the numbers mean
    let mut prov_pairs: Vec<(String, String)> = vec![("format".into(), "kzero-shift-table".into())];
    let mut prov = kzero_engine::Provenance::now(provenance::command_line());
    prov.started_utc = started;
    prov_pairs.extend(prov.pairs());
    let setting_pairs: Vec<(&str, Value)> = vec![
        ("n_max", json!(n_max)),
        ("digits", json!(settings.digits)),
        ("goal", json!(settings.goal.name())),
        ("method", json!("green")),
        ("nucleus", json!(nucleus.name)),
        ("z", json!(nucleus.z)),
        ("mass_me", json!(mass_text(nucleus))),
        ("radius_fm", json!(radius_text(nucleus.radius_fm))),
    ];
    let info: Vec<(String, String)> = vec![
        ("nucleus_source".into(), nucleus.source.clone()),
        ("constants".into(), "CODATA 2018".into()),
        (
            "terms".into(),
            "A41 L, A40, A50 (Z alpha), A62 (Z alpha)^2 L^2, A61 (Z alpha)^2 L, V40, V50 (Z alpha); L = ln[(m_e/m_r)(Z alpha)^-2]".into(),
        ),
        ("units".into(), "shifts E/h in MHz, positive raises the level; ln k0 in units of Z^2 Ry".into()),
        ("uncertainty".into(), UNCERTAINTY_RULE.into()),
        ("note".into(), TRUNCATION_NOTE.into()),
    ];

    let mut columns = vec!["n", "l", "j", "ln_k0", "abs_err"];
    columns.extend(TERM_COLUMNS.iter().map(|c| c.0));
    columns.extend(["total_mhz", "uncertainty_mhz"]);
    if args.cutoff_estimate {
        columns.push("cutoff_mhz");
    }
    let cells = |r: &TableRow| -> Vec<String> {
        let s = &r.shift;
        let mut v = vec![
            s.level.n().to_string(),
            s.level.l().to_string(),
            s.level.j_text(),
            r.ln_k0.clone(),
            r.ln_k0_err.clone(),
        ];
        v.extend(TERM_COLUMNS.iter().map(|c| fmt_mhz(term_mhz(s, c.1))));
        v.push(fmt_mhz(s.total_mhz));
        v.push(fmt_unc_mhz(s.uncertainty_mhz));
        if let Some(c) = &r.cutoff {
            v.push(fmt_mhz(c.mhz));
        }
        v
    };

    let text = match format {
        ShiftFormat::Csv => {
            let mut t = String::new();
            for (k, v) in &prov_pairs {
                let _ = writeln!(t, "# {k}: {v}");
            }
            for (k, v) in &setting_pairs {
                let v = v.as_str().map_or_else(|| v.to_string(), str::to_string);
                let _ = writeln!(t, "# setting.{k}: {v}");
            }
            for (k, v) in &info {
                let _ = writeln!(t, "# {k}: {v}");
            }
            for (name, value, unit) in constants::listing() {
                let _ = writeln!(t, "# constant {name}: {} {unit}", fmt_const(value));
            }
            let _ = writeln!(t, "{}", columns.join(","));
            for r in &rows {
                let _ = writeln!(t, "{}", cells(r).join(","));
            }
            t
        }
        ShiftFormat::Json => {
            let mut m = serde_json::Map::new();
            for (k, v) in prov_pairs.iter().chain(&info) {
                m.insert(k.clone(), json!(v));
            }
            let sm: serde_json::Map<String, Value> = setting_pairs
                .iter()
                .map(|(k, v)| (k.to_string(), v.clone()))
                .collect();
            m.insert("settings".into(), Value::Object(sm));
            m.insert("constants_values".into(), constants_json());
            m.insert("columns".into(), json!(columns));
            let json_rows: Vec<Value> = rows
                .iter()
                .map(|r| {
                    let mut o = serde_json::Map::new();
                    for (c, v) in columns.iter().zip(cells(r)) {
                        o.insert((*c).to_string(), json!(v));
                    }
                    // n and l as numbers, like the rows of `kzero table`.
                    o.insert("n".into(), json!(r.shift.level.n()));
                    o.insert("l".into(), json!(r.shift.level.l()));
                    Value::Object(o)
                })
                .collect();
            let v = json!({ "meta": Value::Object(m), "rows": json_rows });
            let mut s = serde_json::to_string_pretty(&v)
                .map_err(|e| AppError::Other(format!("cannot format JSON: {e}")))?;
            s.push('\n');
            s
        }
    };
    Ok(text)
}

#[cfg(test)]
mod tests {
    use super::*;

    fn args(extra: &[&str]) -> ShiftArgs {
        use clap::Parser;
        #[derive(clap::Parser)]
        struct Cli {
            #[command(flatten)]
            a: ShiftArgs,
        }
        let mut v = vec!["kzero-shift"];
        v.extend_from_slice(extra);
        Cli::try_parse_from(v).expect("parse").a
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
            &["2", "0", "1/2", "--digits", "4"],
            &["2", "0", "1/2", "--digits", "-3"],
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
    }
}
