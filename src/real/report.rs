//! A real-space decision for people and programs: the text report, one
//! JSON object, and the exit code (the same convention as for grids: 10
//! feasible, 20 infeasible with a checked certificate, 21 infeasible on the
//! search's unchecked word, 0 unknown).
//!
//! The JSON object names its domain `"domain": "real"` with `"dim"` and
//! `"period"`, so it cannot be mistaken for the report of a grid question
//! (which has `"question"` with a `"grid"`).

use std::fmt::Write as _;

use serde_json::{Value, json};

use super::{RealAnswer, RealReport};

impl RealReport {
    /// The verdict word: `feasible`, `infeasible` or `unknown`.
    pub fn verdict(&self) -> &'static str {
        match self.answer {
            RealAnswer::Feasible { .. } => "feasible",
            RealAnswer::Infeasible { .. } => "infeasible",
            RealAnswer::Unknown { .. } => "unknown",
        }
    }

    /// Whether the verdict rests on a checked witness or certificate.
    pub fn certified(&self) -> bool {
        matches!(
            self.answer,
            RealAnswer::Feasible { .. } | RealAnswer::Infeasible { check: Some(_), .. }
        )
    }

    /// The exit code: 10 feasible, 20 infeasible and certified, 21
    /// infeasible unchecked, 0 unknown.
    pub fn exit_code(&self) -> i32 {
        match &self.answer {
            RealAnswer::Feasible { .. } => 10,
            RealAnswer::Infeasible { check: Some(_), .. } => 20,
            RealAnswer::Infeasible { check: None, .. } => 21,
            RealAnswer::Unknown { .. } => 0,
        }
    }

    /// The report as one JSON object.
    pub fn to_json_value(&self) -> Value {
        let mut v = json!({
            "domain": "real",
            "dim": self.n,
            "period": self.p,
            "verdict": self.verdict(),
            "certified": self.certified(),
            "lemmas": self.lemmas,
            "search_seconds": self.search_seconds,
            "check_seconds": self.check_seconds,
            "handoff_rounds": self.handoff_rounds,
            "handoff_seconds": self.handoff_seconds,
            "sat": self.sat,
            "theory": self.theory,
        });
        match &self.answer {
            RealAnswer::Feasible { orbit, check } => {
                v["orbit"] = json!(orbit);
                v["orbit_check"] = json!(check);
            }
            RealAnswer::Infeasible { check, dir } => {
                v["certificate"] = json!(check);
                if let Some(d) = dir {
                    v["certificate_dir"] = json!(d.display().to_string());
                }
            }
            RealAnswer::Unknown { reason } => v["reason"] = json!(reason),
        }
        v
    }

    /// The report as one line of JSON.
    pub fn to_json(&self) -> String {
        self.to_json_value().to_string()
    }

    /// The report for people.
    pub fn to_text(&self) -> String {
        let (n, p) = (self.n, self.p);
        let mut s = String::new();
        let _ = writeln!(
            s,
            "question     does (R^{n}, ‖·‖∞) hold an isometric {p}-cycle? (real space, no grid; encodings/real-space.md)"
        );
        match &self.answer {
            RealAnswer::Feasible { orbit, check } => {
                let _ = writeln!(s, "verdict      FEASIBLE");
                let _ = writeln!(s, "orbit        {orbit:?}");
                let _ = writeln!(s, "check        {check}");
            }
            RealAnswer::Infeasible {
                check: Some(c),
                dir,
            } => {
                let _ = writeln!(
                    s,
                    "verdict      INFEASIBLE, certified: no subset of R^{n} carries a nonexpansive map of period {p}"
                );
                let _ = writeln!(
                    s,
                    "lemmas       {} theory lemmas ({} profile facts), every Farkas certificate accepted by the exact checker{}",
                    c.farkas.lemmas,
                    c.farkas.facts,
                    super::bundle::special_words(&c.farkas)
                );
                let _ = writeln!(
                    s,
                    "proof        LRAT refutation of the skeleton ({} clauses) plus the lemmas accepted: {} steps, empty clause at id {}",
                    c.skeleton_clauses, c.lrat.steps, c.lrat.empty_clause_id
                );
                if let Some(d) = dir {
                    let _ = writeln!(s, "certificate  {}", d.display());
                }
            }
            RealAnswer::Infeasible { check: None, .. } => {
                let _ = writeln!(
                    s,
                    "verdict      INFEASIBLE, UNCHECKED (the search's word; no certificate was checked)"
                );
            }
            RealAnswer::Unknown { reason } => {
                let _ = writeln!(s, "verdict      UNKNOWN: {reason}");
            }
        }
        let _ = writeln!(
            s,
            "search       {:.2} s, {} conflicts, {} theory lemmas",
            self.search_seconds, self.sat.conflicts, self.lemmas
        );
        if self.handoff_rounds > 0 {
            let _ = writeln!(
                s,
                "hand-off     {} calls of the external solver, {:.2} s (with proof conversion and check)",
                self.handoff_rounds, self.handoff_seconds
            );
        }
        if self.check_seconds > 0.0 {
            let _ = writeln!(
                s,
                "checking     {:.2} s (writing and checking the certificate)",
                self.check_seconds
            );
        }
        s
    }
}
