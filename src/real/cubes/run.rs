//! Solving one cube of a real-space split, and merging the results.
//!
//! [`run_cube`] solves `skeleton ∧ cube` with [`crate::real::decide_cube`]
//! (the bundled CDCL(T), or its hand-off to an external solver). An
//! infeasible cube's certificate (`lemmas.txt`, `proof.lrat`; the folder's
//! `skeleton.cnf` is shared) is checked, then put in place as
//! `results/cube-NNNN/` by one rename, and `results/cube-NNNN.json`
//! ([`RealCubeResult`]) is written atomically after it. A feasible cube's
//! orbit is checked by [`crate::verify::check_orbit`] before it is written.
//!
//! [`merge`] re-checks the split ([`super::verify_split`]: skeleton,
//! digests, coverage proof), then every result: an orbit again by
//! [`check_orbit`], a certificate again by [`check_parts`] with the
//! manifest's cube literals. Feasible if some cube is, infeasible
//! (certified) if every cube is certified infeasible, unknown otherwise
//! with the pending cubes listed.

use std::path::{Path, PathBuf};
use std::time::{Duration, Instant};

use serde::{Deserialize, Serialize};

use super::{MANIFEST, RESULTS_DIR, RealSplitManifest, SKELETON, list, verify_split};
use crate::artifact::{FileEntry, write_atomically};
use crate::dimacs::VERSION;
use crate::error::{Error, Result};
use crate::progress::{Progress as Reporter, ProgressMode, duration_words};
use crate::proof::LratSummary;
use crate::real::certificate::{self, CertificateFiles, check_parts};
use crate::real::{Progress, RealAnswer, RealOptions, decide_cube};
use crate::report::Verdict;
use crate::split::run::{CubeStatus, Pending, result_or_pending};
use crate::verify::{OrbitCheck, check_orbit};

/// The format tag of [`RealCubeResult`].
pub const RESULT_FORMAT: &str = "orbitcnf-real-cube-result/1";

/// The certificate of an infeasible cube, as its result records it.
#[derive(Clone, Debug, PartialEq, Eq, Serialize, Deserialize)]
pub struct CubeCertificate {
    /// `lemmas.txt`, named relative to `results/`.
    pub lemmas: FileEntry,
    /// `proof.lrat`, named relative to `results/`.
    pub proof: FileEntry,
    /// Lemmas accepted by the Farkas checker when the result was written.
    pub lemma_count: usize,
    /// Steps of the LRAT proof accepted then.
    pub lrat_steps: u64,
}

/// `results/cube-NNNN.json`.
#[derive(Clone, Debug, PartialEq, Serialize, Deserialize)]
pub struct RealCubeResult {
    /// [`RESULT_FORMAT`].
    pub format: String,
    /// orbitcnf version that wrote it.
    pub orbitcnf_version: String,
    /// The cube's index.
    pub index: usize,
    /// The cube's digest in the manifest.
    pub cube_sha256: String,
    /// The outcome.
    pub status: CubeStatus,
    /// The checked orbit, when feasible (integer points of R^n).
    #[serde(default, skip_serializing_if = "Option::is_none")]
    pub orbit: Option<Vec<Vec<i64>>>,
    /// The checked certificate, when infeasible and certified.
    #[serde(default, skip_serializing_if = "Option::is_none")]
    pub certificate: Option<CubeCertificate>,
    /// Why the status is unknown or error, or that an infeasible answer is unchecked.
    #[serde(default, skip_serializing_if = "Option::is_none")]
    pub reason: Option<String>,
    /// Seconds of search (with the certificate check).
    pub seconds: f64,
    /// Conflicts of the search.
    pub conflicts: u64,
    /// Theory lemmas found.
    pub lemmas: usize,
    /// Calls of an external solver (hand-off).
    pub handoff_rounds: usize,
}

impl RealCubeResult {
    /// The result in one line for people; `note` is appended.
    pub fn to_text(&self, note: &str) -> String {
        let status = match self.status {
            CubeStatus::Feasible => "feasible (orbit checked)".to_string(),
            CubeStatus::Infeasible => match &self.certificate {
                Some(c) => format!(
                    "infeasible, certificate checked ({} theory lemmas, LRAT proof of {} steps)",
                    c.lemma_count, c.lrat_steps
                ),
                None => "infeasible, UNCHECKED (no certificate)".to_string(),
            },
            CubeStatus::Unknown => {
                format!("unknown: {}", self.reason.as_deref().unwrap_or("no answer"))
            }
            CubeStatus::Error => format!("error: {}", self.reason.as_deref().unwrap_or("?")),
        };
        format!(
            "cube {}: {status}; {:.3} s, {} conflicts{note}\n",
            self.index, self.seconds, self.conflicts
        )
    }
}

