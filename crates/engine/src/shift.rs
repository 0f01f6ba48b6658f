//! Level shifts through the engine: ln k0 from [`compute()`] (Green's
//! function), the assembly from kzero-qed, and the shift-table format
//! (CSV and JSON with the one [`Provenance`] schema).
//!
//! A shift table starts with `format: kzero-shift-table` and the provenance
//! keys of every kzero table, then the settings (`# setting.KEY` lines in
//! CSV, a `settings` object in JSON, like `kzero table`), then what the
//! numbers mean (nucleus source, constants, terms, units, uncertainty rule,
//! note) and, in CSV, the constants (`# constant NAME: value unit`).
//!
//! Shift-table columns (all shifts E/h in MHz, positive raises the level):
//!
//! | column | meaning |
//! |---|---|
//! | `n`, `l`, `j` | the level, j written like `1/2` |
//! | `ln_k0`, `abs_err` | Bethe logarithm (units of Z^2 Ry) and the error of the printed value (as in `kzero table`) |
//! | `a41_mhz` ... `v50_mhz` | the included terms by coefficient family ([`kzero_qed::shift::Family`]): A41 L, A40 (Bethe-log and magnetic-moment parts together), A50 (Z alpha), A62 (Z alpha)^2 L^2, A61 (Z alpha)^2 L, V40, V50 (Z alpha) |
//! | `total_mhz` | their sum |
//! | `uncertainty_mhz` | estimated size of the omitted terms (quadrature sum) |
//! | `cutoff_mhz` | only with the cutoff estimate: the nonrelativistic estimate with the photon energy cut off at m_e c^2 |

use crate::batch::catch_panic;
use crate::build_info::Provenance;
use crate::compute::compute;
use crate::error::EngineError;
use crate::method::MethodChoice;
use crate::table::TableFormat;
use kzero_bethe::{BetheValue, Gauge, Settings};
use kzero_qed::shift::{Family, UNCERTAINTY_RULE};
use kzero_qed::{
    constants, cutoff_estimate, level_shift, nucleus::check_z, BetheLog, CutoffEstimate, Level,
    LevelShift, Nucleus,
};
use rayon::prelude::*;
use serde_json::{json, Value};
use std::collections::BTreeMap;
use std::fmt::Write as _;
use thiserror::Error;

/// Default digits of ln k0 for level shifts (far more than the shifts need).
pub const DEFAULT_DIGITS: u32 = 15;

/// The statement printed with every shift.
pub const TRUNCATION_NOTE: &str = "This is a truncated expansion in Z alpha (one-loop self-energy \
and vacuum polarization at the orders listed), not a complete bound-state QED evaluation; \
published level evaluations include further terms (all-order one-loop remainders, two-loop \
QED, recoil and nuclear-structure corrections), whose sizes are only estimated here.";

/// The included terms in one line (shift-table provenance).
pub const TERMS_NOTE: &str = "A41 L, A40, A50 (Z alpha), A62 (Z alpha)^2 L^2, A61 (Z alpha)^2 L, V40, V50 (Z alpha); L = ln[(m_e/m_r)(Z alpha)^-2]";

/// The units of a shift table.
pub const UNITS_NOTE: &str =
    "shifts E/h in MHz, positive raises the level; ln k0 in units of Z^2 Ry";

/// ln k0(n, l) from the engine and the QED crate's input form of it.
#[derive(Debug, Clone)]
pub struct ShiftLnK0 {
    /// The engine's value (Green's-function method).
    pub value: BetheValue,
    /// The same as a QED input (value rounded to f64, error estimate plus
    /// that rounding).
    pub input: BetheLog,
}

/// ln k0(n, l) for a level shift, through [`compute`] with the
/// Green's-function method; the QED input carries the conversion to f64 in
/// its error.
///
/// # Errors
/// As [`compute`]; [`EngineError::UnusableLnK0`] if the value cannot be a
/// QED input.
pub fn ln_k0_for_shift(n: u32, l: u32, settings: &Settings) -> Result<ShiftLnK0, EngineError> {
    let value = compute(n, l, MethodChoice::Green, Gauge::Velocity, settings)?.into_primary();
    // The f64 handed on carries the conversion in its error.
    let (x, err) = value.to_f64_with_err();
    let input = BetheLog::new(n, l, x, err).map_err(|e| EngineError::UnusableLnK0 { source: e })?;
    Ok(ShiftLnK0 { value, input })
}

