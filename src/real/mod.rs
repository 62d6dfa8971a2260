//! Periods over all of R^n, with no grid: exact decisions with certificates.
//!
//! The question ([`decide`]): does `(R^n, ‖·‖∞)` hold an isometric p-cycle,
//! i.e. does some subset of R^n carry a sup-norm nonexpansive map with a
//! point of minimal period `p` (`docs/math.md` §1, §10;
//! `encodings/real-space.md`)?
//!
//! * [`skeleton`]: the propositional abstraction (which coordinate and sign
//!   attains each pair's distance), with sound redundant clauses and
//!   symmetry breaks (formulation [`skeleton::FORMULATION`]).
//! * [`theory`] and [`lp`]: exact linear arithmetic: difference constraints
//!   per coordinate under a candidate profile, negative cycles as cuts, and
//!   an exact simplex over the profile; conflicts come with Farkas
//!   multipliers.
//! * [`sat`]: a CDCL(T) core that learns from both, and logs LRAT.
//! * [`certificate`] and [`farkas_check`]: the certificate of an infeasible
//!   answer and its checkers, which share nothing with the search.
//!
//! A feasible answer is an integer orbit (docs/math.md §10: rational profile,
//! scaled to integers; shortest-path potentials per coordinate), checked by
//! [`crate::verify::check_orbit`]. An infeasible answer is returned only
//! after [`certificate::check_dir`] has accepted the certificate, unless
//! certification is switched off, in which case it says so.

pub mod bench;
pub mod bundle;
pub mod certificate;
pub mod cubes;
pub mod farkas_check;
pub mod lp;
pub mod prooflog;
mod report;
pub mod sat;
pub mod skeleton;
pub mod sweep;
pub mod theory;

#[cfg(test)]
mod tests;

use std::path::{Path, PathBuf};
use std::sync::Arc;
use std::sync::atomic::AtomicBool;
use std::time::{Duration, Instant};

use serde::Serialize;

use crate::error::{Error, Result};
use crate::varmap::Meaning;
use crate::verify::{OrbitCheck, check_orbit};
pub use certificate::CertificateCheck;
pub use sat::{Progress, SatStats};
pub use skeleton::SkeletonOptions;
pub use theory::TheoryStats;

/// Options of [`decide`].
#[derive(Clone, Debug, Default)]
pub struct RealOptions {
    /// Which optional skeleton families to use.
    pub skeleton: SkeletonOptions,
    /// Write and check a certificate for an infeasible answer. Default `true`
    /// (see [`RealOptions::new`]); without it an infeasible answer is the
    /// search's unchecked claim.
    pub certify: bool,
    /// Where to keep the certificate; `None` checks it in a temporary directory and drops it.
    pub certificate_dir: Option<PathBuf>,
    /// Start with the lemmas of every two-atom cycle ([`theory::Theory::pattern_lemmas`]).
    pub patterns: bool,
    /// Start with the order lemmas of the profile and the equilateral
    /// lemmas ([`theory::Theory::order_lemmas`]).
    pub order: bool,
    /// Hand the propositional endgame to an external solver; `None` (the
    /// default) searches with the bundled CDCL(T) only.
    pub handoff: Option<Handoff>,
    /// Set by someone else to end the search early (it then ends unknown):
    /// the threads of a run in cubes stop once one cube is feasible.
    pub stop: Option<Arc<AtomicBool>>,
}

/// After some internal search, let an external DIMACS solver refute the
/// skeleton plus the lemmas found, in a loop: a model it finds is examined by
/// the theory, which adds lemmas or confirms an orbit. Its DRAT proof is
/// converted to LRAT by `rate` and checked like any certificate.
#[derive(Clone, Debug)]
pub struct Handoff {
    /// The solver's command line, e.g. `cadical -q` (the CNF path and the
    /// proof path are appended).
    pub command: String,
    /// Internal search before the first hand-off.
    pub after: Duration,
}

impl RealOptions {
    /// Default skeleton, certification on, no kept certificate.
    pub fn new() -> RealOptions {
        RealOptions {
            skeleton: SkeletonOptions::default(),
            certify: true,
            certificate_dir: None,
            patterns: true,
            order: true,
            handoff: None,
            stop: None,
        }
    }
}

