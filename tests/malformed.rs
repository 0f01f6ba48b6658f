//! Malformed-file battery: valid tables (CSV and JSON), journals and
//! data-check files are damaged at random (cut at any byte, bytes flipped,
//! lines dropped, repeated or moved, settings changed, another build named,
//! invalid UTF-8, huge lines, empty files) and given to `kzero merge`,
//! `kzero table --resume` and `kzero check --data-dir`.
//!
//! Every case must end with the correct result (the rows of an undamaged run,
//! byte for byte in the value columns) or with a one-line error and exit 2
//! (exit 3 is also a correct end for `check`: a damaged expected value is a
//! failed check). Never a crash (exit 1 or a signal) and never a changed
//! input: every input is compared byte for byte before and after the run,
//! and a refused run leaves no file behind.
//!
//! The same battery runs on a table of the dipole sums (`--sums`, one row
//! per state and k, the rows of a state kept together).
//!
//! The valid files are written once per test binary by the binary itself, at
//! 5 digits for n <= 3 (a fraction of a second). Each property runs a few
//! cases by default; `KZERO_HEAVY=1` runs many more and larger damage. The
//! damage is drawn from a fixed seed; `KZERO_SEED=<integer>` draws another.

use proptest::prelude::*;
use proptest::sample::Index;
use proptest::test_runner::{Config, RngAlgorithm, TestCaseError, TestRng, TestRunner};
use std::collections::BTreeMap;
use std::fs;
use std::path::Path;
use std::process::{Command, Output, Stdio};
use std::sync::OnceLock;

const BIN: &str = env!("CARGO_BIN_EXE_kzero");

/// The table every fixture holds: n <= 3, 5 digits.
const TABLE: [&str; 8] = [
    "table",
    "--n-max",
    "3",
    "--digits",
    "5",
    "--threads",
    "1",
    "--quiet",
];

/// The dipole-sum table of the sums fixtures: the same states, three powers.
const SUMS_TABLE: [&str; 10] = [
    "table",
    "--n-max",
    "3",
    "--digits",
    "5",
    "--sums",
    "-1,0,2",
    "--threads",
    "1",
    "--quiet",
];

/// A row key: (n, l, k), k = 0 in an ln k0 table.
type Key = (u32, u32, i32);

/// Rows by key, every column.
type Rows = BTreeMap<Key, Vec<String>>;

fn heavy() -> bool {
    std::env::var("KZERO_HEAVY").is_ok_and(|v| v == "1")
}

fn config() -> Config {
    Config {
        cases: if heavy() { 160 } else { 10 },
        // Each case runs the binary; keep shrinking short.
        max_shrink_iters: if heavy() { 200 } else { 40 },
        failure_persistence: None,
        ..Config::default()
    }
}

/// The seed of the random damage: fixed, or `KZERO_SEED` (an integer).
fn seed() -> [u8; 32] {
    let s: u64 = std::env::var("KZERO_SEED")
        .ok()
        .and_then(|v| v.parse().ok())
        .unwrap_or(12);
    let mut out = [0u8; 32];
    out[..8].copy_from_slice(&s.to_le_bytes());
    out
}

fn kzero(dir: &Path, args: &[&str]) -> Output {
    Command::new(BIN)
        .current_dir(dir)
        .args(args)
        .stdin(Stdio::null())
        .output()
        .expect("run kzero")
}

/// The valid files of one table kind, written once.
struct Fixtures {
    /// The table's arguments.
    args: &'static [&'static str],
    /// Folder holding them (kept for the whole test binary).
    _dir: tempfile::TempDir,
    /// Complete CSV table, shard 1/1.
    full_csv: Vec<u8>,
    /// The same table as JSON.
    full_json: Vec<u8>,
    /// Shards 1/2 and 2/2 as CSV, and shard 2/2 as JSON.
    shard1_csv: Vec<u8>,
    shard2_csv: Vec<u8>,
    shard2_json: Vec<u8>,
    /// A journal left by an interrupted run: the header, a resume note and
    /// three of the six rows in completion order.
    journal: Vec<u8>,
    /// Data-check files (name, contents) of the repository.
    data_checks: Vec<(String, Vec<u8>)>,
    /// Rows of the complete table: (n, l, k) -> every column.
    rows: Rows,
    /// Rows of the two CSV shards together (their own wall times).
    shard_rows: Rows,
    /// Rows of shard 1 (CSV) and shard 2 (JSON) together.
    shard_rows_json: Rows,
}