/// One level with its shift and ln k0 (and the cutoff estimate when asked).
#[derive(Debug, Clone)]
pub struct LevelResult {
    /// The assembled shift.
    pub shift: LevelShift,
    /// The ln k0 it used.
    pub ln_k0: BetheValue,
    /// The cutoff estimate, when asked for.
    pub cutoff: Option<CutoffEstimate>,
}

fn assemble(
    level: &Level,
    nucleus: &Nucleus,
    lk: &ShiftLnK0,
    with_cutoff: bool,
) -> Result<LevelResult, EngineError> {
    let shift = level_shift(level, nucleus, &lk.input)?;
    let cutoff = if with_cutoff {
        Some(cutoff_estimate(level, nucleus, &lk.input)?)
    } else {
        None
    };
    Ok(LevelResult {
        shift,
        ln_k0: lk.value.clone(),
        cutoff,
    })
}

/// The truncated one-loop QED shift of `level` for `nucleus`, with ln k0 at
/// `settings` (see [`kzero_qed::level_shift`] for the terms and the
/// uncertainty rule).
///
/// # Errors
/// Invalid settings (bad input), non-convergence of ln k0 (failure), QED
/// input errors (bad input).
pub fn shift_level(
    level: &Level,
    nucleus: &Nucleus,
    settings: &Settings,
    with_cutoff: bool,
) -> Result<LevelResult, EngineError> {
    let lk = ln_k0_for_shift(level.n(), level.l(), settings)?;
    assemble(level, nucleus, &lk, with_cutoff)
}

/// Every level (n, l, j) with n <= `n_max`, sorted by (n, l, j); ln k0 is
/// computed once per (n, l), in parallel.
///
/// # Errors
/// As [`shift_level`]; an n_max outside 1..=200 (bad input).
pub fn shift_levels(
    n_max: i64,
    nucleus: &Nucleus,
    settings: &Settings,
    with_cutoff: bool,
) -> Result<Vec<LevelResult>, EngineError> {
    settings.validate()?;
    let levels = Level::all_up_to(n_max)?;
    let mut pairs: Vec<(u32, u32)> = levels.iter().map(|v| (v.n(), v.l())).collect();
    pairs.dedup();
    let values: Vec<Result<ShiftLnK0, EngineError>> = pairs
        .par_iter()
        .map(|&(n, l)| catch_panic(|| ln_k0_for_shift(n, l, settings)))
        .collect();
    let mut by_pair = BTreeMap::new();
    for (p, v) in pairs.iter().zip(values) {
        by_pair.insert(*p, v?);
    }
    levels
        .iter()
        .map(|level| {
            assemble(
                level,
                nucleus,
                &by_pair[&(level.n(), level.l())],
                with_cutoff,
            )
        })
        .collect()
}

/// A shift in MHz with 6 decimals.
pub fn fmt_mhz(x: f64) -> String {
    format!("{x:.6}")
}

/// An uncertainty in MHz printed beside values of [`fmt_mhz`]: the
/// uncertainty plus the rounding of those values (half a unit of the 6th
/// decimal), rounded *up* to 6 decimals.
pub fn fmt_unc_mhz(x: f64) -> String {
    let up = ((x + 5e-7) * 1e6 * (1.0 + 1e-12)).ceil() / 1e6;
    format!("{up:.6}")
}

/// A constant with all its digits: plain decimal for moderate magnitudes,
/// exponent form otherwise (both round-trip exactly).
pub fn fmt_const(x: f64) -> String {
    if x != 0.0 && (x.abs() < 1e-3 || x.abs() >= 1e7) {
        format!("{x:e}")
    } else {
        format!("{x}")
    }
}

/// A radius in fm with at most 5 decimals, trailing zeros dropped.
pub fn radius_text(r: f64) -> String {
    let s = format!("{r:.5}");
    let s = s.trim_end_matches('0');
    s.strip_suffix('.').unwrap_or(s).to_string()
}

/// The nuclear mass as text: `1836.15267343 m_e` or `infinite`.
pub fn mass_text(nuc: &Nucleus) -> String {
    match nuc.mass_me {
        Some(m) => format!("{m} m_e"),
        None => "infinite".to_string(),
    }
}

/// The CODATA constants as a JSON object (`set` and one entry per constant,
/// values as decimal strings of [`fmt_const`]).
pub fn constants_json() -> Value {
    let mut m = serde_json::Map::new();
    m.insert("set".into(), json!("CODATA 2018"));
    for (name, value, unit) in constants::listing() {
        m.insert(
            name.into(),
            json!({ "value": fmt_const(value), "unit": unit }),
        );
    }
    Value::Object(m)
}

