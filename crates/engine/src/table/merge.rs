//! Merging the shards of a table into the table a single run writes.

use super::{Table, TableError, TableSettings};
use crate::build_info::Provenance;
use crate::shard::{Key, Shard};
use std::collections::BTreeMap;
use std::path::PathBuf;

/// Merges shard tables (each with the file it came from) into one table,
/// sorted by (n, l), shard 1/1, with provenance of this build started now by
/// `command`, `threads` = `merged (see merged_from)` and one `merged_from`
/// line per input.
///
/// Rules: every input written by this build ([`Table::check_same_build`]),
/// identical settings (the quantity and the powers k of a dipole-sum table
/// included), the same number of shards M, and together every
/// requested state exactly once.
///
/// # Errors
/// The first rule broken, as bad input ([`TableError::MergeSettings`],
/// [`TableError::MergeShardCount`], [`TableError::MergeDuplicates`],
/// [`TableError::MergeMissing`], [`TableError::MergeNothing`], or a build
/// mismatch).
pub fn merge(tables: &[(PathBuf, Table)], command: &str) -> Result<Table, TableError> {
    let Some((first_path, first)) = tables.first() else {
        return Err(TableError::MergeNothing);
    };
    for (p, t) in tables {
        t.check_same_build(p)?;
    }
    for (p, t) in &tables[1..] {
        let differences = first.settings.differences(&t.settings);
        if !differences.0.is_empty() {
            return Err(TableError::MergeSettings {
                first: first_path.clone(),
                other: p.clone(),
                differences,
            });
        }
        if t.shard.m != first.shard.m {
            return Err(TableError::MergeShardCount {
                first: first_path.clone(),
                first_shard: first.shard,
                other: p.clone(),
                other_shard: t.shard,
            });
        }
    }
    let mut seen: BTreeMap<Key, usize> = BTreeMap::new();
    let mut dups = Vec::new();
    let mut rows = Vec::new();
    let mut sums = Vec::new();
    for (i, (_, t)) in tables.iter().enumerate() {
        for r in &t.rows {
            if seen.insert(r.key(), i).is_some() {
                dups.push(r.key());
            } else {
                rows.push(r.clone());
            }
        }
        // a dipole-sum table: every state with all its rows
        for e in &t.sums {
            if seen.insert(e.key(), i).is_some() {
                dups.push(e.key());
            } else {
                sums.push(e.clone());
            }
        }
    }
    if !dups.is_empty() {
        return Err(TableError::MergeDuplicates(super::States(dups)));
    }
    let gaps: Vec<Key> = first
        .settings
        .states()
        .into_iter()
        .filter(|k| !seen.contains_key(k))
        .collect();
    if !gaps.is_empty() {
        return Err(TableError::MergeMissing {
            states: super::States(gaps),
            present: tables.iter().map(|(_, t)| t.shard.k).collect(),
            m: first.shard.m,
        });
    }
    let mut prov = super::table_provenance(
        &Provenance::now(command),
        "merged (see merged_from)",
        Shard::WHOLE,
    );
    for (p, t) in tables {
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
    let settings: TableSettings = first.settings.clone();
    let mut merged = Table {
        prov,
        settings,
        shard: Shard::WHOLE,
        rows,
        sums,
        torn_at: None,
    };
    merged.sort();
    Ok(merged)
}