/// The answer of [`decide`].
#[derive(Clone, Debug, Serialize)]
pub enum RealAnswer {
    /// An isometric p-cycle in Z^n ⊂ R^n, checked by [`check_orbit`].
    Feasible {
        /// The points, each coordinate in `0..=max D`.
        orbit: Vec<Vec<i64>>,
        /// The independent check.
        check: OrbitCheck,
    },
    /// No isometric p-cycle in R^n.
    Infeasible {
        /// The certificate check, or `None` when certification was off (the
        /// search's claim only).
        check: Option<CertificateCheck>,
        /// Where the certificate was kept, if it was.
        dir: Option<PathBuf>,
    },
    /// No answer, with the reason.
    Unknown {
        /// Why.
        reason: String,
    },
}

/// A decision with its figures.
#[derive(Clone, Debug, Serialize)]
pub struct RealReport {
    /// Dimension.
    pub n: usize,
    /// Period.
    pub p: usize,
    /// The answer.
    pub answer: RealAnswer,
    /// Search counters.
    pub sat: SatStats,
    /// Theory counters.
    pub theory: TheoryStats,
    /// Lemmas found.
    pub lemmas: usize,
    /// Seconds of search.
    pub search_seconds: f64,
    /// Seconds writing and checking the certificate.
    pub check_seconds: f64,
    /// Calls of the external solver of a [`Handoff`] (0 without one).
    pub handoff_rounds: usize,
    /// Seconds in those calls (solving, proof conversion and checking).
    pub handoff_seconds: f64,
}

/// Decides whether `(R^n, ‖·‖∞)` holds an isometric p-cycle.
///
/// `time` bounds the search; `progress` is called about once a second.
///
/// # Errors
/// [`Error::Question`] for sizes out of range; [`Error::Check`] if a
/// feasible orbit fails the independent check; certificate errors if the
/// search's own certificate is rejected (never an answer then); I/O errors.
pub fn decide(
    n: usize,
    p: usize,
    options: &RealOptions,
    time: Option<Duration>,
    progress: &mut dyn FnMut(&Progress),
) -> Result<RealReport> {
    decide_cube(n, p, &[], options, time, progress)
}