/// The MHz of one coefficient family in a shift (the sum of its terms).
pub fn family_mhz(s: &LevelShift, family: Family) -> f64 {
    s.terms
        .iter()
        .filter(|t| t.id.family() == family)
        .map(|t| t.mhz)
        .sum()
}

/// A shift table: every level up to n_max, with provenance.
#[derive(Debug, Clone)]
pub struct ShiftTable {
    /// Where the table came from.
    pub provenance: Provenance,
    /// Largest n.
    pub n_max: i64,
    /// The ln k0 settings.
    pub settings: Settings,
    /// The nucleus.
    pub nucleus: Nucleus,
    /// Whether the cutoff estimate is a column.
    pub with_cutoff: bool,
    /// The levels, sorted by (n, l, j).
    pub rows: Vec<LevelResult>,
}

impl ShiftTable {
    /// Computes the table of every level up to `n_max` (see
    /// [`shift_levels`]), with provenance of this build started now by
    /// `command`.
    ///
    /// # Errors
    /// As [`shift_levels`].
    pub fn compute(
        n_max: i64,
        nucleus: &Nucleus,
        settings: &Settings,
        with_cutoff: bool,
        command: &str,
    ) -> Result<ShiftTable, EngineError> {
        let provenance = Provenance::now(command);
        let rows = shift_levels(n_max, nucleus, settings, with_cutoff)?;
        Ok(ShiftTable {
            provenance,
            n_max,
            settings: settings.clone(),
            nucleus: nucleus.clone(),
            with_cutoff,
            rows,
        })
    }

    /// `format` (`kzero-shift-table`) and the [`Provenance`] keys.
    pub fn provenance_pairs(&self) -> Vec<(String, String)> {
        let mut v: Vec<(String, String)> = vec![("format".into(), "kzero-shift-table".into())];
        v.extend(self.provenance.pairs());
        v
    }

    /// The settings: n_max, digits, goal, method and the nucleus.
    pub fn setting_pairs(&self) -> Vec<(&'static str, Value)> {
        let nuc = &self.nucleus;
        vec![
            ("n_max", json!(self.n_max)),
            ("digits", json!(self.settings.digits)),
            ("goal", json!(self.settings.goal.name())),
            ("method", json!(MethodChoice::Green.name())),
            ("nucleus", json!(nuc.name)),
            ("z", json!(nuc.z)),
            ("mass_me", json!(mass_text(nuc))),
            ("radius_fm", json!(radius_text(nuc.radius_fm))),
        ]
    }

    /// What the numbers mean: nucleus source, constants, terms, units,
    /// uncertainty rule, the truncation note.
    pub fn info_pairs(&self) -> Vec<(String, String)> {
        vec![
            ("nucleus_source".into(), self.nucleus.source.clone()),
            ("constants".into(), "CODATA 2018".into()),
            ("terms".into(), TERMS_NOTE.into()),
            ("units".into(), UNITS_NOTE.into()),
            ("uncertainty".into(), UNCERTAINTY_RULE.into()),
            ("note".into(), TRUNCATION_NOTE.into()),
        ]
    }