/// The ln k0 fixtures.
fn fixtures() -> &'static Fixtures {
    static F: OnceLock<Fixtures> = OnceLock::new();
    F.get_or_init(|| make_fixtures(&TABLE))
}

/// The fixtures of the dipole-sum table.
fn sums_fixtures() -> &'static Fixtures {
    static F: OnceLock<Fixtures> = OnceLock::new();
    F.get_or_init(|| make_fixtures(&SUMS_TABLE))
}

fn make_fixtures(args: &'static [&'static str]) -> Fixtures {
    {
        let dir = tempfile::tempdir().unwrap();
        let d = dir.path();
        let run = |extra: &[&str]| {
            let o = kzero(d, &[args, extra].concat());
            assert_eq!(
                o.status.code(),
                Some(0),
                "fixture {extra:?}: {}",
                String::from_utf8_lossy(&o.stderr)
            );
        };
        run(&["--out", "full.csv"]);
        run(&["--json", "--out", "full.json"]);
        run(&["--shard", "1/2", "--out", "s1.csv"]);
        run(&["--shard", "2/2", "--out", "s2.csv"]);
        run(&["--shard", "2/2", "--json", "--out", "s2.json"]);
        let read = |n: &str| fs::read(d.join(n)).unwrap();
        let full_csv = read("full.csv");
        let text = String::from_utf8(full_csv.clone()).unwrap();
        let rows = csv_rows(&text).expect("the fixture table parses");
        // six states, one row each or one per k
        let per_state = if args == SUMS_TABLE { 3 } else { 1 };
        assert_eq!(rows.len(), 6 * per_state);
        // The journal: header, three states in another order, a resume note.
        let col = text.find("\nn,l,").unwrap() + 1;
        let col_end = col + text[col..].find('\n').unwrap() + 1;
        let lines: Vec<&str> = text[col_end..].lines().collect();
        let state = |i: usize| -> String {
            lines[i * per_state..(i + 1) * per_state]
                .iter()
                .map(|l| format!("{l}\n"))
                .collect()
        };
        let mut journal = text[..col_end].to_string();
        journal.push_str(&format!("{}{}", state(4), state(1)));
        journal.push_str("# resumed_utc: 2026-01-01T00:00:00Z\n");
        journal.push_str(&format!("# resumed_command: kzero {}\n", args.join(" ")));
        journal.push_str(&state(0));
        let data = Path::new(env!("CARGO_MANIFEST_DIR")).join("data-checks");
        let mut data_checks: Vec<(String, Vec<u8>)> = fs::read_dir(&data)
            .unwrap()
            .flatten()
            .map(|e| e.path())
            .filter(|p| p.extension().is_some_and(|x| x == "csv"))
            .map(|p| {
                (
                    p.file_name().unwrap().to_string_lossy().to_string(),
                    fs::read(&p).unwrap(),
                )
            })
            .collect();
        data_checks.sort();
        assert!(data_checks.len() >= 2);
        let mut shard_rows = csv_rows(&String::from_utf8_lossy(&read("s1.csv"))).unwrap();
        shard_rows.extend(csv_rows(&String::from_utf8_lossy(&read("s2.csv"))).unwrap());
        assert_eq!(
            values(&shard_rows),
            values(&rows),
            "shards and a single run differ"
        );
        let mut shard_rows_json = csv_rows(&String::from_utf8_lossy(&read("s1.csv"))).unwrap();
        shard_rows_json.extend(json_rows(&String::from_utf8_lossy(&read("s2.json"))).unwrap());
        assert_eq!(
            values(&shard_rows_json),
            values(&rows),
            "JSON shard differs"
        );
        Fixtures {
            args,
            shard_rows_json,
            shard_rows,
            full_json: read("full.json"),
            shard1_csv: read("s1.csv"),
            shard2_csv: read("s2.csv"),
            shard2_json: read("s2.json"),
            journal: journal.into_bytes(),
            full_csv,
            data_checks,
            rows,
            _dir: dir,
        }
    }
}

