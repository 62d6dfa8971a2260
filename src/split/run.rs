//! Solving one cube of a split folder, and merging the results.
//!
//! [`run_cube`] reads `manifest.json`, checks the cube file's SHA-256, solves
//! it with any [`Backend`], and writes `results/cube-NNNN.json`
//! ([`CubeResult`]) atomically, next to the cube's LRAT proof
//! (`results/cube-NNNN.lrat`) when the back-end certified an UNSAT answer.
//! A feasible answer's orbit is decoded and verified before it is written.
//! A back-end failure is written as a result with status `error` (so that
//! `merge` can list it) and returned as the error.
//! [`CubeRunner::run_sequence`] solves a range of cubes with one bundled
//! solver under assumptions ([`crate::proof::sequence`]) and writes the same
//! results, each refuted cube with its own checked proof.
//!
//! [`merge`] first re-checks the split itself ([`super::verify_split`]: a fresh
//! encoding gives byte-identical `formula.cnf`, cube files and coverage CNF,
//! and the coverage proof is accepted), then reads every result: a feasible
//! cube's orbit is verified again; an infeasible cube's LRAT proof is checked
//! again, against the cube's CNF, by orbitcnf's checker. The verdict is
//! feasible when some cube is, infeasible when every cube is refuted, and
//! unknown otherwise, with the missing and failed cubes listed by index.

use std::io::{BufWriter, Write};
use std::path::{Path, PathBuf};
use std::time::Instant;

use serde::{Deserialize, Serialize};

use super::layout::{CubeScratch, cube_problem, formula_problem};
use super::{
    Cube, CubeEntry, RESULTS_DIR, SplitManifest, coverage_sources, index_ranges as list,
    verify_split,
};
use crate::artifact::write_atomically;
use crate::cnf::Cnf;
use crate::decide;
use crate::dimacs::{CnfFile, VERSION};
use crate::encode::EncodeOptions;
use crate::error::{Error, Result};
use crate::evidence;
use crate::grid::Point;
use crate::progress::{Progress, ProgressMode, duration_words};
use crate::proof::lift::assemble;
use crate::proof::lrat::compressed::{self, FileEncoding, ProofSource};
use crate::proof::spool::Spool;
use crate::proof::{LratFormat, LratOptions, LratSummary};
use crate::question::{Question, QuestionRecord};
use crate::report::Verdict;
use crate::solve::refute::{accept_proof, recheck_file, temp_proof_file};
use crate::solve::{Backend, Limits, Outcome};
use crate::verify::{OrbitCheck, SelfMapCheck};

/// The format tag of [`CubeResult`].
pub const RESULT_FORMAT: &str = "orbitcnf-cube-result/1";

/// The status of one cube.
#[derive(Clone, Copy, Debug, PartialEq, Eq, Serialize, Deserialize)]
#[serde(rename_all = "lowercase")]
pub enum CubeStatus {
    /// The cube holds a verified orbit.
    Feasible,
    /// The cube was refuted.
    Infeasible,
    /// No answer (time limit, solver gave up).
    Unknown,
    /// The back-end failed or misbehaved.
    Error,
}

impl CubeStatus {
    /// Whether the cube needs no more work.
    pub fn is_final(self) -> bool {
        matches!(self, CubeStatus::Feasible | CubeStatus::Infeasible)
    }
}

/// The LRAT proof of an infeasible cube, as a result file records it.
#[derive(Clone, Debug, PartialEq, Eq, Serialize, Deserialize)]
pub struct ProofRecord {
    /// File name inside `results/`.
    pub file: String,
    /// Hex SHA-256.
    pub sha256: String,
    /// Size in bytes.
    pub bytes: u64,
    /// Steps accepted by orbitcnf's checker when the result was written.
    pub steps: u64,
}

/// `results/cube-NNNN.json`.
#[derive(Clone, Debug, PartialEq, Serialize, Deserialize)]
pub struct CubeResult {
    /// [`RESULT_FORMAT`].
    pub format: String,
    /// orbitcnf version that wrote it.
    pub orbitcnf_version: String,
    /// The cube's index.
    pub index: usize,
    /// The SHA-256 of the cube file that was solved.
    pub cube_sha256: String,
    /// The outcome.
    pub status: CubeStatus,
    /// The verified orbit, when feasible.
    #[serde(default, skip_serializing_if = "Option::is_none")]
    pub orbit: Option<Vec<Point>>,
    /// The whole map `(z, f(z))` on D, when feasible in the full-map
    /// formulation (there the orbit alone proves nothing).
    #[serde(default, skip_serializing_if = "Option::is_none")]
    pub map: Option<Vec<(Point, Point)>>,
    /// The checked LRAT proof, when infeasible and certified.
    #[serde(default, skip_serializing_if = "Option::is_none")]
    pub proof: Option<ProofRecord>,
    /// Why the status is unknown or error.
    #[serde(default, skip_serializing_if = "Option::is_none")]
    pub reason: Option<String>,
    /// The back-end's name.
    pub solver: String,
    /// Seconds spent solving (by the back-end named in `solver`).
    pub seconds: f64,
    /// Conflicts, when the back-end reports them.
    pub conflicts: Option<u64>,
    /// Seconds the bundled solver spent on the cube without an answer
    /// before it was handed off to `solver`; not part of `seconds`.
    #[serde(default, skip_serializing_if = "Option::is_none")]
    pub handed_off_after: Option<f64>,
}

