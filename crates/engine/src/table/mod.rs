//! The kzero table format (CSV and JSON): settings, provenance, rows,
//! reading with validation, writing, the journal of a running table,
//! resuming and merging.
//!
//! ## CSV layout
//! ```text
//! # kzero-table: 2
//! # version: 0.1.0
//! # git_revision: 0123456789ab
//! # mpfr: 4.2.1
//! # gmp: 6.3.0
//! # command: kzero table --n-max 3
//! # started_utc: 2026-12-01T20:45:36Z
//! # threads: 2
//! # shard: 1/1
//! # setting.n_min: 1
//! # setting.n_max: 3
//! # setting.l: all
//! # setting.digits: 20
//! # setting.goal: absolute
//! # setting.method: green
//! n,l,ln_k0,abs_err,method,digits,bits,seconds,check
//! 1,0,2.9841285557654984...,1.0e-23,green,20,160,0.012,84a4a5f2a12dcfb1
//! ```
//! The last column, `check`, is the row's checksum ([`Row::check`]): 16
//! hexadecimal digits of the 64-bit FNV-1a hash of the row's other fields
//! exactly as written, joined by commas (`1,0,2.98...,1.0e-23,green,20,160,0.012`).
//! Reading a table refuses a row whose checksum does not match (a value
//! changed by hand, a flipped byte, two lines run together), a row whose
//! error estimate is negative or not a finite number, and a row whose error
//! is above the goal it claims (more than 1.1 times 10^-digits, or
//! 10^-digits |ln k0| for a significant goal: the factor is what rounding
//! the printed error up to two digits can add). The
//! checksum detects changes; it does not authenticate (anyone can compute
//! it again).
//! The provenance lines are the [`Provenance`] schema shared by every file
//! kzero writes, plus `threads` and `shard`. While a run is in progress the
//! file is also its journal ([`journal`]): rows are appended in completion
//! order, each as one whole line, and comment lines (`# resumed_utc: ...`)
//! may follow the column line. A finished run rewrites the file with the
//! rows sorted by (n, l) (atomically: temporary file, then rename).
//!
//! ## JSON layout
//! One object `{"meta": {...}, "rows": [...]}`: `meta` holds `format`
//! (`kzero-table`), `format_version` (2), the provenance keys (a key that
//! repeats becomes an array; `threads` is an integer) and `settings`; each
//! row is an object with the columns as keys (values, errors and seconds as
//! decimal strings, counts as integers, `check` as in the CSV).
//!
//! `setting.goal` is `absolute` (`--digits`) or `significant`
//! (`--significant`); `setting.gauge` is recorded only for methods that
//! have a dipole form (spectral, both). Files without `setting.goal` are
//! read as absolute.
//!
//! Format 2 (this one) added the `check` column. Files of format 1 are
//! refused with a message saying so: they come from an older build, whose
//! rows are never mixed with this build's anyway.
//!
//! ## Tables of the dipole sums
//! A table made with [`TableSettings::with_sums`] holds S(k), L(k) and
//! ln I(k) instead of ln k0 ([`Quantity::DipoleSums`]): its header records
//! `setting.quantity: dipole_sums` and `setting.k` (first among the
//! settings), and it has one row per (n, l, k); see [`sums`] for the
//! columns. The rows of a state are computed together ([`StateValues`]),
//! appended to the journal in one write ([`Table::add`]) and read back as
//! one [`SumsEntry`]: a state whose rows are cut short at the end of a
//! journal is dropped like a torn last line ([`Table::torn_at`] is the
//! start of its first row), so `--resume` computes it again whole; anywhere
//! else a state without every k is refused. Resume and merge compare the
//! quantity and the k list like any other setting. ln k0 tables write no
//! quantity, so their files are the same as before the sums existed.

mod error;
pub mod files;
pub mod journal;
pub mod merge;
mod read;
pub mod sums;

pub use error::{
    Differences, FormatProblem, Place, RowId, SelectionError, SettingDifference, States, TableError,
};
pub use read::{parse_table, read_table, ParseError};
pub use sums::{render_powers, PowerRow, SumsEntry, SUMS_BOTH_COLUMNS, SUMS_COLUMNS};

use crate::batch::{run_jobs, BatchEnd, Flow};
use crate::build_info::{self, Provenance};
use crate::compute::Computed;
use crate::error::EngineError;
use crate::estimate::{Estimate, ShardSuggestion};
use crate::method::MethodChoice;
use crate::shard::{Key, Shard};
use crate::sums::{compute_sums, sums_cost, ComputedSums};
use kzero_bethe::{Gauge, Goal, UnknownName};
use serde_json::{json, Map, Value};
use std::collections::BTreeSet;
use std::str::FromStr;

/// Version of the table format (CSV magic line and JSON `format_version`).
pub const FORMAT_VERSION: u64 = 2;
/// First line of every kzero CSV table (format version 2).
pub const MAGIC: &str = "# kzero-table: 2";
/// `meta.format` of a kzero JSON table.
pub const JSON_FORMAT: &str = "kzero-table";

/// Base columns of every table.
pub const BASE_COLUMNS: [&str; 8] = [
    "n", "l", "ln_k0", "abs_err", "method", "digits", "bits", "seconds",
];
/// Extra columns with method `both`.
pub const BOTH_COLUMNS: [&str; 3] = ["ln_k0_spectral", "abs_err_spectral", "agreement_digits"];
/// The last column of every table: the row checksum ([`Row::check`]).
pub const CHECK_COLUMN: &str = "check";

/// Provenance keys every table carries, in this order: the
/// [`Provenance::KEYS`], then `threads` and `shard`.
pub const PROV_KEYS: [&str; 8] = [
    "version",
    "git_revision",
    "mpfr",
    "gmp",
    "command",
    "started_utc",
    "threads",
    "shard",
];

