//! `kzero table`: a batch table of ln k0 (or of the dipole sums, with
//! `--sums`) over a range of states, parallel, crash-safe, resumable and
//! shardable. The table format, the journal,
//! resume and the shard plan are the library's (`kzero_engine::table`);
//! this file parses the arguments, shows progress and prints.

use crate::app_error::AppError;
use crate::interrupt;
use crate::output;
use crate::plot;
use indicatif::{ProgressBar, ProgressDrawTarget, ProgressStyle};
use kzero_engine::build_info as provenance;
use kzero_engine::table::files::{
    check_outputs, journal_path, write_atomic, OutputKind, PlannedOutput,
};
use kzero_engine::table::journal::{check_resumable, load_for_resume, Journal, JournalLock};
use kzero_engine::{
    run_table, Flow, Gauge, Key, MethodChoice, Shard, Table, TableFormat, TableSettings,
};
use std::io::IsTerminal;
use std::path::{Path, PathBuf};
use std::time::Instant;

/// Arguments of `kzero table`.
#[derive(Debug, clap::Args)]
#[command(after_long_help = TABLE_HELP)]
pub struct TableArgs {
    /// Largest principal quantum number (1..=1000).
    #[arg(long, value_name = "N", allow_negative_numbers = true)]
    pub n_max: i64,
    /// Smallest principal quantum number.
    #[arg(
        long,
        value_name = "M",
        default_value_t = 1,
        allow_negative_numbers = true
    )]
    pub n_min: i64,
    /// Angular momenta to include, e.g. `0,1,2` (each used where l < n).
    #[arg(
        long,
        value_name = "LIST",
        value_delimiter = ',',
        allow_negative_numbers = true,
        conflicts_with = "l_max"
    )]
    pub l: Option<Vec<i64>>,
    /// Include every l <= K (and l < n).
    #[arg(long, value_name = "K", allow_negative_numbers = true)]
    pub l_max: Option<i64>,
    /// Requested absolute accuracy: |error| < 10^-D (5..=200; default 20),
    /// on ln k0 or on every S(k) and L(k).
    #[arg(long, value_name = "D", value_parser = crate::args::digits_parser(), conflicts_with = "significant")]
    pub digits: Option<u32>,
    /// Requested relative accuracy instead: |error| <= 10^-D |ln k0|, D
    /// significant digits per state (5..=200; recorded as setting.goal; not
    /// with --sums).
    #[arg(long, value_name = "D", value_parser = crate::args::digits_parser(), conflicts_with = "sums")]
    pub significant: Option<u32>,
    /// Tabulate the dipole sums S(k), L(k), ln I(k) for these powers k
    /// instead of ln k0: a comma-separated list such as -2,-1,0,1,2 (each
    /// in -4..=2), or `all`. One row per (n, l, k).
    #[arg(
        long,
        value_name = "LIST",
        value_delimiter = ',',
        allow_hyphen_values = true
    )]
    pub sums: Option<Vec<String>>,
    /// Method.
    #[arg(long, default_value_t = MethodChoice::Green, value_parser = crate::args::method_parser())]
    pub method: MethodChoice,
    /// Dipole form of the spectral method (default velocity for ln k0,
    /// length with --sums; refused with --method green).
    #[arg(long, value_parser = crate::args::gauge_parser())]
    pub gauge: Option<Gauge>,
    /// Output format.
    #[arg(long, default_value_t = TableFormat::Csv, value_parser = crate::args::format_parser())]
    pub format: TableFormat,
    /// Same as `--format json`.
    #[arg(long, conflicts_with = "format")]
    pub json: bool,
    /// Output file (default: standard output, written when the run ends).
    #[arg(long, value_name = "FILE")]
    pub out: Option<PathBuf>,
    /// Worker threads (default: the number of CPUs; more is accepted with a
    /// warning).
    #[arg(long, value_name = "T", value_parser = clap::value_parser!(u32).range(1..=4096))]
    pub threads: Option<u32>,
    /// Continue an interrupted run of the same command (needs --out).
    #[arg(long, requires = "out")]
    pub resume: bool,
    /// Replace an existing --out (and --plot) file instead of refusing.
    #[arg(long, conflicts_with = "resume")]
    pub force: bool,
    /// Compute only part K of M (1 <= K <= M), e.g. for a job array.
    #[arg(long, value_name = "K/M", value_parser = crate::args::shard_parser)]
    pub shard: Option<Shard>,
    /// Also write an SVG plot of ln k0 against n, one curve per l (not with
    /// --sums; `kzero excitation --plot` draws I(k) against n).
    #[arg(long, value_name = "FILE.svg", conflicts_with = "sums")]
    pub plot: Option<PathBuf>,
    /// No progress bar.
    #[arg(long)]
    pub quiet: bool,
    /// Print the estimated cost of the run (core-seconds, wall time with
    /// --threads) and stop without computing or writing anything.
    #[arg(long)]
    pub estimate: bool,
    /// With --estimate: the shard count whose parts finish within this wall
    /// time, each with --threads threads (seconds, or e.g. 90s, 30m, 2h).
    #[arg(long, value_name = "TIME", requires = "estimate", value_parser = kzero_engine::parse_duration)]
    pub target_wall: Option<f64>,
}