/// The result file of cube `index`.
pub fn result_path(dir: &Path, index: usize) -> PathBuf {
    dir.join(RESULTS_DIR).join(format!("cube-{index:04}.json"))
}

fn cert_dir_name(index: usize) -> String {
    format!("cube-{index:04}")
}

/// Reads a result file; `None` when there is none.
///
/// # Errors
/// [`Error::Parse`] for a file that is not the result of cube `index`; [`Error::Io`].
pub fn read_result(dir: &Path, index: usize) -> Result<Option<RealCubeResult>> {
    let path = result_path(dir, index);
    let bytes = match std::fs::read(&path) {
        Ok(b) => b,
        Err(e) if e.kind() == std::io::ErrorKind::NotFound => return Ok(None),
        Err(e) => return Err(Error::io(&path, e)),
    };
    let shown = path.display().to_string();
    let r: RealCubeResult = serde_json::from_slice(&bytes)
        .map_err(|e| Error::parse(&shown, e.line(), format!("not a cube result: {e}")))?;
    if r.format != RESULT_FORMAT || r.index != index {
        return Err(Error::file(
            shown,
            format!("not the result of cube {index} in format {RESULT_FORMAT}"),
        ));
    }
    Ok(Some(r))
}

/// What [`run_cube`] did.
#[derive(Clone, Debug)]
pub enum RealRunOutcome {
    /// The cube was solved now; the result was written.
    Solved(RealCubeResult),
    /// A final result was already there and `force` was not given.
    AlreadyDone(RealCubeResult),
    /// The cube was cut into these smaller cubes ([`super::refine_split`]):
    /// there is nothing to solve.
    Refined(Vec<usize>),
}

/// Solves cube `index` of the split in `dir` and writes its result
/// (module documentation). `options.certificate_dir` is ignored: the
/// certificate goes to `results/`. A final result already present is kept
/// unless `force`.
///
/// # Errors
/// [`Error::Options`] for an index out of range; a manifest or skeleton
/// that does not check; search errors (after writing a result with status
/// `error`); [`Error::Io`].
pub fn run_cube(
    dir: &Path,
    index: usize,
    options: &RealOptions,
    time: Option<Duration>,
    force: bool,
    progress: &mut dyn FnMut(&Progress),
) -> Result<RealRunOutcome> {
    let m = RealSplitManifest::read(dir)?;
    let cube = m
        .cubes
        .get(index)
        .ok_or_else(|| crate::split::run::out_of_range(dir, index, m.cubes.len()))?;
    if let Some(into) = &cube.refined_into {
        return Ok(RealRunOutcome::Refined(into.clone()));
    }
    if !force
        && let Ok(Some(r)) = read_result(dir, index)
        && r.status.is_final()
        && r.cube_sha256 == cube.sha256
    {
        return Ok(RealRunOutcome::AlreadyDone(r));
    }
    m.skeleton.verify(dir, MANIFEST)?;
    let results = dir.join(RESULTS_DIR);
    std::fs::create_dir_all(&results).map_err(|e| Error::io(&results, e))?;
    crate::artifact::sweep_stale(&results, true);
    let tmp = tempfile::Builder::new()
        .prefix(crate::artifact::TEMP_PREFIX)
        .tempdir_in(&results)
        .map_err(|e| Error::io(&results, e))?;
    let mut o = options.clone();
    o.certificate_dir = Some(tmp.path().to_path_buf());
    let (n, p) = (m.question.dim, m.question.period);
    let t0 = Instant::now();
    let mut result = RealCubeResult {
        format: RESULT_FORMAT.into(),
        orbitcnf_version: VERSION.into(),
        index,
        cube_sha256: cube.sha256.clone(),
        status: CubeStatus::Unknown,
        orbit: None,
        certificate: None,
        reason: None,
        seconds: 0.0,
        conflicts: 0,
        lemmas: 0,
        handoff_rounds: 0,
    };
    let report = match decide_cube(n, p, &cube.literals, &o, time, progress) {
        Ok(r) => r,
        Err(e) => {
            result.status = CubeStatus::Error;
            result.reason = Some(e.to_string());
            result.seconds = t0.elapsed().as_secs_f64();
            write_result(dir, &result)?;
            return Err(e);
        }
    };
    result.seconds = t0.elapsed().as_secs_f64();
    result.conflicts = report.sat.conflicts;
    result.lemmas = report.lemmas;
    result.handoff_rounds = report.handoff_rounds;
    match report.answer {
        RealAnswer::Feasible { orbit, .. } => {
            result.status = CubeStatus::Feasible;
            result.orbit = Some(orbit);
        }
        RealAnswer::Infeasible { check: None, .. } => {
            result.status = CubeStatus::Infeasible;
            result.reason = Some("uncertified: the search's claim only".into());
        }
        RealAnswer::Infeasible {
            check: Some(check), ..
        } => {
            result.status = CubeStatus::Infeasible;
            let name = cert_dir_name(index);
            // the folder's skeleton.cnf serves every cube
            let copy = tmp.path().join(certificate::SKELETON);
            std::fs::remove_file(&copy).map_err(|e| Error::io(&copy, e))?;
            let entry = |file: &str| -> Result<FileEntry> {
                let mut e = FileEntry::of_file(tmp.path(), file)?;
                e.name = format!("{name}/{file}");
                Ok(e)
            };
            result.certificate = Some(CubeCertificate {
                lemmas: entry(certificate::LEMMAS)?,
                proof: entry(certificate::PROOF)?,
                lemma_count: check.farkas.lemmas,
                lrat_steps: check.lrat.steps,
            });
            let target = results.join(&name);
            if target.exists() {
                std::fs::remove_dir_all(&target).map_err(|e| Error::io(&target, e))?;
            }
            let kept = tmp.keep();
            std::fs::rename(&kept, &target).map_err(|e| Error::io(&target, e))?;
        }
        RealAnswer::Unknown { reason } => result.reason = Some(reason),
    }
    write_result(dir, &result)?;
    Ok(RealRunOutcome::Solved(result))
}

