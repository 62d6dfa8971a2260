//! `decide --real` and `check-bundle` of a real-space bundle: printing
//! around [`orbitcnf::real`], which does the work.

use std::io::Write as _;
use std::path::{Path, PathBuf};
use std::time::Duration;

use orbitcnf::Error;
use orbitcnf::progress::ProgressMode;
use orbitcnf::real::{self, Handoff, RealOptions};

use super::{Outcome, code, print_either};

/// What `decide --real` was asked.
#[derive(Debug)]
pub struct RealDecide {
    /// Dimension.
    pub n: usize,
    /// Period.
    pub p: usize,
    /// The time limit.
    pub time_limit: Option<Duration>,
    /// JSON instead of text.
    pub json: bool,
    /// How progress is shown on stderr.
    pub progress: ProgressMode,
    /// Where to write the bundle.
    pub bundle: Option<PathBuf>,
    /// Write and check a certificate for an infeasible answer.
    pub certify: bool,
    /// Hand the propositional endgame to an external solver.
    pub handoff: Option<Handoff>,
    /// Start with the order lemmas (`RealOptions::order`).
    pub order: bool,
    /// Threads for cubes (`--jobs`); with `cubes`, a run in cubes.
    pub jobs: Option<usize>,
    /// Cubes to aim for (`--cubes`).
    pub cubes: Option<usize>,
}

/// The hand-off of `--solver SOLVER --handoff-after SECS` for the real
/// search: `None` for the bundled solver.
///
/// # Errors
/// An unknown solver; `--handoff-after` without an external solver.
pub fn handoff(solver: &str, after: Option<Duration>) -> Result<Option<Handoff>, Error> {
    let solver = solver.trim();
    let h = match solver.strip_prefix("external:") {
        _ if solver == "bundled" => None,
        Some(cmd) => Some(Handoff {
            command: cmd.to_string(),
            after: after.unwrap_or(Duration::from_secs(10)),
        }),
        None => {
            return Err(Error::Options(format!(
                "unknown solver {solver:?}; write --solver bundled or --solver external:'COMMAND ARGS'"
            )));
        }
    };
    if h.is_none() && after.is_some() {
        return Err(Error::Options(
            "--handoff-after needs an external solver: --solver external:'cadical -q'".into(),
        ));
    }
    Ok(h)
}

/// Runs `decide --real`.
pub fn decide(a: RealDecide) -> Outcome {
    if a.jobs.is_some() || a.cubes.is_some() {
        return decide_jobs(a);
    }
    if let Some(dir) = &a.bundle {
        orbitcnf::bundle::check_target(dir)?;
    }
    // The certificate is kept in a temporary folder beside the bundle (the
    // same file system, so the proof is hard-linked rather than copied).
    let keep = match &a.bundle {
        Some(dir) => {
            let parent = match dir.parent() {
                Some(p) if !p.as_os_str().is_empty() => p.to_path_buf(),
                _ => PathBuf::from("."),
            };
            std::fs::create_dir_all(&parent).map_err(|e| Error::io(&parent, e))?;
            Some(
                tempfile::Builder::new()
                    .prefix(".orbitcnf-real-")
                    .tempdir_in(&parent)
                    .map_err(|e| Error::io(&parent, e))?,
            )
        }
        None => None,
    };
    let mut o = RealOptions::new();
    o.certify = a.certify;
    o.handoff = a.handoff;
    o.order = a.order;
    o.certificate_dir = keep.as_ref().map(|t| t.path().to_path_buf());
    let mut line = progress_line(a.progress);
    let report = real::decide(a.n, a.p, &o, a.time_limit, &mut |pr| {
        line(&format!(
            "real space R^{} p = {}: {:.0} s, {} conflicts, {} lemmas",
            a.n, a.p, pr.seconds, pr.stats.conflicts, pr.lemmas
        ));
    });
    line("");
    let mut report = report?;
    if let Some(dir) = &a.bundle {
        let cert = keep.as_ref().map(|t| t.path());
        match real::bundle::write_bundle(dir, &report, cert)? {
            Some(_) => {
                if let real::RealAnswer::Infeasible { dir: d, .. } = &mut report.answer {
                    *d = Some(dir.clone());
                }
                eprintln!("certificate bundle written to {}", dir.display());
            }
            None => eprintln!(
                "no bundle written: the answer is {}",
                if report.verdict() == "unknown" {
                    "unknown"
                } else {
                    "unchecked"
                }
            ),
        }
    }
    print_either(a.json, || report.to_json(), || report.to_text())?;
    Ok(code(report.exit_code()))
}

