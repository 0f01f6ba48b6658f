//! Integration tests of the `kzero` binary: tables (threads, shards, merge,
//! resume after kill -9), bad input handling and the small commands.
//!
//! Reference values: ln k0(1,0) = 2.984128555765498 and ln k0(2,1) =
//! -0.030016708630213 (Drake & Swainson, Phys. Rev. A 41, 1243 (1990), as
//! tabulated in the CODATA 2018 adjustment); f(1s -> 2p) = 2^13/3^9 (closed
//! form); <1s| r |2p> = 2^8/(81 sqrt 6) bohr (closed form, Gordon's formula;
//! Bethe & Salpeter 1957).

use rug::ops::Pow;
use std::fs;
use std::path::{Path, PathBuf};
use std::process::{Command, Output, Stdio};
use std::time::{Duration, Instant};

const BIN: &str = env!("CARGO_BIN_EXE_kzero");

fn kzero(args: &[&str]) -> Output {
    Command::new(BIN)
        .args(args)
        .stdin(Stdio::null())
        .output()
        .expect("run kzero")
}

fn code(o: &Output) -> i32 {
    o.status.code().unwrap_or(-1)
}

fn stderr(o: &Output) -> String {
    String::from_utf8_lossy(&o.stderr).to_string()
}

fn stdout(o: &Output) -> String {
    String::from_utf8_lossy(&o.stdout).to_string()
}

fn p(dir: &Path, name: &str) -> String {
    dir.join(name).to_string_lossy().to_string()
}

/// Data lines of a CSV table (comments and the column line removed).
fn data_lines(text: &str) -> Vec<String> {
    text.lines()
        .filter(|l| !l.starts_with('#'))
        .skip(1)
        .map(str::to_string)
        .collect()
}

/// Data lines without the wall-time column (index 7) and the row checksum
/// (the last column, which covers the wall time).
fn value_columns(text: &str) -> Vec<String> {
    data_lines(text)
        .iter()
        .map(|l| {
            let mut f: Vec<&str> = l.split(',').collect();
            f.pop();
            f.remove(7);
            f.join(",")
        })
        .collect()
}

/// A JSON number, or a number written as a JSON string.
fn number(v: &serde_json::Value) -> f64 {
    v.as_f64()
        .or_else(|| v.as_str().and_then(|s| s.parse().ok()))
        .unwrap_or_else(|| panic!("not a number: {v}"))
}

/// Asserts a bad-input failure: exit 2, one stderr line, no panic text.
fn assert_bad_input(o: &Output, what: &str) {
    let e = stderr(o);
    assert_eq!(code(o), 2, "{what}: expected exit 2, got {} ({e})", code(o));
    assert_eq!(
        e.trim_end().lines().count(),
        1,
        "{what}: stderr not one line: {e:?}"
    );
    assert!(!e.contains("panicked"), "{what}: {e}");
    assert!(e.starts_with("kzero: "), "{what}: {e}");
}

#[test]
fn table_is_sorted_complete_and_carries_provenance() {
    let dir = tempfile::tempdir().unwrap();
    let out = p(dir.path(), "t.csv");
    let o = kzero(&[
        "table",
        "--n-max",
        "3",
        "--digits",
        "12",
        "--out",
        &out,
        "--threads",
        "2",
    ]);
    assert_eq!(code(&o), 0, "{}", stderr(&o));
    let text = fs::read_to_string(&out).unwrap();
    assert!(text.starts_with("# kzero-table: 2\n"));
    for key in [
        "# version: ",
        "# git_revision: ",
        "# mpfr: ",
        "# gmp: ",
        "# command: ",
        "# started_utc: ",
        "# threads: 2",
        "# shard: 1/1",
        "# setting.digits: 12",
        "# setting.method: green",
        "# setting.n_max: 3",
    ] {
        assert!(text.contains(key), "missing {key}");
    }
    assert!(text.contains("\nn,l,ln_k0,abs_err,method,digits,bits,seconds,check\n"));
    let rows = data_lines(&text);
    let keys: Vec<(u32, u32)> = rows
        .iter()
        .map(|r| {
            let f: Vec<&str> = r.split(',').collect();
            (f[0].parse().unwrap(), f[1].parse().unwrap())
        })
        .collect();
    assert_eq!(keys, vec![(1, 0), (2, 0), (2, 1), (3, 0), (3, 1), (3, 2)]);
    // Published values (Drake & Swainson 1990 via CODATA 2018), 12 digits asked.
    let v = |i: usize| -> f64 { rows[i].split(',').nth(2).unwrap().parse().unwrap() };
    assert!((v(0) - 2.984128555765498).abs() < 1e-12); // Drake & Swainson 1990, via CODATA 2018
    assert!((v(2) - -0.030016708630213).abs() < 1e-12); // Drake & Swainson 1990, via CODATA 2018
                                                        // 14 decimals (digits + 2).
    assert_eq!(
        rows[0]
            .split(',')
            .nth(2)
            .unwrap()
            .split('.')
            .nth(1)
            .unwrap()
            .len(),
        14
    );
}

#[test]
fn threads_one_and_two_give_identical_values() {
    let dir = tempfile::tempdir().unwrap();
    let a = p(dir.path(), "a.csv");
    let b = p(dir.path(), "b.csv");
    let base = ["table", "--n-max", "5", "--digits", "12", "--quiet"];
    let oa = kzero(&[&base[..], &["--threads", "1", "--out", &a]].concat());
    let ob = kzero(&[&base[..], &["--threads", "2", "--out", &b]].concat());
    assert_eq!(code(&oa), 0, "{}", stderr(&oa));
    assert_eq!(code(&ob), 0, "{}", stderr(&ob));
    let (ta, tb) = (
        fs::read_to_string(&a).unwrap(),
        fs::read_to_string(&b).unwrap(),
    );
    assert_eq!(value_columns(&ta).len(), 15);
    assert_eq!(value_columns(&ta), value_columns(&tb));
}

#[test]
fn shards_merged_equal_a_single_run() {
    let dir = tempfile::tempdir().unwrap();
    let single = p(dir.path(), "single.csv");
    let base = ["table", "--n-max", "5", "--digits", "12", "--threads", "2"];
    let o = kzero(&[&base[..], &["--out", &single]].concat());
    assert_eq!(code(&o), 0, "{}", stderr(&o));
    let mut shards = Vec::new();
    let mut sizes = Vec::new();
    for k in 1..=3 {
        let s = p(dir.path(), &format!("s{k}.csv"));
        let o = kzero(&[&base[..], &["--shard", &format!("{k}/3"), "--out", &s]].concat());
        assert_eq!(code(&o), 0, "{}", stderr(&o));
        let text = fs::read_to_string(&s).unwrap();
        assert!(text.contains(&format!("# shard: {k}/3")));
        sizes.push(data_lines(&text).len());
        shards.push(s);
    }
    // Disjoint parts covering the 15 states.
    assert_eq!(sizes.iter().sum::<usize>(), 15);
    assert!(sizes.iter().all(|&s| s >= 3), "unbalanced shards {sizes:?}");
    // The same K/M always gives the same part.
    let again = p(dir.path(), "s2b.csv");
    let o = kzero(&[&base[..], &["--shard", "2/3", "--out", &again]].concat());
    assert_eq!(code(&o), 0);
    assert_eq!(
        value_columns(&fs::read_to_string(&again).unwrap()),
        value_columns(&fs::read_to_string(&shards[1]).unwrap())
    );

    let merged = p(dir.path(), "merged.csv");
    let o = kzero(&[
        "merge", &shards[2], &shards[0], &shards[1], "--out", &merged,
    ]);
    assert_eq!(code(&o), 0, "{}", stderr(&o));
    let (ts, tm) = (
        fs::read_to_string(&single).unwrap(),
        fs::read_to_string(&merged).unwrap(),
    );
    assert_eq!(value_columns(&ts), value_columns(&tm));
    let settings = |t: &str| -> Vec<String> {
        t.lines()
            .filter(|l| l.starts_with("# setting."))
            .map(str::to_string)
            .collect()
    };
    assert_eq!(settings(&ts), settings(&tm));
    assert!(tm.contains("# shard: 1/1"));

    // A gap and a duplicate are reported, nothing is written.
    let bad = p(dir.path(), "bad.csv");
    let o = kzero(&["merge", &shards[0], &shards[1], "--out", &bad]);
    assert_bad_input(&o, "merge with a gap");
    assert!(stderr(&o).contains("missing states"));
    let o = kzero(&[
        "merge", &shards[0], &shards[1], &shards[1], &shards[2], "--out", &bad,
    ]);
    assert_bad_input(&o, "merge with a duplicate");
    assert!(stderr(&o).contains("duplicate"));
    assert!(!Path::new(&bad).exists());
    // Shards of different settings are refused.
    let other = p(dir.path(), "other.csv");
    let o = kzero(&[
        "table", "--n-max", "5", "--digits", "13", "--shard", "3/3", "--out", &other,
    ]);
    assert_eq!(code(&o), 0);
    let o = kzero(&["merge", &shards[0], &shards[1], &other, "--out", &bad]);
    assert_bad_input(&o, "merge with other settings");
    assert!(stderr(&o).contains("digits"));
}

