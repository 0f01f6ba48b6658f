//! Writes a kzero table through library calls alone, the way `kzero table
//! --shard K/2` and `kzero merge` do: the states n <= 4 are split by the
//! deterministic shard plan into two parts, each part is computed in
//! parallel and written as a table file, the files are read back
//! (validated) and merged, and the merged table is written.
//!
//! Run: `cargo run --release -p kzero-engine --example write_table [OUT_DIR]`
//! (default: the system's temporary folder). Prints the merged table.

use kzero_engine::table::files::write_atomic;
use kzero_engine::table::merge::merge;
use kzero_engine::table::read_table;
use kzero_engine::{
    agreement, compute, compute_states, default_threads, plan, Gauge, Key, MethodChoice, Row,
    Settings, Shard, Table, TableSettings,
};
use std::path::PathBuf;

fn main() -> Result<(), Box<dyn std::error::Error>> {
    let dir = std::env::args()
        .nth(1)
        .map(PathBuf::from)
        .unwrap_or_else(std::env::temp_dir);
    // arguments -> settings: n = 1..=4, every l, 15 digits, Green's function.
    let settings = TableSettings::new(1, 4, None, None, 15, MethodChoice::Green, Gauge::Velocity)?;
    let command = "kzero-engine example write_table";
    let states = settings.states();

    let mut parts = Vec::new();
    for k in 1..=2 {
        // The shard plan: part k of 2, balanced by estimated cost.
        let shard = Shard::new(k, 2)?;
        let mine: Vec<Key> = plan(&states, settings.digits, settings.method, shard)
            .into_iter()
            .map(|(key, _)| key)
            .collect();
        // engine -> values, in (n, l) order; no cancellation here.
        let batch = compute_states(&mine, &settings.request(), None, &|| false)?;
        // value -> table row -> file.
        let mut table = Table::new(settings.clone(), shard, command, default_threads());
        for r in batch.results {
            table
                .rows
                .push(Row::from_computed(&r.result?, settings.method));
        }
        let path = dir.join(format!("kzero-example-part-{k}.csv"));
        write_atomic(&path, table.to_csv().as_bytes())?;
        eprintln!("wrote {} ({} states)", path.display(), table.rows.len());
        parts.push((path.clone(), read_table(&path)?));
    }

    // Merge: same settings and build, every state exactly once.
    let merged = merge(&parts, command)?;
    let out = dir.join("kzero-example-table.csv");
    write_atomic(&out, merged.to_csv().as_bytes())?;
    eprintln!("wrote {} ({} states)", out.display(), merged.rows.len());

    // A row against a second, independent method (spectral sum): the one
    // comparison every front end uses.
    let s = Settings::with_digits(settings.digits);
    let g = compute(2, 0, MethodChoice::Green, Gauge::Velocity, &s)?.into_primary();
    let p = compute(2, 0, MethodChoice::Spectral, Gauge::Velocity, &s)?.into_primary();
    let a = agreement(&g, &p);
    eprintln!(
        "ln k0(2,0): green and spectral agree to {} digits (within the estimates: {})",
        a.digits, a.consistent
    );
    print!("{}", merged.to_csv());
    Ok(())
}