const TABLE_HELP: &str = "\
Output files:
  Every file the run writes is checked before any work, and the run is
  refused (exit 2, nothing touched) when: --out does not end in .csv (.json
  with --json) or --plot in .svg; a folder is missing or takes no new files;
  two outputs name the same file (links included); --out or --plot exists
  without --force (--resume continues --out and may replace --plot).
  --force replaces them. Files appear atomically (written, then renamed).
  A running table holds an exclusive lock on its journal (the --out CSV, or
  FILE.partial for JSON): a second run on the same file, with or without
  --resume or --force, is refused at once and changes nothing. The lock is
  the operating system's and ends with the process: a killed run never
  blocks a later --resume.
  Every row ends with a checksum (column check); --resume and merge refuse
  a row changed after it was written, and a row whose error is negative,
  not a number, or above its goal.

Crash safety and --resume:
  CSV: the --out file is written while the run goes: each finished state is
  appended as one whole line, in completion order. When the run ends the file
  is rewritten (atomically) with the rows sorted by (n, l). After Ctrl-C or
  kill -9, `--resume` with the same command completes the file: it checks that
  the file is a kzero table with the same settings and shard (and the same
  kzero build), skips the finished states, and drops only a torn last line.
  JSON: the JSON document is written once, when the run ends. While the run
  goes, finished rows are kept in FILE.partial (a CSV journal in the format
  above); `--resume --format json --out FILE` continues from FILE.partial and
  removes it when FILE is written.
  A file left by a run killed before its first row (empty, or a header cut
  before its column line) holds no work yet: --resume starts the work on it
  (a cut header that names other settings is refused).
  SIGINT or SIGTERM ends the run with one line on stderr saying where the
  finished rows are and how to continue; the process then ends by that signal.

Sharding:
  --shard K/M splits the states into M disjoint parts of similar estimated
  cost (deterministic: the same K/M always gives the same states). Run every
  K = 1..M (for example as a job array), then `kzero merge` the parts.

Cluster recipe (Slurm job array; the README's cluster section has the whole
recipe as tested on a real Slurm, with the resubmit step):
  #SBATCH --array=1-16
  #SBATCH --cpus-per-task=4
  #SBATCH --open-mode=append
  OUT=part-${SLURM_ARRAY_TASK_ID}.csv
  kzero table --n-max 200 --digits 20 --threads 4 --quiet \\
      --shard ${SLURM_ARRAY_TASK_ID}/16 --out $OUT $([ -e $OUT ] && echo --resume)
  # after the array (for example with --dependency=afterok:<array job>):
  kzero merge part-*.csv --out table.csv
  A requeued task that finds its part file continues it with --resume. A
  cancelled task breaks an afterok dependency for good: resubmit it and
  update the merge job's dependency (see the README).

Cost before the run:
  --estimate prints the estimated core-seconds of the states of this command
  (of its shard with --shard) and the wall time with --threads, and stops;
  with --target-wall TIME it also names the shard count M whose parts finish
  within TIME. The figures come from cost models fitted to measured times on
  the reference machine of benches/README.md (within a factor of about 1.5);
  nothing is computed and no file is touched.

