//! `decide --jobs K`: the cubes of an internal split, solved by `K` threads.
//!
//! The question is encoded once, split into cubes ([`super::cubes`])
//! and the coverage CNF refuted ([`super::refute_coverage`]); then `K`
//! threads of a [`crate::pool`] take cubes in index order and solve `F ∧ cube` with the bundled
//! solver. With certification (the default) each thread refutes its cube
//! through [`crate::solve::refute::solve_bundled`] (a binary LRAT proof in a
//! temporary file, checked by orbitcnf's checker against `F ∧ cube`), and
//! lifts it to a derivation of the cube's negation from `F`
//! ([`crate::proof::lift`]), streamed into another temporary file. When every
//! cube is refuted, the lifted proofs and the coverage proof are assembled
//! into one LRAT proof of `F` (written to a temporary file, in pieces), which
//! orbitcnf's checker must accept before the answer is "infeasible"; the report is then
//! the same as a monolithic `decide` (a checked LRAT proof of the very CNF
//! `encode` writes). A satisfiable cube's model is checked against every
//! clause and decoded into an orbit that is verified independently.
//!
//! With a hand-off ([`CubeHandoff`]) the bundled solver gets each cube for
//! a fixed time first; a cube it leaves open goes to an external solver,
//! whose proof (LRAT, or DRAT converted by `rate`) is checked by orbitcnf's
//! checker against `F ∧ cube` and lifted in the same way, so the assembled
//! proof does not care which solver refuted which cube.
//!
//! varisat 0.2.2 cannot be interrupted, but it aborts as soon as its proof
//! writer fails; the threads' proof sinks fail once another cube is found
//! satisfiable, so no thread keeps solving after the answer is known. Without
//! certification (`--no-certify`) there is no proof sink: running cubes then
//! finish, and no new cube is started.

use std::io;
use std::path::PathBuf;
use std::sync::Arc;
use std::sync::atomic::{AtomicBool, AtomicU64, Ordering};
use std::time::{Duration, Instant};

use tempfile::NamedTempFile;

use super::{Cube, coverage_cnf, coverage_sources, cubes as make_cubes, refute_coverage};
use crate::cnf::Cnf;
use crate::decide::witness;
use crate::encode::{EncodeOptions, Encoding, encode};
use crate::error::{Error, Result};
use crate::evidence::Evidence;
use crate::pool::{self, Event};
use crate::progress::{Progress, duration_words, threads_words};
use crate::proof::lift::{LiftedCube, assemble, lift_cube};
use crate::proof::spool::Spool;
use crate::proof::{LratFormat, LratOptions};
use crate::question::Question;
use crate::report::{Report, SizeStats, Verdict};
use crate::solve::bundled::Bundled;
use crate::solve::certified::Certified;
use crate::solve::external::External;
use crate::solve::refute::{ProofPlan, accept_proof, solve_bundled, temp_proof_file};
use crate::solve::{Backend, Limits, Outcome, SolveStats};

/// How [`decide_parallel`] runs.
#[derive(Clone, Debug)]
pub struct JobsOptions {
    /// Threads, at least 1.
    pub jobs: usize,
    /// Cubes to aim for ([`super::profile_cubes`] makes at least this many
    /// unless the profile runs out).
    pub cubes: usize,
    /// Produce and check proofs (the default), or take the solver's word.
    pub certify: bool,
    /// Where to write the assembled LRAT proof of an infeasible answer.
    pub lrat: Option<PathBuf>,
    /// The encoding of the assembled proof written to `lrat`; a proof that
    /// is only checked, not kept, is binary.
    pub format: LratFormat,
    /// Cubes the bundled solver leaves open this long go to an external
    /// solver ([`CubeHandoff`]).
    pub handoff: Option<CubeHandoff>,
}

/// A hand-off of hard cubes: the bundled solver tries each cube for
/// `after`; a cube it leaves unknown (and time remains) goes to `solver`.
/// With certification the external solver must be asked for a proof
/// ([`External::proof`]): its LRAT proof (through `rate` for DRAT) is
/// checked against `F ∧ cube` and lifted like the bundled solver's, so a
/// handed-off cube is backed exactly as any other.
#[derive(Clone, Debug, PartialEq, Eq)]
pub struct CubeHandoff {
    /// The external solver, with its proof request.
    pub solver: External,
    /// The bundled solver's time on each cube before the hand-off.
    pub after: Duration,
}