/// The file format of a table (and of every other tabular output).
#[derive(Debug, Clone, Copy, PartialEq, Eq, Hash, Default)]
pub enum TableFormat {
    /// Comma-separated values with `#` provenance lines.
    #[default]
    Csv,
    /// One JSON object with "meta" and "rows".
    Json,
}

impl TableFormat {
    /// Every format, in the order of [`TableFormat::NAMES`].
    pub const ALL: [TableFormat; 2] = [TableFormat::Csv, TableFormat::Json];
    /// The accepted names.
    pub const NAMES: &'static [&'static str] = &["csv", "json"];

    /// The name: `csv` or `json`.
    pub fn name(self) -> &'static str {
        Self::NAMES[self as usize]
    }

    /// One line describing the format (for help texts).
    pub fn description(self) -> &'static str {
        match self {
            TableFormat::Csv => "Comma-separated values with `#` provenance lines",
            TableFormat::Json => "One JSON object with \"meta\" and \"rows\"",
        }
    }
}

impl std::fmt::Display for TableFormat {
    fn fmt(&self, f: &mut std::fmt::Formatter<'_>) -> std::fmt::Result {
        f.write_str(self.name())
    }
}

impl FromStr for TableFormat {
    type Err = UnknownName;

    fn from_str(s: &str) -> Result<Self, UnknownName> {
        UnknownName::find(s, &Self::ALL, Self::name, Self::NAMES)
    }
}

/// Which angular momenta a table covers.
#[derive(Debug, Clone, PartialEq, Eq)]
pub enum LSelect {
    /// Every l < n.
    All,
    /// l <= K (and l < n).
    Max(u32),
    /// The listed values (each used where l < n), sorted and deduplicated.
    List(Vec<u32>),
}

impl LSelect {
    fn render(&self) -> String {
        match self {
            LSelect::All => "all".into(),
            LSelect::Max(k) => format!("max:{k}"),
            LSelect::List(v) => {
                let s: Vec<String> = v.iter().map(|x| x.to_string()).collect();
                format!("list:{}", s.join(" "))
            }
        }
    }

    fn parse(s: &str) -> Option<Self> {
        if s == "all" {
            return Some(LSelect::All);
        }
        if let Some(k) = s.strip_prefix("max:") {
            return k.parse().ok().map(LSelect::Max);
        }
        if let Some(list) = s.strip_prefix("list:") {
            let v: Result<Vec<u32>, _> = list.split(' ').map(|x| x.parse()).collect();
            return v.ok().map(LSelect::List);
        }
        None
    }

    /// Whether (n, l) is selected (l < n and the selection admits l).
    pub fn admits(&self, n: u32, l: u32) -> bool {
        l < n
            && match self {
                LSelect::All => true,
                LSelect::Max(k) => l <= *k,
                LSelect::List(v) => v.contains(&l),
            }
    }
}

/// What a table tabulates.
///
/// `LnK0` tables write no `quantity` setting (their files read exactly as
/// before the dipole sums existed); tables of the dipole sums record
/// `setting.quantity: dipole_sums` and `setting.k` (the powers,
/// increasing, comma-separated; a JSON array of integers in `meta.settings`).
#[derive(Debug, Clone, PartialEq, Eq, Default)]
pub enum Quantity {
    /// The Bethe logarithm ln k0(n, l): one row per state.
    #[default]
    LnK0,
    /// The logarithmic dipole sums S(k), L(k), ln I(k) for these powers k
    /// (increasing, each in [`kzero_bethe::sums::K_MIN`]..=
    /// [`kzero_bethe::sums::K_MAX`]): one row per (state, k), the rows of a
    /// state computed and written together ([`sums`]).
    DipoleSums(Vec<i32>),
}

impl Quantity {
    /// The name of ln k0 tables (compared on resume and merge, never
    /// written).
    pub const LN_K0: &'static str = "ln_k0";
    /// The name of dipole-sum tables (`setting.quantity`).
    pub const DIPOLE_SUMS: &'static str = "dipole_sums";

    /// The name: `ln_k0` or `dipole_sums`.
    pub fn name(&self) -> &'static str {
        match self {
            Quantity::LnK0 => Self::LN_K0,
            Quantity::DipoleSums(_) => Self::DIPOLE_SUMS,
        }
    }

    /// The powers k of a dipole-sum table (empty for ln k0).
    pub fn powers(&self) -> &[i32] {
        match self {
            Quantity::LnK0 => &[],
            Quantity::DipoleSums(ks) => ks,
        }
    }

    /// The dipole form of the spectral method when none is chosen:
    /// velocity for ln k0 (as `kzero state`), length for the dipole sums
    /// (as `kzero sums`), so that a table row and the one-state command
    /// print the same digits.
    pub fn default_gauge(&self) -> Gauge {
        match self {
            Quantity::LnK0 => Gauge::Velocity,
            Quantity::DipoleSums(_) => crate::sums::SUMS_DEFAULT_GAUGE,
        }
    }
}

/// The powers of a `k` setting: increasing, without repetitions, each
/// supported (`None` otherwise).
fn parse_powers(text: &str) -> Option<Vec<i32>> {
    let ks: Vec<i64> = text
        .split(',')
        .map(|x| x.trim().parse().ok())
        .collect::<Option<_>>()?;
    let v = kzero_bethe::sums::validate_powers(&ks).ok()?;
    (v.len() == ks.len() && v.iter().zip(&ks).all(|(a, b)| i64::from(*a) == *b)).then_some(v)
}

