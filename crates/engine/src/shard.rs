//! The deterministic, cost-balanced shard plan (`--shard K/M`).

use crate::compute::cost;
use crate::method::MethodChoice;
use std::str::FromStr;
use thiserror::Error;

/// A state (n, l).
pub type Key = (u32, u32);

/// A part K of M of a table.
#[derive(Debug, Clone, Copy, PartialEq, Eq, Hash)]
pub struct Shard {
    /// Index, 1-based.
    pub k: u32,
    /// Number of parts.
    pub m: u32,
}

/// Why a `K/M` text is not a shard.
#[derive(Debug, Clone, PartialEq, Eq, Error)]
#[non_exhaustive]
pub enum ShardError {
    /// No `/` in the text.
    #[error("'{given}' is not of the form K/M")]
    NotAFraction {
        /// The text given.
        given: String,
    },
    /// K is not a positive integer.
    #[error("'{given}': K is not a positive integer")]
    BadK {
        /// The text given.
        given: String,
    },
    /// M is not a positive integer.
    #[error("'{given}': M is not a positive integer")]
    BadM {
        /// The text given.
        given: String,
    },
    /// K = 0, M = 0 or K > M.
    #[error("'{given}': need 1 <= K <= M")]
    OutOfRange {
        /// The text given.
        given: String,
    },
}

impl Shard {
    /// The whole table.
    pub const WHOLE: Shard = Shard { k: 1, m: 1 };

    /// Part `k` of `m`.
    ///
    /// # Errors
    /// [`ShardError::OutOfRange`] unless 1 <= k <= m.
    pub fn new(k: u32, m: u32) -> Result<Shard, ShardError> {
        if m == 0 || k == 0 || k > m {
            return Err(ShardError::OutOfRange {
                given: format!("{k}/{m}"),
            });
        }
        Ok(Shard { k, m })
    }
}

impl FromStr for Shard {
    type Err = ShardError;

    /// Parses `K/M` with 1 <= K <= M (spaces around the numbers allowed).
    fn from_str(s: &str) -> Result<Self, ShardError> {
        let given = || s.to_string();
        let (a, b) = s
            .split_once('/')
            .ok_or_else(|| ShardError::NotAFraction { given: given() })?;
        let k: u32 = a
            .trim()
            .parse()
            .map_err(|_| ShardError::BadK { given: given() })?;
        let m: u32 = b
            .trim()
            .parse()
            .map_err(|_| ShardError::BadM { given: given() })?;
        if m == 0 || k == 0 || k > m {
            return Err(ShardError::OutOfRange { given: given() });
        }
        Ok(Shard { k, m })
    }
}

impl std::fmt::Display for Shard {
    fn fmt(&self, f: &mut std::fmt::Formatter<'_>) -> std::fmt::Result {
        write!(f, "{}/{}", self.k, self.m)
    }
}

/// Splits `states` into `shard.m` deterministic, cost-balanced parts and
/// returns part `shard.k`, each state with its relative [`cost`], ordered by
/// decreasing cost (ties by (n, l)).
///
/// Greedy longest-processing-time assignment: states in decreasing cost go
/// to the part with the smallest total so far (lowest index on ties). The
/// same inputs always give the same parts, on any machine and thread count;
/// parts differ in total cost by at most the largest single cost.
pub fn plan(states: &[Key], digits: u32, method: MethodChoice, shard: Shard) -> Vec<(Key, f64)> {
    plan_by(states, &|(n, l)| cost(n, l, digits, method), shard)
}

/// [`plan`] with the cost of each state given by `cost_of` (for example
/// [`crate::TableSettings::cost`], which also covers the dipole sums).
pub fn plan_by(states: &[Key], cost_of: &dyn Fn(Key) -> f64, shard: Shard) -> Vec<(Key, f64)> {
    let mut mine = Vec::new();
    assign(states, cost_of, shard.m, |part, key, c| {
        if part + 1 == shard.k as usize {
            mine.push((key, c));
        }
    });
    mine
}

/// The total [`cost`] of each of the `m` parts of [`plan`] (part K at index
/// K - 1), from the same assignment.
pub fn part_costs(states: &[Key], digits: u32, method: MethodChoice, m: u32) -> Vec<f64> {
    part_costs_by(states, &|(n, l)| cost(n, l, digits, method), m)
}

/// [`part_costs`] with the cost of each state given by `cost_of` (the parts
/// of [`plan_by`]).
pub fn part_costs_by(states: &[Key], cost_of: &dyn Fn(Key) -> f64, m: u32) -> Vec<f64> {
    let mut load = vec![0.0f64; m.max(1) as usize];
    assign(states, cost_of, m, |part, _, c| load[part] += c);
    load
}

/// The greedy longest-processing-time assignment behind [`plan_by`]: calls
/// `place(part, state, cost)` (part 0-based) for every state, in decreasing
/// cost (ties by (n, l)).
fn assign(
    states: &[Key],
    cost_of: &dyn Fn(Key) -> f64,
    m: u32,
    mut place: impl FnMut(usize, Key, f64),
) {
    let mut costed: Vec<(Key, f64)> = states.iter().map(|&k| (k, cost_of(k))).collect();
    costed.sort_by(|a, b| b.1.total_cmp(&a.1).then(a.0.cmp(&b.0)));
    let m = m.max(1) as usize;
    let mut load = vec![0.0f64; m];
    for (key, c) in costed {
        let mut best = 0;
        for i in 1..m {
            if load[i] < load[best] {
                best = i;
            }
        }
        load[best] += c;
        place(best, key, c);
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    fn states(n_max: u32) -> Vec<Key> {
        (1..=n_max)
            .flat_map(|n| (0..n).map(move |l| (n, l)))
            .collect()
    }

    #[test]
    fn shards_are_disjoint_cover_everything_and_are_balanced() {
        let states = states(40);
        for m in [1u32, 2, 3, 7] {
            let mut seen = std::collections::BTreeSet::new();
            let mut loads = Vec::new();
            let mut max_cost: f64 = 0.0;
            for k in 1..=m {
                let part = plan(&states, 20, MethodChoice::Green, Shard { k, m });
                // expensive first
                assert!(part.windows(2).all(|w| w[0].1 >= w[1].1));
                for (key, c) in &part {
                    assert!(seen.insert(*key), "state {key:?} in two shards");
                    max_cost = max_cost.max(*c);
                }
                loads.push(part.iter().map(|(_, c)| c).sum::<f64>());
            }
            assert_eq!(seen.len(), states.len());
            let hi = loads.iter().cloned().fold(0.0, f64::max);
            let lo = loads.iter().cloned().fold(f64::INFINITY, f64::min);
            // Greedy LPT: parts differ by at most the largest single cost.
            assert!(hi - lo <= max_cost * (1.0 + 1e-12), "m={m}: {loads:?}");
        }
    }

    #[test]
    fn plan_is_deterministic() {
        let states = states(25);
        let a = plan(&states, 20, MethodChoice::Green, Shard { k: 2, m: 5 });
        let b = plan(&states, 20, MethodChoice::Green, Shard { k: 2, m: 5 });
        assert_eq!(a, b);
    }

    #[test]
    fn shard_parsing_rejects_out_of_range() {
        assert!("0/3".parse::<Shard>().is_err());
        assert!("4/3".parse::<Shard>().is_err());
        assert!("x/3".parse::<Shard>().is_err());
        assert_eq!("2/3".parse::<Shard>().unwrap(), Shard { k: 2, m: 3 });
        assert_eq!(Shard::new(2, 3).unwrap().to_string(), "2/3");
        assert!(Shard::new(0, 3).is_err());
    }
}