impl JobsOptions {
    /// The default cube count for `jobs` threads: eight per thread, which
    /// keeps the threads busy to the end when cubes differ much in hardness.
    pub fn default_cubes(jobs: usize) -> usize {
        8 * jobs.max(1)
    }
}

enum CubeRun {
    Sat(Vec<bool>),
    Unsat(Option<(LiftedCube, NamedTempFile)>),
    Unknown(String),
    Failed(Error),
    /// What the external solver of a hand-off made of the cube.
    HandedOff(Box<CubeRun>),
}

impl CubeRun {
    /// The result in words, for progress lines.
    fn words(&self) -> String {
        match self {
            CubeRun::Sat(_) => "satisfiable".into(),
            CubeRun::Unsat(Some(_)) => "refuted, proof checked and lifted".into(),
            CubeRun::Unsat(None) => "refuted (no proof)".into(),
            CubeRun::Unknown(why) => format!("unknown: {why}"),
            CubeRun::Failed(e) => format!("failed: {e}"),
            CubeRun::HandedOff(r) => format!("handed off: {}", r.words()),
        }
    }

    /// The outcome itself, whoever found it.
    fn outcome(self) -> CubeRun {
        match self {
            CubeRun::HandedOff(r) => r.outcome(),
            r => r,
        }
    }
}

const NAME: &str = "varisat-0.2.2";

/// Decides `q` by solving the cubes of an internal split in parallel.
///
/// # Errors
/// As [`crate::decide::decide`]; a failed coverage check; a cube proof that
/// is rejected or cannot be lifted; an assembled proof that is rejected.
pub fn decide_parallel(
    q: &Question,
    options: &EncodeOptions,
    opts: &JobsOptions,
    limits: &Limits,
    max_clauses: u64,
) -> Result<Report> {
    if opts.jobs == 0 || opts.cubes == 0 {
        return Err(Error::Options(
            "a run in cubes needs at least one thread and one cube".into(),
        ));
    }
    let t0 = Instant::now();
    let enc = encode(q, options, max_clauses)?;
    let encode_seconds = t0.elapsed().as_secs_f64();
    let start = Instant::now();
    let cubes = make_cubes(&enc, opts.cubes)?;
    if cubes.is_empty() {
        // The profile exclusions leave no profile at all: the formula's
        // profile clauses alone are contradictory, which one solve finds at
        // once, and there is nothing to split (as `decide_auto` does).
        Progress::new(limits.progress).event(|| {
            "decide: no lex-leader profile survives the profile exclusions; one solve, no cubes"
                .to_string()
        });
        let mut backend = Certified::or_bundled(opts.certify, opts.lrat.clone(), opts.format);
        let backend: &mut dyn Backend = backend.as_mut();
        return crate::decide::decide_encoded(q, options, &enc, encode_seconds, backend, limits);
    }
    let run = CubesRun {
        enc: &enc,
        encode_seconds,
        cubes: &cubes,
        start,
        conflicts: Arc::new(AtomicU64::new(0)),
    };
    solve_cubes(q, &run, opts, limits)
}

/// An encoded question and its cubes, ready for [`solve_cubes`].
pub struct CubesRun<'a> {
    /// The encoding.
    pub enc: &'a Encoding,
    /// Seconds spent encoding, for the report.
    pub encode_seconds: f64,
    /// The cubes.
    pub cubes: &'a [Cube],
    /// When solving began: the time limit counts from here, and the report's
    /// solve time too (so a probe before the cubes is included).
    pub start: Instant,
    /// The conflict counter the threads add to (it may already hold the
    /// conflicts of a probe).
    pub conflicts: Arc<AtomicU64>,
}