Dipole sums (--sums LIST):
  The table holds S(k), L(k) and ln I(k) = L(k)/S(k) (units of Z^2 Ry, the
  definitions of `kzero sums`) for the powers k of LIST (or all of -4..=2),
  one row per (n, l, k) with the columns n,l,k,S,S_err,L,L_err,ln_I,ln_I_err,
  method,digits,bits,seconds,check (with --method both also S_spectral,
  S_err_spectral,L_spectral,L_err_spectral before check). ln_I and ln_I_err
  are empty where S(k) is zero within its error (S(2) for l >= 1). --digits D
  is an absolute goal on every S(k) and L(k). The quantity and the k list are
  recorded (setting.quantity, setting.k); --resume and merge refuse a file
  with another quantity or k list. The rows of a state are computed and
  written together: a state cut short by an interruption is recomputed
  whole by --resume. --method both cross-checks every S(k) and L(k) (exit 3
  when they differ beyond the combined error estimates). Shards and
  --estimate use the cost of the sums.

Determinism:
  ln_k0 and abs_err (S, L, ln_I and their errors) do not depend on
  --threads, sharding or resuming.

The seconds column:
  the wall time of that state, from its start to its end on its worker
  thread (for --method both, the two methods added). States running at the
  same time share the cores, so with more threads than cores (accepted with
  a warning line) each state's seconds grow by about threads/cores while
  the table is not faster.";

/// The validated settings of a table command.
pub fn settings_from_args(a: &TableArgs) -> Result<TableSettings, AppError> {
    crate::args::refuse_unused_gauge(a.method, a.gauge)?;
    let goal = crate::args::goal_settings(a.digits, a.significant);
    let s = TableSettings::new(
        a.n_min,
        a.n_max,
        a.l.as_deref(),
        a.l_max,
        goal.digits,
        a.method,
        Gauge::default(),
    )
    .map_err(kzero_engine::TableError::from)?
    .with_goal(goal.goal);
    let mut s = match &a.sums {
        Some(list) => s
            .with_sums(&crate::args::powers(list)?)
            .map_err(kzero_engine::TableError::from)?,
        None => s,
    };
    s.gauge = a.gauge.unwrap_or_else(|| s.quantity.default_gauge());
    Ok(s)
}

/// Runs `kzero table`.
pub fn run(a: &TableArgs) -> Result<(), AppError> {
    let settings = settings_from_args(a)?;
    let format = if a.json { TableFormat::Json } else { a.format };
    let shard = a.shard.unwrap_or(Shard::WHOLE);
    let cores = kzero_engine::default_threads();
    let threads = a.threads.map_or(cores, |t| t as usize);
    if a.estimate {
        return print_estimate(a, &settings, shard, threads);
    }
    interrupt::on_stop(stop_hint(a, format))?;
    // The journal's lock first: a file another run is writing is refused as
    // busy, whatever else the command asks. Held until the run ends.
    let lock = match &a.out {
        Some(out) => Some(JournalLock::acquire(out, format)?),
        None => None,
    };
    check_table_outputs(a, format)?;
    if threads > cores {
        eprintln!(
            "kzero: warning: --threads {threads} is more than the {cores} cores here; the states share the cores, so the table is not faster and each row's seconds (wall time) grows"
        );
    }
    let planned = settings.plan(shard);

    // Prepare the output (all checks before any work, nothing touched on refusal).
    let mut table = Table::new(
        settings.clone(),
        shard,
        &provenance::command_line(),
        threads,
    );
    let mut journal: Option<Journal> = None;
    if let (Some(out), Some(lock)) = (&a.out, lock) {
        // A file left by a run killed before its first row (empty, or a cut
        // header) is an empty journal: --resume starts the work on it.
        let loaded = if a.resume {
            load_for_resume(out, format, &settings, shard)?
        } else {
            None
        };
        if let Some((loaded, from)) = loaded {
            check_resumable(&loaded, &from, &settings, shard, &planned)?;
            table.prov = loaded.prov.clone();
            table.rows = loaded.rows.clone();
            table.sums = loaded.sums.clone();
            let mut j = Journal::reopen(out, format, &from, &loaded, lock)?;
            let when = provenance::utc_now();
            let cmd = provenance::command_line();
            j.append_provenance("resumed_utc", &when)?;
            j.append_provenance("resumed_command", &cmd)?;
            table.prov.push(("resumed_utc".into(), when));
            table.prov.push(("resumed_command".into(), cmd));
            journal = Some(j);
        } else {
            journal = Some(Journal::create(
                out,
                format,
                &table,
                a.force || a.resume,
                lock,
            )?);
        }
    }

    let (done, _) = table.keys();
    let todo: Vec<(Key, f64)> = planned
        .iter()
        .filter(|(k, _)| !done.contains(k))
        .cloned()
        .collect();

    let outcome = compute_all(&todo, &settings, threads, a.quiet, &mut journal, &mut table)?;

    // Final output.
    table.sort();
    let complete = outcome.failures.is_empty();
    match (&a.out, format) {
        (Some(out), TableFormat::Csv) => {
            drop(journal);
            write_atomic(out, table.to_csv().as_bytes())?;
        }
        (Some(out), TableFormat::Json) => {
            if complete {
                write_atomic(out, table.to_json().as_bytes())?;
                if let Some(j) = journal.take() {
                    j.remove();
                }
            }
        }
        (None, f) => output::print(&table.render(f))?,
    }
    if let Some(p) = &a.plot {
        plot::table_plot(&table.rows, p)?;
    }
    finish(outcome, a.out.as_deref(), format)
}

