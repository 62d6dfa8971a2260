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
}

/// Runs `decide --real`.
pub fn decide(a: RealDecide) -> Outcome {
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
