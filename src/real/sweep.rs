//! The spectrum of R^n: every period asked over all of R^n, one after the
//! other, with an optional results store.
//!
//! Store layout (inside the grid store's folder, under `real/`, so that no
//! key can meet a grid question's):
//!
//! * `real/answers/<key>.json`: one decided answer (verdict, orbit, the
//!   bundle's folder name, figures, tool version);
//! * `real/bundles/<key>/`: its bundle ([`super::bundle`]), which
//!   `check-bundle` re-checks.
//!
//! `<key>` is the SHA-256 of `{"space":"real","dim":n,"period":p,
//! "formulation":F}` with `F` = [`super::skeleton::FORMULATION`]. Files are
//! written atomically. A stored feasible answer is reused after its orbit is
//! re-checked; a stored infeasible answer after its bundle's digests are
//! checked (in full, Farkas lemmas and LRAT, with `recheck`). Unknown
//! answers are not stored. An answer that contradicts a published theorem
//! [recalled] (infeasible at p ≤ 2^n, where {0,1}^n has a cycle; feasible
//! above max_k 2^k·C(n,k), B. Lemmens and M. Scheutzow 2005) is an
//! [`Error::Contradiction`].

use std::path::{Path, PathBuf};
use std::time::{Duration, Instant};

use serde::{Deserialize, Serialize};

use super::{Progress, RealAnswer, RealOptions, bundle, decide, skeleton};
use crate::artifact::{sha256_hex, write_atomically};
use crate::dimacs::VERSION;
use crate::error::{Error, Result};
use crate::theory::lemmens_scheutzow_bound;
use crate::verify::check_orbit;

/// What to sweep.
#[derive(Clone, Debug)]
pub struct RealSweep {
    /// Dimension.
    pub n: usize,
    /// The periods, in the order asked.
    pub periods: Vec<usize>,
    /// Search options (hand-off and so on; the certificate folder is chosen here).
    pub options: RealOptions,
    /// Time limit per period.
    pub time_limit: Option<Duration>,
    /// The store's folder (the grid store's; answers go under `real/`).
    pub store: Option<PathBuf>,
    /// Re-check reused infeasible answers in full.
    pub recheck: bool,
}

/// One period's answer.
#[derive(Clone, Debug, Serialize, Deserialize)]
pub struct RealRow {
    /// The period.
    pub period: usize,
    /// `feasible`, `infeasible` or `unknown`.
    pub verdict: String,
    /// `stored` or `search`.
    pub how: String,
    /// Whether a witness or certificate was checked.
    pub certified: bool,
    /// Seconds of this run on this period.
    pub seconds: f64,
    /// Theory lemmas (of the run that decided it).
    pub lemmas: usize,
    /// The orbit of a feasible answer.
    #[serde(skip_serializing_if = "Option::is_none", default)]
    pub orbit: Option<Vec<Vec<i64>>>,
    /// The bundle's folder, when stored.
    #[serde(skip_serializing_if = "Option::is_none", default)]
    pub bundle: Option<PathBuf>,
    /// Why an answer is unknown.
    #[serde(skip_serializing_if = "Option::is_none", default)]
    pub reason: Option<String>,
}

/// The spectrum of R^n.
#[derive(Clone, Debug, Serialize)]
pub struct RealSpectrum {
    /// Always `real`.
    pub domain: &'static str,
    /// Dimension.
    pub dim: usize,
    /// One row per period.
    pub rows: Vec<RealRow>,
    /// Whether every period was decided.
    pub all_decided: bool,
}

impl RealSpectrum {
    /// One line of JSON.
    pub fn to_json(&self) -> String {
        serde_json::to_string(self).unwrap_or_default()
    }

    /// A table for people.
    pub fn to_table(&self) -> String {
        let mut s = format!(
            "spectrum of (R^{}, ‖·‖∞), no grid (encodings/real-space.md)\n period  verdict      how      seconds  lemmas\n",
            self.dim
        );
        for r in &self.rows {
            let v = match (r.verdict.as_str(), r.certified) {
                ("unknown", _) => "unknown".to_string(),
                (v, true) => v.to_string(),
                (v, false) => format!("{v} (UNCHECKED)"),
            };
            s.push_str(&format!(
                " {:>6}  {v:<12} {:<8} {:>7.2}  {:>6}\n",
                r.period, r.how, r.seconds, r.lemmas
            ));
        }
        s
    }
}

/// The store key of `(n, p)`.
pub fn key(n: usize, p: usize) -> String {
    let q = serde_json::json!({"space": "real", "dim": n, "period": p, "formulation": skeleton::FORMULATION});
    sha256_hex(q.to_string().as_bytes())
}

