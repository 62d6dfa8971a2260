//! Reports: what a decision found, for people (text) and programs (JSON).
//!
//! The JSON object of `decide --json` and `decode --json` is [`Report`]
//! serialised; its fields are documented here and are stable within a minor
//! version. Exit codes follow the SAT convention ([`Verdict::exit_code`]).

use std::fmt::Write as _;

use serde::{Deserialize, Serialize};

use crate::cnf::{Cnf, FamilyCount};
use crate::encode::EncodeOptions;
use crate::evidence::Evidence;
use crate::grid::Point;
use crate::question::{MapClass, Question, QuestionRecord};
use crate::solve::SolveStats;
use crate::verify::{OrbitCheck, SelfMapCheck};

/// The runs of consecutive numbers in `v`, each as `a` or `a..b` (an
/// inclusive range, the syntax run-cube and `--periods` take), in order.
pub fn consecutive_runs(v: &[usize]) -> Vec<String> {
    let mut runs = Vec::new();
    let mut i = 0;
    while i < v.len() {
        let mut j = i;
        while j + 1 < v.len() && v[j + 1] == v[j] + 1 {
            j += 1;
        }
        runs.push(if j == i {
            v[i].to_string()
        } else {
            format!("{}..{}", v[i], v[j])
        });
        i = j + 1;
    }
    runs
}

/// The answer to a question.
#[derive(Clone, Copy, Debug, PartialEq, Eq, Serialize)]
#[serde(rename_all = "lowercase")]
pub enum Verdict {
    /// An orbit of minimal period p exists; the report carries it, checked.
    Feasible,
    /// No orbit of minimal period p exists.
    Infeasible,
    /// No answer (limit reached, solver gave up).
    Unknown,
}

/// The exit code of an infeasible verdict that rests on a solver's unchecked
/// word: not 20, so that a script testing for 20 never takes it for a
/// certified refutation.
pub const EXIT_UNCHECKED: i32 = 21;

impl Verdict {
    /// The process exit code of a checked verdict: 10 feasible, 20
    /// infeasible, 0 unknown (1 is for errors; see [`Report::exit_code`] for
    /// unchecked refutations).
    pub fn exit_code(self) -> i32 {
        match self {
            Verdict::Feasible => 10,
            Verdict::Infeasible => 20,
            Verdict::Unknown => 0,
        }
    }

    /// The verdict as a word.
    pub fn word(self) -> &'static str {
        match self {
            Verdict::Feasible => "feasible",
            Verdict::Infeasible => "infeasible",
            Verdict::Unknown => "unknown",
        }
    }
}

/// A checked orbit.
#[derive(Clone, Debug, PartialEq, Eq, Serialize)]
pub struct Witness {
    /// `x_0..x_{p−1}`.
    pub orbit: Vec<Point>,
    /// What the independent check established.
    pub check: OrbitCheck,
    /// The whole map `(z, f(z))` on D, in the full-map formulation.
    pub map: Option<Vec<(Point, Point)>>,
    /// What the independent check of that map established.
    pub map_check: Option<SelfMapCheck>,
}

/// Size of the formula and time to build it.
#[derive(Clone, Debug, PartialEq, Serialize)]
pub struct SizeStats {
    /// Variables.
    pub variables: u64,
    /// Clauses.
    pub clauses: u64,
    /// Seconds spent encoding.
    pub encode_seconds: f64,
    /// Per-family counts (empty when read from a file).
    pub families: Vec<FamilyCount>,
}

impl SizeStats {
    /// The sizes of `cnf`.
    pub fn of(cnf: &Cnf, families: Vec<FamilyCount>, encode_seconds: f64) -> SizeStats {
        SizeStats {
            variables: cnf.num_vars() as u64,
            clauses: cnf.num_clauses() as u64,
            encode_seconds,
            families,
        }
    }
}

/// All statistics of a decision.
#[derive(Clone, Debug, PartialEq, Serialize)]
pub struct Stats {
    /// The formula.
    #[serde(flatten)]
    pub size: SizeStats,
    /// The solve.
    #[serde(flatten)]
    pub solve: SolveStats,
}