fn wait_for_rows(path: &Path, rows: usize, child: &mut std::process::Child) -> bool {
    let start = Instant::now();
    while start.elapsed() < Duration::from_secs(120) {
        if let Ok(t) = fs::read_to_string(path) {
            if t.contains("\nn,l,") && data_lines(&t).len() >= rows {
                return true;
            }
        }
        if let Ok(Some(_)) = child.try_wait() {
            return false;
        }
        std::thread::sleep(Duration::from_millis(20));
    }
    false
}

/// Starts a table run, interrupts it with `signal` once `ROWS_BEFORE_SIGNAL`
/// rows are on disk, and returns the text left there plus its finished rows.
/// The table is chosen so that the rest of the run takes far longer than
/// sending the signal; a run that ends before the signal fails the test
/// (there is no fallback that fakes the crash state).
fn interrupted_run(args: &[&str], part: &str, signal: &str, total: usize) -> (String, Vec<String>) {
    let mut child = Command::new(BIN)
        .args([args, &["--out", part]].concat())
        .stdout(Stdio::null())
        .stderr(Stdio::null())
        .spawn()
        .unwrap();
    let got_rows = wait_for_rows(Path::new(part), ROWS_BEFORE_SIGNAL, &mut child);
    let running = matches!(child.try_wait(), Ok(None));
    let _ = Command::new("kill")
        .args([signal, &child.id().to_string()])
        .status();
    let status = child.wait().unwrap();
    assert!(
        got_rows,
        "{ROWS_BEFORE_SIGNAL} rows did not appear while the run was going"
    );
    assert!(running, "the run ended before {signal} was sent");
    assert!(
        !status.success(),
        "the run was not interrupted by {signal}: {status}"
    );
    let text = fs::read_to_string(part).unwrap();
    let mut finished = data_lines(&text);
    if !text.ends_with('\n') {
        // A line cut by the signal is not a finished row.
        finished.pop();
    }
    assert!(
        finished.len() >= ROWS_BEFORE_SIGNAL && finished.len() < total,
        "{} of {total} rows after {signal}",
        finished.len()
    );
    (text, finished)
}

/// Rows that must be on disk before the signal is sent.
const ROWS_BEFORE_SIGNAL: usize = 2;

#[test]
fn resume_after_kill_equals_an_uninterrupted_run() {
    let dir = tempfile::tempdir().unwrap();
    let full = p(dir.path(), "full.csv");
    // 19 states of similar cost (n = 9 and 10), computed most expensive first:
    // after the first two rows, the other 17 still take many times longer
    // than the few milliseconds between seeing the rows and the signal.
    let args = [
        "table",
        "--n-min",
        "9",
        "--n-max",
        "10",
        "--digits",
        "20",
        "--threads",
        "2",
        "--quiet",
    ];
    let o = kzero(&[&args[..], &["--out", &full]].concat());
    assert_eq!(code(&o), 0, "{}", stderr(&o));
    let full_text = fs::read_to_string(&full).unwrap();
    let total = data_lines(&full_text).len();
    assert_eq!(total, 19);

    // kill -9, then Ctrl-C (SIGINT), each followed by --resume.
    for (signal, torn) in [("-KILL", true), ("-INT", false)] {
        let part = p(dir.path(), &format!("part{signal}.csv"));
        let (mut text, finished) = interrupted_run(&args, &part, signal, total);
        if torn {
            // A write torn by the kill: a partial last line.
            text.push_str("9,3,-0.00");
        }
        fs::write(&part, &text).unwrap();

        let o = kzero(&[&args[..], &["--out", &part, "--resume"]].concat());
        assert_eq!(code(&o), 0, "{}", stderr(&o));
        let resumed = fs::read_to_string(&part).unwrap();
        assert_eq!(
            value_columns(&resumed),
            value_columns(&full_text),
            "after {signal}"
        );
        // Finished rows were not recomputed: kept byte for byte, time included.
        let rows = data_lines(&resumed);
        for f in &finished {
            assert!(rows.contains(f), "row {f} was recomputed or lost");
        }
        assert!(resumed.contains("# resumed_utc: "));
        // Resuming a complete table computes nothing and changes no value.
        let o = kzero(&[&args[..], &["--out", &part, "--resume"]].concat());
        assert_eq!(code(&o), 0, "{}", stderr(&o));
        assert_eq!(data_lines(&fs::read_to_string(&part).unwrap()), rows);
    }
}

/// A run killed before its first row leaves an empty file or a cut header;
/// `--resume` (as the README's job-array recipe gives it whenever the file
/// exists) starts the work on it, unless the header names other settings.
#[test]
fn resume_starts_the_work_on_a_file_left_before_the_first_row() {
    let dir = tempfile::tempdir().unwrap();
    let args = ["table", "--n-max", "3", "--digits", "10", "--threads", "1"];
    let full = p(dir.path(), "full.csv");
    let o = kzero(&[&args[..], &["--out", &full]].concat());
    assert_eq!(code(&o), 0, "{}", stderr(&o));
    let full_text = fs::read_to_string(&full).unwrap();
    let columns_at = full_text.find("\nn,l,").unwrap() + 1;
    let digits_end = full_text.find("# setting.method").unwrap();
    let rows_at = full_text[columns_at..].find('\n').unwrap() + columns_at + 1;
    let cuts = [
        0,
        7,
        20,
        columns_at / 2,
        digits_end,
        columns_at,
        columns_at + 9,
        rows_at,
    ];
    for cut in cuts {
        let part = p(dir.path(), &format!("cut{cut}.csv"));
        fs::write(&part, &full_text.as_bytes()[..cut]).unwrap();
        let o = kzero(&[&args[..], &["--out", &part, "--resume"]].concat());
        assert_eq!(code(&o), 0, "cut at {cut}: {}", stderr(&o));
        let text = fs::read_to_string(&part).unwrap();
        assert_eq!(
            value_columns(&text),
            value_columns(&full_text),
            "cut at {cut}"
        );
        assert!(text.starts_with("# kzero-table: 2\n"));
    }
    // A cut header that names other digits or another shard is refused,
    // the file untouched.
    let cut = &full_text.as_bytes()[..digits_end];
    let part = p(dir.path(), "other.csv");
    fs::write(&part, cut).unwrap();
    for (digits, shard) in [("11", "1/1"), ("10", "1/2")] {
        let o = kzero(&[
            "table", "--n-max", "3", "--digits", digits, "--shard", shard, "--out", &part,
            "--resume",
        ]);
        assert_bad_input(
            &o,
            &format!("resume of a cut header, {digits} digits, shard {shard}"),
        );
        assert!(stderr(&o).contains("other settings"), "{}", stderr(&o));
        assert_eq!(fs::read(&part).unwrap(), cut);
    }
    // JSON: an empty journal next to no table starts the work; an empty
    // journal next to a finished table continues the table.
    let js = p(dir.path(), "t.json");
    fs::write(format!("{js}.partial"), b"").unwrap();
    let o = kzero(&[&args[..], &["--json", "--out", &js, "--resume"]].concat());
    assert_eq!(code(&o), 0, "{}", stderr(&o));
    let doc: serde_json::Value = serde_json::from_str(&fs::read_to_string(&js).unwrap()).unwrap();
    assert_eq!(doc["rows"].as_array().unwrap().len(), 6);
    assert!(!Path::new(&format!("{js}.partial")).exists());
    fs::write(format!("{js}.partial"), b"# kzero-ta").unwrap();
    let o = kzero(&[&args[..], &["--json", "--out", &js, "--resume"]].concat());
    assert_eq!(code(&o), 0, "{}", stderr(&o));
    let again: serde_json::Value = serde_json::from_str(&fs::read_to_string(&js).unwrap()).unwrap();
    assert_eq!(again["rows"], doc["rows"], "finished rows recomputed");
    assert!(!Path::new(&format!("{js}.partial")).exists());
}