/// As [`decide`], restricted to the cube `cube` (DIMACS literals over the
/// skeleton's variables, added as unit clauses after the skeleton's): a
/// feasible answer is an orbit of the whole question, an infeasible one
/// says only that no normalised cycle satisfies the cube. Its certificate
/// is checked with [`certificate::check_parts`] and the cube's literals
/// (`encodings/real-space.md` §9).
///
/// # Errors
/// As [`decide`]; [`Error::Question`] for a cube literal that is not a
/// skeleton variable, or a cube for period 1.
pub fn decide_cube(
    n: usize,
    p: usize,
    cube: &[i32],
    options: &RealOptions,
    time: Option<Duration>,
    progress: &mut dyn FnMut(&Progress),
) -> Result<RealReport> {
    let t0 = Instant::now();
    let mut report = RealReport {
        n,
        p,
        answer: RealAnswer::Unknown {
            reason: String::new(),
        },
        sat: SatStats::default(),
        theory: TheoryStats::default(),
        lemmas: 0,
        search_seconds: 0.0,
        check_seconds: 0.0,
        handoff_rounds: 0,
        handoff_seconds: 0.0,
    };
    if p == 1 && !cube.is_empty() {
        return Err(Error::Question(
            "period 1 has no skeleton, so no cubes".into(),
        ));
    }
    if p == 1 && (1..=skeleton::MAX_DIM).contains(&n) {
        let orbit = vec![vec![0; n]];
        let check = check_orbit(&vec![(0, 0); n], &orbit)?;
        report.answer = RealAnswer::Feasible { orbit, check };
        return Ok(report);
    }
    let sk = skeleton::build(n, p, &options.skeleton)?;
    let mut cnf = sk.cnf.clone();
    for &l in cube {
        if l == 0 || l.unsigned_abs() > sk.cnf.num_vars() {
            return Err(Error::Question(format!(
                "the cube literal {l} is not a variable of the skeleton (1..={})",
                sk.cnf.num_vars()
            )));
        }
        cnf.add_clause(&[crate::cnf::Lit::from_dimacs(l)]);
    }
    let mut atom = vec![None; sk.cnf.num_vars() as usize];
    for (v, m) in sk.map.iter() {
        if let Meaning::Tight { i, j, c } = *m {
            atom[v.index()] = Some(theory::Item::Tight(i, j, c));
        }
    }
    let th = theory::Theory::new(n, p);
    let mut solver = sat::Solver::new(&cnf, Some(th), atom, options.certify)?;
    solver.patterns = options.patterns;
    solver.order = options.order;
    solver.stop = options.stop.clone();
    let deadline = time.map(|t| t0 + t);
    let inner = match &options.handoff {
        Some(h) => Some(deadline.map_or(t0 + h.after, |d| d.min(t0 + h.after))),
        None => deadline,
    };
    let mut outcome = solver.solve(&cnf, inner, progress);
    let mut handed = None;
    if let (sat::SatOutcome::Unknown(_), Some(h)) = (&outcome, &options.handoff)
        && deadline.is_none_or(|d| Instant::now() < d)
    {
        let (o, dir) = handoff(&mut solver, &sk, &cnf, h, options, deadline, &mut report)?;
        outcome = o;
        handed = dir;
    }
    report.search_seconds = t0.elapsed().as_secs_f64();
    report.sat = solver.stats.clone();
    report.lemmas = solver.lemmas().len();
    if let Some(th) = solver.theory() {
        report.theory = th.stats.clone();
    }
    report.answer = match outcome {
        sat::SatOutcome::Unknown(reason) => {
            if let Some(d) = &options.certificate_dir {
                // the lemmas found so far, for inspection (no proof: there is no refutation)
                std::fs::create_dir_all(d).map_err(|e| Error::io(d, e))?;
                let path = d.join(certificate::LEMMAS);
                let facts = fact_table(&solver);
                let mut buf = Vec::new();
                certificate::render_lemmas(n, p, &facts, solver.lemmas(), &mut buf)
                    .map_err(|e| Error::io(&path, e))?;
                std::fs::write(&path, buf).map_err(|e| Error::io(&path, e))?;
                let path = d.join(certificate::SKELETON);
                std::fs::write(&path, skeleton::render(&sk)).map_err(|e| Error::io(&path, e))?;
            }
            RealAnswer::Unknown { reason }
        }
        sat::SatOutcome::Sat => {
            let model: Vec<bool> = (0..solver.num_vars()).map(|v| solver.value(v)).collect();
            if let Some(k) = cnf.first_falsified(&model) {
                return Err(Error::Solver {
                    solver: "real".into(),
                    reason: format!("the model falsifies skeleton clause {k}"),
                });
            }
            let th = solver.theory().ok_or_else(|| Error::Solver {
                solver: "real".into(),
                reason: "no theory".into(),
            })?;
            th.audit().map_err(|reason| Error::Solver {
                solver: "real".into(),
                reason: format!("theory audit: {reason}"),
            })?;
            let orbit = orbit_from(th, n, p);
            let hi = orbit.iter().flatten().copied().max().unwrap_or(0);
            let check = check_orbit(&vec![(0, hi); n], &orbit)?;
            RealAnswer::Feasible { orbit, check }
        }
        sat::SatOutcome::Unsat if handed.is_some() => {
            let t1 = Instant::now();
            let dir = handed
                .as_ref()
                .map(|d: &tempfile::TempDir| d.path().to_path_buf());
            let dir = options.certificate_dir.clone().or(dir).unwrap_or_default();
            let lemmas = solver.lemmas();
            let kept = trim_handed_proof(&dir, cnf.num_clauses() as u64, lemmas.len())?;
            let named = lemmas
                .iter()
                .zip(&kept)
                .filter(|(_, k)| **k)
                .map(|(l, _)| l);
            write_files(&dir, &sk, &fact_table(&solver), named)?;
            let check = check_cube_dir(n, p, &dir, cube)?;
            report.check_seconds = t1.elapsed().as_secs_f64();
            RealAnswer::Infeasible {
                check: Some(check),
                dir: options.certificate_dir.clone(),
            }
        }
        sat::SatOutcome::Unsat if !options.certify => RealAnswer::Infeasible {
            check: None,
            dir: None,
        },
        sat::SatOutcome::Unsat => {
            let t1 = Instant::now();
            let facts = fact_table(&solver);
            let (log, lemmas) = solver.into_parts();
            let tmp;
            let dir: &Path = match &options.certificate_dir {
                Some(d) => {
                    std::fs::create_dir_all(d).map_err(|e| Error::io(d, e))?;
                    d
                }
                None => {
                    tmp = tempfile::tempdir().map_err(|e| Error::io("<temporary directory>", e))?;
                    tmp.path()
                }
            };
            write_certificate(dir, &sk, &facts, &lemmas, log)?;
            let check = check_cube_dir(n, p, dir, cube)?;
            report.check_seconds = t1.elapsed().as_secs_f64();
            RealAnswer::Infeasible {
                check: Some(check),
                dir: options.certificate_dir.clone(),
            }
        }
    };
    Ok(report)
}

