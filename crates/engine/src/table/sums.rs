//! The rows of a table of the logarithmic dipole sums: one row per
//! (n, l, k), the rows of one state computed, written and read together.
//!
//! ## CSV layout
//! ```text
//! # setting.quantity: dipole_sums
//! # setting.k: -2,0,2
//! ...
//! n,l,k,S,S_err,L,L_err,ln_I,ln_I_err,method,digits,bits,seconds,check
//! 2,1,-2,44.000000000000,3.3e-66,-83.795275834252,4.5e-13,-1.904438087142,1.1e-13,green,10,224,0.083,...
//! 2,1,0,1.000000000000,7.5e-68,-1.922440538089,4.0e-13,-1.922440538089,4.0e-13,green,10,224,0.083,...
//! 2,1,2,0.000000000000,0,-0.020011139087,2.0e-13,,,green,10,224,0.083,...
//! ```
//! S(k), L(k) and ln I(k) = L(k)/S(k) are in units of Z^2 Ry (see
//! [`kzero_bethe::sums`]); every value and error is printed by the
//! printed-value rule ([`crate::sums::row_text`]: D + 2 decimals, the error
//! rounded up with the rounding folded in). `ln_I` and `ln_I_err` are empty
//! (JSON: `null`) where S(k) is zero within its error (S(2) for l >= 1),
//! where ln I(k) is not defined. With method `both` four columns follow
//! `seconds`: `S_spectral`, `S_err_spectral`, `L_spectral`,
//! `L_err_spectral`. `method`, `digits`, `bits` (the primary method's) and
//! `seconds` (the state's wall time) are the same on every row of a state.

use super::{row_check, FormatProblem};
use crate::method::MethodChoice;
use crate::shard::Key;
use crate::sums::{row_text, ComputedSums};
use serde_json::{json, Map, Value};

/// Columns of a table of the dipole sums (before the checksum).
pub const SUMS_COLUMNS: [&str; 13] = [
    "n", "l", "k", "S", "S_err", "L", "L_err", "ln_I", "ln_I_err", "method", "digits", "bits",
    "seconds",
];
/// Extra columns of a table of the dipole sums with method `both`.
pub const SUMS_BOTH_COLUMNS: [&str; 4] = [
    "S_spectral",
    "S_err_spectral",
    "L_spectral",
    "L_err_spectral",
];

/// One power k of one state, as printed.
#[derive(Debug, Clone, PartialEq, Eq)]
pub struct PowerRow {
    /// The power k.
    pub k: i32,
    /// S(k).
    pub s: String,
    /// Error of `s`.
    pub s_err: String,
    /// L(k).
    pub log_sum: String,
    /// Error of `log_sum`.
    pub log_err: String,
    /// ln I(k) and its error; `None` where S(k) is zero within its error.
    pub ln_i: Option<(String, String)>,
    /// With `both`: the spectral S(k), its error, L(k), its error.
    pub spectral: Option<[String; 4]>,
}

/// The rows of one state of a table of the dipole sums: one [`PowerRow`]
/// per k of the table, in increasing k, and the fields they share.
#[derive(Debug, Clone, PartialEq, Eq)]
pub struct SumsEntry {
    /// n.
    pub n: u32,
    /// l.
    pub l: u32,
    /// Method(s).
    pub method: MethodChoice,
    /// Requested digits (absolute goal).
    pub digits: u32,
    /// Working bits of the primary method's final evaluation.
    pub bits: u32,
    /// Wall time of the state (both methods added), seconds with 3 decimals.
    pub seconds: String,
    /// One row per k.
    pub powers: Vec<PowerRow>,
}

impl SumsEntry {
    /// The rows of a computed state. The primary values are the Green's
    /// function's when computed; with `both` the spectral values follow.
    pub fn from_computed(c: &ComputedSums, method: MethodChoice) -> SumsEntry {
        let p = c.primary();
        let spectral = match (method, c.spectral()) {
            (MethodChoice::Both, Some(s)) => Some(s),
            _ => None,
        };
        let powers = p
            .rows
            .iter()
            .map(|r| {
                let t = row_text(p, r, None);
                let sp = spectral.and_then(|s| {
                    s.row(r.k).map(|sr| {
                        let st = row_text(s, sr, None);
                        [st.s, st.s_err, st.l, st.l_err]
                    })
                });
                PowerRow {
                    k: t.k,
                    s: t.s,
                    s_err: t.s_err,
                    log_sum: t.l,
                    log_err: t.l_err,
                    ln_i: t.ln_i,
                    spectral: sp,
                }
            })
            .collect();
        SumsEntry {
            n: p.n,
            l: p.l,
            method,
            digits: p.digits,
            bits: p.bits,
            seconds: format!("{:.3}", c.seconds()),
            powers,
        }
    }