/// Columns of a dipole-sum table (green), in CSV order.
const SUMS_COLUMNS: [&str; 14] = [
    "n", "l", "k", "S", "S_err", "L", "L_err", "ln_I", "ln_I_err", "method", "digits", "bits",
    "seconds", "check",
];

/// Columns of an ln k0 table (green), in CSV order.
const LN_K0_COLUMNS: [&str; 9] = [
    "n", "l", "ln_k0", "abs_err", "method", "digits", "bits", "seconds", "check",
];

/// The key of a row: (n, l, k) in a dipole-sum table (14 columns), (n, l, 0)
/// in an ln k0 table.
fn key_of(f: &[String]) -> Option<Key> {
    let k = if f.len() == SUMS_COLUMNS.len() {
        f.get(2)?.parse().ok()?
    } else {
        0
    };
    Some((f.first()?.parse().ok()?, f.get(1)?.parse().ok()?, k))
}

/// The rows of a CSV table: (n, l, k) -> columns; `None` on a duplicate key
/// or a malformed row.
fn csv_rows(text: &str) -> Option<Rows> {
    let mut out = BTreeMap::new();
    for line in text.lines().filter(|l| !l.starts_with('#')).skip(1) {
        let f: Vec<String> = line.split(',').map(str::to_string).collect();
        if out.insert(key_of(&f)?, f).is_some() {
            return None;
        }
    }
    Some(out)
}

/// The rows of a JSON table in the CSV column order (the checksum last;
/// `null` as an empty field).
fn json_rows(text: &str) -> Option<Rows> {
    let doc: serde_json::Value = serde_json::from_str(text).ok()?;
    let mut out = BTreeMap::new();
    for r in doc.get("rows")?.as_array()? {
        let s = |k: &str| -> Option<String> {
            let v = r.get(k)?;
            Some(match v {
                serde_json::Value::Null => String::new(),
                _ => v.as_str().map_or_else(|| v.to_string(), str::to_string),
            })
        };
        let columns: &[&str] = if r.get("k").is_some() {
            &SUMS_COLUMNS
        } else {
            &LN_K0_COLUMNS
        };
        let f = columns.iter().map(|c| s(c)).collect::<Option<Vec<_>>>()?;
        if out.insert(key_of(&f)?, f).is_some() {
            return None;
        }
    }
    Some(out)
}

/// The value columns of rows (every column before the wall time).
fn values(rows: &Rows) -> Rows {
    rows.iter()
        .map(|(k, f)| {
            let keep = if f.len() == SUMS_COLUMNS.len() { 12 } else { 7 };
            (*k, f.iter().take(keep).cloned().collect())
        })
        .collect()
}

// ----- damage -------------------------------------------------------------

/// One way of damaging a file. Positions are fractions of the file (or of
/// its lines), drawn by proptest.
#[derive(Debug, Clone)]
enum Damage {
    /// Cut the file at a byte.
    Truncate(Index),
    /// XOR one byte of the header (before the rows) with a mask.
    FlipHeader(Index, u8),
    /// Remove a line.
    DropLine(Index),
    /// Repeat a line right after itself.
    DuplicateLine(Index),
    /// Exchange two lines.
    SwapLines(Index, Index),
    /// Move a line elsewhere.
    MoveLine(Index, Index),
    /// Give a setting another (valid or invalid) value.
    ChangeSetting(Index, Index),
    /// Name another kzero build in the provenance.
    MixBuild(Index),
    /// Put bytes that are not UTF-8 somewhere.
    InvalidUtf8(Index),
    /// Insert a very long line (a comment, or bare text) at a line start.
    HugeLine(Index, bool),
    /// Leave nothing.
    Empty,
    /// Windows line ends.
    CrLf,
    /// A byte-order mark in front.
    Bom,
}

/// Changes of the numbers inside rows: the file still parses, only its
/// values are wrong. They must be refused (tamper and sanity checks).
#[derive(Debug, Clone)]
enum RowDamage {
    /// XOR one byte inside the rows with a mask.
    FlipRow(Index, u8),
    /// Change one decimal of a number (ln k0, its error or the seconds).
    EditDigit(Index, u8),
    /// Replace the error estimate of a row by a negative, non-numeric or
    /// too large value.
    BadError(Index, Index),
}

