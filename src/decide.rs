//! The pipeline: encode, solve, check the model, decode, verify — and the
//! one place where a decision's evidence is written out.
//!
//! A feasible verdict is only ever produced by [`witness`], after the model
//! has satisfied every clause and the decoded orbit (and map) has passed
//! [`crate::evidence::check_witness`]. A model that fails either is an
//! error, never a verdict. An infeasible verdict carries the solver's
//! checked proof, or, where the user accepted it, the solver's unchecked
//! claim ([`Evidence::SolverClaim`]); without that acceptance an unchecked
//! claim becomes an unknown verdict ([`require_checked`]).
//!
//! [`run`] is the whole of `decide`: it picks the back-end ([`Solver`]),
//! routes the proof to where it is wanted ([`Outputs`]) and writes the
//! certificate bundle from the report — the same code for every back-end,
//! so a bundle always carries what its formulation needs.

use std::path::{Path, PathBuf};
use std::time::Instant;

use crate::bundle;
use crate::cnf::Cnf;
use crate::decode;
use crate::dimacs::{self, CnfFile, SolverAnswer, Status};
use crate::encode::{self, EncodeOptions, Encoding};
use crate::error::{Error, Result};
use crate::evidence::{self, Evidence};
use crate::proof::LratFormat;
use crate::question::Question;
use crate::report::{Report, SizeStats, Verdict, Witness};
use crate::solve::bundled::Bundled;
use crate::solve::certified::Certified;
use crate::solve::external::External;
use crate::solve::{Backend, Limits, Outcome, SolveStats, check_model};
use crate::split::auto::{AutoOptions, decide_auto};
use crate::split::jobs::{JobsOptions, decide_parallel};
use crate::varmap::VarMap;

/// Decides `q`: encodes it with `options`, solves with `backend` within
/// `limits`, and returns a report whose verdict is backed by a checked witness
/// (feasible) or by the solver's answer (infeasible), or says why there is none.
///
/// # Errors
/// [`crate::Error::TooLarge`] above `max_clauses`; solver failures; a model
/// that falsifies the CNF or decodes to an orbit that fails the check.
pub fn decide(
    q: &Question,
    options: &EncodeOptions,
    backend: &mut dyn Backend,
    limits: &Limits,
    max_clauses: u64,
) -> Result<Report> {
    let t0 = Instant::now();
    let enc = encode::encode(q, options, max_clauses)?;
    let encode_seconds = t0.elapsed().as_secs_f64();
    decide_encoded(q, options, &enc, encode_seconds, backend, limits)
}

/// [`decide`] on a question already encoded as `enc` (with `options` as
/// given, for the report), which took `encode_seconds`.
///
/// # Errors
/// As [`decide`], less the encoding.
pub fn decide_encoded(
    q: &Question,
    options: &EncodeOptions,
    enc: &Encoding,
    encode_seconds: f64,
    backend: &mut dyn Backend,
    limits: &Limits,
) -> Result<Report> {
    let result = backend.solve(&enc.cnf, limits)?;
    let size = SizeStats::of(&enc.cnf, enc.families.clone(), encode_seconds);
    let (verdict, witness, certificate, reason) = match result.outcome {
        Outcome::Sat(model) => {
            let w = witness(
                q,
                &enc.options,
                &enc.cnf,
                &enc.map,
                &model,
                "<memory>",
                None,
            )?;
            (Verdict::Feasible, Some(w), Evidence::Witness, None)
        }
        Outcome::Unsat => {
            let certificate = match result.proof {
                Some(info) => Evidence::CheckedProof(info),
                None => Evidence::SolverClaim {
                    solver: result.stats.solver.clone(),
                },
            };
            (Verdict::Infeasible, None, certificate, None)
        }
        Outcome::Unknown(why) => (Verdict::Unknown, None, Evidence::None, Some(why)),
    };
    Ok(Report::new(
        q,
        options,
        verdict,
        witness,
        certificate,
        reason,
        size,
        result.stats,
    ))
}