impl CubeResult {
    /// The result in one line for people; `note` is appended (e.g. that the
    /// cube had been solved before).
    pub fn to_text(&self, note: &str) -> String {
        let status = match self.status {
            CubeStatus::Feasible => "feasible (orbit verified)".to_string(),
            CubeStatus::Infeasible => match &self.proof {
                Some(p) => format!("infeasible, LRAT proof checked ({} steps)", p.steps),
                None => "infeasible, UNCHECKED (no proof; merge counts it only when unchecked claims are accepted)".to_string(),
            },
            CubeStatus::Unknown => {
                format!("unknown: {}", self.reason.as_deref().unwrap_or("no answer"))
            }
            CubeStatus::Error => format!("error: {}", self.reason.as_deref().unwrap_or("?")),
        };
        format!(
            "cube {}: {status}; {:.3} s with {}{note}\n",
            self.index, self.seconds, self.solver
        )
    }
}

/// The result file of cube `index`.
pub fn result_path(dir: &Path, index: usize) -> PathBuf {
    dir.join(RESULTS_DIR).join(format!("cube-{index:04}.json"))
}

/// The LRAT proof file of cube `index`.
pub fn proof_path(dir: &Path, index: usize) -> PathBuf {
    dir.join(RESULTS_DIR).join(proof_name(index))
}

fn proof_name(index: usize) -> String {
    format!("cube-{index:04}.lrat")
}

/// Reads a result file; `None` when there is none.
///
/// # Errors
/// [`Error::Parse`] for a file that is not a result; [`Error::Io`].
pub fn read_result(dir: &Path, index: usize) -> Result<Option<CubeResult>> {
    let path = result_path(dir, index);
    let bytes = match std::fs::read(&path) {
        Ok(b) => b,
        Err(e) if e.kind() == std::io::ErrorKind::NotFound => return Ok(None),
        Err(e) => return Err(Error::io(&path, e)),
    };
    let r: CubeResult = serde_json::from_slice(&bytes).map_err(|e| {
        Error::parse(
            path.display().to_string(),
            e.line(),
            format!("not a cube result: {e}"),
        )
    })?;
    if r.format != RESULT_FORMAT || r.index != index {
        return Err(Error::parse(
            path.display().to_string(),
            0,
            format!("not the result of cube {index} in format {RESULT_FORMAT}"),
        ));
    }
    Ok(Some(r))
}

/// Where a back-end for [`run_cube`] should write the LRAT proof of cube `index`.
pub fn lrat_target(dir: &Path, index: usize) -> PathBuf {
    proof_path(dir, index)
}

/// What [`run_cube`] did.
#[derive(Clone, Debug)]
pub enum RunOutcome {
    /// The cube was solved now; the result was written.
    Solved(CubeResult),
    /// A final result was already there and `force` was not given.
    AlreadyDone(CubeResult),
}

/// Solves cube `index` of the split in `dir` with `backend` and writes its
/// result. A back-end that writes proofs should write the LRAT proof to
/// [`lrat_target`]. A final result already present is kept unless `force`.
///
/// # Errors
/// [`Error::Options`] for an index out of range; a cube file that does not
/// match the manifest; back-end failures and wrong models (after writing a
/// result with status `error`).
pub fn run_cube(
    dir: &Path,
    index: usize,
    backend: &mut dyn Backend,
    limits: &Limits,
    force: bool,
) -> Result<RunOutcome> {
    CubeRunner::new(dir)?.run(index, backend, limits, force)
}

/// Runs cubes of one split folder one after another, reading the manifest
/// once and, in the compact layout, `formula.cnf` once (checked against its
/// digest, then held in one buffer whose units change from cube to cube).
/// Measured on {0,1,2,3}^4 with p = 28: ten easy cubes took 5.0 s as ten
/// processes and 3.5 s in one.
pub struct CubeRunner<'a> {
    dir: &'a Path,
    m: SplitManifest,
    formula: Option<Compact>,
    /// Whether `results/` was swept of abandoned temporary files. Once per
    /// runner: the folder holds two files per solved cube, and listing it
    /// for every cube made a long range quadratic.
    swept: bool,
    /// Whether a refuted cube's proof is kept as a zstd frame
    /// ([`crate::proof::lrat::compressed`]) once it is checked.
    compress: bool,
}

/// The compact layout's formula, read once per runner, and the buffer in
/// which each cube's units follow its clauses.
struct Compact {
    base: (CnfFile, String),
    scratch: CubeScratch,
}

impl Compact {
    fn read(dir: &Path, m: &SplitManifest) -> Result<Compact> {
        let base = formula_problem(dir, m)?;
        let scratch = CubeScratch::new(&base);
        Ok(Compact { base, scratch })
    }
}

