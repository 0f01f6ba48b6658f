//! Files that survive careless use, run as a user would: every output is
//! checked before any work (same file named twice, an output that is an
//! input, an existing file without --force, a name whose extension does not
//! fit what is written), and a table run holds an exclusive lock on its
//! journal, so a second run on the same file is refused at once and changes
//! nothing, while a lock left by a killed run never blocks --resume.

use std::fs;
use std::path::Path;
use std::process::{Child, Command, Output, Stdio};
use std::time::{Duration, Instant};

const BIN: &str = env!("CARGO_BIN_EXE_kzero");

fn kzero(dir: &Path, args: &[&str]) -> Output {
    Command::new(BIN)
        .current_dir(dir)
        .args(args)
        .stdin(Stdio::null())
        .output()
        .expect("run kzero")
}

fn spawn(dir: &Path, args: &[&str]) -> Child {
    Command::new(BIN)
        .current_dir(dir)
        .args(args)
        .stdin(Stdio::null())
        .stdout(Stdio::null())
        .stderr(Stdio::null())
        .spawn()
        .expect("start kzero")
}

/// Asserts exit 2 with one `kzero:` line on stderr containing `want`.
fn refused(o: &Output, want: &str, what: &str) {
    let e = String::from_utf8_lossy(&o.stderr);
    assert_eq!(o.status.code(), Some(2), "{what}: {e}");
    assert_eq!(e.trim_end().lines().count(), 1, "{what}: {e:?}");
    assert!(e.starts_with("kzero: ") && e.contains(want), "{what}: {e}");
}

fn ok(o: &Output, what: &str) {
    assert_eq!(
        o.status.code(),
        Some(0),
        "{what}: {}",
        String::from_utf8_lossy(&o.stderr)
    );
}

/// The names in a folder, sorted.
fn listing(dir: &Path) -> Vec<String> {
    let mut v: Vec<String> = fs::read_dir(dir)
        .unwrap()
        .flatten()
        .map(|e| e.file_name().to_string_lossy().to_string())
        .collect();
    v.sort();
    v
}

const SMALL: [&str; 5] = ["table", "--n-max", "2", "--digits", "5"];

#[test]
fn outputs_are_checked_before_any_work() {
    let dir = tempfile::tempdir().unwrap();
    let d = dir.path();
    // The same file as table and plot, in either format; nothing is written.
    let o = kzero(
        d,
        &[&SMALL[..], &["--out", "same.csv", "--plot", "same.csv"]].concat(),
    );
    refused(&o, ".svg", "--plot with a table name");
    let o = kzero(
        d,
        &[&SMALL[..], &["--out", "same.svg", "--plot", "same.svg"]].concat(),
    );
    refused(&o, ".csv", "--out with a plot name");
    let o = kzero(
        d,
        &[
            &SMALL[..],
            &["--json", "--out", "t.json", "--plot", "./t.json"],
        ]
        .concat(),
    );
    refused(&o, ".svg", "--plot with the JSON table's name");
    // Names whose extension does not fit what is written.
    for (args, want) in [
        (vec!["--out", "t.txt"], ".csv"),
        (vec!["--json", "--out", "t.csv"], ".json"),
        (vec!["--out", "t"], ".csv"),
        (vec!["--plot", "p.png"], ".svg"),
    ] {
        let o = kzero(d, &[&SMALL[..], &args[..]].concat());
        refused(&o, want, &format!("{args:?}"));
    }
    assert!(listing(d).is_empty(), "refusals left {:?}", listing(d));
    // Case of the extension does not matter.
    let o = kzero(
        d,
        &[&SMALL[..], &["--out", "T.CSV", "--plot", "P.Svg"]].concat(),
    );
    ok(&o, "upper-case extensions");
    let table = fs::read(d.join("T.CSV")).unwrap();
    // An existing plot is not replaced without --force; --force replaces
    // both files.
    let o = kzero(
        d,
        &[&SMALL[..], &["--out", "u.csv", "--plot", "P.Svg"]].concat(),
    );
    refused(&o, "--force", "existing plot");
    assert!(!d.join("u.csv").exists());
    let o = kzero(
        d,
        &[
            &SMALL[..],
            &["--out", "T.CSV", "--plot", "P.Svg", "--force"],
        ]
        .concat(),
    );
    ok(&o, "--force");
    assert_ne!(fs::read(d.join("T.CSV")).unwrap(), table);
    assert!(String::from_utf8_lossy(&fs::read(d.join("P.Svg")).unwrap()).contains("<svg"));
    // Two names of one file: a symbolic link to the table as the plot.
    std::os::unix::fs::symlink("T.CSV", d.join("link.svg")).unwrap();
    let o = kzero(
        d,
        &[
            &SMALL[..],
            &["--out", "T.CSV", "--plot", "link.svg", "--force"],
        ]
        .concat(),
    );
    refused(&o, "name the same file", "plot linked to the table");

    // sweep: a plot over an existing table is refused; --force replaces an
    // existing plot.
    let o = kzero(
        d,
        &["sweep", "2", "0", "--digits", "5,6", "--plot", "T.CSV"],
    );
    refused(&o, ".svg", "sweep plot named .csv");
    let o = kzero(
        d,
        &["sweep", "2", "0", "--digits", "5,6", "--plot", "P.Svg"],
    );
    refused(&o, "--force", "sweep over an existing plot");
    let o = kzero(
        d,
        &[
            "sweep", "2", "0", "--digits", "5,6", "--plot", "P.Svg", "--force",
        ],
    );
    ok(&o, "sweep --force");
    // excitation: the same rules for its plot.
    let o = kzero(d, &["excitation", "--n-max", "2", "--plot", "T.CSV"]);
    refused(&o, ".svg", "excitation plot named .csv");
    let o = kzero(d, &["excitation", "--n-max", "2", "--plot", "P.Svg"]);
    refused(&o, "--force", "excitation over an existing plot");
    let o = kzero(
        d,
        &["excitation", "--n-max", "2", "--plot", "P.Svg", "--force"],
    );
    ok(&o, "excitation --force");
}

