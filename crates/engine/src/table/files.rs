//! File helpers of the table format: output checks, locks and atomic
//! writes.
//!
//! Every command checks all the files it will write with [`check_outputs`]
//! before any computation: the name fits what is written there, the folder
//! exists and takes new files, an existing file is replaced only when the
//! command allows it, no two outputs are the same file and no output is an
//! input. A running table holds an exclusive advisory lock on its journal
//! ([`super::journal::JournalLock`]); [`check_not_busy`] refuses a file such
//! a run holds. The locks are the operating system's (`flock` on Unix,
//! through the `fs4` crate):
//! they end with the process that holds them, so a killed run never leaves
//! a stale lock behind.

use super::{TableError, TableFormat};
use std::fs;
use std::io::Write;
use std::path::{Path, PathBuf};

/// What a command writes to an output file; it fixes the file name's
/// extension.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
#[non_exhaustive]
pub enum OutputKind {
    /// A table in this format (`.csv` or `.json`).
    Table(TableFormat),
    /// An SVG plot (`.svg`).
    Plot,
    /// The CSV journal of a JSON table (`FILE.json.partial`, named by
    /// [`journal_path`]; no extension rule of its own).
    Journal,
}

impl OutputKind {
    /// The extension (without the dot) and a description, or `None` for a
    /// journal.
    fn extension(self) -> Option<(&'static str, &'static str)> {
        match self {
            OutputKind::Table(TableFormat::Csv) => Some(("csv", "a CSV table")),
            OutputKind::Table(TableFormat::Json) => Some(("json", "a JSON table")),
            OutputKind::Plot => Some(("svg", "an SVG plot")),
            OutputKind::Journal => None,
        }
    }
}

/// One file a command is about to write.
#[derive(Debug, Clone, Copy)]
pub struct PlannedOutput<'a> {
    /// The option that names it (`--out`, `--plot`), for messages.
    pub option: &'static str,
    /// The path as given.
    pub path: &'a Path,
    /// What is written there.
    pub kind: OutputKind,
    /// `None` when an existing file may be replaced (or continued);
    /// otherwise the hint of the refusal, e.g. `use --force to replace it`.
    pub refuse_existing: Option<&'static str>,
}

impl<'a> PlannedOutput<'a> {
    /// The SVG plot named by `--plot`; an existing file is replaced only
    /// when `replace` (`--force`, or a table run continued by `--resume`).
    pub fn plot(path: &'a Path, replace: bool) -> Self {
        PlannedOutput {
            option: "--plot",
            path,
            kind: OutputKind::Plot,
            refuse_existing: (!replace).then_some("use --force to replace it"),
        }
    }
}

/// [`check_outputs`] for a command whose only output file is its `--plot`
/// (see [`PlannedOutput::plot`]).
///
/// # Errors
/// As [`check_outputs`].
pub fn check_plot(path: &Path, replace: bool) -> Result<(), TableError> {
    check_outputs(&[PlannedOutput::plot(path, replace)], &[])
}