impl<'a> CubeRunner<'a> {
    /// A runner for the split in `dir`.
    ///
    /// # Errors
    /// A manifest that cannot be read.
    pub fn new(dir: &'a Path) -> Result<CubeRunner<'a>> {
        Ok(CubeRunner {
            dir,
            m: SplitManifest::read(dir)?,
            formula: None,
            swept: false,
            compress: false,
        })
    }

    /// Keep the proofs of the cubes this runner refutes compressed with
    /// zstd (each is checked first, as it was written; `merge` reads either
    /// form). On {−1,0,1}^5, p = 50 that kept 18–29% of the bytes.
    pub fn compress_proofs(&mut self, on: bool) {
        self.compress = on;
    }

    /// The number of cubes of the split.
    pub fn cubes(&self) -> usize {
        self.m.cubes.len()
    }

    /// As [`run_cube`], for cube `index` of this runner's split.
    ///
    /// # Errors
    /// As [`run_cube`].
    pub fn run(
        &mut self,
        index: usize,
        backend: &mut dyn Backend,
        limits: &Limits,
        force: bool,
    ) -> Result<RunOutcome> {
        self.run_after(index, backend, limits, force, None)
    }

    /// As [`CubeRunner::run`], for a cube that the bundled solver left open
    /// after `handed_off_after` seconds (recorded in the result,
    /// [`CubeResult::handed_off_after`]), when that is `Some`.
    ///
    /// # Errors
    /// As [`run_cube`].
    pub fn run_after(
        &mut self,
        index: usize,
        backend: &mut dyn Backend,
        limits: &Limits,
        force: bool,
        handed_off_after: Option<f64>,
    ) -> Result<RunOutcome> {
        let dir = self.dir;
        let m = &self.m;
        let entry = m
            .cubes
            .get(index)
            .ok_or_else(|| out_of_range(dir, index, m.cubes.len()))?;
        if !force
            && let Ok(Some(r)) = read_result(dir, index)
            && r.status.is_final()
            && r.cube_sha256 == entry.digest()
        {
            return Ok(RunOutcome::AlreadyDone(r));
        }
        if entry.file.is_none() && self.formula.is_none() {
            self.formula = Some(Compact::read(dir, m)?);
        }
        self.sweep_once();
        let mut outcome = solve_entry(
            self.dir,
            &self.m,
            index,
            backend,
            limits,
            self.formula.as_mut().map(|c| (&c.base.0, &mut c.scratch)),
            self.compress,
        )?;
        if let (Some(after), RunOutcome::Solved(r)) = (handed_off_after, &mut outcome) {
            r.handed_off_after = Some(after);
            write_result(dir, r)?;
        }
        Ok(outcome)
    }
}

/// The solver name in the results of [`CubeRunner::run_sequence`].
pub const SEQUENCE_SOLVER: &str = "varisat-0.2.2 (LRAT, one solver for the range)";

/// How [`CubeRunner::run_sequence`] runs.
#[derive(Clone, Copy, Debug)]
pub struct SequenceRun {
    /// Time limit for each cube.
    pub per_cube: Option<std::time::Duration>,
    /// The encoding of the cube proofs kept in `results/`.
    pub format: LratFormat,
    /// Solve again cubes that already have a final result.
    pub force: bool,
    /// Replace the range's solver after a cube whose proof has more bytes
    /// than this ([`crate::proof::sequence::CONE_BYTES`] unless asked).
    pub cone_bytes: u64,
}

impl CubeRunner<'_> {
    /// Solves the cubes `indices` with one bundled solver that holds the
    /// split's formula and assumes each cube in turn
    /// ([`crate::proof::sequence`]), and writes each cube's result as
    /// [`CubeRunner::run`] does: a refuted cube keeps a standalone LRAT proof
    /// of its own CNF, checked by orbitcnf's checker before the result is
    /// written; a model is decoded and verified. Cubes with a final result are
    /// skipped unless `run.force`. `each` gets every outcome as it is known
    /// (skipped cubes too), or the error of a cube whose result was written
    /// with status `error` ([`recorded_error`]): such a cube does not stop
    /// the range. Returns the indices of the cubes left unknown, in order,
    /// when the range is done.
    ///
    /// On the cubes of one split this is much faster than a fresh solver per
    /// cube: a clause learned on one cube often refutes its neighbours at
    /// once, and the formula is loaded once.
    ///
    /// # Errors
    /// As [`run_cube`]; the errors of `each`.
    pub fn run_sequence(
        &mut self,
        indices: std::ops::RangeInclusive<usize>,
        run: &SequenceRun,
        mut each: impl FnMut(std::result::Result<&RunOutcome, (usize, &Error)>) -> Result<()>,
    ) -> Result<Vec<usize>> {
        let n = self.m.cubes.len();
        if !indices.is_empty() && *indices.end() >= n {
            return Err(out_of_range(self.dir, *indices.end(), n));
        }
        let mut todo = Vec::new();
        for index in indices {
            let entry = &self.m.cubes[index];
            if !run.force
                && let Ok(Some(r)) = read_result(self.dir, index)
                && r.status.is_final()
                && r.cube_sha256 == entry.digest()
            {
                each(Ok(&RunOutcome::AlreadyDone(r)))?;
                continue;
            }
            todo.push((index, entry.cube.lits()));
        }
        if todo.is_empty() {
            return Ok(Vec::new());
        }
        self.sweep_once();
        if self.formula.is_none() {
            self.formula = Some(Compact::read(self.dir, &self.m)?);
        }
        let mut f = self.formula.take().expect("read just above");
        let opts = crate::proof::sequence::SequenceOptions {
            per_cube: run.per_cube,
            deadline: None,
            format: run.format,
            stop: None,
            cone_limit: crate::proof::sequence::CONE_LIMIT,
            cone_bytes: run.cone_bytes,
        };
        let mut unknown = Vec::new();
        let (dir, m, compress) = (self.dir, &self.m, self.compress);
        let (base, scratch) = (&f.base.0, &mut f.scratch);
        let solved =
            crate::proof::sequence::solve_in_sequence(&base.cnf, todo, &opts, |index, s| {
                let mut found = Found {
                    answer: Some(s),
                    proof_target: lrat_target(self.dir, index),
                    compress,
                };
                let limits = Limits::default();
                let outcome = match solve_entry(
                    dir,
                    m,
                    index,
                    &mut found,
                    &limits,
                    Some((base, &mut *scratch)),
                    compress,
                ) {
                    Ok(outcome) => outcome,
                    Err(e) if recorded_error(dir, index, &e) => {
                        each(Err((index, &e)))?;
                        return Ok(true);
                    }
                    Err(e) => return Err(e),
                };
                if let RunOutcome::Solved(r) = &outcome
                    && r.status == CubeStatus::Unknown
                {
                    unknown.push(index);
                }
                each(Ok(&outcome))?;
                Ok(true)
            });
        self.formula = Some(f);
        solved?;
        Ok(unknown)
    }