/// Solves the cubes of `run` on `opts.jobs` threads within `limits.time`
/// (counted from `run.start`); certifies, assembles and reports as
/// [`decide_parallel`] does (`opts.cubes` is not used: the cubes are given).
///
/// # Errors
/// As [`decide_parallel`].
pub fn solve_cubes(
    q: &Question,
    run: &CubesRun<'_>,
    opts: &JobsOptions,
    limits: &Limits,
) -> Result<Report> {
    if opts.jobs == 0 || run.cubes.is_empty() {
        return Err(Error::Options(
            "a run in cubes needs at least one thread and one cube".into(),
        ));
    }
    let enc = run.enc;
    let cubes = run.cubes;
    let encode_seconds = run.encode_seconds;
    let start = run.start;
    let deadline = limits.time.map(|t| start + t);
    let coverage = coverage_cnf(enc, cubes);
    let coverage_proof = refute_coverage(enc, &coverage)?;
    let n = cubes.len();
    let stop = AtomicBool::new(false);
    let conflicts = run.conflicts.clone();
    let mut runs: Vec<Option<CubeRun>> = (0..n).map(|_| None).collect();
    let threads = opts.jobs.min(n);
    let mut progress = Progress::new(limits.progress);
    let state_words = |s: &pool::State| {
        format!(
            "{}/{n} cubes done, {} running on {}, {}, {} conflicts",
            s.finished,
            s.running.len(),
            threads_words(threads),
            duration_words(start.elapsed().as_secs_f64()),
            conflicts.load(Ordering::Relaxed)
        )
    };
    let mut handed_off = 0usize;
    // Each refuted cube's lifted proof moves into one spool as it comes in,
    // so that open files do not grow with the number of cubes
    // (`proof::spool`); `slots[i]` is where cube i's went.
    let mut spool = if opts.certify {
        Some(Spool::new(opts.lrat.as_deref())?)
    } else {
        None
    };
    let mut slots: Vec<Option<usize>> = vec![None; n];
    let handler = |event: Event<CubeRun>, state: &pool::State| match event {
        Event::Finished(i, run) => {
            progress.event(|| {
                format!(
                    "decide: cube {i} ({}) {}; {}",
                    cubes[i].describe(),
                    run.words(),
                    state_words(state)
                )
            });
            if matches!(run, CubeRun::HandedOff(_)) {
                handed_off += 1;
            }
            let mut run = run.outcome();
            if let (CubeRun::Unsat(Some((lc, tmp))), Some(spool)) = (&run, spool.as_mut()) {
                let copied = tmp
                    .reopen()
                    .map_err(|e| Error::io(tmp.path(), e))
                    .and_then(|f| spool.append(*lc, io::BufReader::new(f)));
                run = match copied {
                    Ok(slot) => {
                        slots[i] = Some(slot);
                        CubeRun::Unsat(None)
                    }
                    Err(e) => CubeRun::Failed(e),
                };
            }
            runs[i] = Some(run);
            progress.status(|| format!("decide: {}", state_words(state)));
        }
        Event::Started(_) | Event::Tick => {
            progress.status(|| format!("decide: {}", state_words(state)));
        }
    };
    if opts.certify {
        // One solver per thread, reused from cube to cube (`proof::sequence`).
        let stream = |pull: &mut dyn FnMut() -> Option<usize>,
                      push: &mut dyn FnMut(usize, CubeRun)| {
            stream_cubes(
                &enc.cnf, cubes, deadline, opts, &stop, &conflicts, pull, push,
            );
        };
        pool::run_streams(n, threads, &stop, stream, handler);
    } else {
        let work = |i: usize| {
            let run = solve_cube(&enc.cnf, &cubes[i], deadline, opts, &stop, &conflicts);
            if matches!(run, CubeRun::Sat(_))
                || matches!(&run, CubeRun::HandedOff(r) if matches!(**r, CubeRun::Sat(_)))
            {
                stop.store(true, Ordering::Relaxed);
            }
            run
        };
        pool::run(n, threads, &stop, work, handler);
    }
    progress.clear();
    let size = SizeStats::of(&enc.cnf, enc.families.clone(), encode_seconds);
    let solver = format!(
        "{NAME}{}, {n} cubes on {}{}",
        if opts.certify {
            " (LRAT, one solver per thread)"
        } else {
            ""
        },
        threads_words(threads),
        match &opts.handoff {
            Some(h) => format!(
                "; {handed_off} handed off to external `{}` after {} each",
                h.solver.command.join(" "),
                duration_words(h.after.as_secs_f64())
            ),
            None => String::new(),
        }
    );
    let stats = |solver: String| SolveStats {
        solver,
        seconds: start.elapsed().as_secs_f64(),
        conflicts: Some(conflicts.load(Ordering::Relaxed)),
    };
    let report = |verdict, w, cert, reason, solver: String| {
        Report::new(
            q,
            &enc.options,
            verdict,
            w,
            cert,
            reason,
            size.clone(),
            stats(solver),
        )
    };
    // A satisfiable cube decides, whatever happened elsewhere.
    for (i, r) in runs.iter().enumerate() {
        if let Some(CubeRun::Sat(model)) = r {
            let cnf = super::run::cube_cnf(&enc.cnf, &cubes[i]);
            let w = witness(q, &enc.options, &cnf, &enc.map, model, "<memory>", None)?;
            let solver = format!("{solver}; orbit from cube {i} ({})", cubes[i].describe());
            return Ok(report(
                Verdict::Feasible,
                Some(w),
                Evidence::Witness,
                None,
                solver,
            ));
        }
    }
    let mut open = Vec::new();
    let mut why = None;
    for (i, r) in runs.into_iter().enumerate() {
        match r {
            Some(CubeRun::Failed(e)) => return Err(e),
            Some(CubeRun::Unsat(_)) => {}
            Some(CubeRun::Unknown(w)) => {
                why.get_or_insert(w);
                open.push(i);
            }
            Some(CubeRun::Sat(_) | CubeRun::HandedOff(_)) | None => open.push(i),
        }
    }
    if !open.is_empty() {
        let shown: Vec<String> = open.iter().take(10).map(|i| i.to_string()).collect();
        let reason = format!(
            "{} of {n} cubes undecided ({}{}): {}",
            open.len(),
            shown.join(" "),
            if open.len() > 10 { " …" } else { "" },
            why.unwrap_or_else(|| "not started".into())
        );
        return Ok(report(
            Verdict::Unknown,
            None,
            Evidence::None,
            Some(reason),
            solver,
        ));
    }
    if !opts.certify {
        let cert = Evidence::SolverClaim {
            solver: solver.clone(),
        };
        return Ok(report(Verdict::Infeasible, None, cert, None, solver));
    }
    let Some(mut spool) = spool else {
        return Err(Error::Solver {
            solver: NAME.into(),
            reason: "refuted cubes without their lifted proofs".into(),
        });
    };
    // Every cube is refuted with a proof here, so every slot is filled;
    // one missing would leave its negation underived and the check of the
    // assembled proof would reject it.
    let pieces = spool.sections(slots.iter().flatten().copied())?;
    let tmp = temp_proof_file(opts.lrat.as_deref())?;
    let out = io::BufWriter::new(tmp.reopen().map_err(|e| Error::io(tmp.path(), e))?);
    let sources = coverage_sources(enc);
    let cov = coverage_proof.open()?;
    let format = match opts.lrat {
        Some(_) => opts.format,
        None => LratFormat::Binary,
    };
    assemble(&enc.cnf, &sources, pieces, cov, out, format)?;
    drop(spool);
    let options = LratOptions {
        ids_follow_cnf: true,
        ..LratOptions::default()
    };
    let info = accept_proof(&enc.cnf, tmp, opts.lrat.as_deref(), &options)?.info;
    Ok(report(
        Verdict::Infeasible,
        None,
        Evidence::CheckedProof(info),
        None,
        solver,
    ))
}

