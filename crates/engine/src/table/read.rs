//! Reading and validating table files (CSV or JSON, told apart by content).

use super::sums::{self, PowerRow, ReadLine, SumsEntry};
use super::{
    row_check, FormatProblem, Place, Quantity, Row, RowId, Table, TableError, TableSettings,
    CHECK_COLUMN, FORMAT_VERSION, JSON_FORMAT, MAGIC, PROV_KEYS,
};
use crate::method::MethodChoice;
use crate::shard::{Key, Shard};
use kzero_bethe::Goal;
use serde_json::Value;
use std::fs;
use std::path::Path;

/// A problem in the text of a table, with its place when it is one line or
/// row.
#[derive(Debug, Clone, PartialEq, Eq)]
pub struct ParseError {
    /// Where (a CSV line or a JSON row), when it is one line or row.
    pub place: Option<Place>,
    /// What.
    pub problem: FormatProblem,
}

impl From<FormatProblem> for ParseError {
    fn from(problem: FormatProblem) -> Self {
        ParseError {
            place: None,
            problem,
        }
    }
}

/// Reads and validates a kzero table (CSV or JSON, told apart by content).
///
/// # Errors
/// [`TableError::NotFound`], [`TableError::Unreadable`],
/// [`TableError::NotText`] or [`TableError::Malformed`] (all bad input)
/// when the file is missing, unreadable, not a kzero table, cut short
/// inside its header, or has a malformed row (a torn *last* CSV line is
/// tolerated and reported in [`Table::torn_at`]).
pub fn read_table(path: &Path) -> Result<Table, TableError> {
    let bytes = fs::read(path).map_err(|e| match e.kind() {
        std::io::ErrorKind::NotFound => TableError::NotFound {
            path: path.to_path_buf(),
        },
        _ => TableError::Unreadable {
            path: path.to_path_buf(),
            source: e,
        },
    })?;
    let text = String::from_utf8(bytes).map_err(|_| TableError::NotText {
        path: path.to_path_buf(),
    })?;
    parse_table(&text).map_err(|e| TableError::Malformed {
        path: path.to_path_buf(),
        place: e.place,
        problem: e.problem,
    })
}

/// Parses and validates the text of a kzero table (CSV or JSON).
///
/// # Errors
/// [`ParseError`] naming the problem (and its line or row).
pub fn parse_table(text: &str) -> Result<Table, ParseError> {
    if text.is_empty() {
        return Err(FormatProblem::Empty.into());
    }
    if text.trim_start().starts_with('{') {
        parse_json(text)
    } else {
        parse_csv(text)
    }
}

fn is_number(s: &str) -> bool {
    !s.is_empty() && s.parse::<f64>().is_ok_and(f64::is_finite)
}

/// A row as read, with the checksum found beside it.
struct ReadRow {
    row: Row,
    check: String,
}

impl Row {
    fn with_check(self, check: &str) -> ReadRow {
        ReadRow {
            row: self,
            check: check.to_string(),
        }
    }
}

/// The comma-separated fields of one CSV row, their count checked against
/// the table's columns; typed readers by column index.
struct CsvFields<'a>(Vec<&'a str>);

impl<'a> CsvFields<'a> {
    fn split(line: &'a str, settings: &TableSettings) -> Result<Self, FormatProblem> {
        let f: Vec<&str> = line.split(',').collect();
        let want = settings.columns().len();
        if f.len() != want {
            return Err(FormatProblem::FieldCount {
                want,
                found: f.len(),
            });
        }
        Ok(CsvFields(f))
    }

    fn uint(&self, i: usize) -> Result<u32, FormatProblem> {
        self.0[i]
            .parse()
            .map_err(|_| FormatProblem::NotInteger(self.0[i].to_string()))
    }

    fn decimal(&self, i: usize) -> Result<String, FormatProblem> {
        if is_number(self.0[i]) {
            Ok(self.0[i].to_string())
        } else {
            Err(FormatProblem::NotNumber(self.0[i].to_string()))
        }
    }

    fn method(&self, i: usize) -> Result<MethodChoice, FormatProblem> {
        self.0[i]
            .parse()
            .map_err(|_| FormatProblem::NotMethod(self.0[i].to_string()))
    }

    /// The last field, the row checksum.
    fn check(&self) -> &'a str {
        self.0[self.0.len() - 1]
    }
}

/// The fields of one JSON row object; typed readers by key.
struct JsonFields<'a>(&'a serde_json::Map<String, Value>);

