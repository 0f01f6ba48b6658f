//! # kzero-python: the native module `kzero._kzero`
//!
//! The Python package `kzero` (sources in `python/kzero/`, built with
//! maturin from the `pyproject.toml` at the checkout root) is a thin
//! pure-Python layer over this module. This crate only converts arguments and
//! results between Python and [`kzero_engine`]; every computation and every
//! check of the input happens in the library crates, so the package and the
//! `kzero` binary give the same digits and the same error messages.
//!
//! Conventions of this module:
//!
//! * Numbers that carry precision cross the boundary as decimal strings
//!   (never binary floats); the Python layer turns them into
//!   `decimal.Decimal` or `fractions.Fraction`.
//! * Every computation runs with the interpreter released (other Python
//!   threads keep running) and inside `catch_unwind`: a Rust panic becomes a
//!   `RuntimeError("internal error: ...")`, never a crash of the interpreter.
//! * Errors map to the package's exceptions by their class
//!   ([`kzero_engine::ErrorClass`]): bad input to `InvalidInput` (a
//!   `ValueError`), non-convergence to `NoConvergence` (a `RuntimeError`), a
//!   failed cross-check to `MethodsDisagree` (a `RuntimeError`).
//! * Integer arguments are taken at any size: one that does not fit the
//!   command line's integer type is `InvalidInput` with the command line's
//!   message (never an `OverflowError`); a value that is not an integer is
//!   a `TypeError`.
//! * Argument names that the command line spells as options (`--digits`,
//!   `--method`, `--gauge`) appear in messages as the keyword names
//!   (`'digits'`, `'method'`, `'gauge'`); the rest of each message is the
//!   command line's.

use kzero_bethe::Goal;
use kzero_engine::sums::{compute_sums_states, requested_powers, sums_gauge};
use kzero_engine::{
    build_info, catch_panic, compute_states, compute_sums, sums_json, Computed, EngineError,
    ErrorClass, Gauge, MethodChoice, Request, Settings, TableSettings,
};
use pyo3::exceptions::{PyRuntimeError, PyValueError};
use pyo3::prelude::*;
use pyo3::types::{PyDict, PyList};
use std::str::FromStr;
use std::sync::atomic::{AtomicBool, Ordering};
use std::sync::{mpsc, Arc};
use std::time::Duration;

pyo3::create_exception!(
    kzero,
    InvalidInput,
    PyValueError,
    "Bad input: an invalid state, a setting out of range, an unknown name. \
     The message is the one-line message of the kzero command line."
);
pyo3::create_exception!(
    kzero,
    NoConvergence,
    PyRuntimeError,
    "The requested accuracy was not reached: the estimated error stayed \
     above the goal. No number is returned in that case."
);
pyo3::create_exception!(
    kzero,
    MethodsDisagree,
    PyRuntimeError,
    "The Green's-function and the spectral values differ by more than their \
     combined error estimates (method=\"both\"; the command line exits 3). \
     The computed result is attached as the attribute `value` (a \
     kzero.Value, or kzero.Sums for the dipole sums) or `values` (a list, \
     for a table)."
);

/// An engine error as the package's exception.
fn to_py(e: EngineError) -> PyErr {
    let msg = e.to_string();
    match e.class() {
        ErrorClass::BadInput => InvalidInput::new_err(msg),
        ErrorClass::CheckFailed => MethodsDisagree::new_err(msg),
        _ if e.is_no_convergence() => NoConvergence::new_err(msg),
        _ => PyRuntimeError::new_err(msg),
    }
}

/// Runs `f` with the interpreter released, turning a panic into
/// [`EngineError::Internal`].
fn released<T: Send>(
    py: Python<'_>,
    f: impl FnOnce() -> Result<T, EngineError> + Send,
) -> PyResult<T> {
    py.detach(|| catch_panic(f)).map_err(to_py)
}

/// The command line's message for a value that its parser refuses, with the
/// keyword name in place of the option.
fn invalid_value(name: &str, given: &str, detail: &str) -> PyErr {
    InvalidInput::new_err(format!("invalid value '{given}' for '{name}'{detail}"))
}