/// Every numerical setting of a table: two tables can be resumed into each
/// other or merged only when these agree exactly.
#[derive(Debug, Clone, PartialEq, Eq)]
pub struct TableSettings {
    /// Smallest n.
    pub n_min: u32,
    /// Largest n.
    pub n_max: u32,
    /// Angular momenta.
    pub l: LSelect,
    /// Requested digits: absolute error below 10^-digits, or digits
    /// significant digits (see `goal`).
    pub digits: u32,
    /// The kind of goal `digits` sets (recorded as `setting.goal`).
    pub goal: Goal,
    /// Method(s).
    pub method: MethodChoice,
    /// Dipole form of the spectral method (not recorded for the green
    /// method, which has none).
    pub gauge: Gauge,
    /// What the table tabulates (ln k0 unless [`TableSettings::with_sums`]).
    pub quantity: Quantity,
}

fn nonneg(v: i64, neg: fn(i64) -> SelectionError) -> Result<u32, SelectionError> {
    u32::try_from(v).map_err(|_| neg(v))
}

impl TableSettings {
    /// Validated settings of a table over n_min..=n_max with the l values
    /// `l_list` (each used where l < n) or l <= `l_max` (the list wins when
    /// both are given) or every l.
    ///
    /// `digits` is checked when the table is computed.
    ///
    /// # Errors
    /// [`SelectionError`]: n_max outside 1..=200, n_min outside 1..=n_max,
    /// a negative l, or no state selected.
    pub fn new(
        n_min: i64,
        n_max: i64,
        l_list: Option<&[i64]>,
        l_max: Option<i64>,
        digits: u32,
        method: MethodChoice,
        gauge: Gauge,
    ) -> Result<TableSettings, SelectionError> {
        let max = kzero_bethe::settings::MAX_N;
        if n_max < 1 || n_max > i64::from(max) {
            return Err(SelectionError::NMax { n_max, max });
        }
        if n_min < 1 || n_min > n_max {
            return Err(SelectionError::NMin { n_min, n_max });
        }
        let l = match (l_list, l_max) {
            (Some(list), _) => {
                let mut v = Vec::new();
                for &x in list {
                    v.push(nonneg(x, SelectionError::NegativeL)?);
                }
                v.sort_unstable();
                v.dedup();
                LSelect::List(v)
            }
            (None, Some(k)) => LSelect::Max(nonneg(k, SelectionError::NegativeLMax)?),
            (None, None) => LSelect::All,
        };
        let s = TableSettings {
            n_min: n_min as u32,
            n_max: n_max as u32,
            l,
            digits,
            goal: Goal::Absolute,
            method,
            gauge,
            quantity: Quantity::LnK0,
        };
        if s.states().is_empty() {
            return Err(SelectionError::NoStates);
        }
        Ok(s)
    }

    /// The same settings with the goal `goal` (absolute by default).
    pub fn with_goal(mut self, goal: Goal) -> TableSettings {
        self.goal = goal;
        self
    }

    /// The same settings tabulating the dipole sums S(k), L(k), ln I(k)
    /// for the powers `ks` (sorted and deduplicated) instead of ln k0. Call
    /// it after [`TableSettings::with_goal`]: the sums take an absolute
    /// goal only. The gauge is left as given (see
    /// [`Quantity::default_gauge`]).
    ///
    /// # Errors
    /// [`SelectionError::Power`] for a k outside
    /// [`kzero_bethe::sums::K_MIN`]..=[`kzero_bethe::sums::K_MAX`],
    /// [`SelectionError::NoPowers`] for an empty list,
    /// [`SelectionError::SumsGoal`] with a significant-digit goal.
    ///
    /// # Example
    /// A whole table of the dipole sums through library calls (what
    /// `kzero table --n-max 2 --sums -2,0 --digits 8` writes):
    /// ```
    /// use kzero_engine::{Gauge, MethodChoice, Shard, Table, TableSettings};
    /// let s = TableSettings::new(1, 2, None, None, 8, MethodChoice::Green, Gauge::Length)
    ///     .unwrap()
    ///     .with_sums(&[0, -2])
    ///     .unwrap();
    /// let mut t = Table::new(s.clone(), Shard::WHOLE, "example", 1);
    /// for ((n, l), _cost) in s.plan(Shard::WHOLE) {
    ///     let lines = t.add(&s.compute(n, l).unwrap());
    ///     assert_eq!(lines.lines().count(), 2); // one row per k
    /// }
    /// t.sort();
    /// let csv = t.to_csv();
    /// assert!(csv.contains("# setting.k: -2,0\n"));
    /// // 1s: S(-2) = 9/8, a quarter of the static polarizability 9/2 bohr^3
    /// // (Bethe & Salpeter 1957)
    /// assert!(csv.contains("\n1,0,-2,1.1250000000,"));
    /// let back = kzero_engine::table::parse_table(&csv).unwrap();
    /// assert_eq!(back.sums, t.sums);
    /// ```
    pub fn with_sums(mut self, ks: &[i64]) -> Result<TableSettings, SelectionError> {
        use kzero_bethe::BetheError;
        let ks = kzero_bethe::sums::validate_powers(ks).map_err(|e| match e {
            BetheError::PowerOutOfRange { k, min, max } => SelectionError::Power { k, min, max },
            _ => SelectionError::NoPowers,
        })?;
        if self.goal != Goal::Absolute {
            return Err(SelectionError::SumsGoal);
        }
        self.quantity = Quantity::DipoleSums(ks);
        Ok(self)
    }

    /// The settings as (key, value) pairs in a fixed order, as written. The
    /// gauge is left out for the green method (it has no dipole form); the
    /// quantity and the powers k are written for dipole-sum tables only.
    pub fn pairs(&self) -> Vec<(&'static str, String)> {
        let mut v = Vec::new();
        if let Quantity::DipoleSums(ks) = &self.quantity {
            v.push(("quantity", self.quantity.name().to_string()));
            v.push(("k", render_powers(ks)));
        }
        v.extend([
            ("n_min", self.n_min.to_string()),
            ("n_max", self.n_max.to_string()),
            ("l", self.l.render()),
            ("digits", self.digits.to_string()),
            ("goal", self.goal.name().to_string()),
            ("method", self.method.name().to_string()),
        ]);
        if self.method != MethodChoice::Green {
            v.push(("gauge", self.gauge.name().to_string()));
        }
        v
    }

