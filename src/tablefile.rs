//! The kzero table format (CSV and JSON): settings, provenance, rows,
//! parsing with validation, rendering.
//!
//! ## CSV layout
//! ```text
//! # kzero-table: 1
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
//! # setting.method: green
//! # setting.gauge: velocity
//! n,l,ln_k0,abs_err,method,digits,bits,seconds
//! 1,0,2.9841285557654984...,1.0e-23,green,20,160,0.012
//! ```
//! While a run is in progress the file is also its journal: rows are
//! appended in completion order, each as one whole line, and comment lines
//! (`# resumed_utc: ...`) may follow the column line. A finished run rewrites
//! the file with the rows sorted by (n, l) (atomically: temporary file, then
//! rename).

use crate::app_error::AppError;
use kzero_engine::build_info as provenance;
pub use kzero_engine::Shard;
use kzero_engine::{Computed, Gauge, MethodChoice};
use serde_json::{json, Map, Value};
use std::collections::BTreeSet;
use std::fs;
use std::io::Write;
use std::path::{Path, PathBuf};

/// First line of every kzero CSV table (format version 1).
pub const MAGIC: &str = "# kzero-table: 1";
/// `meta.format` of a kzero JSON table.
pub const JSON_FORMAT: &str = "kzero-table";

/// Base columns of every table.
pub const BASE_COLUMNS: [&str; 8] = [
    "n", "l", "ln_k0", "abs_err", "method", "digits", "bits", "seconds",
];
/// Extra columns with `--method both`.
pub const BOTH_COLUMNS: [&str; 3] = ["ln_k0_spectral", "abs_err_spectral", "agreement_digits"];

/// Provenance keys every table carries, in this order.
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

    fn admits(&self, n: u32, l: u32) -> bool {
        l < n
            && match self {
                LSelect::All => true,
                LSelect::Max(k) => l <= *k,
                LSelect::List(v) => v.contains(&l),
            }
    }
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
    /// Requested digits (absolute error below 10^-digits).
    pub digits: u32,
    /// Method(s).
    pub method: MethodChoice,
    /// Dipole form of the spectral method.
    pub gauge: Gauge,
}

impl TableSettings {
    /// The settings as (key, value) pairs in a fixed order.
    pub fn pairs(&self) -> Vec<(&'static str, String)> {
        vec![
            ("n_min", self.n_min.to_string()),
            ("n_max", self.n_max.to_string()),
            ("l", self.l.render()),
            ("digits", self.digits.to_string()),
            ("method", self.method.name().to_string()),
            ("gauge", self.gauge.name().to_string()),
        ]
    }

    fn from_lookup(get: &dyn Fn(&str) -> Option<String>) -> Result<Self, String> {
        let need = |k: &str| get(k).ok_or_else(|| format!("missing setting '{k}'"));
        let num = |k: &str| -> Result<u32, String> {
            need(k)?
                .parse()
                .map_err(|_| format!("setting '{k}' is not a number"))
        };
        let l = LSelect::parse(&need("l")?).ok_or("setting 'l' is malformed")?;
        let method: MethodChoice = need("method")?.parse().map_err(|_| "unknown method")?;
        let gauge: Gauge = need("gauge")?.parse().map_err(|_| "unknown gauge")?;
        Ok(TableSettings {
            n_min: num("n_min")?,
            n_max: num("n_max")?,
            l,
            digits: num("digits")?,
            method,
            gauge,
        })
    }

    /// Every state the settings ask for, sorted by (n, l).
    pub fn states(&self) -> Vec<(u32, u32)> {
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
        let mut c: Vec<&'static str> = BASE_COLUMNS.to_vec();
        if self.method == MethodChoice::Both {
            c.extend(BOTH_COLUMNS);
        }
        c
    }

    /// Human-readable list of the keys in which `self` and `other` differ.
    pub fn differences(&self, other: &TableSettings) -> Vec<String> {
        self.pairs()
            .into_iter()
            .zip(other.pairs())
            .filter(|(a, b)| a.1 != b.1)
            .map(|(a, b)| format!("{} ({} vs {})", a.0, a.1, b.1))
            .collect()
    }
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

    /// The CSV line, with its newline.
    pub fn csv_line(&self) -> String {
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
        s.push('\n');
        s
    }

