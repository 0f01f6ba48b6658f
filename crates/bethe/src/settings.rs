//! Settings shared by the Bethe-logarithm methods.

use crate::error::BetheError;

/// Smallest accepted `digits`.
pub const MIN_DIGITS: u32 = 5;
/// Largest accepted `digits`.
pub const MAX_DIGITS: u32 = 200;
/// Largest n supported by the methods of this crate.
pub const MAX_N: u32 = 1000;

/// What the caller asks for: an absolute error below 10^-digits.
///
/// Working precision, quadrature nodes and series lengths are chosen by the
/// methods themselves from `digits` and from the cancellation they measure at
/// the given (n, l); they are reported back in [`crate::BetheValue`].
#[derive(Debug, Clone, PartialEq, Eq)]
pub struct Settings {
    /// Requested absolute accuracy: |error| < 10^-digits.
    pub digits: u32,
}

impl Default for Settings {
    fn default() -> Self {
        Settings { digits: 20 }
    }
}

impl Settings {
    /// Settings asking for `digits` digits.
    pub fn with_digits(digits: u32) -> Self {
        Settings { digits }
    }

    /// Checks `digits` against [`MIN_DIGITS`]..=[`MAX_DIGITS`].
    ///
    /// # Errors
    /// [`BetheError::DigitsOutOfRange`].
    pub fn validate(&self) -> Result<(), BetheError> {
        if self.digits < MIN_DIGITS || self.digits > MAX_DIGITS {
            Err(BetheError::DigitsOutOfRange {
                digits: self.digits,
                min: MIN_DIGITS,
                max: MAX_DIGITS,
            })
        } else {
            Ok(())
        }
    }
}

/// Validates a state (n >= 1, 0 <= l < n, n <= `MAX_N`) for `method`.
///
/// # Errors
/// [`BetheError::InvalidState`] or [`BetheError::OutOfRange`].
pub fn validate_state(n: i64, l: i64, method: &'static str) -> Result<(u32, u32), BetheError> {
    if n < 1 || l < 0 || l >= n {
        return Err(BetheError::InvalidState { n, l });
    }
    if n > i64::from(MAX_N) {
        return Err(BetheError::OutOfRange {
            n: n.min(i64::from(u32::MAX)) as u32,
            max: MAX_N,
            method,
        });
    }
    Ok((n as u32, l as u32))
}