    fn from_lookup(get: &dyn Fn(&str) -> Option<String>) -> Result<Self, FormatProblem> {
        let need = |k: &'static str| get(k).ok_or(FormatProblem::MissingSetting(k));
        let num = |k: &'static str| -> Result<u32, FormatProblem> {
            need(k)?
                .parse()
                .map_err(|_| FormatProblem::SettingNotNumber(k))
        };
        let l = LSelect::parse(&need("l")?).ok_or(FormatProblem::BadLSetting)?;
        let method: MethodChoice = need("method")?
            .parse()
            .map_err(|_| FormatProblem::UnknownMethod)?;
        // ln k0 tables record no quantity
        let quantity = match get("quantity").as_deref() {
            None => Quantity::LnK0,
            Some(Quantity::DIPOLE_SUMS) => {
                Quantity::DipoleSums(parse_powers(&need("k")?).ok_or(FormatProblem::BadPowers)?)
            }
            Some(_) => return Err(FormatProblem::UnknownQuantity),
        };
        if quantity == Quantity::LnK0 && get("k").is_some() {
            return Err(FormatProblem::UnknownQuantity);
        }
        // the green method records no gauge
        let gauge: Gauge = match (get("gauge"), method) {
            (None, MethodChoice::Green) => quantity.default_gauge(),
            (g, _) => g
                .ok_or(FormatProblem::MissingSetting("gauge"))?
                .parse()
                .map_err(|_| FormatProblem::UnknownGauge)?,
        };
        // tables written before goals existed have absolute goals
        let goal = match get("goal") {
            None => Goal::Absolute,
            Some(g) => Goal::from_name(&g).ok_or(FormatProblem::UnknownGoal)?,
        };
        Ok(TableSettings {
            n_min: num("n_min")?,
            n_max: num("n_max")?,
            l,
            digits: num("digits")?,
            goal,
            method,
            gauge,
            quantity,
        })
    }

    /// Every state the settings ask for, sorted by (n, l) (the row order of
    /// a finished table).
    pub fn states(&self) -> Vec<Key> {
        let mut v = Vec::new();
        for n in self.n_min..=self.n_max {
            for l in 0..n {
                if self.l.admits(n, l) {
                    v.push((n, l));
                }
            }
        }
        v
    }

    /// The column names of a table with these settings.
    pub fn columns(&self) -> Vec<&'static str> {
        let both = self.method == MethodChoice::Both;
        let mut c: Vec<&'static str> = match self.quantity {
            Quantity::LnK0 => BASE_COLUMNS.to_vec(),
            Quantity::DipoleSums(_) => SUMS_COLUMNS.to_vec(),
        };
        match (&self.quantity, both) {
            (Quantity::LnK0, true) => c.extend(BOTH_COLUMNS),
            (Quantity::DipoleSums(_), true) => c.extend(SUMS_BOTH_COLUMNS),
            (_, false) => {}
        }
        c.push(CHECK_COLUMN);
        c
    }

    /// [`TableSettings::pairs`] with the quantity always named (so that an
    /// ln k0 table and a dipole-sum table differ in it).
    fn compared_pairs(&self) -> Vec<(&'static str, String)> {
        let mut v = self.pairs();
        if self.quantity == Quantity::LnK0 {
            v.insert(0, ("quantity", Quantity::LN_K0.to_string()));
        }
        v
    }

    /// The keys in which `self` and `other` differ (empty when they agree),
    /// the quantity and the powers k included.
    pub fn differences(&self, other: &TableSettings) -> Differences {
        let theirs = other.compared_pairs();
        let mut diffs: Vec<SettingDifference> = Vec::new();
        for (k, v) in self.compared_pairs() {
            let w = theirs
                .iter()
                .find(|(k2, _)| *k2 == k)
                .map_or_else(|| "-".to_string(), |(_, w)| w.clone());
            if v != w {
                diffs.push(SettingDifference {
                    key: k,
                    first: v,
                    second: w,
                });
            }
        }
        // keys only the other side records (the gauge of a non-green
        // method, the powers of a dipole-sum table)
        let mine = self.compared_pairs();
        for (k, w) in theirs {
            if !mine.iter().any(|(k2, _)| *k2 == k) {
                diffs.push(SettingDifference {
                    key: k,
                    first: "-".into(),
                    second: w,
                });
            }
        }
        Differences(diffs)
    }

    /// The estimated cost of one state (single-core CPU seconds on the
    /// reference machine of benches/README.md, an estimate): [`crate::cost`]
    /// for ln k0, [`sums_cost`] with the table's number of powers for the
    /// dipole sums. Used for the shard plan and `--estimate`.
    pub fn cost(&self, n: u32, l: u32) -> f64 {
        match &self.quantity {
            Quantity::LnK0 => crate::compute::cost(n, l, self.digits, self.method),
            Quantity::DipoleSums(ks) => sums_cost(n, l, self.digits, ks.len(), self.method),
        }
    }

    /// The states of part `shard` of the table with their [`cost`](Self::cost),
    /// most expensive first ([`crate::shard::plan_by`]).
    pub fn plan(&self, shard: Shard) -> Vec<(Key, f64)> {
        crate::shard::plan_by(&self.states(), &|(n, l)| self.cost(n, l), shard)
    }

    /// The estimated cost of the states of part `shard` on `threads`
    /// threads ([`crate::estimate::estimate_by`]).
    pub fn estimate(&self, shard: Shard, threads: usize) -> Estimate {
        let states: Vec<Key> = self.plan(shard).into_iter().map(|(k, _)| k).collect();
        crate::estimate::estimate_by(&states, &|(n, l)| self.cost(n, l), threads)
    }

    /// The fewest shards of the states of part `shard` whose slowest part
    /// finishes within `target_seconds` on `threads` threads each
    /// ([`crate::estimate::suggest_shards_by`]).
    pub fn suggest_shards(
        &self,
        shard: Shard,
        threads: usize,
        target_seconds: f64,
    ) -> ShardSuggestion {
        let states: Vec<Key> = self.plan(shard).into_iter().map(|(k, _)| k).collect();
        crate::estimate::suggest_shards_by(
            &states,
            &|(n, l)| self.cost(n, l),
            threads,
            target_seconds,
        )
    }

    /// Computes the rows of one state: ln k0 through [`crate::compute()`],
    /// or the dipole sums of the table's powers through [`compute_sums`].
    ///
    /// # Errors
    /// As those functions (bad input, non-convergence).
    pub fn compute(&self, n: u32, l: u32) -> Result<StateValues, EngineError> {
        match &self.quantity {
            Quantity::LnK0 => self.request().compute(n, l).map(StateValues::LnK0),
            Quantity::DipoleSums(ks) => {
                let ks: Vec<i64> = ks.iter().map(|&k| i64::from(k)).collect();
                compute_sums(
                    i64::from(n),
                    i64::from(l),
                    &ks,
                    self.method,
                    self.gauge,
                    &self.request().settings,
                )
                .map(StateValues::Sums)
            }
        }
    }

    /// The compute request of every row.
    pub fn request(&self) -> crate::batch::Request {
        crate::batch::Request {
            method: self.method,
            gauge: self.gauge,
            settings: kzero_bethe::Settings {
                digits: self.digits,
                goal: self.goal,
            },
        }
    }
}