    /// The state (n, l).
    pub fn key(&self) -> Key {
        (self.n, self.l)
    }

    /// The fields of the row of `p` but the checksum, as written in CSV,
    /// joined by commas (no newline).
    pub fn fields(&self, p: &PowerRow) -> String {
        let (li, lie) = match &p.ln_i {
            Some((v, e)) => (v.as_str(), e.as_str()),
            None => ("", ""),
        };
        let mut s = format!(
            "{},{},{},{},{},{},{},{li},{lie},{},{},{},{}",
            self.n,
            self.l,
            p.k,
            p.s,
            p.s_err,
            p.log_sum,
            p.log_err,
            self.method,
            self.digits,
            self.bits,
            self.seconds
        );
        if let Some(sp) = &p.spectral {
            s.push(',');
            s.push_str(&sp.join(","));
        }
        s
    }

    /// The CSV lines of the state, each with its checksum and newline.
    pub fn csv_lines(&self) -> String {
        let mut s = String::new();
        for p in &self.powers {
            let f = self.fields(p);
            let check = row_check(&f);
            s.push_str(&f);
            s.push(',');
            s.push_str(&check);
            s.push('\n');
        }
        s
    }

    /// The rows of the state as JSON objects (values, errors and seconds as
    /// decimal strings, `ln_I`/`ln_I_err` null where not defined).
    pub fn to_json(&self) -> Vec<Value> {
        self.powers
            .iter()
            .map(|p| {
                let mut m = Map::new();
                m.insert("n".into(), json!(self.n));
                m.insert("l".into(), json!(self.l));
                m.insert("k".into(), json!(p.k));
                m.insert("S".into(), json!(p.s));
                m.insert("S_err".into(), json!(p.s_err));
                m.insert("L".into(), json!(p.log_sum));
                m.insert("L_err".into(), json!(p.log_err));
                let (li, lie) = match &p.ln_i {
                    Some((v, e)) => (json!(v), json!(e)),
                    None => (Value::Null, Value::Null),
                };
                m.insert("ln_I".into(), li);
                m.insert("ln_I_err".into(), lie);
                m.insert("method".into(), json!(self.method.name()));
                m.insert("digits".into(), json!(self.digits));
                m.insert("bits".into(), json!(self.bits));
                m.insert("seconds".into(), json!(self.seconds));
                if let Some(sp) = &p.spectral {
                    for (name, v) in SUMS_BOTH_COLUMNS.iter().zip(sp) {
                        m.insert((*name).into(), json!(v));
                    }
                }
                m.insert(
                    super::CHECK_COLUMN.into(),
                    json!(row_check(&self.fields(p))),
                );
                Value::Object(m)
            })
            .collect()
    }
}

/// One row of a dipole-sum table as read: the fields its state shares, its
/// power row, and the checksum found beside it.
#[derive(Debug, Clone)]
pub(super) struct ReadLine {
    pub(super) head: SumsEntry,
    pub(super) row: PowerRow,
    pub(super) check: String,
}

impl ReadLine {
    pub(super) fn key(&self) -> Key {
        (self.head.n, self.head.l)
    }
}

/// Joins consecutive rows of the same state into entries, checking that
/// each state holds the powers `ks` once each, in order, and that its rows
/// agree on the fields they share. A last state cut short (fewer rows than
/// `ks`, nothing after it) is returned apart as `Some(index of its first
/// row)`: the journal of an interrupted run may end so.
///
/// # Errors
/// [`FormatProblem::StatePowers`] or [`FormatProblem::StateRowsDiffer`],
/// with the index of the state's first row.
pub(super) fn group(
    lines: Vec<ReadLine>,
    ks: &[i32],
) -> Result<(Vec<SumsEntry>, Option<usize>), (usize, FormatProblem)> {
    let mut out: Vec<SumsEntry> = Vec::new();
    let mut start = 0usize;
    let mut i = 0usize;
    let lines_len = lines.len();
    let mut iter = lines.into_iter().peekable();
    while let Some(first) = iter.next() {
        let key = first.key();
        let mut entry = first.head.clone();
        entry.powers.push(first.row);
        i += 1;
        while let Some(next) = iter.peek() {
            if next.key() != key {
                break;
            }
            let next = iter.next().expect("peeked");
            i += 1;
            for (field, same) in [
                ("method", next.head.method == entry.method),
                ("digits", next.head.digits == entry.digits),
                ("bits", next.head.bits == entry.bits),
                ("seconds", next.head.seconds == entry.seconds),
            ] {
                if !same {
                    return Err((start, FormatProblem::StateRowsDiffer { key, field }));
                }
            }
            entry.powers.push(next.row);
        }
        let found: Vec<i32> = entry.powers.iter().map(|p| p.k).collect();
        if found != ks {
            let cut_short = i == lines_len && found.len() < ks.len() && ks.starts_with(&found);
            if cut_short {
                return Ok((out, Some(start)));
            }
            return Err((
                start,
                FormatProblem::StatePowers {
                    key,
                    found: render_powers(&found),
                    want: render_powers(ks),
                },
            ));
        }
        out.push(entry);
        start = i;
    }
    Ok((out, None))
}