/// Whether `check-bundle` should read `dir` as a real-space bundle.
pub fn is_real_bundle(dir: &Path) -> bool {
    real::bundle::is_real_bundle(dir)
}

/// Runs `check-bundle` on a real-space bundle.
pub fn check_bundle(dir: &Path, json: bool) -> Outcome {
    let c = real::bundle::check_bundle(dir)?;
    print_either(
        json,
        || serde_json::to_string(&c).unwrap_or_default(),
        || c.to_text(),
    )?;
    Ok(0)
}

/// A progress printer for `mode`: a line redrawn in place (`Bar`; an empty
/// text clears it), a timestamped line every 30 s (`Lines`), or nothing.
pub fn progress_line(mode: ProgressMode) -> impl FnMut(&str) {
    let t0 = std::time::Instant::now();
    let mut last: Option<f64> = None;
    let mut drawn = false;
    move |text: &str| match mode {
        ProgressMode::Bar if text.is_empty() && drawn => {
            let _ = write!(std::io::stderr(), "\r\x1b[K");
            drawn = false;
        }
        ProgressMode::Bar if text.is_empty() => {}
        ProgressMode::Bar => {
            let _ = write!(std::io::stderr(), "\r\x1b[K{text}");
            drawn = true;
        }
        ProgressMode::Lines if !text.is_empty() => {
            let now = t0.elapsed().as_secs_f64();
            if last.is_none_or(|l| now - l >= 30.0) {
                last = Some(now);
                let _ = writeln!(std::io::stderr(), "orbitcnf: progress: {text}");
            }
        }
        _ => {}
    }
}

/// `decide --real --jobs K [--cubes N]`: a split folder (the bundle folder,
/// or a temporary one), its cubes on K threads, and its merge.
fn decide_jobs(a: RealDecide) -> Outcome {
    if a.p == 1 {
        // period 1 has no skeleton to split: the single search answers it at once
        return decide(RealDecide {
            jobs: None,
            cubes: None,
            ..a
        });
    }
    let jobs = a.jobs.unwrap_or_else(orbitcnf::pool::default_jobs);
    let cubes = a.cubes.unwrap_or(jobs.max(1).saturating_mul(8));
    let tmp;
    let dir: &Path = match &a.bundle {
        Some(d) => {
            orbitcnf::artifact::may_replace(d, &real::cubes::is_real_split)?;
            d
        }
        None => {
            tmp = tempfile::Builder::new()
                .prefix(".orbitcnf-real-cubes-")
                .tempdir()
                .map_err(|e| Error::io("<temporary directory>", e))?;
            tmp.path()
        }
    };
    let mut o = RealOptions::new();
    o.certify = a.certify;
    o.handoff = a.handoff;
    o.order = a.order;
    let mut line = progress_line(a.progress);
    let r =
        real::cubes::jobs::decide_jobs(a.n, a.p, &o, jobs, cubes, dir, a.time_limit, &mut |t| {
            line(t)
        })?;
    if let Some(d) = &a.bundle {
        eprintln!(
            "split folder with every cube's certificate written to {} (re-check: orbitcnf merge {} or check-bundle)",
            d.display(),
            d.display()
        );
    }
    print_either(
        a.json,
        || {
            let mut v = serde_json::to_value(&r).unwrap_or_default();
            v["domain"] = "real".into();
            v["dim"] = a.n.into();
            v["period"] = a.p.into();
            v["verdict"] = serde_json::to_value(r.merge.verdict).unwrap_or_default();
            v["certified"] = r.merge.certified().into();
            v.to_string()
        },
        || r.to_text(),
    )?;
    Ok(code(r.merge.exit_code()))
}