    fn parse_csv(line: &str, settings: &TableSettings) -> Result<Row, String> {
        let f: Vec<&str> = line.split(',').collect();
        let want = settings.columns().len();
        if f.len() != want {
            return Err(format!("expected {want} fields, found {}", f.len()));
        }
        let int = |i: usize| -> Result<u32, String> {
            f[i].parse()
                .map_err(|_| format!("field '{}' is not a non-negative integer", f[i]))
        };
        let decimal = |i: usize| -> Result<String, String> {
            if is_number(f[i]) {
                Ok(f[i].to_string())
            } else {
                Err(format!("field '{}' is not a number", f[i]))
            }
        };
        Ok(Row {
            n: int(0)?,
            l: int(1)?,
            ln_k0: decimal(2)?,
            abs_err: decimal(3)?,
            method: f[4]
                .parse()
                .map_err(|_| format!("field '{}' is not a method", f[4]))?,
            digits: int(5)?,
            bits: int(6)?,
            seconds: decimal(7)?,
            both: if want > 8 {
                Some((decimal(8)?, decimal(9)?, int(10)?))
            } else {
                None
            },
        })
    }

    fn to_json(&self) -> Value {
        let mut m = Map::new();
        m.insert("n".into(), json!(self.n));
        m.insert("l".into(), json!(self.l));
        m.insert("ln_k0".into(), json!(self.ln_k0));
        m.insert("abs_err".into(), json!(self.abs_err));
        m.insert("method".into(), json!(self.method.name()));
        m.insert("digits".into(), json!(self.digits));
        m.insert("bits".into(), json!(self.bits));
        let secs: f64 = self.seconds.parse().unwrap_or(0.0);
        m.insert("seconds".into(), json!(secs));
        if let Some((v, e, d)) = &self.both {
            m.insert("ln_k0_spectral".into(), json!(v));
            m.insert("abs_err_spectral".into(), json!(e));
            m.insert("agreement_digits".into(), json!(d));
        }
        Value::Object(m)
    }

    fn from_json(v: &Value, settings: &TableSettings) -> Result<Row, String> {
        let o = v.as_object().ok_or("a row is not an object")?;
        let int = |k: &str| -> Result<u32, String> {
            o.get(k)
                .and_then(Value::as_u64)
                .and_then(|x| u32::try_from(x).ok())
                .ok_or_else(|| format!("row field '{k}' missing or not an integer"))
        };
        let text = |k: &str| -> Result<String, String> {
            o.get(k)
                .and_then(Value::as_str)
                .map(str::to_string)
                .ok_or_else(|| format!("row field '{k}' missing or not a string"))
        };
        let secs = o
            .get("seconds")
            .and_then(Value::as_f64)
            .ok_or("row field 'seconds' missing")?;
        Ok(Row {
            n: int("n")?,
            l: int("l")?,
            ln_k0: text("ln_k0")?,
            abs_err: text("abs_err")?,
            method: text("method")?
                .parse()
                .map_err(|_| "row field 'method' is not a method".to_string())?,
            digits: int("digits")?,
            bits: int("bits")?,
            seconds: format!("{secs:.3}"),
            both: if settings.method == MethodChoice::Both {
                Some((
                    text("ln_k0_spectral")?,
                    text("abs_err_spectral")?,
                    int("agreement_digits")?,
                ))
            } else {
                None
            },
        })
    }
}

fn is_number(s: &str) -> bool {
    !s.is_empty() && s.parse::<f64>().is_ok_and(f64::is_finite)
}

/// A table key (n, l).
pub type Key = (u32, u32);

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
    /// Rows (file order until sorted).
    pub rows: Vec<Row>,
    /// For a CSV file cut short by a crash: byte offset where the torn last
    /// line starts (the file is valid up to there).
    pub torn_at: Option<u64>,
}

impl Table {
    /// The first value of provenance key `key`.
    pub fn prov_value(&self, key: &str) -> Option<&str> {
        self.prov
            .iter()
            .find(|(k, _)| k == key)
            .map(|(_, v)| v.as_str())
    }

    /// Sorts rows by (n, l).
    pub fn sort(&mut self) {
        self.rows.sort_by_key(|r| (r.n, r.l));
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
        s
    }