/// Powers as written in the `k` setting: increasing, comma-separated.
pub fn render_powers(ks: &[i32]) -> String {
    let v: Vec<String> = ks.iter().map(ToString::to_string).collect();
    v.join(",")
}

#[cfg(test)]
mod tests {
    use super::super::tests::table;
    use super::super::{parse_table, Quantity, StateValues, Table, TableSettings};
    use super::*;
    use crate::build_info::Provenance;
    use crate::shard::Shard;
    use kzero_bethe::{Gauge, Goal};

    /// A dipole-sum table of (1,0) and (2,1) for k = 0, 2 computed at 8
    /// digits (cheap: a few milliseconds per state).
    fn computed(method: MethodChoice) -> Table {
        let s = TableSettings::new(1, 2, None, None, 8, method, Gauge::Length)
            .unwrap()
            .with_sums(&[2, 0, 2])
            .unwrap();
        let mut t = Table::new(s.clone(), Shard::WHOLE, "test", 1);
        for (n, l) in [(2, 1), (1, 0)] {
            let v = s.compute(n, l).unwrap();
            assert!(v.disagreement().is_none());
            let lines = t.add(&v);
            assert_eq!(lines.lines().count(), 2, "one line per k");
        }
        t.sort();
        t
    }

    #[test]
    fn sums_tables_record_quantity_and_powers_and_read_back() {
        for method in [MethodChoice::Green, MethodChoice::Both] {
            let t = computed(method);
            assert_eq!(t.settings.quantity, Quantity::DipoleSums(vec![0, 2]));
            let csv = t.to_csv();
            assert!(csv.contains("# setting.quantity: dipole_sums\n# setting.k: 0,2\n"));
            let header = t.settings.columns().join(",");
            assert!(header.starts_with("n,l,k,S,S_err,L,L_err,ln_I,ln_I_err,method"));
            assert_eq!(
                header.ends_with("L_err_spectral,check"),
                method == MethodChoice::Both
            );
            // S(2) of 2p is zero: ln I(2) is empty.
            assert!(csv.contains("\n2,1,2,0.0000000000,0,"), "{csv}");
            assert!(csv.contains(",,,"), "ln_I empty where S(k) = 0");
            for text in [csv, t.to_json()] {
                let back = parse_table(&text).unwrap();
                assert_eq!(back.settings, t.settings);
                assert_eq!(back.sums, t.sums);
                assert!(back.rows.is_empty() && back.torn_at.is_none());
            }
            let j: Value = serde_json::from_str(&t.to_json()).unwrap();
            assert_eq!(j["meta"]["settings"]["k"], json!([0, 2]));
            assert_eq!(j["meta"]["settings"]["quantity"], "dipole_sums");
            assert_eq!(j["rows"].as_array().unwrap().len(), 4);
            assert_eq!(j["rows"][3]["ln_I"], Value::Null);
            assert_eq!(j["rows"][0]["S"], "1.0000000000");
        }
    }