    /// Sweeps `results/` of abandoned temporary files (and old-style ones,
    /// since orbitcnf owns the folder) the first time this runner writes.
    fn sweep_once(&mut self) {
        if !self.swept {
            crate::artifact::sweep_stale(&self.dir.join(RESULTS_DIR), true);
            self.swept = true;
        }
    }
}

/// Solves cube `index` of the split `m` in `dir` with `backend` and writes
/// its result: its own file, or the compact layout's formula `base` with
/// the cube's units (in the buffer `scratch`).
fn solve_entry(
    dir: &Path,
    m: &SplitManifest,
    index: usize,
    backend: &mut dyn Backend,
    limits: &Limits,
    compact: Option<(&CnfFile, &mut CubeScratch)>,
    compress: bool,
) -> Result<RunOutcome> {
    let entry = &m.cubes[index];
    let to = Keep { dir, compress };
    match (&entry.file, compact) {
        (None, Some((base, scratch))) => {
            let (cnf, name) = scratch.with_units(dir, entry)?;
            solve_one(to, entry, base, cnf, &name, backend, limits)
        }
        _ => {
            let (file, name) = cube_problem(dir, m, entry)?;
            solve_one(to, entry, &file, &file.cnf, &name, backend, limits)
        }
    }
}

/// The answer the reused solver of [`CubeRunner::run_sequence`] found for
/// one cube, handed to [`solve_one`] as a back-end's answer; a refutation's
/// proof is checked here against the cube's CNF, like every back-end's.
struct Found {
    answer: Option<crate::proof::sequence::CubeSolved>,
    proof_target: PathBuf,
    /// Write the proof as a zstd frame: the check then reads it through
    /// the decompressor, so what is checked is what is kept, and the file is
    /// written and synced once.
    compress: bool,
}

impl Backend for Found {
    fn name(&self) -> String {
        SEQUENCE_SOLVER.into()
    }

    fn solve(&mut self, cnf: &Cnf, _limits: &Limits) -> Result<crate::solve::SolveResult> {
        use crate::proof::sequence::CubeAnswer;
        let s = self.answer.take().ok_or_else(|| Error::Solver {
            solver: SEQUENCE_SOLVER.into(),
            reason: "asked twice for one answer".into(),
        })?;
        let stats = crate::solve::SolveStats {
            solver: SEQUENCE_SOLVER.into(),
            seconds: s.seconds,
            conflicts: Some(s.conflicts),
        };
        let (outcome, proof) = match s.answer {
            CubeAnswer::Sat(model) => (Outcome::Sat(model), None),
            CubeAnswer::Unknown(why) => (Outcome::Unknown(why), None),
            CubeAnswer::Unsat { proof, .. } => {
                let tmp = temp_proof_file(Some(&self.proof_target))?;
                let written = if self.compress {
                    let mut out = std::io::BufWriter::new(tmp.as_file());
                    compressed::compress(&proof[..], &mut out).and_then(|_| out.flush())
                } else {
                    std::fs::write(tmp.path(), &proof)
                };
                written.map_err(|e| Error::io(tmp.path(), e))?;
                let options = LratOptions {
                    ids_follow_cnf: true,
                    ..LratOptions::default()
                };
                let checked = accept_proof(cnf, tmp, Some(&self.proof_target), &options)?;
                (Outcome::Unsat, Some(checked.info))
            }
        };
        Ok(crate::solve::SolveResult {
            outcome,
            stats,
            proof,
        })
    }
}

/// The error for cube `index` of a split in `dir` that has `n` cubes.
pub fn out_of_range(dir: &Path, index: usize, n: usize) -> Error {
    Error::Options(format!(
        "cube index {index} is out of range: {} has {n} cubes (0..={})",
        dir.display(),
        n.saturating_sub(1)
    ))
}

/// Whether `e`, returned for cube `index` of the split in `dir`, is already
/// recorded in that cube's result (status `error`, with `e` as the reason).
/// Such an error belongs to the cube alone (a back-end that failed, a proof
/// the checker rejected, a wrong model), so a run over a range of cubes can
/// go on with the others; `merge` lists the cube as pending with the reason.
pub fn recorded_error(dir: &Path, index: usize, e: &Error) -> bool {
    matches!(
        read_result(dir, index),
        Ok(Some(r)) if r.status == CubeStatus::Error
            && r.reason.as_deref() == Some(e.to_string().as_str())
    )
}

/// Where [`solve_one`] keeps a cube's result, and in which form its proof.
#[derive(Clone, Copy)]
struct Keep<'a> {
    dir: &'a Path,
    compress: bool,
}

/// Replaces the checked proof at `path` by a zstd frame around the same
/// bytes, atomically (a reader sees one form or the other, each of them the
/// proof that was checked).
fn compress_in_place(path: &Path) -> Result<()> {
    let src = std::fs::File::open(path).map_err(|e| Error::io(path, e))?;
    let tmp = crate::artifact::temp_beside(path)?;
    let out = BufWriter::new(tmp.as_file());
    compressed::compress(std::io::BufReader::new(src), out).map_err(|e| Error::io(path, e))?;
    crate::artifact::persist(tmp, path)?;
    Ok(())
}

