//! The real-space benchmark: n = 3, p = 9..12 over R^3 (the theorem of
//! R. Lyons and R. D. Nussbaum, 1992 \[recalled\]), each certified, with the
//! certificate check included, against z3 on the same question with minimal
//! symmetry breaking (`scripts/real_z3.py`).
//!
//! The issue quotes z3 at about 33, 86, 159 and 194 s on one core; the
//! figures measured here for both are in `encodings/real-space.md` §8.1.
//! Timing is wall-clock; the machine is shared, so runs should be compared
//! under the same load.

use std::process::Command;
use std::time::{Duration, Instant};

use serde::Serialize;

use super::{RealAnswer, RealOptions, decide};
use crate::error::Result;

/// One benchmark row.
#[derive(Clone, Debug, Serialize)]
pub struct BenchRow {
    /// Dimension.
    pub n: usize,
    /// Period.
    pub p: usize,
    /// `feasible`, `infeasible (certified)`, `infeasible (unchecked)` or `unknown: …`.
    pub answer: String,
    /// Seconds from start to a checked answer (search, certificate writing and checking).
    pub seconds: f64,
    /// Of which: certificate writing and checking.
    pub check_seconds: f64,
    /// Lemmas in the certificate.
    pub lemmas: usize,
    /// z3's answer and seconds, when asked for.
    pub z3: Option<(String, f64)>,
}

/// The cases of the benchmark: `(3, p)` for `p = 9..=12`.
pub fn cases() -> Vec<(usize, usize)> {
    (9..=12).map(|p| (3, p)).collect()
}

/// Runs z3 through `scripts/real_z3.py` with a time limit; `None` when
/// python3 or z3 is missing.
pub fn z3_baseline(n: usize, p: usize, limit: Duration) -> Option<(String, f64)> {
    let script = concat!(env!("CARGO_MANIFEST_DIR"), "/scripts/real_z3.py");
    let t0 = Instant::now();
    let out = Command::new("python3")
        .args([
            script,
            &n.to_string(),
            &p.to_string(),
            &limit.as_secs().max(1).to_string(),
        ])
        .output()
        .ok()?;
    if !out.status.success() {
        return None;
    }
    let v: serde_json::Value = serde_json::from_slice(&out.stdout).ok()?;
    Some((
        v["result"].as_str().unwrap_or("?").to_string(),
        t0.elapsed().as_secs_f64(),
    ))
}

/// Runs every case with `options` and `limit`, and z3 too when `baselines`.
///
/// # Errors
/// As [`decide`].
pub fn run(
    cases: &[(usize, usize)],
    options: &RealOptions,
    limit: Duration,
    baselines: bool,
) -> Result<Vec<BenchRow>> {
    let mut rows = Vec::new();
    for &(n, p) in cases {
        let t0 = Instant::now();
        let r = decide(n, p, options, Some(limit), &mut |_| {})?;
        let answer = match &r.answer {
            RealAnswer::Feasible { .. } => "feasible".to_string(),
            RealAnswer::Infeasible { check: Some(_), .. } => "infeasible (certified)".into(),
            RealAnswer::Infeasible { check: None, .. } => "infeasible (unchecked)".into(),
            RealAnswer::Unknown { reason } => format!("unknown: {reason}"),
        };
        rows.push(BenchRow {
            n,
            p,
            answer,
            seconds: t0.elapsed().as_secs_f64(),
            check_seconds: r.check_seconds,
            lemmas: r.lemmas,
            z3: if baselines {
                z3_baseline(n, p, limit)
            } else {
                None
            },
        });
    }
    Ok(rows)
}

/// The rows as a text table.
pub fn format(rows: &[BenchRow]) -> String {
    let mut s = String::from("n  p   answer                      seconds  (check)  lemmas  z3\n");
    for r in rows {
        let z3 = match &r.z3 {
            Some((a, t)) => format!("{a} in {t:.1} s"),
            None => "-".into(),
        };
        s.push_str(&format!(
            "{:<2} {:<3} {:<27} {:>8.1} {:>8.1} {:>7}  {z3}\n",
            r.n, r.p, r.answer, r.seconds, r.check_seconds, r.lemmas
        ));
    }
    let ours: f64 = rows.iter().map(|r| r.seconds).sum();
    s.push_str(&format!("total  orbitcnf {ours:.1} s"));
    let z3: Option<f64> = rows.iter().map(|r| r.z3.as_ref().map(|z| z.1)).sum();
    if let Some(z) = z3 {
        s.push_str(&format!(
            ", z3 {z:.1} s: orbitcnf takes {:.2} of z3's time ({:.1} times faster; target 10)",
            ours / z.max(1e-9),
            z / ours.max(1e-9)
        ));
    }
    s.push('\n');
    s
}
