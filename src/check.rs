//! `kzero check`: the bundled outside checks (data-checks/), exact sum rules
//! and a cross-method sample, as one pass/fail table.

use crate::app_error::AppError;
use crate::output;
use kzero_basis::exact::{PolyExp, Surd};
use kzero_basis::gradient::{gradient_function, Channel};
use kzero_basis::radial::{radial_function, radial_integral};
use kzero_basis::BoundState;
use kzero_bethe::value::decimal_string;
use kzero_bethe::{BetheValue, Settings};
use kzero_engine::{agreement, catch_panic, compute, validate_state, Gauge, MethodChoice};
use rug::{Float, Rational};
use serde_json::json;
use std::collections::HashMap;
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
error estimate. Exit code 0 when every line passes, 3 otherwise.")]
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

/// One line of the check report.
#[derive(Debug, Clone)]
pub struct CheckLine {
    /// What is checked.
    pub quantity: String,
    /// Where the expected value comes from.
    pub source: String,
    /// Expected value.
    pub expected: String,
    /// Computed value (or the error that prevented it).
    pub computed: String,
    /// computed - expected.
    pub difference: String,
    /// Within tolerance.
    pub pass: bool,
}

struct Ctx {
    digits: u32,
    cache: HashMap<(u32, u32, MethodChoice), Result<BetheValue, String>>,
}

impl Ctx {
    fn ln_k0(&mut self, n: u32, l: u32, method: MethodChoice) -> Result<BetheValue, String> {
        let digits = self.digits;
        self.cache
            .entry((n, l, method))
            .or_insert_with(|| {
                catch_panic(|| {
                    compute(
                        n,
                        l,
                        method,
                        Gauge::Velocity,
                        &Settings::with_digits(digits),
                    )
                })
                .map(|c| c.into_primary())
                .map_err(|e| e.to_string())
            })
            .clone()
    }
}

fn prec_for(digits: u32, extra: usize) -> u32 {
    ((f64::from(digits) + extra as f64) * std::f64::consts::LOG2_10) as u32 + 128
}

fn fail(quantity: String, source: String, expected: String, why: String) -> CheckLine {
    CheckLine {
        quantity,
        source,
        expected,
        computed: why,
        difference: "-".into(),
        pass: false,
    }
}

/// A failed line about the whole file `name` (unreadable, missing column).
fn file_fail(name: &str, why: String) -> CheckLine {
    fail(format!("file {name}"), name.into(), "-".into(), why)
}

/// A failed line for the record at 0-based index `i` of file `name` that
/// the CSV reader could not read.
/// A failing line for the first of `cols` that the header lacks, if any.
fn missing_column(name: &str, headers: &csv::StringRecord, cols: &[&str]) -> Option<CheckLine> {
    cols.iter()
        .find(|c| !headers.iter().any(|h| h == **c))
        .map(|missing| file_fail(name, format!("missing column '{missing}'")))
}

fn record_fail(name: &str, i: usize, e: &csv::Error) -> CheckLine {
    fail(
        format!("{name} record {}", i + 1),
        name.into(),
        "-".into(),
        format!("malformed line: {e}"),
    )
}

fn compare(
    quantity: String,
    source: String,
    expected: &str,
    tolerance: &str,
    computed: &Float,
    computed_err: f64,
    shown_decimals: usize,
) -> CheckLine {
    let prec = computed.prec().max(prec_for(0, expected.len() * 2));
    let exp = match Float::parse(expected.trim()) {
        Ok(p) => Float::with_val(prec, p),
        Err(_) => {
            return fail(
                quantity,
                source,
                expected.into(),
                format!("expected value '{expected}' is not a number"),
            )
        }
    };
    let tol = match Float::parse(tolerance.trim()) {
        Ok(p) => Float::with_val(64, p).to_f64(),
        Err(_) => {
            return fail(
                quantity,
                source,
                expected.into(),
                format!("tolerance '{tolerance}' is not a number"),
            )
        }
    };
    if tol.is_nan() || tol < 0.0 {
        return fail(
            quantity,
            source,
            expected.into(),
            "tolerance must be >= 0".into(),
        );
    }
    let diff = Float::with_val(prec, computed - &exp);
    let d = diff.to_f64();
    CheckLine {
        quantity,
        source,
        expected: expected.trim().to_string(),
        computed: decimal_string(computed, shown_decimals),
        difference: format!("{d:.2e}"),
        pass: d.abs() <= tol + computed_err,
    }
}