fn damage() -> impl Strategy<Value = Damage> {
    prop_oneof![
        3 => any::<Index>().prop_map(Damage::Truncate),
        2 => (any::<Index>(), 1u8..=255).prop_map(|(i, m)| Damage::FlipHeader(i, m)),
        2 => any::<Index>().prop_map(Damage::DropLine),
        2 => any::<Index>().prop_map(Damage::DuplicateLine),
        1 => (any::<Index>(), any::<Index>()).prop_map(|(a, b)| Damage::SwapLines(a, b)),
        1 => (any::<Index>(), any::<Index>()).prop_map(|(a, b)| Damage::MoveLine(a, b)),
        2 => (any::<Index>(), any::<Index>()).prop_map(|(a, b)| Damage::ChangeSetting(a, b)),
        1 => any::<Index>().prop_map(Damage::MixBuild),
        1 => any::<Index>().prop_map(Damage::InvalidUtf8),
        1 => (any::<Index>(), any::<bool>()).prop_map(|(i, c)| Damage::HugeLine(i, c)),
        1 => Just(Damage::Empty),
        1 => Just(Damage::CrLf),
        1 => Just(Damage::Bom),
    ]
}

fn row_damage() -> impl Strategy<Value = RowDamage> {
    prop_oneof![
        (any::<Index>(), 1u8..=255).prop_map(|(i, m)| RowDamage::FlipRow(i, m)),
        (any::<Index>(), 1u8..=9).prop_map(|(c, d)| RowDamage::EditDigit(c, d)),
        (any::<Index>(), any::<Index>()).prop_map(|(r, v)| RowDamage::BadError(r, v)),
    ]
}

/// Lines of a file, each with its line end.
fn lines(b: &[u8]) -> Vec<Vec<u8>> {
    b.split_inclusive(|&c| c == b'\n')
        .map(<[u8]>::to_vec)
        .collect()
}

/// Byte range of the rows: after the CSV column line, or from the JSON
/// "rows" key on. Empty when there is none.
fn rows_range(b: &[u8]) -> std::ops::Range<usize> {
    let text = String::from_utf8_lossy(b);
    if let Some(i) = text.find("\"rows\"") {
        return i..b.len();
    }
    match text.find("\nn,l,") {
        Some(i) => match text[i + 1..].find('\n') {
            Some(j) => i + 2 + j..b.len(),
            None => b.len()..b.len(),
        },
        None => b.len()..b.len(),
    }
}

fn huge_len() -> usize {
    if heavy() {
        16 << 20
    } else {
        1 << 20
    }
}

const SETTING_VALUES: [&str; 10] = [
    "6",
    "0",
    "4",
    "-1",
    "99999999999",
    "",
    "max:1",
    "list:0 2",
    "spectral",
    "x",
];

