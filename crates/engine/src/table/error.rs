//! Typed errors of the table format, files, resume and merge.

use crate::shard::{Key, Shard, ShardError};
use std::path::PathBuf;
use thiserror::Error;

/// Where in a file a problem was found.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub enum Place {
    /// 1-based line of a CSV file.
    Line(usize),
    /// 1-based row of a JSON table.
    Row(usize),
}

impl std::fmt::Display for Place {
    fn fmt(&self, f: &mut std::fmt::Formatter<'_>) -> std::fmt::Result {
        match self {
            Place::Line(i) => write!(f, "line {i}"),
            Place::Row(i) => write!(f, "row {i}"),
        }
    }
}

/// One row of a table: its state, and its power k in a table of the
/// dipole sums (one row per state and k). Shown as `(n=2, l=1)` or
/// `(n=2, l=1, k=0)`.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub struct RowId {
    /// The state (n, l).
    pub key: Key,
    /// The power k of a dipole-sum row.
    pub k: Option<i32>,
}

impl RowId {
    /// The row of state `key` in an ln k0 table.
    pub fn state(key: Key) -> RowId {
        RowId { key, k: None }
    }
}

impl std::fmt::Display for RowId {
    fn fmt(&self, f: &mut std::fmt::Formatter<'_>) -> std::fmt::Result {
        let (n, l) = self.key;
        match self.k {
            None => write!(f, "(n={n}, l={l})"),
            Some(k) => write!(f, "(n={n}, l={l}, k={k})"),
        }
    }
}