fn decimals_of(s: &str) -> usize {
    s.trim().split_once('.').map_or(0, |(_, f)| {
        f.trim_start_matches(|c: char| !c.is_ascii_digit()).len()
    })
}

fn surd_float(s: &Surd, prec: u32) -> Float {
    s.to_float(prec)
}

fn parse_z(s: Option<&str>) -> Result<Rational, String> {
    match s.map(str::trim) {
        None | Some("") => Ok(Rational::from(1)),
        Some(t) => {
            Rational::from_str_radix(t, 10).map_err(|_| format!("z '{t}' is not a rational number"))
        }
    }
}

fn run_data_file(name: &str, text: &str, ctx: &mut Ctx) -> Vec<CheckLine> {
    let mut out = Vec::new();
    let mut rdr = csv::ReaderBuilder::new()
        .comment(Some(b'#'))
        .trim(csv::Trim::All)
        .from_reader(text.as_bytes());
    let headers = match rdr.headers() {
        Ok(h) => h.clone(),
        Err(e) => {
            out.push(file_fail(name, format!("unreadable CSV: {e}")));
            return out;
        }
    };
    let col = |c: &str| headers.iter().position(|h| h == c);
    if col("quantity").is_none() && col("measured_mhz").is_some() {
        return run_interval_file(name, &mut rdr, &headers, ctx);
    }
    let cols = ["quantity", "n", "l", "expected", "tolerance", "source"];
    if let Some(fail) = missing_column(name, &headers, &cols) {
        out.push(fail);
        return out;
    }
    for (i, rec) in rdr.records().enumerate() {
        let rec = match rec {
            Ok(r) => r,
            Err(e) => {
                out.push(record_fail(name, i, &e));
                continue;
            }
        };
        let get = |c: &str| col(c).and_then(|i| rec.get(i)).filter(|s| !s.is_empty());
        let source = get("source").unwrap_or(name).to_string();
        let expected = get("expected").unwrap_or("").to_string();
        let tolerance = get("tolerance").unwrap_or("").to_string();
        let quantity = get("quantity").unwrap_or("").to_string();
        let int = |c: &str| -> Result<i64, String> {
            get(c)
                .ok_or_else(|| format!("column '{c}' is empty"))?
                .parse::<i64>()
                .map_err(|_| format!("column '{c}' is not an integer"))
        };
        let line = (|| -> Result<CheckLine, (String, String)> {
            let n = int("n").map_err(|e| (quantity.clone(), e))?;
            let l = int("l").map_err(|e| (quantity.clone(), e))?;
            match quantity.as_str() {
                "ln_k0" | "ln_k0_spectral" | "k0_ry" => {
                    let method = if quantity == "ln_k0_spectral" {
                        MethodChoice::Spectral
                    } else {
                        MethodChoice::Green
                    };
                    let label = format!("{quantity}({n},{l})");
                    let (nn, ll) =
                        validate_state(n, l, method).map_err(|e| (label.clone(), e.to_string()))?;
                    let v = ctx.ln_k0(nn, ll, method).map_err(|e| (label.clone(), e))?;
                    if quantity == "k0_ry" {
                        let k0 = Float::with_val(v.value.prec(), v.value.exp_ref());
                        let err = k0.to_f64() * v.abs_err * 1.000_001;
                        Ok(compare(
                            label,
                            source.clone(),
                            &expected,
                            &tolerance,
                            &k0,
                            err,
                            decimals_of(&expected) + 3,
                        ))
                    } else {
                        Ok(compare(
                            label,
                            source.clone(),
                            &expected,
                            &tolerance,
                            &v.value,
                            v.abs_err,
                            v.digits as usize + 2,
                        ))
                    }
                }
                "radial" | "oscillator" => {
                    let n2 = int("n2").map_err(|e| (quantity.clone(), e))?;
                    let l2 = int("l2").map_err(|e| (quantity.clone(), e))?;
                    let z = parse_z(get("z")).map_err(|e| (quantity.clone(), e))?;
                    let zs = if z == 1 {
                        String::new()
                    } else {
                        format!(", Z={z}")
                    };
                    let a = BoundState::new(n, l, z.clone())
                        .map_err(|e| (quantity.clone(), e.to_string()))?;
                    let b = BoundState::new(n2, l2, z)
                        .map_err(|e| (quantity.clone(), e.to_string()))?;
                    let shown = decimals_of(&expected).max(ctx.digits as usize);
                    let prec = prec_for(ctx.digits, expected.len() * 2 + 40);
                    if quantity == "radial" {
                        let k = int("k").map_err(|e| (quantity.clone(), e))?;
                        let label = format!("<{n} {l}| r^{k} |{n2} {l2}>{zs}");
                        let k32 = i32::try_from(k)
                            .map_err(|_| (label.clone(), "k out of range".into()))?;
                        let s = radial_integral(&a, &b, k32)
                            .map_err(|e| (label.clone(), e.to_string()))?;
                        Ok(compare(
                            label,
                            source.clone(),
                            &expected,
                            &tolerance,
                            &surd_float(&s, prec),
                            0.0,
                            shown,
                        ))
                    } else {
                        let label = format!("f({n} {l} -> {n2} {l2}){zs}");
                        let f = kzero_basis::oscillator::oscillator_strength(&a, &b)
                            .map_err(|e| (label.clone(), e.to_string()))?;
                        Ok(compare(
                            label,
                            source.clone(),
                            &expected,
                            &tolerance,
                            &Float::with_val(prec, &f),
                            0.0,
                            shown,
                        ))
                    }
                }
                other => Err((
                    other.to_string(),
                    format!("unknown quantity '{other}' in {name}"),
                )),
            }
        })();
        out.push(match line {
            Ok(l) => l,
            Err((q, why)) => fail(q, source.clone(), expected.clone(), why),
        });
    }
    out
}

