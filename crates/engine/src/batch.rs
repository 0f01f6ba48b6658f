//! Computing many states in parallel (rayon), with a cancellation hook
//! checked between states.
//!
//! [`run_batch`] hands each finished state to a receiver on the calling
//! thread, in completion order (a table front end writes its journal and
//! progress there); [`compute_states`] collects the results in (n, l) order,
//! the order of a finished table.

use crate::compute::{compute, cost, Computed};
use crate::error::EngineError;
use crate::method::MethodChoice;
use crate::shard::{plan_by, Key, Shard};
use kzero_bethe::{Gauge, Settings};
use std::panic::{self, AssertUnwindSafe};
use std::sync::atomic::{AtomicBool, AtomicUsize, Ordering};
use std::sync::mpsc;

/// What to compute for every state of a batch.
#[derive(Debug, Clone, PartialEq, Eq)]
pub struct Request {
    /// Method(s).
    pub method: MethodChoice,
    /// Dipole form of the spectral method.
    pub gauge: Gauge,
    /// Requested accuracy (absolute error below 10^-digits).
    pub settings: Settings,
}

impl Request {
    /// A request for `digits` with `method` and the velocity form.
    pub fn new(method: MethodChoice, digits: u32) -> Request {
        Request {
            method,
            gauge: Gauge::Velocity,
            settings: Settings::with_digits(digits),
        }
    }

    /// Computes one state (see [`compute`]).
    ///
    /// # Errors
    /// As [`compute`].
    pub fn compute(&self, n: u32, l: u32) -> Result<Computed, EngineError> {
        compute(n, l, self.method, self.gauge, &self.settings)
    }
}

/// The receiver's answer after each finished state.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub enum Flow {
    /// Keep going.
    Continue,
    /// Start no further state (states already running still finish and are
    /// still handed over).
    Stop,
}

/// How a batch ended.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub enum BatchEnd {
    /// Every state was computed (successfully or not).
    Finished,
    /// The cancellation hook said stop; some states were not started.
    Cancelled,
    /// The receiver said [`Flow::Stop`]; some states were not started.
    Stopped,
}

/// The number of threads to use when none is given: the number of CPUs.
pub fn default_threads() -> usize {
    std::thread::available_parallelism()
        .map(|n| n.get())
        .unwrap_or(1)
}

/// Runs `f`, turning a panic inside it into [`EngineError::Internal`], so
/// that one failing state cannot take a batch down.
///
/// # Errors
/// The error of `f`, or the caught panic.
pub fn catch_panic<T>(f: impl FnOnce() -> Result<T, EngineError>) -> Result<T, EngineError> {
    match panic::catch_unwind(AssertUnwindSafe(f)) {
        Ok(r) => r,
        Err(payload) => Err(EngineError::Internal {
            message: panic_message(payload.as_ref()),
        }),
    }
}

/// The first line of a caught panic's message (`"unknown cause"` when the
/// payload is not a string), for [`EngineError::Internal`].
pub fn panic_message(payload: &(dyn std::any::Any + Send)) -> String {
    let msg = payload
        .downcast_ref::<&str>()
        .map(|s| s.to_string())
        .or_else(|| payload.downcast_ref::<String>().cloned())
        .unwrap_or_else(|| "unknown cause".into());
    msg.lines().next().unwrap_or("").to_string()
}

/// Computes `states` in the given order on `threads` worker threads and
/// hands each result to `on_result(index into states, result)` on the
/// calling thread, in completion order.
///
/// `cancel` is called before each state is started; once it returns `true`
/// no further state starts (states already running finish and are handed
/// over). A panic inside one computation becomes
/// [`EngineError::Internal`] for that state only.
///
/// # Errors
/// [`EngineError::Threads`] if the worker threads cannot be started. The
/// errors of single states go to `on_result`.
pub fn run_batch(
    states: &[Key],
    request: &Request,
    threads: usize,
    cancel: &(dyn Fn() -> bool + Sync),
    on_result: &mut dyn FnMut(usize, Result<Computed, EngineError>) -> Flow,
) -> Result<BatchEnd, EngineError> {
    run_jobs(
        states,
        threads,
        cancel,
        &|n, l| request.compute(n, l),
        on_result,
    )
}