/// Checks every file the run writes (table, JSON journal, plot) before any
/// work: names, folders, existing files, no file named twice.
fn check_table_outputs(a: &TableArgs, format: TableFormat) -> Result<(), AppError> {
    let keep = if a.force || a.resume {
        None
    } else {
        Some("use --resume to continue it or --force to replace it")
    };
    let journal = a.out.as_ref().map(|o| journal_path(o, format));
    let mut outputs = Vec::new();
    if let Some(out) = &a.out {
        outputs.push(PlannedOutput {
            option: "--out",
            path: out,
            kind: OutputKind::Table(format),
            refuse_existing: keep,
        });
    }
    if let (Some(j), TableFormat::Json) = (&journal, format) {
        outputs.push(PlannedOutput {
            option: "--out (its journal)",
            path: j,
            kind: OutputKind::Journal,
            refuse_existing: keep,
        });
    }
    if let Some(p) = &a.plot {
        outputs.push(PlannedOutput::plot(p, a.force || a.resume));
    }
    Ok(check_outputs(&outputs, &[])?)
}

/// `--estimate`: the cost of the run, without computing.
fn print_estimate(
    a: &TableArgs,
    settings: &TableSettings,
    shard: Shard,
    threads: usize,
) -> Result<(), AppError> {
    use kzero_engine::human_duration as dur;
    let e = settings.estimate(shard, threads);
    let what = match &settings.quantity {
        kzero_engine::Quantity::LnK0 => String::new(),
        q => format!(
            ", dipole sums k = {}",
            kzero_engine::table::render_powers(q.powers())
        ),
    };
    let mut text = format!(
        "estimate for {} states (n = {}..{}, {} digits, method {}{what}), shard {}/{}:\n",
        e.states,
        settings.n_min,
        settings.n_max,
        settings.digits,
        settings.method,
        shard.k,
        shard.m
    );
    text += &format!(
        "  cost        {:.0} core-seconds ({} of one core)\n",
        e.core_seconds,
        dur(e.core_seconds)
    );
    text += &format!(
        "  wall time   {} with {} thread{}\n",
        dur(e.wall_seconds()),
        e.threads,
        if e.threads == 1 { "" } else { "s" }
    );
    if let Some(((n, l), c)) = e.largest {
        text += &format!("  costliest   ({n},{l}): {c:.2} core-seconds\n");
    }
    if let Some(target) = a.target_wall {
        let g = settings.suggest_shards(shard, threads, target);
        let verdict = if g.meets_target {
            "slowest part"
        } else {
            "target not reachable; slowest part"
        };
        text += &format!(
            "  for {} of wall time: --shard K/{} with {} threads each ({verdict} {})\n",
            dur(target),
            g.shards,
            threads,
            dur(g.wall_seconds)
        );
    }
    text += "nothing was computed; the figures are fits to measured times (benches/README.md), within a factor of about 1.5\n";
    output::print(&text)?;
    Ok(())
}

/// What SIGINT or SIGTERM tells about continuing this run.
fn stop_hint(a: &TableArgs, format: TableFormat) -> String {
    let Some(out) = &a.out else {
        return "nothing was kept (the table goes to standard output); run with --out FILE to be able to resume".into();
    };
    let how = if a.resume {
        "run the same command again"
    } else if a.force {
        "run the same command with --resume in place of --force"
    } else {
        "run the same command with --resume"
    };
    format!(
        "finished rows are kept in {}; to continue, {how}",
        journal_path(out, format).display()
    )
}