/// Checks `model` against every clause of `cnf`, decodes the orbit (and in
/// the full-map formulation the map) and checks them as the witness of a
/// feasible answer ([`evidence::check_witness`]).
///
/// # Errors
/// [`crate::Error::ModelViolates`] for a falsified clause (located through
/// `path` and `lines`), [`crate::Error::Decode`], or [`crate::Error::Check`]
/// when the decoded orbit or map fails the independent check.
pub fn witness(
    q: &Question,
    options: &EncodeOptions,
    cnf: &Cnf,
    map: &VarMap,
    model: &[bool],
    path: &str,
    lines: Option<&[usize]>,
) -> Result<Witness> {
    check_model(cnf, model, path, lines)?;
    let (orbit, table) = if options.formulation.encodes_map() {
        (
            decode::full_map_orbit(q, map, model)?,
            Some(decode::full_map(q, map, model)?),
        )
    } else {
        (decode::orbit(q, map, model)?, None)
    };
    let checked = evidence::check_witness(q, options, &orbit, table.as_deref())?;
    Ok(Witness {
        orbit,
        check: checked.orbit,
        map: table,
        map_check: checked.map,
    })
}

/// Interprets a solver's output for a CNF file written by `orbitcnf encode`.
///
/// A satisfiable answer goes through [`witness`]. An unsatisfiable one is
/// backed by the LRAT proof at `proof` when one is given (checked here
/// against the file's clauses), and is otherwise the solver's unchecked
/// claim (see [`require_checked`]).
///
/// # Errors
/// As [`witness`]; [`crate::Error::Parse`] for a model that names unknown
/// variables or gives a variable both signs; [`crate::Error::Proof`] for a
/// rejected proof, and an error for a proof of a satisfiable answer.
pub fn decode_answer(
    file: &CnfFile,
    cnf_path: &str,
    answer: &SolverAnswer,
    output_path: &str,
    proof: Option<&Path>,
) -> Result<Report> {
    let q = &file.question;
    let size = SizeStats::of(&file.cnf, Vec::new(), 0.0);
    let stats = SolveStats {
        solver: format!("external (output {output_path})"),
        seconds: 0.0,
        conflicts: None,
    };
    if let (Some(p), false) = (proof, answer.status == Status::Unsat) {
        return Err(Error::Options(format!(
            "a proof ({}) backs only an unsatisfiable answer, and {output_path} is not one",
            p.display()
        )));
    }
    let (verdict, witness, certificate, reason) = match answer.status {
        Status::Sat => {
            let lits = answer.model.as_deref().unwrap_or_default();
            let model = dimacs::model_to_assignment(lits, file.cnf.num_vars(), output_path)?;
            let w = witness(
                q,
                &file.options,
                &file.cnf,
                &file.map,
                &model,
                cnf_path,
                Some(&file.clause_lines),
            )?;
            (Verdict::Feasible, Some(w), Evidence::Witness, None)
        }
        Status::Unsat => {
            let certificate = match proof {
                Some(p) => Evidence::CheckedProof(evidence::proof_info(
                    evidence::check_proof_file(&file.cnf, p)?,
                    Some(p.to_path_buf()),
                )),
                None => Evidence::SolverClaim {
                    solver: "the external solver".into(),
                },
            };
            (Verdict::Infeasible, None, certificate, None)
        }
        Status::Unknown => (Verdict::Unknown, None, Evidence::None, answer.note.clone()),
    };
    Ok(Report::new(
        q,
        &file.options,
        verdict,
        witness,
        certificate,
        reason,
        size,
        stats,
    ))
}