/// [`run_batch`] for any computation of one state: `job(n, l)` runs on the
/// worker threads, its results go to `on_result` on the calling thread, in
/// completion order, with the same cancellation, stop and panic rules
/// (a table of the dipole sums runs its states through this).
///
/// # Errors
/// [`EngineError::Threads`] if the worker threads cannot be started.
pub fn run_jobs<T: Send>(
    states: &[Key],
    threads: usize,
    cancel: &(dyn Fn() -> bool + Sync),
    job: &(dyn Fn(u32, u32) -> Result<T, EngineError> + Sync),
    on_result: &mut dyn FnMut(usize, Result<T, EngineError>) -> Flow,
) -> Result<BatchEnd, EngineError> {
    if states.is_empty() {
        return Ok(BatchEnd::Finished);
    }
    let threads = threads.max(1);
    let pool = rayon::ThreadPoolBuilder::new()
        .num_threads(threads)
        .build()
        .map_err(|e| EngineError::Threads {
            threads,
            message: e.to_string(),
        })?;
    let next = AtomicUsize::new(0);
    let stop = AtomicBool::new(false);
    let cancelled = AtomicBool::new(false);
    let (tx, rx) = mpsc::channel::<(usize, Result<T, EngineError>)>();
    let mut stopped = false;
    std::thread::scope(|s| {
        let (next, stop, cancelled, pool) = (&next, &stop, &cancelled, &pool);
        s.spawn(move || {
            pool.scope(|sc| {
                for _ in 0..threads {
                    let tx = tx.clone();
                    sc.spawn(move |_| loop {
                        if stop.load(Ordering::Relaxed) {
                            break;
                        }
                        if cancel() {
                            cancelled.store(true, Ordering::Relaxed);
                            break;
                        }
                        let i = next.fetch_add(1, Ordering::Relaxed);
                        let Some(&(n, l)) = states.get(i) else {
                            break;
                        };
                        let r = catch_panic(|| job(n, l));
                        if tx.send((i, r)).is_err() {
                            break;
                        }
                    });
                }
            });
            drop(tx);
        });
        for (i, r) in rx {
            if on_result(i, r) == Flow::Stop {
                stopped = true;
                stop.store(true, Ordering::Relaxed);
            }
        }
    });
    Ok(if stopped {
        BatchEnd::Stopped
    } else if cancelled.load(Ordering::Relaxed) && next.load(Ordering::Relaxed) < states.len() {
        BatchEnd::Cancelled
    } else {
        BatchEnd::Finished
    })
}

/// One state of a batch and its result (ln k0 unless another computation
/// ran, see [`compute_jobs`]).
#[derive(Debug)]
pub struct StateResult<T = Computed> {
    /// n.
    pub n: u32,
    /// l.
    pub l: u32,
    /// The computed value(s), or why there are none.
    pub result: Result<T, EngineError>,
}

/// The results of [`compute_states`] (or of [`compute_jobs`]).
#[derive(Debug)]
pub struct Batch<T = Computed> {
    /// One entry per finished state, sorted by (n, l) (the order of a
    /// finished table).
    pub results: Vec<StateResult<T>>,
    /// Whether every requested state was computed (false after a
    /// cancellation).
    pub complete: bool,
}

/// Computes every state of `states` (duplicates dropped) in parallel and
/// returns the results sorted by (n, l), the order of a finished `kzero
/// table`. The work is scheduled most expensive first (the shard plan of
/// the whole set), so the wall time does not depend on the input order.
///
/// `threads = None` uses [`default_threads`]. `cancel` is checked before
/// each state starts (for example a flag set by Ctrl-C); after a
/// cancellation the finished states are returned with `complete = false`.
///
/// # Accuracy
/// Values do not depend on the thread count, the order or the cancellation
/// (each state is computed on its own).
///
/// # Errors
/// [`EngineError::Threads`] only; the errors of single states are in
/// [`StateResult::result`].
pub fn compute_states(
    states: &[Key],
    request: &Request,
    threads: Option<usize>,
    cancel: &(dyn Fn() -> bool + Sync),
) -> Result<Batch, EngineError> {
    let (digits, method) = (request.settings.digits, request.method);
    compute_jobs(
        states,
        threads,
        cancel,
        &|(n, l)| cost(n, l, digits, method),
        &|n, l| request.compute(n, l),
    )
}

