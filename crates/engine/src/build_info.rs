//! Build information and provenance: versions, git revision, command line,
//! UTC time. The one provenance schema of every file kzero writes (tables,
//! shift tables, sweeps) is [`Provenance`].

use std::time::{SystemTime, UNIX_EPOCH};

/// kzero version (the workspace version, from Cargo).
pub const VERSION: &str = env!("CARGO_PKG_VERSION");
/// Git revision at build time (`unknown` outside a git checkout).
pub const GIT_REVISION: &str = env!("KZERO_GIT_REV");
/// Version line, e.g. `0.1.0 (git 0123456789ab)` (printed by `kzero --version`).
pub const LONG_VERSION: &str = concat!(
    env!("CARGO_PKG_VERSION"),
    " (git ",
    env!("KZERO_GIT_REV"),
    ")"
);

/// MPFR version the library is linked with, e.g. `4.2.1`.
pub fn mpfr_version() -> String {
    use gmp_mpfr_sys::mpfr;
    format!(
        "{}.{}.{}",
        mpfr::VERSION_MAJOR,
        mpfr::VERSION_MINOR,
        mpfr::VERSION_PATCHLEVEL
    )
}

/// GMP version the library is linked with, e.g. `6.3.0`.
pub fn gmp_version() -> String {
    use gmp_mpfr_sys::gmp;
    format!(
        "{}.{}.{}",
        gmp::VERSION,
        gmp::VERSION_MINOR,
        gmp::VERSION_PATCHLEVEL
    )
}

/// The full command line of this process, each argument quoted for a POSIX
/// shell when needed.
pub fn command_line() -> String {
    std::env::args_os()
        .map(|a| shell_quote(&a.to_string_lossy()))
        .collect::<Vec<_>>()
        .join(" ")
}

/// `s` quoted for a POSIX shell when it holds anything but plain characters.
pub fn shell_quote(s: &str) -> String {
    let safe = !s.is_empty()
        && s.chars()
            .all(|c| c.is_ascii_alphanumeric() || "-_./=:,+%@".contains(c));
    if safe {
        s.to_string()
    } else {
        format!("'{}'", s.replace('\'', "'\\''"))
    }
}

/// Current UTC time as ISO 8601, e.g. `2026-12-01T20:45:36Z`.
pub fn utc_now() -> String {
    let secs = SystemTime::now()
        .duration_since(UNIX_EPOCH)
        .map(|d| d.as_secs())
        .unwrap_or(0);
    utc_string(secs)
}

/// Formats seconds since the Unix epoch as ISO 8601 UTC.
pub fn utc_string(secs: u64) -> String {
    let days = (secs / 86_400) as i64;
    let rem = secs % 86_400;
    let (y, m, d) = civil_from_days(days);
    format!(
        "{y:04}-{m:02}-{d:02}T{:02}:{:02}:{:02}Z",
        rem / 3600,
        (rem / 60) % 60,
        rem % 60
    )
}

/// Days since 1970-01-01 to (year, month, day), proleptic Gregorian calendar
/// (the standard era-based conversion; common practice).
fn civil_from_days(z: i64) -> (i64, u32, u32) {
    let z = z + 719_468;
    let era = z.div_euclid(146_097);
    let doe = z.rem_euclid(146_097);
    let yoe = (doe - doe / 1460 + doe / 36_524 - doe / 146_096) / 365;
    let y = yoe + era * 400;
    let doy = doe - (365 * yoe + yoe / 4 - yoe / 100);
    let mp = (5 * doy + 2) / 153;
    let d = (doy - (153 * mp + 2) / 5 + 1) as u32;
    let m = if mp < 10 { mp + 3 } else { mp - 9 } as u32;
    (if m <= 2 { y + 1 } else { y }, m, d)
}

/// Where a result file came from: the one provenance schema of every file
/// kzero writes (tables, shift tables, sweeps). Written as `# key: value`
/// lines in CSV and as string fields of `meta` in JSON, in the order of
/// [`Provenance::KEYS`].
#[derive(Debug, Clone, PartialEq, Eq)]
pub struct Provenance {
    /// kzero version ([`VERSION`]).
    pub version: String,
    /// Git revision of the build ([`GIT_REVISION`]).
    pub git_revision: String,
    /// MPFR version.
    pub mpfr: String,
    /// GMP version.
    pub gmp: String,
    /// The command (or call) that produced the file.
    pub command: String,
    /// UTC start time, ISO 8601.
    pub started_utc: String,
}

impl Provenance {
    /// The keys, in file order.
    pub const KEYS: [&'static str; 6] = [
        "version",
        "git_revision",
        "mpfr",
        "gmp",
        "command",
        "started_utc",
    ];

    /// Provenance of this build, started now, with `command` (for the binary
    /// [`command_line`]; a library front end names its own call).
    pub fn now(command: impl Into<String>) -> Provenance {
        Provenance {
            version: VERSION.into(),
            git_revision: GIT_REVISION.into(),
            mpfr: mpfr_version(),
            gmp: gmp_version(),
            command: command.into(),
            started_utc: utc_now(),
        }
    }

    /// The (key, value) pairs in the order of [`Provenance::KEYS`].
    pub fn pairs(&self) -> Vec<(String, String)> {
        let v = [
            &self.version,
            &self.git_revision,
            &self.mpfr,
            &self.gmp,
            &self.command,
            &self.started_utc,
        ];
        Self::KEYS
            .iter()
            .zip(v)
            .map(|(k, v)| (k.to_string(), v.clone()))
            .collect()
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn utc_formatting_matches_known_dates() {
        // 2000-03-01 00:00:00 UTC = 951868800 (POSIX time; common practice).
        assert_eq!(utc_string(951_868_800), "2000-03-01T00:00:00Z");
        assert_eq!(utc_string(0), "1970-01-01T00:00:00Z");
        // 2024-02-29 12:34:56 UTC = 1709210096.
        assert_eq!(utc_string(1_709_210_096), "2024-02-29T12:34:56Z");
    }

    #[test]
    fn quoting_leaves_plain_words_alone() {
        assert_eq!(shell_quote("--n-max"), "--n-max");
        assert_eq!(shell_quote("a b"), "'a b'");
        assert_eq!(shell_quote("it's"), "'it'\\''s'");
    }

    #[test]
    fn provenance_pairs_follow_the_keys() {
        let p = Provenance::now("test");
        let keys: Vec<String> = p.pairs().into_iter().map(|(k, _)| k).collect();
        assert_eq!(keys, Provenance::KEYS);
        assert_eq!(p.version, VERSION);
    }
}