/// Turns an infeasible verdict that rests on a solver's unchecked word into
/// an unknown one, saying why; every other report is returned as it is.
/// This is the default everywhere: an unchecked refutation counts only
/// where the user accepted such claims.
pub fn require_checked(mut report: Report) -> Report {
    if report.verdict == Verdict::Infeasible && !report.certified {
        let who = match &report.certificate {
            Evidence::SolverClaim { solver } => solver.clone(),
            _ => "the solver".into(),
        };
        report.reason = Some(format!(
            "{who} claims that no such map exists, but no proof was checked; \
             give a proof to check, or accept unchecked claims"
        ));
        report.verdict = Verdict::Unknown;
        report.certificate = Evidence::None;
    }
    report
}

/// Which solver answers a question, and how its answers are certified.
#[derive(Clone, Debug)]
pub enum Solver {
    /// The bundled solver (varisat). With `certify`, every unsatisfiable
    /// answer comes with an LRAT proof that orbitcnf's checker accepted;
    /// without, it is the solver's claim.
    Bundled {
        /// Produce and check proofs.
        certify: bool,
    },
    /// Any DIMACS solver run as a child process (with its proof request, if any).
    External(External),
    /// Cubes of an internal split on threads, with the bundled solver.
    Cubes(JobsOptions),
    /// The bundled solver within a budget, then cubes on threads when it
    /// gave no answer ([`crate::split::auto`]).
    Auto(AutoOptions),
}

/// Where the evidence of a decision goes besides the report.
#[derive(Clone, Debug, Default)]
pub struct Outputs {
    /// The checked LRAT proof of an infeasible answer.
    pub proof: Option<PathBuf>,
    /// The solver's own proof (binary DRAT of the bundled solver, or an
    /// external solver's proof file).
    pub raw_proof: Option<PathBuf>,
    /// A certificate bundle ([`crate::bundle`]).
    pub bundle: Option<PathBuf>,
    /// The encoding of the LRAT proof that is kept (in `proof` or in the
    /// bundle); a proof that is only checked is written as it is cheapest.
    pub format: LratFormat,
}

/// One decision to make.
#[derive(Clone, Debug)]
pub struct Request {
    /// The question.
    pub question: Question,
    /// The encoding options.
    pub options: EncodeOptions,
    /// The solver.
    pub solver: Solver,
    /// Where evidence goes.
    pub outputs: Outputs,
    /// Time limit and progress.
    pub limits: Limits,
    /// The encoder's clause limit.
    pub max_clauses: u64,
    /// Whether an infeasible verdict may rest on a solver's unchecked claim
    /// (it is then marked so); otherwise such an answer is unknown.
    pub accept_claims: bool,
}

/// What became of the requested certificate bundle.
#[derive(Clone, Debug, PartialEq, Eq)]
pub enum BundleOutcome {
    /// None was asked for.
    NotAsked,
    /// Written to this folder.
    Written(PathBuf),
    /// Not written, for this reason (nothing was created or changed).
    NotWritten(String),
}

/// A decision and what was written for it.
#[derive(Clone, Debug)]
pub struct Decision {
    /// The report.
    pub report: Report,
    /// The bundle.
    pub bundle: BundleOutcome,
}