/// Checks every output of one command before any work (nothing is touched):
/// each name ends in the extension of what is written there (compared
/// without regard to case), its folder exists and takes new files, it is
/// not a folder, an existing file is refused unless allowed, no two outputs
/// are the same file (same path after resolving `.`, `..` and symbolic
/// links, or the same file on disk), and no output is one of `inputs`.
///
/// # Errors
/// The first problem found, as bad input: [`TableError::WrongExtension`],
/// [`TableError::NoFolder`], [`TableError::IsFolder`],
/// [`TableError::FolderNotWritable`], [`TableError::OutputExists`],
/// [`TableError::SameOutput`], [`TableError::OutputIsInput`].
pub fn check_outputs(outputs: &[PlannedOutput<'_>], inputs: &[&Path]) -> Result<(), TableError> {
    for o in outputs {
        if let Some((want, what)) = o.kind.extension() {
            let ok = o
                .path
                .extension()
                .is_some_and(|e| e.to_string_lossy().eq_ignore_ascii_case(want));
            if !ok {
                return Err(TableError::WrongExtension {
                    option: o.option,
                    path: o.path.to_path_buf(),
                    what,
                    want,
                });
            }
        }
        check_output_folder(o.path, o.option)?;
    }
    for (i, a) in outputs.iter().enumerate() {
        for b in &outputs[i + 1..] {
            if same_file(a.path, b.path) {
                return Err(TableError::SameOutput {
                    first: a.option,
                    second: b.option,
                    path: b.path.to_path_buf(),
                });
            }
        }
        for input in inputs {
            if same_file(a.path, input) {
                return Err(TableError::OutputIsInput {
                    option: a.option,
                    path: a.path.to_path_buf(),
                });
            }
        }
    }
    for o in outputs {
        if let Some(hint) = o.refuse_existing {
            if o.path.exists() {
                return Err(TableError::OutputExists {
                    option: o.option,
                    path: o.path.to_path_buf(),
                    hint,
                });
            }
        }
    }
    Ok(())
}

/// `path` with `.`, `..` and symbolic links resolved: the path itself when
/// it exists, else its resolved folder joined with its name.
fn resolved(path: &Path) -> PathBuf {
    if let Ok(p) = path.canonicalize() {
        return p;
    }
    let folder = match path.parent() {
        Some(p) if !p.as_os_str().is_empty() => p.to_path_buf(),
        _ => PathBuf::from("."),
    };
    match (folder.canonicalize(), path.file_name()) {
        (Ok(f), Some(name)) => f.join(name),
        _ => path.to_path_buf(),
    }
}

/// Whether two paths name the same file: the same resolved path, or (both
/// existing) the same file on disk, as two hard links are.
pub fn same_file(a: &Path, b: &Path) -> bool {
    if resolved(a) == resolved(b) {
        return true;
    }
    #[cfg(unix)]
    {
        use std::os::unix::fs::MetadataExt;
        if let (Ok(x), Ok(y)) = (fs::metadata(a), fs::metadata(b)) {
            return x.dev() == y.dev() && x.ino() == y.ino();
        }
    }
    false
}

/// Refuses a file that a running kzero holds (a table's output or journal):
/// takes and at once releases a shared lock on it. A missing file is not
/// busy.
///
/// # Errors
/// [`TableError::Busy`] (bad input) or [`TableError::Lock`].
pub fn check_not_busy(path: &Path) -> Result<(), TableError> {
    let Ok(f) = fs::File::open(path) else {
        return Ok(());
    };
    match fs4::FileExt::try_lock_shared(&f) {
        Ok(()) => Ok(()),
        Err(fs4::TryLockError::WouldBlock) => Err(TableError::Busy {
            path: path.to_path_buf(),
        }),
        Err(fs4::TryLockError::Error(e)) => Err(TableError::Lock {
            path: path.to_path_buf(),
            source: e,
        }),
    }
}

/// Takes the exclusive lock of an open file, or says who holds it.
///
/// # Errors
/// [`TableError::Busy`] (bad input) or [`TableError::Lock`].
pub(crate) fn lock_exclusive(f: &fs::File, path: &Path) -> Result<(), TableError> {
    match fs4::FileExt::try_lock(f) {
        Ok(()) => Ok(()),
        Err(fs4::TryLockError::WouldBlock) => Err(TableError::Busy {
            path: path.to_path_buf(),
        }),
        Err(fs4::TryLockError::Error(e)) => Err(TableError::Lock {
            path: path.to_path_buf(),
            source: e,
        }),
    }
}

/// Checks that an output path can be created: its folder exists, files can
/// be created in it, and the path is not a folder itself. `option` names the output in the error (`--out`).
///
/// # Errors
/// [`TableError::NoFolder`], [`TableError::IsFolder`] or
/// [`TableError::FolderNotWritable`] (bad input).
pub fn check_output_folder(path: &Path, option: &'static str) -> Result<(), TableError> {
    let parent = match path.parent() {
        Some(p) if !p.as_os_str().is_empty() => p.to_path_buf(),
        _ => PathBuf::from("."),
    };
    if !parent.is_dir() {
        return Err(TableError::NoFolder {
            option,
            path: path.to_path_buf(),
            folder: parent,
        });
    }
    if path.is_dir() {
        return Err(TableError::IsFolder {
            option,
            path: path.to_path_buf(),
        });
    }
    // A folder we cannot create files in is bad input too: try.
    let probe = parent.join(format!(".kzero-write-check-{}", std::process::id()));
    match fs::OpenOptions::new()
        .write(true)
        .create_new(true)
        .open(&probe)
    {
        Ok(_) => {
            let _ = fs::remove_file(&probe);
            Ok(())
        }
        Err(e) => Err(TableError::FolderNotWritable {
            option,
            path: path.to_path_buf(),
            folder: parent,
            source: e,
        }),
    }
}

/// Writes `contents` to `path` atomically: a temporary file in the same
/// folder, flushed to disk, then renamed over `path`.
///
/// # Errors
/// [`TableError::Write`] (a failure, not bad input).
pub fn write_atomic(path: &Path, contents: &[u8]) -> Result<(), TableError> {
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
        return Err(TableError::Write {
            path: path.to_path_buf(),
            source: e,
        });
    }
    Ok(())
}

/// The journal file of an output: the CSV itself, or `FILE.partial` for
/// JSON (a JSON document is written once, at the end).
pub fn journal_path(out: &Path, format: TableFormat) -> PathBuf {
    match format {
        TableFormat::Csv => out.to_path_buf(),
        TableFormat::Json => {
            let mut s = out.as_os_str().to_os_string();
            s.push(".partial");
            PathBuf::from(s)
        }
    }
}

/// Whether a file holds a JSON document (first non-blank byte `{`).
pub fn looks_like_json(path: &Path) -> bool {
    fs::read(path)
        .ok()
        .and_then(|b| b.into_iter().find(|c| !c.is_ascii_whitespace()))
        == Some(b'{')
}