/// The full report of one decision.
#[derive(Clone, Debug, PartialEq, Serialize)]
pub struct Report {
    /// `feasible`, `infeasible` or `unknown`.
    pub verdict: Verdict,
    /// The question.
    pub question: QuestionRecord,
    /// The question in words.
    pub statement: String,
    /// The encoding options.
    pub options: EncodeOptions,
    /// The orbit `x_0..x_{p−1}`, when feasible.
    #[serde(skip_serializing_if = "Option::is_none")]
    pub orbit: Option<Vec<Point>>,
    /// `‖x_0 − x_k‖∞` for `k = 1..=⌊p/2⌋` (topical: `t(x_0, x_k)` for
    /// `k = 1..p−1`), when feasible.
    #[serde(skip_serializing_if = "Option::is_none")]
    pub profile: Option<Vec<i64>>,
    /// The independent check of the orbit, when feasible.
    #[serde(skip_serializing_if = "Option::is_none")]
    pub check: Option<OrbitCheck>,
    /// The map on all of D as `[z, f(z)]` pairs (full-map formulation, feasible).
    #[serde(skip_serializing_if = "Option::is_none")]
    pub map: Option<Vec<(Point, Point)>>,
    /// The independent check of that map (full-map formulation, feasible).
    #[serde(skip_serializing_if = "Option::is_none")]
    pub map_check: Option<SelfMapCheck>,
    /// What backs the verdict (see [`crate::evidence`]).
    pub certificate: Evidence,
    /// Whether the verdict rests on checked evidence: a checked orbit or a
    /// checked proof (`false` for an unchecked solver claim and for unknown).
    pub certified: bool,
    /// Why the verdict is unknown, when it is.
    #[serde(skip_serializing_if = "Option::is_none")]
    pub reason: Option<String>,
    /// Sizes and times.
    pub stats: Stats,
    /// How the question was solved, when `decide` switched to cubes by
    /// itself ([`crate::split::auto`]); absent when one solve answered.
    #[serde(skip_serializing_if = "Option::is_none")]
    pub strategy: Option<Strategy>,
}

/// What the automatic strategy of `decide` did: a probe (one ordinary solve
/// within a budget) that gave no answer, then cubes on threads.
#[derive(Clone, Debug, PartialEq, Serialize, Deserialize)]
pub struct Strategy {
    /// The probe's time budget in seconds.
    pub probe_budget_seconds: f64,
    /// The probe's conflict budget, when one was set.
    #[serde(default, skip_serializing_if = "Option::is_none")]
    pub probe_budget_conflicts: Option<u64>,
    /// Seconds the probe ran.
    pub probe_seconds: f64,
    /// Conflicts of the probe.
    pub probe_conflicts: u64,
    /// How many cubes followed.
    pub cubes: usize,
    /// How they were chosen: `full-profile` (every multiplier lex-leader
    /// profile, one cube each) or `start-point` (full-map formulation).
    pub cube_rule: String,
    /// Threads that solved them.
    pub threads: usize,
}

impl Strategy {
    /// The strategy in words, for the report's `strategy` line.
    pub fn to_words(&self) -> String {
        let budget = match self.probe_budget_conflicts {
            Some(c) => format!("{c} conflicts"),
            None => format!("{:.0} s", self.probe_budget_seconds),
        };
        format!(
            "probe (budget {budget}) gave no answer in {:.1} s ({} conflicts), then {} {} cubes on {} thread{}",
            self.probe_seconds,
            self.probe_conflicts,
            self.cubes,
            self.cube_rule,
            self.threads,
            if self.threads == 1 { "" } else { "s" }
        )
    }
}

impl Report {
    /// Assembles a report.
    #[allow(clippy::too_many_arguments)]
    pub fn new(
        q: &Question,
        options: &EncodeOptions,
        verdict: Verdict,
        witness: Option<Witness>,
        certificate: Evidence,
        reason: Option<String>,
        size: SizeStats,
        solve: SolveStats,
    ) -> Report {
        let (orbit, check, map, map_check) = match witness {
            Some(w) => (Some(w.orbit), Some(w.check), w.map, w.map_check),
            None => (None, None, None, None),
        };
        Report {
            verdict,
            question: q.record(),
            statement: q.statement(),
            // A topical or full-map report shows its own formulation and the
            // families switched off for it; nonexpansive reports on boxes echo
            // the options as given, as they always have.
            options: if q.class.is_default()
                && q.points.is_none()
                && !options.formulation.encodes_map()
            {
                options.clone()
            } else {
                options.resolve(q)
            },
            profile: check.as_ref().map(|c| c.profile.clone()),
            orbit,
            check,
            map,
            map_check,
            certified: certificate.is_checked(),
            certificate,
            reason,
            stats: Stats { size, solve },
            strategy: None,
        }
    }

    /// The process exit code: 10 feasible, 20 infeasible with a checked
    /// proof, 21 infeasible on a solver's unchecked word, 0 unknown (1 is
    /// for errors).
    pub fn exit_code(&self) -> i32 {
        match (self.verdict, self.certified) {
            (Verdict::Infeasible, false) => EXIT_UNCHECKED,
            (v, _) => v.exit_code(),
        }
    }

    /// The report as one JSON object (one line).
    pub fn to_json(&self) -> String {
        serde_json::to_string(self).expect("reports serialise")
    }