impl<'a> JsonFields<'a> {
    fn of(v: &'a Value) -> Result<Self, FormatProblem> {
        v.as_object()
            .map(JsonFields)
            .ok_or(FormatProblem::RowNotObject)
    }

    fn uint(&self, k: &'static str) -> Result<u32, FormatProblem> {
        self.0
            .get(k)
            .and_then(Value::as_u64)
            .and_then(|x| u32::try_from(x).ok())
            .ok_or(FormatProblem::RowFieldNotInteger(k))
    }

    fn text(&self, k: &'static str) -> Result<String, FormatProblem> {
        self.0
            .get(k)
            .and_then(Value::as_str)
            .map(str::to_string)
            .ok_or(FormatProblem::RowFieldNotString(k))
    }

    fn method(&self) -> Result<MethodChoice, FormatProblem> {
        self.text("method")?
            .parse()
            .map_err(|_| FormatProblem::RowMethod)
    }
}

fn parse_csv_row(line: &str, settings: &TableSettings) -> Result<ReadRow, FormatProblem> {
    let f = CsvFields::split(line, settings)?;
    Ok(Row {
        n: f.uint(0)?,
        l: f.uint(1)?,
        ln_k0: f.decimal(2)?,
        abs_err: f.decimal(3)?,
        method: f.method(4)?,
        digits: f.uint(5)?,
        bits: f.uint(6)?,
        seconds: f.decimal(7)?,
        both: if f.0.len() > 9 {
            Some((f.decimal(8)?, f.decimal(9)?, f.uint(10)?))
        } else {
            None
        },
    }
    .with_check(f.check()))
}

fn json_row(v: &Value, settings: &TableSettings) -> Result<ReadRow, FormatProblem> {
    let f = JsonFields::of(v)?;
    let o = f.0;
    let int = |k| f.uint(k);
    let text = |k| f.text(k);
    // a decimal string (a number in files of earlier versions)
    let secs = o
        .get("seconds")
        .and_then(|v| {
            v.as_f64()
                .or_else(|| v.as_str().and_then(|t| t.parse().ok()))
        })
        .ok_or(FormatProblem::RowSecondsMissing)?;
    Ok(Row {
        n: int("n")?,
        l: int("l")?,
        ln_k0: text("ln_k0")?,
        abs_err: text("abs_err")?,
        method: f.method()?,
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
    }
    .with_check(&text(CHECK_COLUMN)?))
}

/// A row of a dipole-sum table from its CSV fields (the shared fields of
/// its state, its power row, the checksum).
fn parse_sums_csv_row(line: &str, settings: &TableSettings) -> Result<ReadLine, FormatProblem> {
    let fields = CsvFields::split(line, settings)?;
    let uint = |i| fields.uint(i);
    let decimal = |i| fields.decimal(i);
    let f = &fields.0;
    let (n, l) = (uint(0)?, uint(1)?);
    let k: i32 = f[2]
        .parse()
        .map_err(|_| FormatProblem::NotNumber(f[2].to_string()))?;
    let ln_i = match (f[7], f[8]) {
        ("", "") => None,
        ("", _) | (_, "") => {
            return Err(FormatProblem::LnIHalf {
                row: RowId {
                    key: (n, l),
                    k: Some(k),
                },
            })
        }
        _ => Some((decimal(7)?, decimal(8)?)),
    };
    let spectral = if settings.method == MethodChoice::Both {
        Some([decimal(13)?, decimal(14)?, decimal(15)?, decimal(16)?])
    } else {
        None
    };
    Ok(ReadLine {
        head: SumsEntry {
            n,
            l,
            method: fields.method(9)?,
            digits: uint(10)?,
            bits: uint(11)?,
            seconds: decimal(12)?,
            powers: Vec::new(),
        },
        row: PowerRow {
            k,
            s: decimal(3)?,
            s_err: decimal(4)?,
            log_sum: decimal(5)?,
            log_err: decimal(6)?,
            ln_i,
            spectral,
        },
        check: fields.check().to_string(),
    })
}