    /// The whole table as one JSON object with `meta` and `rows`.
    pub fn to_json(&self) -> String {
        let mut meta = Map::new();
        meta.insert("format".into(), json!(JSON_FORMAT));
        meta.insert("format_version".into(), json!(1));
        for (k, v) in &self.prov {
            match meta.get_mut(k) {
                None => {
                    meta.insert(k.clone(), json!(v));
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
        meta.insert("settings".into(), Value::Object(set));
        let rows: Vec<Value> = self.rows.iter().map(Row::to_json).collect();
        let doc = json!({ "meta": Value::Object(meta), "rows": rows });
        let mut s = serde_json::to_string_pretty(&doc).unwrap_or_default();
        s.push('\n');
        s
    }

    /// The set of (n, l) keys, with the first duplicate found if any.
    pub fn keys(&self) -> (BTreeSet<Key>, Option<Key>) {
        let mut set = BTreeSet::new();
        let mut dup = None;
        for r in &self.rows {
            if !set.insert((r.n, r.l)) && dup.is_none() {
                dup = Some((r.n, r.l));
            }
        }
        (set, dup)
    }
}

fn one_line(s: &str) -> String {
    s.replace(['\n', '\r'], " ")
}

/// Reads and validates a kzero table (CSV or JSON, told apart by content).
///
/// # Errors
/// Bad input (exit 2) when the file is missing, unreadable, not a kzero
/// table, cut short inside its header, or has a malformed row (a torn
/// *last* CSV line is tolerated and reported in [`Table::torn_at`]).
pub fn read_table(path: &Path) -> Result<Table, AppError> {
    let shown = path.display();
    let bytes = fs::read(path).map_err(|e| match e.kind() {
        std::io::ErrorKind::NotFound => AppError::BadInput(format!("{shown}: file does not exist")),
        _ => AppError::BadInput(format!("{shown}: cannot read: {e}")),
    })?;
    let text = String::from_utf8(bytes)
        .map_err(|_| AppError::BadInput(format!("{shown}: not a kzero table (not UTF-8 text)")))?;
    let bad = |m: String| AppError::BadInput(format!("{shown}: {m}"));
    if text.is_empty() {
        return Err(bad("empty file, not a kzero table".into()));
    }
    if text.trim_start().starts_with('{') {
        parse_json(&text).map_err(bad)
    } else {
        parse_csv(&text).map_err(bad)
    }
}

fn check_row(r: &Row, settings: &TableSettings) -> Result<(), String> {
    if !settings.l.admits(r.n, r.l) || r.n < settings.n_min || r.n > settings.n_max {
        return Err(format!(
            "row (n={}, l={}) is outside the table's settings",
            r.n, r.l
        ));
    }
    if r.digits != settings.digits || r.method != settings.method {
        return Err(format!(
            "row (n={}, l={}) has digits/method that differ from the settings",
            r.n, r.l
        ));
    }
    Ok(())
}

fn parse_csv(text: &str) -> Result<Table, String> {
    let mut pieces: Vec<(usize, &str)> = Vec::new();
    let mut off = 0usize;
    for piece in text.split_inclusive('\n') {
        pieces.push((off, piece));
        off += piece.len();
    }
    let mut torn_at = None;
    if let Some(&(o, last)) = pieces.last() {
        if !last.ends_with('\n') {
            torn_at = Some(o as u64);
            pieces.pop();
        }
    }
    let mut lines = pieces
        .iter()
        .map(|(o, p)| (*o, p.trim_end_matches(['\n', '\r'])));
    match lines.next() {
        Some((_, l)) if l == MAGIC => {}
        Some((_, l)) if l.starts_with("# kzero-table:") => {
            return Err(format!("unsupported kzero table format '{l}'"))
        }
        _ => {
            return Err(if torn_at == Some(0) && text.starts_with("# kzero") {
                "truncated kzero table (the header is incomplete)".into()
            } else {
                "not a kzero table (first line is not '# kzero-table: 1')".into()
            })
        }
    }
    let mut prov: Vec<(String, String)> = Vec::new();
    let mut sets: Vec<(String, String)> = Vec::new();
    let mut columns: Option<&str> = None;
    let mut rows_raw: Vec<(usize, &str)> = Vec::new();
    for (o, line) in lines {
        if let Some(c) = line.strip_prefix('#') {
            let c = c.trim_start();
            let (k, v) = c.split_once(':').unwrap_or((c, ""));
            let (k, v) = (k.trim().to_string(), v.trim().to_string());
            if columns.is_none() {
                if let Some(sk) = k.strip_prefix("setting.") {
                    sets.push((sk.to_string(), v));
                } else {
                    prov.push((k, v));
                }
            } else if !k.starts_with("setting.") {
                prov.push((k, v));
            } else {
                return Err("setting line after the column line".into());
            }
        } else if columns.is_none() {
            columns = Some(line);
        } else if !line.is_empty() {
            rows_raw.push((o, line));
        }
    }
    let Some(columns) = columns else {
        return Err("truncated kzero table (no column line after the header)".into());
    };
    let settings =
        TableSettings::from_lookup(&|k| sets.iter().find(|(a, _)| a == k).map(|(_, v)| v.clone()))?;
    if columns != settings.columns().join(",") {
        return Err(format!("unexpected column line '{columns}'"));
    }
    for key in PROV_KEYS {
        if !prov.iter().any(|(k, _)| k == key) {
            return Err(format!("provenance line '{key}' is missing"));
        }
    }
    let shard = shard_of(&prov)?;
    let mut rows = Vec::with_capacity(rows_raw.len());
    for (o, line) in rows_raw {
        let lineno = text[..o].matches('\n').count() + 1;
        let r = Row::parse_csv(line, &settings);
        rows.push(checked_row(r, &settings, &format!("line {lineno}"))?);
    }
    Ok(Table {
        prov,
        settings,
        shard,
        rows,
        torn_at,
    })
}

/// The shard named by the `shard` provenance entry (an empty text when it
/// is absent, which `Shard::parse` judges).
fn shard_of(prov: &[(String, String)]) -> Result<Shard, String> {
    prov.iter()
        .find(|(k, _)| k == "shard")
        .map(|(_, v)| v.as_str())
        .unwrap_or_default()
        .parse()
        .map_err(|e: kzero_engine::ShardError| e.to_string())
}

/// A parsed row that also passes `check_row`; either error is prefixed
/// with `place` (the line or row number in the file).
fn checked_row(
    parsed: Result<Row, String>,
    settings: &TableSettings,
    place: &str,
) -> Result<Row, String> {
    let r = parsed.map_err(|e| format!("{place}: {e}"))?;
    check_row(&r, settings).map_err(|e| format!("{place}: {e}"))?;
    Ok(r)
}

fn parse_json(text: &str) -> Result<Table, String> {
    let doc: Value = serde_json::from_str(text).map_err(|e| {
        if e.is_eof() {
            "truncated JSON (the document ends early)".to_string()
        } else {
            format!("not a kzero table (invalid JSON: {e})")
        }
    })?;
    let meta = doc
        .get("meta")
        .and_then(Value::as_object)
        .ok_or("not a kzero table (no \"meta\" object)")?;
    if meta.get("format").and_then(Value::as_str) != Some(JSON_FORMAT) {
        return Err("not a kzero table (meta.format is not \"kzero-table\")".into());
    }
    if meta.get("format_version").and_then(Value::as_u64) != Some(1) {
        return Err("unsupported kzero table format version".into());
    }
    let set = meta
        .get("settings")
        .and_then(Value::as_object)
        .ok_or("meta.settings missing")?;
    let settings = TableSettings::from_lookup(&|k| {
        set.get(k).map(|v| match v {
            Value::String(s) => s.clone(),
            other => other.to_string(),
        })
    })?;
    let mut prov = Vec::new();
    for (k, v) in meta {
        if k == "format" || k == "format_version" || k == "settings" {
            continue;
        }
        match v {
            Value::String(s) => prov.push((k.clone(), s.clone())),
            Value::Array(a) => {
                for x in a {
                    prov.push((k.clone(), x.as_str().unwrap_or_default().to_string()));
                }
            }
            other => prov.push((k.clone(), other.to_string())),
        }
    }
    // serde_json maps are sorted by key: restore the canonical order.
    prov.sort_by_key(|(k, _)| {
        PROV_KEYS
            .iter()
            .position(|p| p == k)
            .unwrap_or(PROV_KEYS.len())
    });
    for key in PROV_KEYS {
        if !prov.iter().any(|(k, _)| k == key) {
            return Err(format!("meta.{key} is missing"));
        }
    }
    let shard = shard_of(&prov)?;
    let rows_v = doc
        .get("rows")
        .and_then(Value::as_array)
        .ok_or("no \"rows\" array")?;
    let mut rows = Vec::with_capacity(rows_v.len());
    for (i, v) in rows_v.iter().enumerate() {
        let r = Row::from_json(v, &settings);
        rows.push(checked_row(r, &settings, &format!("row {}", i + 1))?);
    }
    Ok(Table {
        prov,
        settings,
        shard,
        rows,
        torn_at: None,
    })
}

/// Whether `bytes` is what a table run killed before its first row leaves
/// in its journal: an empty file, or the start of a CSV header (the magic
/// line or a piece of it, further `#` lines, perhaps a cut last line) with no
/// complete column line and no row. Returns the (key, value) pairs of the
/// complete `#` lines after the magic line (`setting.digits`, `shard`, ...),
/// or `None` for anything else: such files are judged by [`read_table`].
pub fn unstarted_journal(bytes: &[u8]) -> Option<Vec<(String, String)>> {
    let text = std::str::from_utf8(bytes).ok()?;
    let complete = &text[..text.rfind('\n').map_or(0, |i| i + 1)];
    let cut = &text[complete.len()..];
    let mut lines = complete.lines();
    let Some(first) = lines.next() else {
        return MAGIC.starts_with(cut).then(Vec::new);
    };
    if first != MAGIC {
        return None;
    }
    let mut pairs = Vec::new();
    for line in lines {
        let c = line.strip_prefix('#')?.trim_start();
        let (k, v) = c.split_once(':').unwrap_or((c, ""));
        pairs.push((k.trim().to_string(), v.trim().to_string()));
    }
    let all_columns = [&BASE_COLUMNS[..], &BOTH_COLUMNS[..]].concat().join(",");
    (cut.starts_with('#') || all_columns.starts_with(cut)).then_some(pairs)
}

/// Checks that an output path can be created: its folder exists and is a
/// folder.
///
/// # Errors
/// Bad input naming the path.
pub fn check_output_folder(path: &Path, what: &str) -> Result<(), AppError> {
    let parent = match path.parent() {
        Some(p) if !p.as_os_str().is_empty() => p.to_path_buf(),
        _ => PathBuf::from("."),
    };
    if !parent.is_dir() {
        return Err(AppError::BadInput(format!(
            "{what} {}: folder {} does not exist",
            path.display(),
            parent.display()
        )));
    }
    if path.is_dir() {
        return Err(AppError::BadInput(format!(
            "{what} {} is a folder, not a file",
            path.display()
        )));
    }
    // a folder we cannot create files in is bad input too (exit 2): try
    let probe = parent.join(format!(".kzero-write-check-{}", std::process::id()));
    match std::fs::OpenOptions::new()
        .write(true)
        .create_new(true)
        .open(&probe)
    {
        Ok(_) => {
            let _ = std::fs::remove_file(&probe);
            Ok(())
        }
        Err(e) => Err(AppError::BadInput(format!(
            "{what} {}: cannot create files in folder {}: {e}",
            path.display(),
            parent.display()
        ))),
    }
}

/// Writes `contents` to `path` atomically: a temporary file in the same
/// folder, flushed to disk, then renamed over `path`.
///
/// # Errors
/// I/O errors (exit 1).
pub fn write_atomic(path: &Path, contents: &[u8]) -> Result<(), AppError> {
    let name = path
        .file_name()
        .map(|n| n.to_string_lossy().to_string())
        .unwrap_or_else(|| "out".into());
    let tmp = path.with_file_name(format!(".{name}.kzero-tmp-{}", std::process::id()));
    let res = (|| -> std::io::Result<()> {
        let mut f = fs::File::create(&tmp)?;
        f.write_all(contents)?;
        f.sync_all()?;
        fs::rename(&tmp, path)
    })();
    if let Err(e) = res {
        let _ = fs::remove_file(&tmp);
        return Err(AppError::Other(format!(
            "cannot write {}: {e}",
            path.display()
        )));
    }
    Ok(())
}

/// Standard provenance for a new table.
pub fn new_provenance(threads: usize, shard: Shard) -> Vec<(String, String)> {
    vec![
        ("version".into(), provenance::VERSION.into()),
        ("git_revision".into(), provenance::GIT_REVISION.into()),
        ("mpfr".into(), provenance::mpfr_version()),
        ("gmp".into(), provenance::gmp_version()),
        ("command".into(), provenance::command_line()),
        ("started_utc".into(), provenance::utc_now()),
        ("threads".into(), threads.to_string()),
        ("shard".into(), shard.to_string()),
    ]
}

/// Refuses to combine rows computed by another kzero build: the version and
/// (when both are known) the git revision must match this binary.
///
/// # Errors
/// Bad input naming the difference.
pub fn check_same_build(t: &Table, path: &Path) -> Result<(), AppError> {
    let v = t.prov_value("version").unwrap_or("");
    if v != provenance::VERSION {
        return Err(AppError::BadInput(format!(
            "{}: written by kzero {v}, this is kzero {}; refusing to mix results",
            path.display(),
            provenance::VERSION
        )));
    }
    let g = t.prov_value("git_revision").unwrap_or("unknown");
    if g != "unknown" && provenance::GIT_REVISION != "unknown" && g != provenance::GIT_REVISION {
        return Err(AppError::BadInput(format!(
            "{}: written by git revision {g}, this binary is {}; refusing to mix results",
            path.display(),
            provenance::GIT_REVISION
        )));
    }
    Ok(())
}

#[cfg(test)]
mod tests {
    use super::*;

    fn settings() -> TableSettings {
        TableSettings {
            n_min: 1,
            n_max: 3,
            l: LSelect::All,
            digits: 10,
            method: MethodChoice::Green,
            gauge: Gauge::Velocity,
        }
    }

    fn table() -> Table {
        Table {
            prov: new_provenance(1, Shard::WHOLE),
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
            torn_at: None,
        }
    }

    #[test]
    fn csv_and_json_round_trip() {
        let t = table();
        let c = parse_csv(&t.to_csv()).unwrap();
        assert_eq!(c.rows, t.rows);
        assert_eq!(c.settings, t.settings);
        assert_eq!(c.prov, t.prov);
        let j = parse_json(&t.to_json()).unwrap();
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
        let c = parse_csv(&s).unwrap();
        assert_eq!(c.torn_at, Some(full as u64));
        assert_eq!(c.rows.len(), 1);
    }

    #[test]
    fn cut_header_and_foreign_text_are_rejected() {
        let s = table().to_csv();
        let cut = &s[..40];
        assert!(parse_csv(cut).unwrap_err().contains("truncated"));
        assert!(parse_csv("a,b,c\n1,2,3\n")
            .unwrap_err()
            .contains("not a kzero table"));
    }

    #[test]
    fn only_a_header_cut_before_its_column_line_is_an_unstarted_journal() {
        let s = table().to_csv();
        let columns_at = s.find("\nn,l,").unwrap() + 1;
        assert_eq!(unstarted_journal(b""), Some(Vec::new()));
        // Every cut inside the header, up to the whole column line without
        // its newline.
        let col_end = columns_at + BASE_COLUMNS.join(",").len();
        for end in 0..=col_end {
            let got = unstarted_journal(&s.as_bytes()[..end]);
            assert!(got.is_some(), "cut at {end}: {:?}", &s[..end]);
        }
        let pairs = unstarted_journal(&s.as_bytes()[..columns_at]).unwrap();
        assert!(pairs.contains(&("setting.digits".into(), "10".into())));
        assert!(pairs.contains(&("shard".into(), "1/1".into())));
        // A complete column line, a row, or foreign text is not.
        assert_eq!(unstarted_journal(s.as_bytes()), None);
        assert_eq!(unstarted_journal(&s.as_bytes()[..=col_end]), None);
        assert_eq!(unstarted_journal(b"name,value\n"), None);
        assert_eq!(unstarted_journal(b"x"), None);
        assert_eq!(unstarted_journal(b"# kzero-table: 2\n"), None);
        assert_eq!(unstarted_journal(&[0xff, 0xfe]), None);
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
}
