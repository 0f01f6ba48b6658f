//! Writing to standard output without panicking on a closed pipe.

use crate::app_error::AppError;
use std::io::Write;

/// Writes `text` to standard output. A closed pipe (`kzero ... | head`) is
/// not an error; other failures are.
pub fn print(text: &str) -> Result<(), AppError> {
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
