//! Typed errors of the engine.

use kzero_basis::BasisError;
use kzero_bethe::BetheError;
use kzero_qed::QedError;
use thiserror::Error;

/// Everything that can go wrong in an engine call.
///
/// [`EngineError::class`] says whether the caller's input was at fault (a
/// front end maps that to its own exit codes or exceptions).
#[derive(Debug, Error)]
#[non_exhaustive]
pub enum EngineError {
    /// An error of a Bethe-logarithm method (bad state or digits, gauge not
    /// available, non-convergence).
    #[error(transparent)]
    Bethe(#[from] BetheError),
    /// An error of the exact basis (bad state, integral out of range).
    #[error(transparent)]
    Basis(#[from] BasisError),
    /// An error of the QED level-shift assembly.
    #[error(transparent)]
    Qed(#[from] QedError),
    /// A panic inside one computation, caught and turned into an error (one
    /// failing state never takes a batch down).
    #[error("internal error: {message}")]
    Internal {
        /// The first line of the panic message.
        message: String,
    },
    /// The two methods differ beyond their combined error estimates (see
    /// [`crate::Computed::check_agreement`]).
    #[error("methods disagree at (n={n}, l={l}): green {green} +- {green_err} vs spectral {spectral} +- {spectral_err} ({digits} agreeing digits)")]
    MethodsDisagree {
        /// n.
        n: u32,
        /// l.
        l: u32,
        /// The Green's-function value (decimal string).
        green: String,
        /// Its error estimate.
        green_err: String,
        /// The spectral value (decimal string).
        spectral: String,
        /// Its error estimate.
        spectral_err: String,
        /// Agreeing decimal digits.
        digits: u32,
    },
    /// A nucleus request of a level shift that cannot be met.
    #[error(transparent)]
    Nucleus(#[from] crate::shift::NucleusError),
    /// A computed ln k0 that the QED assembly does not accept (not finite).
    #[error("the engine returned an unusable ln k0: {source}")]
    UnusableLnK0 {
        /// Why.
        source: QedError,
    },
    /// The two methods give dipole sums that differ beyond their combined
    /// error estimates (see [`crate::ComputedSums::check_agreement`]).
    #[error("methods disagree at (n={n}, l={l}) on {quantity}({k}): green {green} vs spectral {spectral}")]
    SumsDisagree {
        /// n.
        n: u32,
        /// l.
        l: u32,
        /// The power k.
        k: i32,
        /// `S` or `L`.
        quantity: &'static str,
        /// The Green's-function value and error (decimal strings).
        green: String,
        /// The spectral value and error (decimal strings).
        spectral: String,
    },
    /// A dipole form was chosen for a method that has none (the Green's
    /// function method): an option the method would ignore is refused.
    #[error("--gauge selects the dipole form of the spectral method; the green method has none (use --method spectral or both)")]
    UnusedGauge,
    /// A precision sweep needs one method.
    #[error("sweep takes --method green or --method spectral (run it once for each)")]
    SweepMethod,
    /// A precision sweep without any digits.
    #[error("--digits list is empty")]
    EmptyLadder,
    /// A table file, selection or output problem.
    #[error(transparent)]
    Table(#[from] crate::table::TableError),
    /// A data-check folder problem.
    #[error(transparent)]
    Check(#[from] crate::check::CheckError),
    /// The worker threads of a batch could not be started.
    #[error("cannot start {threads} threads: {message}")]
    Threads {
        /// Threads requested.
        threads: usize,
        /// The reason given by the thread pool.
        message: String,
    },
}

/// Whose fault an error is.
#[derive(Debug, Clone, Copy, PartialEq, Eq, Hash)]
#[non_exhaustive]
pub enum ErrorClass {
    /// The input was unusable (an invalid state, digits out of range, a
    /// gauge not available, a foreign or damaged file, contradicting
    /// options).
    BadInput,
    /// A cross-check failed: two methods disagree beyond their combined
    /// estimates, or an outside check did not pass.
    CheckFailed,
    /// The input was fine, the computation or the system failed
    /// (non-convergence, I/O, an internal error).
    Failure,
}

impl EngineError {
    /// Whose fault the error is.
    pub fn class(&self) -> ErrorClass {
        match self {
            EngineError::Bethe(e) => bethe_class(e),
            EngineError::Basis(_)
            | EngineError::Qed(_)
            | EngineError::Nucleus(_)
            | EngineError::SweepMethod
            | EngineError::UnusedGauge
            | EngineError::EmptyLadder
            | EngineError::Check(_) => ErrorClass::BadInput,
            EngineError::Table(t) => {
                if t.is_bad_input() {
                    ErrorClass::BadInput
                } else {
                    ErrorClass::Failure
                }
            }
            EngineError::MethodsDisagree { .. } | EngineError::SumsDisagree { .. } => {
                ErrorClass::CheckFailed
            }
            EngineError::Internal { .. }
            | EngineError::Threads { .. }
            | EngineError::UnusableLnK0 { .. } => ErrorClass::Failure,
        }
    }

    /// Whether the error is a method's non-convergence (the goal was not
    /// reached; no number is returned).
    pub fn is_no_convergence(&self) -> bool {
        matches!(self, EngineError::Bethe(BetheError::NoConvergence { .. }))
    }
}

/// The class of a method error: everything but non-convergence (and other
/// failures of the computation itself) is bad input.
pub fn bethe_class(e: &BetheError) -> ErrorClass {
    match e {
        BetheError::InvalidState { .. }
        | BetheError::OutOfRange { .. }
        | BetheError::DigitsOutOfRange { .. }
        | BetheError::GoalOutOfReach { .. }
        | BetheError::PowerOutOfRange { .. }
        | BetheError::NoPowers
        | BetheError::GoalUnsupported { .. }
        | BetheError::GaugeUnsupported { .. }
        | BetheError::Basis(_) => ErrorClass::BadInput,
        _ => ErrorClass::Failure,
    }
}
