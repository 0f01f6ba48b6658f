//! Fine-structure levels (n, l, j) of a hydrogenic ion.

use crate::error::QedError;

/// Largest principal quantum number accepted (the range of the Bethe-logarithm
/// engine).
pub const MAX_N: u32 = 200;

/// A level n l_j: principal quantum number n >= 1, orbital angular momentum
/// 0 <= l < n, total angular momentum j = l +- 1/2 (j > 0), stored as `j2 = 2j`.
#[derive(Debug, Clone, Copy, PartialEq, Eq, Hash, PartialOrd, Ord)]
pub struct Level {
    n: u32,
    l: u32,
    j2: u32,
}

impl Level {
    /// The level (n, l, j = j2/2).
    ///
    /// # Errors
    /// [`QedError::InvalidState`] unless n >= 1 and 0 <= l < n;
    /// [`QedError::NOutOfRange`] for n > [`MAX_N`];
    /// [`QedError::JNotAllowed`] unless |l - 1/2| <= j <= l + 1/2 with j half-odd.
    pub fn new(n: i64, l: i64, j2: i64) -> Result<Level, QedError> {
        if n < 1 || l < 0 || l >= n {
            return Err(QedError::InvalidState { n, l });
        }
        if n > i64::from(MAX_N) {
            return Err(QedError::NOutOfRange { n, max: MAX_N });
        }
        let (n, l) = (n as u32, l as u32);
        let ok = j2 == 2 * i64::from(l) + 1 || (l > 0 && j2 == 2 * i64::from(l) - 1);
        if !ok {
            return Err(QedError::JNotAllowed {
                l,
                j2: j2.clamp(0, i64::from(u32::MAX)) as u32,
            });
        }
        Ok(Level {
            n,
            l,
            j2: j2 as u32,
        })
    }

    /// Principal quantum number.
    pub fn n(&self) -> u32 {
        self.n
    }

    /// Orbital angular momentum.
    pub fn l(&self) -> u32 {
        self.l
    }

    /// Twice the total angular momentum, 2j (odd).
    pub fn j2(&self) -> u32 {
        self.j2
    }

    /// j as text, for example `1/2`.
    pub fn j_text(&self) -> String {
        format!("{}/2", self.j2)
    }

    /// Dirac quantum number kappa = (-1)^(j - l + 1/2) (j + 1/2): -(l+1) for
    /// j = l + 1/2, +l for j = l - 1/2 (so 1S1/2 and 2P3/2 have kappa = -1 and -2,
    /// 2P1/2 has kappa = +1).
    pub fn kappa(&self) -> i64 {
        if self.j2 == 2 * self.l + 1 {
            -(i64::from(self.l) + 1)
        } else {
            i64::from(self.l)
        }
    }

    /// Spectroscopic label such as `2S1/2` or `3D5/2` (`L` = letters S P D F G H
    /// I K L M N O Q R T U V W X Y Z; beyond those `[l=..]`).
    pub fn label(&self) -> String {
        const LETTERS: &[u8] = b"SPDFGHIKLMNOQRTUVWXYZ";
        let letter = match LETTERS.get(self.l as usize) {
            Some(c) => (*c as char).to_string(),
            None => format!("[l={}]", self.l),
        };
        format!("{}{}{}/2", self.n, letter, self.j2)
    }

    /// Every level with 1 <= n <= `n_max`, sorted by (n, l, j).
    ///
    /// # Errors
    /// [`QedError::NOutOfRange`] for `n_max` > [`MAX_N`],
    /// [`QedError::InvalidState`] for `n_max` < 1.
    pub fn all_up_to(n_max: i64) -> Result<Vec<Level>, QedError> {
        if n_max < 1 {
            return Err(QedError::InvalidState { n: n_max, l: 0 });
        }
        if n_max > i64::from(MAX_N) {
            return Err(QedError::NOutOfRange {
                n: n_max,
                max: MAX_N,
            });
        }
        let mut out = Vec::new();
        for n in 1..=n_max as u32 {
            for l in 0..n {
                if l > 0 {
                    out.push(Level {
                        n,
                        l,
                        j2: 2 * l - 1,
                    });
                }
                out.push(Level {
                    n,
                    l,
                    j2: 2 * l + 1,
                });
            }
        }
        Ok(out)
    }
}

