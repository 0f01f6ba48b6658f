//! Precision sweeps: one state computed from scratch at a ladder of
//! `digits`, each printed value compared with the most precise run.

use crate::build_info::{command_line, Provenance};
use crate::compute::{compute, validate_state};
use crate::error::EngineError;
use crate::method::MethodChoice;
use kzero_bethe::{BetheValue, Gauge, Goal, Printed, Settings};

/// The default ladder of absolute goals.
pub const DEFAULT_LADDER: [u32; 6] = [10, 15, 20, 30, 40, 60];

/// One rung of a sweep.
#[derive(Debug, Clone)]
pub struct SweepPoint {
    /// The value computed at this rung's digits.
    pub value: BetheValue,
    /// What is printed for it: the decimal and its printed error.
    pub printed: Printed,
    /// |printed decimal - reference value| (the reference is the last rung,
    /// which has none); rounded up.
    pub actual_err: Option<f64>,
    /// Whether the printed error covers the actual error plus the
    /// reference's own estimated error (`None` for the reference).
    pub covered: Option<bool>,
}

/// A precision sweep of one state.
#[derive(Debug, Clone)]
pub struct Sweep {
    /// Where the sweep came from (the one provenance schema of every kzero
    /// output; `command` is this process's command line, which a library
    /// front end may replace with its own call).
    pub provenance: Provenance,
    /// n.
    pub n: u32,
    /// l.
    pub l: u32,
    /// The method (green or spectral).
    pub method: MethodChoice,
    /// The dipole form (used by the spectral method).
    pub gauge: Gauge,
    /// Whether the ladder counts decimals or significant digits.
    pub goal: Goal,
    /// One point per digits value, in increasing digits; the last is the
    /// reference.
    pub points: Vec<SweepPoint>,
}

impl Sweep {
    /// The reference digits (the largest of the ladder).
    pub fn reference_digits(&self) -> u32 {
        self.points.last().map_or(0, |p| p.value.digits)
    }
}

/// Checks a sweep request before any work: one method (not `both`) and a
/// valid state; returns (n, l).
///
/// # Errors
/// [`EngineError::SweepMethod`], or an invalid state (bad input).
pub fn validate(n: i64, l: i64, method: MethodChoice) -> Result<(u32, u32), EngineError> {
    if method == MethodChoice::Both {
        return Err(EngineError::SweepMethod);
    }
    validate_state(n, l, method)
}

/// Computes (n, l) with `method` at every digits of `ladder` (sorted and
/// deduplicated first; absolute or significant-digit goals), each from
/// scratch.
///
/// # Accuracy
/// The actual error of a rung is the distance of its printed decimal from
/// the most precise rung, itself uncertain by that rung's estimated error
/// (which `covered` adds to the actual error).
///
/// # Errors
/// [`EngineError::SweepMethod`] for `both`, [`EngineError::EmptyLadder`],
/// an invalid state or digits (bad input), non-convergence (failure).
pub fn sweep(
    n: i64,
    l: i64,
    method: MethodChoice,
    gauge: Gauge,
    ladder: &[u32],
    goal: Goal,
) -> Result<Sweep, EngineError> {
    let (n, l) = validate(n, l, method)?;
    let provenance = Provenance::now(command_line());
    let mut ladder = ladder.to_vec();
    ladder.sort_unstable();
    ladder.dedup();
    let mut values: Vec<BetheValue> = Vec::new();
    for &d in &ladder {
        let settings = match goal {
            Goal::Absolute => Settings::with_digits(d),
            Goal::Significant => Settings::significant(d),
        };
        values.push(compute(n, l, method, gauge, &settings)?.into_primary());
    }
    let best = values.last().cloned().ok_or(EngineError::EmptyLadder)?;
    let last = values.len() - 1;
    let points = values
        .into_iter()
        .enumerate()
        .map(|(i, v)| {
            let printed = v.printed();
            let actual_err = (i < last).then(|| v.printed_distance(&best));
            let covered = actual_err.map(|x| printed.err >= x + best.abs_err);
            SweepPoint {
                value: v,
                printed,
                actual_err,
                covered,
            }
        })
        .collect();
    Ok(Sweep {
        provenance,
        n,
        l,
        method,
        gauge,
        goal,
        points,
    })
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn sweep_points_come_sorted_and_covered() {
        let sw = sweep(
            2,
            1,
            MethodChoice::Green,
            Gauge::Velocity,
            &[12, 6, 9, 12],
            Goal::Absolute,
        )
        .unwrap();
        let d: Vec<u32> = sw.points.iter().map(|p| p.value.digits).collect();
        assert_eq!(d, [6, 9, 12]);
        assert_eq!(sw.reference_digits(), 12);
        assert!(sw.points[..2].iter().all(|p| p.covered == Some(true)));
        assert_eq!(sw.points[2].actual_err, None);
        assert_eq!(sw.provenance.version, crate::build_info::VERSION);
        assert!(matches!(
            sweep(
                2,
                1,
                MethodChoice::Both,
                Gauge::Velocity,
                &[8],
                Goal::Absolute
            ),
            Err(EngineError::SweepMethod)
        ));
        assert!(matches!(
            sweep(
                2,
                1,
                MethodChoice::Green,
                Gauge::Velocity,
                &[],
                Goal::Absolute
            ),
            Err(EngineError::EmptyLadder)
        ));
    }
}
