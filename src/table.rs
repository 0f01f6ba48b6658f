//! `kzero table`: a batch table of ln k0 over a range of states, parallel,
//! crash-safe, resumable and shardable.

use crate::app_error::AppError;
use crate::interrupt;
use crate::output;
use crate::plot;
use crate::tablefile::{self, LSelect, Row, Shard, Table, TableSettings};
use indicatif::{ProgressBar, ProgressDrawTarget, ProgressStyle};
use kzero_engine::build_info as provenance;
use kzero_engine::{plan, run_batch, Flow, Gauge, MethodChoice, Request, Settings};
use std::fs::{self, File, OpenOptions};
use std::io::{IsTerminal, Write};
use std::path::{Path, PathBuf};
use std::time::Instant;

/// Output format of a table.
#[derive(Debug, Clone, Copy, PartialEq, Eq, Default, clap::ValueEnum)]
pub enum Format {
    /// Comma-separated values with `#` provenance lines.
    #[default]
    Csv,
    /// One JSON object with "meta" and "rows".
    Json,
}

/// Arguments of `kzero table`.
#[derive(Debug, clap::Args)]
#[command(after_long_help = TABLE_HELP)]
pub struct TableArgs {
    /// Largest principal quantum number (1..=200).
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
    /// Requested absolute accuracy: |error| < 10^-D (5..=200).
    #[arg(long, value_name = "D", default_value_t = 20, value_parser = crate::args::digits_parser())]
    pub digits: u32,
    /// Method.
    #[arg(long, default_value_t = MethodChoice::Green, value_parser = crate::args::method_parser())]
    pub method: MethodChoice,
    /// Dipole form of the spectral method.
    #[arg(long, default_value_t = Gauge::Velocity, value_parser = crate::args::gauge_parser())]
    pub gauge: Gauge,
    /// Output format.
    #[arg(long, value_enum, default_value_t = Format::Csv)]
    pub format: Format,
    /// Same as `--format json`.
    #[arg(long, conflicts_with = "format")]
    pub json: bool,
    /// Output file (default: standard output, written when the run ends).
    #[arg(long, value_name = "FILE")]
    pub out: Option<PathBuf>,
    /// Worker threads (default: the number of CPUs).
    #[arg(long, value_name = "T", value_parser = clap::value_parser!(u32).range(1..=4096))]
    pub threads: Option<u32>,
    /// Continue an interrupted run of the same command (needs --out).
    #[arg(long, requires = "out")]
    pub resume: bool,
    /// Replace an existing --out file instead of refusing.
    #[arg(long, conflicts_with = "resume")]
    pub force: bool,
    /// Compute only part K of M (1 <= K <= M), e.g. for a job array.
    #[arg(long, value_name = "K/M", value_parser = crate::args::shard_parser)]
    pub shard: Option<Shard>,
    /// Also write an SVG plot of ln k0 against n, one curve per l.
    #[arg(long, value_name = "FILE.svg")]
    pub plot: Option<PathBuf>,
    /// No progress bar.
    #[arg(long)]
    pub quiet: bool,
}

const TABLE_HELP: &str = "\
Output files:
  Without --resume or --force an existing --out file is never touched: the
  command refuses (exit 2). --force replaces it. --resume continues it.

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

Cluster recipe (Slurm job array; the same pattern works with any scheduler):
  #SBATCH --array=1-16
  #SBATCH --cpus-per-task=4
  OUT=part-${SLURM_ARRAY_TASK_ID}.csv
  kzero table --n-max 200 --digits 20 --threads 4 --quiet \\
      --shard ${SLURM_ARRAY_TASK_ID}/16 --out $OUT $([ -e $OUT ] && echo --resume)
  # after the array (for example with --dependency=afterok:<array job>):
  kzero merge part-*.csv --out table.csv
  A requeued task that finds its part file continues it with --resume.

Determinism:
  ln_k0 and abs_err do not depend on --threads, sharding or resuming. The
  seconds column is wall time.";

fn nonneg(v: i64, what: &str) -> Result<u32, AppError> {
    u32::try_from(v)
        .map_err(|_| AppError::BadInput(format!("{what} = {v}: must be a non-negative integer")))
}