fn apply(b: &[u8], d: &Damage) -> Vec<u8> {
    let mut ls = lines(b);
    let join = |ls: Vec<Vec<u8>>| ls.concat();
    match d {
        Damage::Truncate(i) => b[..i.index(b.len() + 1)].to_vec(),
        Damage::FlipHeader(i, m) => {
            let end = rows_range(b).start.max(1).min(b.len());
            let mut v = b.to_vec();
            if !v.is_empty() {
                v[i.index(end)] ^= m;
            }
            v
        }
        Damage::DropLine(i) if !ls.is_empty() => {
            ls.remove(i.index(ls.len()));
            join(ls)
        }
        Damage::DuplicateLine(i) if !ls.is_empty() => {
            let k = i.index(ls.len());
            let mut l = ls[k].clone();
            if !l.ends_with(b"\n") {
                l.push(b'\n');
            }
            ls.insert(k, l);
            join(ls)
        }
        Damage::SwapLines(a, c) if !ls.is_empty() => {
            let (x, y) = (a.index(ls.len()), c.index(ls.len()));
            ls.swap(x, y);
            fix_ends(&mut ls);
            join(ls)
        }
        Damage::MoveLine(a, c) if !ls.is_empty() => {
            let l = ls.remove(a.index(ls.len()));
            ls.insert(c.index(ls.len() + 1), l);
            fix_ends(&mut ls);
            join(ls)
        }
        Damage::ChangeSetting(a, c) => {
            let text = String::from_utf8_lossy(b).to_string();
            let keys: Vec<&str> = [
                "n_min", "n_max", "l", "digits", "method", "gauge", "shard", "k", "quantity",
            ]
            .to_vec();
            let key = keys[a.index(keys.len())];
            let new = SETTING_VALUES[c.index(SETTING_VALUES.len())];
            replace_setting(&text, key, new).into_bytes()
        }
        Damage::MixBuild(i) => {
            let text = String::from_utf8_lossy(b).to_string();
            let (key, new) = [
                ("version", "0.0.9"),
                ("git_revision", "0123456789ab"),
                ("version", ""),
            ][i.index(3)];
            replace_setting(&text, key, new).into_bytes()
        }
        Damage::InvalidUtf8(i) => {
            let mut v = b.to_vec();
            let at = i.index(v.len() + 1);
            v.splice(at..at, [0xff, 0xc3, 0x28, 0x80]);
            v
        }
        Damage::HugeLine(i, comment) => {
            let k = i.index(ls.len() + 1);
            let mut l = if *comment {
                b"# note: ".to_vec()
            } else {
                Vec::new()
            };
            l.extend(vec![b'7'; huge_len()]);
            l.push(b'\n');
            fix_ends(&mut ls);
            ls.insert(k, l);
            join(ls)
        }
        Damage::Empty => Vec::new(),
        Damage::CrLf => {
            let mut v = Vec::with_capacity(b.len() * 2);
            for &c in b {
                if c == b'\n' {
                    v.push(b'\r');
                }
                v.push(c);
            }
            v
        }
        Damage::Bom => [&[0xef, 0xbb, 0xbf][..], b].concat(),
        _ => b.to_vec(),
    }
}

/// Gives every line but the last its line end back after lines moved.
fn fix_ends(ls: &mut [Vec<u8>]) {
    let n = ls.len();
    for l in ls.iter_mut().take(n.saturating_sub(1)) {
        if !l.ends_with(b"\n") {
            l.push(b'\n');
        }
    }
}

/// Replaces the value of a setting or provenance key in CSV (`# key: v`,
/// `# setting.key: v`) or JSON (`"key": v`) text.
fn replace_setting(text: &str, key: &str, new: &str) -> String {
    let mut out = String::with_capacity(text.len());
    for line in text.split_inclusive('\n') {
        let t = line.trim_start();
        let csv_hit =
            t.starts_with(&format!("# {key}: ")) || t.starts_with(&format!("# setting.{key}: "));
        let json_hit = t.starts_with(&format!("\"{key}\": "));
        if csv_hit {
            let (head, _) = line.split_once(": ").unwrap();
            out.push_str(&format!("{head}: {new}\n"));
        } else if json_hit {
            let (head, rest) = line.split_once(": ").unwrap();
            let comma = if rest.trim_end().ends_with(',') {
                ","
            } else {
                ""
            };
            let v = if new.parse::<i64>().is_ok() {
                new.to_string()
            } else {
                format!("\"{new}\"")
            };
            out.push_str(&format!("{head}: {v}{comma}\n"));
        } else {
            out.push_str(line);
        }
    }
    out
}

fn apply_row(b: &[u8], d: &RowDamage) -> Vec<u8> {
    let r = rows_range(b);
    let mut v = b.to_vec();
    if r.is_empty() {
        return v;
    }
    match d {
        RowDamage::FlipRow(i, m) => {
            v[r.start + i.index(r.len())] ^= m;
            v
        }
        RowDamage::EditDigit(col, digit) => {
            let text = String::from_utf8_lossy(&v[r.clone()]).to_string();
            let spots: Vec<usize> = number_digits(&text);
            if spots.is_empty() {
                return v;
            }
            let at = r.start + spots[col.index(spots.len())];
            let old = v[at] - b'0';
            v[at] = b'0' + (old + digit) % 10;
            v
        }
        RowDamage::BadError(row, val) => {
            let text = String::from_utf8_lossy(b).to_string();
            let bad = ["-5", "-1.0e-8", "NaN", "inf", "1e5", "0.5", "abc", ""][val.index(8)];
            replace_error(&text, row.index(6), bad).into_bytes()
        }
    }
}