/// A row of a dipole-sum table from its JSON object.
fn json_sums_row(v: &Value, settings: &TableSettings) -> Result<ReadLine, FormatProblem> {
    let f = JsonFields::of(v)?;
    let o = f.0;
    let int = |k| f.uint(k);
    let text = |k| f.text(k);
    let (n, l) = (int("n")?, int("l")?);
    let k = o
        .get("k")
        .and_then(Value::as_i64)
        .and_then(|x| i32::try_from(x).ok())
        .ok_or(FormatProblem::RowFieldNotInteger("k"))?;
    let ln_i = match (o.get("ln_I"), o.get("ln_I_err")) {
        (Some(Value::Null), Some(Value::Null)) => None,
        (Some(Value::Null), _) | (_, Some(Value::Null)) => {
            return Err(FormatProblem::LnIHalf {
                row: RowId {
                    key: (n, l),
                    k: Some(k),
                },
            })
        }
        _ => Some((text("ln_I")?, text("ln_I_err")?)),
    };
    let spectral = if settings.method == MethodChoice::Both {
        Some([
            text("S_spectral")?,
            text("S_err_spectral")?,
            text("L_spectral")?,
            text("L_err_spectral")?,
        ])
    } else {
        None
    };
    Ok(ReadLine {
        head: SumsEntry {
            n,
            l,
            method: f.method()?,
            digits: int("digits")?,
            bits: int("bits")?,
            seconds: text("seconds")?,
            powers: Vec::new(),
        },
        row: PowerRow {
            k,
            s: text("S")?,
            s_err: text("S_err")?,
            log_sum: text("L")?,
            log_err: text("L_err")?,
            ln_i,
            spectral,
        },
        check: text(CHECK_COLUMN)?,
    })
}

/// Checks a row of a dipole-sum table: its checksum, its place in the
/// table's settings, its values, and its error estimates (those of S and L
/// not negative and not above the goal; that of ln I not negative: ln I =
/// L/S carries the errors of both divided by S, which the goal does not
/// bound).
fn check_sums_line(read: &ReadLine, settings: &TableSettings) -> Result<(), FormatProblem> {
    let (h, p) = (&read.head, &read.row);
    let key = read.key();
    let row = RowId { key, k: Some(p.k) };
    if row_check(&h.fields(p)) != read.check {
        return Err(FormatProblem::RowChanged {
            row,
            found: read.check.clone(),
        });
    }
    check_place(key, h.digits, h.method, settings)?;
    for v in [&p.s, &p.log_sum, &h.seconds]
        .into_iter()
        .chain(p.ln_i.as_ref().map(|(v, _)| v))
        .chain(p.spectral.iter().flat_map(|s| [&s[0], &s[2]]))
    {
        if !is_number(v) {
            return Err(FormatProblem::NotNumber(v.clone()));
        }
    }
    let mut errors = vec![
        ("S_err", p.s_err.as_str(), p.s.as_str()),
        ("L_err", p.log_err.as_str(), p.log_sum.as_str()),
    ];
    if let Some(s) = &p.spectral {
        errors.push(("S_err_spectral", s[1].as_str(), s[0].as_str()));
        errors.push(("L_err_spectral", s[3].as_str(), s[2].as_str()));
    }
    check_errors(row, h.digits, settings.goal, &errors)?;
    if let Some((_, e)) = &p.ln_i {
        error_value(row, "ln_I_err", e)?;
    }
    Ok(())
}

/// Checks a row read from a file: its checksum, its place in the table's
/// settings, and its error estimates (not negative, not above the goal).
fn check_row(read: &ReadRow, settings: &TableSettings) -> Result<(), FormatProblem> {
    let r = &read.row;
    if r.check() != read.check {
        return Err(FormatProblem::RowChanged {
            row: RowId::state(r.key()),
            found: read.check.clone(),
        });
    }
    check_place(r.key(), r.digits, r.method, settings)?;
    let mut errors = vec![("abs_err", r.abs_err.as_str(), r.ln_k0.as_str())];
    if let Some((v, e, _)) = &r.both {
        errors.push(("abs_err_spectral", e.as_str(), v.as_str()));
    }
    check_errors(RowId::state(r.key()), r.digits, settings.goal, &errors)
}

/// A row's state selected by the settings, with their digits and method.
fn check_place(
    key: Key,
    digits: u32,
    method: MethodChoice,
    settings: &TableSettings,
) -> Result<(), FormatProblem> {
    let (n, l) = key;
    if !settings.l.admits(n, l) || n < settings.n_min || n > settings.n_max {
        return Err(FormatProblem::RowOutside(key));
    }
    if digits != settings.digits || method != settings.method {
        return Err(FormatProblem::RowSettings(key));
    }
    Ok(())
}