/// SIGINT and SIGTERM end a table with one line saying how to continue,
/// and the process ends by that signal.
#[test]
fn sigint_and_sigterm_say_how_to_continue() {
    use std::os::unix::process::ExitStatusExt;
    let dir = tempfile::tempdir().unwrap();
    let part = p(dir.path(), "part.csv");
    let args = [
        "table",
        "--n-max",
        "30",
        "--digits",
        "30",
        "--threads",
        "1",
        "--quiet",
    ];
    for (signal, number, extra, advice) in [
        (
            "-TERM",
            15,
            &["--force"][..],
            "run the same command with --resume in place of --force",
        ),
        ("-INT", 2, &["--resume"][..], "run the same command again"),
    ] {
        let before = fs::read_to_string(&part).map_or(0, |t| data_lines(&t).len());
        let mut child = Command::new(BIN)
            .args([&args[..], extra, &["--out", &part]].concat())
            .stdout(Stdio::null())
            .stderr(Stdio::piped())
            .spawn()
            .unwrap();
        assert!(
            wait_for_rows(Path::new(&part), before + 2, &mut child),
            "the run ended before {signal}"
        );
        let _ = Command::new("kill")
            .args([signal, &child.id().to_string()])
            .status();
        let o = child.wait_with_output().unwrap();
        assert_eq!(o.status.signal(), Some(number), "{signal}: {:?}", o.status);
        let e = stderr(&o);
        assert_eq!(e.lines().count(), 1, "{signal}: {e:?}");
        assert!(
            e.starts_with(&format!("kzero: stopped by SIG{}; ", &signal[1..])),
            "{e}"
        );
        assert!(
            e.contains(&format!(
                "finished rows are kept in {part}; to continue, {advice}"
            )),
            "{e}"
        );
        assert!(data_lines(&fs::read_to_string(&part).unwrap()).len() >= 2);
    }
}

#[test]
fn json_tables_have_meta_and_rows_and_resume_from_the_journal() {
    let dir = tempfile::tempdir().unwrap();
    let out = p(dir.path(), "t.json");
    let args = [
        "table",
        "--n-max",
        "3",
        "--digits",
        "10",
        "--format",
        "json",
        "--threads",
        "2",
    ];
    let o = kzero(&[&args[..], &["--out", &out]].concat());
    assert_eq!(code(&o), 0, "{}", stderr(&o));
    let v: serde_json::Value = serde_json::from_str(&fs::read_to_string(&out).unwrap()).unwrap();
    assert_eq!(v["meta"]["settings"]["digits"], 10);
    assert_eq!(v["meta"]["shard"], "1/1");
    let rows = v["rows"].as_array().unwrap();
    assert_eq!(rows.len(), 6);
    assert_eq!(rows[0]["n"], 1);
    assert!(rows[0]["ln_k0"]
        .as_str()
        .unwrap()
        .starts_with("2.9841285557")); // Drake & Swainson 1990, via CODATA 2018
    assert!(!Path::new(&format!("{out}.partial")).exists());

    // A crashed JSON run leaves its CSV journal; --resume completes it.
    let out2 = p(dir.path(), "u.json");
    let csv = p(dir.path(), "u.csv");
    let o = kzero(&["table", "--n-max", "3", "--digits", "10", "--out", &csv]);
    assert_eq!(code(&o), 0);
    let text = fs::read_to_string(&csv).unwrap();
    let cut: Vec<&str> = text.lines().take_while(|l| !l.starts_with("3,")).collect();
    fs::write(format!("{out2}.partial"), cut.join("\n") + "\n").unwrap();
    let o = kzero(&[&args[..], &["--out", &out2, "--resume"]].concat());
    // The journal was written by another command line but with the same settings.
    assert_eq!(code(&o), 0, "{}", stderr(&o));
    let w: serde_json::Value = serde_json::from_str(&fs::read_to_string(&out2).unwrap()).unwrap();
    let a: Vec<&serde_json::Value> = rows.iter().map(|r| &r["ln_k0"]).collect();
    let b: Vec<&serde_json::Value> = w["rows"]
        .as_array()
        .unwrap()
        .iter()
        .map(|r| &r["ln_k0"])
        .collect();
    assert_eq!(a, b);
    assert!(!Path::new(&format!("{out2}.partial")).exists());
}

#[test]
fn bad_state_and_number_input_exit_2() {
    let cases: &[&[&str]] = &[
        &["state", "0", "0"],
        &["state", "3", "3"],
        &["state", "3", "5"],
        &["state", "-1", "0"],
        &["state", "2", "-1"],
        &["state", "x", "0"],
        &["state", "2", "1.5"],
        &["state", "2", "0", "--digits", "4"],
        &["state", "2", "0", "--digits", "201"],
        &["state", "2", "0", "--digits", "-3"],
        &["state", "2", "0", "--digits", "ten"],
        &["state", "2", "0", "--method", "magic"],
        &["state", "1001", "0"],
        &["table", "--n-max", "0"],
        &["table", "--n-max", "-2"],
        &["table", "--n-max", "3", "--n-min", "4"],
        &["table", "--n-max", "3", "--l", "-1"],
        &["table", "--n-max", "3", "--l", "7"],
        &["table", "--n-max", "3", "--digits", "2"],
        &["table", "--n-max", "3", "--shard", "0/3"],
        &["table", "--n-max", "3", "--shard", "4/3"],
        &["table", "--n-max", "3", "--shard", "a/b"],
        &["table", "--n-max", "3", "--method", "magic"],
        &["table", "--n-max", "3", "--format", "xml"],
        &["table", "--n-max", "3", "--threads", "0"],
        &["table", "--n-max", "3", "--resume"],
        &["table"],
        &["sweep", "2", "0", "--digits", "10,300"],
        &["sweep", "0", "0"],
        &["radial", "1", "0", "2", "5"],
        &["radial", "1", "0", "2", "1", "--power", "-9"],
        &["oscillator", "1", "0", "2", "0"],
        &["oscillator", "0", "0", "2", "1"],
        &["frobnicate"],
    ];
    for args in cases {
        let o = kzero(args);
        assert_bad_input(&o, &args.join(" "));
    }
}