/// The computed values of one state of a table, before they become rows.
#[derive(Debug, Clone)]
pub enum StateValues {
    /// ln k0 by the table's method(s).
    LnK0(Computed),
    /// The dipole sums by the table's method(s).
    Sums(ComputedSums),
}

impl StateValues {
    /// With method `both`: one line describing where the two methods differ
    /// beyond their combined error estimates (the first such k for the
    /// sums), or `None` when they agree (or with one method).
    pub fn disagreement(&self) -> Option<String> {
        match self {
            StateValues::LnK0(c) => match c.check_agreement() {
                Err(EngineError::MethodsDisagree {
                    n,
                    l,
                    green,
                    green_err,
                    spectral,
                    spectral_err,
                    digits,
                }) => Some(format!(
                    "(n={n}, l={l}): green {green} +- {green_err} and spectral {spectral} +- {spectral_err} differ beyond their error estimates ({digits} agreeing digits)"
                )),
                _ => None,
            },
            StateValues::Sums(c) => {
                let p = c.primary();
                let d = c.disagreements();
                let (k, q, g, s) = d.first()?;
                let more = if d.len() > 1 {
                    format!(" (and {} more sums of this state)", d.len() - 1)
                } else {
                    String::new()
                };
                Some(format!(
                    "(n={}, l={}): {q}({k}) green {g} and spectral {s} differ beyond their error estimates{more}",
                    p.n, p.l
                ))
            }
        }
    }
}

/// Computes the states `states` of a table with `settings` on `threads`
/// worker threads ([`TableSettings::compute`] per state) and hands each
/// result to `on_result(index into states, result)` on the calling thread,
/// in completion order. `cancel` and the [`Flow`] answer work as in
/// [`crate::run_batch`].
///
/// # Accuracy
/// The values of a state do not depend on the thread count, the order or
/// the other states.
///
/// # Errors
/// [`EngineError::Threads`] only; the errors of single states go to
/// `on_result`.
pub fn run_table(
    states: &[Key],
    settings: &TableSettings,
    threads: usize,
    cancel: &(dyn Fn() -> bool + Sync),
    on_result: &mut dyn FnMut(usize, Result<StateValues, EngineError>) -> Flow,
) -> Result<BatchEnd, EngineError> {
    run_jobs(
        states,
        threads,
        cancel,
        &|n, l| settings.compute(n, l),
        on_result,
    )
}

/// One table row, all values already formatted (strings are what is written).
#[derive(Debug, Clone, PartialEq, Eq)]
pub struct Row {
    /// n.
    pub n: u32,
    /// l.
    pub l: u32,
    /// ln k0 with digits + 2 decimals.
    pub ln_k0: String,
    /// Error estimate.
    pub abs_err: String,
    /// Method(s).
    pub method: MethodChoice,
    /// Requested digits.
    pub digits: u32,
    /// Working bits of the final evaluation.
    pub bits: u32,
    /// Wall time, seconds with 3 decimals.
    pub seconds: String,
    /// With `both`: spectral value, its error, agreement digits.
    pub both: Option<(String, String, u32)>,
}

impl Row {
    /// The row for a computed state.
    pub fn from_computed(c: &Computed, method: MethodChoice) -> Row {
        let p = c.primary();
        let both = match (c.spectral(), c.agreement()) {
            (Some(s), Some(a)) if method == MethodChoice::Both => {
                Some((s.value_string(), s.abs_err_string(), a.digits))
            }
            _ => None,
        };
        Row {
            n: p.n,
            l: p.l,
            ln_k0: p.value_string(),
            abs_err: p.abs_err_string(),
            method,
            digits: p.digits,
            bits: p.bits,
            seconds: format!("{:.3}", c.seconds()),
            both,
        }
    }

    /// The state (n, l).
    pub fn key(&self) -> Key {
        (self.n, self.l)
    }