/// Solves the cube `entry` as the problem `cnf` (with the header data of
/// `file`) and writes its result.
fn solve_one(
    keep: Keep<'_>,
    entry: &CubeEntry,
    file: &CnfFile,
    cnf: &Cnf,
    cube_name: &str,
    backend: &mut dyn Backend,
    limits: &Limits,
) -> Result<RunOutcome> {
    let index = entry.cube.index;
    let dir = keep.dir;
    let results = dir.join(RESULTS_DIR);
    std::fs::create_dir_all(&results).map_err(|e| Error::io(&results, e))?;
    let mut result = CubeResult {
        format: RESULT_FORMAT.into(),
        orbitcnf_version: VERSION.into(),
        index,
        cube_sha256: entry.digest().to_string(),
        status: CubeStatus::Unknown,
        orbit: None,
        map: None,
        proof: None,
        reason: None,
        solver: backend.name(),
        seconds: 0.0,
        conflicts: None,
        handed_off_after: None,
    };
    let fail = |mut result: CubeResult, e: Error| -> Result<RunOutcome> {
        result.status = CubeStatus::Error;
        result.reason = Some(e.to_string());
        write_result(dir, &result)?;
        Err(e)
    };
    let t = Instant::now();
    let solved = match backend.solve(cnf, limits) {
        Ok(s) => s,
        Err(e) => {
            result.seconds = t.elapsed().as_secs_f64();
            return fail(result, e);
        }
    };
    result.solver = solved.stats.solver.clone();
    result.seconds = solved.stats.seconds;
    result.conflicts = solved.stats.conflicts;
    match solved.outcome {
        Outcome::Sat(model) => {
            match decide::witness(
                &file.question,
                &file.options,
                cnf,
                &file.map,
                &model,
                cube_name,
                Some(&file.clause_lines),
            ) {
                Ok(w) => {
                    result.status = CubeStatus::Feasible;
                    result.orbit = Some(w.orbit);
                    result.map = w.map;
                }
                Err(e) => return fail(result, e),
            }
        }
        Outcome::Unsat => {
            result.status = CubeStatus::Infeasible;
            if let Some(info) = solved.proof {
                let path = info
                    .lrat_file
                    .clone()
                    .unwrap_or_else(|| proof_path(dir, index));
                if path != proof_path(dir, index) {
                    return fail(
                        result,
                        Error::Options(format!(
                            "the back-end wrote the proof to {}, expected {}",
                            path.display(),
                            proof_path(dir, index).display()
                        )),
                    );
                }
                if keep.compress
                    && !compressed::is_compressed(&path).map_err(|e| Error::io(&path, e))?
                {
                    compress_in_place(&path)?;
                }
                let (sha256, bytes) = crate::artifact::sha256_file(&path)?;
                result.proof = Some(ProofRecord {
                    file: proof_name(index),
                    sha256,
                    bytes,
                    steps: info.lrat.steps,
                });
            } else {
                result.reason = Some(format!(
                    "uncertified: the unsatisfiability claim of {}",
                    result.solver
                ));
            }
        }
        Outcome::Unknown(why) => {
            result.reason = Some(why);
        }
    }
    write_result(dir, &result)?;
    Ok(RunOutcome::Solved(result))
}

fn write_result(dir: &Path, r: &CubeResult) -> Result<()> {
    let results = dir.join(RESULTS_DIR);
    std::fs::create_dir_all(&results).map_err(|e| Error::io(&results, e))?;
    let text = serde_json::to_string_pretty(r).expect("results serialise") + "\n";
    write_atomically(&result_path(dir, r.index), text.as_bytes())
}

/// A cube that `merge` could not count as decided.
#[derive(Clone, Debug, PartialEq, Serialize)]
pub struct Pending {
    /// The cube's index.
    pub index: usize,
    /// `missing`, `unknown`, `error` or `rejected`.
    pub state: String,
    /// Details.
    pub reason: String,
}

/// The result that `read` gave for cube `index`, or `None` after adding to
/// `pending` why there is none: `missing` without a result file, `rejected`
/// when the file cannot be read. Shared by the merges of grid and real
/// folders.
pub fn result_or_pending<R>(
    read: Result<Option<R>>,
    index: usize,
    pending: &mut Vec<Pending>,
) -> Option<R> {
    let (state, reason) = match read {
        Ok(Some(r)) => return Some(r),
        Ok(None) => ("missing", "no result file".to_string()),
        Err(e) => ("rejected", e.to_string()),
    };
    pending.push(Pending {
        index,
        state: state.into(),
        reason,
    });
    None
}

/// What backs a merged verdict.
#[derive(Clone, Debug, PartialEq, Serialize)]
#[serde(tag = "kind", rename_all = "kebab-case")]
pub enum MergeCertificate {
    /// A cube's orbit, verified again by the merge.
    Witness,
    /// Every cube's LRAT proof and the coverage proof, each re-checked by
    /// the merge against its CNF, which is identical to a fresh encoding.
    CubeProofs {
        /// How many cube proofs were checked.
        cubes: usize,
    },
    /// As `CubeProofs`, and one LRAT proof of `formula.cnf` assembled from
    /// them ([`crate::proof::lift`]) and accepted by orbitcnf's checker.
    CombinedProof {
        /// Where it was written.
        file: PathBuf,
        /// Its size.
        bytes: u64,
        /// What the checker established.
        summary: LratSummary,
    },
    /// Every cube is refuted, but some only on a solver's word (listed in
    /// [`MergeReport::uncertified`]); the other proofs were re-checked.
    PartlyUncertified,
    /// No verdict.
    None,
}

