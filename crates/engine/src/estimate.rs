//! The cost of a run before it starts: estimated core-seconds, the wall
//! time for a number of threads, and a shard count for a target wall time.
//!
//! Nothing is computed: the estimate adds up [`cost`] over the states, and
//! [`cost`] adds up the methods' own cost models
//! ([`kzero_bethe::green::cost_estimate`],
//! [`kzero_bethe::spectral::cost_estimate`]), which are fits to measured
//! single-core CPU times on the reference machine of `benches/README.md`.
//!
//! # Accuracy
//! An estimate, not a bound: the fits are within a factor of about 1.5 of
//! the measured times of single states (n <= 1000, 5 <= digits <= 100), and
//! sums over many states are closer than that. A faster or busier machine
//! scales every figure by the same factor; the wall time assumes that the
//! threads get whole cores.

use crate::compute::cost;
use crate::method::MethodChoice;
use crate::shard::{part_costs_by, Key};

/// The estimated cost of computing a list of states.
#[derive(Debug, Clone, PartialEq)]
pub struct Estimate {
    /// Number of states.
    pub states: usize,
    /// Sum of the estimated single-core times (seconds).
    pub core_seconds: f64,
    /// The costliest state and its estimated single-core time (seconds).
    pub largest: Option<(Key, f64)>,
    /// Worker threads the wall time is given for (>= 1).
    pub threads: usize,
}

/// A shard count that meets a target wall time.
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct ShardSuggestion {
    /// Number of shards M (each run as `--shard K/M` with the same threads).
    pub shards: u32,
    /// Estimated wall time of the slowest shard (seconds), from the actual
    /// cost-balanced shard plan.
    pub wall_seconds: f64,
    /// Whether the target is met; false when even one state per shard is
    /// slower than the target.
    pub meets_target: bool,
}

impl Estimate {
    /// Estimated wall time (seconds) with [`Estimate::threads`] threads.
    ///
    /// States run in parallel and each state spreads its photon-energy
    /// nodes over the threads, so the wall time is the core time divided by
    /// the threads.
    pub fn wall_seconds(&self) -> f64 {
        self.core_seconds / self.threads.max(1) as f64
    }
}

/// The estimated cost of `states` at `digits` with `method` on `threads`
/// threads (0 is taken as 1).
pub fn estimate(states: &[Key], digits: u32, method: MethodChoice, threads: usize) -> Estimate {
    estimate_by(states, &|(n, l)| cost(n, l, digits, method), threads)
}

/// [`estimate`] with the cost of each state given by `cost_of` (for
/// example [`crate::TableSettings::cost`], which also covers the dipole
/// sums).
pub fn estimate_by(states: &[Key], cost_of: &dyn Fn(Key) -> f64, threads: usize) -> Estimate {
    let mut core_seconds = 0.0;
    let mut largest: Option<(Key, f64)> = None;
    for &key in states {
        let c = cost_of(key);
        core_seconds += c;
        match largest {
            Some((_, m)) if m >= c => {}
            _ => largest = Some((key, c)),
        }
    }
    Estimate {
        states: states.len(),
        core_seconds,
        largest,
        threads: threads.max(1),
    }
}

/// The fewest shards whose slowest part, with `threads` threads each, is
/// estimated to finish within `target_seconds` of wall time (at most one
/// shard per state). The parts are those of [`crate::shard::plan`], so the suggestion
/// holds for the `--shard K/M` split that will actually be run
/// ([`crate::shard::part_costs`]).
pub fn suggest_shards(
    states: &[Key],
    digits: u32,
    method: MethodChoice,
    threads: usize,
    target_seconds: f64,
) -> ShardSuggestion {
    suggest_shards_by(
        states,
        &|(n, l)| cost(n, l, digits, method),
        threads,
        target_seconds,
    )
}

/// [`suggest_shards`] with the cost of each state given by `cost_of` (the
/// parts of [`crate::shard::plan_by`]).
pub fn suggest_shards_by(
    states: &[Key],
    cost_of: &dyn Fn(Key) -> f64,
    threads: usize,
    target_seconds: f64,
) -> ShardSuggestion {
    let threads = threads.max(1) as f64;
    let total = estimate_by(states, cost_of, 1).core_seconds;
    let wall_of = |m: u32| -> f64 {
        part_costs_by(states, cost_of, m)
            .into_iter()
            .fold(0.0, f64::max)
            / threads
    };
    let most = states.len().max(1) as u32;
    // the balanced split needs at least total / (threads x target) parts;
    // the plan's parts differ by at most one state, so a few more may be needed
    let mut m = ((total / (threads * target_seconds.max(1e-9))).ceil() as u32).clamp(1, most);
    loop {
        let wall = wall_of(m);
        if wall <= target_seconds || m >= most {
            return ShardSuggestion {
                shards: m,
                wall_seconds: wall,
                meets_target: wall <= target_seconds,
            };
        }
        m += 1;
    }
}

