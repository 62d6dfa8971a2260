//! A hard period with too many whole profiles for one assembled proof,
//! decided as a split folder inside the store: the campaign of `split`,
//! `run-cube DIR all --jobs N` and `merge --store`, run by the sweep
//! itself, and resumable.
//!
//! Below [`SweepSplit::store_split_above`] whole profiles a hard period is
//! decided in memory ([`super::answer::in_cubes`]): one cube per whole
//! profile, every cube's proof lifted into one assembled proof of the whole
//! CNF, checked and kept. Above it that proof would take tens of gigabytes
//! and the run could not be resumed. So the sweep writes the split to
//! `STORE/splits/<key>/` (the layout of `split --layout compact`, about
//! [`SweepSplit::store_split_cubes`] cubes: whole profiles when they fit,
//! profile prefixes otherwise), solves its cubes in blocks on every thread
//! as `run-cube DIR all --jobs N` does (each refuted cube's proof checked
//! when it is written and kept with zstd), and, when every cube has a final
//! result, merges the folder ([`crate::split::run::merge`]: the coverage
//! proof and every cube's proof checked again). The answer is backed by the
//! folder ([`Backing::CheckedCubes`](crate::store::Backing::CheckedCubes),
//! recorded relative to the store), exactly as `merge --store` records a
//! campaign run by hand.
//!
//! A run that stops before the end (the time limit: no block starts after
//! it; a kill at any moment) keeps every cube result written so far, and
//! stores an *unknown* answer that says how far it got. Such an unknown is
//! always retried: the next sweep finds the folder, keeps its results
//! (a cube with a final result is not solved again), and goes on, with the
//! cube count the folder was written with (a different
//! [`SweepSplit::store_split_cubes`] applies to new splits only). Cubes can
//! also be run by hand or on a cluster meanwhile (`run-cube
//! STORE/splits/<key> A..B`): the sweep takes their results as its own,
//! since `merge` checks them all.

use std::path::Path;
use std::sync::atomic::{AtomicBool, Ordering};
use std::time::{Duration, Instant, SystemTime};

use super::SweepConfig;
#[cfg(doc)]
use super::SweepSplit;
use super::answer::{Probed, Task, merged_answer};
use crate::encode::Encoding;
use crate::error::Result;
use crate::progress::{Progress, duration_words, threads_words};
use crate::proof::lrat::compressed::FileEncoding;
use crate::report::{Strategy, Verdict};
use crate::split::auto::CubeTarget;
use crate::split::layout::LayoutChoice;
use crate::split::range::{BlockPlan, CubeEvent, RangeOptions, run_blocks, run_range};
use crate::split::run::{CubeStatus, RunOutcome, merge, pending_indices};
use crate::store::{self, Answer, How, RunLimits};

/// Cubes in a block: as many as an easy block solves in a few seconds
/// (200 easy prefix cubes of {−2,…,2}^4, p = 30, take about 2 s), so that
/// the time limit and the progress lines come often, and few enough that
/// the blocks of one hard cube's neighbours do not wait behind it.
pub const STORE_SPLIT_BLOCK: usize = 200;

/// Proof bytes after which a block's solver is replaced (as `run-cube
/// --max-proof-mb 1`, its default): a solver that has learnt much makes
/// every later cube's proof carry that derivation.
pub const STORE_SPLIT_CONE_BYTES: u64 = 1_000_000;

/// What the blocks of one run did.
#[derive(Default)]
struct Tally {
    /// Cubes with a final result (solved now or before).
    finished: usize,
    /// Cubes left unknown by their time limit.
    unknown: usize,
    /// Cubes whose run ended in an error recorded in their result.
    failed: Vec<usize>,
}