    /// The column names.
    pub fn columns(&self) -> Vec<&'static str> {
        let mut columns = vec!["n", "l", "j", "ln_k0", "abs_err"];
        columns.extend(Family::ALL.iter().map(|f| f.column()));
        columns.extend(["total_mhz", "uncertainty_mhz"]);
        if self.with_cutoff {
            columns.push("cutoff_mhz");
        }
        columns
    }

    fn cells(r: &LevelResult) -> Vec<String> {
        let s = &r.shift;
        let mut v = vec![
            s.level.n().to_string(),
            s.level.l().to_string(),
            s.level.j_text(),
            r.ln_k0.value_string(),
            r.ln_k0.abs_err_string(),
        ];
        v.extend(Family::ALL.iter().map(|f| fmt_mhz(family_mhz(s, *f))));
        v.push(fmt_mhz(s.total_mhz));
        v.push(fmt_unc_mhz(s.uncertainty_mhz));
        if let Some(c) = &r.cutoff {
            v.push(fmt_mhz(c.mhz));
        }
        v
    }

    /// The table as CSV: `# key: value` metadata and constants, the column
    /// line, one row per level.
    pub fn to_csv(&self) -> String {
        let mut t = String::new();
        for (k, v) in &self.provenance_pairs() {
            let _ = writeln!(t, "# {k}: {v}");
        }
        for (k, v) in &self.setting_pairs() {
            let v = v.as_str().map_or_else(|| v.to_string(), str::to_string);
            let _ = writeln!(t, "# setting.{k}: {v}");
        }
        for (k, v) in &self.info_pairs() {
            let _ = writeln!(t, "# {k}: {v}");
        }
        for (name, value, unit) in constants::listing() {
            let _ = writeln!(t, "# constant {name}: {} {unit}", fmt_const(value));
        }
        let _ = writeln!(t, "{}", self.columns().join(","));
        for r in &self.rows {
            let _ = writeln!(t, "{}", Self::cells(r).join(","));
        }
        t
    }

    /// The table as one JSON object with `meta` and `rows`.
    pub fn to_json(&self) -> String {
        let columns = self.columns();
        let mut m = serde_json::Map::new();
        for (k, v) in self.provenance_pairs().iter().chain(&self.info_pairs()) {
            m.insert(k.clone(), json!(v));
        }
        let settings: serde_json::Map<String, Value> = self
            .setting_pairs()
            .into_iter()
            .map(|(k, v)| (k.to_string(), v))
            .collect();
        m.insert("settings".into(), Value::Object(settings));
        m.insert("constants_values".into(), constants_json());
        m.insert("columns".into(), json!(columns));
        let json_rows: Vec<Value> = self
            .rows
            .iter()
            .map(|r| {
                let mut o = serde_json::Map::new();
                for (c, v) in columns.iter().zip(Self::cells(r)) {
                    o.insert((*c).to_string(), json!(v));
                }
                // n and l as numbers, like the rows of `kzero table`.
                o.insert("n".into(), json!(r.shift.level.n()));
                o.insert("l".into(), json!(r.shift.level.l()));
                Value::Object(o)
            })
            .collect();
        let v = json!({ "meta": Value::Object(m), "rows": json_rows });
        let mut s = serde_json::to_string_pretty(&v).unwrap_or_default();
        s.push('\n');
        s
    }

    /// The table in `format`.
    pub fn render(&self, format: TableFormat) -> String {
        match format {
            TableFormat::Csv => self.to_csv(),
            TableFormat::Json => self.to_json(),
        }
    }
}

/// Why a nucleus request of a level shift cannot be met (the messages name
/// the options of `kzero shift`).
#[derive(Debug, Clone, PartialEq, Error)]
#[non_exhaustive]
pub enum NucleusError {
    /// A radius that is not a finite number.
    #[error("--radius {0} is not a finite number of fm")]
    RadiusNotFinite(f64),
    /// Both a preset and a mass.
    #[error("give either --nucleus or --mass, not both")]
    PresetAndMass,
    /// A mass that is neither a number nor `inf`.
    #[error("--mass must be a number of electron masses or inf, got {0:?}")]
    MassNotNumber(String),
    /// A charge other than the named preset's.
    #[error("--z {z} contradicts --nucleus {name} (Z = {preset_z})")]
    ZContradicts {
        /// Z as given.
        z: i64,
        /// The preset named.
        name: String,
        /// The preset's charge.
        preset_z: u32,
    },
    /// A charge other than hydrogen's without a mass or preset.
    #[error("--z {0} needs --mass M (nuclear mass in electron masses, or inf) or a --nucleus preset with that charge")]
    ZNeedsMass(i64),
}

/// The nucleus of a level shift from a preset name (default `H`), or a
/// charge `z` (default 1) with a `mass` in electron masses (text: a number
/// or `inf`/`infinity`/`infinite` for an infinitely heavy nucleus), and an
/// optional rms charge `radius` in fm (default: the preset's, or
/// 1.2 fm A^(1/3) with a mass). `z` with a preset must be its charge.
///
/// # Errors
/// [`NucleusError`] for contradicting or malformed choices;
/// [`EngineError::Qed`] for a charge, mass or radius out of range or an
/// unknown preset (all bad input).
pub fn nucleus(
    preset: Option<&str>,
    z: Option<i64>,
    mass: Option<&str>,
    radius: Option<f64>,
) -> Result<Nucleus, EngineError> {
    if let Some(r) = radius {
        if !r.is_finite() {
            return Err(NucleusError::RadiusNotFinite(r).into());
        }
    }
    match (preset, mass) {
        (Some(_), Some(_)) => Err(NucleusError::PresetAndMass.into()),
        (None, Some(m)) => {
            let mass = match m.trim().to_ascii_lowercase().as_str() {
                "inf" | "infinity" | "infinite" => f64::INFINITY,
                t => t
                    .parse::<f64>()
                    .map_err(|_| NucleusError::MassNotNumber(m.to_string()))?,
            };
            Ok(Nucleus::custom(z.unwrap_or(1), mass, radius)?)
        }
        (preset, None) => {
            let name = preset.unwrap_or("H");
            let nuc = Nucleus::preset(name)?;
            if let Some(z) = z {
                check_z(z)?;
                if z != i64::from(nuc.z) {
                    return Err(if preset.is_some() {
                        NucleusError::ZContradicts {
                            z,
                            name: name.to_string(),
                            preset_z: nuc.z,
                        }
                    } else {
                        NucleusError::ZNeedsMass(z)
                    }
                    .into());
                }
            }
            Ok(match radius {
                Some(r) => nuc.with_radius(r)?,
                None => nuc,
            })
        }
    }
}