/// Lifts a cube's checked LRAT proof (opened by `open`) to a derivation of
/// the cube's negation from `F`, in a temporary file.
fn lifted(
    f: &Cnf,
    cube: &Cube,
    opts: &JobsOptions,
    open: impl FnOnce() -> Result<std::fs::File>,
) -> CubeRun {
    let lift = || -> Result<(LiftedCube, NamedTempFile)> {
        let tmp = temp_proof_file(opts.lrat.as_deref())?;
        let out = io::BufWriter::new(tmp.reopen().map_err(|e| Error::io(tmp.path(), e))?);
        let src = io::BufReader::new(open()?);
        let lc = lift_cube(f, &cube.lits(), src, out, LratFormat::Binary)?;
        Ok((lc, tmp))
    };
    match lift() {
        Ok(l) => CubeRun::Unsat(Some(l)),
        Err(e) => CubeRun::Failed(e),
    }
}

/// Solves the cubes that `pull` hands out, one after another, with one
/// bundled solver under assumptions ([`crate::proof::sequence`]), and
/// pushes each cube's run: a refutation's proof is checked against the
/// cube's CNF and lifted, as a fresh solver's is; with a hand-off, a cube
/// left open after [`CubeHandoff::after`] goes to the external solver on
/// this thread before the next cube is pulled. A satisfiable cube sets
/// `stop`. Every pulled cube is pushed, the solver failing or not.
#[allow(clippy::too_many_arguments)]
fn stream_cubes(
    f: &Cnf,
    cubes: &[Cube],
    deadline: Option<Instant>,
    opts: &JobsOptions,
    stop: &AtomicBool,
    conflicts: &Arc<AtomicU64>,
    pull: &mut dyn FnMut() -> Option<usize>,
    push: &mut dyn FnMut(usize, CubeRun),
) {
    use crate::proof::sequence::{CubeAnswer, SequenceOptions, solve_in_sequence};
    let open = std::cell::RefCell::new(Vec::new());
    let pulled = std::iter::from_fn(|| {
        // Past the deadline every cube would end at once as unknown, but a
        // solve stopped at its deadline ends its solver's life, so each
        // would first load the whole formula into a fresh solver: on the
        // 8,098 cubes of {0,1,2,3}^4, p = 24 that kept a two-second time
        // limit running for minutes. Cubes not pulled count as not started.
        if deadline.is_some_and(|d| Instant::now() >= d) {
            return None;
        }
        let i = pull()?;
        open.borrow_mut().push(i);
        Some((i, cubes[i].lits()))
    });
    let seq = SequenceOptions {
        per_cube: opts.handoff.as_ref().map(|h| h.after),
        deadline,
        format: LratFormat::Binary,
        stop: Some(stop),
        cone_limit: crate::proof::sequence::CONE_LIMIT,
        cone_bytes: crate::proof::sequence::CONE_BYTES,
    };
    // The cubes' CNFs for the checker, in one buffer (`WithUnits`), as in
    // `run-cube`. Here the lifting and assembly of the proofs cost more: on
    // `--cubes 20000` for {−2,…,2}^4, p = 29 the copy made no measurable
    // difference (58–65 s wall either way, on a busy machine).
    let mut scratch = crate::cnf::WithUnits::new(f);
    let solved = solve_in_sequence(f, pulled, &seq, |i, s| {
        conflicts.fetch_add(s.conflicts, Ordering::Relaxed);
        open.borrow_mut().retain(|&j| j != i);
        let cube = &cubes[i];
        let run = match s.answer {
            CubeAnswer::Sat(m) => CubeRun::Sat(m),
            CubeAnswer::Unsat { proof, .. } => {
                match scratch.set(cube.lits()) {
                    Ok(cnf) => checked_and_lifted(f, cnf, cube, opts, &proof),
                    // The cubes come from this split of `f`; a stranger
                    // literal is a bug, reported as a failure, not a panic.
                    Err(l) => CubeRun::Failed(Error::Options(format!(
                        "cube {} has the literal {}, not a variable of the formula",
                        cube.index,
                        l.dimacs()
                    ))),
                }
            }
            CubeAnswer::Unknown(_) if stop.load(Ordering::Relaxed) => {
                CubeRun::Unknown("stopped: another cube is satisfiable".into())
            }
            CubeAnswer::Unknown(_) if deadline.is_some_and(|d| Instant::now() >= d) => {
                CubeRun::Unknown("time limit reached".into())
            }
            CubeAnswer::Unknown(why) => match &opts.handoff {
                Some(h) => {
                    let cnf = super::run::cube_cnf(f, cube);
                    CubeRun::HandedOff(Box::new(solve_cube_external(
                        f, &cnf, cube, deadline, opts, h,
                    )))
                }
                None => CubeRun::Unknown(why),
            },
        };
        if matches!(run, CubeRun::Sat(_))
            || matches!(&run, CubeRun::HandedOff(r) if matches!(**r, CubeRun::Sat(_)))
        {
            stop.store(true, Ordering::Relaxed);
        }
        push(i, run);
        Ok(true)
    });
    let left = open.take();
    if let Err(e) = solved {
        let mut e = Some(e);
        for i in left {
            let run = match e.take() {
                Some(e) => CubeRun::Failed(e),
                None => CubeRun::Unknown("not solved: the solver failed on an earlier cube".into()),
            };
            push(i, run);
        }
    } else {
        for i in left {
            push(i, CubeRun::Unknown("stopped".into()));
        }
    }
}