/// A named choice parsed by the library's `FromStr` (the one spelling of
/// the names).
fn parse_named<T: FromStr>(name: &str, given: &str, accepted: &[&str]) -> PyResult<T> {
    T::from_str(given).map_err(|_| {
        invalid_value(
            name,
            given,
            &format!(" [possible values: {}]", accepted.join(", ")),
        )
    })
}

fn parse_method(given: &str) -> PyResult<MethodChoice> {
    parse_named("method", given, MethodChoice::NAMES)
}

fn parse_gauge(given: &str) -> PyResult<Gauge> {
    parse_named("gauge", given, Gauge::NAMES)
}

/// `digits` as given in Python, checked against the library's range (the
/// command line refuses the same values with the same wording).
fn parse_digits(digits: i64) -> PyResult<u32> {
    use kzero_bethe::settings::{MAX_DIGITS, MIN_DIGITS};
    match u32::try_from(digits) {
        Ok(d) if (MIN_DIGITS..=MAX_DIGITS).contains(&d) => Ok(d),
        _ => Err(invalid_value(
            "digits",
            &digits.to_string(),
            &format!(": {digits} is not in {MIN_DIGITS}..={MAX_DIGITS}"),
        )),
    }
}

/// The dipole form of a call: the library's rule ([`MethodChoice::gauge`])
/// decides, so a form given with the Green's function method alone is
/// refused as on the command line (keyword names in place of options).
fn choose_gauge(method: MethodChoice, gauge: Option<&str>) -> PyResult<Gauge> {
    let given = gauge.map(parse_gauge).transpose()?;
    method.gauge(given).map_err(|e| {
        InvalidInput::new_err(
            e.to_string()
                .replace("--gauge", "gauge")
                .replace("--method", "method"),
        )
    })
}

/// The request of one call: method, gauge and the absolute goal 10^-digits.
fn request(digits: i64, method: &str, gauge: Option<&str>) -> PyResult<Request> {
    let method = parse_method(method)?;
    let gauge = choose_gauge(method, gauge)?;
    let digits = parse_digits(digits)?;
    Ok(Request {
        method,
        gauge,
        settings: Settings::with_digits(digits),
    })
}

/// One method's value as a dict of plain values.
fn value_dict<'py>(py: Python<'py>, v: &kzero_engine::BetheValue) -> PyResult<Bound<'py, PyDict>> {
    let d = PyDict::new(py);
    d.set_item("n", v.n)?;
    d.set_item("l", v.l)?;
    d.set_item("value", v.value_string())?;
    d.set_item("abs_err", v.abs_err_string())?;
    d.set_item("digits", v.digits)?;
    d.set_item("method", v.method.name())?;
    d.set_item("bits", v.bits)?;
    d.set_item("nodes", v.nodes)?;
    d.set_item("terms", v.terms)?;
    d.set_item("seconds", v.seconds)?;
    Ok(d)
}

/// A computed state as a dict: the primary value's fields, the method
/// setting, the gauge where the spectral method ran, and with both methods
/// `spectral` (a dict), `agreement`, `consistent` and `disagreement` (the
/// command line's message when they disagree, else `None`).
fn computed_dict<'py>(
    py: Python<'py>,
    c: &Computed,
    req: &Request,
) -> PyResult<Bound<'py, PyDict>> {
    let d = value_dict(py, c.primary())?;
    d.set_item("method", req.method.name())?;
    d.set_item("seconds", c.seconds())?;
    if req.method != MethodChoice::Green {
        d.set_item("gauge", req.gauge.name())?;
    }
    if let (Some(s), Some(a)) = (c.spectral().filter(|_| c.green().is_some()), c.agreement()) {
        d.set_item("spectral", value_dict(py, s)?)?;
        d.set_item("agreement", a.digits)?;
        d.set_item("consistent", a.consistent)?;
        d.set_item(
            "disagreement",
            c.check_agreement().err().map(|e| e.to_string()),
        )?;
    }
    Ok(d)
}