    /// The report for people.
    pub fn to_text(&self) -> String {
        let topical = self.question.class == MapClass::Topical;
        let (cycle, quantity, writeups) = if topical {
            (
                "topical",
                "t(x_0, x_k) = max_c (x_{0,c} − x_{k,c})",
                "encodings/topical.md, encodings/symmetry.md",
            )
        } else {
            (
                "isometric",
                "‖x_0 − x_k‖∞",
                "encodings/symmetry.md, encodings/redundant.md",
            )
        };
        let mut s = String::new();
        let _ = writeln!(s, "question     {}", self.statement);
        match self.verdict {
            Verdict::Feasible => {
                let _ = writeln!(s, "verdict      FEASIBLE");
            }
            Verdict::Infeasible => {
                // An unchecked claim says so before anything else on its line.
                let head = match &self.certificate {
                    Evidence::SolverClaim { solver } => format!(
                        "INFEASIBLE, UNCHECKED (the word of {solver}; no proof was checked)"
                    ),
                    _ => "INFEASIBLE".to_string(),
                };
                let what = if self.options.formulation.encodes_map() {
                    format!(
                        "no nonexpansive map D → D has a periodic point of minimal period {}",
                        self.question.period
                    )
                } else {
                    format!("no {cycle} {}-cycle in the grid", self.question.period)
                };
                let _ = writeln!(s, "verdict      {head}: no such map exists ({what})");
            }
            Verdict::Unknown => {
                let why = self.reason.as_deref().unwrap_or("no answer");
                let _ = writeln!(s, "verdict      UNKNOWN: {why}");
            }
        }
        if let Some(orbit) = &self.orbit {
            let _ = writeln!(s, "orbit        i  x_i");
            let width = orbit.len().saturating_sub(1).to_string().len().max(1);
            for (i, x) in orbit.iter().enumerate() {
                let coords: Vec<String> = x.iter().map(|v| format!("{v:>2}")).collect();
                let _ = writeln!(s, "             {i:>width$}  ({})", coords.join(", "));
            }
        }
        if let Some(profile) = &self.profile {
            let shown: Vec<String> = profile.iter().map(|d| d.to_string()).collect();
            let _ = writeln!(
                s,
                "profile      {quantity} for k = 1..{}: {}",
                profile.len(),
                if shown.is_empty() {
                    "(none: a fixed point)".into()
                } else {
                    shown.join(" ")
                }
            );
        }
        match (&self.check, &self.map_check) {
            // Full map: the orbit's points lie in D (the map check says so);
            // the cycle check confirms the distances, as they must be.
            (Some(c), Some(_)) => {
                let _ = writeln!(
                    s,
                    "check        passed: {} distinct points of D, all {} distances along the cycle preserved",
                    c.period, c.pairs_checked
                );
            }
            (Some(check), None) => {
                let _ = writeln!(s, "check        passed: {check}");
            }
            _ => {}
        }
        if let Some(mc) = &self.map_check {
            let _ = writeln!(s, "map check    passed: {mc}");
        }
        if let Some(map) = &self.map {
            let show = |z: &Point| {
                let c: Vec<String> = z.iter().map(|v| format!("{v:>2}")).collect();
                format!("({})", c.join(", "))
            };
            for (row, (z, fz)) in map.iter().enumerate() {
                let label = if row == 0 {
                    "map          "
                } else {
                    "             "
                };
                let _ = writeln!(s, "{label}{} -> {}", show(z), show(fz));
            }
        }
        match &self.certificate {
            Evidence::Witness => {}
            Evidence::SolverClaim { solver } => {
                let _ = writeln!(
                    s,
                    "certificate  the unsatisfiability claim of {solver}; no proof was checked"
                );
            }
            Evidence::CheckedProof(info) => {
                let _ = writeln!(
                    s,
                    "certificate  LRAT proof ({} steps, {} bytes) accepted by orbitcnf's own checker in {:.3} s",
                    info.lrat.steps, info.lrat_bytes, info.check_seconds
                );
                if let Some(f) = &info.lrat_file {
                    let _ = writeln!(s, "             LRAT proof file {}", f.display());
                }
                if let Some(f) = &info.drat_file {
                    let _ = writeln!(
                        s,
                        "             binary DRAT ({} bytes) written to {}",
                        info.drat_bytes.unwrap_or(0),
                        f.display()
                    );
                }
                let why = if self.options.formulation.encodes_map() {
                    "encodings/full-map.md"
                } else {
                    writeups
                };
                let _ = writeln!(
                    s,
                    "             the proof covers the CNF with its symmetry-breaking and redundant clauses; \
                     their soundness: {why}"
                );
            }
            Evidence::None => {}
        }
        if let Some(st) = &self.strategy {
            let _ = writeln!(s, "strategy     {}", st.to_words());
        }
        let st = &self.stats;
        let conflicts = st
            .solve
            .conflicts
            .map(|c| format!(", {c} conflicts"))
            .unwrap_or_default();
        let _ = writeln!(
            s,
            "stats        {} variables, {} clauses{conflicts}; encode {:.3} s, solve {:.3} s ({})",
            st.size.variables,
            st.size.clauses,
            st.size.encode_seconds,
            st.solve.seconds,
            st.solve.solver
        );
        s
    }
}
