//! `kzero`: hydrogenic Bethe logarithms ln k0(n,l) at any requested
//! precision, with error estimates; batch tables, outside checks, precision
//! sweeps and sharded cluster runs.
//!
//! Exit codes: 0 success, 1 anything else, 2 bad input, 3 a check or a
//! cross-method comparison failed. Every error is one line on stderr; with
//! JSON output (`--json`, `--format json`) it is also one JSON object
//! `{"error": ..., "exit": code}` on stdout, unless the command already
//! wrote its result there.

mod app_error;
mod args;
mod basis_cmd;
mod check;
mod excitation_cmd;
mod interrupt;
mod merge;
mod output;
mod plot;
mod shift_cmd;
mod state_cmd;
mod sums_cmd;
mod sweep;
mod table;

use app_error::AppError;
use clap::{Parser, Subcommand};
use std::panic::{self, AssertUnwindSafe};

/// Hydrogenic Bethe logarithms ln k0(n,l) to any requested precision, with
/// honest error estimates.
///
/// `--digits D` asks for an absolute error below 10^-D in every command.
/// Energies in units of Z^2 Ry; ln k0 does not depend on Z.
#[derive(Debug, Parser)]
#[command(name = "kzero", version = kzero_engine::build_info::LONG_VERSION, about, long_about = None)]
#[command(
    after_help = "Exit codes: 0 success, 1 other failure, 2 bad input, 3 a check or cross-method comparison failed."
)]
struct Cli {
    #[command(subcommand)]
    command: Command,
}

#[derive(Debug, Subcommand)]
enum Command {
    /// One Bethe logarithm ln k0(n,l) with its error estimate.
    State(state_cmd::StateArgs),
    /// A table of ln k0 over many states (parallel, resumable, shardable).
    Table(table::TableArgs),
    /// Merge the shards of a table into the table a single run writes.
    Merge(merge::MergeArgs),
    /// Run the bundled outside checks; exit 3 if any fails.
    Check(check::CheckArgs),
    /// One state at a ladder of precision settings.
    Sweep(sweep::SweepArgs),
    /// Exact radial integral <N L| r^K |N2 L2> (hydrogen, bohr^K).
    Radial(basis_cmd::RadialArgs),
    /// Exact absorption oscillator strength f(N L -> N2 L2) (hydrogen).
    Oscillator(basis_cmd::OscillatorArgs),
    /// Leading one-loop QED shift of a level from its Bethe logarithm.
    Shift(shift_cmd::ShiftArgs),
    /// Logarithmic dipole sums S(k), L(k), ln I(k) and mean excitation energies of a state.
    Sums(sums_cmd::SumsArgs),
    /// Mean excitation energy I(k) against n for a few l (listing and SVG plot).
    Excitation(excitation_cmd::ExcitationArgs),
}

/// Runs `f`, turning a panic inside it into an error (exit 1) instead of a
/// crash.
pub fn catch<T>(f: impl FnOnce() -> Result<T, AppError>) -> Result<T, AppError> {
    match panic::catch_unwind(AssertUnwindSafe(f)) {
        Ok(r) => r,
        Err(payload) => Err(AppError::from(kzero_engine::EngineError::Internal {
            message: kzero_engine::batch::panic_message(payload.as_ref()),
        })),
    }
}

/// One line from a clap error report: the message and its details, without
/// the usage block and tips.
fn clap_summary(text: &str) -> String {
    let mut parts = Vec::new();
    for line in text.lines() {
        let t = line.trim();
        if t.starts_with("Usage:") || t.starts_with("For more information") {
            break;
        }
        if t.is_empty() || t.starts_with("tip:") {
            continue;
        }
        parts.push(t.strip_prefix("error: ").unwrap_or(t).to_string());
    }
    if parts.is_empty() {
        "invalid arguments".to_string()
    } else {
        parts.join(" ")
    }
}

fn run(cli: Cli) -> Result<(), AppError> {
    match &cli.command {
        Command::State(a) => state_cmd::run(a),
        Command::Table(a) => table::run(a),
        Command::Merge(a) => merge::run(a),
        Command::Check(a) => check::run(a),
        Command::Sweep(a) => sweep::run(a),
        Command::Radial(a) => basis_cmd::run_radial(a),
        Command::Oscillator(a) => basis_cmd::run_oscillator(a),
        Command::Shift(a) => shift_cmd::run(a),
        Command::Sums(a) => sums_cmd::run(a),
        Command::Excitation(a) => excitation_cmd::run(a),
    }
}

/// Ends the process with `code` after reporting `message`: one line on
/// stderr and, when JSON output was asked for and nothing was written to
/// standard output yet, one JSON object `{"error": ..., "exit": code}` there.
fn fail(message: &str, code: i32, json: bool) -> ! {
    eprintln!("kzero: {message}");
    if json && !output::wrote_anything() {
        let _ = output::print(&output::error_json(message, code));
    }
    std::process::exit(code);
}

fn main() {
    // Panics are turned into one-line errors by `catch`; never print the
    // default panic report.
    panic::set_hook(Box::new(|_| {}));
    let raw: Vec<String> = std::env::args().collect();
    let json = output::json_requested(&raw);
    let cli = match Cli::try_parse() {
        Ok(c) => c,
        Err(e) => {
            use clap::error::ErrorKind;
            match e.kind() {
                ErrorKind::DisplayHelp | ErrorKind::DisplayVersion => {
                    let _ = output::print(&e.render().to_string());
                    std::process::exit(0);
                }
                ErrorKind::DisplayHelpOnMissingArgumentOrSubcommand => {
                    fail("a subcommand is required (see kzero --help)", 2, json)
                }
                _ => fail(
                    &format!(
                        "{} (see kzero --help)",
                        clap_summary(&e.render().to_string())
                    ),
                    2,
                    json,
                ),
            }
        }
    };
    match catch(|| run(cli)) {
        Ok(()) => {}
        Err(e) => fail(&e.to_string(), e.exit_code(), json),
    }
}