/// The level-interval layout (`name,nucleus,upper_n,upper_l,upper_j2,
/// lower_n,lower_l,lower_j2,measured_mhz,measured_unc_mhz,source`): a
/// measured interval against the truncated one-loop shifts of `kzero shift`,
/// passing within the combined truncation and measurement uncertainties.
fn run_interval_file(
    name: &str,
    rdr: &mut csv::Reader<&[u8]>,
    headers: &csv::StringRecord,
    ctx: &mut Ctx,
) -> Vec<CheckLine> {
    let mut out = Vec::new();
    let col = |c: &str| headers.iter().position(|h| h == c);
    let cols = [
        "name",
        "nucleus",
        "upper_n",
        "upper_l",
        "upper_j2",
        "lower_n",
        "lower_l",
        "lower_j2",
        "measured_mhz",
        "measured_unc_mhz",
        "source",
    ];
    if let Some(fail) = missing_column(name, headers, &cols) {
        out.push(fail);
        return out;
    }
    for (i, rec) in rdr.records().enumerate() {
        let rec = match rec {
            Ok(r) => r,
            Err(e) => {
                out.push(record_fail(name, i, &e));
                continue;
            }
        };
        let get = |c: &str| col(c).and_then(|i| rec.get(i)).unwrap_or("").to_string();
        let label = format!("interval {} (MHz)", get("name"));
        let source = get("source");
        let expected = format!("{} +- {}", get("measured_mhz"), get("measured_unc_mhz"));
        let r = (|| -> Result<CheckLine, String> {
            let int = |c: &str| {
                get(c)
                    .parse::<i64>()
                    .map_err(|_| format!("column '{c}' is not an integer"))
            };
            let num = |c: &str| {
                get(c)
                    .parse::<f64>()
                    .map_err(|_| format!("column '{c}' is not a number"))
            };
            let nucleus = kzero_qed::Nucleus::preset(&get("nucleus")).map_err(|e| e.to_string())?;
            let mut shift = |p: &str| -> Result<kzero_qed::LevelShift, String> {
                let lv = kzero_qed::Level::new(
                    int(&format!("{p}_n"))?,
                    int(&format!("{p}_l"))?,
                    int(&format!("{p}_j2"))?,
                )
                .map_err(|e| e.to_string())?;
                let v = ctx.ln_k0(lv.n(), lv.l(), MethodChoice::Green)?;
                let b = {
                    let (x, err) = v.to_f64_with_err();
                    kzero_qed::BetheLog::new(lv.n(), lv.l(), x, err)
                }
                .map_err(|e| e.to_string())?;
                kzero_qed::level_shift(&lv, &nucleus, &b).map_err(|e| e.to_string())
            };
            let up = shift("upper")?;
            let lo = shift("lower")?;
            let measured = num("measured_mhz")?;
            let m_unc = num("measured_unc_mhz")?;
            let computed = up.total_mhz - lo.total_mhz;
            let allowed = up.uncertainty_mhz.hypot(lo.uncertainty_mhz).hypot(m_unc);
            let d = computed - measured;
            Ok(CheckLine {
                quantity: label.clone(),
                source: source.clone(),
                expected: expected.clone(),
                computed: format!(
                    "{computed:.3} +- {:.3}",
                    up.uncertainty_mhz.hypot(lo.uncertainty_mhz)
                ),
                difference: format!("{d:.3}"),
                pass: d.abs() <= allowed,
            })
        })();
        out.push(
            r.unwrap_or_else(|why| fail(label.clone(), source.clone(), expected.clone(), why)),
        );
    }
    out
}

