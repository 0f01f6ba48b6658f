//! The journal of a running table and resuming an interrupted run.
//!
//! CSV: the output file is the journal; each finished state is appended as
//! one whole line, in completion order, and the finished run rewrites it
//! sorted. JSON: the journal is `FILE.partial` (the CSV layout), the JSON
//! document is written once at the end. After an interruption,
//! [`load_for_resume`] and [`check_resumable`] accept only a file of the
//! same settings, shard and build, and [`Journal::reopen`] drops only a torn
//! last line. A journal left by a run killed before its first row (empty,
//! or a header cut before its column line, [`unstarted_journal`]) holds no
//! work yet: resuming starts the work on it.

use super::files::{check_not_busy, journal_path, lock_exclusive, looks_like_json};
use super::{
    read_table, Differences, Quantity, Row, SettingDifference, Table, TableError, TableFormat,
    TableSettings, BASE_COLUMNS, BOTH_COLUMNS, CHECK_COLUMN, MAGIC, SUMS_BOTH_COLUMNS,
    SUMS_COLUMNS,
};
use crate::shard::{Key, Shard};
use std::collections::BTreeSet;
use std::fs::{File, OpenOptions};
use std::io::{Seek, SeekFrom, Write};
use std::path::{Path, PathBuf};

/// The exclusive lock of a table run on its journal, taken before the
/// journal is read, cut, truncated or appended to, and held until the run
/// ends (the lock is the operating system's advisory lock: it ends with the
/// process, so a killed run never blocks a later `--resume`).
///
/// A second run on the same output, with or without `--resume` or
/// `--force`, finds the lock taken and is refused before it changes
/// anything.
#[derive(Debug)]
pub struct JournalLock {
    /// The journal, open and locked, when it existed already.
    file: Option<File>,
    path: PathBuf,
}

impl JournalLock {
    /// Takes the lock of the journal of `out` in `format` when the journal
    /// exists (when it does not, [`Journal::create`] and [`Journal::reopen`]
    /// take it as they create it). For a JSON output, also refuses an
    /// existing `out` that another run holds.
    ///
    /// # Errors
    /// [`TableError::Busy`] (bad input) when another run holds the file,
    /// [`TableError::Lock`] when the lock cannot be taken otherwise.
    pub fn acquire(out: &Path, format: TableFormat) -> Result<JournalLock, TableError> {
        let path = journal_path(out, format);
        if path != out {
            check_not_busy(out)?;
        }
        let file = match OpenOptions::new().read(true).write(true).open(&path) {
            Ok(f) => {
                lock_exclusive(&f, &path)?;
                Some(f)
            }
            Err(_) => None,
        };
        Ok(JournalLock { file, path })
    }

    /// The locked journal file, opened (and created when missing) for
    /// writing. Nothing in it is changed.
    fn into_file(self) -> Result<File, TableError> {
        if let Some(f) = self.file {
            return Ok(f);
        }
        let f = OpenOptions::new()
            .read(true)
            .write(true)
            .create(true)
            .truncate(false)
            .open(&self.path)
            .map_err(|e| TableError::Create {
                path: self.path.clone(),
                source: e,
            })?;
        lock_exclusive(&f, &self.path)?;
        Ok(f)
    }
}

/// An open journal: rows are appended and flushed one by one.
#[derive(Debug)]
pub struct Journal {
    file: File,
    path: PathBuf,
}

impl Journal {
    /// Creates (or, with `replace`, truncates) the journal of `out` in
    /// `format` and writes the header of `table`. Refuses existing files
    /// unless `replace` (a table run replaces them with `--force`, and
    /// when resuming an unstarted journal).
    ///
    /// # Errors
    /// [`TableError::Exists`] (bad input), [`TableError::Create`],
    /// [`TableError::Write`].
    pub fn create(
        out: &Path,
        format: TableFormat,
        table: &Table,
        replace: bool,
        lock: JournalLock,
    ) -> Result<Journal, TableError> {
        let jpath = journal_path(out, format);
        for p in [out, jpath.as_path()] {
            if p.exists() && !replace {
                return Err(TableError::Exists {
                    path: p.to_path_buf(),
                });
            }
        }
        // Locked first, emptied only then: a run refused for the lock
        // changes nothing.
        let f = lock.into_file()?;
        f.set_len(0).map_err(|e| TableError::Create {
            path: jpath.clone(),
            source: e,
        })?;
        let mut j = Journal {
            file: f,
            path: jpath,
        };
        j.append(&table.csv_header())?;
        Ok(j)
    }