/// What [`merge`] found.
#[derive(Clone, Debug, PartialEq, Serialize)]
pub struct MergeReport {
    /// The combined verdict.
    pub verdict: Verdict,
    /// The question.
    pub question: QuestionRecord,
    /// The question in words.
    pub statement: String,
    /// The cube count.
    pub cubes: usize,
    /// Cubes refuted with a proof that was re-checked now.
    pub certified: Vec<usize>,
    /// Cubes refuted on a solver's word only (no proof).
    pub uncertified: Vec<usize>,
    /// The cube whose orbit is reported, when feasible.
    #[serde(skip_serializing_if = "Option::is_none")]
    pub feasible_cube: Option<usize>,
    /// The verified orbit, when feasible.
    #[serde(skip_serializing_if = "Option::is_none")]
    pub orbit: Option<Vec<Point>>,
    /// The independent check of the orbit, when feasible.
    #[serde(skip_serializing_if = "Option::is_none")]
    pub check: Option<OrbitCheck>,
    /// The map on all of D, when feasible in the full-map formulation.
    #[serde(skip_serializing_if = "Option::is_none")]
    pub map: Option<Vec<(Point, Point)>>,
    /// The independent check of that map.
    #[serde(skip_serializing_if = "Option::is_none")]
    pub map_check: Option<SelfMapCheck>,
    /// Cubes without a usable result, by index.
    pub pending: Vec<Pending>,
    /// The coverage proof, re-checked now.
    pub coverage: LratSummary,
    /// What backs the verdict.
    pub certificate: MergeCertificate,
    /// Total solving seconds over all results.
    pub solve_seconds: f64,
}

impl MergeReport {
    /// The exit code: as [`Verdict::exit_code`], and
    /// [`crate::report::EXIT_UNCHECKED`] for an infeasible verdict that
    /// rests partly on solvers' unchecked claims.
    pub fn exit_code(&self) -> i32 {
        match (&self.verdict, &self.certificate) {
            (Verdict::Infeasible, MergeCertificate::PartlyUncertified) => {
                crate::report::EXIT_UNCHECKED
            }
            (v, _) => v.exit_code(),
        }
    }

    /// The report for people.
    pub fn to_text(&self) -> String {
        use std::fmt::Write as _;
        let mut s = String::new();
        let _ = writeln!(s, "question     {}", self.statement);
        let done = self.certified.len() + self.uncertified.len();
        match self.verdict {
            Verdict::Feasible => {
                let _ = writeln!(
                    s,
                    "verdict      FEASIBLE (cube {})",
                    self.feasible_cube.unwrap_or(0)
                );
            }
            Verdict::Infeasible => {
                let head = if self.uncertified.is_empty() {
                    "INFEASIBLE"
                } else {
                    "INFEASIBLE, UNCHECKED (some cubes rest on a solver's word)"
                };
                let _ = writeln!(
                    s,
                    "verdict      {head}: all {} cubes refuted, and the cubes cover the search space",
                    self.cubes
                );
            }
            Verdict::Unknown => {
                let _ = writeln!(
                    s,
                    "verdict      UNKNOWN: {} of {} cubes refuted, {} without a usable result",
                    done,
                    self.cubes,
                    self.pending.len()
                );
            }
        }
        if let Some(orbit) = &self.orbit {
            let _ = writeln!(s, "orbit        i  x_i");
            for (i, x) in orbit.iter().enumerate() {
                let coords: Vec<String> = x.iter().map(|v| format!("{v:>2}")).collect();
                let _ = writeln!(s, "             {i:>2}  ({})", coords.join(", "));
            }
        }
        if let Some(check) = &self.check {
            let _ = writeln!(s, "check        passed: {check}");
        }
        if let Some(mc) = &self.map_check {
            let _ = writeln!(s, "map check    passed: {mc}");
        }
        let _ = writeln!(
            s,
            "coverage     LRAT proof ({} steps) accepted: every model of formula.cnf lies in some cube",
            self.coverage.steps
        );
        let _ = writeln!(
            s,
            "cubes        {} refuted with a re-checked LRAT proof, {} on the solver's word only",
            self.certified.len(),
            self.uncertified.len()
        );
        if !self.uncertified.is_empty() {
            let _ = writeln!(s, "uncertified  {}", list(&self.uncertified));
        }
        if !self.pending.is_empty() {
            let idx: Vec<usize> = self.pending.iter().map(|p| p.index).collect();
            let _ = writeln!(s, "pending      {}", list(&idx));
            for p in self.pending.iter().take(20) {
                let _ = writeln!(
                    s,
                    "             cube {}: {}: {}",
                    p.index, p.state, p.reason
                );
            }
            if self.pending.len() > 20 {
                let _ = writeln!(s, "             … and {} more", self.pending.len() - 20);
            }
        }
        match &self.certificate {
            MergeCertificate::CombinedProof {
                file,
                bytes,
                summary,
            } => {
                let _ = writeln!(
                    s,
                    "proof        one LRAT proof of formula.cnf ({} steps, {bytes} bytes) accepted, written to {}",
                    summary.steps,
                    file.display()
                );
            }
            MergeCertificate::PartlyUncertified => {
                let _ = writeln!(
                    s,
                    "certificate  incomplete: cubes {} rest on the solver's word",
                    list(&self.uncertified)
                );
            }
            _ => {}
        }
        let _ = writeln!(s, "solve time   {:.3} s over all cubes", self.solve_seconds);
        s
    }
}