    /// The CSV line, with its checksum and its newline.
    pub fn csv_line(&self) -> String {
        let fields = self.fields();
        let check = row_check(&fields);
        format!("{fields},{check}\n")
    }

    /// The row's checksum: 16 hexadecimal digits of the 64-bit FNV-1a hash
    /// of [`Row::fields`]. It is written with the row and checked when the
    /// row is read back.
    pub fn check(&self) -> String {
        row_check(&self.fields())
    }

    /// Every field but the checksum, as written in CSV, joined by commas
    /// (no newline).
    pub fn fields(&self) -> String {
        let mut s = format!(
            "{},{},{},{},{},{},{},{}",
            self.n,
            self.l,
            self.ln_k0,
            self.abs_err,
            self.method,
            self.digits,
            self.bits,
            self.seconds
        );
        if let Some((v, e, d)) = &self.both {
            s.push_str(&format!(",{v},{e},{d}"));
        }
        s
    }

    /// The row as a JSON object.
    pub fn to_json(&self) -> Value {
        let mut m = Map::new();
        m.insert("n".into(), json!(self.n));
        m.insert("l".into(), json!(self.l));
        m.insert("ln_k0".into(), json!(self.ln_k0));
        m.insert("abs_err".into(), json!(self.abs_err));
        m.insert("method".into(), json!(self.method.name()));
        m.insert("digits".into(), json!(self.digits));
        m.insert("bits".into(), json!(self.bits));
        m.insert("seconds".into(), json!(self.seconds));
        if let Some((v, e, d)) = &self.both {
            m.insert("ln_k0_spectral".into(), json!(v));
            m.insert("abs_err_spectral".into(), json!(e));
            m.insert("agreement_digits".into(), json!(d));
        }
        m.insert(CHECK_COLUMN.into(), json!(self.check()));
        Value::Object(m)
    }
}

/// A table read from a file or about to be written.
#[derive(Debug, Clone)]
pub struct Table {
    /// Provenance (key, value) lines in file order; keys may repeat
    /// (`resumed_utc`, `merged_from`).
    pub prov: Vec<(String, String)>,
    /// Numerical settings.
    pub settings: TableSettings,
    /// Which part of the table.
    pub shard: Shard,
    /// The rows of an ln k0 table (file order until sorted); empty in a
    /// dipole-sum table.
    pub rows: Vec<Row>,
    /// The states of a dipole-sum table, each with its rows (file order
    /// until sorted); empty in an ln k0 table.
    pub sums: Vec<SumsEntry>,
    /// For a CSV file cut short by a crash: byte offset where the torn last
    /// line starts, or in a dipole-sum table the first row of a last state
    /// cut short (the file is valid up to there).
    pub torn_at: Option<u64>,
}

/// The provenance lines of a new table: [`Provenance`] plus `threads` and
/// `shard`, in the order of [`PROV_KEYS`].
pub fn table_provenance(p: &Provenance, threads: &str, shard: Shard) -> Vec<(String, String)> {
    let mut v = p.pairs();
    v.push(("threads".into(), threads.to_string()));
    v.push(("shard".into(), shard.to_string()));
    v
}

impl Table {
    /// An empty table of `settings` and `shard`, with the provenance of this
    /// build started now by `command` on `threads` threads.
    pub fn new(settings: TableSettings, shard: Shard, command: &str, threads: usize) -> Table {
        Table {
            prov: table_provenance(&Provenance::now(command), &threads.to_string(), shard),
            settings,
            shard,
            rows: Vec::new(),
            sums: Vec::new(),
            torn_at: None,
        }
    }

    /// The first value of provenance key `key`.
    pub fn prov_value(&self, key: &str) -> Option<&str> {
        self.prov
            .iter()
            .find(|(k, _)| k == key)
            .map(|(_, v)| v.as_str())
    }

    /// Sorts rows by (n, l) (for the dipole sums: states by (n, l), each
    /// state's rows stay in increasing k).
    pub fn sort(&mut self) {
        self.rows.sort_by_key(|r| (r.n, r.l));
        self.sums.sort_by_key(SumsEntry::key);
    }

    /// Adds the rows of one computed state and returns their CSV lines
    /// (what a journal appends, in one write, so that the rows of a state
    /// are kept together). The row kind follows `values`, which
    /// [`TableSettings::compute`] of this table's settings makes.
    pub fn add(&mut self, values: &StateValues) -> String {
        match values {
            StateValues::LnK0(c) => {
                let row = Row::from_computed(c, self.settings.method);
                let line = row.csv_line();
                self.rows.push(row);
                line
            }
            StateValues::Sums(c) => {
                let entry = SumsEntry::from_computed(c, self.settings.method);
                let lines = entry.csv_lines();
                self.sums.push(entry);
                lines
            }
        }
    }

    /// The number of states in the table.
    pub fn state_count(&self) -> usize {
        self.rows.len() + self.sums.len()
    }

    /// The CSV header (magic, provenance, settings, column line).
    pub fn csv_header(&self) -> String {
        let mut s = String::new();
        s.push_str(MAGIC);
        s.push('\n');
        for (k, v) in &self.prov {
            s.push_str(&format!("# {k}: {}\n", one_line(v)));
        }
        for (k, v) in self.settings.pairs() {
            s.push_str(&format!("# setting.{k}: {v}\n"));
        }
        s.push_str(&self.settings.columns().join(","));
        s.push('\n');
        s
    }

    /// The whole table as CSV.
    pub fn to_csv(&self) -> String {
        let mut s = self.csv_header();
        for r in &self.rows {
            s.push_str(&r.csv_line());
        }
        for e in &self.sums {
            s.push_str(&e.csv_lines());
        }
        s
    }

