//! # kzero-python: the native module `kzero._kzero`
//!
//! The Python package `kzero` (sources in `python/kzero/`, built with
//! maturin from the `pyproject.toml` at the checkout root) is a thin
//! pure-Python layer over this module. This crate only converts arguments and
//! results between Python and the library crates; every computation and every
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
//! * Errors map to the package's exceptions: bad input to `InvalidInput` (a
//!   `ValueError`), a goal that was not reached to `NoConvergence` (a
//!   `RuntimeError`).

use pyo3::exceptions::{PyRuntimeError, PyValueError};
use pyo3::prelude::*;
use pyo3::types::PyDict;
use std::panic::{self, AssertUnwindSafe};

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
     above the goal 10^-digits. No number is returned in that case."
);
pyo3::create_exception!(
    kzero,
    MethodsDisagree,
    PyRuntimeError,
    "The Green's-function and the spectral values differ by more than their \
     combined error estimates (method=\"both\"; the command line exits 3)."
);

/// A failure of one call, before it becomes a Python exception.
#[derive(Debug)]
enum Failure {
    /// Bad input (`InvalidInput`).
    Invalid(String),
    /// The accuracy goal was not reached (`NoConvergence`).
    NoConvergence(String),
    /// Anything else, including a caught panic (`RuntimeError`).
    Other(String),
}

impl From<Failure> for PyErr {
    fn from(f: Failure) -> PyErr {
        match f {
            Failure::Invalid(m) => InvalidInput::new_err(m),
            Failure::NoConvergence(m) => NoConvergence::new_err(m),
            Failure::Other(m) => PyRuntimeError::new_err(m),
        }
    }
}

impl From<kzero_bethe::BetheError> for Failure {
    fn from(e: kzero_bethe::BetheError) -> Self {
        use kzero_bethe::BetheError as E;
        match e {
            E::InvalidState { .. }
            | E::OutOfRange { .. }
            | E::DigitsOutOfRange { .. }
            | E::GaugeUnsupported { .. }
            | E::Basis(_) => Failure::Invalid(e.to_string()),
            E::NoConvergence { .. } => Failure::NoConvergence(e.to_string()),
            _ => Failure::Other(e.to_string()),
        }
    }
}

/// Runs `f` with the interpreter released, turning a panic into
/// [`Failure::Other`].
fn guarded<T: Send>(
    py: Python<'_>,
    f: impl FnOnce() -> Result<T, Failure> + Send,
) -> Result<T, Failure> {
    py.detach(|| match panic::catch_unwind(AssertUnwindSafe(f)) {
        Ok(r) => r,
        Err(payload) => {
            let msg = payload
                .downcast_ref::<&str>()
                .map(|s| s.to_string())
                .or_else(|| payload.downcast_ref::<String>().cloned())
                .unwrap_or_else(|| "unknown cause".into());
            Err(Failure::Other(format!(
                "internal error: {}",
                msg.lines().next().unwrap_or("")
            )))
        }
    })
}

/// The method names accepted by `ln_k0`.
fn parse_method(s: &str) -> Result<kzero_bethe::Method, Failure> {
    match s {
        "green" => Ok(kzero_bethe::Method::Green),
        "spectral" => Ok(kzero_bethe::Method::Spectral),
        _ => Err(Failure::Invalid(format!(
            "invalid value '{s}' for 'method' [possible values: green, spectral]"
        ))),
    }
}

/// The gauge names accepted by `ln_k0`.
fn parse_gauge(s: &str) -> Result<kzero_bethe::Gauge, Failure> {
    use kzero_bethe::Gauge;
    match s {
        "velocity" => Ok(Gauge::Velocity),
        "length" => Ok(Gauge::Length),
        "acceleration" => Ok(Gauge::Acceleration),
        _ => Err(Failure::Invalid(format!(
            "invalid value '{s}' for 'gauge' [possible values: velocity, length, acceleration]"
        ))),
    }
}

/// Converts `digits` as given in Python to the library's settings. Out of
/// range, the message is the command line's for `--digits`, with the keyword
/// name in place of the option.
fn digits_setting(digits: i64) -> Result<kzero_bethe::Settings, Failure> {
    use kzero_bethe::settings::{MAX_DIGITS, MIN_DIGITS};
    match u32::try_from(digits) {
        Ok(d) if (MIN_DIGITS..=MAX_DIGITS).contains(&d) => {
            Ok(kzero_bethe::Settings::with_digits(d))
        }
        _ => Err(Failure::Invalid(format!(
            "invalid value '{digits}' for 'digits': {digits} is not in {MIN_DIGITS}..={MAX_DIGITS}"
        ))),
    }
}

/// One Bethe logarithm as a dict of plain values (the Python layer builds a
/// `kzero.Value` from it).
fn value_dict<'py>(py: Python<'py>, v: &kzero_bethe::BetheValue) -> PyResult<Bound<'py, PyDict>> {
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

/// ln k0(n, l) by one method; see `kzero.ln_k0` for the contract.
#[pyfunction]
#[pyo3(signature = (n, l, digits, method, gauge))]
fn ln_k0<'py>(
    py: Python<'py>,
    n: i64,
    l: i64,
    digits: i64,
    method: &str,
    gauge: &str,
) -> PyResult<Bound<'py, PyDict>> {
    let m = parse_method(method)?;
    let g = parse_gauge(gauge)?;
    let settings = digits_setting(digits)?;
    let v = guarded(py, move || {
        let (n, l) = kzero_bethe::settings::validate_state(n, l, m.name())?;
        let (n, l) = (i64::from(n), i64::from(l));
        Ok(match m {
            kzero_bethe::Method::Green => kzero_bethe::green::ln_k0(n, l, &settings)?,
            kzero_bethe::Method::Spectral => kzero_bethe::spectral::ln_k0(n, l, g, &settings)?,
        })
    })?;
    value_dict(py, &v)
}

/// The native module `kzero._kzero`.
#[pymodule]
fn _kzero(m: &Bound<'_, PyModule>) -> PyResult<()> {
    let py = m.py();
    m.add("__version__", env!("CARGO_PKG_VERSION"))?;
    m.add("InvalidInput", py.get_type::<InvalidInput>())?;
    m.add("NoConvergence", py.get_type::<NoConvergence>())?;
    m.add("MethodsDisagree", py.get_type::<MethodsDisagree>())?;
    m.add_function(wrap_pyfunction!(ln_k0, m)?)?;
    Ok(())
}
