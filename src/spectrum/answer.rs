//! One period's answer: built by a construction, or decided by the certified
//! solver, with its evidence checked and recorded as the store keeps it.

use std::path::PathBuf;
use std::sync::Arc;
use std::sync::atomic::AtomicU64;
use std::time::{Instant, SystemTime};

use super::{MAP_CHECK_POINTS, SweepConfig};
use crate::decide;
use crate::encode::EncodeOptions;
use crate::error::{Error, Result};
use crate::evidence::{Evidence, check_witness};
use crate::grid::Point;
use crate::question::{MapClass, Question};
use crate::report::Verdict;
use crate::solve::Limits;
use crate::solve::certified::Certified;
use crate::store::{self, Answer, AnswerStats, Backing, How, ProofRecord, RunLimits};
use crate::theory::{construct, construction_limit};
use crate::verify;

/// A period for the solver.
pub(super) struct Task {
    /// The question.
    pub question: Question,
    /// Where its proof goes in the store: absolute path, path relative to the store.
    pub proof: Option<(PathBuf, String)>,
}

/// Builds and checks the extension of `orbit` for `q`'s class on boxes of at
/// most [`MAP_CHECK_POINTS`] points; the number of points checked.
///
/// For topical questions both maps `check --map` checks: the unclamped
/// extension, topical on R^n (order-preserving, nonexpansive and
/// homogeneous on the grid, its values possibly outside the box), and its
/// clamp, an order-preserving nonexpansive map of the box into itself.
pub(super) fn map_check(q: &Question, orbit: &[Point]) -> Result<Option<u64>> {
    let grid = &q.grid;
    if grid.num_points() > MAP_CHECK_POINTS {
        return Ok(None);
    }
    let bounds = grid.ranges();
    let points = match q.class {
        MapClass::Nonexpansive => {
            let table = verify::extend(bounds, orbit)?;
            verify::check_map(&table, orbit)?.points_checked
        }
        MapClass::Topical => {
            let free = verify::extend_topical(bounds, orbit, false)?;
            let points = verify::check_topical_map(&free, orbit, true)?.points_checked;
            let clamped = verify::extend_topical(bounds, orbit, true)?;
            verify::check_topical_map(&clamped, orbit, false)?;
            points
        }
    };
    Ok(Some(points))
}

/// The answer by construction for `q` (which must have `p` at most the
/// class's [`construction_limit`]).
pub(super) fn constructed(
    q: &Question,
    options: &EncodeOptions,
    limits: &RunLimits,
    run_id: &str,
) -> Result<Answer> {
    let started = SystemTime::now();
    let t = Instant::now();
    let started_at = store::utc_timestamp(started);
    let mut a = Answer::unknown(q, options, *limits, How::Construction, run_id, started_at);
    let orbit = construct(&q.grid, q.class, q.period).ok_or_else(|| {
        Error::Question(format!(
            "period {} is above the construction limit {} of {} maps and cannot be constructed",
            q.period,
            construction_limit(&q.grid, q.class),
            q.class
        ))
    })?;
    let check = crate::evidence::check_orbit(q, &orbit)?;
    a.map_checked_points = map_check(q, &orbit)?;
    a.verdict = Verdict::Feasible;
    a.backing = Backing::CheckedOrbit;
    a.profile = Some(check.profile);
    a.orbit = Some(orbit);
    a.stats.seconds = t.elapsed().as_secs_f64();
    a.finished_at = store::utc_timestamp(SystemTime::now());
    Ok(a)
}

/// The answer of the certified solver for `task`; the solver counts its
/// conflicts into `conflicts` as it runs.
pub(super) fn solved(
    task: &Task,
    cfg: &SweepConfig,
    limits: &RunLimits,
    run_id: &str,
    conflicts: &Arc<AtomicU64>,
) -> Result<Answer> {
    let q = &task.question;
    let started = SystemTime::now();
    let t = Instant::now();
    let started_at = store::utc_timestamp(started);
    let mut a = Answer::unknown(q, &cfg.options, *limits, How::Solver, run_id, started_at);
    let mut backend = Certified {
        lrat: task.proof.as_ref().map(|(abs, _)| abs.clone()),
        ..Certified::default()
    };
    let solve_limits = Limits {
        time: cfg.time_limit,
        conflicts: Some(conflicts.clone()),
        ..Limits::default()
    };
    match decide::decide(
        q,
        &cfg.options,
        &mut backend,
        &solve_limits,
        cfg.max_clauses,
    ) {
        Ok(report) => {
            a.verdict = report.verdict;
            a.solver = Some(report.stats.solve.solver.clone());
            a.stats = AnswerStats {
                seconds: 0.0,
                encode_seconds: report.stats.size.encode_seconds,
                solve_seconds: report.stats.solve.seconds,
                conflicts: report.stats.solve.conflicts,
                variables: report.stats.size.variables,
                clauses: report.stats.size.clauses,
            };
            match report.verdict {
                Verdict::Feasible => {
                    let orbit = report.orbit.clone().unwrap_or_default();
                    // decide has checked it; checking again here costs little
                    // and keeps the stored evidence self-contained.
                    let w = check_witness(q, &report.options, &orbit, report.map.as_deref())?;
                    let check = w.orbit;
                    a.map_checked_points = match (&report.map, w.map) {
                        // Full map: the decoded map was checked on all of D.
                        (Some(map), Some(mc)) => {
                            a.map = Some(map.clone());
                            Some(mc.points_checked)
                        }
                        _ => map_check(q, &orbit)?,
                    };
                    a.profile = Some(check.profile);
                    a.orbit = Some(orbit);
                    a.backing = Backing::CheckedOrbit;
                }
                Verdict::Infeasible => match &report.certificate {
                    Evidence::CheckedProof(info) => {
                        let (file, sha256) = match (&task.proof, &info.lrat_file) {
                            (Some((abs, rel)), Some(_)) => {
                                let (digest, _) = store::sha256_file(abs)?;
                                (Some(rel.clone()), Some(digest))
                            }
                            _ => (None, None),
                        };
                        a.proof = Some(ProofRecord {
                            file,
                            sha256,
                            bytes: info.lrat_bytes,
                            steps: info.lrat.steps,
                            check_seconds: info.check_seconds,
                        });
                        a.backing = Backing::CheckedProof;
                    }
                    _ => a.backing = Backing::SolverClaim,
                },
                Verdict::Unknown => {
                    a.reason = report.reason.clone();
                }
            }
        }
        Err(e @ Error::TooLarge { .. }) => {
            a.reason = Some(e.to_string());
        }
        Err(e) => return Err(e),
    }
    a.stats.seconds = t.elapsed().as_secs_f64();
    a.finished_at = store::utc_timestamp(SystemTime::now());
    Ok(a)
}
