//! A pool of worker threads for independent tasks: the periods of a sweep
//! (`spectrum`) and the cubes of `decide --jobs`.
//!
//! [`run`] starts `min(jobs, n)` scoped threads ([`run_streams`] too, for
//! workers that keep state from task to task, such as a solver). They take the tasks
//! `0..n` in index order, one at a time, and report to the calling thread
//! over a channel; the workers only compute. Everything with side effects —
//! storing an answer, checking it against a theorem, reporting progress —
//! happens on the calling thread, in the handler, one event at a time, so it
//! needs no locks. When nothing happens for a [`TICK`] the handler is called
//! with [`Event::Tick`], which is when progress is redrawn.
//!
//! Cancellation is one flag, `stop`: once it is set (by the handler, by a
//! worker, or by anyone else holding it) no task is started any more. A
//! task that is already running finishes, unless its work watches the flag
//! itself (the cube solvers' proof sinks do, and abort the solve). [`run`]
//! returns when every worker has finished, so a stopped pool still delivers
//! the result of every task it started.

use std::collections::BTreeMap;
use std::sync::atomic::{AtomicBool, AtomicUsize, Ordering};
use std::sync::mpsc;
use std::time::{Duration, Instant};

/// How long the calling thread waits for an event before it is handed
/// [`Event::Tick`].
pub const TICK: Duration = Duration::from_millis(250);

/// The number of cores (`std::thread::available_parallelism`), 1 if unknown.
pub fn default_jobs() -> usize {
    std::thread::available_parallelism().map_or(1, |n| n.get())
}

/// What the calling thread hears from the pool.
#[derive(Debug)]
pub enum Event<R> {
    /// A worker started task `i`.
    Started(usize),
    /// Task `i` finished with this result.
    Finished(usize, R),
    /// Nothing happened for a [`TICK`].
    Tick,
}

/// The state of a pool, as the handler sees it (already updated for the
/// event it is handed).
#[derive(Clone, Debug, Default)]
pub struct State {
    /// The tasks started and not finished, with the moments they started.
    pub running: BTreeMap<usize, Instant>,
    /// Tasks finished.
    pub finished: usize,
    /// Tasks not started (yet, or ever, once the pool is stopped).
    pub queued: usize,
    /// All tasks.
    pub total: usize,
}

/// Runs `work(i)` for every `i` in `0..n` on `min(jobs, n)` threads (at
/// least one), starting tasks in index order, and hands every event to
/// `handle` on the calling thread (see the module documentation). Returns
/// when every worker has finished.
///
/// # Panics
/// If `work` panics (after the other workers have finished).
pub fn run<R: Send>(
    n: usize,
    jobs: usize,
    stop: &AtomicBool,
    work: impl Fn(usize) -> R + Sync,
    handle: impl FnMut(Event<R>, &State),
) {
    run_streams(
        n,
        jobs,
        stop,
        |pull, push| {
            while let Some(i) = pull() {
                push(i, work(i));
            }
        },
        handle,
    );
}

/// As [`run`], for work that keeps state from one task to the next: each
/// worker calls `work` once, with `pull`, which hands it the next task
/// (`None` once every task is taken or `stop` is set), and `push`, which
/// reports a task's result. A worker must push every task it pulled.
/// The cube solvers use this to keep one solver per thread.
pub fn run_streams<R: Send>(
    n: usize,
    jobs: usize,
    stop: &AtomicBool,
    work: impl Fn(&mut dyn FnMut() -> Option<usize>, &mut dyn FnMut(usize, R)) + Sync,
    mut handle: impl FnMut(Event<R>, &State),
) {
    let next = AtomicUsize::new(0);
    let mut state = State {
        queued: n,
        total: n,
        ..State::default()
    };
    std::thread::scope(|scope| {
        let (tx, rx) = mpsc::channel::<Event<R>>();
        for _ in 0..jobs.max(1).min(n) {
            let tx = tx.clone();
            let (next, work) = (&next, &work);
            scope.spawn(move || {
                let mut pull = || {
                    if stop.load(Ordering::SeqCst) {
                        return None;
                    }
                    let i = next.fetch_add(1, Ordering::SeqCst);
                    if i >= n || tx.send(Event::Started(i)).is_err() {
                        return None;
                    }
                    Some(i)
                };
                let mut push = |i, r| {
                    let _ = tx.send(Event::Finished(i, r));
                };
                work(&mut pull, &mut push);
            });
        }
        drop(tx);
        deliver(&rx, &mut state, &mut handle);
    });
}

