//! Settings shared by the Bethe-logarithm methods.

use crate::error::BetheError;
use crate::value::BetheValue;

/// Smallest accepted `digits`.
pub const MIN_DIGITS: u32 = 5;
/// Largest accepted `digits`, and the finest absolute goal (10^-200) that a
/// significant-digit goal may be turned into.
pub const MAX_DIGITS: u32 = 200;
/// Largest n supported by the methods of this crate.
pub const MAX_N: u32 = 1000;

/// The kind of accuracy goal that [`Settings::digits`] sets.
#[derive(Debug, Clone, Copy, PartialEq, Eq, Hash, Default)]
pub enum Goal {
    /// |error| < 10^-D (`--digits D`): D decimals after the point.
    #[default]
    Absolute,
    /// |error| <= 10^-D |value| (`--significant D`): D significant digits.
    Significant,
}

impl Goal {
    /// The name used in JSON and table provenance: `absolute` or `significant`.
    pub fn name(self) -> &'static str {
        match self {
            Goal::Absolute => "absolute",
            Goal::Significant => "significant",
        }
    }

    /// Parses a name written by [`Goal::name`].
    pub fn from_name(s: &str) -> Option<Self> {
        match s {
            "absolute" => Some(Goal::Absolute),
            "significant" => Some(Goal::Significant),
            _ => None,
        }
    }

    /// The command-line option that sets this goal: `--digits` or `--significant`.
    pub fn option(self) -> &'static str {
        match self {
            Goal::Absolute => "--digits",
            Goal::Significant => "--significant",
        }
    }
}

/// What the caller asks for: an absolute error below 10^-digits, or a
/// relative error of at most 10^-digits (see [`Goal`]).
///
/// Working precision, quadrature nodes and series lengths are chosen by the
/// methods themselves from the goal and from the cancellation they measure at
/// the given (n, l); they are reported back in [`crate::BetheValue`].
///
/// A significant-digit goal is met by absolute goals: a cheap run at
/// 10^-[`MIN_DIGITS`] measures the magnitude |v| (if |v| is not resolved,
/// the absolute goal is tightened by D decimals and the run repeated), then
/// the run at the absolute goal 10^-ceil(D - log10(|v| - err)) gives the
/// value. An absolute goal finer than 10^-[`MAX_DIGITS`] is refused with
/// [`BetheError::GoalOutOfReach`] (a value within about 10^-190 of zero).
#[derive(Debug, Clone, PartialEq, Eq)]
pub struct Settings {
    /// Requested accuracy D: |error| < 10^-D, or |error| <= 10^-D |value|.
    pub digits: u32,
    /// Whether `digits` counts decimals after the point or significant digits.
    pub goal: Goal,
}

impl Default for Settings {
    fn default() -> Self {
        Settings {
            digits: 20,
            goal: Goal::Absolute,
        }
    }
}

impl Settings {
    /// Settings asking for an absolute error below 10^-digits.
    pub fn with_digits(digits: u32) -> Self {
        Settings {
            digits,
            goal: Goal::Absolute,
        }
    }

    /// Settings asking for `digits` significant digits: |error| <= 10^-digits |value|.
    pub fn significant(digits: u32) -> Self {
        Settings {
            digits,
            goal: Goal::Significant,
        }
    }

    /// Checks `digits` against [`MIN_DIGITS`]..=[`MAX_DIGITS`].
    ///
    /// # Errors
    /// [`BetheError::DigitsOutOfRange`].
    pub fn validate(&self) -> Result<(), BetheError> {
        if self.digits < MIN_DIGITS || self.digits > MAX_DIGITS {
            Err(BetheError::DigitsOutOfRange {
                option: self.goal.option(),
                digits: self.digits,
                min: MIN_DIGITS,
                max: MAX_DIGITS,
            })
        } else {
            Ok(())
        }
    }
}

/// Meets a significant-digit goal with a method `absolute` that meets
/// absolute goals (see [`Settings`] for the rule). The returned value carries
/// the requested digits and [`Goal::Significant`]; its `abs_err` is at most
/// 10^-D (|value| - abs_err).
pub(crate) fn meet_significant(
    n: u32,
    l: u32,
    settings: &Settings,
    absolute: impl Fn(&Settings) -> Result<BetheValue, BetheError>,
) -> Result<BetheValue, BetheError> {
    let mut seconds = 0.0;
    let mut v = significant_loop(n, l, settings, |s| {
        let v = absolute(s)?;
        seconds += v.seconds;
        let (x, e) = (v.value.to_f64(), v.abs_err);
        Ok((v, x, e))
    })?;
    v.digits = settings.digits;
    v.goal = Goal::Significant;
    v.seconds = seconds;
    Ok(v)
}

/// The loop behind [`meet_significant`] for any result: `absolute` returns
/// the result at an absolute goal with its value and error estimate.
pub(crate) fn significant_loop<T>(
    n: u32,
    l: u32,
    settings: &Settings,
    mut absolute: impl FnMut(&Settings) -> Result<(T, f64, f64), BetheError>,
) -> Result<T, BetheError> {
    settings.validate()?;
    let d = settings.digits;
    let want = 10f64.powi(-(d as i32));
    let mut a = MIN_DIGITS;
    loop {
        let (r, x, err) = absolute(&Settings::with_digits(a))?;
        let mag = x.abs() - err;
        if mag > 0.0 && err <= want * mag {
            return Ok(r);
        }
        let next = if mag > 0.0 {
            // the smallest absolute goal that meets 10^-D of the magnitude
            ((f64::from(d) - mag.log10()).ceil() as u32).max(a + 1)
        } else {
            // |value| is below about 10^-a: at least D more decimals
            a + d
        };
        if next > MAX_DIGITS {
            return Err(BetheError::GoalOutOfReach {
                n,
                l,
                digits: d,
                needed: next,
                max: MAX_DIGITS,
            });
        }
        a = next;
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