fn contradiction(n: usize, p: usize, verdict: &str) -> Option<Error> {
    let ls = lemmens_scheutzow_bound(n);
    let theorem = match verdict {
        "infeasible" if p as u128 <= 1u128 << n.min(100) => format!(
            "every p ≤ 2^{n} occurs on {{0,1}}^{n} (a cycle of cube vertices at distance 1)"
        ),
        "feasible" if p as u128 > ls => {
            format!("no p > {ls} = max_k 2^k·C({n},k) occurs (Lemmens and Scheutzow 2005)")
        }
        _ => return None,
    };
    Some(Error::Contradiction {
        question: format!("period {p} over R^{n}"),
        first: theorem,
        second: format!("the real-space search answered {verdict}"),
    })
}

fn reuse(n: usize, p: usize, store: &Path, recheck: bool) -> Result<Option<RealRow>> {
    let k = key(n, p);
    let path = store.join("real/answers").join(format!("{k}.json"));
    let Ok(bytes) = std::fs::read(&path) else {
        return Ok(None);
    };
    let shown = path.display().to_string();
    let mut row: RealRow = serde_json::from_slice(&bytes)
        .map_err(|e| Error::parse(&shown, e.line(), format!("not a stored real answer: {e}")))?;
    if row.period != p {
        return Err(Error::file(
            &shown,
            format!("holds period {}, not {p}", row.period),
        ));
    }
    match (row.verdict.as_str(), &row.orbit) {
        ("feasible", Some(orbit)) => {
            let hi = orbit.iter().flatten().copied().max().unwrap_or(0);
            if orbit.len() != p || orbit.iter().any(|x| x.len() != n) {
                return Err(Error::file(&shown, "the orbit does not fit the question"));
            }
            check_orbit(&vec![(0, hi); n], orbit)?;
        }
        ("infeasible", _) => {
            let dir = store.join("real/bundles").join(&k);
            if recheck {
                bundle::check_bundle(&dir)?;
            } else {
                let m = std::fs::read(dir.join(bundle::MANIFEST))
                    .map_err(|e| Error::io(dir.join(bundle::MANIFEST), e))?;
                let m: bundle::RealManifest = serde_json::from_slice(&m).map_err(|e| {
                    Error::parse(&shown, e.line(), format!("bad bundle manifest: {e}"))
                })?;
                for f in &m.files {
                    f.verify(&dir, bundle::MANIFEST)?;
                }
            }
        }
        _ => {
            return Err(Error::file(
                &shown,
                "neither a feasible orbit nor an infeasible answer",
            ));
        }
    }
    row.how = "stored".into();
    row.seconds = 0.0;
    Ok(Some(row))
}

/// Sweeps the periods of `cfg`; `progress` gets the period and the search's progress.
///
/// # Errors
/// [`Error::Contradiction`] for an answer against a published theorem; the
/// errors of [`decide`] and of the store's files.
pub fn run(cfg: &RealSweep, progress: &mut dyn FnMut(usize, &Progress)) -> Result<RealSpectrum> {
    let n = cfg.n;
    let mut rows = Vec::new();
    for &p in &cfg.periods {
        if let Some(store) = &cfg.store
            && let Some(row) = reuse(n, p, store, cfg.recheck)?
        {
            rows.push(row);
            continue;
        }
        let t0 = Instant::now();
        let tmp = tempfile::tempdir().map_err(|e| Error::io("<temporary directory>", e))?;
        let mut o = cfg.options.clone();
        o.certificate_dir = Some(tmp.path().to_path_buf());
        let r = decide(n, p, &o, cfg.time_limit, &mut |pr| progress(p, pr))?;
        if let Some(e) = contradiction(n, p, r.verdict()) {
            return Err(e);
        }
        let mut row = RealRow {
            period: p,
            verdict: r.verdict().into(),
            how: "search".into(),
            certified: r.certified(),
            seconds: t0.elapsed().as_secs_f64(),
            lemmas: r.lemmas,
            orbit: None,
            bundle: None,
            reason: None,
        };
        match &r.answer {
            RealAnswer::Feasible { orbit, .. } => row.orbit = Some(orbit.clone()),
            RealAnswer::Unknown { reason } => row.reason = Some(reason.clone()),
            RealAnswer::Infeasible { .. } => {}
        }
        if let Some(store) = &cfg.store
            && row.certified
        {
            let k = key(n, p);
            let dir = store.join("real/bundles").join(&k);
            bundle::write_bundle(&dir, &r, Some(tmp.path()))?;
            row.bundle = Some(dir);
            let answers = store.join("real/answers");
            std::fs::create_dir_all(&answers).map_err(|e| Error::io(&answers, e))?;
            let mut doc = serde_json::to_value(&row).unwrap_or_default();
            doc["dim"] = n.into();
            doc["orbitcnf_version"] = VERSION.into();
            write_atomically(
                &answers.join(format!("{k}.json")),
                (doc.to_string() + "\n").as_bytes(),
            )?;
        }
        rows.push(row);
    }
    let all_decided = rows.iter().all(|r| r.verdict != "unknown");
    Ok(RealSpectrum {
        domain: "real",
        dim: n,
        rows,
        all_decided,
    })
}
