//! `kzero merge`: joins the shards of a table into the table a single run
//! would have written.

use crate::app_error::AppError;
use crate::output;
use crate::table::Format;
use crate::tablefile::{self, Shard, Table};
use std::collections::BTreeMap;
use std::path::PathBuf;

/// Arguments of `kzero merge`.
#[derive(Debug, clap::Args)]
#[command(after_long_help = "\
The inputs must be kzero tables (CSV or JSON) with identical settings, written
by this kzero build, with the same number of shards M. Together they must
cover every requested state exactly once: any duplicate or missing state is
reported and nothing is written. The output has the rows sorted by (n, l)
and shard 1/1, like a single run; its provenance lines name the inputs.
An existing --out file is refused unless --force is given.")]
pub struct MergeArgs {
    /// Shard files to merge.
    #[arg(required = true, value_name = "FILES")]
    pub files: Vec<PathBuf>,
    /// Output file (default: standard output).
    #[arg(long, value_name = "FILE")]
    pub out: Option<PathBuf>,
    /// Output format.
    #[arg(long, value_enum, default_value_t = Format::Csv)]
    pub format: Format,
    /// Same as `--format json`.
    #[arg(long, conflicts_with = "format")]
    pub json: bool,
    /// Replace an existing --out file.
    #[arg(long)]
    pub force: bool,
}

fn list(keys: &[(u32, u32)]) -> String {
    let mut s: Vec<String> = keys
        .iter()
        .take(5)
        .map(|(n, l)| format!("(n={n}, l={l})"))
        .collect();
    if keys.len() > 5 {
        s.push(format!("... {} in all", keys.len()));
    }
    s.join(", ")
}

/// Runs `kzero merge`.
pub fn run(a: &MergeArgs) -> Result<(), AppError> {
    let format = if a.json { Format::Json } else { a.format };
    if let Some(out) = &a.out {
        tablefile::check_output_folder(out, "--out")?;
        if out.exists() && !a.force {
            return Err(AppError::BadInput(format!(
                "{} already exists; use --force to replace it",
                out.display()
            )));
        }
    }
    let mut tables: Vec<(PathBuf, Table)> = Vec::new();
    for f in &a.files {
        let t = tablefile::read_table(f)?;
        tablefile::check_same_build(&t, f)?;
        tables.push((f.clone(), t));
    }
    let (first_path, first) = &tables[0];
    for (p, t) in &tables[1..] {
        let d = first.settings.differences(&t.settings);
        if !d.is_empty() {
            return Err(AppError::BadInput(format!(
                "{} and {} have different settings: {}",
                first_path.display(),
                p.display(),
                d.join(", ")
            )));
        }
        if t.shard.m != first.shard.m {
            return Err(AppError::BadInput(format!(
                "{} is shard {} but {} is shard {}: different numbers of shards",
                first_path.display(),
                first.shard,
                p.display(),
                t.shard
            )));
        }
    }
    let mut seen: BTreeMap<(u32, u32), usize> = BTreeMap::new();
    let mut dups = Vec::new();
    let mut rows = Vec::new();
    for (i, (_, t)) in tables.iter().enumerate() {
        for r in &t.rows {
            if seen.insert((r.n, r.l), i).is_some() {
                dups.push((r.n, r.l));
            } else {
                rows.push(r.clone());
            }
        }
    }
    if !dups.is_empty() {
        return Err(AppError::BadInput(format!(
            "duplicate states across the inputs: {}",
            list(&dups)
        )));
    }
    let gaps: Vec<(u32, u32)> = first
        .settings
        .states()
        .into_iter()
        .filter(|k| !seen.contains_key(k))
        .collect();
    if !gaps.is_empty() {
        let present: Vec<String> = tables.iter().map(|(_, t)| t.shard.k.to_string()).collect();
        return Err(AppError::BadInput(format!(
            "missing states: {} (inputs are shards {} of {})",
            list(&gaps),
            present.join(","),
            first.shard.m
        )));
    }
    let mut prov = tablefile::new_provenance(1, Shard::WHOLE);
    for (k, v) in prov.iter_mut() {
        if k == "threads" {
            *v = "merged (see merged_from)".into();
        }
    }
    for (p, t) in &tables {
        prov.push((
            "merged_from".into(),
            format!(
                "{} (shard {}, started_utc {}, threads {}, command {})",
                p.display(),
                t.shard,
                t.prov_value("started_utc").unwrap_or("?"),
                t.prov_value("threads").unwrap_or("?"),
                t.prov_value("command").unwrap_or("?")
            ),
        ));
    }
    let mut merged = Table {
        prov,
        settings: first.settings.clone(),
        shard: Shard::WHOLE,
        rows,
        torn_at: None,
    };
    merged.sort();
    let text = match format {
        Format::Csv => merged.to_csv(),
        Format::Json => merged.to_json(),
    };
    match &a.out {
        Some(out) => tablefile::write_atomic(out, text.as_bytes()),
        None => output::print(&text),
    }
}