/// ln k0(n, l) with the requested method(s); see `kzero.ln_k0`.
///
/// A disagreement of the two methods is not raised here: the result carries
/// the message (`disagreement`) and the Python layer raises
/// `MethodsDisagree` with the value attached.
#[pyfunction]
#[pyo3(signature = (n, l, digits, method, gauge))]
fn ln_k0<'py>(
    py: Python<'py>,
    n: Int<'_>,
    l: Int<'_>,
    digits: Int<'_>,
    method: &str,
    gauge: Option<&str>,
) -> PyResult<Bound<'py, PyDict>> {
    let (n, l) = (int_arg("n", &n)?, int_arg("l", &l)?);
    let req = request(int_arg("digits", &digits)?, method, gauge)?;
    let (n, l) = kzero_engine::validate_state(n, l, req.method).map_err(to_py)?;
    let c = released(py, || req.compute(n, l))?;
    computed_dict(py, &c, &req)
}

/// How often a running table looks for a pending signal (Ctrl-C).
const SIGNAL_POLL: Duration = Duration::from_millis(100);

/// Runs `work(stop)` on a separate thread while this one waits with the
/// interpreter released, waking every [`SIGNAL_POLL`] to run the Python
/// signal handlers. A `KeyboardInterrupt` (or any exception a handler
/// raises) makes `stop()` true, so `work` starts nothing further, and is
/// raised at once; what is already running finishes in the background and
/// is dropped. A panic in `work` becomes an internal error.
fn interruptible<T: Send + 'static>(
    py: Python<'_>,
    work: impl FnOnce(&(dyn Fn() -> bool + Sync)) -> Result<T, EngineError> + Send + 'static,
) -> PyResult<T> {
    let cancel = Arc::new(AtomicBool::new(false));
    let (tx, rx) = mpsc::channel();
    {
        let cancel = Arc::clone(&cancel);
        std::thread::Builder::new()
            .name("kzero-batch".into())
            .spawn(move || {
                let stop = || cancel.load(Ordering::Relaxed);
                let r = catch_panic(|| work(&stop));
                // The receiver is gone after an interrupt; nothing to report then.
                let _ = tx.send(r);
            })
            .map_err(|e| PyRuntimeError::new_err(format!("cannot start a thread: {e}")))?;
    }
    let mut rx = rx;
    loop {
        // The receiver moves into the released section and back (it is not Sync).
        let (back, got) = py.detach(move || {
            let got = rx.recv_timeout(SIGNAL_POLL);
            (rx, got)
        });
        rx = back;
        match got {
            Ok(r) => return r.map_err(to_py),
            Err(mpsc::RecvTimeoutError::Timeout) => {
                if let Err(e) = py.check_signals() {
                    cancel.store(true, Ordering::Relaxed);
                    return Err(e);
                }
            }
            Err(mpsc::RecvTimeoutError::Disconnected) => {
                return Err(PyRuntimeError::new_err(
                    "internal error: the batch thread ended without a result",
                ))
            }
        }
    }
}

/// Many states in parallel; see `kzero.table`. Ctrl-C works as described
/// in [`interruptible`]: no further state starts.
///
/// Returns the computed states as dicts, sorted by (n, l). Failed states
/// raise: the first failure (by (n, l)) with the command line's wording
/// `state (n=.., l=..): ...`.
#[pyfunction]
#[pyo3(signature = (states, digits, method, gauge, threads))]
fn table<'py>(
    py: Python<'py>,
    states: Vec<(Int<'_>, Int<'_>)>,
    digits: Int<'_>,
    method: &str,
    gauge: Option<&str>,
    threads: Option<Int<'_>>,
) -> PyResult<Bound<'py, PyList>> {
    let req = request(int_arg("digits", &digits)?, method, gauge)?;
    let threads = parse_threads(threads)?;
    let mut keys = Vec::with_capacity(states.len());
    for (n, l) in states {
        let (n, l) = (int_arg("n", &n)?, int_arg("l", &l)?);
        keys.push(kzero_engine::validate_state(n, l, req.method).map_err(to_py)?);
    }
    let req_for_thread = req.clone();
    let batch = interruptible(py, move |stop| {
        compute_states(&keys, &req_for_thread, threads, stop)
    })?;
    let out = PyList::empty(py);
    let mut failures = Vec::new();
    for r in batch.results {
        match r.result {
            Ok(c) => out.append(computed_dict(py, &c, &req)?)?,
            Err(e) => failures.push((r.n, r.l, e)),
        }
    }
    match batch_failure(&failures) {
        Some(e) => Err(e),
        None => Ok(out),
    }
}