/// The validated settings of a table command.
pub fn settings_from_args(a: &TableArgs) -> Result<TableSettings, AppError> {
    let max = kzero_bethe::settings::MAX_N;
    if a.n_max < 1 || a.n_max > i64::from(max) {
        return Err(AppError::BadInput(format!(
            "--n-max {}: must be in 1..={max}",
            a.n_max
        )));
    }
    if a.n_min < 1 || a.n_min > a.n_max {
        return Err(AppError::BadInput(format!(
            "--n-min {}: must be in 1..=--n-max ({})",
            a.n_min, a.n_max
        )));
    }
    let l = match (&a.l, a.l_max) {
        (Some(list), _) => {
            let mut v = Vec::new();
            for &x in list {
                v.push(nonneg(x, "--l")?);
            }
            v.sort_unstable();
            v.dedup();
            LSelect::List(v)
        }
        (None, Some(k)) => LSelect::Max(nonneg(k, "--l-max")?),
        (None, None) => LSelect::All,
    };
    let s = TableSettings {
        n_min: a.n_min as u32,
        n_max: a.n_max as u32,
        l,
        digits: a.digits,
        method: a.method,
        gauge: a.gauge,
    };
    if s.states().is_empty() {
        return Err(AppError::BadInput(
            "no state selected: every requested l is >= n".into(),
        ));
    }
    Ok(s)
}

/// Where the rows go while the run is in progress.
struct Journal {
    file: File,
    path: PathBuf,
}

impl Journal {
    fn append(&mut self, text: &str) -> Result<(), AppError> {
        self.file
            .write_all(text.as_bytes())
            .and_then(|_| self.file.flush())
            .map_err(|e| AppError::Other(format!("cannot write {}: {e}", self.path.display())))
    }
}

/// Runs `kzero table`.
pub fn run(a: &TableArgs) -> Result<(), AppError> {
    let settings = settings_from_args(a)?;
    let format = if a.json { Format::Json } else { a.format };
    interrupt::on_stop(stop_hint(a, format))?;
    let shard = a.shard.unwrap_or(Shard::WHOLE);
    let threads = a
        .threads
        .map(|t| t as usize)
        .unwrap_or_else(kzero_engine::default_threads);
    if let Some(p) = &a.plot {
        tablefile::check_output_folder(p, "--plot")?;
    }
    let requested = settings.states();
    let planned = plan(&requested, settings.digits, settings.method, shard);

    // Prepare the output (all checks before any work, nothing touched on refusal).
    let mut table = Table {
        prov: tablefile::new_provenance(threads, shard),
        settings: settings.clone(),
        shard,
        rows: Vec::new(),
        torn_at: None,
    };
    let mut journal: Option<Journal> = None;
    if let Some(out) = &a.out {
        tablefile::check_output_folder(out, "--out")?;
        let jpath = journal_path(out, format);
        // A file left by a run killed before its first row (empty, or a cut
        // header) is an empty journal: --resume starts the work on it.
        let loaded = if a.resume {
            load_for_resume(out, &jpath, format, &settings, shard)?
        } else {
            None
        };
        if let Some((loaded, from)) = loaded {
            check_resumable(&loaded, &from, &settings, shard, &planned)?;
            table.prov = loaded.prov.clone();
            table.rows = loaded.rows.clone();
            let mut j = open_journal_for_resume(&jpath, &from, &loaded)?;
            let when = provenance::utc_now();
            let cmd = provenance::command_line();
            j.append(&format!(
                "# resumed_utc: {when}\n# resumed_command: {cmd}\n"
            ))?;
            table.prov.push(("resumed_utc".into(), when));
            table.prov.push(("resumed_command".into(), cmd));
            journal = Some(j);
        } else {
            if !a.resume {
                for p in [out, &jpath] {
                    if p.exists() && !a.force {
                        return Err(AppError::BadInput(format!(
                            "{} already exists; use --resume to continue it or --force to replace it",
                            p.display()
                        )));
                    }
                }
            }
            let mut f = OpenOptions::new()
                .write(true)
                .create(true)
                .truncate(true)
                .open(&jpath)
                .map_err(|e| AppError::Other(format!("cannot create {}: {e}", jpath.display())))?;
            f.write_all(table.csv_header().as_bytes())
                .map_err(|e| AppError::Other(format!("cannot write {}: {e}", jpath.display())))?;
            journal = Some(Journal {
                file: f,
                path: jpath,
            });
        }
    }
    let done: std::collections::BTreeSet<(u32, u32)> =
        table.rows.iter().map(|r| (r.n, r.l)).collect();
    let todo: Vec<((u32, u32), f64)> = planned
        .iter()
        .filter(|(k, _)| !done.contains(k))
        .cloned()
        .collect();

    let outcome = compute_all(&todo, &settings, threads, a.quiet, &mut journal, &mut table)?;

    // Final output.
    table.sort();
    let complete = outcome.failures.is_empty();
    match (&a.out, format) {
        (Some(out), Format::Csv) => {
            drop(journal);
            tablefile::write_atomic(out, table.to_csv().as_bytes())?;
        }
        (Some(out), Format::Json) => {
            if complete {
                tablefile::write_atomic(out, table.to_json().as_bytes())?;
                if let Some(j) = journal.take() {
                    drop(j.file);
                    let _ = fs::remove_file(&j.path);
                }
            }
        }
        (None, Format::Csv) => output::print(&table.to_csv())?,
        (None, Format::Json) => output::print(&table.to_json())?,
    }
    if let Some(p) = &a.plot {
        plot::table_plot(&table.rows, p)?;
    }
    finish(outcome, a.out.as_deref(), format)
}