#[test]
fn merge_never_writes_over_its_inputs() {
    let dir = tempfile::tempdir().unwrap();
    let d = dir.path();
    for k in 1..=2 {
        let out = format!("part-{k}.csv");
        let shard = format!("{k}/2");
        let o = kzero(
            d,
            &[&SMALL[..], &["--shard", &shard, "--out", &out]].concat(),
        );
        ok(&o, "shard");
    }
    let before: Vec<Vec<u8>> = (1..=2)
        .map(|k| fs::read(d.join(format!("part-{k}.csv"))).unwrap())
        .collect();
    fs::hard_link(d.join("part-2.csv"), d.join("hard.csv")).unwrap();
    std::os::unix::fs::symlink("part-1.csv", d.join("soft.csv")).unwrap();
    for (out, what) in [
        ("part-1.csv", "an input"),
        ("./part-2.csv", "an input by another path"),
        ("hard.csv", "a hard link to an input"),
        ("soft.csv", "a symbolic link to an input"),
    ] {
        let o = kzero(
            d,
            &["merge", "part-1.csv", "part-2.csv", "--out", out, "--force"],
        );
        refused(&o, "is also an input", what);
    }
    let o = kzero(
        d,
        &["merge", "part-1.csv", "part-2.csv", "--out", "all.json"],
    );
    refused(&o, ".csv", "merge to a .json name without --json");
    for k in 1..=2 {
        assert_eq!(
            fs::read(d.join(format!("part-{k}.csv"))).unwrap(),
            before[k - 1]
        );
    }
    let o = kzero(
        d,
        &["merge", "part-1.csv", "part-2.csv", "--out", "all.csv"],
    );
    ok(&o, "merge");
}

/// Waits until `path` holds at least `rows` rows (lines after the column
/// line) while `child` runs; false when the child ended first.
fn wait_for_rows(path: &Path, rows: usize, child: &mut Child) -> bool {
    let start = Instant::now();
    while start.elapsed() < Duration::from_secs(120) {
        if let Ok(t) = fs::read_to_string(path) {
            if let Some(i) = t.find("\nn,l,") {
                let n = t[i + 1..]
                    .lines()
                    .skip(1)
                    .filter(|l| !l.starts_with('#'))
                    .count();
                if n >= rows {
                    return true;
                }
            }
        }
        if let Ok(Some(_)) = child.try_wait() {
            return false;
        }
        std::thread::sleep(Duration::from_millis(20));
    }
    false
}

/// Value columns (n to bits) of the rows of a CSV table, sorted.
fn values(text: &str) -> Vec<String> {
    let mut v: Vec<String> = text
        .lines()
        .filter(|l| !l.starts_with('#'))
        .skip(1)
        .map(|l| l.split(',').take(7).collect::<Vec<_>>().join(","))
        .collect();
    v.sort();
    v
}

#[test]
fn a_second_run_on_a_busy_file_is_refused_and_a_killed_run_is_resumed() {
    let dir = tempfile::tempdir().unwrap();
    let d = dir.path();
    // 19 states of similar cost: the run goes on for a while after its
    // first rows.
    let args = [
        "table",
        "--n-min",
        "9",
        "--n-max",
        "10",
        "--digits",
        "20",
        "--threads",
        "1",
        "--quiet",
    ];
    let o = kzero(d, &[&args[..], &["--out", "ref.csv"]].concat());
    ok(&o, "reference");
    let reference = values(&fs::read_to_string(d.join("ref.csv")).unwrap());
    assert_eq!(reference.len(), 19);

    for (format, out, journal) in [
        ("csv", "t.csv", "t.csv"),
        ("json", "t.json", "t.json.partial"),
    ] {
        let mut first = spawn(
            d,
            &[&args[..], &["--format", format, "--out", out]].concat(),
        );
        assert!(
            wait_for_rows(&d.join(journal), 1, &mut first),
            "{format}: no row appeared"
        );
        for mode in [&[][..], &["--resume"][..], &["--force"][..]] {
            let o = kzero(
                d,
                &[&args[..], &["--format", format, "--out", out], mode].concat(),
            );
            refused(
                &o,
                "in use by another running kzero",
                &format!("{format} {mode:?}"),
            );
            assert!(
                matches!(first.try_wait(), Ok(None)),
                "{format} {mode:?}: the first run ended before the second was refused"
            );
        }
        if format == "csv" {
            // merge refuses a part that is still being written, and an
            // --out that a run holds.
            let o = kzero(d, &["merge", out]);
            refused(&o, "in use", "merge of a busy input");
            let o = kzero(d, &["merge", "ref.csv", "--out", out, "--force"]);
            refused(&o, "in use", "merge over a busy output");
        }
        // A killed holder leaves no lock behind: --resume finishes the table.
        first.kill().unwrap();
        first.wait().unwrap();
        let o = kzero(
            d,
            &[&args[..], &["--format", format, "--out", out, "--resume"]].concat(),
        );
        ok(&o, &format!("{format}: resume after the kill"));
        if format == "csv" {
            assert_eq!(values(&fs::read_to_string(d.join(out)).unwrap()), reference);
        } else {
            let doc: serde_json::Value =
                serde_json::from_str(&fs::read_to_string(d.join(out)).unwrap()).unwrap();
            assert_eq!(doc["rows"].as_array().unwrap().len(), 19);
            assert!(!d.join(journal).exists());
        }
    }
}
