//! Oscillator strengths and emission rates against outside values: the closed
//! form f(1s -> 2p) = 2^13/3^9, and the NIST Atomic Spectra Database
//! (Wiese & Fuhr, J. Phys. Chem. Ref. Data 38, 565 (2009)) values kept in
//! data-checks/oscillator_strengths.csv and data-checks/hydrogen_rates.tsv,
//! within the accuracy those tables state (class AAA, 0.3%).

use kzero_basis::constants::PROTON_ELECTRON_MASS_RATIO;
use kzero_basis::oscillator::{
    emission_rate, emission_rate_au_over_alpha3, oscillator_strength, shell_emission_rate,
    shell_oscillator_strength, NuclearMass,
};
use kzero_basis::{BasisError, BoundState};
use rug::ops::Pow;
use rug::{Integer, Rational};
use std::path::PathBuf;

fn st(n: i64, l: i64) -> BoundState {
    BoundState::hydrogen(n, l).unwrap()
}

fn data_file(name: &str) -> String {
    let p: PathBuf = [env!("CARGO_MANIFEST_DIR"), "..", "..", "data-checks", name]
        .iter()
        .collect();
    std::fs::read_to_string(&p).unwrap_or_else(|e| panic!("reading {}: {e}", p.display()))
}

/// Splits one CSV line into fields (double-quoted fields may hold commas).
fn split_csv(line: &str) -> Vec<String> {
    let mut out = Vec::new();
    let mut cur = String::new();
    let mut quoted = false;
    for c in line.chars() {
        match c {
            '"' => quoted = !quoted,
            ',' if !quoted => out.push(std::mem::take(&mut cur)),
            _ => cur.push(c),
        }
    }
    out.push(cur);
    out
}

/// Rows of a table with `#` comments and a header line, as name -> value maps.
fn rows(text: &str, sep: char) -> Vec<std::collections::HashMap<String, String>> {
    let mut lines = text
        .lines()
        .filter(|l| !l.starts_with('#') && !l.trim().is_empty());
    let split = |l: &str| -> Vec<String> {
        if sep == ',' {
            split_csv(l)
        } else {
            l.split(sep).map(str::to_string).collect()
        }
    };
    let header = split(lines.next().expect("header line"));
    lines
        .map(|l| {
            let f = split(l);
            assert_eq!(f.len(), header.len(), "malformed line: {l}");
            header.iter().cloned().zip(f).collect()
        })
        .collect()
}

/// m_e / mu for hydrogen: f (defined with the electron mass) scales by it.
fn hydrogen_f_factor() -> f64 {
    1.0 / NuclearMass::ElectronMasses(PROTON_ELECTRON_MASS_RATIO)
        .reduced_mass_ratio()
        .unwrap()
}

#[test]
fn lyman_alpha_closed_form() {
    // f(1s -> 2p) = 2^13 / 3^9 exactly (closed form, Bethe & Salpeter 1957)
    let want = Rational::from((Integer::from(2).pow(13), Integer::from(3).pow(9)));
    assert_eq!(oscillator_strength(&st(1, 0), &st(2, 1)).unwrap(), want);
    // emission counted negative: g_i f_ik = -g_k f_ki
    assert_eq!(
        oscillator_strength(&st(2, 1), &st(1, 0)).unwrap(),
        -want.clone() / 3u32
    );
    // independent of Z
    let z = Rational::from((9, 2));
    let a = BoundState::new(1, 0, z.clone()).unwrap();
    let b = BoundState::new(2, 1, z).unwrap();
    assert_eq!(oscillator_strength(&a, &b).unwrap(), want);
    // degenerate levels: f = 0
    assert_eq!(oscillator_strength(&st(2, 0), &st(2, 1)).unwrap(), 0);
}

#[test]
fn nist_oscillator_strengths() {
    let text = data_file("oscillator_strengths.csv");
    let table = rows(&text, ',');
    assert!(table.len() >= 6);
    for r in &table {
        assert_eq!(r["quantity"], "oscillator");
        let p = |k: &str| r[k].parse::<i64>().unwrap();
        let f = oscillator_strength(&st(p("n"), p("l")), &st(p("n2"), p("l2")))
            .unwrap()
            .to_f64();
        let want: f64 = r["expected"].parse().unwrap();
        let tol: f64 = r["tolerance"].parse().unwrap();
        assert!(
            (f - want).abs() <= tol,
            "{}: f = {f} vs {want} +- {tol}",
            r["source"]
        );
        // Tighter: with the hydrogen reduced-mass factor the remaining
        // difference is relativistic (order alpha^2) plus 5-digit rounding.
        let fm = f * hydrogen_f_factor();
        assert!(
            ((fm - want) / want).abs() < 1.2e-4,
            "{}: reduced-mass f = {fm} vs {want}",
            r["source"]
        );
    }
}