/// The answer for the hard period `task`, whose encoding is `enc`, by a
/// split folder in the store at `root` (see the module docs), within the
/// time the probe left.
///
/// # Errors
/// Writing or repairing the split folder (a folder of another question
/// under the same key is an error, not overwritten); errors of the blocks
/// that are not one cube's own; [`crate::error::Error::Contradiction`] with
/// a published theorem.
pub(super) fn in_store_split(
    task: &Task,
    cfg: &SweepConfig,
    enc: &Encoding,
    limits: &RunLimits,
    run_id: &str,
    probed: Probed,
    root: &Path,
) -> Result<Answer> {
    let q = &task.question;
    let split = cfg.split.clone().unwrap_or_default();
    let jobs = cfg.jobs.max(1);
    let t = Instant::now();
    let started_at = store::utc_timestamp(SystemTime::now());
    let key = store::key_for(q, &cfg.options);
    let rel = format!("{}/{key}", store::SPLITS_DIR);
    let dir = root.join(&rel);
    let label = format!("spectrum {}: p={}", q.grid, q.period);
    let mut progress = Progress::new(cfg.progress);
    // A split begun by an earlier run is taken up with the cube count it
    // was written with, whatever this run asks: its results are the work
    // done so far. `write_split` repairs it if files are missing.
    let earlier = crate::split::SplitManifest::read(&dir)
        .ok()
        .filter(|m| m.question == q.record());
    let target = earlier
        .as_ref()
        .map_or(split.store_split_cubes, |m| m.requested_cubes);
    progress.event(|| match &earlier {
        Some(m) => format!(
            "{label}: more than {} whole profiles; taking up the split of {} cubes in {}",
            split.store_split_above,
            m.cubes.len(),
            dir.display()
        ),
        None => format!(
            "{label}: more than {} whole profiles; splitting it into about {target} cubes in {} \
             (a later run goes on where this one stops)",
            split.store_split_above,
            dir.display()
        ),
    });
    let written = crate::split::write_split_encoded(
        &dir,
        q,
        enc,
        CubeTarget::Count(target),
        LayoutChoice::Fixed(crate::split::layout::SplitLayout::Compact),
    )?;
    let m = &written.manifest;
    let n = m.cubes.len();
    progress.event(|| {
        format!(
            "{label}: {n} cubes, the coverage proof ({} steps) checked; solving them in blocks \
             of {STORE_SPLIT_BLOCK} on {}",
            m.coverage.lrat_steps,
            threads_words(jobs)
        )
    });
    // The period's time limit counts the probe.
    let left = cfg
        .time_limit
        .map(|l| l.saturating_sub(Duration::from_secs_f64(probed.seconds)));
    let deadline = left.map(|l| t + l);
    let o = RangeOptions {
        time_limit: left,
        progress: crate::progress::ProgressMode::Off,
        external: split.handoff.as_ref().map(|h| h.solver.clone()),
        handoff_after: split.handoff.as_ref().map(|h| h.after),
        fresh_solver: false,
        certify: true,
        force: false,
        encoding: FileEncoding::Zstd,
        cone_bytes: STORE_SPLIT_CONE_BYTES,
    };
    let found = AtomicBool::new(false);
    let go_on = || !found.load(Ordering::SeqCst) && deadline.is_none_or(|d| Instant::now() < d);
    let plan = BlockPlan {
        jobs,
        block: STORE_SPLIT_BLOCK,
        progress: cfg.progress,
        label: &label,
        go_on: &go_on,
    };
    let mut tally = Tally::default();
    let all_ran = run_blocks(&dir, (0, n - 1), &o, &plan, |done| {
        for e in done.events {
            match e {
                CubeEvent::Outcome(outcome, _) => {
                    let r = match *outcome {
                        RunOutcome::Solved(r) | RunOutcome::AlreadyDone(r) => r,
                    };
                    match r.status {
                        CubeStatus::Feasible => {
                            found.store(true, Ordering::SeqCst);
                            tally.finished += 1;
                        }
                        CubeStatus::Infeasible => tally.finished += 1,
                        CubeStatus::Unknown => tally.unknown += 1,
                        CubeStatus::Error => tally.failed.push(r.index),
                    }
                }
                CubeEvent::Failed(index, _) => tally.failed.push(index),
            }
        }
        Ok(())
    })?;
    let complete = all_ran && tally.finished == n;
    let mut a = if complete || found.load(Ordering::SeqCst) {
        let mut report = merge(&dir, None, false, FileEncoding::Binary, cfg.progress, jobs)?;
        // A cube whose kept result the merge could not use (a proof that
        // no longer passes its check, a result file damaged since) would
        // otherwise stop every later run at the same place: it is solved
        // again, once, and the folder merged again.
        let redo: Vec<usize> = report.pending.iter().map(|p| p.index).collect();
        if report.verdict == Verdict::Unknown && !redo.is_empty() && go_on() {
            progress.event(|| {
                format!(
                    "{label}: the merge could not use the results of cubes {}; solving them again",
                    crate::split::index_ranges(&redo)
                )
            });
            let again = RangeOptions {
                force: true,
                ..o.clone()
            };
            for &index in &redo {
                run_range(&dir, index, index, &again, &mut |_| Ok(()))?;
            }
            report = merge(&dir, None, false, FileEncoding::Binary, cfg.progress, jobs)?;
        }
        match merged_answer(&dir, rel.clone(), &report, run_id)? {
            Ok(mut a) => {
                a.strategy = Some(Strategy {
                    probe_budget_seconds: split.probe.as_secs_f64(),
                    probe_budget_conflicts: None,
                    probe_seconds: probed.seconds,
                    probe_conflicts: probed.conflicts,
                    cubes: n,
                    cube_rule: m.split.rule.clone(),
                    threads: jobs,
                });
                a
            }
            Err(why) => unknown(task, cfg, limits, run_id, &started_at, why),
        }
    } else {
        // Cubes of blocks that did not start may have results from an
        // earlier run or from `run-cube` by hand.
        let finished = if all_ran {
            tally.finished
        } else {
            n - pending_indices(&dir)?.len()
        };
        let mut why = vec![format!(
            "{finished} of {n} cubes of the split {rel} in the store have a final result"
        )];
        if !all_ran {
            why.push(format!(
                "no block starts after the time limit ({})",
                duration_words(cfg.time_limit.unwrap_or_default().as_secs_f64())
            ));
        }
        if tally.unknown > 0 {
            why.push(format!(
                "{} cubes unknown at their time limit",
                tally.unknown
            ));
        }
        if !tally.failed.is_empty() {
            tally.failed.sort_unstable();
            why.push(format!(
                "cubes {} failed (their results say why)",
                crate::split::index_ranges(&tally.failed)
            ));
        }
        why.push("the next run goes on from there".into());
        unknown(task, cfg, limits, run_id, &started_at, why.join("; "))
    };
    a.limits = *limits;
    a.started_at = started_at;
    a.stats.seconds = probed.seconds + t.elapsed().as_secs_f64();
    a.stats.solve_seconds += probed.seconds;
    a.finished_at = store::utc_timestamp(SystemTime::now());
    Ok(a)
}

/// An unknown answer of a split in the store, for `why`; always retried
/// by the next sweep ([`How::Cubes`]).
fn unknown(
    task: &Task,
    cfg: &SweepConfig,
    limits: &RunLimits,
    run_id: &str,
    started_at: &str,
    why: String,
) -> Answer {
    let mut a = Answer::unknown(
        &task.question,
        &cfg.options,
        *limits,
        How::Cubes,
        run_id,
        started_at.to_string(),
    );
    a.reason = Some(why);
    a
}
