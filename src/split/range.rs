//! Running a range of cubes of a grid split in one process, and the blocks
//! of a range on several workers.
//!
//! [`run_range`] is what `run-cube DIR A..B` does: by default one bundled
//! solver holds the formula for the range and assumes one cube after
//! another ([`CubeRunner::run_sequence`]), each refuted cube keeping its
//! own checked proof; with a hand-off, the cubes that solver leaves open
//! after the hand-off time go, one by one, to the external solver, whose
//! proofs are checked as well. [`run_blocks`] cuts a range into blocks
//! ([`super::blocks_highest_first`]) and runs each block as [`run_range`]
//! does, on `jobs` threads: what a campaign does with one process per block
//! under GNU parallel, without a process (and a read of the manifest and
//! the formula) per block.
//!
//! Nothing here decides a verdict: every cube's result is written by
//! [`CubeRunner`] (a refutation only with a checked proof, unless the
//! caller asks for unchecked claims), and `merge` re-checks them all.

use std::path::Path;
use std::sync::atomic::{AtomicBool, AtomicUsize, Ordering};
use std::time::{Duration, Instant};

use super::run::{self as cube_run, CubeRunner, CubeStatus, RunOutcome, SequenceRun};
use crate::error::{Error, Result};
use crate::progress::{Progress, ProgressMode, duration_words, threads_words};
use crate::proof::lrat::compressed::FileEncoding;
use crate::solve::bundled::Bundled;
use crate::solve::certified::Certified;
use crate::solve::external::External;
use crate::solve::{Backend, Limits};

/// How [`run_range`] and [`run_blocks`] solve their cubes.
#[derive(Clone, Debug)]
pub struct RangeOptions {
    /// Time limit for each cube (for a handed-off cube: of its external run).
    pub time_limit: Option<Duration>,
    /// Progress of each solve, on stderr.
    pub progress: ProgressMode,
    /// The external solver, with its proof request when it must certify.
    /// Without `handoff_after` it solves every cube.
    pub external: Option<External>,
    /// Let the bundled solver try each cube this long first, and hand only
    /// the cubes it leaves open to `external`.
    pub handoff_after: Option<Duration>,
    /// A fresh bundled solver for each cube, instead of one for the range.
    pub fresh_solver: bool,
    /// Produce and check proofs (without it, the bundled solver's
    /// "unsatisfiable" is recorded as an unchecked claim).
    pub certify: bool,
    /// Solve again cubes that already have a final result.
    pub force: bool,
    /// How refuted cubes' proofs are kept.
    pub encoding: FileEncoding,
    /// One solver for the range: replace it after a cube whose proof has
    /// more bytes than this.
    pub cone_bytes: u64,
}

/// What [`run_range`] reports for each cube, as it is known.
#[derive(Debug)]
pub enum CubeEvent {
    /// The cube's outcome, with a note for its line (empty, or how long the
    /// bundled solver had it before the hand-off).
    Outcome(Box<RunOutcome>, String),
    /// The cube ended in an error recorded in its result (status `error`:
    /// a back-end that failed, a proof the checker rejected); the range
    /// goes on with its other cubes.
    Failed(usize, String),
}

/// Solves the cubes `first..=last` of the grid split in `dir` as `o` asks
/// and hands every cube's outcome to `emit` as soon as it is known (a cube
/// left open for the hand-off only once the external solver is done).
///
/// # Errors
/// A folder or manifest that cannot be read; errors that are not a single
/// cube's own (those are [`CubeEvent::Failed`]); `emit`'s errors.
pub fn run_range(
    dir: &Path,
    first: usize,
    last: usize,
    o: &RangeOptions,
    emit: &mut dyn FnMut(CubeEvent) -> Result<()>,
) -> Result<()> {
    let mut runner = CubeRunner::new(dir)?;
    run_range_with(&mut runner, dir, first, last, o, emit)
}

