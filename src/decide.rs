//! The pipeline: encode, solve, check the model, decode, verify.
//!
//! A feasible verdict is only ever produced by [`witness`], after the model
//! has satisfied every clause and the decoded orbit has passed the
//! independent [`crate::verify::check_orbit`]. A model that fails either is an
//! error, never a verdict.

use std::time::Instant;

use crate::cnf::Cnf;
use crate::decode;
use crate::dimacs::{self, CnfFile, SolverAnswer, Status};
use crate::encode::{self, EncodeOptions};
use crate::error::Result;
use crate::question::Question;
use crate::report::{Certificate, Report, SizeStats, Verdict, Witness};
use crate::solve::{Backend, Limits, Outcome, SolveStats, check_model};
use crate::varmap::VarMap;
use crate::verify;

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
            (Verdict::Feasible, Some(w), Certificate::Witness, None)
        }
        Outcome::Unsat => {
            let certificate = match result.proof {
                Some(info) => Certificate::CheckedProof(info),
                None => Certificate::SolverClaim {
                    solver: result.stats.solver.clone(),
                },
            };
            (Verdict::Infeasible, None, certificate, None)
        }
        Outcome::Unknown(why) => (Verdict::Unknown, None, Certificate::None, Some(why)),
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

/// Checks `model` against every clause of `cnf`, decodes the orbit and verifies it.
/// In the full-map formulation (`options` as recorded with the CNF) the map
/// is decoded too, and [`verify::check_self_map`] checks it on all of D.
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
    if options.formulation.encodes_map() {
        let orbit = decode::full_map_orbit(q, map, model)?;
        let table = decode::full_map(q, map, model)?;
        let domain = q.domain().points().to_vec();
        let map_check = verify::check_self_map(&domain, &table, &orbit)?;
        // An orbit of a nonexpansive map is an isometric cycle (encodings/full-map.md),
        // so this second check must pass too; it also yields the distance profile.
        let check = verify::check_orbit(q.grid.ranges(), &orbit)?;
        return Ok(Witness {
            orbit,
            check,
            map: Some(table),
            map_check: Some(map_check),
        });
    }
    let orbit = decode::orbit(q, map, model)?;
    let check = q.check_orbit(&orbit)?;
    Ok(Witness {
        orbit,
        check,
        map: None,
        map_check: None,
    })
}

/// Interprets a solver's output for a CNF file written by `orbitcnf encode`.
///
/// A satisfiable answer goes through [`witness`]; an unsatisfiable one is
/// reported as the external solver's claim (no proof is checked here).
///
/// # Errors
/// As [`witness`], and [`crate::Error::Parse`] for a model that names unknown
/// variables or gives a variable both signs.
pub fn decode_answer(
    file: &CnfFile,
    cnf_path: &str,
    answer: &SolverAnswer,
    output_path: &str,
) -> Result<Report> {
    let q = &file.question;
    let size = SizeStats::of(&file.cnf, Vec::new(), 0.0);
    let stats = SolveStats {
        solver: format!("external (output {output_path})"),
        seconds: 0.0,
        conflicts: None,
    };
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
            (Verdict::Feasible, Some(w), Certificate::Witness, None)
        }
        Status::Unsat => (
            Verdict::Infeasible,
            None,
            Certificate::SolverClaim {
                solver: "the external solver".into(),
            },
            None,
        ),
        Status::Unknown => (
            Verdict::Unknown,
            None,
            Certificate::None,
            answer.note.clone(),
        ),
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