fn write_result(dir: &Path, r: &RealCubeResult) -> Result<()> {
    let text = serde_json::to_string_pretty(r).map_err(|e| Error::Options(e.to_string()))? + "\n";
    write_atomically(&result_path(dir, r.index), text.as_bytes())
}

/// What [`merge`] found.
#[derive(Clone, Debug, Serialize)]
pub struct RealMergeReport {
    /// The combined verdict.
    pub verdict: Verdict,
    /// Dimension.
    pub dim: usize,
    /// Period.
    pub period: usize,
    /// The count of cubes to solve (those not cut into smaller ones).
    pub cubes: usize,
    /// Cubes cut into smaller ones ([`super::refine_split`]): they need no
    /// result of their own.
    #[serde(skip_serializing_if = "Vec::is_empty")]
    pub refined: Vec<usize>,
    /// Cubes refuted with a certificate that was re-checked now.
    pub certified: Vec<usize>,
    /// Cubes refuted on the search's word only.
    pub uncertified: Vec<usize>,
    /// The cube whose orbit is reported, when feasible.
    #[serde(skip_serializing_if = "Option::is_none")]
    pub feasible_cube: Option<usize>,
    /// The checked orbit, when feasible.
    #[serde(skip_serializing_if = "Option::is_none")]
    pub orbit: Option<Vec<Vec<i64>>>,
    /// Its independent check.
    #[serde(skip_serializing_if = "Option::is_none")]
    pub check: Option<OrbitCheck>,
    /// Cubes without a usable result.
    pub pending: Vec<Pending>,
    /// The coverage proof, re-checked now.
    pub coverage: LratSummary,
    /// Lemmas over all re-checked certificates.
    pub lemmas: usize,
    /// LRAT steps over all re-checked certificates.
    pub lrat_steps: u64,
    /// Seconds of search over all results.
    pub solve_seconds: f64,
}

impl RealMergeReport {
    /// Whether the verdict rests on checked evidence only.
    pub fn certified(&self) -> bool {
        match self.verdict {
            Verdict::Feasible => true,
            Verdict::Infeasible => self.uncertified.is_empty(),
            Verdict::Unknown => false,
        }
    }

    /// The exit code: 10 feasible, 20 infeasible and certified, 21
    /// infeasible with unchecked cubes, 0 unknown.
    pub fn exit_code(&self) -> i32 {
        match self.verdict {
            Verdict::Feasible => 10,
            Verdict::Infeasible if self.uncertified.is_empty() => 20,
            Verdict::Infeasible => crate::report::EXIT_UNCHECKED,
            Verdict::Unknown => 0,
        }
    }