#[test]
fn bad_files_exit_2_and_are_left_untouched() {
    let dir = tempfile::tempdir().unwrap();
    let good = p(dir.path(), "good.csv");
    let o = kzero(&["table", "--n-max", "2", "--digits", "10", "--out", &good]);
    assert_eq!(code(&o), 0, "{}", stderr(&o));
    let good_text = fs::read_to_string(&good).unwrap();

    // Existing output without --resume or --force.
    let o = kzero(&["table", "--n-max", "2", "--digits", "10", "--out", &good]);
    assert_bad_input(&o, "existing --out");
    // Resume with other settings.
    let o = kzero(&[
        "table", "--n-max", "3", "--digits", "10", "--out", &good, "--resume",
    ]);
    assert_bad_input(&o, "resume with other n_max");
    let o = kzero(&[
        "table", "--n-max", "2", "--digits", "11", "--out", &good, "--resume",
    ]);
    assert_bad_input(&o, "resume with other digits");
    let o = kzero(&[
        "table", "--n-max", "2", "--digits", "10", "--shard", "1/2", "--out", &good, "--resume",
    ]);
    assert_bad_input(&o, "resume with another shard");
    assert_eq!(fs::read_to_string(&good).unwrap(), good_text);

    // (Empty files and headers cut before the column line are refused by
    // merge; --resume starts the work on them, see
    // `resume_starts_the_work_on_a_file_left_before_the_first_row`.)
    let unstarted = ["empty.csv", "truncated.csv", "cutheader.csv"];
    let files: Vec<(&str, Vec<u8>)> = vec![
        ("foreign.csv", b"name,value\nx,1\n".to_vec()),
        ("binary.csv", vec![0xff, 0xfe, 0x00, 0x41]),
        ("empty.csv", Vec::new()),
        (
            "truncated.csv",
            good_text.as_bytes()[..good_text.len() / 3].to_vec(),
        ),
        ("cutheader.csv", good_text.as_bytes()[..20].to_vec()),
        (
            "headerjunk.csv",
            format!("{}x,y\n", &good_text[..good_text.find("# git").unwrap()]).into_bytes(),
        ),
        (
            "badrow.csv",
            format!("{good_text}9,0,abc,1e-3,green,10,64,0.1\n").into_bytes(),
        ),
        ("foreign.json", b"{\"a\": 1}".to_vec()),
        (
            "truncated.json",
            b"{\"meta\": {\"format\": \"kzero-table\"".to_vec(),
        ),
    ];
    for (name, bytes) in &files {
        let path = dir.path().join(name);
        fs::write(&path, bytes).unwrap();
        let ps = path.to_string_lossy().to_string();
        if !unstarted.contains(name) {
            let o = kzero(&[
                "table", "--n-max", "2", "--digits", "10", "--out", &ps, "--resume",
            ]);
            assert_bad_input(&o, &format!("resume from {name}"));
            assert_eq!(&fs::read(&path).unwrap(), bytes, "{name} was modified");
        }
        let out = p(dir.path(), "merged.csv");
        let o = kzero(&["merge", &good, &ps, "--out", &out]);
        assert_bad_input(&o, &format!("merge with {name}"));
        assert!(!Path::new(&out).exists());
    }
    // A table resumed in the other format is refused, the file untouched.
    let js = p(dir.path(), "done.json");
    let o = kzero(&[
        "table", "--n-max", "2", "--digits", "10", "--json", "--out", &js,
    ]);
    assert_eq!(code(&o), 0, "{}", stderr(&o));
    let js_text = fs::read_to_string(&js).unwrap();
    let o = kzero(&[
        "table", "--n-max", "2", "--digits", "10", "--out", &js, "--resume",
    ]);
    assert_bad_input(&o, "resume a JSON table as CSV");
    assert_eq!(fs::read_to_string(&js).unwrap(), js_text);
    let o = kzero(&[
        "table", "--n-max", "2", "--digits", "10", "--json", "--out", &good, "--resume",
    ]);
    assert_bad_input(&o, "resume a CSV table as JSON");
    assert_eq!(fs::read_to_string(&good).unwrap(), good_text);
    assert!(!Path::new(&format!("{good}.partial")).exists());

    // Missing and unreadable (a folder) inputs.
    let missing = p(dir.path(), "missing.csv");
    let o = kzero(&["table", "--n-max", "2", "--out", &missing, "--resume"]);
    assert_bad_input(&o, "resume from a missing file");
    assert!(!Path::new(&missing).exists());
    let o = kzero(&["merge", &missing]);
    assert_bad_input(&o, "merge a missing file");
    let sub = dir.path().join("folder.csv");
    fs::create_dir(&sub).unwrap();
    let o = kzero(&["merge", &sub.to_string_lossy()]);
    assert_bad_input(&o, "merge a folder");

    // Output in a missing folder: refused before any work.
    let nowhere: PathBuf = dir.path().join("no/such/folder/t.csv");
    let o = kzero(&["table", "--n-max", "2", "--out", &nowhere.to_string_lossy()]);
    assert_bad_input(&o, "output in a missing folder");
    let o = kzero(&[
        "table",
        "--n-max",
        "2",
        "--plot",
        &dir.path().join("nope/p.svg").to_string_lossy(),
    ]);
    assert_bad_input(&o, "plot in a missing folder");
    let o = kzero(&["merge", &good, "--out", &nowhere.to_string_lossy()]);
    assert_bad_input(&o, "merge output in a missing folder");
    assert_eq!(fs::read_to_string(&good).unwrap(), good_text);
}

#[test]
fn state_json_carries_the_interface_fields() {
    let o = kzero(&["state", "2", "1", "--digits", "15", "--json"]);
    assert_eq!(code(&o), 0, "{}", stderr(&o));
    let v: serde_json::Value = serde_json::from_str(&stdout(&o)).unwrap();
    for k in [
        "n", "l", "ln_k0", "abs_err", "digits", "method", "bits", "seconds", "nodes", "terms",
    ] {
        assert!(v.get(k).is_some(), "missing {k}");
    }
    let s = v["ln_k0"].as_str().unwrap();
    assert!(s.split('.').nth(1).unwrap().len() >= 17);
    // Drake & Swainson 1990 via CODATA 2018.
    let x: f64 = s.parse().unwrap();
    assert!((x - -0.030016708630213).abs() < 1e-15);
    let err: f64 = v["abs_err"].as_str().unwrap().parse().unwrap();
    assert!(err < 1e-15);
    assert_eq!(v["method"], "green");
}

#[test]
fn radial_and_oscillator_match_closed_forms() {
    let o = kzero(&["radial", "1", "0", "2", "1", "--digits", "30", "--json"]);
    assert_eq!(code(&o), 0, "{}", stderr(&o));
    let v: serde_json::Value = serde_json::from_str(&stdout(&o)).unwrap();
    // 2^8 / (81 sqrt 6) = 1.290266201959863360367293668980881... (closed form),
    // so to 30 decimals, rounded: 1.290266201959863360367293668981.
    // The same digits independently, in exact integers: x^2 = 2^16 / (81^2 6),
    // so floor(2 x 10^30) = isqrt(floor(4 2^16 10^60 / 39366)), and the
    // rounded 10^30 x is (floor(2 x 10^30) + 1) / 2 (x is irrational).
    let four_x2 = rug::Integer::from(4 * 65_536) * rug::Integer::from(10).pow(60);
    let two_x: rug::Integer = (four_x2 / 39_366u32).sqrt();
    let digits = ((two_x + 1u32) / 2u32).to_string();
    let want = format!("{}.{}", &digits[..1], &digits[1..]);
    assert_eq!(want, "1.290266201959863360367293668981"); // closed form, above
    assert_eq!(v["value"], want.as_str());
    let o = kzero(&["oscillator", "1", "0", "2", "1", "--json"]);
    assert_eq!(code(&o), 0, "{}", stderr(&o));
    let v: serde_json::Value = serde_json::from_str(&stdout(&o)).unwrap();
    // 2^13/3^9 = 8192/19683 = 0.41619671797998272621...
    assert_eq!(v["f"], "0.41619671797998272621"); // 2^13/3^9 exactly (closed form)
}