/// Checks the reused solver's proof of cube `cube` against the cube's CNF
/// `cnf` (`f` with the cube's units) with orbitcnf's checker, then lifts it.
fn checked_and_lifted(
    f: &Cnf,
    cnf: &Cnf,
    cube: &Cube,
    opts: &JobsOptions,
    proof: &[u8],
) -> CubeRun {
    let check = || -> Result<crate::solve::refute::CheckedProof> {
        let tmp = temp_proof_file(opts.lrat.as_deref())?;
        std::fs::write(tmp.path(), proof).map_err(|e| Error::io(tmp.path(), e))?;
        let options = LratOptions {
            ids_follow_cnf: true,
            ..LratOptions::default()
        };
        accept_proof(cnf, tmp, None, &options)
    };
    match check() {
        Ok(checked) => lifted(f, cube, opts, || checked.open()),
        Err(e) => CubeRun::Failed(e),
    }
}

/// Solves `F ∧ cube` within the deadline: with the bundled solver, and
/// with a hand-off ([`JobsOptions::handoff`]) then the external solver for
/// a cube the bundled one leaves open while time remains.
fn solve_cube(
    f: &Cnf,
    cube: &Cube,
    deadline: Option<Instant>,
    opts: &JobsOptions,
    stop: &AtomicBool,
    conflicts: &Arc<AtomicU64>,
) -> CubeRun {
    let now = Instant::now();
    let time = deadline.map(|d| d.saturating_duration_since(now));
    if time == Some(Duration::ZERO) {
        return CubeRun::Unknown("time limit reached before the cube was started".into());
    }
    let cnf = super::run::cube_cnf(f, cube);
    let Some(h) = &opts.handoff else {
        return solve_cube_bundled(f, &cnf, cube, deadline, opts, stop, conflicts);
    };
    let own = match deadline {
        Some(d) => d.min(now + h.after),
        None => now + h.after,
    };
    let run = solve_cube_bundled(f, &cnf, cube, Some(own), opts, stop, conflicts);
    let time_left = deadline.is_none_or(|d| Instant::now() < d);
    if !matches!(run, CubeRun::Unknown(_)) || stop.load(Ordering::Relaxed) || !time_left {
        return run;
    }
    CubeRun::HandedOff(Box::new(solve_cube_external(
        f, &cnf, cube, deadline, opts, h,
    )))
}