/// [`run_range`] with a runner of the split in `dir` that the caller keeps
/// from range to range: the manifest and the formula are read once (on a
/// split of a million cubes the manifest alone is about 1 s of reading and
/// 0.7 GB, more than a block of 200 easy cubes takes to solve).
fn run_range_with(
    runner: &mut CubeRunner<'_>,
    dir: &Path,
    first: usize,
    last: usize,
    o: &RangeOptions,
    emit: &mut dyn FnMut(CubeEvent) -> Result<()>,
) -> Result<()> {
    let limits = Limits {
        time: o.time_limit,
        progress: o.progress,
        ..Limits::default()
    };
    // With a hand-off the bundled solver tries each cube first, within the
    // hand-off time (and the time limit, if shorter).
    let first_limits = o.handoff_after.map(|after| Limits {
        time: Some(o.time_limit.map_or(after, |t| t.min(after))),
        ..limits.clone()
    });
    runner.compress_proofs(o.encoding.compressed());
    let external_for = |index: usize| {
        o.external.clone().map(|mut e| {
            if let Some(p) = e.proof.as_mut() {
                p.keep_lrat = Some(cube_run::lrat_target(dir, index));
            }
            e
        })
    };
    let bundled_first = o.external.is_none() || first_limits.is_some();
    if !o.fresh_solver && o.certify && bundled_first {
        let run = SequenceRun {
            per_cube: first_limits.as_ref().map_or(limits.time, |l| l.time),
            format: o.encoding.format(),
            force: o.force,
            cone_bytes: o.cone_bytes,
        };
        let left = runner.run_sequence(first..=last, &run, |outcome| {
            let outcome = match outcome {
                Ok(outcome) => outcome,
                Err((index, e)) => return emit(CubeEvent::Failed(index, e.to_string())),
            };
            let open = matches!(outcome, RunOutcome::Solved(r) if r.status == CubeStatus::Unknown);
            if open && first_limits.is_some() {
                return Ok(());
            }
            emit(CubeEvent::Outcome(Box::new(outcome.clone()), String::new()))
        })?;
        if first_limits.is_none() {
            return Ok(());
        }
        for index in left {
            // Another process (a second run over the same range, or one
            // started by hand on the cube) may have settled it meanwhile;
            // the external solver's hours are not spent twice.
            let prior = cube_run::read_result(dir, index)?;
            if prior.as_ref().is_some_and(|r| r.status.is_final()) {
                continue;
            }
            let Some(mut ext) = external_for(index) else {
                break;
            };
            let after = prior.map_or(0.0, |r| r.seconds);
            let note = handed_off_note(after);
            let outcome = runner.run_after(index, &mut ext, &limits, true, Some(after));
            if let Some(outcome) = sift(dir, index, outcome, emit)? {
                emit(CubeEvent::Outcome(Box::new(outcome), note))?;
            }
        }
        return Ok(());
    }
    for index in first..=last {
        let mut external = external_for(index);
        let mut bundled = Bundled;
        let mut certified = Certified {
            lrat: Some(cube_run::lrat_target(dir, index)),
            drat: None,
            format: o.encoding.format(),
        };
        let mut note = String::new();
        let mut handed_off_after = None;
        if let Some(first_limits) = &first_limits {
            let own: &mut dyn Backend = if o.certify {
                &mut certified
            } else {
                &mut bundled
            };
            let outcome = runner.run(index, own, first_limits, o.force);
            let Some(outcome) = sift(dir, index, outcome, emit)? else {
                continue;
            };
            match outcome {
                RunOutcome::Solved(r) if r.status == CubeStatus::Unknown => {
                    note = handed_off_note(r.seconds);
                    handed_off_after = Some(r.seconds);
                }
                outcome => {
                    emit(CubeEvent::Outcome(Box::new(outcome), String::new()))?;
                    continue;
                }
            }
        }
        let backend: &mut dyn Backend = match (external.as_mut(), o.certify) {
            (Some(ext), _) => ext,
            (None, false) => &mut bundled,
            (None, true) => &mut certified,
        };
        // The bundled attempt's unknown is no final result, so this solves.
        let outcome = runner.run_after(index, backend, &limits, o.force, handed_off_after);
        if let Some(outcome) = sift(dir, index, outcome, emit)? {
            emit(CubeEvent::Outcome(Box::new(outcome), note))?;
        }
    }
    Ok(())
}

fn handed_off_note(after: f64) -> String {
    format!(" (handed off after {after:.2} s without an answer from the bundled solver)")
}