/// Merges the results of the split in `dir`. A cube refuted only on a
/// solver's word counts as refuted when `accept_claims` holds (the verdict
/// is then marked unchecked); otherwise it is listed as pending. With
/// `combined`, also writes one LRAT proof of `formula.cnf` there, in the
/// encoding `format` (when every cube has a proof), and checks it. Reports
/// how far it got through `progress` (thousands of cube proofs take
/// minutes to re-check, and the assembled proof as long again). The cube
/// proofs are checked on `jobs` threads (at least one), each holding one
/// cube's CNF at a time.
///
/// # Errors
/// A split that fails [`verify_split`]; unreadable result files;
/// [`Error::Io`]. Missing, unknown, failed and rejected cubes are not
/// errors: they are listed in [`MergeReport::pending`].
pub fn merge(
    dir: &Path,
    combined: Option<&Path>,
    accept_claims: bool,
    format: FileEncoding,
    progress: ProgressMode,
    jobs: usize,
) -> Result<MergeReport> {
    let mut progress = Progress::new(progress);
    let m = SplitManifest::read(dir)?;
    let (enc, _coverage, coverage_summary) = verify_split(dir, &m)?;
    let q = Question::from_record(&m.question)?;
    let mut report = MergeReport {
        verdict: Verdict::Unknown,
        question: m.question.clone(),
        statement: q.statement(),
        cubes: m.cubes.len(),
        certified: Vec::new(),
        uncertified: Vec::new(),
        feasible_cube: None,
        orbit: None,
        check: None,
        map: None,
        map_check: None,
        pending: Vec::new(),
        coverage: coverage_summary,
        certificate: MergeCertificate::None,
        solve_seconds: 0.0,
    };
    let mut proofs: Vec<(Cube, PathBuf)> = Vec::new();
    let start = Instant::now();
    // The proofs are checked on `jobs` threads; the report is filled in
    // cube order afterwards, so it does not depend on their timing.
    let mut checked: Vec<Option<Checked>> = vec![None; m.cubes.len()];
    let stop = std::sync::atomic::AtomicBool::new(false);
    // One buffer of formula + cube units per thread (`WithUnits`): copying
    // the formula per cube was most of the time of a merge of small cubes.
    let work = |pull: &mut dyn FnMut() -> Option<usize>, push: &mut dyn FnMut(usize, Checked)| {
        let mut scratch = crate::cnf::WithUnits::new(&enc.cnf);
        while let Some(k) = pull() {
            push(
                k,
                check_result(
                    dir,
                    &m.cubes[k],
                    &q,
                    &m.options,
                    &mut scratch,
                    accept_claims,
                ),
            );
        }
    };
    crate::pool::run_streams(m.cubes.len(), jobs, &stop, work, |event, state| {
        if let crate::pool::Event::Finished(k, c) = event {
            checked[k] = Some(c);
        }
        progress.status(|| {
            format!(
                "merge: {} of {} cube results checked on {} ({})",
                state.finished,
                state.total,
                crate::progress::threads_words(jobs.max(1).min(state.total.max(1))),
                duration_words(start.elapsed().as_secs_f64())
            )
        });
    });
    for (entry, c) in m.cubes.iter().zip(checked) {
        let i = entry.cube.index;
        let Some(c) = c else {
            // Unreachable: the pool runs every task unless stopped, and
            // nothing stops it; counted as pending all the same.
            report.pending.push(Pending {
                index: i,
                state: "missing".into(),
                reason: "not checked".into(),
            });
            continue;
        };
        report.solve_seconds += c.seconds;
        match c.kind {
            CheckedKind::Pending(p) => report.pending.push(p),
            CheckedKind::Uncertified => report.uncertified.push(i),
            CheckedKind::Certified(path) => {
                report.certified.push(i);
                if combined.is_some() {
                    proofs.push((entry.cube.clone(), path));
                }
            }
            CheckedKind::Feasible { orbit, map, check } => {
                if report.orbit.is_none() {
                    report.feasible_cube = Some(i);
                    report.orbit = Some(orbit);
                    report.map = map;
                    report.check = Some(check.orbit);
                    report.map_check = check.map;
                }
            }
        }
    }
    if report.orbit.is_some() {
        report.verdict = Verdict::Feasible;
        report.certificate = MergeCertificate::Witness;
    } else if report.pending.is_empty() {
        report.verdict = Verdict::Infeasible;
        if report.uncertified.is_empty() {
            if let Some(path) = combined {
                let (bytes, summary) =
                    combine(&enc, &m, dir, &proofs, path, format, &mut progress)?;
                report.certificate = MergeCertificate::CombinedProof {
                    file: path.to_path_buf(),
                    bytes,
                    summary,
                };
            } else {
                report.certificate = MergeCertificate::CubeProofs {
                    cubes: report.certified.len(),
                };
            }
        } else {
            report.certificate = MergeCertificate::PartlyUncertified;
        }
    }
    progress.clear();
    Ok(report)
}

/// What [`merge`] made of one cube's result file.
#[derive(Clone, Debug)]
struct Checked {
    /// The result's solving seconds (with those before a hand-off); 0
    /// without a result.
    seconds: f64,
    kind: CheckedKind,
}

#[derive(Clone, Debug)]
enum CheckedKind {
    /// A feasible cube whose orbit (and map) the verifier accepted.
    Feasible {
        orbit: Vec<Point>,
        map: Option<Vec<(Point, Point)>>,
        check: evidence::WitnessCheck,
    },
    /// Refuted, with its proof re-checked now (the proof's path).
    Certified(PathBuf),
    /// Refuted on a solver's word, and such claims are accepted.
    Uncertified,
    /// Not decided, or its evidence rejected.
    Pending(Pending),
}