/// Offsets (in `text`) of the digits after a decimal point in the rows: the
/// digits of ln k0, its error, and the wall time.
fn number_digits(text: &str) -> Vec<usize> {
    let b = text.as_bytes();
    let mut out = Vec::new();
    let mut after_point = false;
    for (i, &c) in b.iter().enumerate() {
        if c == b'.' {
            after_point = true;
        } else if c.is_ascii_digit() {
            if after_point {
                out.push(i);
            }
        } else {
            after_point = false;
        }
    }
    out
}

/// Replaces the error estimate of the `k`-th row (CSV column 4 or JSON
/// "abs_err"; in a dipole-sum table column 5 or "S_err") by `bad`.
fn replace_error(text: &str, k: usize, bad: &str) -> String {
    let sums = text.contains("\nn,l,k,") || text.contains("\"S_err\"");
    let (column, key) = if sums { (4, "S_err") } else { (3, "abs_err") };
    let mut out = String::with_capacity(text.len());
    let mut seen = 0usize;
    let mut in_rows = false;
    for line in text.split_inclusive('\n') {
        let t = line.trim_start();
        if t.starts_with("n,l,") || t.starts_with("\"rows\"") {
            in_rows = true;
            out.push_str(line);
            continue;
        }
        if in_rows && t.starts_with(&format!("\"{key}\": ")) {
            if seen == k {
                let comma = if line.trim_end().ends_with(',') {
                    ","
                } else {
                    ""
                };
                out.push_str(&format!("      \"{key}\": \"{bad}\"{comma}\n"));
            } else {
                out.push_str(line);
            }
            seen += 1;
            continue;
        }
        if in_rows && !t.starts_with('#') && !t.starts_with('{') && t.contains(',') {
            if seen == k {
                let mut f: Vec<&str> = line.trim_end_matches('\n').split(',').collect();
                if f.len() > column {
                    f[column] = bad;
                }
                out.push_str(&f.join(","));
                out.push('\n');
            } else {
                out.push_str(line);
            }
            seen += 1;
            continue;
        }
        out.push_str(line);
    }
    out
}

// ----- outcomes ------------------------------------------------------------

fn one_line_error(o: &Output, what: &str) -> Result<(), TestCaseError> {
    let e = String::from_utf8_lossy(&o.stderr);
    prop_assert!(
        e.starts_with("kzero: ") && e.trim_end().lines().count() == 1,
        "{what}: stderr is not one kzero line: {e:?}"
    );
    prop_assert!(
        !e.contains("panicked") && !e.contains("internal"),
        "{what}: {e}"
    );
    Ok(())
}

/// The names in a folder.
fn listing(dir: &Path) -> Vec<String> {
    let mut v: Vec<String> = fs::read_dir(dir)
        .unwrap()
        .flatten()
        .map(|e| e.file_name().to_string_lossy().to_string())
        .collect();
    v.sort();
    v
}

/// Runs `kzero merge` on two shard files of the table of `f`, `first`
/// damaged; judges the end.
fn merge_case(
    f: &Fixtures,
    first: &[u8],
    first_name: &str,
    second: &[u8],
    second_name: &str,
) -> Result<(), TestCaseError> {
    let dir = tempfile::tempdir().unwrap();
    let d = dir.path();
    fs::write(d.join(first_name), first).unwrap();
    fs::write(d.join(second_name), second).unwrap();
    let before = listing(d);
    let o = kzero(
        d,
        &["merge", first_name, second_name, "--out", "merged.csv"],
    );
    prop_assert_eq!(
        &fs::read(d.join(first_name)).unwrap()[..],
        first,
        "input changed"
    );
    prop_assert_eq!(
        &fs::read(d.join(second_name)).unwrap()[..],
        second,
        "input changed"
    );
    match o.status.code() {
        Some(0) => {
            let text = fs::read_to_string(d.join("merged.csv")).unwrap();
            let rows = csv_rows(&text);
            prop_assert!(rows.is_some(), "merged output has malformed rows");
            // Merge keeps the rows as written, wall time included.
            let want = if first_name.ends_with(".json") || second_name.ends_with(".json") {
                &f.shard_rows_json
            } else {
                &f.shard_rows
            };
            prop_assert_eq!(
                &rows.unwrap(),
                want,
                "merge accepted damage and wrote other rows"
            );
        }
        Some(2) => {
            one_line_error(&o, "merge")?;
            prop_assert_eq!(listing(d), before, "a refused merge left a file");
        }
        c => prop_assert!(
            false,
            "merge ended with {c:?}: {}",
            String::from_utf8_lossy(&o.stderr)
        ),
    }
    Ok(())
}

