//! One period's answer: built by a construction, or decided by the certified
//! solver, with its evidence checked and recorded as the store keeps it.

use std::path::PathBuf;
use std::sync::Arc;
use std::sync::atomic::AtomicU64;
use std::time::{Duration, Instant, SystemTime};

use super::{MAP_CHECK_POINTS, SweepConfig};
use crate::decide;
use crate::encode::EncodeOptions;
use crate::error::{Error, Result};
use crate::evidence::{Evidence, check_witness};
use crate::grid::Point;
use crate::proof::LratFormat;
use crate::question::{MapClass, Question};
use crate::report::{Report, Strategy, Verdict};
use crate::solve::Limits;
use crate::solve::certified::Certified;
use crate::split::auto::{AutoOptions, decide_auto_encoded};
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

/// What [`record_merge`] did with a merged split.
#[derive(Clone, Debug, PartialEq)]
pub enum Recorded {
    /// The answer was written to this file of the store.
    Written(PathBuf),
    /// A decided answer with the same verdict was already stored in this
    /// file, and was kept.
    Kept(PathBuf),
    /// Nothing was recorded, for the reason given: the merge is unknown, or
    /// some cube is refuted only on a solver's word.
    NotDecided(String),
}

/// Records the verdict of the split folder `dir`, merged into `report` by
/// [`crate::split::run::merge`], in the results store at `root` (created
/// when missing) by run `run_id`, so that a sweep of the same question and
/// options (its key is the manifest's question and options) reuses it: a
/// feasible verdict with its orbit (checked again here, with its box
/// extension on small boxes, as for any stored orbit), an infeasible one
/// backed by the folder ([`Backing::CheckedCubes`]: every later reuse
/// checks the manifest's SHA-256, and a full re-check merges the folder
/// again). The store refuses a verdict that contradicts a stored one or a
/// published theorem.
///
/// # Errors
/// [`Error::Contradiction`]; the errors of [`store::Store::open`] and
/// [`store::Store::put`]; a split folder whose manifest cannot be read.
pub fn record_merge(
    root: &std::path::Path,
    dir: &std::path::Path,
    report: &crate::split::run::MergeReport,
    run_id: &str,
) -> Result<Recorded> {
    let folder = std::path::absolute(dir).unwrap_or_else(|_| dir.to_path_buf());
    let a = match merged_answer(dir, folder.display().to_string(), report, run_id)? {
        Ok(a) => a,
        Err(why) => return Ok(Recorded::NotDecided(why)),
    };
    let mut s = store::Store::open(root)?;
    let path = s.answer_path(&a.key);
    Ok(match s.put(a)? {
        store::Put::Written => Recorded::Written(path),
        store::Put::Kept(_) => Recorded::Kept(path),
    })
}

