//! The method choice of a computation: one method, or both with a
//! cross-check. Names are spelled once, in [`MethodChoice::NAMES`] (and in
//! [`kzero_bethe::Method::NAMES`] / [`kzero_bethe::Gauge::NAMES`]).

use kzero_bethe::{Gauge, Method, UnknownName};
use std::str::FromStr;

/// Which method(s) compute ln k0.
#[derive(Debug, Clone, Copy, PartialEq, Eq, Hash, Default)]
pub enum MethodChoice {
    /// Photon-energy integral with the Sturmian Coulomb Green's function.
    #[default]
    Green,
    /// Explicit sum over the bound and continuum spectrum.
    Spectral,
    /// Both, with a cross-check of their agreement.
    Both,
}

impl MethodChoice {
    /// Every choice, in the order of [`MethodChoice::NAMES`].
    pub const ALL: [MethodChoice; 3] = [
        MethodChoice::Green,
        MethodChoice::Spectral,
        MethodChoice::Both,
    ];
    /// The accepted names (command line, table files, front ends).
    pub const NAMES: &'static [&'static str] = &["green", "spectral", "both"];

    /// The name used on the command line and in tables.
    pub fn name(self) -> &'static str {
        Self::NAMES[self as usize]
    }

    /// One line describing the choice (for help texts).
    pub fn description(self) -> &'static str {
        match self {
            MethodChoice::Green => {
                "Photon-energy integral with the Sturmian Coulomb Green's function"
            }
            MethodChoice::Spectral => "Explicit sum over the bound and continuum spectrum",
            MethodChoice::Both => "Both, with a cross-check of their agreement",
        }
    }

    /// The methods that run, in the order they run.
    pub fn methods(self) -> &'static [Method] {
        match self {
            MethodChoice::Green => &[Method::Green],
            MethodChoice::Spectral => &[Method::Spectral],
            MethodChoice::Both => &[Method::Green, Method::Spectral],
        }
    }

    /// The dipole form to run with: `given` (a front end's explicit choice)
    /// or the velocity form when none was given. A form given for the Green's
    /// function method alone, which has none, is refused: an option a method
    /// would ignore is bad input, in every front end.
    ///
    /// # Errors
    /// [`crate::EngineError::UnusedGauge`] for `Some(_)` with [`MethodChoice::Green`].
    pub fn gauge(self, given: Option<Gauge>) -> Result<Gauge, crate::EngineError> {
        match (self, given) {
            (MethodChoice::Green, Some(_)) => Err(crate::EngineError::UnusedGauge),
            (_, g) => Ok(g.unwrap_or_default()),
        }
    }

    /// The method whose value is reported first (`ln_k0` in tables): Green's
    /// function when it runs, otherwise the spectral sum.
    pub fn primary(self) -> Method {
        self.methods()[0]
    }
}

impl From<Method> for MethodChoice {
    fn from(m: Method) -> Self {
        match m {
            Method::Green => MethodChoice::Green,
            Method::Spectral => MethodChoice::Spectral,
        }
    }
}

impl std::fmt::Display for MethodChoice {
    fn fmt(&self, f: &mut std::fmt::Formatter<'_>) -> std::fmt::Result {
        f.write_str(self.name())
    }
}

impl FromStr for MethodChoice {
    type Err = UnknownName;

    /// Parses a name written by [`MethodChoice::name`] (exact, lower case).
    fn from_str(s: &str) -> Result<Self, UnknownName> {
        UnknownName::find(s, &Self::ALL, Self::name, Self::NAMES)
    }
}

#[cfg(test)]
mod tests {
    use super::*;
    use kzero_bethe::Gauge;

    #[test]
    fn a_gauge_is_refused_where_the_method_has_none() {
        assert!(MethodChoice::Green.gauge(Some(Gauge::Length)).is_err());
        assert_eq!(MethodChoice::Green.gauge(None).unwrap(), Gauge::Velocity);
        assert_eq!(
            MethodChoice::Spectral.gauge(Some(Gauge::Length)).unwrap(),
            Gauge::Length
        );
        assert_eq!(MethodChoice::Both.gauge(None).unwrap(), Gauge::Velocity);
    }

    #[test]
    fn names_round_trip() {
        for m in MethodChoice::ALL {
            assert_eq!(m.to_string().parse::<MethodChoice>(), Ok(m));
        }
        for m in Method::ALL {
            assert_eq!(m.to_string().parse::<Method>(), Ok(m));
            assert_eq!(MethodChoice::from(m).name(), m.name());
        }
        for g in Gauge::ALL {
            assert_eq!(g.to_string().parse::<Gauge>(), Ok(g));
        }
        let e = "Green".parse::<MethodChoice>().unwrap_err();
        assert_eq!(
            e.to_string(),
            "'Green' is not one of: green, spectral, both"
        );
        assert!("both".parse::<Method>().is_err());
    }
}