/// `split --real`: writes the split folder and prints its summary.
pub fn split(n: usize, p: usize, cubes: usize, out: &Path, json: bool) -> Outcome {
    let m = real::cubes::write_split(out, n, p, &real::SkeletonOptions::default(), cubes)?;
    print_either(
        json,
        || serde_json::to_string(&m).unwrap_or_default(),
        || m.summary(out),
    )?;
    Ok(0)
}

/// `refine` on a real-space split folder.
pub fn refine(dir: &Path, which: Option<&[usize]>, per_cube: usize, json: bool) -> Outcome {
    let r = real::cubes::refine_split(dir, which, per_cube)?;
    print_either(
        json,
        || serde_json::to_string(&r).unwrap_or_default(),
        || r.to_text(dir),
    )?;
    Ok(0)
}

/// `run-cube` on a real-space split folder.
pub fn run_cube(
    dir: &Path,
    index: usize,
    options: &RealOptions,
    time_limit: Option<Duration>,
    force: bool,
    json: bool,
    progress: ProgressMode,
) -> Outcome {
    let mut line = progress_line(progress);
    let outcome = real::cubes::run::run_cube(dir, index, options, time_limit, force, &mut |pr| {
        line(&format!(
            "cube {index}: {:.0} s, {} conflicts, {} lemmas",
            pr.seconds, pr.stats.conflicts, pr.lemmas
        ));
    });
    line("");
    let (r, note) = match outcome? {
        real::cubes::run::RealRunOutcome::Solved(r) => (r, ""),
        real::cubes::run::RealRunOutcome::AlreadyDone(r) => {
            (r, " (already solved; --force solves again)")
        }
        real::cubes::run::RealRunOutcome::Refined(into) => {
            let pieces = real::cubes::pieces_words(&into);
            print_either(
                json,
                || serde_json::json!({ "index": index, "refined_into": into }).to_string(),
                || format!("cube {index}: cut into {pieces} by refine; nothing to solve\n"),
            )?;
            return Ok(0);
        }
    };
    print_either(
        json,
        || serde_json::to_string(&r).unwrap_or_default(),
        || r.to_text(note),
    )?;
    Ok(0)
}

/// `merge` (and `merge --pending`) on a real-space split folder.
pub fn merge(
    dir: &Path,
    pending: bool,
    accept_claims: bool,
    json: bool,
    progress: ProgressMode,
) -> Outcome {
    if pending {
        let idx = real::cubes::run::pending_indices(dir)?;
        super::print(&idx.iter().map(|i| format!("{i}\n")).collect::<String>())?;
        return Ok(0);
    }
    let r = real::cubes::run::merge(dir, accept_claims, progress)?;
    print_either(
        json,
        || serde_json::to_string(&r).unwrap_or_default(),
        || r.to_text(),
    )?;
    Ok(code(r.exit_code()))
}

/// `check-bundle` on a real-space split folder (as `decide --real --jobs
/// --bundle` writes it): the merge, which must give a certified verdict.
pub fn check_split(dir: &Path, json: bool) -> Outcome {
    let r = real::cubes::run::merge(dir, false, ProgressMode::Off)?;
    print_either(
        json,
        || serde_json::to_string(&r).unwrap_or_default(),
        || r.to_text(),
    )?;
    if r.verdict == orbitcnf::Verdict::Unknown {
        return Err(Error::Certificate(format!(
            "{}: the split has no verdict yet ({} cubes pending)",
            dir.display(),
            r.pending.len()
        )));
    }
    Ok(0)
}