    #[test]
    fn values_match_the_one_state_computation() {
        // the printed rows are those of crate::sums::row_text of the same
        // computation (`kzero sums` prints the same digits)
        let t = computed(MethodChoice::Green);
        let c = crate::sums::compute_sums(
            1,
            0,
            &[0, 2],
            MethodChoice::Green,
            Gauge::Length,
            &kzero_bethe::Settings::with_digits(8),
        )
        .unwrap();
        let p = c.primary();
        for (row, r) in t.sums[0].powers.iter().zip(&p.rows) {
            let x = row_text(p, r, None);
            assert_eq!((&row.s, &row.s_err), (&x.s, &x.s_err));
            assert_eq!((&row.log_sum, &row.log_err), (&x.l, &x.l_err));
            assert_eq!(row.ln_i, x.ln_i);
        }
        // L(2) = 16 ln k0 / (3 n^3): ln I(2) of 1s is ln k0 = 2.98412855...
        // (Drake & Swainson 1990, via CODATA 2018)
        let li: f64 = t.sums[0].powers[1]
            .ln_i
            .as_ref()
            .unwrap()
            .0
            .parse()
            .unwrap();
        assert!((li - 2.984128555765498).abs() < 1e-8, "{li}");
    }

    #[test]
    fn a_state_cut_short_at_the_end_is_torn_elsewhere_refused() {
        let t = computed(MethodChoice::Green);
        let csv = t.to_csv();
        let last_state = csv.find("\n2,1,").unwrap() + 1;
        // the first row of the last state only, with or without a torn line
        let cut = csv[..csv.rfind("\n2,1,2,").unwrap() + 1].to_string();
        for text in [cut.clone(), format!("{cut}2,1,2,0.00")] {
            let back = parse_table(&text).unwrap();
            assert_eq!(back.torn_at, Some(last_state as u64));
            assert_eq!(back.sums.len(), 1);
            assert_eq!(back.sums[0].key(), (1, 0));
        }
        // followed by a comment line (it was not the end of a run)
        let p = parse_table(&format!("{cut}# resumed_utc: x\n")).unwrap_err();
        assert!(
            p.problem.to_string().contains("rows of (n=2, l=1)"),
            "{p:?}"
        );
        // a row missing inside the table, a row repeated, rows out of order
        let first_of_1s = csv.find("\n1,0,0,").unwrap() + 1;
        let end_of_1s = last_state;
        let row_0 = &csv[first_of_1s..csv[first_of_1s..].find('\n').unwrap() + first_of_1s + 1];
        let row_2 = &csv[first_of_1s + row_0.len()..end_of_1s];
        for (text, want) in [
            (
                csv.replacen(row_0, "", 1),
                "hold k = 2, the table's k are 0,2",
            ),
            (
                csv.replacen(row_0, &format!("{row_0}{row_0}"), 1),
                "hold k = 0,0,2",
            ),
            (
                csv.replacen(&format!("{row_0}{row_2}"), &format!("{row_2}{row_0}"), 1),
                "hold k = 2,0",
            ),
        ] {
            let p = parse_table(&text).unwrap_err().problem.to_string();
            assert!(p.contains(want), "{p}");
        }
        // a JSON table is written whole: a state cut short is refused
        let mut j: Value = serde_json::from_str(&t.to_json()).unwrap();
        j["rows"].as_array_mut().unwrap().pop();
        let p = parse_table(&j.to_string()).unwrap_err().problem.to_string();
        assert!(p.contains("rows of (n=2, l=1)"), "{p}");
    }

    #[test]
    fn rows_of_a_state_share_their_fields_and_errors_are_checked() {
        let t = computed(MethodChoice::Green);
        let mut e = t.sums[0].clone();
        // a second row with other seconds: rebuilt with valid checksums
        let mut other = e.clone();
        other.seconds = "9.999".into();
        let mixed = format!("{}{}", e.csv_lines().lines().next().unwrap(), "\n")
            + other.csv_lines().lines().nth(1).unwrap()
            + "\n";
        let csv = t.to_csv().replace(&e.csv_lines(), &mixed);
        let p = parse_table(&csv).unwrap_err().problem.to_string();
        assert!(p.contains("differ in seconds"), "{p}");
        // ln_I without its error; errors above the goal or negative
        e.powers[0].ln_i = Some(("0.1".into(), "-1e-3".into()));
        let mut t2 = t.clone();
        t2.sums[0] = e.clone();
        let p = parse_table(&t2.to_csv()).unwrap_err().problem.to_string();
        assert!(
            p.contains("row (n=1, l=0, k=0): ln_I_err -1e-3 is negative"),
            "{p}"
        );
        // ln I's error is not bounded by the goal (S may be small)
        e.powers[0].ln_i = Some(("0.1".into(), "1e-3".into()));
        t2.sums[0] = e.clone();
        assert!(parse_table(&t2.to_csv()).is_ok());
        for (field, want) in [("S_err", "above the goal"), ("L_err", "above the goal")] {
            let mut t3 = t.clone();
            let p0 = &mut t3.sums[0].powers[0];
            match field {
                "S_err" => p0.s_err = "1.2e-8".into(),
                _ => p0.log_err = "1.2e-8".into(),
            }
            let p = parse_table(&t3.to_csv()).unwrap_err().problem.to_string();
            assert!(p.contains(field) && p.contains(want), "{p}");
        }
        // ln_I empty but ln_I_err given, with a matching checksum
        let e = &t.sums[1];
        let fields = e
            .fields(&e.powers[1])
            .replacen(",,,green", ",,1e-3,green", 1);
        assert!(fields.contains(",,1e-3,"), "{fields}");
        let csv = t.to_csv().replace(
            e.csv_lines().lines().nth(1).unwrap(),
            &format!("{fields},{}", row_check(&fields)),
        );
        let p = parse_table(&csv).unwrap_err().problem.to_string();
        assert!(p.contains("ln_I and ln_I_err must both be given"), "{p}");
    }

