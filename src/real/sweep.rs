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
//! \[recalled\] (infeasible at p ≤ 2^n, where {0,1}^n has a cycle; feasible
//! above max_k 2^k·C(n,k), B. Lemmens and M. Scheutzow 2005) is an
//! [`Error::Contradiction`].

use std::collections::BTreeMap;
use std::path::{Path, PathBuf};
use std::sync::Mutex;
use std::sync::atomic::{AtomicBool, Ordering};
use std::time::{Duration, Instant};

use serde::{Deserialize, Serialize};

use super::{Progress, RealAnswer, RealOptions, bundle, decide, skeleton};
use crate::artifact::{sha256_hex, write_atomically};
use crate::dimacs::VERSION;
use crate::error::{Error, Result};
use crate::pool::Event;
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
    /// Answer by the divisor rule (docs/math.md §9) what an earlier row of
    /// the sweep gives: a multiple of an infeasible period is infeasible (as
    /// checked as that answer), a divisor of a feasible one feasible with
    /// the sub-orbit, checked again. Such rows are not stored: a later run
    /// derives them again from the stored answer, after checking it.
    pub divisors: bool,
    /// Periods searched at the same time, at least 1.
    pub jobs: usize,
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
    /// For an answer by the divisor rule (`how` = `§9`): the period it
    /// was read off (an infeasible divisor, or a feasible multiple).
    #[serde(skip_serializing_if = "Option::is_none", default)]
    pub divisor: Option<usize>,
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
            let from = match (r.divisor, r.verdict.as_str()) {
                (Some(d), "infeasible") => format!(
                    "  by §9: {d} is infeasible ({})",
                    if r.certified {
                        "certified"
                    } else {
                        "UNCHECKED"
                    }
                ),
                (Some(d), _) => format!(
                    "  by §9: every {}-th point of the orbit of {d}",
                    d / r.period.max(1)
                ),
                (None, _) => String::new(),
            };
            s.push_str(&format!(
                " {:>6}  {v:<12} {:<8} {:>7.2}  {:>6}{from}\n",
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

/// The row of `p` by the divisor rule (docs/math.md §9) from an earlier
/// row, if one gives it: an infeasible row (not itself derived) whose period
/// divides `p` gives infeasible, certified as that row is; a feasible row
/// with an orbit whose period `p` divides gives the sub-orbit of every
/// `q/p`-th point, checked here as an isometric cycle (its distances
/// `‖y_j − y_{j+k}‖ = ‖x_0 − x_{k·q/p}‖` depend on `k` only).
///
/// # Errors
/// A sub-orbit that fails the check (impossible by §9; reported, not
/// trusted).
fn by_divisors(n: usize, p: usize, rows: &[RealRow]) -> Result<Option<RealRow>> {
    let row = |verdict: &str, certified: bool, from: usize| RealRow {
        period: p,
        verdict: verdict.into(),
        how: "§9".into(),
        certified,
        seconds: 0.0,
        lemmas: 0,
        orbit: None,
        bundle: None,
        reason: None,
        divisor: Some(from),
    };
    let divides = |a: usize, b: usize| a != b && a > 0 && b.is_multiple_of(a);
    if let Some(r) = rows
        .iter()
        .find(|r| r.verdict == "infeasible" && r.divisor.is_none() && divides(r.period, p))
    {
        return Ok(Some(row("infeasible", r.certified, r.period)));
    }
    let Some((q, orbit)) = rows.iter().find_map(|r| match &r.orbit {
        Some(o) if r.verdict == "feasible" && r.certified && divides(p, r.period) => {
            Some((r.period, o))
        }
        _ => None,
    }) else {
        return Ok(None);
    };
    let (sub, _) = crate::evidence::divisor_witness(orbit, None, p)?;
    let hi = sub.iter().flatten().copied().max().unwrap_or(0);
    let lo = sub.iter().flatten().copied().min().unwrap_or(0);
    check_orbit(&vec![(lo, hi); n], &sub)?;
    let mut r = row("feasible", true, q);
    r.orbit = Some(sub);
    Ok(Some(r))
}

/// Whether `row` gives the answer of period `p` by the divisor rule, as
/// [`by_divisors`] reads it: an infeasible row of its own search whose
/// period divides `p`, or a certified feasible row with an orbit whose
/// period `p` divides.
fn settles(row: &RealRow, p: usize) -> bool {
    let divides = |a: usize, b: usize| a != b && a > 0 && b.is_multiple_of(a);
    match row.verdict.as_str() {
        "infeasible" => row.divisor.is_none() && divides(row.period, p),
        "feasible" => row.certified && row.orbit.is_some() && divides(p, row.period),
        _ => false,
    }
}

/// The progress callback of [`run`]: the periods being searched, each with
/// its latest progress.
pub type Running<'a> = dyn FnMut(&[(usize, Progress)]) + 'a;

/// One period's search, as a worker hands it to the calling thread: the
/// report, the temporary certificate folder it wrote, and its seconds.
type Searched = Result<(super::RealReport, tempfile::TempDir, f64)>;

/// Searches period `p` with a fresh temporary certificate folder.
fn search(cfg: &RealSweep, p: usize, progress: &mut dyn FnMut(&Progress)) -> Searched {
    let t0 = Instant::now();
    let tmp = tempfile::tempdir().map_err(|e| Error::io("<temporary directory>", e))?;
    let mut o = cfg.options.clone();
    o.certificate_dir = Some(tmp.path().to_path_buf());
    let r = decide(cfg.n, p, &o, cfg.time_limit, progress)?;
    Ok((r, tmp, t0.elapsed().as_secs_f64()))
}

/// The row of a search of period `p` that took `seconds`.
fn row_of(p: usize, r: &super::RealReport, seconds: f64) -> RealRow {
    let mut row = RealRow {
        period: p,
        verdict: r.verdict().into(),
        how: "search".into(),
        certified: r.certified(),
        seconds,
        lemmas: r.lemmas,
        orbit: None,
        bundle: None,
        reason: None,
        divisor: None,
    };
    match &r.answer {
        RealAnswer::Feasible { orbit, .. } => row.orbit = Some(orbit.clone()),
        RealAnswer::Unknown { reason } => row.reason = Some(reason.clone()),
        RealAnswer::Infeasible { .. } => {}
    }
    row
}

/// Turns a search into its row, checks it against the published theorems
/// and stores it when it is certified and a store is kept.
fn finish(cfg: &RealSweep, p: usize, searched: Searched) -> Result<RealRow> {
    let n = cfg.n;
    let (r, tmp, seconds) = searched?;
    if let Some(e) = contradiction(n, p, r.verdict()) {
        return Err(e);
    }
    let mut row = row_of(p, &r, seconds);
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
    Ok(row)
}

/// Sweeps the periods of `cfg` on [`RealSweep::jobs`] threads (one period
/// per thread; each search is single-threaded).
///
/// Stored answers are taken first, then what §9 gives from them; the other
/// periods are searched in the order asked, and a period that an answer
/// already found settles by §9 is not started (one running meanwhile is
/// finished, and its own answer kept). Which rows come from §9 can so
/// depend on timing when `jobs > 1`; every row is checked either way.
/// `progress` gets, about four times a second, the periods being searched
/// with their latest progress.
///
/// # Errors
/// [`Error::Contradiction`] for an answer against a published theorem; the
/// errors of [`decide`] and of the store's files. The first error stops
/// the sweep (periods already running are finished first).
pub fn run(cfg: &RealSweep, progress: &mut Running) -> Result<RealSpectrum> {
    let n = cfg.n;
    let mut rows: BTreeMap<usize, RealRow> = BTreeMap::new();
    let mut tasks = Vec::new();
    for &p in &cfg.periods {
        if rows.contains_key(&p) {
            continue;
        }
        if let Some(store) = &cfg.store
            && let Some(row) = reuse(n, p, store, cfg.recheck)?
        {
            rows.insert(p, row);
            continue;
        }
        tasks.push(p);
    }
    let derive = |rows: &mut BTreeMap<usize, RealRow>, tasks: &[usize]| -> Result<()> {
        for &p in tasks {
            if !rows.contains_key(&p) {
                let known: Vec<RealRow> = rows.values().cloned().collect();
                if let Some(row) = by_divisors(n, p, &known)? {
                    rows.insert(p, row);
                }
            }
        }
        Ok(())
    };
    if cfg.divisors {
        derive(&mut rows, &tasks)?;
        tasks.retain(|p| !rows.contains_key(p));
    }
    let settled: Vec<AtomicBool> = tasks.iter().map(|_| AtomicBool::new(false)).collect();
    let latest: Vec<Mutex<Option<Progress>>> = tasks.iter().map(|_| Mutex::new(None)).collect();
    let stop = AtomicBool::new(false);
    let mut first_error: Option<Error> = None;
    let work = |i: usize| -> Option<Searched> {
        if settled[i].load(Ordering::SeqCst) {
            return None;
        }
        let searched = search(cfg, tasks[i], &mut |pr| {
            if let Ok(mut slot) = latest[i].lock() {
                *slot = Some(pr.clone());
            }
        });
        // Marked before the answer is sent, so that a worker taking the
        // next task does not start a search that this answer settles.
        // Should the calling thread refuse the answer, the sweep stops.
        if cfg.divisors
            && let Ok((r, _, _)) = &searched
        {
            let row = row_of(tasks[i], r, 0.0);
            for (j, &q) in tasks.iter().enumerate() {
                if settles(&row, q) {
                    settled[j].store(true, Ordering::SeqCst);
                }
            }
        }
        Some(searched)
    };
    crate::pool::run(tasks.len(), cfg.jobs, &stop, work, |event, state| {
        if let Event::Finished(i, Some(searched)) = event {
            let p = tasks[i];
            match finish(cfg, p, searched) {
                Ok(row) => {
                    rows.insert(p, row);
                }
                Err(e) => {
                    stop.store(true, Ordering::SeqCst);
                    first_error.get_or_insert(e);
                }
            }
        }
        let running: Vec<(usize, Progress)> = state
            .running
            .keys()
            .filter_map(|&i| {
                let pr = latest[i].lock().ok()?.clone()?;
                Some((tasks[i], pr))
            })
            .collect();
        progress(&running);
    });
    if let Some(e) = first_error {
        return Err(e);
    }
    if cfg.divisors {
        derive(&mut rows, &tasks)?;
    }
    let mut out = Vec::new();
    for &p in &cfg.periods {
        if out.iter().any(|r: &RealRow| r.period == p) {
            continue;
        }
        out.push(match rows.remove(&p) {
            Some(row) => row,
            // Skipped for §9, yet §9 gives nothing now: cannot happen, since
            // the row that settled it is kept; reported, not guessed.
            None => RealRow {
                period: p,
                verdict: "unknown".into(),
                how: "§9".into(),
                certified: false,
                seconds: 0.0,
                lemmas: 0,
                orbit: None,
                bundle: None,
                reason: Some("not searched: §9 was to decide it from another period".into()),
                divisor: None,
            },
        });
    }
    let all_decided = out.iter().all(|r| r.verdict != "unknown");
    Ok(RealSpectrum {
        domain: "real",
        dim: n,
        rows: out,
        all_decided,
    })
}

#[cfg(test)]
mod tests {
    use super::*;

    fn row(period: usize, verdict: &str, orbit: Option<Vec<Vec<i64>>>) -> RealRow {
        RealRow {
            period,
            verdict: verdict.into(),
            how: "search".into(),
            certified: true,
            seconds: 0.0,
            lemmas: 0,
            orbit,
            bundle: None,
            reason: None,
            divisor: None,
        }
    }

    #[test]
    fn divisor_rows_come_from_checked_rows_and_sub_orbits_are_checked() {
        // The corners of the unit square are a 4-cycle of R^2 (all at
        // distance 1); its every 2nd point a 2-cycle.
        let square = vec![vec![0, 0], vec![0, 1], vec![1, 1], vec![1, 0]];
        let rows = vec![row(4, "feasible", Some(square)), row(5, "infeasible", None)];
        let two = by_divisors(2, 2, &rows).unwrap().unwrap();
        assert_eq!((two.how.as_str(), two.divisor), ("§9", Some(4)));
        assert_eq!(two.orbit, Some(vec![vec![0, 0], vec![1, 1]]));
        let ten = by_divisors(2, 10, &rows).unwrap().unwrap();
        assert_eq!((ten.verdict.as_str(), ten.certified), ("infeasible", true));
        assert_eq!(ten.divisor, Some(5));
        assert!(by_divisors(2, 7, &rows).unwrap().is_none());
        // A derived row is never a source (10 is not what 20 follows from),
        // and an unchecked refutation gives only unchecked rows.
        let mut claim = row(5, "infeasible", None);
        claim.certified = false;
        let twenty = by_divisors(2, 20, &[ten.clone(), claim]).unwrap().unwrap();
        assert_eq!((twenty.divisor, twenty.certified), (Some(5), false));
        assert!(by_divisors(2, 20, &[ten]).unwrap().is_none());
        // Not trusted: a "feasible" orbit that is no isometric cycle gives
        // a sub-orbit that fails the check: (0,0), (0,2), (5,0).
        let bad = vec![
            vec![0, 0],
            vec![0, 1],
            vec![0, 2],
            vec![0, 3],
            vec![5, 0],
            vec![0, 5],
        ];
        assert!(by_divisors(2, 3, &[row(6, "feasible", Some(bad))]).is_err());
    }

    #[test]
    fn a_worker_skips_exactly_the_periods_the_divisor_rule_then_answers() {
        let square = vec![vec![0, 0], vec![0, 1], vec![1, 1], vec![1, 0]];
        let mut unchecked = row(4, "feasible", Some(square.clone()));
        unchecked.certified = false;
        let mut derived = row(5, "infeasible", None);
        derived.divisor = Some(5);
        let sources = [
            row(4, "feasible", Some(square)),
            row(5, "infeasible", None),
            row(6, "unknown", None),
            unchecked,
            derived,
        ];
        for source in &sources {
            for p in 1..=20 {
                let gives = by_divisors(2, p, std::slice::from_ref(source))
                    .unwrap()
                    .is_some();
                assert_eq!(settles(source, p), gives, "{source:?} and p = {p}");
            }
        }
    }
}