#[test]
fn sweep_reports_every_setting_and_plots() {
    let dir = tempfile::tempdir().unwrap();
    let svg = p(dir.path(), "sweep.svg");
    let o = kzero(&[
        "sweep", "2", "0", "--digits", "10,15,25", "--plot", &svg, "--json",
    ]);
    assert_eq!(code(&o), 0, "{}", stderr(&o));
    let v: serde_json::Value = serde_json::from_str(&stdout(&o)).unwrap();
    // The provenance keys of every kzero table.
    for k in [
        "version",
        "git_revision",
        "mpfr",
        "gmp",
        "command",
        "started_utc",
    ] {
        assert!(v["meta"][k].is_string(), "meta.{k} missing: {}", v["meta"]);
    }
    let rows = v["rows"].as_array().unwrap();
    assert_eq!(rows.len(), 3);
    for r in &rows[..2] {
        assert_eq!(
            r["covered"], true,
            "estimate does not cover the actual error: {r}"
        );
    }
    // "covered" alone would also hold for a huge estimate: every estimate
    // must be below its goal 10^-D as well.
    for (r, d) in rows.iter().zip([10, 15, 25]) {
        assert_eq!(r["digits"], d);
        let est = number(&r["abs_err"]);
        assert!(
            est < 10f64.powi(-d),
            "estimate {est:e} not below 1e-{d}: {r}"
        );
    }
    assert!(rows[2]["actual_err"].is_null());
    let text = fs::read_to_string(&svg).unwrap();
    assert!(text.starts_with("<svg"));
}

#[test]
fn table_plot_is_an_svg_with_one_curve_per_l() {
    let dir = tempfile::tempdir().unwrap();
    let svg = p(dir.path(), "t.svg");
    let o = kzero(&["table", "--n-max", "3", "--digits", "8", "--plot", &svg]);
    assert_eq!(code(&o), 0, "{}", stderr(&o));
    assert_eq!(data_lines(&stdout(&o)).len(), 6);
    let text = fs::read_to_string(&svg).unwrap();
    assert!(text.starts_with("<svg"));
    for l in ["l = 0", "l = 1", "l = 2"] {
        assert!(text.contains(l), "legend {l} missing");
    }
}

#[test]
fn check_runs_the_bundled_checks() {
    let o = kzero(&["check", "--digits", "18", "--json"]);
    let v: serde_json::Value = serde_json::from_str(&stdout(&o)).unwrap();
    let lines = v.as_array().unwrap();
    let find = |q: &str, n: u64, l: u64| {
        lines
            .iter()
            .find(|x| x["quantity"] == q && x["state"]["n"] == n && x["state"]["l"] == l)
            .unwrap_or_else(|| panic!("{q}({n},{l}) missing"))
    };
    // Drake & Swainson 1990 (via CODATA 2018) and Bethe, Brown & Stehn 1950.
    for (q, n, l) in [
        ("ln_k0", 1, 0),
        ("ln_k0", 2, 0),
        ("ln_k0", 2, 1),
        ("k0_ry", 2, 0),
    ] {
        let x = find(q, n, l);
        assert_eq!(x["pass"], true, "{q}({n},{l})");
        // every part in its own field, numbers as decimal strings
        for k in [
            "source",
            "expected",
            "tolerance",
            "computed",
            "error",
            "difference",
        ] {
            assert!(x[k].is_string(), "{q}({n},{l}) {k}: {}", x[k]);
        }
        // the printed computed value lies within its printed error of the
        // expected value plus the tolerance
        let num = |k: &str| x[k].as_str().unwrap().parse::<f64>().unwrap();
        assert!(
            (num("computed") - num("expected")).abs()
                <= num("tolerance") + num("error") + 1e-15 * num("expected").abs()
        );
    }
    // The pass rule is |difference| <= tolerance + estimate, so every
    // estimate must also be below the goal 10^-18, or an inflated estimate
    // would pass a wrong value: lines from ln k0 values (data checks, level
    // intervals, green vs spectral) carry their largest estimate.
    let mut estimated = 0;
    for l in lines {
        if l["ln_k0_err"].is_null() {
            assert!(l["ln_k0_goal"].is_null(), "{l}");
            continue;
        }
        let (err, goal) = (number(&l["ln_k0_err"]), number(&l["ln_k0_goal"]));
        assert!((goal / 1e-18 - 1.0).abs() < 1e-12, "goal {goal:e}: {l}");
        assert!(err < goal, "estimate {err:e} not below the goal: {l}");
        estimated += 1;
    }
    // 4 ln k0 data lines, 2 level intervals, 5 green vs spectral.
    assert!(estimated >= 11, "{estimated} lines with an estimate");
    let all_pass = lines.iter().all(|l| l["pass"] == true);
    assert_eq!(code(&o), if all_pass { 0 } else { 3 });
    assert!(
        all_pass,
        "failing checks: {:?}",
        lines
            .iter()
            .filter(|l| l["pass"] != true)
            .collect::<Vec<_>>()
    );
}

#[test]
fn both_methods_in_state_and_table_agree() {
    let o = kzero(&[
        "state", "2", "0", "--digits", "15", "--method", "both", "--json",
    ]);
    assert_eq!(code(&o), 0, "{}", stderr(&o));
    let v: serde_json::Value = serde_json::from_str(&stdout(&o)).unwrap();
    for k in [
        "ln_k0",
        "abs_err",
        "ln_k0_spectral",
        "abs_err_spectral",
        "agreement_digits",
    ] {
        assert!(v.get(k).is_some(), "missing {k}");
    }
    assert!(v["agreement_digits"].as_u64().unwrap() >= 15);
    let o = kzero(&[
        "table",
        "--n-max",
        "3",
        "--digits",
        "10",
        "--method",
        "both",
        "--threads",
        "2",
    ]);
    assert_eq!(code(&o), 0, "{}", stderr(&o));
    let text = stdout(&o);
    assert!(text.contains(
        "\nn,l,ln_k0,abs_err,method,digits,bits,seconds,ln_k0_spectral,abs_err_spectral,agreement_digits,check\n"
    ));
    let rows = data_lines(&text);
    assert_eq!(rows.len(), 6);
    for r in rows {
        let f: Vec<&str> = r.split(',').collect();
        assert_eq!(f[4], "both");
        let (g, s): (f64, f64) = (f[2].parse().unwrap(), f[8].parse().unwrap());
        assert!((g - s).abs() < 1e-10, "{r}");
        assert!(f[10].parse::<u32>().unwrap() >= 10, "{r}");
    }
}

#[test]
fn json_errors_are_one_object_on_stdout() {
    for args in [
        &["state", "2", "2", "--json"][..],
        &["state", "2", "0", "--digits", "300", "--json"],
        &["radial", "1", "0", "1", "0", "--power", "-3", "--json"],
    ] {
        let o = kzero(args);
        assert_eq!(code(&o), 2, "{args:?}");
        let v: serde_json::Value = serde_json::from_str(&stdout(&o)).unwrap();
        assert_eq!(v["exit"], 2);
        let msg = v["error"].as_str().unwrap();
        // the same message as the one line on stderr
        assert_eq!(stderr(&o).trim_end(), format!("kzero: {msg}"));
    }
    // without --json stdout stays empty
    let o = kzero(&["state", "2", "2"]);
    assert_eq!(code(&o), 2);
    assert!(stdout(&o).is_empty());
}

#[test]
fn an_output_folder_without_write_access_is_bad_input() {
    // /proc takes no new files, even for the superuser
    let o = kzero(&[
        "table",
        "--n-max",
        "1",
        "--digits",
        "5",
        "--out",
        "/proc/kzero-t.csv",
    ]);
    assert_bad_input(&o, "cannot create files");
}