/// [`compute_states`] for any computation of one state: `job(n, l)` for
/// every state of `states` (duplicates dropped), scheduled most expensive
/// first by `cost_of` (the shard plan of the whole set, [`plan_by`]), the
/// results sorted by (n, l). Cancellation and panics as in
/// [`compute_states`] (the dipole sums of many states run through it:
/// [`crate::sums::compute_sums_states`]).
///
/// # Errors
/// [`EngineError::Threads`] only; the errors of single states are in
/// [`StateResult::result`].
pub fn compute_jobs<T: Send>(
    states: &[Key],
    threads: Option<usize>,
    cancel: &(dyn Fn() -> bool + Sync),
    cost_of: &(dyn Fn(Key) -> f64 + Sync),
    job: &(dyn Fn(u32, u32) -> Result<T, EngineError> + Sync),
) -> Result<Batch<T>, EngineError> {
    let mut unique = states.to_vec();
    unique.sort_unstable();
    unique.dedup();
    let order: Vec<Key> = plan_by(&unique, cost_of, Shard::WHOLE)
        .into_iter()
        .map(|(k, _)| k)
        .collect();
    let mut results = Vec::with_capacity(order.len());
    let end = run_jobs(
        &order,
        threads.unwrap_or_else(default_threads),
        cancel,
        job,
        &mut |i, r| {
            let (n, l) = order[i];
            results.push(StateResult { n, l, result: r });
            Flow::Continue
        },
    )?;
    results.sort_by_key(|r| (r.n, r.l));
    Ok(Batch {
        complete: end == BatchEnd::Finished && results.len() == order.len(),
        results,
    })
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn results_come_sorted_and_do_not_depend_on_threads() {
        let states = [(3, 1), (1, 0), (2, 1), (2, 0), (3, 1)];
        let req = Request::new(MethodChoice::Green, 10);
        let never = || false;
        let a = compute_states(&states, &req, Some(1), &never).unwrap();
        let b = compute_states(&states, &req, Some(2), &never).unwrap();
        assert!(a.complete && b.complete);
        let keys: Vec<Key> = a.results.iter().map(|r| (r.n, r.l)).collect();
        assert_eq!(keys, [(1, 0), (2, 0), (2, 1), (3, 1)]);
        for (x, y) in a.results.iter().zip(&b.results) {
            let (x, y) = (
                x.result.as_ref().unwrap().primary(),
                y.result.as_ref().unwrap().primary(),
            );
            assert_eq!(x.value_string(), y.value_string());
            assert_eq!((x.bits, x.nodes), (y.bits, y.nodes));
        }
    }

    #[test]
    fn cancellation_stops_before_the_next_state() {
        let states: Vec<Key> = (1..=6).flat_map(|n| (0..n).map(move |l| (n, l))).collect();
        let req = Request::new(MethodChoice::Green, 8);
        let b = compute_states(&states, &req, Some(1), &|| true).unwrap();
        assert!(!b.complete);
        assert!(b.results.is_empty());
        // The hook says stop at its second call: one thread runs exactly
        // one state.
        let calls = AtomicUsize::new(0);
        let mut got = 0;
        let end = run_batch(
            &states,
            &req,
            1,
            &|| calls.fetch_add(1, Ordering::Relaxed) >= 1,
            &mut |_, r| {
                assert!(r.is_ok());
                got += 1;
                Flow::Continue
            },
        )
        .unwrap();
        assert_eq!(end, BatchEnd::Cancelled);
        assert_eq!(got, 1);
    }

    #[test]
    fn a_bad_state_fails_alone() {
        let req = Request::new(MethodChoice::Green, 8);
        let b = compute_states(&[(1, 0), (2, 5)], &req, Some(2), &|| false).unwrap();
        assert!(b.results[0].result.is_ok());
        assert!(b.results[1].result.is_err());
    }
}