/// The outcome of cube `index`, or `None` after handing
/// [`CubeEvent::Failed`] to `emit` when it is an error recorded in the
/// cube's result; other errors stop the range.
fn sift(
    dir: &Path,
    index: usize,
    outcome: Result<RunOutcome>,
    emit: &mut dyn FnMut(CubeEvent) -> Result<()>,
) -> Result<Option<RunOutcome>> {
    match outcome {
        Ok(outcome) => Ok(Some(outcome)),
        Err(e) if cube_run::recorded_error(dir, index, &e) => {
            emit(CubeEvent::Failed(index, e.to_string()))?;
            Ok(None)
        }
        Err(e) => Err(e),
    }
}

/// `, ≈ T left at the rate so far` once some cubes are done. The highest
/// blocks, which run first, hold most of the hard cubes in the splits
/// measured so far ({−2,…,2}^4, p = 30: every cube that took more than
/// 10 s was in the top 4 %), so the estimate starts high and falls.
fn left_words(done: usize, total: usize, elapsed: f64) -> String {
    if done == 0 || done >= total {
        return String::new();
    }
    let left = elapsed * (total - done) as f64 / done as f64;
    format!(", ≈ {} left at the rate so far", duration_words(left))
}

/// One block of [`run_blocks`], done.
#[derive(Debug)]
pub struct BlockDone {
    /// Its first cube.
    pub first: usize,
    /// Its last cube.
    pub last: usize,
    /// What [`run_range`] reported for its cubes, in order.
    pub events: Vec<CubeEvent>,
}

/// How [`run_blocks`] schedules its blocks.
pub struct BlockPlan<'a> {
    /// Worker threads, at least one.
    pub jobs: usize,
    /// Cubes in a block, at least one.
    pub block: usize,
    /// One line per finished block and a status while blocks run.
    pub progress: ProgressMode,
    /// What the progress lines start with (`run-cube`, `spectrum p=54`).
    pub label: &'a str,
    /// Asked before each block starts: no block starts once it says no
    /// (a time limit, an answer found); the running ones finish.
    pub go_on: &'a (dyn Fn() -> bool + Sync),
}