/// Hands the workers' events to `handle` until every worker has finished.
fn deliver<R>(
    rx: &mpsc::Receiver<Event<R>>,
    state: &mut State,
    handle: &mut impl FnMut(Event<R>, &State),
) {
    loop {
        let event = match rx.recv_timeout(TICK) {
            Ok(e) => e,
            Err(mpsc::RecvTimeoutError::Timeout) => Event::Tick,
            Err(mpsc::RecvTimeoutError::Disconnected) => break,
        };
        match &event {
            Event::Started(i) => {
                state.running.insert(*i, Instant::now());
                state.queued -= 1;
            }
            Event::Finished(i, _) => {
                state.running.remove(i);
                state.finished += 1;
            }
            Event::Tick => {}
        }
        handle(event, state);
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn every_streamed_task_runs_once_and_results_reach_the_caller() {
        for jobs in [1, 3, 20] {
            let stop = AtomicBool::new(false);
            let mut got = vec![None; 10];
            run_streams(
                10,
                jobs,
                &stop,
                |pull, push| {
                    // Each worker keeps a running total, as a solver keeps
                    // what it learned.
                    let mut seen = 0;
                    while let Some(i) = pull() {
                        seen += 1;
                        push(i, (i * i, seen));
                    }
                },
                |e, s| {
                    if let Event::Finished(i, (r, _)) = e {
                        assert!(got[i].replace(r).is_none(), "task {i} twice");
                        assert!(!s.running.contains_key(&i));
                    }
                },
            );
            let want: Vec<_> = (0..10).map(|i| Some(i * i)).collect();
            assert_eq!(got, want, "{jobs} jobs");
        }
    }

    #[test]
    fn every_task_runs_once_and_results_reach_the_caller() {
        for jobs in [1, 3, 20] {
            let stop = AtomicBool::new(false);
            let mut got = vec![None; 10];
            let mut started = 0;
            run(
                10,
                jobs,
                &stop,
                |i| i * i,
                |e, s| match e {
                    Event::Started(_) => started += 1,
                    Event::Finished(i, r) => {
                        assert!(got[i].replace(r).is_none(), "task {i} twice");
                        assert!(!s.running.contains_key(&i));
                    }
                    Event::Tick => {}
                },
            );
            assert_eq!(started, 10);
            assert_eq!(got, (0..10).map(|i| Some(i * i)).collect::<Vec<_>>());
        }
    }

    #[test]
    fn a_stopped_pool_starts_nothing_new_but_delivers_what_it_started() {
        // One worker; task 4 sets the flag, as a satisfiable cube does.
        let stop = AtomicBool::new(false);
        let mut finished = Vec::new();
        let mut last = State::default();
        let work = |i: usize| {
            if i == 4 {
                stop.store(true, Ordering::SeqCst);
            }
            i
        };
        run(100, 1, &stop, work, |e, s| {
            if let Event::Finished(i, _) = e {
                finished.push(i);
            }
            last = s.clone();
        });
        assert_eq!(finished, [0, 1, 2, 3, 4]);
        assert_eq!(last.finished, 5);
        assert_eq!(last.queued, 95);
        assert!(last.running.is_empty());
    }

    #[test]
    fn no_tasks_no_threads() {
        let stop = AtomicBool::new(false);
        run(
            0,
            4,
            &stop,
            |_| (),
            |_, _| panic!("no events without tasks"),
        );
    }
}
