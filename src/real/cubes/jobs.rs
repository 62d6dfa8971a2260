//! `decide --real --jobs`: the cubes of a real-space split solved on
//! threads in this process.
//!
//! [`decide_jobs`] writes a split folder ([`super::write_split`]; the
//! coverage proof checked), runs [`super::run::run_cube`] for every cube on
//! the threads of a [`crate::pool`], and then [`super::run::merge`]s the
//! folder, which checks everything again. So the answer is exactly what
//! `split`, `run-cube` for every index and `merge` would give, and the
//! folder is its certificate. Once a cube is feasible, the running
//! searches stop and no new cube starts.

use std::path::Path;
use std::sync::Arc;
use std::sync::atomic::{AtomicBool, Ordering};
use std::time::{Duration, Instant};

use serde::Serialize;

use super::run::{RealMergeReport, RealRunOutcome, merge, run_cube};
use super::write_split;
use crate::error::{Error, Result};
use crate::pool::{self, Event};
use crate::real::RealOptions;
use crate::split::run::CubeStatus;

/// What [`decide_jobs`] did, with the merged verdict.
#[derive(Clone, Debug, Serialize)]
pub struct RealJobsReport {
    /// The merge of every cube's result.
    pub merge: RealMergeReport,
    /// Threads.
    pub jobs: usize,
    /// Cubes asked for.
    pub requested_cubes: usize,
    /// Seconds to build the cubes and check their coverage.
    pub split_seconds: f64,
    /// Seconds (wall clock) of solving the cubes.
    pub cubes_seconds: f64,
    /// Seconds of the merge (re-checking everything).
    pub merge_seconds: f64,
}

impl RealJobsReport {
    /// The report for people: the merge's, with a line on the run.
    pub fn to_text(&self) -> String {
        format!(
            "{}strategy     {} cubes on {}: split {:.2} s, cubes {:.2} s, merge (every certificate re-checked) {:.2} s\n",
            self.merge.to_text(),
            self.merge.cubes,
            crate::progress::threads_words(self.jobs),
            self.split_seconds,
            self.cubes_seconds,
            self.merge_seconds
        )
    }
}

/// Decides the real question `(n, p)` in at least `cubes` cubes on `jobs`
/// threads, writing the split folder to `dir` (see the module
/// documentation). `time` bounds the whole run; `progress` gets a line of
/// text now and then (an empty text at the end).
///
/// # Errors
/// [`Error::Options`] for zero threads or cubes; as [`write_split`] and
/// [`merge`]. A cube whose search fails is recorded in its result and
/// listed as pending by the merge.
#[allow(clippy::too_many_arguments)]
pub fn decide_jobs(
    n: usize,
    p: usize,
    options: &RealOptions,
    jobs: usize,
    cubes: usize,
    dir: &Path,
    time: Option<Duration>,
    progress: &mut dyn FnMut(&str),
) -> Result<RealJobsReport> {
    if jobs == 0 || cubes == 0 {
        return Err(Error::Options(
            "a run in cubes needs at least one thread and one cube".into(),
        ));
    }
    let t0 = Instant::now();
    let deadline = time.map(|t| t0 + t);
    let m = write_split(dir, n, p, &options.skeleton, cubes)?;
    let split_seconds = t0.elapsed().as_secs_f64();
    let t1 = Instant::now();
    let stop = Arc::new(AtomicBool::new(false));
    let mut o = options.clone();
    o.stop = Some(stop.clone());
    let total = m.cubes.len();
    let (mut refuted, mut other) = (0usize, 0usize);
    pool::run(
        total,
        jobs,
        &stop,
        |i| {
            let left = deadline.map(|d| d.saturating_duration_since(Instant::now()));
            if left.is_some_and(|l| l.is_zero()) {
                return None;
            }
            run_cube(dir, i, &o, left, false, &mut |_| {}).ok()
        },
        |event, state| {
            if let Event::Finished(_, r) = &event {
                // a fresh split has no cut cubes
                let status = r.as_ref().and_then(|r| match r {
                    RealRunOutcome::Solved(r) | RealRunOutcome::AlreadyDone(r) => Some(r.status),
                    RealRunOutcome::Refined(_) => None,
                });
                match status {
                    Some(CubeStatus::Feasible) => stop.store(true, Ordering::SeqCst),
                    Some(CubeStatus::Infeasible) => refuted += 1,
                    _ => other += 1,
                }
            }
            if deadline.is_some_and(|d| Instant::now() >= d) {
                stop.store(true, Ordering::SeqCst);
            }
            progress(&format!(
                "R^{n} p = {p}: {} of {total} cubes done ({refuted} refuted, {other} other), {} running, {:.0} s",
                state.finished,
                state.running.len(),
                t0.elapsed().as_secs_f64()
            ));
        },
    );
    progress("");
    let cubes_seconds = t1.elapsed().as_secs_f64();
    let t2 = Instant::now();
    let merged = merge(dir, !options.certify, crate::progress::ProgressMode::Off)?;
    Ok(RealJobsReport {
        merge: merged,
        jobs,
        requested_cubes: cubes,
        split_seconds,
        cubes_seconds,
        merge_seconds: t2.elapsed().as_secs_f64(),
    })
}
