//! # kzero-engine: the one engine API of every kzero front end
//!
//! The command-line program `kzero`, the Python package and any other front
//! end compute, compare, tabulate, shard, merge and check hydrogenic Bethe
//! logarithms ln k0(n, l) through this crate alone. It owns the logic a
//! front end needs; a front end only parses its arguments, calls it and
//! prints.
//!
//! How data flows: arguments -> settings ([`Request`], a table's
//! settings) -> engine ([`compute()`], [`run_batch`], [`compute_states`]) ->
//! value ([`kzero_bethe::BetheValue`], [`Computed`]) -> table row -> file.
//!
//! * [`method`]: [`MethodChoice`] (green, spectral, both); the names of the
//!   methods and gauges are spelled once, by `FromStr`/`Display`.
//! * [`compute`](mod@compute): one state, [`cost`] estimates; the comparison
//!   of two values is [`agreement`] (from kzero-bethe, the one used
//!   everywhere).
//! * [`shard`]: the deterministic cost-balanced shard plan.
//! * [`estimate`](mod@estimate): the cost of a run before it starts
//!   (core-seconds, wall time, a shard count for a target wall time).
//! * [`sums`](mod@sums): the logarithmic dipole sums S(k), L(k), ln I(k)
//!   of one state ([`compute_sums`]) and their printed rows with I(k) in eV
//!   ([`row_text`]).
//! * [`batch`]: many states in parallel with a cancellation hook.
//! * [`build_info`]: versions, git revision, the one [`Provenance`] schema.
//! * [`table`]: the table format (CSV and JSON), validation, the journal
//!   of a running table, resume and merge rules.
//! * [`check`]: the check runner (bundled outside checks, closure sum
//!   rules, cross-method sample); [`data_checks`]: the bundled files.
//! * [`shift`]: QED level shifts with ln k0 from [`compute()`], and the
//!   shift-table format.
//! * [`sweep`]: precision sweeps; [`exact`]: exact radial integrals and
//!   oscillator strengths.
//!
//! ## Units and conventions
//! As in [`kzero_bethe`]: energies in units of Z^2 Ry, D0 = 2 Z^4/n^3 for
//! every l, values independent of Z. `digits` D asks for an absolute error
//! below 10^-D.
//!
//! ## Example
//! ```
//! use kzero_engine::{compute_states, MethodChoice, Request};
//! let req = Request::new(MethodChoice::Green, 10);
//! let batch = compute_states(&[(2, 1), (1, 0)], &req, Some(2), &|| false).unwrap();
//! assert!(batch.complete);
//! // Sorted by (n, l), like a finished table.
//! assert_eq!((batch.results[0].n, batch.results[0].l), (1, 0));
//! let v = batch.results[0].result.as_ref().unwrap().primary();
//! // ln k0(1,0) = 2.984128555765498 (Drake & Swainson 1990, via CODATA 2018).
//! assert!((v.value.to_f64() - 2.984128555765498).abs() < 1e-10);
//! ```
#![deny(missing_docs)]

pub mod batch;
pub mod build_info;
pub mod check;
pub mod compute;
pub mod data_checks;
pub mod error;
pub mod estimate;
pub mod exact;
pub mod method;
pub mod shard;
pub mod shift;
pub mod sums;
pub mod sweep;
pub mod table;

pub use batch::{
    catch_panic, compute_jobs, compute_states, default_threads, run_batch, run_jobs, Batch,
    BatchEnd, Flow, Request, StateResult,
};
pub use build_info::Provenance;
pub use compute::{compute, cost, validate_state, Computed};
pub use error::{EngineError, ErrorClass};
pub use estimate::{
    estimate, estimate_by, human_duration, parse_duration, suggest_shards, suggest_shards_by,
    Estimate, ShardSuggestion,
};
pub use kzero_bethe::{agreement, Agreement, BetheValue, Gauge, Method, Settings};
pub use method::MethodChoice;
pub use shard::{part_costs, part_costs_by, plan, plan_by, Key, Shard, ShardError};
pub use sums::{compute_sums, row_text, sums_cost, sums_json, ComputedSums, EnergyUnit, RowText};
pub use table::{
    run_table, Quantity, Row, StateValues, SumsEntry, Table, TableError, TableFormat, TableSettings,
};