/// Resumes a damaged journal of the table of `f` (CSV, or JSON's
/// FILE.partial, or a finished JSON table); judges the end.
fn resume_case(f: &Fixtures, name: &str, bytes: &[u8], json: bool) -> Result<(), TestCaseError> {
    let dir = tempfile::tempdir().unwrap();
    let d = dir.path();
    fs::write(d.join(name), bytes).unwrap();
    let before = listing(d);
    let out = if json { "t.json" } else { "t.csv" };
    let mut args = f.args.to_vec();
    args.extend(["--out", out, "--resume"]);
    if json {
        args.push("--json");
    }
    let o = kzero(d, &args);
    match o.status.code() {
        Some(0) => {
            let text = fs::read_to_string(d.join(out)).unwrap();
            let rows = if json {
                json_rows(&text)
            } else {
                csv_rows(&text)
            };
            prop_assert!(rows.is_some(), "resumed output has malformed rows");
            prop_assert_eq!(
                values(&rows.unwrap()),
                values(&f.rows),
                "resume accepted damage and finished with other rows"
            );
            if json {
                prop_assert!(!d.join("t.json.partial").exists(), "journal left behind");
            }
        }
        Some(2) => {
            one_line_error(&o, "resume")?;
            prop_assert_eq!(
                &fs::read(d.join(name)).unwrap()[..],
                bytes,
                "refused resume changed its file"
            );
            prop_assert_eq!(listing(d), before, "a refused resume left a file");
        }
        c => prop_assert!(
            false,
            "resume ended with {c:?}: {}",
            String::from_utf8_lossy(&o.stderr)
        ),
    }
    Ok(())
}

/// Runs `kzero check --data-dir` with one data-check file damaged.
fn check_case(which: usize, bytes: &[u8]) -> Result<(), TestCaseError> {
    let f = fixtures();
    let dir = tempfile::tempdir().unwrap();
    let d = dir.path();
    let which = which % f.data_checks.len();
    for (i, (name, good)) in f.data_checks.iter().enumerate() {
        fs::write(d.join(name), if i == which { bytes } else { good }).unwrap();
    }
    let before = listing(d);
    let o = kzero(d, &["check", "--digits", "5", "--data-dir", "."]);
    for (i, (name, good)) in f.data_checks.iter().enumerate() {
        let want: &[u8] = if i == which { bytes } else { good };
        prop_assert_eq!(
            &fs::read(d.join(name)).unwrap()[..],
            want,
            "check changed {}",
            name
        );
    }
    prop_assert_eq!(listing(d), before, "check left a file");
    let out = String::from_utf8_lossy(&o.stdout);
    match o.status.code() {
        Some(0) => prop_assert!(out.contains(" 0 failed"), "exit 0 with failures: {out}"),
        Some(3) => {
            one_line_error(&o, "check")?;
            prop_assert!(out.contains("FAIL"), "exit 3 without a failed line: {out}");
        }
        Some(2) => one_line_error(&o, "check")?,
        c => prop_assert!(
            false,
            "check ended with {c:?}: {}",
            String::from_utf8_lossy(&o.stderr)
        ),
    }
    Ok(())
}

// ----- the properties -------------------------------------------------------