    /// Opens the journal to continue `loaded`, read from `from`: the
    /// journal itself (a torn last line is cut off), or a finished JSON
    /// table (a new journal holding its rows is started).
    ///
    /// # Errors
    /// [`TableError::Write`] or [`TableError::Create`].
    pub fn reopen(
        out: &Path,
        format: TableFormat,
        from: &Path,
        loaded: &Table,
        lock: JournalLock,
    ) -> Result<Journal, TableError> {
        let jpath = journal_path(out, format);
        let io = |e: std::io::Error| TableError::Write {
            path: jpath.clone(),
            source: e,
        };
        let mut f = lock.into_file()?;
        if from == jpath {
            if let Some(at) = loaded.torn_at {
                // Drop only the torn last line left by an interrupted write.
                f.set_len(at).map_err(io)?;
            }
            f.seek(SeekFrom::End(0)).map_err(io)?;
            Ok(Journal {
                file: f,
                path: jpath,
            })
        } else {
            // Resuming a finished JSON table: start a journal holding its rows.
            // (A journal already there holds no row: see `load_for_resume`.)
            f.set_len(0).map_err(io)?;
            f.write_all(loaded.to_csv().as_bytes()).map_err(io)?;
            Ok(Journal {
                file: f,
                path: jpath,
            })
        }
    }

    /// The journal file.
    pub fn path(&self) -> &Path {
        &self.path
    }

    /// Appends `text` and flushes it.
    ///
    /// # Errors
    /// [`TableError::Write`].
    pub fn append(&mut self, text: &str) -> Result<(), TableError> {
        self.file
            .write_all(text.as_bytes())
            .and_then(|_| self.file.flush())
            .map_err(|e| TableError::Write {
                path: self.path.clone(),
                source: e,
            })
    }

    /// Appends one row.
    ///
    /// # Errors
    /// [`TableError::Write`].
    pub fn append_row(&mut self, row: &Row) -> Result<(), TableError> {
        self.append(&row.csv_line())
    }

    /// Appends a provenance line `# key: value` (after the column line, as
    /// `resumed_utc`).
    ///
    /// # Errors
    /// [`TableError::Write`].
    pub fn append_provenance(&mut self, key: &str, value: &str) -> Result<(), TableError> {
        self.append(&format!("# {key}: {value}\n"))
    }

    /// Closes the journal and removes it (for a JSON output once the
    /// document is written).
    pub fn remove(self) {
        let Journal { file, path } = self;
        drop(file);
        let _ = std::fs::remove_file(path);
    }
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
    let column_lines = [
        [&BASE_COLUMNS[..], &[CHECK_COLUMN]].concat().join(","),
        [&BASE_COLUMNS[..], &BOTH_COLUMNS[..], &[CHECK_COLUMN]]
            .concat()
            .join(","),
        [&SUMS_COLUMNS[..], &[CHECK_COLUMN]].concat().join(","),
        [&SUMS_COLUMNS[..], &SUMS_BOTH_COLUMNS[..], &[CHECK_COLUMN]]
            .concat()
            .join(","),
    ];
    (cut.starts_with('#') || column_lines.iter().any(|c| c.starts_with(cut))).then_some(pairs)
}

/// Whether `jpath` exists and holds no row yet.
///
/// # Errors
/// [`TableError::ResumeStartedOther`] (bad input) when the header it got to
/// write names other settings or another shard than the run.
fn unstarted(jpath: &Path, settings: &TableSettings, shard: Shard) -> Result<bool, TableError> {
    let Ok(bytes) = std::fs::read(jpath) else {
        return Ok(false);
    };
    let Some(pairs) = unstarted_journal(&bytes) else {
        return Ok(false);
    };
    let mut mine = settings.pairs();
    let mut diffs = Vec::new();
    // A dipole-sum header names its quantity before any other setting: a
    // header with settings but no quantity line is an ln k0 header.
    let has_settings = pairs.iter().any(|(k, _)| k.starts_with("setting."));
    let has_quantity = pairs.iter().any(|(k, _)| k == "setting.quantity");
    if settings.quantity == Quantity::LnK0 {
        mine.push(("quantity", Quantity::LN_K0.to_string()));
    }
    let mut pairs = pairs;
    if has_settings && !has_quantity {
        pairs.insert(0, ("setting.quantity".into(), Quantity::LN_K0.to_string()));
    }
    for (k, v) in &pairs {
        if let Some(sk) = k.strip_prefix("setting.") {
            if let Some((key, want)) = mine.iter().find(|(m, _)| *m == sk) {
                if v != want {
                    diffs.push(SettingDifference {
                        key,
                        first: v.clone(),
                        second: want.clone(),
                    });
                }
            }
        } else if k == "shard" && *v != shard.to_string() {
            diffs.push(SettingDifference {
                key: "shard",
                first: v.clone(),
                second: shard.to_string(),
            });
        }
    }
    if !diffs.is_empty() {
        return Err(TableError::ResumeStartedOther {
            path: jpath.to_path_buf(),
            differences: Differences(diffs),
        });
    }
    Ok(true)
}