    /// The whole table as one JSON object with `meta` and `rows`.
    pub fn to_json(&self) -> String {
        let mut meta = Map::new();
        meta.insert("format".into(), json!(JSON_FORMAT));
        meta.insert("format_version".into(), json!(FORMAT_VERSION));
        for (k, v) in &self.prov {
            // the thread count is an integer (a merged table says in words)
            let val = match (k.as_str(), v.parse::<u64>()) {
                ("threads", Ok(t)) => json!(t),
                _ => json!(v),
            };
            match meta.get_mut(k) {
                None => {
                    meta.insert(k.clone(), val);
                }
                Some(Value::Array(a)) => a.push(json!(v)),
                Some(old) => {
                    let first = old.take();
                    *old = Value::Array(vec![first, json!(v)]);
                }
            }
        }
        let mut set = Map::new();
        for (k, v) in self.settings.pairs() {
            match v.parse::<u64>() {
                Ok(x) => set.insert(k.into(), json!(x)),
                Err(_) => set.insert(k.into(), json!(v)),
            };
        }
        if let Quantity::DipoleSums(ks) = &self.settings.quantity {
            // the powers as integers
            set.insert("k".into(), json!(ks));
        }
        meta.insert("settings".into(), Value::Object(set));
        let mut rows: Vec<Value> = self.rows.iter().map(Row::to_json).collect();
        rows.extend(self.sums.iter().flat_map(SumsEntry::to_json));
        let doc = json!({ "meta": Value::Object(meta), "rows": rows });
        let mut s = serde_json::to_string_pretty(&doc).unwrap_or_default();
        s.push('\n');
        s
    }

    /// The table in `format`.
    pub fn render(&self, format: TableFormat) -> String {
        match format {
            TableFormat::Csv => self.to_csv(),
            TableFormat::Json => self.to_json(),
        }
    }

    /// The set of (n, l) keys (of the rows, or of the states of a
    /// dipole-sum table), with the first duplicate found if any.
    pub fn keys(&self) -> (BTreeSet<Key>, Option<Key>) {
        let mut set = BTreeSet::new();
        let mut dup = None;
        let keys = self
            .rows
            .iter()
            .map(Row::key)
            .chain(self.sums.iter().map(SumsEntry::key));
        for key in keys {
            if !set.insert(key) && dup.is_none() {
                dup = Some(key);
            }
        }
        (set, dup)
    }

    /// Refuses to combine rows computed by another kzero build: the version
    /// and (when both are known) the git revision must match this library.
    /// `path` names the file in the error.
    ///
    /// # Errors
    /// [`TableError::OtherVersion`] or [`TableError::OtherRevision`].
    pub fn check_same_build(&self, path: &std::path::Path) -> Result<(), TableError> {
        let v = self.prov_value("version").unwrap_or("");
        if v != build_info::VERSION {
            return Err(TableError::OtherVersion {
                path: path.to_path_buf(),
                theirs: v.to_string(),
                ours: build_info::VERSION,
            });
        }
        let g = self.prov_value("git_revision").unwrap_or("unknown");
        if g != "unknown" && build_info::GIT_REVISION != "unknown" && g != build_info::GIT_REVISION
        {
            return Err(TableError::OtherRevision {
                path: path.to_path_buf(),
                theirs: g.to_string(),
                ours: build_info::GIT_REVISION,
            });
        }
        Ok(())
    }
}

/// 16 hexadecimal digits of the 64-bit FNV-1a hash of `text` (offset basis
/// 0xcbf29ce484222325, prime 0x100000001b3).
pub fn row_check(text: &str) -> String {
    let mut h: u64 = 0xcbf2_9ce4_8422_2325;
    for b in text.bytes() {
        h ^= u64::from(b);
        h = h.wrapping_mul(0x0000_0100_0000_01b3);
    }
    format!("{h:016x}")
}

fn one_line(s: &str) -> String {
    s.replace(['\n', '\r'], " ")
}

#[cfg(test)]
pub(crate) mod tests {
    use super::*;

    pub(super) fn settings() -> TableSettings {
        TableSettings {
            n_min: 1,
            n_max: 3,
            l: LSelect::All,
            digits: 10,
            goal: Goal::Absolute,
            method: MethodChoice::Green,
            gauge: Gauge::Velocity,
            quantity: Quantity::LnK0,
        }
    }

    pub(super) fn table() -> Table {
        Table {
            prov: table_provenance(&Provenance::now("test"), "1", Shard::WHOLE),
            settings: settings(),
            shard: Shard::WHOLE,
            rows: vec![Row {
                n: 2,
                l: 1,
                ln_k0: "-0.030016708630".into(),
                abs_err: "1.0e-12".into(),
                method: MethodChoice::Green,
                digits: 10,
                bits: 96,
                seconds: "0.010".into(),
                both: None,
            }],
            sums: Vec::new(),
            torn_at: None,
        }
    }

    #[test]
    fn csv_and_json_round_trip() {
        let t = table();
        let c = parse_table(&t.to_csv()).unwrap();
        assert_eq!(c.rows, t.rows);
        assert_eq!(c.settings, t.settings);
        assert_eq!(c.prov, t.prov);
        let j = parse_table(&t.to_json()).unwrap();
        assert_eq!(j.rows, t.rows);
        assert_eq!(j.settings, t.settings);
        assert_eq!(j.prov, t.prov);
    }

    #[test]
    fn torn_last_line_is_reported_not_parsed() {
        let t = table();
        let mut s = t.to_csv();
        let full = s.len();
        s.push_str("3,0,2.76");
        let c = parse_table(&s).unwrap();
        assert_eq!(c.torn_at, Some(full as u64));
        assert_eq!(c.rows.len(), 1);
    }

    #[test]
    fn cut_header_and_foreign_text_are_rejected() {
        let s = table().to_csv();
        let cut = &s[..40];
        assert!(parse_table(cut)
            .unwrap_err()
            .problem
            .to_string()
            .contains("truncated"));
        assert!(parse_table("a,b,c\n1,2,3\n")
            .unwrap_err()
            .problem
            .to_string()
            .contains("not a kzero table"));
    }