/// The answer that `report`, the merge of the split folder `dir` by
/// [`crate::split::run::merge`], gives to the folder's question (run
/// `run_id`, [`How::Cubes`]): a feasible one with its orbit checked again
/// (and its box extension on small boxes), an infeasible one backed by the
/// folder, recorded as `folder` ([`Backing::CheckedCubes`]); or, as `Err`,
/// why the merge decides nothing the store keeps (it is unknown, or some
/// cube is refuted only on a solver's word).
///
/// # Errors
/// [`Error::Contradiction`] with a published theorem; a manifest that
/// cannot be read; a feasible orbit that fails its check.
pub(super) fn merged_answer(
    dir: &std::path::Path,
    folder: String,
    report: &crate::split::run::MergeReport,
    run_id: &str,
) -> Result<std::result::Result<Answer, String>> {
    use crate::split::run::MergeCertificate;
    let m = crate::split::SplitManifest::read(dir)?;
    let q = Question::from_record(&m.question)?;
    let limits = RunLimits {
        time_seconds: None,
        max_clauses: crate::encode::DEFAULT_MAX_CLAUSES,
    };
    let started_at = store::utc_timestamp(SystemTime::now());
    let mut a = Answer::unknown(&q, &m.options, limits, How::Cubes, run_id, started_at);
    // merge knows the solving summed over the cubes, not the wall time of
    // the campaign, which ran elsewhere and at other times.
    a.stats.solve_seconds = report.solve_seconds;
    a.stats.seconds = report.solve_seconds;
    match (report.verdict, &report.certificate) {
        (Verdict::Feasible, _) => {
            let Some(orbit) = report.orbit.clone() else {
                return Ok(Err("the feasible merge has no orbit".into()));
            };
            let w = check_witness(&q, &a.options, &orbit, report.map.as_deref())?;
            a.map_checked_points = match (&report.map, w.map) {
                (Some(map), Some(mc)) => {
                    a.map = Some(map.clone());
                    Some(mc.points_checked)
                }
                _ => map_check(&q, &orbit)?,
            };
            a.verdict = Verdict::Feasible;
            a.backing = Backing::CheckedOrbit;
            a.profile = Some(w.orbit.profile);
            a.orbit = Some(orbit);
        }
        (
            Verdict::Infeasible,
            MergeCertificate::CubeProofs { .. } | MergeCertificate::CombinedProof { .. },
        ) => {
            a.verdict = Verdict::Infeasible;
            a.backing = Backing::CheckedCubes;
            a.cubes = Some(store::CubesRecord {
                folder,
                manifest_sha256: crate::evidence::split_manifest_digest(dir)?,
                cubes: report.cubes as u64,
                coverage_steps: report.coverage.steps,
                solve_seconds: report.solve_seconds,
            });
        }
        (Verdict::Infeasible, _) => {
            return Ok(Err(
                "some cubes are refuted only on a solver's word, and the store keeps only \
                 checked verdicts"
                    .into(),
            ));
        }
        (Verdict::Unknown, _) => {
            return Ok(Err(format!(
                "the merge is unknown ({} of {} cubes without a usable result)",
                report.pending.len(),
                report.cubes
            )));
        }
    }
    if let Some(theorem) = crate::theory::theorem_conflict_for(&a.question, &q.grid, a.verdict) {
        return Err(Error::Contradiction {
            question: store::question_words(&a.question),
            first: theorem,
            second: format!("the merge of {} says {}", dir.display(), a.verdict.word()),
        });
    }
    a.finished_at = store::utc_timestamp(SystemTime::now());
    Ok(Ok(a))
}

/// What one solve of a period gave.
pub(super) enum Solved {
    /// An answer to record (possibly unknown).
    Answer(Box<Answer>),
    /// The probe gave no answer and the time limit leaves time, or a split
    /// of the period is begun in the store (then without a probe, whose
    /// figures are 0): the period is hard, and is decided later in cubes
    /// ([`in_cubes`]).
    Hard(Probed),
}

/// The probe of a hard period.
#[derive(Clone, Copy, Debug)]
pub(super) struct Probed {
    /// Seconds it ran, encoding included.
    pub seconds: f64,
    /// Conflicts it took.
    pub conflicts: u64,
    /// No probe was made: a split of the period is begun in the store
    /// ([`super::store_split::begun`]).
    pub begun: bool,
}

/// The answer of the certified solver for `task` in one solve, within the
/// probe when the sweep splits hard periods; the solver counts its
/// conflicts into `conflicts` as it runs.
pub(super) fn solved(
    task: &Task,
    cfg: &SweepConfig,
    limits: &RunLimits,
    run_id: &str,
    conflicts: &Arc<AtomicU64>,
) -> Result<Solved> {
    let q = &task.question;
    let started = SystemTime::now();
    let t = Instant::now();
    let started_at = store::utc_timestamp(started);
    let mut a = Answer::unknown(q, &cfg.options, *limits, How::Solver, run_id, started_at);
    // A split begun in the store says the period is hard: its probe was
    // made by the run that wrote it.
    if super::store_split::begun(cfg, q) {
        return Ok(Solved::Hard(Probed {
            seconds: 0.0,
            conflicts: 0,
            begun: true,
        }));
    }
    let mut backend = Certified {
        lrat: task.proof.as_ref().map(|(abs, _)| abs.clone()),
        ..Certified::default()
    };
    // Only a probe shorter than the time limit can leave a period hard.
    let probe = cfg
        .split
        .as_ref()
        .map(|s| s.probe)
        .filter(|&p| cfg.time_limit.is_none_or(|t| p < t));
    let solve_limits = Limits {
        time: probe.or(cfg.time_limit),
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
        Ok(report) if report.verdict == Verdict::Unknown && probe.is_some() => {
            return Ok(Solved::Hard(Probed {
                seconds: t.elapsed().as_secs_f64(),
                conflicts: conflicts.load(std::sync::atomic::Ordering::Relaxed),
                begun: false,
            }));
        }
        Ok(report) => record(&mut a, task, &report)?,
        Err(e @ Error::TooLarge { .. }) => {
            a.reason = Some(e.to_string());
        }
        Err(e) => return Err(e),
    }
    a.stats.seconds = t.elapsed().as_secs_f64();
    a.finished_at = store::utc_timestamp(SystemTime::now());
    Ok(Solved::Answer(Box::new(a)))
}