/// Loads what an interrupted run of `out` in `format` (with `settings` and
/// `shard`) left: the table so far and the file it was read from, or `None`
/// when the journal holds no row yet ([`unstarted_journal`]): then the run
/// starts the work, as on an empty journal.
///
/// # Errors
/// Bad input: a JSON table resumed as CSV or the reverse, nothing to
/// resume, an unstarted journal of other settings, or an unreadable or
/// foreign file.
pub fn load_for_resume(
    out: &Path,
    format: TableFormat,
    settings: &TableSettings,
    shard: Shard,
) -> Result<Option<(Table, PathBuf)>, TableError> {
    let jpath = journal_path(out, format);
    let unstarted = unstarted(&jpath, settings, shard)?;
    match format {
        TableFormat::Csv => {
            if unstarted {
                return Ok(None);
            }
            if looks_like_json(out) {
                return Err(TableError::ResumeJsonAsCsv {
                    path: out.to_path_buf(),
                });
            }
            Ok(Some((read_table(out)?, out.to_path_buf())))
        }
        TableFormat::Json => {
            if jpath.exists() && !unstarted {
                if looks_like_json(&jpath) {
                    return Err(TableError::ResumeNotJournal { path: jpath });
                }
                Ok(Some((read_table(&jpath)?, jpath)))
            } else if out.exists() {
                if !looks_like_json(out) {
                    return Err(TableError::ResumeNotJson {
                        path: out.to_path_buf(),
                    });
                }
                Ok(Some((read_table(out)?, out.to_path_buf())))
            } else if unstarted {
                Ok(None)
            } else {
                Err(TableError::ResumeNothing {
                    journal: jpath,
                    out: out.to_path_buf(),
                })
            }
        }
    }
}

/// Checks that the table `t` read from `from` may be continued by a run of
/// `settings` and `shard` whose planned states are `planned`: same
/// settings, same shard, same build, no duplicate and no foreign state.
///
/// # Errors
/// The first difference, as bad input.
pub fn check_resumable(
    t: &Table,
    from: &Path,
    settings: &TableSettings,
    shard: Shard,
    planned: &[(Key, f64)],
) -> Result<(), TableError> {
    let differences = t.settings.differences(settings);
    if !differences.0.is_empty() {
        return Err(TableError::ResumeSettings {
            path: from.to_path_buf(),
            differences,
        });
    }
    if t.shard != shard {
        return Err(TableError::ResumeShard {
            path: from.to_path_buf(),
            file: t.shard,
            asked: shard,
        });
    }
    t.check_same_build(from)?;
    let (keys, dup) = t.keys();
    if let Some(state) = dup {
        return Err(TableError::ResumeDuplicate {
            path: from.to_path_buf(),
            state,
        });
    }
    let mine: BTreeSet<Key> = planned.iter().map(|(k, _)| *k).collect();
    if let Some(&state) = keys.iter().find(|k| !mine.contains(k)) {
        return Err(TableError::ResumeForeignState {
            path: from.to_path_buf(),
            state,
            shard,
        });
    }
    Ok(())
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn only_a_header_cut_before_its_column_line_is_an_unstarted_journal() {
        let s = crate::table::tests::table().to_csv();
        let columns_at = s.find("\nn,l,").unwrap() + 1;
        assert_eq!(unstarted_journal(b""), Some(Vec::new()));
        // Every cut inside the header, up to the whole column line without
        // its newline.
        let col_end = columns_at + s[columns_at..].find('\n').unwrap();
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
        assert_eq!(unstarted_journal(b"# kzero-table: 1\n"), None);
        assert_eq!(unstarted_journal(b"# kzero-table: 3\n"), None);
        assert_eq!(unstarted_journal(&[0xff, 0xfe]), None);
    }

    fn sums_table() -> Table {
        let mut t = crate::table::tests::table();
        t.rows.clear();
        t.settings = t.settings.with_sums(&[-1, 0]).unwrap();
        t
    }

    #[test]
    fn a_sums_header_cut_before_its_column_line_is_an_unstarted_journal() {
        let s = sums_table().to_csv();
        let col_end = s.rfind('\n').unwrap();
        for end in 0..col_end {
            assert!(
                unstarted_journal(&s.as_bytes()[..end]).is_some(),
                "cut at {end}: {:?}",
                &s[..end]
            );
        }
        assert_eq!(unstarted_journal(s.as_bytes()), None);
    }

    /// A cut header names its quantity: resuming it as the other quantity
    /// (or with another k list) is refused; the same settings start the
    /// work on it.
    #[test]
    fn an_unstarted_journal_of_another_quantity_is_refused() {
        let dir = tempfile::tempdir().unwrap();
        let path = dir.path().join("t.csv");
        let ln_k0 = crate::table::tests::table();
        let sums = sums_table();
        let cut = |t: &Table| {
            let s = t.to_csv();
            let end = s.find("# setting.l:").unwrap();
            s[..end].to_string()
        };
        let shard = Shard::WHOLE;
        let other_k = sums.settings.clone().with_sums(&[0]).unwrap();
        for (header, settings, ok) in [
            (cut(&ln_k0), &ln_k0.settings, true),
            (cut(&ln_k0), &sums.settings, false),
            (cut(&sums), &sums.settings, true),
            (cut(&sums), &ln_k0.settings, false),
            (cut(&sums), &other_k, false),
        ] {
            std::fs::write(&path, &header).unwrap();
            let r = unstarted(&path, settings, shard);
            assert_eq!(r.is_ok(), ok, "{header}\n{r:?}");
            if let Err(e) = r {
                assert!(e.to_string().contains("started with other settings"), "{e}");
            }
        }
    }
}