/// Journal file of an output: the CSV itself, or FILE.partial for JSON.
pub fn journal_path(out: &Path, format: Format) -> PathBuf {
    match format {
        Format::Csv => out.to_path_buf(),
        Format::Json => {
            let mut s = out.as_os_str().to_os_string();
            s.push(".partial");
            PathBuf::from(s)
        }
    }
}

/// Whether a file holds a JSON document (first non-blank byte `{`).
fn looks_like_json(path: &Path) -> bool {
    fs::read(path)
        .ok()
        .and_then(|b| b.into_iter().find(|c| !c.is_ascii_whitespace()))
        == Some(b'{')
}

/// The table a `--resume` run continues and the file it came from, or `None`
/// when the journal holds no row yet (see [`tablefile::unstarted_journal`]):
/// then the run starts the work, as on an empty journal.
fn load_for_resume(
    out: &Path,
    jpath: &Path,
    format: Format,
    settings: &TableSettings,
    shard: Shard,
) -> Result<Option<(Table, PathBuf)>, AppError> {
    let unstarted = unstarted(jpath, settings, shard)?;
    match format {
        Format::Csv => {
            if unstarted {
                return Ok(None);
            }
            if looks_like_json(out) {
                return Err(AppError::BadInput(format!(
                    "--resume: {} is a JSON table; resume it with --format json",
                    out.display()
                )));
            }
            Ok(Some((tablefile::read_table(out)?, out.to_path_buf())))
        }
        Format::Json => {
            if jpath.exists() && !unstarted {
                if looks_like_json(jpath) {
                    return Err(AppError::BadInput(format!(
                        "--resume: {} is not a kzero CSV journal",
                        jpath.display()
                    )));
                }
                Ok(Some((tablefile::read_table(jpath)?, jpath.to_path_buf())))
            } else if out.exists() {
                if !looks_like_json(out) {
                    return Err(AppError::BadInput(format!(
                        "--resume --format json: {} is not a JSON table (resume a CSV table with --format csv)",
                        out.display()
                    )));
                }
                Ok(Some((tablefile::read_table(out)?, out.to_path_buf())))
            } else if unstarted {
                Ok(None)
            } else {
                Err(AppError::BadInput(format!(
                    "--resume: neither {} nor {} exists",
                    jpath.display(),
                    out.display()
                )))
            }
        }
    }
}

/// Whether `jpath` exists and holds no row yet. Bad input when the header
/// it got to write names other settings or another shard than the command.
fn unstarted(jpath: &Path, settings: &TableSettings, shard: Shard) -> Result<bool, AppError> {
    let Ok(bytes) = fs::read(jpath) else {
        return Ok(false);
    };
    let Some(pairs) = tablefile::unstarted_journal(&bytes) else {
        return Ok(false);
    };
    let mine = settings.pairs();
    let mut diffs = Vec::new();
    for (k, v) in &pairs {
        if let Some(sk) = k.strip_prefix("setting.") {
            if let Some((_, want)) = mine.iter().find(|(m, _)| *m == sk) {
                if v != want {
                    diffs.push(format!("{sk} ({v} vs {want})"));
                }
            }
        } else if k == "shard" && *v != shard.to_string() {
            diffs.push(format!("shard ({v} vs {shard})"));
        }
    }
    if !diffs.is_empty() {
        return Err(AppError::BadInput(format!(
            "--resume: {} was started with other settings: {}",
            jpath.display(),
            diffs.join(", ")
        )));
    }
    Ok(true)
}