/// Parses a wall time: a number of seconds, or a number followed by `s`,
/// `m`/`min` or `h` (for example `900`, `90s`, `30m`, `2.5h`).
///
/// # Errors
/// A one-line message when the text is not such a duration or is not
/// positive.
pub fn parse_duration(text: &str) -> Result<f64, String> {
    let t = text.trim();
    let (num, unit) = match t.find(|c: char| c.is_ascii_alphabetic()) {
        Some(i) => (&t[..i], t[i..].trim()),
        None => (t, "s"),
    };
    let factor = match unit {
        "s" => 1.0,
        "m" | "min" => 60.0,
        "h" => 3600.0,
        _ => return Err(format!("'{text}': the unit must be s, m, min or h")),
    };
    match num.trim().parse::<f64>() {
        Ok(v) if v.is_finite() && v > 0.0 => Ok(v * factor),
        _ => Err(format!(
            "'{text}' is not a positive duration (e.g. 900, 90s, 30m, 2h)"
        )),
    }
}

/// A duration in seconds written for people: `45 s`, `12.5 min`, `3.2 h`.
pub fn human_duration(seconds: f64) -> String {
    if !seconds.is_finite() {
        return "unknown".into();
    }
    if seconds < 90.0 {
        format!("{seconds:.1} s")
    } else if seconds < 5400.0 {
        format!("{:.1} min", seconds / 60.0)
    } else {
        format!("{:.1} h", seconds / 3600.0)
    }
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::shard::Shard;

    fn states(n_max: u32) -> Vec<Key> {
        (1..=n_max)
            .flat_map(|n| (0..n).map(move |l| (n, l)))
            .collect()
    }

    #[test]
    fn sums_the_state_costs_and_divides_by_threads() {
        let s = states(30);
        let e1 = estimate(&s, 20, MethodChoice::Green, 1);
        let e4 = estimate(&s, 20, MethodChoice::Green, 4);
        let direct: f64 = s
            .iter()
            .map(|&(n, l)| cost(n, l, 20, MethodChoice::Green))
            .sum();
        assert_eq!(e1.states, s.len());
        assert!((e1.core_seconds - direct).abs() <= 1e-9 * direct);
        assert_eq!(e1.core_seconds, e4.core_seconds);
        assert!((e4.wall_seconds() * 4.0 - e1.wall_seconds()).abs() < 1e-9 * direct);
        let ((n, l), c) = e1.largest.unwrap();
        assert!(s
            .iter()
            .all(|&(a, b)| cost(a, b, 20, MethodChoice::Green) <= c));
        assert!(s.contains(&(n, l)));
        // both methods cost more than one
        let both = estimate(&s, 20, MethodChoice::Both, 1);
        assert!(both.core_seconds > e1.core_seconds);
    }

    #[test]
    fn suggested_shards_meet_the_target_with_the_real_plan() {
        let s = states(60);
        let total = estimate(&s, 20, MethodChoice::Green, 2).wall_seconds();
        for target in [total / 3.0, total / 7.5, total * 2.0] {
            let g = suggest_shards(&s, 20, MethodChoice::Green, 2, target);
            assert!(g.meets_target && g.wall_seconds <= target, "{g:?}");
            if g.shards > 1 {
                // one shard fewer misses the target
                let fewer = g.shards - 1;
                let worst = (1..=fewer)
                    .map(|k| {
                        crate::shard::plan(&s, 20, MethodChoice::Green, Shard { k, m: fewer })
                            .iter()
                            .map(|(_, c)| c)
                            .sum::<f64>()
                            / 2.0
                    })
                    .fold(0.0, f64::max);
                assert!(worst > target);
            }
        }
        // a target below the costliest single state cannot be met
        let tiny = suggest_shards(&s, 20, MethodChoice::Green, 1, 1e-9);
        assert!(!tiny.meets_target);
        assert_eq!(tiny.shards as usize, s.len());
    }

    #[test]
    fn durations_parse() {
        assert_eq!(parse_duration("900"), Ok(900.0));
        assert_eq!(parse_duration("90s"), Ok(90.0));
        assert_eq!(parse_duration("30m"), Ok(1800.0));
        assert_eq!(parse_duration("2.5h"), Ok(9000.0));
        assert_eq!(parse_duration("10 min"), Ok(600.0));
        for bad in ["", "0", "-5m", "ten", "5d", "inf"] {
            assert!(parse_duration(bad).is_err(), "{bad}");
        }
    }

    #[test]
    fn durations_read_well() {
        assert_eq!(human_duration(42.0), "42.0 s");
        assert_eq!(human_duration(600.0), "10.0 min");
        assert_eq!(human_duration(7200.0), "2.0 h");
    }
}