#[test]
fn radial_accepts_the_powers_that_converge() {
    // <2p| r^-3 |3s> converges (the integrand goes like r^0 at the origin)
    let o = kzero(&["radial", "2", "1", "3", "0", "--power", "-3", "--json"]);
    assert_eq!(code(&o), 0, "{}", stderr(&o));
    let v: serde_json::Value = serde_json::from_str(&stdout(&o)).unwrap();
    assert!(v.get("z").is_none());
    let err: f64 = v["abs_err"].as_str().unwrap().parse().unwrap();
    assert!(err > 0.0 && err <= 5.1e-21);
    // <1s| r^-3 |1s> diverges (r^-1 at the origin)
    assert_bad_input(
        &kzero(&["radial", "1", "0", "1", "0", "--power", "-3"]),
        "diverges",
    );
}

#[test]
fn gauge_all_reports_the_spread_and_gauge_with_green_is_refused() {
    let o = kzero(&[
        "state", "3", "1", "--method", "spectral", "--gauge", "all", "--digits", "15", "--json",
    ]);
    assert_eq!(code(&o), 0, "{}", stderr(&o));
    let v: serde_json::Value = serde_json::from_str(&stdout(&o)).unwrap();
    let g = &v["gauges"];
    assert_eq!(g["consistent"], true);
    let forms = g["forms"].as_array().unwrap();
    let names: Vec<&str> = forms.iter().map(|f| f["gauge"].as_str().unwrap()).collect();
    assert_eq!(names, ["velocity", "length", "acceleration"]);
    let spread: f64 = g["spread"].as_str().unwrap().parse().unwrap();
    let errs: Vec<f64> = forms
        .iter()
        .map(|f| f["abs_err"].as_str().unwrap().parse().unwrap())
        .collect();
    assert!(spread <= errs.iter().sum::<f64>());
    // an option the method would ignore is refused
    for args in [
        &["state", "2", "1", "--gauge", "length"][..],
        &["sweep", "2", "1", "--gauge", "velocity"],
    ] {
        assert_bad_input(&kzero(args), "--gauge with green");
    }
}

#[test]
fn significant_goal_in_state_and_sweep() {
    // ln k0(2,1) = -0.030016708630213 (Drake & Swainson 1990 via CODATA 2018)
    let o = kzero(&["state", "2", "1", "--significant", "12", "--json"]);
    assert_eq!(code(&o), 0, "{}", stderr(&o));
    let v: serde_json::Value = serde_json::from_str(&stdout(&o)).unwrap();
    assert_eq!(v["goal"], "significant");
    assert_eq!(v["digits"], 12);
    let x: f64 = v["ln_k0"].as_str().unwrap().parse().unwrap();
    let err: f64 = v["abs_err"].as_str().unwrap().parse().unwrap();
    assert!((x - -0.030016708630213).abs() <= err + 1e-15);
    assert!(err <= 1.05e-12 * x.abs());
    let d = kzero(&["state", "2", "1", "--json"]);
    let d: serde_json::Value = serde_json::from_str(&stdout(&d)).unwrap();
    assert_eq!(d["goal"], "absolute");
    assert_bad_input(
        &kzero(&["state", "2", "1", "--digits", "10", "--significant", "10"]),
        "both goals",
    );
    // every printed decimal of the sweep is covered by its printed error
    let o = kzero(&["sweep", "1", "0", "--significant", "5,9,14", "--json"]);
    assert_eq!(code(&o), 0, "{}", stderr(&o));
    let v: serde_json::Value = serde_json::from_str(&stdout(&o)).unwrap();
    assert_eq!(v["goal"], "significant");
    let rows = v["rows"].as_array().unwrap();
    assert!(rows[..2].iter().all(|r| r["covered"] == true));
}

/// `kzero table --estimate`: the cost of the run is printed, nothing is
/// computed and no file is touched; the shard suggestion splits the run by
/// the same plan as `--shard`; `--target-wall` needs `--estimate`.
#[test]
fn table_estimate_prints_cost_without_computing() {
    let dir = tempfile::tempdir().unwrap();
    let out = p(dir.path(), "t.csv");
    let o = kzero(&[
        "table",
        "--n-max",
        "200",
        "--digits",
        "20",
        "--threads",
        "2",
        "--out",
        &out,
        "--estimate",
        "--target-wall",
        "1m",
    ]);
    assert_eq!(code(&o), 0, "{}", stderr(&o));
    let text = stdout(&o);
    assert!(text.starts_with("estimate for 20100 states"), "{text}");
    assert!(text.contains("core-seconds") && text.contains("with 2 threads"));
    // the suggested count meets 1 minute with 2 threads
    let m: u32 = text
        .split("--shard K/")
        .nth(1)
        .and_then(|r| r.split_whitespace().next())
        .and_then(|v| v.parse().ok())
        .unwrap_or_else(|| panic!("no shard count in {text}"));
    assert!(m > 1, "{text}");
    assert!(text.contains("(slowest part"), "{text}");
    assert!(!Path::new(&out).exists(), "--estimate wrote {out}");
    // one shard of it costs about 1/m of the whole
    let part = kzero(&[
        "table",
        "--n-max",
        "200",
        "--digits",
        "20",
        "--threads",
        "2",
        "--estimate",
        "--shard",
        &format!("1/{m}"),
    ]);
    assert_eq!(code(&part), 0);
    let seconds = |t: &str| -> f64 {
        t.lines()
            .find(|l| l.trim_start().starts_with("cost"))
            .and_then(|l| l.split_whitespace().nth(1))
            .and_then(|v| v.parse().ok())
            .unwrap_or_else(|| panic!("no cost in {t}"))
    };
    let whole = seconds(&text);
    let one = seconds(&stdout(&part));
    assert!(one < whole / f64::from(m) * 1.2 && one > whole / f64::from(m) * 0.8);
    assert_bad_input(
        &kzero(&["table", "--n-max", "3", "--target-wall", "1m"]),
        "--target-wall without --estimate",
    );
    assert_bad_input(
        &kzero(&[
            "table",
            "--n-max",
            "3",
            "--estimate",
            "--target-wall",
            "soon",
        ]),
        "bad --target-wall",
    );
}

#[test]
fn table_records_the_goal_and_refuses_to_resume_with_another() {
    let dir = tempfile::tempdir().unwrap();
    let out = p(dir.path(), "t.csv");
    let o = kzero(&["table", "--n-max", "3", "--significant", "6", "--out", &out]);
    assert_eq!(code(&o), 0, "{}", stderr(&o));
    let text = fs::read_to_string(&out).unwrap();
    assert!(text.contains("# setting.goal: significant\n"));
    assert!(!text.contains("setting.gauge"));
    // every value is printed with 8 significant digits
    for line in data_lines(&text) {
        let v = line.split(',').nth(2).unwrap();
        let sig = v
            .trim_start_matches('-')
            .replace('.', "")
            .trim_start_matches('0')
            .len();
        assert_eq!(sig, 8, "{line}");
    }
    let o = kzero(&[
        "table", "--n-max", "3", "--digits", "6", "--out", &out, "--resume",
    ]);
    assert_bad_input(&o, "resume with another goal");
    assert!(stderr(&o).contains("goal"));
    assert_bad_input(
        &kzero(&["table", "--n-max", "2", "--gauge", "length"]),
        "--gauge with green",
    );
}