/// [`certificate::check_parts`] on the three files in `dir`.
fn check_cube_dir(n: usize, p: usize, dir: &Path, cube: &[i32]) -> Result<CertificateCheck> {
    let files = certificate::CertificateFiles {
        skeleton: &dir.join(certificate::SKELETON),
        lemmas: &dir.join(certificate::LEMMAS),
        proof: &dir.join(certificate::PROOF),
    };
    certificate::check_parts(n, p, &files, cube)
}

/// The integer orbit read from the theory's profile and potentials, each
/// coordinate shifted to start at 0.
fn orbit_from(th: &theory::Theory, n: usize, p: usize) -> Vec<Vec<i64>> {
    let mut orbit = vec![vec![0i64; n]; p];
    for c in 0..n {
        let pot = th.potentials(c);
        let lo = pot.iter().copied().min().unwrap_or(0);
        for i in 0..p {
            orbit[i][c] = pot[i] - lo;
        }
    }
    orbit
}

/// Each profile fact's DIMACS variable and coefficients, by index.
fn fact_table(solver: &sat::Solver) -> Vec<(u32, Vec<i64>)> {
    let Some(th) = solver.theory() else {
        return Vec::new();
    };
    th.facts()
        .iter()
        .zip(solver.fact_vars())
        .map(|(f, v)| (v + 1, f.coeffs.clone()))
        .collect()
}

/// Lemmas learned from one model of the external solver at most: enough
/// that a round does not end at the first conflict, few enough that one
/// model does not flood the lemma set.
const REFINE_LEMMAS: usize = 200;

/// The hand-off loop of [`Handoff`]. Returns the outcome and, for `Unsat`,
/// the temporary directory holding the checked LRAT proof when no
/// certificate directory was given.
fn handoff(
    solver: &mut sat::Solver,
    sk: &skeleton::Skeleton,
    base: &crate::cnf::Cnf,
    h: &Handoff,
    options: &RealOptions,
    deadline: Option<Instant>,
    report: &mut RealReport,
) -> Result<(sat::SatOutcome, Option<tempfile::TempDir>)> {
    use crate::solve::external::{External, ProofFormat, ProofRequest};
    use crate::solve::{Backend, Limits, Outcome};
    let tmp = tempfile::tempdir().map_err(|e| Error::io("<temporary directory>", e))?;
    let dir = options
        .certificate_dir
        .clone()
        .unwrap_or_else(|| tmp.path().to_path_buf());
    std::fs::create_dir_all(&dir).map_err(|e| Error::io(&dir, e))?;
    loop {
        let facts = fact_table(solver);
        let mut cnf = base.clone();
        for l in solver.lemmas() {
            let lits: Vec<crate::cnf::Lit> = certificate::lemma_lits(sk.n, sk.p, &facts, l)
                .into_iter()
                .map(crate::cnf::Lit::from_dimacs)
                .collect();
            cnf.add_clause(&lits);
        }
        let mut ext = External::parse(&h.command)?;
        ext.proof = Some(ProofRequest {
            args: vec!["{}".into()],
            format: ProofFormat::Drat,
            keep_lrat: Some(dir.join(certificate::PROOF)),
            keep_raw: None,
        });
        let limits = Limits {
            time: deadline.map(|d| d.saturating_duration_since(Instant::now())),
            progress: crate::progress::ProgressMode::Off,
            conflicts: None,
            max_conflicts: None,
        };
        let t = Instant::now();
        let r = ext.solve(&cnf, &limits);
        report.handoff_rounds += 1;
        report.handoff_seconds += t.elapsed().as_secs_f64();
        let r = r?;
        match r.outcome {
            Outcome::Unsat if r.proof.is_some() => return Ok((sat::SatOutcome::Unsat, Some(tmp))),
            Outcome::Unsat => {
                return Ok((
                    sat::SatOutcome::Unknown(format!(
                        "{} claims unsatisfiability, but no proof could be checked (is rate installed?)",
                        ext.command_line()
                    )),
                    None,
                ));
            }
            Outcome::Unknown(why) => {
                let why = format!(
                    "{why} (in call {} of the external solver, after {} lemmas)",
                    report.handoff_rounds,
                    solver.lemmas().len()
                );
                return Ok((sat::SatOutcome::Unknown(why), None));
            }
            Outcome::Sat(model) => match solver.refine(&model, REFINE_LEMMAS) {
                Ok(true) => return Ok((sat::SatOutcome::Sat, None)),
                Ok(false) => {}
                Err(e) => return Ok((sat::SatOutcome::Unknown(format!("theory: {e}")), None)),
            },
        }
    }
}