/// <f| H_L - E |f> for a reduced radial function f vanishing at the origin:
/// (1/2) int f'^2 + L(L+1)/2 int f^2/r^2 - Z int f^2/r - E int f^2 (hartree).
fn h_minus_e(f: &PolyExp, big_l: u32, z: &Rational, e: &Rational) -> Result<Rational, String> {
    let rf = f.r_derivative();
    let q = |a: &PolyExp, k: i32| -> Result<Rational, String> {
        let s = a.integral_with(a, k).map_err(|e| e.to_string())?;
        if s.radicand == 1 {
            Ok(s.coef)
        } else {
            Err("integral did not reduce to a rational".into())
        }
    };
    let ll = Rational::from(big_l * (big_l + 1));
    let kin = q(&rf, -2)? / 2u32;
    let cent = q(f, -2)? * ll / 2u32;
    let coul = q(f, -1)? * z;
    let norm = q(f, 0)? * e;
    Ok(kin + cent - coul - norm)
}

fn norm2(f: &PolyExp) -> Result<Rational, String> {
    let s = f.integral_with(f, 0).map_err(|e| e.to_string())?;
    if s.radicand == 1 {
        Ok(s.coef)
    } else {
        Err("integral did not reduce to a rational".into())
    }
}

/// The three closure sum rules for one state: (<p^2>, sum |p|^2 dE, TRK).
fn sum_rules(n: u32, l: u32) -> Result<[Rational; 3], String> {
    let s = BoundState::hydrogen(i64::from(n), i64::from(l)).map_err(|e| e.to_string())?;
    let z = s.z().clone();
    let e = s.energy();
    let mut p2 = Rational::new();
    let mut pde = Rational::new();
    let mut trk = Rational::new();
    let v = radial_function(&s).times_r_pow(2);
    for ch in Channel::open(l) {
        let w = ch.weight(l);
        let big_l = ch.big_l(l);
        let g = gradient_function(&s, ch).map_err(|e| e.to_string())?;
        p2 += Rational::from(&w * &norm2(&g)?);
        pde += Rational::from(&w * &h_minus_e(&g, big_l, &z, &e)?);
        trk += Rational::from(&w * &h_minus_e(&v, big_l, &z, &e)?);
    }
    trk *= Rational::from((2, 3));
    Ok([p2, pde, trk])
}

const SUM_RULE_STATES: [(u32, u32); 8] = [
    (1, 0),
    (2, 0),
    (2, 1),
    (3, 0),
    (3, 2),
    (5, 1),
    (8, 3),
    (12, 0),
];
const CROSS_STATES: [(u32, u32); 5] = [(1, 0), (2, 0), (2, 1), (3, 1), (4, 3)];