/// Checks error columns `(column, error text, value text)` of `row`: each
/// a finite number, not negative, not above the goal.
fn check_errors(
    row: RowId,
    digits: u32,
    goal: Goal,
    errors: &[(&'static str, &str, &str)],
) -> Result<(), FormatProblem> {
    // The goal: |error| < 10^-digits (absolute) or <= 10^-digits |value|
    // (significant). The printed error is rounded up to two digits and
    // covers the rounding of the printed value, which can lift it to 1.1
    // times the goal, not beyond.
    let unit: f64 = format!("1.1e-{digits}").parse().unwrap_or(0.0);
    for &(column, text, value_text) in errors {
        let bound = match goal {
            Goal::Significant => unit * value_text.parse::<f64>().unwrap_or(0.0).abs(),
            _ => unit,
        };
        if error_value(row, column, text)? > bound {
            return Err(FormatProblem::RowErrorAboveGoal {
                row,
                column,
                value: text.to_string(),
                digits,
            });
        }
    }
    Ok(())
}

/// The error estimate `text` of column `column`: a finite number, not
/// negative.
fn error_value(row: RowId, column: &'static str, text: &str) -> Result<f64, FormatProblem> {
    let value = text.to_string();
    let e: f64 = text
        .parse()
        .map_err(|_| FormatProblem::NotNumber(value.clone()))?;
    if !e.is_finite() {
        return Err(FormatProblem::NotNumber(value));
    }
    if e < 0.0 || text.starts_with('-') {
        return Err(FormatProblem::RowErrorNegative { row, column, value });
    }
    Ok(e)
}

/// A parsed row that also passes `check_row`; either error is placed at
/// `place` (the line or row number in the file).
fn checked_row(
    parsed: Result<ReadRow, FormatProblem>,
    settings: &TableSettings,
    place: Place,
) -> Result<Row, ParseError> {
    let at = |problem| ParseError {
        place: Some(place),
        problem,
    };
    let r = parsed.map_err(at)?;
    check_row(&r, settings).map_err(at)?;
    Ok(r.row)
}

/// A parsed row of a dipole-sum table that also passes `check_sums_line`;
/// either error is placed at `place`.
fn checked_line(
    parsed: Result<ReadLine, FormatProblem>,
    settings: &TableSettings,
    place: Place,
) -> Result<ReadLine, ParseError> {
    let at = |problem| ParseError {
        place: Some(place),
        problem,
    };
    let r = parsed.map_err(at)?;
    check_sums_line(&r, settings).map_err(at)?;
    Ok(r)
}

/// The shard named by the `shard` provenance entry (an empty text when it
/// is absent, which the shard parser judges).
fn shard_of(prov: &[(String, String)]) -> Result<Shard, FormatProblem> {
    Ok(prov
        .iter()
        .find(|(k, _)| k == "shard")
        .map(|(_, v)| v.as_str())
        .unwrap_or_default()
        .parse::<Shard>()?)
}

fn parse_csv(text: &str) -> Result<Table, ParseError> {
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
        Some((_, "# kzero-table: 1")) => return Err(FormatProblem::OldFormat.into()),
        Some((_, l)) if l.starts_with("# kzero-table:") => {
            return Err(FormatProblem::UnsupportedVersionLine(l.to_string()).into())
        }
        _ => {
            return Err(if torn_at == Some(0) && text.starts_with("# kzero") {
                FormatProblem::TruncatedHeader
            } else {
                FormatProblem::NoMagic
            }
            .into())
        }
    }
    let mut prov: Vec<(String, String)> = Vec::new();
    let mut sets: Vec<(String, String)> = Vec::new();
    let mut columns: Option<&str> = None;
    let mut rows_raw: Vec<(usize, &str)> = Vec::new();
    // offset of the last comment line after the column line
    let mut last_comment = 0usize;
    for (o, line) in lines {
        if let Some(c) = line.strip_prefix('#') {
            if columns.is_some() {
                last_comment = o;
            }
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
                return Err(FormatProblem::SettingAfterColumns.into());
            }
        } else if columns.is_none() {
            columns = Some(line);
        } else if !line.is_empty() {
            rows_raw.push((o, line));
        }
    }
    let Some(columns) = columns else {
        return Err(FormatProblem::NoColumnLine.into());
    };
    let settings =
        TableSettings::from_lookup(&|k| sets.iter().find(|(a, _)| a == k).map(|(_, v)| v.clone()))?;
    if columns != settings.columns().join(",") {
        return Err(FormatProblem::UnexpectedColumns(columns.to_string()).into());
    }
    for key in PROV_KEYS {
        if !prov.iter().any(|(k, _)| k == key) {
            return Err(FormatProblem::MissingProvenanceLine(key).into());
        }
    }
    let shard = shard_of(&prov)?;
    let line_of = |o: usize| Place::Line(text[..o].matches('\n').count() + 1);
    let mut rows = Vec::new();
    let mut lines_read = Vec::new();
    for &(o, line) in &rows_raw {
        if settings.quantity == Quantity::LnK0 {
            let r = parse_csv_row(line, &settings);
            rows.push(checked_row(r, &settings, line_of(o))?);
        } else {
            let r = parse_sums_csv_row(line, &settings);
            lines_read.push(checked_line(r, &settings, line_of(o))?);
        }
    }
    let mut sums = Vec::new();
    if let Quantity::DipoleSums(ks) = &settings.quantity {
        let at = |i: usize, problem| ParseError {
            place: Some(line_of(rows_raw[i].0)),
            problem,
        };
        let keys: Vec<Key> = lines_read.iter().map(ReadLine::key).collect();
        let (entries, cut) = sums::group(lines_read, ks).map_err(|(i, p)| at(i, p))?;
        if let Some(i) = cut {
            // The last state of an interrupted run's journal, cut short: the
            // file is valid up to its first row. Only at the very end.
            let start = rows_raw[i].0;
            if last_comment > start {
                return Err(at(
                    i,
                    FormatProblem::StatePowers {
                        key: keys[i],
                        found: "fewer rows".into(),
                        want: sums::render_powers(ks),
                    },
                ));
            }
            torn_at = Some(start as u64);
        }
        sums = entries;
    }
    Ok(Table {
        prov,
        settings,
        shard,
        rows,
        sums,
        torn_at,
    })
}