/// `threads` as given in Python: `None` (every CPU) or 1..=4096.
fn parse_threads(threads: Option<Int<'_>>) -> PyResult<Option<usize>> {
    match threads.map(|t| int_arg("threads", &t)).transpose()? {
        None => Ok(None),
        Some(t) if (1..=4096).contains(&t) => Ok(Some(t as usize)),
        Some(t) => Err(invalid_value(
            "threads",
            &t.to_string(),
            &format!(": {t} is not in 1..=4096"),
        )),
    }
}

/// The exception of a batch with failed states (sorted by (n, l)): the
/// first failure with the command line's wording `state (n=.., l=..): ...`
/// and the count of the others; `InvalidInput` when every failure is bad
/// input, `NoConvergence` when the first is a missed goal.
fn batch_failure(failures: &[(u32, u32, EngineError)]) -> Option<PyErr> {
    let (n, l, first) = failures.first()?;
    let more = if failures.len() > 1 {
        format!(" (and {} more failed states)", failures.len() - 1)
    } else {
        String::new()
    };
    let msg = format!("state (n={n}, l={l}): {first}{more}");
    let all_bad = failures
        .iter()
        .all(|(_, _, e)| e.class() == ErrorClass::BadInput);
    Some(if all_bad {
        InvalidInput::new_err(msg)
    } else if first.is_no_convergence() {
        NoConvergence::new_err(msg)
    } else {
        PyRuntimeError::new_err(msg)
    })
}

/// The states of a table over a range, selected and checked by the library
/// as `kzero table --n-min --n-max --l` does (sorted by (n, l)); messages
/// name the keywords `n_min`, `n_max`, `l` where the command line names its
/// options.
#[pyfunction]
#[pyo3(signature = (n_min, n_max, l))]
fn range_states(
    n_min: Int<'_>,
    n_max: Int<'_>,
    l: Option<Vec<Int<'_>>>,
) -> PyResult<Vec<(u32, u32)>> {
    let (n_min, n_max) = (int_arg("n_min", &n_min)?, int_arg("n_max", &n_max)?);
    let l = l
        .map(|ls| {
            ls.iter()
                .map(|x| int_arg("l", x))
                .collect::<PyResult<Vec<_>>>()
        })
        .transpose()?;
    let s = TableSettings::new(
        n_min,
        n_max,
        l.as_deref(),
        None,
        Settings::default().digits,
        MethodChoice::default(),
        Gauge::default(),
    )
    .map_err(|e| {
        let msg = e
            .to_string()
            .replace("--n-max", "n_max")
            .replace("--n-min", "n_min")
            .replace("--l ", "l ");
        InvalidInput::new_err(msg)
    })?;
    Ok(s.states())
}

/// A precision sweep of one state; see `kzero.sweep`. One dict per rung
/// (in increasing digits): `value` (the rung's computed value as the dict
/// of [`value_dict`]), the printed `ln_k0` and `abs_err`, `actual_err`
/// (`None` for the reference rung) and `covered`.
#[pyfunction]
#[pyo3(signature = (n, l, digits, method, gauge))]
fn sweep<'py>(
    py: Python<'py>,
    n: Int<'_>,
    l: Int<'_>,
    digits: Vec<Int<'_>>,
    method: &str,
    gauge: Option<&str>,
) -> PyResult<Bound<'py, PyList>> {
    let (n, l) = (int_arg("n", &n)?, int_arg("l", &l)?);
    let method = parse_method(method)?;
    let gauge = choose_gauge(method, gauge)?;
    let mut ladder = Vec::with_capacity(digits.len());
    for d in &digits {
        ladder.push(parse_digits(int_arg("digits", d)?)?);
    }
    let s = released(py, || {
        kzero_engine::sweep::sweep(n, l, method, gauge, &ladder, Goal::Absolute)
    })?;
    let out = PyList::empty(py);
    for p in &s.points {
        let d = PyDict::new(py);
        d.set_item("digits", p.value.digits)?;
        d.set_item("ln_k0", &p.printed.value)?;
        d.set_item("abs_err", &p.printed.abs_err)?;
        d.set_item(
            "actual_err",
            p.actual_err.map(kzero_bethe::value::format_err),
        )?;
        d.set_item("covered", p.covered)?;
        d.set_item("value", value_dict(py, &p.value)?)?;
        out.append(d)?;
    }
    Ok(out)
}