/// Makes the decision `req` asks for: solve with the chosen back-end, keep
/// the unchecked claims only where accepted, write the proof where asked,
/// and write the certificate bundle from the report.
///
/// # Errors
/// Invalid combinations of solver and outputs ([`Error::Options`]); as
/// [`decide`]; I/O errors of the outputs.
pub fn run(req: &Request) -> Result<Decision> {
    let q = &req.question;
    if let Some(dir) = &req.outputs.bundle {
        bundle::check_target(dir)?;
    }
    // A bundle of an infeasible answer needs the checked proof as a file
    // even when no proof file is asked for: it is written beside the bundle
    // under a temporary name, linked into the bundle, and removed. (A
    // solver that gives no proof can still back a feasible bundle.)
    let proves = match &req.solver {
        Solver::Bundled { certify } => *certify,
        Solver::External(ext) => ext.proof.is_some(),
        Solver::Cubes(opts) => opts.certify,
        Solver::Auto(opts) => opts.certify,
    };
    let temp_proof = match (&req.outputs.proof, &req.outputs.bundle) {
        (None, Some(dir)) if proves => Some(crate::artifact::temp_beside(dir)?.into_temp_path()),
        _ => None,
    };
    let lrat = req
        .outputs
        .proof
        .clone()
        .or_else(|| temp_proof.as_ref().map(|t| t.to_path_buf()));
    let report = match &req.solver {
        Solver::Bundled { certify: false } => {
            if lrat.is_some() || req.outputs.raw_proof.is_some() {
                return Err(Error::Options(
                    "a proof needs certification, which was turned off".into(),
                ));
            }
            decide(q, &req.options, &mut Bundled, &req.limits, req.max_clauses)?
        }
        Solver::Bundled { certify: true } => {
            let mut backend = Certified {
                lrat: lrat.clone(),
                drat: req.outputs.raw_proof.clone(),
                format: req.outputs.format,
            };
            decide(q, &req.options, &mut backend, &req.limits, req.max_clauses)?
        }
        Solver::External(ext) => {
            let mut ext = ext.clone();
            match ext.proof.as_mut() {
                Some(p) => {
                    p.keep_lrat = lrat.clone();
                    p.keep_raw = req.outputs.raw_proof.clone();
                }
                None if req.outputs.proof.is_some() || req.outputs.raw_proof.is_some() => {
                    return Err(Error::Options(
                        "a proof from an external solver needs a way to ask it for one".into(),
                    ));
                }
                None => {}
            }
            decide(q, &req.options, &mut ext, &req.limits, req.max_clauses)?
        }
        Solver::Cubes(opts) => {
            if req.outputs.raw_proof.is_some() {
                return Err(Error::Options(
                    "the proof of a run in cubes is assembled as LRAT; the solver's own \
                     proof format is not available"
                        .into(),
                ));
            }
            let opts = JobsOptions {
                lrat: lrat.clone(),
                format: req.outputs.format,
                ..opts.clone()
            };
            decide_parallel(q, &req.options, &opts, &req.limits, req.max_clauses)?
        }
        Solver::Auto(opts) => {
            if req.outputs.raw_proof.is_some() {
                return Err(Error::Options(
                    "a run that may switch to cubes assembles its proof as LRAT; the \
                     solver's own proof format needs a single solve"
                        .into(),
                ));
            }
            if lrat.is_some() && !opts.certify {
                return Err(Error::Options(
                    "a proof needs certification, which was turned off".into(),
                ));
            }
            let opts = AutoOptions {
                lrat: lrat.clone(),
                format: req.outputs.format,
                ..opts.clone()
            };
            decide_auto(q, &req.options, &opts, &req.limits, req.max_clauses)?
        }
    };
    let report = if req.accept_claims {
        report
    } else {
        require_checked(report)
    };
    let bundle = match &req.outputs.bundle {
        None => BundleOutcome::NotAsked,
        Some(dir) => write_bundle_of(&report, q, &req.options, lrat.as_deref(), dir)?,
    };
    drop(temp_proof);
    Ok(Decision { report, bundle })
}

/// Writes the bundle of `report` to `dir` when its verdict is certified.
fn write_bundle_of(
    report: &Report,
    q: &Question,
    options: &EncodeOptions,
    proof: Option<&Path>,
    dir: &Path,
) -> Result<BundleOutcome> {
    let evidence = match (&report.certificate, &report.orbit, proof) {
        (Evidence::Witness, Some(orbit), _) => bundle::Evidence::Witness {
            orbit,
            map: report.map.as_deref(),
        },
        (Evidence::CheckedProof(_), _, Some(path)) => bundle::Evidence::Proof(path),
        _ => {
            let why = match report.verdict {
                Verdict::Unknown => "the verdict is unknown",
                _ => "the verdict is not certified",
            };
            return Ok(BundleOutcome::NotWritten(why.into()));
        }
    };
    bundle::write_bundle(dir, q, options, evidence)?;
    Ok(BundleOutcome::Written(dir.to_path_buf()))
}