    /// With `both`, a sum where the methods differ beyond their estimates
    /// is named (the table then ends with exit code 3); agreeing methods
    /// are not. The disagreement is made by moving one spectral L(k).
    #[test]
    fn a_disagreement_of_the_methods_is_reported() {
        let s = TableSettings::new(2, 2, None, None, 8, MethodChoice::Both, Gauge::Length)
            .unwrap()
            .with_sums(&[-1, 0])
            .unwrap();
        let StateValues::Sums(c) = s.compute(2, 1).unwrap() else {
            panic!("a dipole-sum table computes sums");
        };
        assert!(StateValues::Sums(c.clone()).disagreement().is_none());
        let mut spectral = c.spectral().unwrap().clone();
        spectral.rows[1].log_sum += 1e-6;
        let moved = ComputedSums::from_parts(c.green().cloned(), Some(spectral));
        let d = StateValues::Sums(moved.clone()).disagreement().unwrap();
        assert!(d.starts_with("(n=2, l=1): L(0) green "), "{d}");
        assert!(d.contains("differ beyond their error estimates"), "{d}");
        // the rows still carry both values, as computed
        let e = SumsEntry::from_computed(&moved, MethodChoice::Both);
        let sp = e.powers[1].spectral.as_ref().unwrap();
        assert_ne!(sp[2], e.powers[1].log_sum);
    }

    #[test]
    fn settings_refuse_bad_powers_and_goals_and_differ_by_quantity() {
        let base =
            TableSettings::new(1, 2, None, None, 10, MethodChoice::Green, Gauge::Velocity).unwrap();
        assert_eq!(
            base.clone().with_sums(&[3]).unwrap_err().to_string(),
            "--sums: k = 3 is outside the supported powers -4..=2 of the dipole sums"
        );
        assert!(base.clone().with_sums(&[]).is_err());
        assert!(base
            .clone()
            .with_goal(Goal::Significant)
            .with_sums(&[0])
            .is_err());
        let s = base.clone().with_sums(&[0, -1, 0]).unwrap();
        assert_eq!(s.quantity.powers(), &[-1, 0]);
        let d = base.differences(&s).to_string();
        assert_eq!(d, "quantity (ln_k0 vs dipole_sums), k (- vs -1,0)");
        let s2 = base.clone().with_sums(&[0]).unwrap();
        assert_eq!(s.differences(&s2).to_string(), "k (-1,0 vs 0)");
        // an ln k0 table writes no quantity: its files read as before
        assert!(!table().to_csv().contains("quantity"));
        // a k list that is not increasing, or a k setting without the
        // quantity, is refused
        let mut t = Table::new(s, Shard::WHOLE, "test", 1);
        t.prov = super::super::table_provenance(&Provenance::now("t"), "1", Shard::WHOLE);
        let csv = t.to_csv();
        assert!(parse_table(&csv).is_ok());
        for bad in [
            csv.replace("setting.k: -1,0", "setting.k: 0,-1"),
            csv.replace("setting.k: -1,0", "setting.k: -1,3"),
            csv.replace("# setting.quantity: dipole_sums\n", ""),
            csv.replace("quantity: dipole_sums", "quantity: other"),
        ] {
            assert!(parse_table(&bad).is_err(), "{bad}");
        }
        // the cost of a state grows with the number of powers
        let one = base.clone().with_sums(&[0]).unwrap();
        let all = base.with_sums(&[-4, -3, -2, -1, 0, 1, 2]).unwrap();
        assert!(all.cost(5, 1) > one.cost(5, 1));
    }
}