/// An exact rational as (numerator, denominator) decimal strings.
fn ratio(q: &rug::Rational) -> (String, String) {
    (q.numer().to_string(), q.denom().to_string())
}

/// An exact radial integral; see `kzero.radial`. `rational` is (numerator,
/// denominator) when the value is rational, else `None`.
#[pyfunction]
#[pyo3(signature = (n, l, n2, l2, power, digits))]
fn radial<'py>(
    py: Python<'py>,
    n: Int<'_>,
    l: Int<'_>,
    n2: Int<'_>,
    l2: Int<'_>,
    power: Int<'_>,
    digits: Int<'_>,
) -> PyResult<Bound<'py, PyDict>> {
    let (n, l) = (int_arg("n", &n)?, int_arg("l", &l)?);
    let (n2, l2) = (int_arg("n2", &n2)?, int_arg("l2", &l2)?);
    let power = int_arg("power", &power)?;
    let digits = parse_digits(int_arg("digits", &digits)?)?;
    let power = i32::try_from(power).map_err(|_| {
        invalid_value(
            "power",
            &power.to_string(),
            &format!(": {power} is not in {}..={}", i32::MIN, i32::MAX),
        )
    })?;
    let r = released(py, || {
        kzero_engine::exact::radial(n, l, n2, l2, power, digits)
    })?;
    let d = PyDict::new(py);
    let rational = (r.value.radicand == 1 || r.value.coef == 0).then(|| ratio(&r.value.coef));
    d.set_item("rational", rational)?;
    d.set_item("exact", &r.exact)?;
    d.set_item("value", &r.decimal.value)?;
    d.set_item("abs_err", &r.decimal.abs_err)?;
    d.set_item("digits", digits)?;
    Ok(d)
}

/// An exact oscillator strength as (numerator, denominator); see
/// `kzero.oscillator`.
#[pyfunction]
#[pyo3(signature = (n, l, n2, l2))]
fn oscillator(
    py: Python<'_>,
    n: Int<'_>,
    l: Int<'_>,
    n2: Int<'_>,
    l2: Int<'_>,
) -> PyResult<(String, String)> {
    let (n, l) = (int_arg("n", &n)?, int_arg("l", &l)?);
    let (n2, l2) = (int_arg("n2", &n2)?, int_arg("l2", &l2)?);
    let digits = Settings::default().digits;
    let f = released(py, || kzero_engine::exact::oscillator(n, l, n2, l2, digits))?;
    Ok(ratio(&f.value))
}

/// The truncated one-loop QED shift of the level (n, l, j = j2/2), as the
/// JSON text of `kzero shift --json`; see `kzero.shift`.
#[pyfunction]
#[pyo3(signature = (n, l, j, nucleus, z, mass, radius, digits))]
#[allow(clippy::too_many_arguments)]
fn shift(
    py: Python<'_>,
    n: i64,
    l: i64,
    j: &str,
    nucleus: Option<&str>,
    z: Option<i64>,
    mass: Option<&str>,
    radius: Option<f64>,
    digits: i64,
) -> PyResult<String> {
    let digits = parse_digits(digits)?;
    let settings = Settings::with_digits(digits);
    let nuc = kzero_engine::shift::nucleus(nucleus, z, mass, radius).map_err(keyword_names)?;
    let j2 = kzero_qed::level::parse_j(j).map_err(|e| to_py(e.into()))?;
    let level = kzero_qed::Level::new(n, l, i64::from(j2)).map_err(|e| to_py(e.into()))?;
    let r = released(py, || {
        kzero_engine::shift::shift_level(&level, &nuc, &settings, false)
    })?;
    Ok(kzero_engine::shift::level_json(&r, &settings).to_string())
}

/// An integer argument as Python gives it (any size; see [`int_arg`]).
type Int<'py> = Bound<'py, PyAny>;