fn run_property<S: Strategy>(strategy: S, test: impl Fn(S::Value) -> Result<(), TestCaseError>)
where
    S::Value: std::fmt::Debug,
{
    let mut runner =
        TestRunner::new_with_rng(config(), TestRng::from_seed(RngAlgorithm::ChaCha, &seed()));
    if let Err(e) = runner.run(&strategy, test) {
        panic!("{e}");
    }
}

/// The undamaged files give the right answer: the baseline every property
/// below starts from.
#[test]
fn undamaged_files_are_accepted() {
    for f in [fixtures(), sums_fixtures()] {
        merge_case(f, &f.shard1_csv, "a.csv", &f.shard2_csv, "b.csv").unwrap();
        merge_case(f, &f.shard1_csv, "a.csv", &f.shard2_json, "b.json").unwrap();
        resume_case(f, "t.csv", &f.journal, false).unwrap();
        resume_case(f, "t.json.partial", &f.journal, true).unwrap();
        resume_case(f, "t.json", &f.full_json, true).unwrap();
        resume_case(f, "t.csv", &f.full_csv, false).unwrap();
    }
    let f = fixtures();
    for i in 0..f.data_checks.len() {
        check_case(i, &f.data_checks[i].1).unwrap();
    }
}

fn merge_property(f: &Fixtures) {
    let strategy = (prop::collection::vec(damage(), 1..=3), 0usize..3);
    run_property(strategy, |(ds, which)| {
        let (a, a_name, b, b_name) = match which {
            0 => (&f.shard1_csv, "a.csv", &f.shard2_csv, "b.csv"),
            1 => (&f.shard2_csv, "b.csv", &f.shard1_csv, "a.csv"),
            _ => (&f.shard2_json, "b.json", &f.shard1_csv, "a.csv"),
        };
        let damaged = ds.iter().fold(a.clone(), |v, d| apply(&v, d));
        merge_case(f, &damaged, a_name, b, b_name)
    });
}

#[test]
fn merge_survives_damaged_shards() {
    merge_property(fixtures());
}

fn resume_property(f: &Fixtures) {
    let strategy = (prop::collection::vec(damage(), 1..=3), 0usize..4);
    run_property(strategy, |(ds, which)| {
        let (name, base, json) = match which {
            0 => ("t.csv", &f.journal, false),
            1 => ("t.json.partial", &f.journal, true),
            2 => ("t.json", &f.full_json, true),
            _ => ("t.csv", &f.full_csv, false),
        };
        let damaged = ds.iter().fold(base.clone(), |v, d| apply(&v, d));
        resume_case(f, name, &damaged, json)
    });
}

#[test]
fn resume_survives_damaged_journals() {
    resume_property(fixtures());
}

/// The same damage given to a table of the dipole sums: merge and resume
/// end with the right rows or one line and exit 2.
#[test]
fn sums_tables_survive_damage() {
    merge_property(sums_fixtures());
    resume_property(sums_fixtures());
    changed_rows_property(sums_fixtures());
}

#[test]
fn check_survives_damaged_data_files() {
    let f = fixtures();
    let strategy = (prop::collection::vec(damage(), 1..=3), 0usize..8);
    run_property(strategy, |(ds, which)| {
        let base = &f.data_checks[which % f.data_checks.len()].1;
        let damaged = ds.iter().fold(base.clone(), |v, d| apply(&v, d));
        check_case(which, &damaged)
    });
}

/// Rows whose numbers were changed after they were written are refused by
/// merge and by resume.
#[test]
fn changed_rows_are_refused() {
    changed_rows_property(fixtures());
}

fn changed_rows_property(f: &Fixtures) {
    let strategy = (row_damage(), 0usize..5);
    run_property(strategy, |(d, which)| match which {
        0 => merge_case(
            f,
            &apply_row(&f.shard1_csv, &d),
            "a.csv",
            &f.shard2_csv,
            "b.csv",
        ),
        1 => merge_case(
            f,
            &apply_row(&f.shard2_json, &d),
            "b.json",
            &f.shard1_csv,
            "a.csv",
        ),
        2 => resume_case(f, "t.csv", &apply_row(&f.journal, &d), false),
        3 => resume_case(f, "t.json", &apply_row(&f.full_json, &d), true),
        _ => resume_case(f, "t.csv", &apply_row(&f.full_csv, &d), false),
    });
}