/// scripts/cluster-check.sh runs the README's cluster recipe as printed: it
/// reads the code block after each of its marker lines. Each marker must
/// stay a whole README line followed by a shell block, so that a README edit
/// cannot leave the check without its recipe.
#[test]
fn the_cluster_check_finds_the_readme_recipe() {
    let root = Path::new(env!("CARGO_MANIFEST_DIR"));
    let readme = fs::read_to_string(root.join("README.md")).unwrap();
    let script = fs::read_to_string(root.join("scripts/cluster-check.sh")).unwrap();
    let markers: Vec<&str> = script
        .lines()
        .filter_map(|l| l.split_once("$(readme_block '"))
        .map(|(_, rest)| rest.split_once("')").unwrap().0)
        .collect();
    assert_eq!(markers.len(), 3, "{markers:?}");
    let lines: Vec<&str> = readme.lines().collect();
    for m in markers {
        let i = lines
            .iter()
            .position(|l| *l == m)
            .unwrap_or_else(|| panic!("README.md has no line {m:?}"));
        let next = lines[i + 1..].iter().find(|l| !l.is_empty());
        assert_eq!(next, Some(&"```sh"), "no shell block after {m:?}");
    }
    // The batch script continues a part file whenever it exists.
    assert!(readme.contains("if [ -e \"$OUT\" ]; then RESUME=\"--resume\"; fi"));
}

/// `kzero sums`: the JSON object with the fixed names, S(0) = 1
/// (Thomas-Reiche-Kuhn), 4 S(-2) = 9/2 bohr^3 for 1s (Bethe & Salpeter
/// (1957)), I(0) of 1s about 14.99 eV with an infinitely heavy nucleus
/// (Inokuti, Rev. Mod. Phys. 43, 297 (1971), from memory), every printed
/// value within its printed error of the exact S(k), the methods in
/// agreement, and bad powers refused with exit 2.
#[test]
fn sums_command_json_values_and_bad_powers() {
    let o = kzero(&[
        "sums", "1", "0", "--k", "-2,0,2", "--json", "--method", "both", "--mass", "inf",
    ]);
    assert_eq!(code(&o), 0, "{}", stderr(&o));
    let v: serde_json::Value = serde_json::from_str(&stdout(&o)).expect("json");
    for key in ["n", "l", "digits", "method", "rows"] {
        assert!(v.get(key).is_some(), "missing {key}");
    }
    assert_eq!(v["consistent"], serde_json::Value::Bool(true));
    let rows = v["rows"].as_array().expect("rows");
    assert_eq!(rows.len(), 3);
    for r in rows {
        for key in ["k", "S", "S_err", "L", "L_err", "ln_I", "ln_I_err"] {
            assert!(r.get(key).is_some(), "row without {key}");
        }
        assert!(r["S"].is_string() && r["L_err"].is_string());
        let (s, e) = (number(&r["S"]), number(&r["S_err"]));
        let want = match r["k"].as_i64() {
            Some(-2) => 1.125,
            Some(0) => 1.0,
            Some(2) => 16.0 / 3.0,
            k => panic!("k = {k:?}"),
        };
        assert!((s - want).abs() <= e + 1e-15, "S = {s} +- {e}");
        if r["k"].as_i64() == Some(0) {
            let ev = number(&r["I_eV"]);
            assert!((ev - 14.99).abs() < 0.01, "I(0) = {ev} eV");
        }
    }
    for bad in [["--k", "3"], ["--k", "-5"]] {
        let o = kzero(&["sums", "2", "1", bad[0], bad[1]]);
        assert_bad_input(&o, "power k");
    }
    let o = kzero(&["sums", "2", "1", "--k", "0", "--digits", "12"]);
    assert_eq!(code(&o), 0, "{}", stderr(&o));
    assert!(stdout(&o).contains("ln I(k)"), "{}", stdout(&o));
    // A dipole form with the green method alone would be ignored: refused.
    let o = kzero(&["sums", "2", "1", "--gauge", "velocity"]);
    assert_bad_input(&o, "--gauge");
    let o = kzero(&[
        "sums", "2", "1", "--k", "0", "--method", "spectral", "--json",
    ]);
    assert_eq!(code(&o), 0, "{}", stderr(&o));
    let v: serde_json::Value = serde_json::from_str(&stdout(&o)).expect("json");
    assert_eq!(v["gauge"], "length", "the default form of the sums");
}

/// `kzero excitation`: one line per state, I(0) of 1s about 14.98 eV with
/// the proton's reduced mass (14.99 eV infinite-mass value of Inokuti, Rev.
/// Mod. Phys. 43, 297 (1971), from memory, times m_r/m_e), and an SVG plot.
#[test]
fn excitation_lists_states_and_draws_the_plot() {
    let dir = tempfile::tempdir().expect("tempdir");
    let svg = p(dir.path(), "i0.svg");
    let o = kzero(&[
        "excitation",
        "--k",
        "0",
        "--l",
        "0,1",
        "--n-max",
        "3",
        "--plot",
        &svg,
    ]);
    assert_eq!(code(&o), 0, "{}", stderr(&o));
    let out = stdout(&o);
    let lines: Vec<&str> = out
        .lines()
        .filter(|l| l.contains(',') && !l.starts_with('n'))
        .collect();
    assert_eq!(lines.len(), 5, "{out}");
    let one_s: Vec<&str> = lines[0].split(',').collect();
    assert_eq!(&one_s[..2], &["1", "0"]);
    let ev: f64 = one_s[4].parse().expect("I_eV");
    assert!((ev - 14.99 / (1.0 + 1.0 / 1836.15)).abs() < 0.01, "{ev}");
    let text = std::fs::read_to_string(&svg).expect("svg");
    assert!(text.contains("<svg") && text.contains("l = 1"));
    let o = kzero(&["excitation", "--k", "5"]);
    assert_bad_input(&o, "power k");
}

/// Data lines of a dipole-sum table without the wall-time column (index
/// 12) and the row checksum.
fn sums_value_columns(text: &str) -> Vec<String> {
    data_lines(text)
        .iter()
        .map(|l| {
            let mut f: Vec<&str> = l.split(',').collect();
            f.pop();
            f.remove(12);
            f.join(",")
        })
        .collect()
}