/// Runs the cubes `first..=last` of the grid split in `dir` in blocks of
/// `plan.block` cubes, the highest block first, each as [`run_range`] with
/// `o`, on `plan.jobs` threads, and hands each finished block to `handle`
/// on the calling thread. Returns whether every block ran (none was left
/// out because [`BlockPlan::go_on`] said no).
///
/// # Errors
/// The first error of a block (other than a single cube's own, which is a
/// [`CubeEvent::Failed`]) or of `handle`; once there is one, no new block
/// starts, and the running ones finish.
pub fn run_blocks(
    dir: &Path,
    (first, last): (usize, usize),
    o: &RangeOptions,
    plan: &BlockPlan<'_>,
    mut handle: impl FnMut(BlockDone) -> Result<()>,
) -> Result<bool> {
    let (jobs, label) = (plan.jobs, plan.label);
    let blocks = super::blocks_highest_first(first, last, plan.block);
    let stop = AtomicBool::new(false);
    let left_out = AtomicBool::new(false);
    let mut progress = Progress::new(plan.progress);
    let started = Instant::now();
    let (mut done, total) = (0usize, last - first + 1);
    // Cubes finished inside blocks still running, so that the status line
    // moves while a block of slow cubes runs (a block is counted into
    // `done` when it finishes).
    let in_running = AtomicUsize::new(0);
    let mut broken: Option<Error> = None;
    // One runner per worker, kept from block to block.
    crate::pool::run_streams(
        blocks.len(),
        jobs,
        &stop,
        |pull, push| {
            let mut runner = None;
            loop {
                if !(plan.go_on)() {
                    left_out.store(true, Ordering::SeqCst);
                    break;
                }
                let Some(i) = pull() else { break };
                let (lo, hi) = blocks[i];
                let mut events = Vec::new();
                let r = match runner.as_mut() {
                    Some(r) => Ok(r),
                    None => CubeRunner::new(dir).map(|r| runner.insert(r)),
                }
                .and_then(|r| {
                    run_range_with(r, dir, lo, hi, o, &mut |e| {
                        events.push(e);
                        in_running.fetch_add(1, Ordering::SeqCst);
                        Ok(())
                    })
                });
                push(i, (events, r.err()));
            }
        },
        |event, state| {
            let crate::pool::Event::Finished(i, (events, err)) = event else {
                progress.status(|| {
                    let elapsed = started.elapsed().as_secs_f64();
                    let done = done + in_running.load(Ordering::SeqCst);
                    format!(
                        "{label}: {done} of {total} cubes done, {} of {} blocks running on {}, {}{}",
                        state.running.len(),
                        state.total,
                        threads_words(jobs),
                        duration_words(elapsed),
                        left_words(done, total, elapsed)
                    )
                });
                return;
            };
            let (lo, hi) = blocks[i];
            done += hi - lo + 1;
            in_running.fetch_sub(events.len(), Ordering::SeqCst);
            let handled = handle(BlockDone {
                first: lo,
                last: hi,
                events,
            });
            for e in [handled.err(), err].into_iter().flatten() {
                broken.get_or_insert(e);
                stop.store(true, Ordering::SeqCst);
            }
            progress.event(|| {
                format!(
                    "{label}: cubes {lo}..{hi} done; {done} of {total} cubes, {} of {} blocks, {}",
                    state.finished,
                    state.total,
                    duration_words(started.elapsed().as_secs_f64())
                )
            });
        },
    );
    progress.clear();
    match broken {
        Some(e) => Err(e),
        None => Ok(!left_out.load(Ordering::SeqCst)),
    }
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::encode::EncodeOptions;
    use crate::grid::Grid;
    use crate::question::Question;
    use crate::split::auto::CubeTarget;
    use crate::split::layout::{LayoutChoice, SplitLayout};
    use std::sync::atomic::AtomicUsize;

    /// A compact split of {−1,0,1}^3, p = 12 (infeasible: p ≤ 8 for n = 3,
    /// Lyons and Nussbaum 1992 [recalled]) in a fresh folder.
    fn split12(cubes: usize) -> (tempfile::TempDir, usize) {
        let tmp = tempfile::tempdir().unwrap();
        let q = Question::new(Grid::parse("-1..1", Some(3)).unwrap(), 12).unwrap();
        let w = crate::split::write_split(
            tmp.path(),
            &q,
            &EncodeOptions::default(),
            CubeTarget::Count(cubes),
            LayoutChoice::Fixed(SplitLayout::Compact),
            u64::MAX,
        )
        .unwrap();
        let n = w.manifest.cubes.len();
        (tmp, n)
    }

    fn options() -> RangeOptions {
        RangeOptions {
            time_limit: None,
            progress: ProgressMode::Off,
            external: None,
            handoff_after: None,
            fresh_solver: false,
            certify: true,
            force: false,
            encoding: FileEncoding::Zstd,
            cone_bytes: 1_000_000,
        }
    }

    /// `go_on` is asked before every block: saying no at once runs nothing
    /// and reports that blocks were left out; saying no after the first
    /// block leaves the rest pending; always yes runs every block, and the
    /// cubes then need no more work.
    #[test]
    fn the_estimate_scales_the_time_so_far() {
        assert_eq!(left_words(0, 10, 5.0), "");
        assert_eq!(left_words(10, 10, 5.0), "");
        assert_eq!(left_words(1, 5, 10.0), ", ≈ 40.0 s left at the rate so far");
    }

    #[test]
    fn blocks_stop_when_told_and_report_it() {
        let (tmp, n) = split12(16);
        assert!(n >= 4, "{n} cubes");
        let dir = tmp.path();
        let run = |go_on: &(dyn Fn() -> bool + Sync)| {
            let plan = BlockPlan {
                jobs: 1,
                block: 2,
                progress: ProgressMode::Off,
                label: "test",
                go_on,
            };
            let mut cubes = 0;
            let all = run_blocks(dir, (0, n - 1), &options(), &plan, |b| {
                cubes += b.events.len();
                Ok(())
            })
            .unwrap();
            (all, cubes)
        };
        assert_eq!(run(&|| false), (false, 0));
        assert_eq!(super::cube_run::pending_indices(dir).unwrap().len(), n);
        let asked = AtomicUsize::new(0);
        let once = || asked.fetch_add(1, Ordering::SeqCst) == 0;
        assert_eq!(run(&once), (false, 2));
        assert_eq!(super::cube_run::pending_indices(dir).unwrap().len(), n - 2);
        // The highest block ran first.
        let pending = super::cube_run::pending_indices(dir).unwrap();
        assert!(!pending.contains(&(n - 1)) && pending.contains(&0));
        assert_eq!(run(&|| true), (true, n));
        assert!(super::cube_run::pending_indices(dir).unwrap().is_empty());
    }
}