#[test]
fn nist_rates_and_shell_values() {
    let text = data_file("hydrogen_rates.tsv");
    let table = rows(&text, '\t');
    assert!(table.len() >= 20);
    let one = Rational::from(1);
    let hyd = NuclearMass::ElectronMasses(PROTON_ELECTRON_MASS_RATIO);
    for r in &table {
        let p = |k: &str| r[k].parse::<i64>().unwrap();
        let want: f64 = r["expected"].parse().unwrap();
        let tol: f64 = r["rel_tolerance"].parse().unwrap();
        let (inf, red) = match r["quantity"].as_str() {
            "emission_rate" => {
                let u = st(p("n"), p("l"));
                let d = st(p("n2"), p("l2"));
                (
                    emission_rate(&u, &d, NuclearMass::Infinite).unwrap(),
                    emission_rate(&u, &d, hyd).unwrap(),
                )
            }
            "shell_emission_rate" => (
                shell_emission_rate(p("n"), p("n2"), &one, NuclearMass::Infinite).unwrap(),
                shell_emission_rate(p("n"), p("n2"), &one, hyd).unwrap(),
            ),
            "shell_oscillator" => {
                let f = shell_oscillator_strength(p("n"), p("n2"), &one)
                    .unwrap()
                    .to_f64();
                (f, f * hydrogen_f_factor())
            }
            q => panic!("unknown quantity {q}"),
        };
        let src = &r["source"];
        assert!(((inf - want) / want).abs() <= tol, "{src}: {inf} vs {want}");
        assert!(
            ((red - want) / want).abs() < 1.2e-4,
            "{src}: reduced-mass {red} vs {want}"
        );
    }
}

#[test]
fn rate_is_consistent_with_oscillator_strength() {
    // A(u -> d) = -2 alpha^3 dE^2 f(u -> d) (atomic units), exactly
    for (u, d) in [
        (st(2, 1), st(1, 0)),
        (st(5, 2), st(3, 1)),
        (st(9, 0), st(4, 1)),
    ] {
        let de = u.energy() - d.energy();
        let a = emission_rate_au_over_alpha3(&u, &d).unwrap();
        let f = oscillator_strength(&u, &d).unwrap();
        assert_eq!(a, -f * Rational::from(&de * &de) * 2u32);
    }
    // Z^4 scaling of rates
    let z = Rational::from(3);
    let u = BoundState::new(3, 2, z.clone()).unwrap();
    let d = BoundState::new(2, 1, z).unwrap();
    assert_eq!(
        emission_rate_au_over_alpha3(&u, &d).unwrap(),
        emission_rate_au_over_alpha3(&st(3, 2), &st(2, 1)).unwrap() * 81u32
    );
}

#[test]
fn bad_input_is_a_typed_error() {
    // n = 0, l >= n, Z <= 0
    assert!(matches!(
        BoundState::hydrogen(0, 0),
        Err(BasisError::InvalidState { n: 0, l: 0 })
    ));
    assert!(matches!(
        BoundState::hydrogen(3, 3),
        Err(BasisError::InvalidState { n: 3, l: 3 })
    ));
    assert!(matches!(
        BoundState::new(2, 1, Rational::from(0)),
        Err(BasisError::InvalidCharge { .. })
    ));
    assert!(matches!(
        BoundState::new(2, 1, Rational::from(-1)),
        Err(BasisError::InvalidCharge { .. })
    ));
    assert!(matches!(
        shell_oscillator_strength(0, 2, &Rational::from(1)),
        Err(BasisError::InvalidState { .. })
    ));
    assert!(matches!(
        shell_emission_rate(3, 2, &Rational::from(-2), NuclearMass::Infinite),
        Err(BasisError::InvalidCharge { .. })
    ));
    // non-dipole transitions
    assert!(matches!(
        oscillator_strength(&st(1, 0), &st(2, 0)),
        Err(BasisError::NotDipoleAllowed {
            n: 1,
            l: 0,
            n2: 2,
            l2: 0
        })
    ));
    assert!(matches!(
        oscillator_strength(&st(2, 0), &st(2, 0)),
        Err(BasisError::NotDipoleAllowed { .. })
    ));
    assert!(matches!(
        emission_rate(&st(3, 2), &st(1, 0), NuclearMass::Infinite),
        Err(BasisError::NotDipoleAllowed { .. })
    ));
    // emission needs upper above lower; nuclear mass must be positive
    assert!(matches!(
        emission_rate(&st(1, 0), &st(2, 1), NuclearMass::Infinite),
        Err(BasisError::InvalidArgument(_))
    ));
    for m in [0.0, -5.0, f64::NAN] {
        assert!(matches!(
            emission_rate(&st(2, 1), &st(1, 0), NuclearMass::ElectronMasses(m)),
            Err(BasisError::InvalidArgument(_))
        ));
    }
}