/// Trims the external solver's checked proof in `dir` (of the skeleton's
/// `m0` clauses followed by `lemmas` lemma clauses) to the steps its empty
/// clause depends on and the lemmas those steps name, renumbered densely
/// (`crate::proof::lrat::trim::trim_inputs`); returns which lemmas stay,
/// so that the lemma file lists exactly those, in their order. Nothing
/// trusts this: the certificate is checked afterwards as written, and a
/// lemma left out that a step needs is a failed LRAT step.
fn trim_handed_proof(dir: &Path, m0: u64, lemmas: usize) -> Result<Vec<bool>> {
    use crate::proof::lrat::trim::trim_inputs;
    let path = dir.join(certificate::PROOF);
    let src = std::fs::File::open(&path).map_err(|e| Error::io(&path, e))?;
    let tmp = crate::solve::refute::temp_proof_file(Some(&path))?;
    let out = std::io::BufWriter::new(tmp.reopen().map_err(|e| Error::io(tmp.path(), e))?);
    let (_, kept) = trim_inputs(
        std::io::BufReader::new(src),
        m0,
        m0 + lemmas as u64,
        u32::MAX,
        out,
        crate::proof::LratFormat::Text,
    )
    .map_err(|e| Error::Certificate(format!("trimming the external solver's proof: {e}")))?;
    crate::artifact::persist(tmp, &path)?;
    Ok(kept)
}

/// Writes the skeleton and the lemma file of a certificate.
fn write_files<'a>(
    dir: &Path,
    sk: &skeleton::Skeleton,
    facts: &[(u32, Vec<i64>)],
    lemmas: impl IntoIterator<Item = &'a theory::Lemma>,
) -> Result<()> {
    use std::io::Write;
    std::fs::create_dir_all(dir).map_err(|e| Error::io(dir, e))?;
    let path = dir.join(certificate::SKELETON);
    std::fs::write(&path, skeleton::render(sk)).map_err(|e| Error::io(&path, e))?;
    let path = dir.join(certificate::LEMMAS);
    let f = std::fs::File::create(&path).map_err(|e| Error::io(&path, e))?;
    let mut w = std::io::BufWriter::new(f);
    certificate::render_lemmas(sk.n, sk.p, facts, lemmas, &mut w)
        .map_err(|e| Error::io(&path, e))?;
    w.flush().map_err(|e| Error::io(&path, e))?;
    Ok(())
}

fn write_certificate(
    dir: &Path,
    sk: &skeleton::Skeleton,
    facts: &[(u32, Vec<i64>)],
    lemmas: &[theory::Lemma],
    log: prooflog::ProofLog,
) -> Result<()> {
    use std::io::Write;
    std::fs::create_dir_all(dir).map_err(|e| Error::io(dir, e))?;
    let path = dir.join(certificate::PROOF);
    let f = std::fs::File::create(&path).map_err(|e| Error::io(&path, e))?;
    let mut w = std::io::BufWriter::new(f);
    let kept = log.finish(&mut w)?;
    w.flush().map_err(|e| Error::io(&path, e))?;
    // the proof numbers only the lemmas it names (prooflog.rs): the lemma
    // file lists those, in the same order
    let named = lemmas
        .iter()
        .zip(&kept)
        .filter(|(_, k)| **k)
        .map(|(l, _)| l);
    write_files(dir, sk, facts, named)
}