    /// The report for people.
    pub fn to_text(&self) -> String {
        use std::fmt::Write as _;
        let mut s = String::new();
        let _ = writeln!(
            s,
            "question     an isometric {}-cycle in (R^{}, sup-norm), in {} cubes",
            self.period, self.dim, self.cubes
        );
        if !self.refined.is_empty() {
            let _ = writeln!(
                s,
                "refined      {} (cut into smaller cubes by refine; the pieces are counted above)",
                list(&self.refined)
            );
        }
        match self.verdict {
            Verdict::Feasible => {
                let _ = writeln!(
                    s,
                    "verdict      FEASIBLE (cube {})",
                    self.feasible_cube.unwrap_or(0)
                );
            }
            Verdict::Infeasible if self.uncertified.is_empty() => {
                let _ = writeln!(
                    s,
                    "verdict      INFEASIBLE: all {} cubes refuted with checked certificates, and the cubes cover the skeleton",
                    self.cubes
                );
            }
            Verdict::Infeasible => {
                let _ = writeln!(
                    s,
                    "verdict      INFEASIBLE, UNCHECKED: cubes {} rest on the search's word",
                    list(&self.uncertified)
                );
            }
            Verdict::Unknown => {
                let _ = writeln!(
                    s,
                    "verdict      UNKNOWN: {} of {} cubes refuted, {} without a usable result",
                    self.certified.len() + self.uncertified.len(),
                    self.cubes,
                    self.pending.len()
                );
            }
        }
        if let Some(orbit) = &self.orbit {
            let _ = writeln!(s, "orbit        i  x_i");
            for (i, x) in orbit.iter().enumerate() {
                let c: Vec<String> = x.iter().map(|v| format!("{v:>2}")).collect();
                let _ = writeln!(s, "             {i:>2}  ({})", c.join(", "));
            }
        }
        if let Some(check) = &self.check {
            let _ = writeln!(s, "check        passed: {check}");
        }
        let _ = writeln!(
            s,
            "coverage     LRAT proof ({} steps) accepted: every model of the skeleton lies in some cube",
            self.coverage.steps
        );
        let _ = writeln!(
            s,
            "cubes        {} certified infeasible ({} theory lemmas, {} LRAT steps re-checked), {} on the search's word",
            self.certified.len(),
            self.lemmas,
            self.lrat_steps,
            self.uncertified.len()
        );
        if self.verdict == Verdict::Feasible && !self.pending.is_empty() {
            let _ = writeln!(
                s,
                "other cubes  {} without a final result (not needed: one feasible cube answers the question)",
                self.pending.len()
            );
        } else if !self.pending.is_empty() {
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
        let _ = writeln!(s, "solve time   {:.3} s over all cubes", self.solve_seconds);
        s
    }
}

/// How many cubes the real-space split in `dir` has (from its manifest).
///
/// # Errors
/// A manifest that cannot be read or parsed.
pub fn cube_count(dir: &Path) -> Result<usize> {
    Ok(RealSplitManifest::read(dir)?.cubes.len())
}

/// Merges the results of the real-space split in `dir`. A cube refuted on
/// the search's word only counts when `accept_claims` holds (the verdict
/// is then unchecked); otherwise it is pending. Says through `progress`
/// how many results it has read and re-checked (every certificate is
/// checked again, which is most of a merge's time).
///
/// # Errors
/// A split that fails [`verify_split`] (skeleton, digests, coverage);
/// [`Error::Io`]. Missing, unknown, failed and rejected cubes are not
/// errors: they are listed in [`RealMergeReport::pending`].
pub fn merge(dir: &Path, accept_claims: bool, progress: ProgressMode) -> Result<RealMergeReport> {
    let mut progress = Reporter::new(progress);
    let start = Instant::now();
    let m = RealSplitManifest::read(dir)?;
    let (_sk, coverage) = verify_split(dir, &m)?;
    let (n, p) = (m.question.dim, m.question.period);
    let mut report = RealMergeReport {
        verdict: Verdict::Unknown,
        dim: n,
        period: p,
        cubes: m.leaves().count(),
        refined: m
            .cubes
            .iter()
            .filter(|c| !c.is_leaf())
            .map(|c| c.index)
            .collect(),
        certified: Vec::new(),
        uncertified: Vec::new(),
        feasible_cube: None,
        orbit: None,
        check: None,
        pending: Vec::new(),
        coverage,
        lemmas: 0,
        lrat_steps: 0,
        solve_seconds: 0.0,
    };
    let results = dir.join(RESULTS_DIR);
    let skeleton = dir.join(SKELETON);
    for (read, cube) in m.leaves().enumerate() {
        let i = cube.index;
        progress.status(|| {
            format!(
                "merge: {read} of {} cube results read, {} certificates checked ({})",
                report.cubes,
                report.certified.len(),
                duration_words(start.elapsed().as_secs_f64())
            )
        });
        let pending = |state: &str, reason: String| Pending {
            index: i,
            state: state.into(),
            reason,
        };
        let Some(r) = result_or_pending(read_result(dir, i), i, &mut report.pending) else {
            continue;
        };
        report.solve_seconds += r.seconds;
        if r.cube_sha256 != cube.sha256 {
            report.pending.push(pending(
                "rejected",
                "the result is for another cube or skeleton (a stale result?)".into(),
            ));
            continue;
        }
        match (r.status, &r.orbit, &r.certificate) {
            (CubeStatus::Feasible, Some(orbit), _) => match check_real_orbit(n, p, orbit) {
                Ok(check) => {
                    if report.orbit.is_none() {
                        report.feasible_cube = Some(i);
                        report.orbit = Some(orbit.clone());
                        report.check = Some(check);
                    }
                }
                Err(e) => report.pending.push(pending("rejected", e.to_string())),
            },
            (CubeStatus::Feasible, None, _) => report
                .pending
                .push(pending("rejected", "feasible without an orbit".into())),
            (CubeStatus::Infeasible, _, Some(c)) => {
                let files = CertificateFiles {
                    skeleton: &skeleton,
                    lemmas: &results.join(&c.lemmas.name),
                    proof: &results.join(&c.proof.name),
                };
                let name_ok = c.lemmas.name
                    == format!("{}/{}", cert_dir_name(i), certificate::LEMMAS)
                    && c.proof.name == format!("{}/{}", cert_dir_name(i), certificate::PROOF);
                let checked = if name_ok {
                    check_parts(n, p, &files, &cube.literals).and_then(|check| {
                        c.lemmas
                            .verify(&results, &format!("results/cube-{i:04}.json"))?;
                        c.proof
                            .verify(&results, &format!("results/cube-{i:04}.json"))?;
                        Ok(check)
                    })
                } else {
                    Err(Error::file(
                        result_path(dir, i).display().to_string(),
                        "names certificate files outside the cube's folder",
                    ))
                };
                match checked {
                    Ok(check) => {
                        report.certified.push(i);
                        report.lemmas += check.farkas.lemmas;
                        report.lrat_steps += check.lrat.steps;
                    }
                    Err(e) => report.pending.push(pending("rejected", e.to_string())),
                }
            }
            (CubeStatus::Infeasible, _, None) if accept_claims => report.uncertified.push(i),
            (CubeStatus::Infeasible, _, None) => report.pending.push(pending(
                "unchecked",
                "refuted on the search's word only (no certificate); solve it again with \
                 certification, or accept unchecked claims"
                    .into(),
            )),
            (CubeStatus::Unknown, _, _) => report.pending.push(pending(
                "unknown",
                r.reason.clone().unwrap_or_else(|| "no answer".into()),
            )),
            (CubeStatus::Error, _, _) => report.pending.push(pending(
                "error",
                r.reason
                    .clone()
                    .unwrap_or_else(|| "the search failed".into()),
            )),
        }
    }
    progress.clear();
    report.verdict = if report.orbit.is_some() {
        Verdict::Feasible
    } else if report.pending.is_empty() {
        Verdict::Infeasible
    } else {
        Verdict::Unknown
    };
    Ok(report)
}

/// Checks an integer orbit of the question `(n, p)` on its bounding box.
///
/// # Errors
/// [`Error::Check`] for an orbit that is not an isometric p-cycle in R^n;
/// [`Error::Question`] for one of another size.
pub fn check_real_orbit(n: usize, p: usize, orbit: &[Vec<i64>]) -> Result<OrbitCheck> {
    if orbit.len() != p || orbit.iter().any(|x| x.len() != n) {
        return Err(Error::Question(format!(
            "the orbit has {} points, not {p} points of R^{n}",
            orbit.len()
        )));
    }
    let lo = orbit.iter().flatten().copied().min().unwrap_or(0);
    let hi = orbit.iter().flatten().copied().max().unwrap_or(0);
    Ok(check_orbit(&vec![(lo, hi); n], orbit)?)
}

/// The indices of the cubes to solve without a final result, for
/// re-running only those (cubes cut into smaller ones are not listed).
///
/// # Errors
/// A manifest that cannot be read.
pub fn pending_indices(dir: &Path) -> Result<Vec<usize>> {
    let m = RealSplitManifest::read(dir)?;
    Ok(m.leaves()
        .filter(|c| {
            !matches!(read_result(dir, c.index),
                Ok(Some(r)) if r.status.is_final() && r.cube_sha256 == c.sha256)
        })
        .map(|c| c.index)
        .collect())
}