/// An integer argument as `i64`. An integer beyond 64 bits is refused with
/// the command line's message for a number that does not fit (keyword name
/// in place of the option); a value that is not an integer is a
/// `TypeError`.
fn int_arg(name: &str, x: &Int<'_>) -> PyResult<i64> {
    match x.extract::<i64>() {
        Ok(v) => Ok(v),
        Err(_) if x.is_instance_of::<pyo3::types::PyInt>() => Err(invalid_value(
            name,
            &x.str()?.to_string(),
            fit_detail(x.lt(0)?),
        )),
        Err(e) => Err(e),
    }
}

/// The command line's detail for an integer that does not fit its type.
fn fit_detail(negative: bool) -> &'static str {
    if negative {
        ": number too small to fit in target type"
    } else {
        ": number too large to fit in target type"
    }
}

/// The powers k as given in Python: `None` for every supported power, else
/// each an integer ([`int_arg`]); the library checks the range.
fn parse_powers(k: Option<Vec<Int<'_>>>) -> PyResult<Option<Vec<i64>>> {
    k.map(|items| items.iter().map(|x| int_arg("k", x)).collect())
        .transpose()
}

/// The dipole sums of one state as the JSON text of `kzero sums --json`,
/// with the command line's disagreement message when the two methods
/// differ (else `None`); see `kzero.sums`.
///
/// A disagreement is not raised here: the Python layer raises
/// `MethodsDisagree` with the result attached.
#[pyfunction]
#[pyo3(signature = (n, l, k, digits, method, gauge, nucleus, z, mass))]
#[allow(clippy::too_many_arguments)]
fn sums(
    py: Python<'_>,
    n: Int<'_>,
    l: Int<'_>,
    k: Option<Vec<Int<'_>>>,
    digits: Int<'_>,
    method: &str,
    gauge: Option<&str>,
    nucleus: Option<&str>,
    z: Option<Int<'_>>,
    mass: Option<&str>,
) -> PyResult<(String, Option<String>)> {
    let (n, l) = (int_arg("n", &n)?, int_arg("l", &l)?);
    let call = sums_call(k, digits, method, gauge, nucleus, z, mass)?;
    let ks = requested_powers(call.ks.as_deref());
    let c = released(py, || {
        compute_sums(n, l, &ks, call.method, call.gauge, &call.settings)
    })?;
    let text = sums_json(&c, &call.nucleus).to_string();
    Ok((text, c.check_agreement().err().map(|e| e.to_string())))
}

/// The settings of a dipole-sum call, checked in the command line's order:
/// powers (parsed), digits, method, the dipole form ([`sums_gauge`]),
/// nucleus.
struct SumsCall {
    ks: Option<Vec<i64>>,
    method: MethodChoice,
    gauge: Gauge,
    settings: Settings,
    nucleus: kzero_qed::Nucleus,
}

fn sums_call(
    k: Option<Vec<Int<'_>>>,
    digits: Int<'_>,
    method: &str,
    gauge: Option<&str>,
    nucleus: Option<&str>,
    z: Option<Int<'_>>,
    mass: Option<&str>,
) -> PyResult<SumsCall> {
    let ks = parse_powers(k)?;
    let digits = parse_digits(int_arg("digits", &digits)?)?;
    let method = parse_method(method)?;
    let given = gauge.map(parse_gauge).transpose()?;
    let gauge = sums_gauge(method, given).map_err(keyword_names)?;
    let z = z.map(|z| int_arg("z", &z)).transpose()?;
    let nucleus = kzero_engine::shift::nucleus(nucleus, z, mass, None).map_err(keyword_names)?;
    Ok(SumsCall {
        ks,
        method,
        gauge,
        settings: Settings::with_digits(digits),
        nucleus,
    })
}