/// The answer for a hard period `task` ([`Solved::Hard`]): cubes on every
/// thread of the sweep, without a second probe
/// ([`crate::split::auto::decide_auto`]), within the time the probe left.
/// The proof assembled from the cubes' is checked by `decide_auto` and
/// kept in the store (binary LRAT, as such proofs are large).
pub(super) fn in_cubes(
    task: &Task,
    cfg: &SweepConfig,
    limits: &RunLimits,
    run_id: &str,
    conflicts: &Arc<AtomicU64>,
    probed: Probed,
) -> Result<Answer> {
    let q = &task.question;
    let split = cfg.split.clone().unwrap_or_default();
    let started = SystemTime::now();
    let t = Instant::now();
    let started_at = store::utc_timestamp(started);
    if let Some(root) = &cfg.store
        && super::store_split::begun(cfg, q)
    {
        return super::store_split::in_store_split(task, cfg, None, limits, run_id, probed, root);
    }
    let mut a = Answer::unknown(q, &cfg.options, *limits, How::Solver, run_id, started_at);
    // One encoding serves the count of the profiles and the cubes (on
    // {−1,0,1}^5 an encoding takes about a minute).
    let enc = match crate::encode::encode(q, &cfg.options, cfg.max_clauses) {
        Ok(enc) => enc,
        Err(e @ Error::TooLarge { .. }) => {
            a.reason = Some(e.to_string());
            a.stats.seconds = probed.seconds + t.elapsed().as_secs_f64();
            a.finished_at = store::utc_timestamp(SystemTime::now());
            return Ok(a);
        }
        Err(e) => return Err(e),
    };
    let encode_seconds = t.elapsed().as_secs_f64();
    if let Some(root) = &cfg.store
        && too_many_profiles(&enc, split.store_split_above)
    {
        return super::store_split::in_store_split(
            task,
            cfg,
            Some(&enc),
            limits,
            run_id,
            probed,
            root,
        );
    }
    let opts = AutoOptions {
        certify: true,
        jobs: cfg.jobs.max(1),
        probe: Duration::ZERO,
        probe_conflicts: None,
        lrat: task.proof.as_ref().map(|(abs, _)| abs.clone()),
        format: LratFormat::Binary,
        handoff: split.handoff.clone(),
    };
    let probe_time = Duration::from_secs_f64(probed.seconds);
    let solve_limits = Limits {
        time: cfg.time_limit.map(|l| l.saturating_sub(probe_time)),
        conflicts: Some(conflicts.clone()),
        progress: cfg.progress,
        ..Limits::default()
    };
    match decide_auto_encoded(q, &cfg.options, &enc, encode_seconds, &opts, &solve_limits) {
        Ok(report) => {
            record(&mut a, task, &report)?;
            a.strategy = report.strategy.map(|s| Strategy {
                probe_budget_seconds: split.probe.as_secs_f64(),
                probe_budget_conflicts: None,
                probe_seconds: probed.seconds,
                probe_conflicts: probed.conflicts,
                ..s
            });
            a.stats.solve_seconds += probed.seconds;
        }
        Err(e @ Error::TooLarge { .. }) => {
            a.reason = Some(e.to_string());
        }
        Err(e) => return Err(e),
    }
    a.stats.seconds = probed.seconds + t.elapsed().as_secs_f64();
    a.finished_at = store::utc_timestamp(SystemTime::now());
    Ok(a)
}

/// Whether the question of `enc`, in a profile formulation, has more than
/// `cap` whole profiles ([`crate::split::auto::full_profile_count`]; a walk
/// that stops at its work limit counts as more).
fn too_many_profiles(enc: &crate::encode::Encoding, cap: usize) -> bool {
    enc.options.formulation != crate::encode::Formulation::FullMap
        && crate::split::auto::full_profile_count(enc, cap).is_none()
}

/// Records in `a` what `report` (of the certified solver, for `task`)
/// found, with its evidence checked again and its proof's digest.
fn record(a: &mut Answer, task: &Task, report: &Report) -> Result<()> {
    let q = &task.question;
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
    Ok(())
}