/// What happened in a run, apart from the rows.
struct Outcome {
    failures: Vec<(Key, AppError)>,
    disagreements: Vec<String>,
}

fn compute_all(
    todo: &[(Key, f64)],
    settings: &TableSettings,
    threads: usize,
    quiet: bool,
    journal: &mut Option<Journal>,
    table: &mut Table,
) -> Result<Outcome, AppError> {
    let mut outcome = Outcome {
        failures: Vec::new(),
        disagreements: Vec::new(),
    };
    if todo.is_empty() {
        return Ok(outcome);
    }
    let total_cost: f64 = todo.iter().map(|(_, c)| c).sum();
    let bar = progress_bar(quiet);
    let start = Instant::now();
    let states: Vec<Key> = todo.iter().map(|(k, _)| *k).collect();
    let mut fatal: Option<AppError> = None;
    let mut done_cost = 0.0;
    let mut done = 0usize;
    run_table(&states, settings, threads, &|| false, &mut |i, r| {
        let ((n, l), c) = todo[i];
        done += 1;
        done_cost += c;
        let mut flow = Flow::Continue;
        match r {
            Ok(values) => {
                if let Some(d) = values.disagreement() {
                    outcome.disagreements.push(d);
                }
                // the rows of the state, appended in one write
                let lines = table.add(&values);
                if let Some(j) = journal.as_mut() {
                    if let Err(e) = j.append(&lines) {
                        flow = Flow::Stop;
                        if fatal.is_none() {
                            fatal = Some(e.into());
                        }
                    }
                }
            }
            Err(e) => outcome.failures.push(((n, l), AppError::from(e))),
        }
        let secs = start.elapsed().as_secs_f64().max(1e-9);
        bar.set_position((done_cost / total_cost * 1e6) as u64);
        bar.set_message(format!(
            "{done}/{} states, {:.1} states/min",
            todo.len(),
            done as f64 / secs * 60.0
        ));
        flow
    })?;
    bar.finish_and_clear();
    match fatal {
        Some(e) => Err(e),
        None => Ok(outcome),
    }
}

fn progress_bar(quiet: bool) -> ProgressBar {
    if quiet || !std::io::stderr().is_terminal() {
        return ProgressBar::hidden();
    }
    let bar = ProgressBar::with_draw_target(Some(1_000_000), ProgressDrawTarget::stderr());
    if let Ok(style) = ProgressStyle::with_template(
        "{elapsed_precise} [{wide_bar}] {percent:>3}% {msg} (by cost; ETA {eta})",
    ) {
        bar.set_style(style);
    }
    bar
}

fn finish(outcome: Outcome, out: Option<&Path>, format: TableFormat) -> Result<(), AppError> {
    for d in &outcome.disagreements {
        eprintln!("kzero: methods disagree at {d}");
    }
    let mut failures = outcome.failures;
    failures.sort_by_key(|(k, _)| *k);
    if let Some(((n, l), first)) = failures.first() {
        let hint = match (out, format) {
            (Some(o), TableFormat::Json) => format!(
                "; rows so far kept in {}, rerun with --resume",
                journal_path(o, format).display()
            ),
            (Some(_), TableFormat::Csv) => {
                "; finished rows are in the table, rerun with --resume".to_string()
            }
            (None, _) => String::new(),
        };
        let more = if failures.len() > 1 {
            format!(" (and {} more failed states)", failures.len() - 1)
        } else {
            String::new()
        };
        let msg = format!("state (n={n}, l={l}): {first}{more}{hint}");
        // Bad input (exit 2) only when every failure is bad input, for
        // example a gauge not available for these states.
        return Err(
            if failures
                .iter()
                .all(|(_, e)| matches!(e, AppError::BadInput(_)))
            {
                AppError::BadInput(msg)
            } else {
                AppError::Other(msg)
            },
        );
    }
    if !outcome.disagreements.is_empty() {
        return Err(AppError::CheckFailed(format!(
            "{} state(s) where green and spectral disagree",
            outcome.disagreements.len()
        )));
    }
    Ok(())
}