/// Reads the result of cube `entry` and checks its evidence: the orbit
/// with the independent verifier, the proof against `F` with the cube's
/// units. The heavy part of [`merge`], run on its threads.
fn check_result(
    dir: &Path,
    entry: &CubeEntry,
    q: &Question,
    options: &EncodeOptions,
    formula: &mut crate::cnf::WithUnits,
    accept_claims: bool,
) -> Checked {
    let i = entry.cube.index;
    let pending = |state: &str, reason: String| Checked {
        seconds: 0.0,
        kind: CheckedKind::Pending(Pending {
            index: i,
            state: state.into(),
            reason,
        }),
    };
    let mut missing = Vec::new();
    let Some(r) = result_or_pending(read_result(dir, i), i, &mut missing) else {
        let p = missing
            .pop()
            .expect("result_or_pending adds one when it gives none");
        return pending(&p.state, p.reason);
    };
    let seconds = r.seconds + r.handed_off_after.unwrap_or(0.0);
    let kind = if r.cube_sha256 != entry.digest() {
        pending(
            "rejected",
            "the result is for a different cube file (a stale result?)".into(),
        )
        .kind
    } else {
        match r.status {
            CubeStatus::Feasible => match r.orbit {
                None => pending("rejected", "feasible without an orbit".into()).kind,
                Some(orbit) => {
                    match evidence::check_witness(q, options, &orbit, r.map.as_deref()) {
                        Ok(check) => CheckedKind::Feasible {
                            orbit,
                            map: r.map,
                            check,
                        },
                        Err(e) => pending("rejected", e.to_string()).kind,
                    }
                }
            },
            CubeStatus::Infeasible => match &r.proof {
                None if accept_claims => CheckedKind::Uncertified,
                None => {
                    pending(
                        "unchecked",
                        format!(
                            "refuted only on the word of {} (no proof); solve it again with a \
                             proof, or accept unchecked claims",
                            r.solver
                        ),
                    )
                    .kind
                }
                Some(p) => match formula.set(entry.cube.lits()) {
                    Err(l) => {
                        pending(
                            "rejected",
                            format!(
                                "the manifest's cube has the literal {}, not a variable of \
                                 the formula",
                                l.dimacs()
                            ),
                        )
                        .kind
                    }
                    Ok(cnf) => match check_cube_proof(dir, i, p, cnf) {
                        Ok(path) => CheckedKind::Certified(path),
                        Err(e) => pending("rejected", e.to_string()).kind,
                    },
                },
            },
            CubeStatus::Unknown => {
                pending("unknown", r.reason.unwrap_or_else(|| "no answer".into())).kind
            }
            CubeStatus::Error => {
                pending(
                    "error",
                    r.reason.unwrap_or_else(|| "the solver failed".into()),
                )
                .kind
            }
        }
    };
    Checked { seconds, kind }
}

/// `F` with the cube's units, as [`super::cube_encoding`] builds it.
pub fn cube_cnf(f: &Cnf, cube: &Cube) -> Cnf {
    let mut cnf = f.clone();
    for l in cube.lits() {
        cnf.add_clause(&[l]);
    }
    cnf
}

/// Lifts the cube proofs at `proofs` and assembles them with the split's
/// coverage proof into one LRAT proof of `formula.cnf` in `format`, checked
/// (through the decompressor, when compressed) and then written to `path`;
/// returns its size and summary.
fn combine(
    enc: &crate::encode::Encoding,
    m: &SplitManifest,
    dir: &Path,
    proofs: &[(Cube, PathBuf)],
    path: &Path,
    format: FileEncoding,
    progress: &mut Progress,
) -> Result<(u64, LratSummary)> {
    let open = |p: &Path| std::fs::File::open(p).map_err(|e| Error::io(p, e));
    // One spool for every lifted proof: a file per cube would hold a
    // descriptor per cube until the end (`proof::spool`).
    let mut spool = Spool::new(Some(path))?;
    for (done, (c, p)) in proofs.iter().enumerate() {
        progress.status(|| format!("merge: lifting cube proofs, {done} of {}", proofs.len()));
        let proof = ProofSource::new(open(p)?).map_err(|e| Error::io(p, e))?;
        spool.lift(&enc.cnf, &c.lits(), proof)?;
    }
    let pieces = spool.sections(0..spool.len())?;
    let tmp = temp_proof_file(Some(path))?;
    let out = BufWriter::new(tmp.reopen().map_err(|e| Error::io(tmp.path(), e))?);
    let coverage = open(&dir.join(&m.coverage.proof.name))?;
    let sources = coverage_sources(enc);
    progress.event(|| "merge: assembling the proof of the whole CNF".into());
    if format.compressed() {
        let out = compressed::encoder(out).map_err(|e| Error::io(tmp.path(), e))?;
        assemble(&enc.cnf, &sources, pieces, coverage, out, format.format())?;
    } else {
        assemble(&enc.cnf, &sources, pieces, coverage, out, format.format())?;
    }
    drop(spool);
    progress.event(|| "merge: checking the assembled proof".into());
    let options = LratOptions {
        ids_follow_cnf: true,
        ..LratOptions::default()
    };
    let info = accept_proof(&enc.cnf, tmp, Some(path), &options)?.info;
    Ok((info.lrat_bytes, info.lrat))
}

/// Checks cube `index`'s proof file against its record and `cnf`; returns its path.
fn check_cube_proof(dir: &Path, index: usize, p: &ProofRecord, cnf: &Cnf) -> Result<PathBuf> {
    if p.file != proof_name(index) {
        return Err(Error::parse(
            result_path(dir, index).display().to_string(),
            0,
            format!(
                "names the proof {:?}, expected {:?}",
                p.file,
                proof_name(index)
            ),
        ));
    }
    let path = dir.join(RESULTS_DIR).join(&p.file);
    let shown = path.display().to_string();
    let stored = recheck_file(cnf, &path, &LratOptions::default())?;
    if stored.sha256 != p.sha256 {
        return Err(Error::parse(
            shown,
            0,
            "does not match its SHA-256 in the result file",
        ));
    }
    stored
        .check
        .map_err(|e| Error::parse(shown, 0, format!("the proof is rejected: {e}")))?;
    Ok(path)
}

/// The indices of the cubes without a final result (missing, unknown,
/// error, stale or unreadable), for re-running only those.
///
/// # Errors
/// A manifest that cannot be read.
pub fn pending_indices(dir: &Path) -> Result<Vec<usize>> {
    let m = SplitManifest::read(dir)?;
    Ok(m.cubes
        .iter()
        .filter(|e| {
            !matches!(read_result(dir, e.cube.index),
                Ok(Some(r)) if r.status.is_final() && r.cube_sha256 == e.digest())
        })
        .map(|e| e.cube.index)
        .collect())
}
