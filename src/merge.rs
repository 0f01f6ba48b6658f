//! `kzero merge`: joins the shards of a table into the table a single run
//! would have written.

use crate::app_error::AppError;
use crate::output;
use kzero_engine::build_info::command_line;
use kzero_engine::table::files::{
    check_not_busy, check_outputs, write_atomic, OutputKind, PlannedOutput,
};
use kzero_engine::table::merge::merge;
use kzero_engine::table::read_table;
use kzero_engine::{Table, TableFormat};
use std::path::PathBuf;

/// Arguments of `kzero merge`.
#[derive(Debug, clap::Args)]
#[command(after_long_help = "\
The inputs must be kzero tables (CSV or JSON) with identical settings, written
by this kzero build, with the same number of shards M. Together they must
cover every requested state exactly once: any duplicate or missing state is
reported and nothing is written. The output has the rows sorted by (n, l)
and shard 1/1, like a single run; its provenance lines name the inputs.
An existing --out file is refused unless --force is given, and so is an --out
that is one of the inputs, a name that does not end in .csv (.json with
--json), and an input or --out that a running kzero table holds (its lock).")]
pub struct MergeArgs {
    /// Shard files to merge.
    #[arg(required = true, value_name = "FILES")]
    pub files: Vec<PathBuf>,
    /// Output file (default: standard output).
    #[arg(long, value_name = "FILE")]
    pub out: Option<PathBuf>,
    /// Output format.
    #[arg(long, default_value_t = TableFormat::Csv, value_parser = crate::args::format_parser())]
    pub format: TableFormat,
    /// Same as `--format json`.
    #[arg(long, conflicts_with = "format")]
    pub json: bool,
    /// Replace an existing --out file.
    #[arg(long)]
    pub force: bool,
}

/// Runs `kzero merge`.
pub fn run(a: &MergeArgs) -> Result<(), AppError> {
    let format = if a.json { TableFormat::Json } else { a.format };
    if let Some(out) = &a.out {
        let inputs: Vec<&std::path::Path> = a.files.iter().map(PathBuf::as_path).collect();
        check_outputs(
            &[PlannedOutput {
                option: "--out",
                path: out,
                kind: OutputKind::Table(format),
                refuse_existing: (!a.force).then_some("use --force to replace it"),
            }],
            &inputs,
        )?;
        check_not_busy(out)?;
    }
    for f in &a.files {
        check_not_busy(f)?;
    }
    let mut tables: Vec<(PathBuf, Table)> = Vec::new();
    for f in &a.files {
        let t = read_table(f)?;
        t.check_same_build(f)?;
        tables.push((f.clone(), t));
    }
    let merged = merge(&tables, &command_line())?;
    let text = merged.render(format);
    match &a.out {
        Some(out) => Ok(write_atomic(out, text.as_bytes())?),
        None => output::print(&text),
    }
}
