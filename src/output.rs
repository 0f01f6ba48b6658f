//! Writing to standard output without panicking on a closed pipe.

use crate::app_error::AppError;
use std::io::Write;
use std::sync::atomic::{AtomicBool, Ordering};

/// Set once anything has been written to standard output.
static WROTE: AtomicBool = AtomicBool::new(false);

/// Whether anything has been written to standard output by [`print()`].
pub fn wrote_anything() -> bool {
    WROTE.load(Ordering::Relaxed)
}

/// Writes `text` to standard output. A closed pipe (`kzero ... | head`) is
/// not an error; other failures are.
pub fn print(text: &str) -> Result<(), AppError> {
    if !text.is_empty() {
        WROTE.store(true, Ordering::Relaxed);
    }
    let mut out = std::io::stdout().lock();
    match out.write_all(text.as_bytes()).and_then(|_| out.flush()) {
        Ok(()) => Ok(()),
        Err(e) if e.kind() == std::io::ErrorKind::BrokenPipe => Ok(()),
        Err(e) => Err(AppError::Other(format!(
            "cannot write to standard output: {e}"
        ))),
    }
}

/// Pads or cuts `s` to a width (left-aligned), for plain-text tables.
pub fn pad(s: &str, w: usize) -> String {
    format!("{s:<w$}")
}

/// A plain-text table with a header row, columns separated by two spaces.
pub fn text_table(header: &[&str], rows: &[Vec<String>]) -> String {
    let mut widths: Vec<usize> = header.iter().map(|h| h.len()).collect();
    for r in rows {
        for (i, c) in r.iter().enumerate() {
            if i < widths.len() {
                widths[i] = widths[i].max(c.len());
            }
        }
    }
    let mut s = String::new();
    let line = |cells: Vec<String>| -> String {
        let parts: Vec<String> = cells
            .iter()
            .enumerate()
            .map(|(i, c)| pad(c, widths[i.min(widths.len() - 1)]))
            .collect();
        let mut l = parts.join("  ");
        while l.ends_with(' ') {
            l.pop();
        }
        l.push('\n');
        l
    };
    s.push_str(&line(header.iter().map(|h| h.to_string()).collect()));
    for r in rows {
        s.push_str(&line(r.clone()));
    }
    s
}

/// Whether the command line asks for JSON on standard output (`--json`, or
/// `--format json` of the table commands): errors are then also reported as
/// one JSON object there.
pub fn json_requested(args: &[String]) -> bool {
    args.iter().enumerate().any(|(i, a)| {
        a == "--json"
            || a == "--format=json"
            || (a == "--format" && args.get(i + 1).is_some_and(|v| v == "json"))
    })
}

/// The error as one JSON object, `{"error": "...", "exit": code}`, with a newline.
pub fn error_json(message: &str, exit: i32) -> String {
    let mut s = serde_json::to_string(&serde_json::json!({ "error": message, "exit": exit }))
        .unwrap_or_default();
    s.push('\n');
    s
}