/// What is wrong with the text of a table file.
#[derive(Debug, Clone, PartialEq, Eq, Error)]
#[non_exhaustive]
pub enum FormatProblem {
    /// The file is empty.
    #[error("empty file, not a kzero table")]
    Empty,
    /// The first line names another format version.
    #[error("unsupported kzero table format '{0}'")]
    UnsupportedVersionLine(String),
    /// The header was cut short.
    #[error("truncated kzero table (the header is incomplete)")]
    TruncatedHeader,
    /// The first line is not the magic line.
    #[error("not a kzero table (first line is not '# kzero-table: 2')")]
    NoMagic,
    /// A table of format 1 (rows without checksums), written by an older
    /// build.
    #[error("written by an older kzero (table format 1, rows without checksums); compute it again with this build")]
    OldFormat,
    /// A row whose checksum does not match its fields: changed after it
    /// was written.
    #[error("row {row} was changed after it was written (its check {found} does not match)")]
    RowChanged {
        /// The row.
        row: RowId,
        /// The checksum found in the file.
        found: String,
    },
    /// A row whose error estimate is negative.
    #[error("row {row}: {column} {value} is negative")]
    RowErrorNegative {
        /// The row.
        row: RowId,
        /// The error column.
        column: &'static str,
        /// The error as written.
        value: String,
    },
    /// A row whose error estimate is above the goal of its digits.
    #[error("row {row}: {column} {value} is above the goal of {digits} digits of the table")]
    RowErrorAboveGoal {
        /// The row.
        row: RowId,
        /// The error column.
        column: &'static str,
        /// The error as written.
        value: String,
        /// The table's digits.
        digits: u32,
    },
    /// A `# setting.` line after the column line.
    #[error("setting line after the column line")]
    SettingAfterColumns,
    /// No column line.
    #[error("truncated kzero table (no column line after the header)")]
    NoColumnLine,
    /// The column line does not fit the settings.
    #[error("unexpected column line '{0}'")]
    UnexpectedColumns(String),
    /// A provenance line is missing (CSV).
    #[error("provenance line '{0}' is missing")]
    MissingProvenanceLine(&'static str),
    /// A provenance field is missing (JSON).
    #[error("meta.{0} is missing")]
    MissingMetaField(&'static str),
    /// A setting is missing.
    #[error("missing setting '{0}'")]
    MissingSetting(&'static str),
    /// A numeric setting is not a number.
    #[error("setting '{0}' is not a number")]
    SettingNotNumber(&'static str),
    /// The `l` setting is malformed.
    #[error("setting 'l' is malformed")]
    BadLSetting,
    /// The method setting names no method.
    #[error("unknown method")]
    UnknownMethod,
    /// The gauge setting names no gauge.
    #[error("unknown gauge")]
    UnknownGauge,
    /// The goal setting is neither `absolute` nor `significant`.
    #[error("unknown goal (absolute or significant)")]
    UnknownGoal,
    /// The quantity setting names no quantity.
    #[error("unknown quantity (ln_k0 or dipole_sums)")]
    UnknownQuantity,
    /// The `k` setting is not a sorted list of supported powers.
    #[error("setting 'k' is not an increasing list of supported powers k")]
    BadPowers,
    /// The shard entry is not a shard.
    #[error(transparent)]
    Shard(#[from] ShardError),
    /// A CSV row has the wrong number of fields.
    #[error("expected {want} fields, found {found}")]
    FieldCount {
        /// Columns of the table.
        want: usize,
        /// Fields found.
        found: usize,
    },
    /// A field that must be a non-negative integer is not.
    #[error("field '{0}' is not a non-negative integer")]
    NotInteger(String),
    /// A field that must be a number is not.
    #[error("field '{0}' is not a number")]
    NotNumber(String),
    /// A method field names no method.
    #[error("field '{0}' is not a method")]
    NotMethod(String),
    /// A row lies outside the table's settings.
    #[error("row (n={}, l={}) is outside the table's settings", .0.0, .0.1)]
    RowOutside(Key),
    /// A row's digits or method differ from the settings.
    #[error("row (n={}, l={}) has digits/method that differ from the settings", .0.0, .0.1)]
    RowSettings(Key),
    /// The JSON document ends early.
    #[error("truncated JSON (the document ends early)")]
    TruncatedJson,
    /// Not JSON.
    #[error("not a kzero table (invalid JSON: {0})")]
    InvalidJson(String),
    /// No `meta` object.
    #[error("not a kzero table (no \"meta\" object)")]
    NoMeta,
    /// `meta.format` is not ours.
    #[error("not a kzero table (meta.format is not \"kzero-table\")")]
    ForeignFormat,
    /// Another JSON format version.
    #[error("unsupported kzero table format version")]
    UnsupportedVersion,
    /// No `meta.settings`.
    #[error("meta.settings missing")]
    NoSettings,
    /// No `rows` array.
    #[error("no \"rows\" array")]
    NoRows,
    /// A JSON row is not an object.
    #[error("a row is not an object")]
    RowNotObject,
    /// A JSON row field is missing or not an integer.
    #[error("row field '{0}' missing or not an integer")]
    RowFieldNotInteger(&'static str),
    /// A JSON row field is missing or not a string.
    #[error("row field '{0}' missing or not a string")]
    RowFieldNotString(&'static str),
    /// The JSON `seconds` field is missing.
    #[error("row field 'seconds' missing")]
    RowSecondsMissing,
    /// A JSON row's method names no method.
    #[error("row field 'method' is not a method")]
    RowMethod,
    /// A row of the dipole sums with only one of ln_I and ln_I_err.
    #[error("row {row}: ln_I and ln_I_err must both be given or both be empty")]
    LnIHalf {
        /// The row.
        row: RowId,
    },
    /// The rows of one state of a dipole-sum table do not hold the
    /// table's powers k, once each and in order.
    #[error("rows of (n={}, l={}) hold k = {found}, the table's k are {want}", .key.0, .key.1)]
    StatePowers {
        /// The state.
        key: Key,
        /// The powers found in its rows, in file order.
        found: String,
        /// The table's powers.
        want: String,
    },
    /// The rows of one state of a dipole-sum table differ in a field that
    /// the state's rows share (method, digits, bits, seconds).
    #[error("rows of (n={}, l={}) differ in {field}, which the rows of one state share", .key.0, .key.1)]
    StateRowsDiffer {
        /// The state.
        key: Key,
        /// The field.
        field: &'static str,
    },
}

/// One setting in which two tables differ.
#[derive(Debug, Clone, PartialEq, Eq)]
pub struct SettingDifference {
    /// The setting.
    pub key: &'static str,
    /// Its value in the first table (or the file).
    pub first: String,
    /// Its value in the second table (or the request).
    pub second: String,
}

impl std::fmt::Display for SettingDifference {
    fn fmt(&self, f: &mut std::fmt::Formatter<'_>) -> std::fmt::Result {
        write!(f, "{} ({} vs {})", self.key, self.first, self.second)
    }
}

/// A list of differences, comma-separated.
#[derive(Debug, Clone, PartialEq, Eq)]
pub struct Differences(pub Vec<SettingDifference>);

impl std::fmt::Display for Differences {
    fn fmt(&self, f: &mut std::fmt::Formatter<'_>) -> std::fmt::Result {
        let v: Vec<String> = self.0.iter().map(ToString::to_string).collect();
        f.write_str(&v.join(", "))
    }
}

/// A list of states, the first five and the count.
#[derive(Debug, Clone, PartialEq, Eq)]
pub struct States(pub Vec<Key>);

impl std::fmt::Display for States {
    fn fmt(&self, f: &mut std::fmt::Formatter<'_>) -> std::fmt::Result {
        let mut s: Vec<String> = self
            .0
            .iter()
            .take(5)
            .map(|(n, l)| format!("(n={n}, l={l})"))
            .collect();
        if self.0.len() > 5 {
            s.push(format!("... {} in all", self.0.len()));
        }
        f.write_str(&s.join(", "))
    }
}

/// Which numbers of a table request are out of range.
#[derive(Debug, Clone, PartialEq, Eq, Error)]
#[non_exhaustive]
pub enum SelectionError {
    /// n_max outside 1..=max.
    #[error("--n-max {n_max}: must be in 1..={max}")]
    NMax {
        /// As given.
        n_max: i64,
        /// Largest allowed.
        max: u32,
    },
    /// n_min outside 1..=n_max.
    #[error("--n-min {n_min}: must be in 1..=--n-max ({n_max})")]
    NMin {
        /// As given.
        n_min: i64,
        /// n_max.
        n_max: i64,
    },
    /// A negative l in the list.
    #[error("--l = {0}: must be a non-negative integer")]
    NegativeL(i64),
    /// A negative l_max.
    #[error("--l-max = {0}: must be a non-negative integer")]
    NegativeLMax(i64),
    /// Every requested l is >= n.
    #[error("no state selected: every requested l is >= n")]
    NoStates,
    /// A power k of the dipole sums outside the supported range.
    #[error("--sums: k = {k} is outside the supported powers {min}..={max} of the dipole sums")]
    Power {
        /// k as given.
        k: i64,
        /// Smallest supported k.
        min: i32,
        /// Largest supported k.
        max: i32,
    },
    /// An empty list of powers k.
    #[error("--sums: no power k given")]
    NoPowers,
    /// A significant-digit goal for a table of the dipole sums.
    #[error("--significant: the dipole sums take an absolute goal only (--digits)")]
    SumsGoal,
}

/// Everything that can go wrong with table files.
#[derive(Debug, Error)]
#[non_exhaustive]
pub enum TableError {
    /// The state selection is unusable.
    #[error(transparent)]
    Selection(#[from] SelectionError),
    /// An input file does not exist.
    #[error("{}: file does not exist", .path.display())]
    NotFound {
        /// The file.
        path: PathBuf,
    },
    /// An input file cannot be read.
    #[error("{}: cannot read: {source}", .path.display())]
    Unreadable {
        /// The file.
        path: PathBuf,
        /// The system error.
        source: std::io::Error,
    },
    /// An input file is not UTF-8 text.
    #[error("{}: not a kzero table (not UTF-8 text)", .path.display())]
    NotText {
        /// The file.
        path: PathBuf,
    },
    /// An input file is not a valid kzero table.
    #[error("{}: {}{problem}", .path.display(), .place.map(|p| format!("{p}: ")).unwrap_or_default())]
    Malformed {
        /// The file.
        path: PathBuf,
        /// Where, when it is one line or row.
        place: Option<Place>,
        /// What.
        problem: FormatProblem,
    },
    /// An output whose name does not end in the extension of what is
    /// written there.
    #[error("{option} {}: {what} is written there, so the name must end in .{want}", .path.display())]
    WrongExtension {
        /// The option naming the output.
        option: &'static str,
        /// The output.
        path: PathBuf,
        /// What is written (`a CSV table`, `an SVG plot`).
        what: &'static str,
        /// The extension it needs, without the dot.
        want: &'static str,
    },
    /// Two outputs of one run name the same file.
    #[error("{first} and {second} name the same file {}; give them different names", .path.display())]
    SameOutput {
        /// The first option.
        first: &'static str,
        /// The second option.
        second: &'static str,
        /// The file.
        path: PathBuf,
    },
    /// An output that is also an input of the run.
    #[error("{option} {} is also an input; write the result to another file", .path.display())]
    OutputIsInput {
        /// The option naming the output.
        option: &'static str,
        /// The file.
        path: PathBuf,
    },
    /// An output that exists, without the option that allows replacing it.
    #[error("{option} {} already exists; {hint}", .path.display())]
    OutputExists {
        /// The option naming the output.
        option: &'static str,
        /// The file.
        path: PathBuf,
        /// How to replace or continue it.
        hint: &'static str,
    },
    /// A file another running kzero holds (its output or journal).
    #[error("{} is in use by another running kzero (it holds the file's lock); wait for it to end or use another file", .path.display())]
    Busy {
        /// The file.
        path: PathBuf,
    },
    /// The lock of a file could not be taken for another reason than
    /// another run holding it.
    #[error("cannot lock {}: {source}", .path.display())]
    Lock {
        /// The file.
        path: PathBuf,
        /// The cause.
        source: std::io::Error,
    },
    /// The folder of an output file does not exist.
    #[error("{option} {}: folder {} does not exist", .path.display(), .folder.display())]
    NoFolder {
        /// The option naming the output (`--out`, `--plot`).
        option: &'static str,
        /// The output file.
        path: PathBuf,
        /// Its folder.
        folder: PathBuf,
    },
    /// No file can be created in the folder of an output.
    #[error("{option} {}: cannot create files in folder {}: {source}", .path.display(), .folder.display())]
    FolderNotWritable {
        /// The option naming the output.
        option: &'static str,
        /// The output file.
        path: PathBuf,
        /// Its folder.
        folder: PathBuf,
        /// The system error.
        source: std::io::Error,
    },
    /// An output path is a folder.
    #[error("{option} {} is a folder, not a file", .path.display())]
    IsFolder {
        /// The option naming the output.
        option: &'static str,
        /// The path.
        path: PathBuf,
    },
    /// A table output exists and may be neither replaced nor resumed.
    #[error("{} already exists; use --resume to continue it or --force to replace it", .path.display())]
    Exists {
        /// The file.
        path: PathBuf,
    },
    /// A merge output exists and may not be replaced.
    #[error("{} already exists; use --force to replace it", .path.display())]
    ExistsNoResume {
        /// The file.
        path: PathBuf,
    },
    /// A file cannot be created.
    #[error("cannot create {}: {source}", .path.display())]
    Create {
        /// The file.
        path: PathBuf,
        /// The system error.
        source: std::io::Error,
    },
    /// A file cannot be written.
    #[error("cannot write {}: {source}", .path.display())]
    Write {
        /// The file.
        path: PathBuf,
        /// The system error.
        source: std::io::Error,
    },
    /// Resuming a JSON table as CSV.
    #[error("--resume: {} is a JSON table; resume it with --format json", .path.display())]
    ResumeJsonAsCsv {
        /// The file.
        path: PathBuf,
    },
    /// The JSON journal is not a CSV journal.
    #[error("--resume: {} is not a kzero CSV journal", .path.display())]
    ResumeNotJournal {
        /// The journal.
        path: PathBuf,
    },
    /// Resuming a CSV table as JSON.
    #[error("--resume --format json: {} is not a JSON table (resume a CSV table with --format csv)", .path.display())]
    ResumeNotJson {
        /// The file.
        path: PathBuf,
    },
    /// Nothing to resume.
    #[error("--resume: neither {} nor {} exists", .journal.display(), .out.display())]
    ResumeNothing {
        /// The journal.
        journal: PathBuf,
        /// The output.
        out: PathBuf,
    },
    /// An unstarted journal whose header names other settings or shard.
    #[error("--resume: {} was started with other settings: {differences}", .path.display())]
    ResumeStartedOther {
        /// The journal.
        path: PathBuf,
        /// The differences (file vs request).
        differences: Differences,
    },
    /// The file to resume has other settings.
    #[error("--resume: {} has other settings: {differences}", .path.display())]
    ResumeSettings {
        /// The file.
        path: PathBuf,
        /// The differences (file vs request).
        differences: Differences,
    },
    /// The file to resume is another shard.
    #[error("--resume: {} is shard {file}, the command asks for shard {asked}", .path.display())]
    ResumeShard {
        /// The file.
        path: PathBuf,
        /// Its shard.
        file: Shard,
        /// The requested shard.
        asked: Shard,
    },
    /// The file to resume lists a state twice.
    #[error("--resume: {} lists (n={}, l={}) twice", .path.display(), .state.0, .state.1)]
    ResumeDuplicate {
        /// The file.
        path: PathBuf,
        /// The state.
        state: Key,
    },
    /// The file to resume holds a state of another shard.
    #[error("--resume: {} holds (n={}, l={}), which is not part of shard {shard}", .path.display(), .state.0, .state.1)]
    ResumeForeignState {
        /// The file.
        path: PathBuf,
        /// The state.
        state: Key,
        /// The requested shard.
        shard: Shard,
    },
    /// Written by another kzero version.
    #[error("{}: written by kzero {theirs}, this is kzero {ours}; refusing to mix results", .path.display())]
    OtherVersion {
        /// The file.
        path: PathBuf,
        /// Its version.
        theirs: String,
        /// This build's version.
        ours: &'static str,
    },
    /// Written by another git revision.
    #[error("{}: written by git revision {theirs}, this binary is {ours}; refusing to mix results", .path.display())]
    OtherRevision {
        /// The file.
        path: PathBuf,
        /// Its revision.
        theirs: String,
        /// This build's revision.
        ours: &'static str,
    },
    /// Merge inputs with different settings.
    #[error("{} and {} have different settings: {differences}", .first.display(), .other.display())]
    MergeSettings {
        /// The first input.
        first: PathBuf,
        /// The differing input.
        other: PathBuf,
        /// The differences.
        differences: Differences,
    },
    /// Merge inputs with different shard counts.
    #[error("{} is shard {first_shard} but {} is shard {other_shard}: different numbers of shards", .first.display(), .other.display())]
    MergeShardCount {
        /// The first input.
        first: PathBuf,
        /// Its shard.
        first_shard: Shard,
        /// The differing input.
        other: PathBuf,
        /// Its shard.
        other_shard: Shard,
    },
    /// States present in two inputs.
    #[error("duplicate states across the inputs: {0}")]
    MergeDuplicates(States),
    /// States present in no input.
    #[error("missing states: {states} (inputs are shards {} of {m})", .present.iter().map(ToString::to_string).collect::<Vec<_>>().join(","))]
    MergeMissing {
        /// The missing states.
        states: States,
        /// The shard indices of the inputs.
        present: Vec<u32>,
        /// Number of shards.
        m: u32,
    },
    /// No input to merge.
    #[error("nothing to merge")]
    MergeNothing,
}

impl TableError {
    /// Whether the input was at fault (an unusable file, selection or
    /// option); write failures are not.
    pub fn is_bad_input(&self) -> bool {
        !matches!(
            self,
            TableError::Create { .. } | TableError::Write { .. } | TableError::Lock { .. }
        )
    }
}