fn parse_json(text: &str) -> Result<Table, ParseError> {
    let doc: Value = serde_json::from_str(text).map_err(|e| {
        if e.is_eof() {
            FormatProblem::TruncatedJson
        } else {
            FormatProblem::InvalidJson(e.to_string())
        }
    })?;
    let meta = doc
        .get("meta")
        .and_then(Value::as_object)
        .ok_or(FormatProblem::NoMeta)?;
    if meta.get("format").and_then(Value::as_str) != Some(JSON_FORMAT) {
        return Err(FormatProblem::ForeignFormat.into());
    }
    match meta.get("format_version").and_then(Value::as_u64) {
        Some(FORMAT_VERSION) => {}
        Some(1) => return Err(FormatProblem::OldFormat.into()),
        _ => return Err(FormatProblem::UnsupportedVersion.into()),
    }
    let set = meta
        .get("settings")
        .and_then(Value::as_object)
        .ok_or(FormatProblem::NoSettings)?;
    let settings = TableSettings::from_lookup(&|k| {
        set.get(k).map(|v| match v {
            Value::String(s) => s.clone(),
            // the powers k of a dipole-sum table, as in the CSV setting
            Value::Array(a) => a.iter().map(Value::to_string).collect::<Vec<_>>().join(","),
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
            return Err(FormatProblem::MissingMetaField(key).into());
        }
    }
    let shard = shard_of(&prov)?;
    let rows_v = doc
        .get("rows")
        .and_then(Value::as_array)
        .ok_or(FormatProblem::NoRows)?;
    let mut rows = Vec::new();
    let mut lines_read = Vec::new();
    for (i, v) in rows_v.iter().enumerate() {
        if settings.quantity == Quantity::LnK0 {
            let r = json_row(v, &settings);
            rows.push(checked_row(r, &settings, Place::Row(i + 1))?);
        } else {
            let r = json_sums_row(v, &settings);
            lines_read.push(checked_line(r, &settings, Place::Row(i + 1))?);
        }
    }
    let mut sums = Vec::new();
    if let Quantity::DipoleSums(ks) = &settings.quantity {
        let keys: Vec<Key> = lines_read.iter().map(ReadLine::key).collect();
        let at = |i: usize, problem| ParseError {
            place: Some(Place::Row(i + 1)),
            problem,
        };
        let (entries, cut) = sums::group(lines_read, ks).map_err(|(i, p)| at(i, p))?;
        if let Some(i) = cut {
            // a JSON table is written whole: a state cut short is damage
            return Err(at(
                i,
                FormatProblem::StatePowers {
                    key: keys[i],
                    found: "fewer rows".into(),
                    want: sums::render_powers(ks),
                },
            ));
        }
        sums = entries;
    }
    Ok(Table {
        prov,
        settings,
        shard,
        rows,
        sums,
        torn_at: None,
    })
}