fn check_resumable(
    t: &Table,
    from: &Path,
    settings: &TableSettings,
    shard: Shard,
    planned: &[((u32, u32), f64)],
) -> Result<(), AppError> {
    let diffs = t.settings.differences(settings);
    if !diffs.is_empty() {
        return Err(AppError::BadInput(format!(
            "--resume: {} has other settings: {}",
            from.display(),
            diffs.join(", ")
        )));
    }
    if t.shard != shard {
        return Err(AppError::BadInput(format!(
            "--resume: {} is shard {}, the command asks for shard {shard}",
            from.display(),
            t.shard
        )));
    }
    tablefile::check_same_build(t, from)?;
    let (keys, dup) = t.keys();
    if let Some((n, l)) = dup {
        return Err(AppError::BadInput(format!(
            "--resume: {} lists (n={n}, l={l}) twice",
            from.display()
        )));
    }
    let mine: std::collections::BTreeSet<(u32, u32)> = planned.iter().map(|(k, _)| *k).collect();
    if let Some((n, l)) = keys.iter().find(|k| !mine.contains(k)) {
        return Err(AppError::BadInput(format!(
            "--resume: {} holds (n={n}, l={l}), which is not part of shard {shard}",
            from.display()
        )));
    }
    Ok(())
}

fn open_journal_for_resume(jpath: &Path, from: &Path, loaded: &Table) -> Result<Journal, AppError> {
    let io = |e: std::io::Error| AppError::Other(format!("cannot write {}: {e}", jpath.display()));
    if from == jpath {
        let f = OpenOptions::new().write(true).open(jpath).map_err(io)?;
        if let Some(at) = loaded.torn_at {
            // Drop only the torn last line left by an interrupted write.
            f.set_len(at).map_err(io)?;
        }
        let mut f = OpenOptions::new().append(true).open(jpath).map_err(io)?;
        f.flush().map_err(io)?;
        Ok(Journal {
            file: f,
            path: jpath.to_path_buf(),
        })
    } else {
        // Resuming a finished JSON table: start a journal holding its rows.
        // (A journal already there holds no row: see `load_for_resume`.)
        let mut f = OpenOptions::new()
            .write(true)
            .create(true)
            .truncate(true)
            .open(jpath)
            .map_err(io)?;
        f.write_all(loaded.to_csv().as_bytes()).map_err(io)?;
        Ok(Journal {
            file: f,
            path: jpath.to_path_buf(),
        })
    }
}

/// What SIGINT or SIGTERM tells about continuing this run.
fn stop_hint(a: &TableArgs, format: Format) -> String {
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
    failures: Vec<((u32, u32), AppError)>,
    disagreements: Vec<String>,
}

fn compute_all(
    todo: &[((u32, u32), f64)],
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
    let request = Request {
        method: settings.method,
        gauge: settings.gauge,
        settings: Settings::with_digits(settings.digits),
    };
    let states: Vec<(u32, u32)> = todo.iter().map(|(k, _)| *k).collect();
    let mut fatal: Option<AppError> = None;
    let mut done_cost = 0.0;
    let mut done = 0usize;
    run_batch(&states, &request, threads, &|| false, &mut |i, r| {
        let ((n, l), c) = todo[i];
        done += 1;
        done_cost += c;
        let mut flow = Flow::Continue;
        match r {
            Ok(comp) => {
                if let (Some(agr), Some(g), Some(sp)) =
                    (comp.agreement(), comp.green(), comp.spectral())
                {
                    if !agr.consistent {
                        outcome.disagreements.push(format!(
                            "(n={n}, l={l}): green {} +- {} and spectral {} +- {} differ beyond their error estimates ({} agreeing digits)",
                            g.value_string(),
                            g.abs_err_string(),
                            sp.value_string(),
                            sp.abs_err_string(),
                            agr.digits
                        ));
                    }
                }
                let row = Row::from_computed(&comp, settings.method);
                if let Some(j) = journal.as_mut() {
                    if let Err(e) = j.append(&row.csv_line()) {
                        flow = Flow::Stop;
                        if fatal.is_none() {
                            fatal = Some(e);
                        }
                    }
                }
                table.rows.push(row);
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

fn finish(outcome: Outcome, out: Option<&Path>, format: Format) -> Result<(), AppError> {
    for d in &outcome.disagreements {
        eprintln!("kzero: methods disagree at {d}");
    }
    let mut failures = outcome.failures;
    failures.sort_by_key(|(k, _)| *k);
    if let Some(((n, l), first)) = failures.first() {
        let hint = match (out, format) {
            (Some(o), Format::Json) => format!(
                "; rows so far kept in {}, rerun with --resume",
                journal_path(o, format).display()
            ),
            (Some(_), Format::Csv) => {
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
