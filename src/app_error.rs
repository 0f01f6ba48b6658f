//! Errors of the `kzero` binary and their exit codes.
//!
//! Exit codes: 0 success, 1 anything else, 2 bad input, 3 a check or a
//! cross-method comparison failed.

use std::fmt;

/// An error that ends a `kzero` command, with the exit code it maps to.
#[derive(Debug)]
pub enum AppError {
    /// Bad input from the user (exit code 2): malformed arguments, an
    /// invalid state, a missing or foreign input file.
    BadInput(String),
    /// A check or a cross-method comparison failed (exit code 3).
    CheckFailed(String),
    /// Anything else (exit code 1): I/O failures, non-convergence.
    Other(String),
}

impl AppError {
    /// The process exit code for this error.
    pub fn exit_code(&self) -> i32 {
        match self {
            AppError::BadInput(_) => 2,
            AppError::CheckFailed(_) => 3,
            AppError::Other(_) => 1,
        }
    }
}

impl fmt::Display for AppError {
    fn fmt(&self, f: &mut fmt::Formatter<'_>) -> fmt::Result {
        match self {
            AppError::BadInput(m) | AppError::CheckFailed(m) | AppError::Other(m) => f.write_str(m),
        }
    }
}

impl From<kzero_engine::EngineError> for AppError {
    fn from(e: kzero_engine::EngineError) -> Self {
        match e.class() {
            kzero_engine::ErrorClass::BadInput => AppError::BadInput(e.to_string()),
            kzero_engine::ErrorClass::CheckFailed => AppError::CheckFailed(e.to_string()),
            _ => AppError::Other(e.to_string()),
        }
    }
}

impl From<kzero_bethe::BetheError> for AppError {
    fn from(e: kzero_bethe::BetheError) -> Self {
        AppError::from(kzero_engine::EngineError::from(e))
    }
}

impl From<kzero_engine::TableError> for AppError {
    fn from(e: kzero_engine::TableError) -> Self {
        AppError::from(kzero_engine::EngineError::from(e))
    }
}

impl From<kzero_basis::BasisError> for AppError {
    fn from(e: kzero_basis::BasisError) -> Self {
        AppError::BadInput(e.to_string())
    }
}

impl From<std::io::Error> for AppError {
    fn from(e: std::io::Error) -> Self {
        AppError::Other(format!("I/O error: {e}"))
    }
}
