//! File helpers of the table format: output checks and atomic writes.

use super::{TableError, TableFormat};
use std::fs;
use std::io::Write;
use std::path::{Path, PathBuf};

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