fn sum_rule_lines() -> Vec<CheckLine> {
    let mut out = Vec::new();
    for (n, l) in SUM_RULE_STATES {
        let names = [
            (
                format!("sum_m |p_nm|^2 ({n},{l})"),
                "closure: <p^2> = Z^2/n^2 (virial theorem; Bethe & Salpeter 1957)",
                Rational::from((1, n * n)),
            ),
            (
                format!("sum_m |p_nm|^2 (E_m-E_n) ({n},{l})"),
                "2 pi Z |psi(0)|^2 = 2Z^4/n^3 for l=0, else 0 (Bethe & Salpeter 1957)",
                if l == 0 {
                    Rational::from((2, n * n * n))
                } else {
                    Rational::new()
                },
            ),
            (
                format!("TRK sum of f ({n},{l})"),
                "Thomas-Reiche-Kuhn sum rule: sum_m f_nm = 1 (Bethe & Salpeter 1957)",
                Rational::from(1),
            ),
        ];
        match sum_rules(n, l) {
            Ok(vals) => {
                for ((q, src, exp), got) in names.into_iter().zip(vals) {
                    let diff = Rational::from(&got - &exp);
                    out.push(CheckLine {
                        quantity: q,
                        source: src.into(),
                        expected: exp.to_string(),
                        computed: got.to_string(),
                        difference: if diff == 0 {
                            "0 (exact)".into()
                        } else {
                            diff.to_string()
                        },
                        pass: diff == 0,
                    });
                }
            }
            Err(why) => {
                for (q, src, exp) in names {
                    out.push(fail(q, src.into(), exp.to_string(), why.clone()));
                }
            }
        }
    }
    out
}

fn cross_lines(ctx: &mut Ctx) -> Vec<CheckLine> {
    let mut out = Vec::new();
    for (n, l) in CROSS_STATES {
        let q = format!("ln_k0({n},{l}) green vs spectral");
        let src = "independent method: explicit spectral sum (velocity form)".to_string();
        let g = ctx.ln_k0(n, l, MethodChoice::Green);
        let s = ctx.ln_k0(n, l, MethodChoice::Spectral);
        match (g, s) {
            (Ok(g), Ok(s)) => {
                let a = agreement(&g, &s);
                let (digits, ok, d) = (a.digits, a.consistent, a.difference);
                out.push(CheckLine {
                    quantity: q,
                    source: src,
                    expected: s.value_string(),
                    computed: g.value_string(),
                    difference: format!("{d:.2e} ({digits} digits)"),
                    pass: ok,
                });
            }
            (Err(e), _) | (_, Err(e)) => out.push(fail(q, src, "-".into(), e)),
        }
    }
    out
}

/// Runs `kzero check`.
pub fn run(a: &CheckArgs) -> Result<(), AppError> {
    let files: Vec<(String, String)> = match &a.data_dir {
        None => kzero_engine::data_checks::bundled()
            .iter()
            .map(|(n, t)| (n.to_string(), t.to_string()))
            .collect(),
        Some(dir) => {
            let rd = std::fs::read_dir(dir)
                .map_err(|e| AppError::BadInput(format!("--data-dir {}: {e}", dir.display())))?;
            let mut v = Vec::new();
            for e in rd.flatten() {
                let p = e.path();
                if p.extension().is_some_and(|x| x == "csv") {
                    let t = std::fs::read_to_string(&p)
                        .map_err(|e| AppError::BadInput(format!("{}: {e}", p.display())))?;
                    v.push((
                        p.file_name()
                            .unwrap_or_default()
                            .to_string_lossy()
                            .to_string(),
                        t,
                    ));
                }
            }
            v.sort();
            v
        }
    };
    let mut ctx = Ctx {
        digits: a.digits,
        cache: HashMap::new(),
    };
    let mut lines = Vec::new();
    for (name, text) in &files {
        lines.extend(run_data_file(name, text, &mut ctx));
    }
    lines.extend(sum_rule_lines());
    lines.extend(cross_lines(&mut ctx));
    let failed = lines.iter().filter(|l| !l.pass).count();
    if a.json {
        let v: Vec<_> = lines
            .iter()
            .map(|l| {
                json!({
                    "quantity": l.quantity, "source": l.source, "expected": l.expected,
                    "computed": l.computed, "difference": l.difference, "pass": l.pass,
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