/// Solves `F ∧ cube` (`cnf`) with the external solver of a hand-off; with
/// certification its checked LRAT proof is lifted as the bundled solver's is.
fn solve_cube_external(
    f: &Cnf,
    cnf: &Cnf,
    cube: &Cube,
    deadline: Option<Instant>,
    opts: &JobsOptions,
    h: &CubeHandoff,
) -> CubeRun {
    let dir = match tempfile::tempdir() {
        Ok(d) => d,
        Err(e) => return CubeRun::Failed(Error::io("<temporary directory>", e)),
    };
    let kept = dir.path().join("cube.lrat");
    let mut ext = h.solver.clone();
    if let Some(p) = ext.proof.as_mut() {
        p.keep_lrat = Some(kept.clone());
    }
    let limits = Limits {
        time: deadline.map(|d| d.saturating_duration_since(Instant::now())),
        ..Limits::default()
    };
    let r = match ext.solve(cnf, &limits) {
        Ok(r) => r,
        Err(e) => return CubeRun::Failed(e),
    };
    match (r.outcome, r.proof) {
        (Outcome::Sat(m), _) => CubeRun::Sat(m),
        (Outcome::Unknown(w), _) => CubeRun::Unknown(w),
        (Outcome::Unsat, None) if !opts.certify => CubeRun::Unsat(None),
        (Outcome::Unsat, None) => CubeRun::Unknown(format!(
            "external `{}` answered UNSAT without a checked proof",
            h.solver.command.join(" ")
        )),
        (Outcome::Unsat, Some(_)) => lifted(f, cube, opts, || {
            std::fs::File::open(&kept).map_err(|e| Error::io(&kept, e))
        }),
    }
}