/// An f64 as a decimal string for JSON: the shortest one that reads back as
/// the same f64 (exponent form for very small or large magnitudes).
fn dec(x: f64) -> Value {
    json!(fmt_const(x))
}

/// An error estimate as a decimal string, rounded up (for JSON).
fn err(x: f64) -> Value {
    json!(kzero_bethe::value::format_err(x))
}

/// The nucleus as a JSON object (name, z, mass_me, radius_fm, source).
pub fn nucleus_json(nuc: &Nucleus) -> Value {
    json!({
        "name": nuc.name,
        "z": nuc.z,
        "mass_me": nuc.mass_me.map(dec),
        "radius_fm": dec(nuc.radius_fm),
        "source": nuc.source,
    })
}

/// One level's shift as the JSON object of `kzero shift --json`: the level,
/// ln k0 (value and printed error), the parameters, the included terms, the
/// sums, the uncertainty and the omitted classes (with the cutoff estimate
/// when computed), the note, the uncertainty rule, the nucleus, the
/// constants and the settings. Numbers are decimal strings (errors rounded
/// up).
pub fn level_json(r: &LevelResult, settings: &Settings) -> Value {
    let s = &r.shift;
    let lk = &r.ln_k0;
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
    if let Value::Object(m) = &mut v {
        if let Some(c) = &r.cutoff {
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
        m.insert("note".into(), json!(TRUNCATION_NOTE));
        m.insert("uncertainty_rule".into(), json!(UNCERTAINTY_RULE));
        m.insert("nucleus".into(), nucleus_json(&s.nucleus));
        m.insert("constants".into(), constants_json());
        m.insert(
            "settings".into(),
            json!({ "digits": settings.digits, "goal": settings.goal.name(), "method": "green" }),
        );
    }
    v
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn shift_table_columns_add_up_and_carry_provenance() {
        let h = Nucleus::preset("H").unwrap();
        let t = ShiftTable::compute(2, &h, &Settings::with_digits(8), true, "test").unwrap();
        let keys: Vec<String> = t.rows.iter().map(|r| r.shift.level.label()).collect();
        assert_eq!(keys.len(), 4, "{keys:?}");
        for r in &t.rows {
            let s = &r.shift;
            let by_family: f64 = Family::ALL.iter().map(|f| family_mhz(s, *f)).sum();
            assert!((by_family - s.total_mhz).abs() <= 1e-9 * s.total_mhz.abs().max(1.0));
            assert!(r.cutoff.is_some());
        }
        let csv = t.to_csv();
        for k in Provenance::KEYS {
            assert!(csv.contains(&format!("\n# {k}: ")), "{k}");
        }
        assert!(csv.contains("\nn,l,j,ln_k0,abs_err,a41_mhz,"));
        let v: Value = serde_json::from_str(&t.to_json()).unwrap();
        assert_eq!(v["meta"]["format"], "kzero-shift-table");
        assert_eq!(v["meta"]["settings"]["n_max"], 2);
    }

    #[test]
    fn lamb_shift_of_hydrogen_through_compute() {
        // Measured 2S1/2 - 2P1/2 = 1057.845(9) MHz (Lundeen & Pipkin, Phys.
        // Rev. Lett. 46, 232 (1981)).
        let h = Nucleus::preset("H").unwrap();
        let st = Settings::with_digits(10);
        let s = shift_level(&Level::new(2, 0, 1).unwrap(), &h, &st, false).unwrap();
        let p = shift_level(&Level::new(2, 1, 1).unwrap(), &h, &st, false).unwrap();
        let lamb = s.shift.total_mhz - p.shift.total_mhz;
        let unc = s.shift.uncertainty_mhz.hypot(p.shift.uncertainty_mhz);
        assert!(
            (lamb - 1057.845).abs() <= unc.hypot(0.009),
            "{lamb} +- {unc}"
        );
        // A wrong level is bad input, before any computation.
        assert!(Level::new(2, 0, 3).is_err());
    }
}