/// Reads J written as `k/2` (k odd, for example `1/2`, `3/2`) or as a
/// decimal half-odd number (`0.5`, `1.5`) and returns 2J.
///
/// # Errors
/// [`QedError::BadJ`] for anything else (integers, negative values, `1/3`, ...).
pub fn parse_j(text: &str) -> Result<u32, QedError> {
    let bad = || QedError::BadJ {
        text: text.to_string(),
    };
    let t = text.trim();
    let j2: u64 = if let Some((num, den)) = t.split_once('/') {
        if den.trim() != "2" {
            return Err(bad());
        }
        num.trim().parse::<u64>().map_err(|_| bad())?
    } else if let Some((int, frac)) = t.split_once('.') {
        let frac = frac.trim_end_matches('0');
        if frac != "5" || int.is_empty() || !int.bytes().all(|b| b.is_ascii_digit()) {
            return Err(bad());
        }
        2 * int.parse::<u64>().map_err(|_| bad())? + 1
    } else {
        return Err(bad());
    };
    if j2 % 2 == 0 || j2 > u64::from(u32::MAX) {
        return Err(bad());
    }
    Ok(j2 as u32)
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn kappa_and_labels() {
        let s = Level::new(2, 0, 1).unwrap();
        assert_eq!((s.kappa(), s.label()), (-1, "2S1/2".to_string()));
        let p1 = Level::new(2, 1, 1).unwrap();
        assert_eq!((p1.kappa(), p1.label()), (1, "2P1/2".to_string()));
        let p3 = Level::new(2, 1, 3).unwrap();
        assert_eq!((p3.kappa(), p3.label()), (-2, "2P3/2".to_string()));
        let d5 = Level::new(3, 2, 5).unwrap();
        assert_eq!((d5.kappa(), d5.label()), (-3, "3D5/2".to_string()));
    }

    #[test]
    fn j_must_fit_l() {
        assert!(matches!(
            Level::new(2, 0, 3),
            Err(QedError::JNotAllowed { l: 0, j2: 3 })
        ));
        assert!(matches!(
            Level::new(3, 2, 1),
            Err(QedError::JNotAllowed { l: 2, j2: 1 })
        ));
        assert!(matches!(
            Level::new(2, 2, 5),
            Err(QedError::InvalidState { .. })
        ));
        assert!(matches!(
            Level::new(0, 0, 1),
            Err(QedError::InvalidState { .. })
        ));
        assert!(matches!(
            Level::new(201, 0, 1),
            Err(QedError::NOutOfRange { .. })
        ));
        assert!(Level::new(1, 0, -1).is_err());
    }

    #[test]
    fn parse_j_forms() {
        assert_eq!(parse_j("1/2").unwrap(), 1);
        assert_eq!(parse_j(" 3/2 ").unwrap(), 3);
        assert_eq!(parse_j("2.5").unwrap(), 5);
        assert_eq!(parse_j("0.50").unwrap(), 1);
        for bad in ["1", "2/2", "1/3", "-1/2", "x", "", "1.0", ".5", "1/2/2"] {
            assert!(parse_j(bad).is_err(), "{bad:?} accepted");
        }
    }

    #[test]
    fn all_levels_count() {
        // For each n there are 2n - 1 levels (n, l, j).
        let v = Level::all_up_to(4).unwrap();
        assert_eq!(v.len(), (1..=4).map(|n| 2 * n - 1).sum::<usize>());
        assert!(v.windows(2).all(|w| w[0] < w[1]));
        assert!(Level::all_up_to(0).is_err());
    }
}