/// Solves `F ∧ cube` (`cnf`) with the bundled solver within the deadline;
/// with certification, through the one refutation path, then lifts the
/// checked proof.
fn solve_cube_bundled(
    f: &Cnf,
    cnf: &Cnf,
    cube: &Cube,
    deadline: Option<Instant>,
    opts: &JobsOptions,
    stop: &AtomicBool,
    conflicts: &Arc<AtomicU64>,
) -> CubeRun {
    let time = deadline.map(|d| d.saturating_duration_since(Instant::now()));
    let limits = Limits {
        time,
        conflicts: Some(conflicts.clone()),
        ..Limits::default()
    };
    if !opts.certify {
        return match Bundled.solve(cnf, &limits) {
            Ok(r) => match r.outcome {
                Outcome::Sat(m) => CubeRun::Sat(m),
                Outcome::Unsat => CubeRun::Unsat(None),
                Outcome::Unknown(w) => CubeRun::Unknown(w),
            },
            Err(e) => CubeRun::Failed(e),
        };
    }
    let plan = ProofPlan {
        format: LratFormat::Binary,
        ..ProofPlan::default()
    };
    let r = match solve_bundled(cnf, &limits, &plan, Some(stop)) {
        Ok(r) => r,
        Err(e) => return CubeRun::Failed(e),
    };
    match (r.outcome, r.proof) {
        (Outcome::Sat(m), _) => CubeRun::Sat(m),
        (Outcome::Unknown(_), _) if stop.load(Ordering::Relaxed) => {
            CubeRun::Unknown("stopped: another cube is satisfiable".into())
        }
        // The cube's own time was what remained of the run's; its limit in
        // seconds would mislead.
        (Outcome::Unknown(_), _) if deadline.is_some_and(|d| Instant::now() >= d) => {
            CubeRun::Unknown("time limit reached".into())
        }
        (Outcome::Unknown(w), _) => CubeRun::Unknown(w),
        (Outcome::Unsat, None) => CubeRun::Failed(Error::Solver {
            solver: NAME.into(),
            reason: "an UNSAT answer without its checked proof".into(),
        }),
        (Outcome::Unsat, Some(proof)) => lifted(f, cube, opts, || proof.open()),
    }
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::grid::Grid;
    use crate::report::Verdict;

    /// Once the time limit has passed no cube is started: before, every
    /// remaining cube was pulled, loaded into a fresh solver and ended as
    /// unknown at once, so a short limit on thousands of cubes ran for
    /// minutes. The reason names the first cube's; pulled cubes would say
    /// "time limit reached".
    #[test]
    fn no_cube_is_started_after_the_time_limit() {
        let q = Question::new(Grid::parse("-1..1", Some(4)).unwrap(), 18).unwrap();
        let opts = JobsOptions {
            jobs: 2,
            cubes: 200,
            certify: true,
            lrat: None,
            format: LratFormat::Binary,
            handoff: None,
        };
        let limits = Limits {
            time: Some(Duration::from_nanos(1)),
            ..Limits::default()
        };
        let r = decide_parallel(&q, &EncodeOptions::default(), &opts, &limits, 10_000_000).unwrap();
        assert_eq!(r.verdict, Verdict::Unknown);
        let why = r.reason.unwrap();
        assert!(why.ends_with(": not started"), "{why}");
    }
}