/// `kzero table --sums`: one row per (n, l, k) with the quantity and the k
/// list recorded; the same rows for 1 and 2 threads and for merged shards;
/// S(0) = 1 (Thomas-Reiche-Kuhn, exact) and L(2) = 16 ln k0/(3 n^3)
/// against an ln k0 table of the same states; other quantities or k lists
/// refused by --resume and merge.
#[test]
fn sums_tables_are_deterministic_sharded_and_tied_to_ln_k0() {
    let dir = tempfile::tempdir().unwrap();
    let base = [
        "table", "--n-max", "4", "--digits", "12", "--sums", "all", "--quiet",
    ];
    let a = p(dir.path(), "a.csv");
    let b = p(dir.path(), "b.csv");
    let o = kzero(&[&base[..], &["--threads", "2", "--out", &a]].concat());
    assert_eq!(code(&o), 0, "{}", stderr(&o));
    let o = kzero(&[&base[..], &["--threads", "1", "--out", &b]].concat());
    assert_eq!(code(&o), 0, "{}", stderr(&o));
    let (ta, tb) = (
        fs::read_to_string(&a).unwrap(),
        fs::read_to_string(&b).unwrap(),
    );
    assert!(ta.contains("# setting.quantity: dipole_sums\n# setting.k: -4,-3,-2,-1,0,1,2\n"));
    assert!(ta.contains("\nn,l,k,S,S_err,L,L_err,ln_I,ln_I_err,method,digits,bits,seconds,check\n"));
    let rows = sums_value_columns(&ta);
    assert_eq!(rows.len(), 10 * 7, "ten states, seven powers");
    assert_eq!(rows, sums_value_columns(&tb), "1 vs 2 threads");

    // ln k0 of the same states, for L(2) = 16 ln k0 / (3 n^3).
    let lk = p(dir.path(), "lnk0.csv");
    let o = kzero(&[
        "table", "--n-max", "4", "--digits", "12", "--quiet", "--out", &lk,
    ]);
    assert_eq!(code(&o), 0, "{}", stderr(&o));
    let ln_k0: Vec<(f64, f64)> = data_lines(&fs::read_to_string(&lk).unwrap())
        .iter()
        .map(|l| {
            let f: Vec<&str> = l.split(',').collect();
            (f[2].parse().unwrap(), f[3].parse().unwrap())
        })
        .collect();
    let mut state = 0;
    for r in &rows {
        let f: Vec<&str> = r.split(',').collect();
        let (n, l, k): (f64, u32, i32) = (
            f[0].parse().unwrap(),
            f[1].parse().unwrap(),
            f[2].parse().unwrap(),
        );
        let num = |i: usize| -> f64 { f[i].parse().unwrap() };
        match k {
            // S(0) = 1: Thomas-Reiche-Kuhn sum rule (exact)
            0 => assert!((num(3) - 1.0).abs() <= num(4) + 1e-15, "S(0) {r}"),
            2 => {
                let (v, e) = ln_k0[state];
                // exact identity L(2) = 16 ln k0 / (3 n^3) (docs/physics.md, section 8)
                let want = 16.0 * v / (3.0 * n * n * n);
                let tol = num(6) + 16.0 * e / (3.0 * n * n * n) + 1e-15;
                assert!((num(5) - want).abs() <= tol, "L(2) {r} vs ln k0 {v}");
                // ln I(2) is empty exactly where S(2) = 0 (l >= 1)
                assert_eq!(f[7].is_empty(), l >= 1, "{r}");
                state += 1;
            }
            _ => assert!(!f[7].is_empty() && !f[8].is_empty(), "{r}"),
        }
        // every S and L error within the goal (1.1 x 10^-12, rounding up)
        assert!(num(4) <= 1.1e-12 && num(6) <= 1.1e-12, "{r}");
    }
    assert_eq!(state, 10);

    // Shards merged equal the single run.
    let mut parts = Vec::new();
    for k in 1..=2 {
        let s = p(dir.path(), &format!("s{k}.csv"));
        let o = kzero(&[&base[..], &["--shard", &format!("{k}/2"), "--out", &s]].concat());
        assert_eq!(code(&o), 0, "{}", stderr(&o));
        parts.push(s);
    }
    let merged = p(dir.path(), "merged.csv");
    let o = kzero(&["merge", &parts[1], &parts[0], "--out", &merged]);
    assert_eq!(code(&o), 0, "{}", stderr(&o));
    let tm = fs::read_to_string(&merged).unwrap();
    assert_eq!(sums_value_columns(&tm), rows, "merged shards");
    assert!(tm.contains("# setting.k: -4,-3,-2,-1,0,1,2\n"));

    // Other quantity or k list: refused by merge and --resume.
    let bad = p(dir.path(), "bad.csv");
    let o = kzero(&["merge", &parts[0], &lk, "--out", &bad]);
    assert_bad_input(&o, "merge of a sums part and an ln k0 table");
    assert!(stderr(&o).contains("quantity (dipole_sums vs ln_k0)"));
    let o = kzero(&[
        "table", "--n-max", "4", "--digits", "12", "--sums", "0,2", "--out", &a, "--resume",
    ]);
    assert_bad_input(&o, "resume with another k list");
    assert!(stderr(&o).contains("k (-4,-3,-2,-1,0,1,2 vs 0,2)"));
    let o = kzero(&[
        "table", "--n-max", "4", "--digits", "12", "--out", &a, "--resume",
    ]);
    assert_bad_input(&o, "resume of a sums table as ln k0");
    let o = kzero(&[
        "table", "--n-max", "4", "--digits", "12", "--sums", "0", "--out", &lk, "--resume",
    ]);
    assert_bad_input(&o, "resume of an ln k0 table as sums");
    assert_eq!(sums_value_columns(&fs::read_to_string(&a).unwrap()), rows);
    // Bad lists and options the sums do not take.
    for (args, what) in [
        (&["--sums", "3"][..], "k = 3 is outside"),
        (&["--sums", "0,x"][..], "'x' is not an integer"),
        (&["--sums", "0", "--significant", "10"][..], "--significant"),
        (&["--sums", "0", "--plot", "x.svg"][..], "--plot"),
    ] {
        let o = kzero(&[&["table", "--n-max", "2"][..], args].concat());
        assert_bad_input(&o, what);
        assert!(stderr(&o).contains(what), "{}", stderr(&o));
    }
    // --estimate names the sums and computes nothing.
    let o = kzero(&[&base[..], &["--estimate"]].concat());
    assert_eq!(code(&o), 0, "{}", stderr(&o));
    assert!(stdout(&o).contains("dipole sums k = -4,-3,-2,-1,0,1,2"));
}

/// --method both: the spectral values beside the Green's-function ones,
/// every S(k) and L(k) within the combined error estimates; JSON rows with
/// `ln_I` null where S(k) = 0.
#[test]
fn sums_table_with_both_methods_and_json() {
    let o = kzero(&[
        "table", "--n-max", "2", "--digits", "10", "--sums", "-1,2", "--method", "both", "--json",
        "--quiet",
    ]);
    assert_eq!(code(&o), 0, "{}", stderr(&o));
    let v: serde_json::Value = serde_json::from_str(&stdout(&o)).expect("json");
    assert_eq!(v["meta"]["settings"]["k"], serde_json::json!([-1, 2]));
    assert_eq!(v["meta"]["settings"]["gauge"], "length");
    let rows = v["rows"].as_array().unwrap();
    assert_eq!(rows.len(), 6);
    for r in rows {
        for (x, e, y, f) in [
            ("S", "S_err", "S_spectral", "S_err_spectral"),
            ("L", "L_err", "L_spectral", "L_err_spectral"),
        ] {
            let d = (number(&r[x]) - number(&r[y])).abs();
            assert!(d <= number(&r[e]) + number(&r[f]), "{r}");
        }
        let zero_s = r["l"] == 1 && r["k"] == 2;
        assert_eq!(r["ln_I"].is_null(), zero_s, "{r}");
    }
}

/// A sums table killed (kill -9) in the middle: the rows of the last state
/// cut short as well (a write torn inside a state), --resume recomputes
/// that state whole and the result equals an uninterrupted run.
#[test]
fn sums_table_resumes_a_state_cut_short() {
    let dir = tempfile::tempdir().unwrap();
    let full = p(dir.path(), "full.csv");
    // 19 states of similar cost: the run lasts long after its first rows.
    let args = [
        "table",
        "--n-min",
        "9",
        "--n-max",
        "10",
        "--digits",
        "20",
        "--sums",
        "all",
        "--threads",
        "2",
        "--quiet",
    ];
    let o = kzero(&[&args[..], &["--out", &full]].concat());
    assert_eq!(code(&o), 0, "{}", stderr(&o));
    let full_text = fs::read_to_string(&full).unwrap();
    let total = data_lines(&full_text).len();
    assert_eq!(total, 19 * 7);

    let part = p(dir.path(), "part.csv");
    let (text, finished) = interrupted_run(&args, &part, "-KILL", total);
    // The rows of a state are written together.
    assert_eq!(finished.len() % 7, 0, "{} rows", finished.len());
    // Keep the first two rows of the last finished state and a torn third.
    let last = finished.len() - 7;
    let cut_at = text.find(&finished[last + 2]).unwrap();
    let torn = format!("{}{}", &text[..cut_at], &finished[last + 2][..20]);
    fs::write(&part, &torn).unwrap();
    let o = kzero(&[&args[..], &["--out", &part, "--resume"]].concat());
    assert_eq!(code(&o), 0, "{}", stderr(&o));
    let resumed = fs::read_to_string(&part).unwrap();
    assert_eq!(sums_value_columns(&resumed), sums_value_columns(&full_text));
    // Whole states before the cut were kept byte for byte, time included.
    let rows = data_lines(&resumed);
    for f in &finished[..last] {
        assert!(rows.contains(f), "row {f} was recomputed or lost");
    }
}