    /// The row checksum is FNV-1a 64: check values of the published
    /// algorithm (the empty string gives the offset basis; "a" gives
    /// af63dc4c8601ec8c, FNV reference test vectors, from memory).
    #[test]
    fn row_check_is_fnv1a_64() {
        assert_eq!(row_check(""), "cbf29ce484222325");
        assert_eq!(row_check("a"), "af63dc4c8601ec8c");
        assert_eq!(row_check("foobar"), "85944171f73967e8");
    }

    fn problem(text: &str) -> String {
        parse_table(text).unwrap_err().problem.to_string()
    }

    #[test]
    fn changed_rows_are_refused() {
        let t = table();
        let csv = t.to_csv();
        let json = t.to_json();
        assert!(parse_table(&csv).is_ok() && parse_table(&json).is_ok());
        // A changed digit of the value, of the error, of the time.
        for (from, to) in [
            ("-0.030016708630", "-0.030016708631"),
            ("1.0e-12", "1.1e-12"),
            ("0.010", "0.011"),
        ] {
            for text in [&csv, &json] {
                if text.contains(from) {
                    let p = problem(&text.replace(from, to));
                    assert!(p.contains("was changed after it was written"), "{p}");
                }
            }
        }
        // A row without its checksum, or with another row's.
        let no_check = csv.replace(&format!(",{}\n", t.rows[0].check()), "\n");
        assert!(problem(&no_check).contains("expected 9 fields"));
    }

    #[test]
    fn impossible_errors_are_refused_even_with_a_matching_checksum() {
        for (err, want) in [
            ("-5", "is negative"),
            ("-0.0", "is negative"),
            ("1e5", "above the goal of 10 digits"),
            ("1.2e-10", "above the goal of 10 digits"),
            ("NaN", "not a number"),
            ("inf", "not a number"),
        ] {
            let mut t = table();
            t.rows[0].abs_err = err.into();
            for text in [t.to_csv(), t.to_json()] {
                let p = problem(&text);
                assert!(p.contains(want), "{err}: {p}");
            }
        }
        // At the bound (the goal plus the rounding of the printed error) a
        // row is accepted.
        let mut t = table();
        t.rows[0].abs_err = "1.1e-10".into();
        assert!(parse_table(&t.to_csv()).is_ok());
    }

    #[test]
    fn format_1_is_refused_as_an_older_build() {
        let csv = table().to_csv().replace(MAGIC, "# kzero-table: 1");
        assert!(problem(&csv).contains("older kzero (table format 1"));
        let json = table()
            .to_json()
            .replace("\"format_version\": 2", "\"format_version\": 1");
        assert!(problem(&json).contains("older kzero (table format 1"));
    }

    #[test]
    fn states_follow_the_l_selection() {
        let mut s = settings();
        assert_eq!(s.states().len(), 6);
        s.l = LSelect::List(vec![1]);
        assert_eq!(s.states(), vec![(2, 1), (3, 1)]);
        s.l = LSelect::Max(0);
        assert_eq!(s.states(), vec![(1, 0), (2, 0), (3, 0)]);
    }

    #[test]
    fn selection_is_validated() {
        let m = MethodChoice::Green;
        let g = Gauge::Velocity;
        assert!(TableSettings::new(1, 3, None, None, 20, m, g).is_ok());
        let above = i64::from(kzero_bethe::settings::MAX_N) + 1;
        for (lo, hi) in [(1, 0), (1, above), (0, 3), (4, 3)] {
            assert!(TableSettings::new(lo, hi, None, None, 20, m, g).is_err());
        }
        assert_eq!(
            TableSettings::new(1, 3, Some(&[5]), None, 20, m, g),
            Err(SelectionError::NoStates)
        );
        assert_eq!(
            TableSettings::new(1, 3, Some(&[-1]), None, 20, m, g)
                .unwrap_err()
                .to_string(),
            "--l = -1: must be a non-negative integer"
        );
    }

    #[test]
    fn goal_is_recorded_and_gauge_only_where_it_applies() {
        let mut t = table();
        t.settings = t.settings.clone().with_goal(Goal::Significant);
        let csv = t.to_csv();
        assert!(csv.contains("# setting.goal: significant\n"));
        assert!(!csv.contains("setting.gauge"), "green records no gauge");
        let back = parse_table(&csv).unwrap();
        assert_eq!(back.settings.goal, Goal::Significant);
        assert_eq!(back.settings.request().settings.goal, Goal::Significant);
        let j: Value = serde_json::from_str(&t.to_json()).unwrap();
        assert_eq!(j["meta"]["settings"]["goal"], "significant");
        assert_eq!(j["meta"]["threads"], 1);
        assert_eq!(j["rows"][0]["seconds"], "0.010");
        assert_eq!(parse_table(&t.to_json()).unwrap().settings, t.settings);
        // an absolute table differs from it in the goal only
        let d = table().settings.differences(&t.settings);
        assert_eq!(d.0.len(), 1);
        assert_eq!(d.0[0].key, "goal");
        // the spectral method records its gauge; tables without a goal line
        // (earlier files) read as absolute
        let mut sp = table();
        sp.settings.method = MethodChoice::Spectral;
        sp.rows[0].method = MethodChoice::Spectral;
        let csv = sp.to_csv().replace("# setting.goal: absolute\n", "");
        assert!(csv.contains("# setting.gauge: velocity\n"));
        assert_eq!(parse_table(&csv).unwrap().settings.goal, Goal::Absolute);
        let bad = t.to_csv().replace("goal: significant", "goal: relative");
        assert!(parse_table(&bad).is_err());
    }
}