/// The dipole sums of many states in parallel, as the JSON text of `kzero
/// sums --json` of each state (sorted by (n, l), duplicates dropped) with
/// the disagreement message of each (`None` when the methods agree or one
/// ran); see `kzero.table(..., sums=...)`. The powers and the states are
/// checked before any work; Ctrl-C as in [`interruptible`]; failed states
/// raise as in `table`.
#[pyfunction]
#[pyo3(signature = (states, k, digits, method, gauge, threads, nucleus, z, mass))]
#[allow(clippy::too_many_arguments)]
fn sums_table(
    py: Python<'_>,
    states: Vec<(Int<'_>, Int<'_>)>,
    k: Option<Vec<Int<'_>>>,
    digits: Int<'_>,
    method: &str,
    gauge: Option<&str>,
    threads: Option<Int<'_>>,
    nucleus: Option<&str>,
    z: Option<Int<'_>>,
    mass: Option<&str>,
) -> PyResult<Vec<(String, Option<String>)>> {
    let call = sums_call(k, digits, method, gauge, nucleus, z, mass)?;
    let threads = parse_threads(threads)?;
    let ks = requested_powers(call.ks.as_deref());
    // worded as `kzero table --sums` (keyword name in place of the option)
    kzero_bethe::sums::validate_powers(&ks)
        .map_err(|e| InvalidInput::new_err(format!("sums: {e}")))?;
    let mut keys = Vec::with_capacity(states.len());
    for (n, l) in states {
        let (n, l) = (int_arg("n", &n)?, int_arg("l", &l)?);
        keys.push(kzero_engine::validate_state(n, l, call.method).map_err(to_py)?);
    }
    let (method, gauge, settings) = (call.method, call.gauge, call.settings.clone());
    let batch = interruptible(py, move |stop| {
        compute_sums_states(&keys, &ks, method, gauge, &settings, threads, stop)
    })?;
    let mut out = Vec::with_capacity(batch.results.len());
    let mut failures = Vec::new();
    for r in batch.results {
        match r.result {
            Ok(c) => out.push((
                sums_json(&c, &call.nucleus).to_string(),
                c.check_agreement().err().map(|e| e.to_string()),
            )),
            Err(e) => failures.push((r.n, r.l, e)),
        }
    }
    match batch_failure(&failures) {
        Some(e) => Err(e),
        None => Ok(out),
    }
}

/// A bad-input error with the keyword names of the package in place of the
/// command line's options (`--nucleus`, `--mass`, `--radius`, `--z`,
/// `--gauge`, `--method`).
fn keyword_names(e: EngineError) -> PyErr {
    if e.class() != ErrorClass::BadInput {
        return to_py(e);
    }
    let msg = e
        .to_string()
        .replace("--nucleus", "nucleus")
        .replace("--mass M", "mass")
        .replace("--mass", "mass")
        .replace("--radius", "radius")
        .replace("--z", "z")
        .replace("--gauge", "gauge")
        .replace("--method", "method");
    InvalidInput::new_err(msg)
}

/// Versions and git revision of this build, with the provenance keys of a
/// table header (`command` is this process's command line, `started_utc`
/// the time of the call).
#[pyfunction]
fn build_info_dict(py: Python<'_>) -> PyResult<Bound<'_, PyDict>> {
    let d = PyDict::new(py);
    let p = kzero_engine::Provenance::now(build_info::command_line());
    for (k, v) in p.pairs() {
        d.set_item(k, v)?;
    }
    Ok(d)
}

/// The native module `kzero._kzero`.
#[pymodule]
fn _kzero(m: &Bound<'_, PyModule>) -> PyResult<()> {
    let py = m.py();
    m.add("__version__", build_info::VERSION)?;
    m.add("MAX_N", kzero_bethe::settings::MAX_N)?;
    m.add(
        "SUM_POWERS",
        pyo3::types::PyTuple::new(py, kzero_bethe::sums::all_powers())?,
    )?;
    m.add("InvalidInput", py.get_type::<InvalidInput>())?;
    m.add("NoConvergence", py.get_type::<NoConvergence>())?;
    m.add("MethodsDisagree", py.get_type::<MethodsDisagree>())?;
    m.add_function(wrap_pyfunction!(ln_k0, m)?)?;
    m.add_function(wrap_pyfunction!(table, m)?)?;
    m.add_function(wrap_pyfunction!(build_info_dict, m)?)?;
    m.add_function(wrap_pyfunction!(range_states, m)?)?;
    m.add_function(wrap_pyfunction!(sweep, m)?)?;
    m.add_function(wrap_pyfunction!(radial, m)?)?;
    m.add_function(wrap_pyfunction!(oscillator, m)?)?;
    m.add_function(wrap_pyfunction!(shift, m)?)?;
    m.add_function(wrap_pyfunction!(sums, m)?)?;
    m.add_function(wrap_pyfunction!(sums_table, m)?)?;
    Ok(())
}
