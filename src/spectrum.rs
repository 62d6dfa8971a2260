//! `orbitcnf spectrum`: every period of a box, decided, certified and stored.
//!
//! # Design
//!
//! A sweep ([`run`]) takes a box `D`, a map class ([`MapClass`]) and a set of
//! periods and answers each period in one of three ways, cheapest first. The
//! default periods ([`default_periods`]) depend on the class; `n'` is the
//! number of coordinates with more than one value:
//!
//! - nonexpansive maps: `1..=min(B(n'), |D|)` with `B(n) = max_k 2^k·C(n,k)`
//!   the Lemmens–Scheutzow bound, so no period outside the range can occur;
//! - topical maps: `1..=min(C(n', ⌊n'/2⌋) + 1, |D|)`. Every period up to
//!   `C(n', ⌊n'/2⌋)` is constructed and every larger one is excluded by
//!   Lemmens and Scheutzow's topical theorem, so the sweep would be all
//!   theory; the one period past the bound is included so that the solver
//!   decides it and the theorem is tested against a checked proof.
//!
//! The three ways:
//!
//! 1. **From the results store** ([`crate::store`]): a decided answer stored
//!    under the same key (question, resolved encoding options, formulation)
//!    is reused after a cheap check (the orbit is re-verified; the proof file
//!    must be present), or a full one with [`SweepConfig::recheck`]. A stored
//!    *unknown* is reused unless this run's limits are larger
//!    ([`crate::store::RunLimits::exceeds`]): a longer `--time-limit` (or none),
//!    or a larger `--max-clauses`. Then it is retried.
//! 2. **By construction** ([`construct`]), for `p` up to
//!    [`construction_limit`]. Nonexpansive, `p ≤ 2^n'`: the points of the
//!    unit cube `Π_c {a_c, a_c + 1}` (over the coordinates of side ≥ 1, the
//!    others fixed at `a_c`) are pairwise at distance exactly 1, so any `p` of
//!    them in any order are an isometric `p`-cycle ([`unit_cube`]). Topical,
//!    `p ≤ C(n', ⌊n'/2⌋)`: points of the middle layer of that cube
//!    ([`middle_layer`]). The orbit is checked with the class's check
//!    ([`Question::check_orbit`]), and on boxes of at most
//!    [`MAP_CHECK_POINTS`] points the class's extension is built and checked
//!    by exhaustion ([`verify::extend`] and [`verify::check_map`];
//!    [`verify::extend_topical`] and [`verify::check_topical_map`]). No
//!    solver runs.
//! 3. **By the solver**: [`decide::decide`] with the [`Certified`] back-end, so
//!    a feasible answer carries a checked orbit and an infeasible one an LRAT
//!    proof accepted by orbitcnf's own checker; with a store the proof is kept
//!    in `proofs/` and its SHA-256 recorded. A formula over `--max-clauses`
//!    is an unknown answer (no answer within the limits), not an error.
//!
//! Solver periods go into a shared work queue, in increasing order, served by
//! [`SweepConfig::jobs`] worker threads (`std::thread::scope`). The workers
//! only compute; the calling thread receives every answer over a channel,
//! checks it against the published theorems ([`theorem_conflict`]), writes it
//! to the store at once and redraws the progress line. An answer that
//! contradicts a stored one or a theorem stops the sweep: no new period is
//! started, the running ones are finished (and stored), and the error is
//! returned.
//!
//! # Crash safety
//!
//! Each answer is written to the store the moment it is known, as one file
//! renamed into place after an `fsync` (see [`crate::store`] for why that
//! cannot leave a torn file). A sweep killed at any moment therefore loses
//! only the periods being solved at that moment; rerunning the same command
//! reuses every stored answer unchanged (same run id and timestamps in its
//! file) and computes only the rest.
//!
//! # Reports
//!
//! [`Spectrum`] renders as a table ([`Spectrum::to_table`]), one JSON object
//! ([`Spectrum::to_json`]), CSV ([`Spectrum::to_csv`]) and a Markdown page
//! that sets the published bounds beside the computed answers
//! ([`Spectrum::to_markdown`]).

use std::collections::{BTreeMap, VecDeque};
use std::fmt::Write as _;
use std::io::IsTerminal;
use std::path::PathBuf;
use std::sync::atomic::{AtomicBool, Ordering};
use std::sync::{Mutex, PoisonError, mpsc};
use std::time::{Duration, Instant, SystemTime};

use serde::Serialize;

use crate::decide;
use crate::dimacs::VERSION;
use crate::encode::{DEFAULT_MAX_CLAUSES, EncodeOptions, Symmetry};
use crate::error::{Error, Result};
use crate::grid::{Grid, Point};
use crate::points::PointSet;
use crate::question::{self, MapClass, Question, QuestionRecord};
use crate::report::{Certificate, Verdict};
use crate::solve::Limits;
use crate::solve::certified::Certified;
use crate::store::{
    self, Answer, AnswerStats, Backing, How, ProofRecord, Put, RunLimits, SCHEMA, Store,
};
use crate::verify;

/// Most periods one sweep accepts.
pub const MAX_PERIODS: usize = 4096;

/// Largest box on which the extension of a feasible orbit to the whole box
/// is built and checked by exhaustion (`N·(N−1)/2` pairs).
pub const MAP_CHECK_POINTS: u128 = 2048;

/// What to sweep and how.
#[derive(Clone, Debug)]
pub struct SweepConfig {
    /// The box (for a point set, its bounding box).
    pub grid: Grid,
    /// A domain that is not a box: every period is then decided by the
    /// full-map solver (the unit-cube construction needs a box).
    pub points: Option<PointSet>,
    /// The class of maps asked about. Changing it does not change
    /// [`SweepConfig::periods`]; [`SweepConfig::for_class`] sets both.
    pub class: MapClass,
    /// The periods, increasing and distinct ([`parse_periods`], [`default_periods`]).
    pub periods: Vec<usize>,
    /// The encoding options, as given (each period resolves them for itself).
    pub options: EncodeOptions,
    /// Worker threads for solver periods, at least 1.
    pub jobs: usize,
    /// Per-period solving time limit.
    pub time_limit: Option<Duration>,
    /// The encoder's clause limit; a larger formula is an unknown answer.
    pub max_clauses: u64,
    /// The results store's folder, `None` for no store.
    pub store: Option<PathBuf>,
    /// Draw a progress line on stderr (only when stderr is a terminal).
    pub progress: bool,
    /// Fully re-check reused stored answers (proofs re-checked by the LRAT
    /// checker against a fresh encoding) instead of the quick check.
    pub recheck: bool,
}

impl SweepConfig {
    /// A sweep of the default periods of `grid` for nonexpansive maps with
    /// the default encoding, all cores, no time limit, no store and no
    /// progress line.
    pub fn new(grid: Grid) -> SweepConfig {
        SweepConfig::for_class(grid, MapClass::Nonexpansive)
    }

    /// As [`SweepConfig::new`], for maps of `class` (with its default periods).
    pub fn for_class(grid: Grid, class: MapClass) -> SweepConfig {
        SweepConfig {
            periods: default_periods(&grid, class),
            grid,
            points: None,
            class,
            options: EncodeOptions::default(),
            jobs: default_jobs(),
            time_limit: None,
            max_clauses: DEFAULT_MAX_CLAUSES,
            store: None,
            progress: false,
            recheck: false,
        }
    }
}

impl SweepConfig {
    /// A sweep of the point set `d` for nonexpansive maps D → D: periods
    /// `1..=min(B(n'), |D|)` with `B` the Lemmens–Scheutzow bound for the
    /// bounding box's effective dimension (it holds for every subset of
    /// R^n'), otherwise as [`SweepConfig::new`].
    pub fn on_points(d: PointSet) -> SweepConfig {
        let mut cfg = SweepConfig::new(d.bounding_box());
        cfg.periods.retain(|&p| p <= d.len());
        cfg.points = Some(d);
        cfg
    }
}

/// The number of cores (`std::thread::available_parallelism`), 1 if unknown.
pub fn default_jobs() -> usize {
    std::thread::available_parallelism().map_or(1, |n| n.get())
}

/// Every period up to this is answered by [`construct`]: `2^n'` for
/// nonexpansive maps, `C(n', ⌊n'/2⌋)` for topical maps. Saturates.
pub fn construction_limit(grid: &Grid, class: MapClass) -> u128 {
    let n = question::effective_dim(grid);
    match class {
        MapClass::Nonexpansive if n >= 128 => u128::MAX,
        MapClass::Nonexpansive => 1u128 << n,
        MapClass::Topical => question::topical_bound(n),
    }
}

/// The proven upper bound on the periods of `class` in dimension `n'`, both
/// from Lemmens and Scheutzow (2005): `max_k 2^k·C(n',k)` for sup-norm
/// nonexpansive maps, `C(n', ⌊n'/2⌋)` for topical maps. Saturates.
pub fn period_bound(grid: &Grid, class: MapClass) -> u128 {
    let n = question::effective_dim(grid);
    match class {
        MapClass::Nonexpansive => question::lemmens_scheutzow_bound(n),
        MapClass::Topical => question::topical_bound(n),
    }
}

/// The default periods of a sweep, capped by the number of grid points:
/// `1..=B` with `B` the class's [`period_bound`] (every period that can
/// occur) for nonexpansive maps, and `1..=B + 1` for topical maps, where
/// every period up to `B` is constructed, so that the first excluded period
/// is decided by the solver as well (see the module documentation).
pub fn default_periods(grid: &Grid, class: MapClass) -> Vec<usize> {
    let bound = period_bound(grid, class);
    let top = match class {
        MapClass::Nonexpansive => bound,
        MapClass::Topical => bound.saturating_add(1),
    };
    let top = top.min(grid.num_points()).min(MAX_PERIODS as u128 + 1) as usize;
    (1..=top).collect()
}

/// Parses a period list: `A..B` (inclusive; `A..=B` too), `P`, or a
/// comma-separated list of both. The result is increasing and distinct.
///
/// # Errors
/// [`Error::Question`] naming the bad part, a period 0, a reversed range, or
/// more than [`MAX_PERIODS`] periods.
pub fn parse_periods(text: &str) -> Result<Vec<usize>> {
    let bad = |why: String| Error::Question(format!("--periods {text:?}: {why}"));
    let num = |s: &str| -> Result<usize> {
        s.trim().parse::<usize>().map_err(|_| {
            bad(format!(
                "{:?} is not a period (a positive integer)",
                s.trim()
            ))
        })
    };
    let mut out = Vec::new();
    for part in text.split(',') {
        let part = part.trim();
        if part.is_empty() {
            return Err(bad("empty item; write e.g. 1..12 or 3,5,9..11".into()));
        }
        let (a, b) = match part.split_once("..") {
            Some((a, b)) => (num(a)?, num(b.strip_prefix('=').unwrap_or(b))?),
            None => {
                let p = num(part)?;
                (p, p)
            }
        };
        if a == 0 {
            return Err(bad("periods start at 1".into()));
        }
        if a > b {
            return Err(bad(format!("the range {a}..{b} is empty")));
        }
        if b - a >= MAX_PERIODS || out.len() + (b - a) >= MAX_PERIODS * 2 {
            return Err(bad(format!("more than {MAX_PERIODS} periods")));
        }
        out.extend(a..=b);
    }
    out.sort_unstable();
    out.dedup();
    if out.len() > MAX_PERIODS {
        return Err(bad(format!("more than {MAX_PERIODS} periods")));
    }
    Ok(out)
}

/// A `p`-cycle of `class` on `grid` built without solving, when
/// `1 ≤ p ≤` [`construction_limit`]: [`unit_cube`] for nonexpansive maps,
/// [`middle_layer`] for topical maps. `None` above the limit.
pub fn construct(grid: &Grid, class: MapClass, p: usize) -> Option<Vec<Point>> {
    if p == 0 || p as u128 > construction_limit(grid, class) {
        return None;
    }
    Some(match class {
        MapClass::Nonexpansive => unit_cube(grid, p),
        MapClass::Topical => middle_layer(grid, p),
    })
}

/// The coordinates of side ≥ 1 and the lower corner `(a_c)_c` of `grid`:
/// the unit cube both constructions live in is `lower + {0,1}^active`.
fn unit_cube_frame(grid: &Grid) -> (Vec<usize>, Point) {
    let active = (0..grid.dim()).filter(|&c| grid.side(c) > 0).collect();
    let lower = (0..grid.dim()).map(|c| grid.lo(c)).collect();
    (active, lower)
}

/// `p` points of the unit cube `Π_c {a_c, a_c + 1}` over the coordinates of
/// side ≥ 1 (the others fixed at `a_c`), for `1 ≤ p ≤ 2^n'`: point `i`
/// adds the binary digits of `i` to the lower corner. Distinct points of the
/// cube differ by exactly 1 in some coordinate and by at most 1 in every
/// coordinate, so all distances are 1 and any order is an isometric cycle.
/// Callers keep `p ≤ 2^n'` ([`construct`] does); above it points repeat.
pub fn unit_cube(grid: &Grid, p: usize) -> Vec<Point> {
    let (active, lower) = unit_cube_frame(grid);
    (0..p)
        .map(|i| {
            let mut z = lower.clone();
            for (bit, &c) in active.iter().enumerate() {
                if bit < usize::BITS as usize && (i >> bit) & 1 == 1 {
                    z[c] += 1;
                }
            }
            z
        })
        .collect()
}

/// The first `p` points, in lexicographic order of their sets of raised
/// coordinates, of the middle layer of the unit cube of [`unit_cube`]: the
/// points with exactly `⌊n'/2⌋` of the `n'` coordinates of side ≥ 1 raised
/// from `a_c` to `a_c + 1`. For `1 ≤ p ≤ C(n', ⌊n'/2⌋)` they are a topical
/// `p`-cycle in any order [derived]: two distinct points `y ≠ z` of one
/// layer are incomparable 0/1 offsets from the corner with the same number
/// of ones, so some coordinate has `y_c − z_c = 1` and none has more, and
/// `t(y, z) = max_c (y_c − z_c) = 1` for every ordered pair (the fixed
/// coordinates contribute 0). So `t(x_i, x_{i+k}) = 1` for all `i` and
/// `k ≢ 0`. Callers keep `p` in range ([`construct`] does); above it the
/// list is shorter than `p`.
pub fn middle_layer(grid: &Grid, p: usize) -> Vec<Point> {
    let (active, lower) = unit_cube_frame(grid);
    let (n, k) = (active.len(), active.len() / 2);
    // The k-subsets of 0..n in lexicographic order: `chosen` is increasing;
    // the next subset raises the last entry that can still move right and
    // resets the entries after it.
    let mut chosen: Vec<usize> = (0..k).collect();
    let mut out = Vec::with_capacity(p);
    while out.len() < p {
        let mut z = lower.clone();
        for &j in &chosen {
            z[active[j]] += 1;
        }
        out.push(z);
        let Some(i) = (0..k).rev().find(|&i| chosen[i] < n - k + i) else {
            break;
        };
        chosen[i] += 1;
        for j in i + 1..k {
            chosen[j] = chosen[j - 1] + 1;
        }
    }
    out
}

/// What the published theorems say about a period.
#[derive(Clone, Copy, Debug, PartialEq, Eq, Serialize)]
#[serde(rename_all = "kebab-case")]
pub enum Status {
    /// The period occurs (the class's construction).
    Exists,
    /// A theorem excludes it.
    Excluded,
    /// Nothing published decides it, as far as we know.
    Open,
}

impl Status {
    /// The word used in reports: `exists`, `excluded` or `open`.
    pub fn word(self) -> &'static str {
        match self {
            Status::Exists => "exists",
            Status::Excluded => "excluded",
            Status::Open => "open",
        }
    }
}

/// The published facts that bear on one period.
#[derive(Clone, Debug, PartialEq, Eq, Serialize)]
pub struct Published {
    /// What they say.
    pub status: Status,
    /// Which theorems, in words with their sources.
    pub reasons: Vec<String>,
}

/// The Lemmens–Scheutzow bound with its source.
pub const CITE_LS: &str = "B. Lemmens and M. Scheutzow, On the dynamics of sup-norm non-expansive maps, \
     Ergodic Theory Dynam. Systems 25 (2005) 861–871";
/// The case n ≤ 3 with its source (recalled, not read).
pub const CITE_LN: &str = "R. Lyons and R. D. Nussbaum, On transitive and commutative finite groups of \
     isometries, in Fixed Point Theory and Applications, World Scientific, 1992 [recalled]";
/// The topical bound with its source (read, as recorded in MATH.md §7).
pub const CITE_LS_TOPICAL: &str = "B. Lemmens and M. Scheutzow, On the dynamics of sup-norm non-expansive maps, \
     Ergodic Theory Dynam. Systems 25 (2005) 861–871, proving a conjecture of J. Gunawardena and C. Sparrow";
/// The prime-period theorem with its source (recalled, not read).
pub const CITE_PRIME: &str = "Lyons and Nussbaum; a proof is in B. Lemmens and R. D. Nussbaum, \
     Nonlinear Perron–Frobenius Theory, Cambridge University Press, 2012 [recalled]";

fn is_prime(p: usize) -> bool {
    p >= 2 && (2..).take_while(|d| d * d <= p).all(|d| p % d != 0)
}

/// What is published about period `p` of `class` on `grid`, in terms of the
/// effective dimension `n'`. A box with `n'` sides of length ≥ 1 is
/// isometric to a subset of `R^{n'}`, so every bound for `R^{n'}` applies to
/// nonexpansive maps. For topical maps, dropping the fixed coordinates keeps
/// `t` on the orbit (they add a 0 to a maximum that is ≥ 1 on distinct
/// integer points of a cycle), so the orbit is a topical cycle in `R^{n'}`
/// and the `n'` bound applies too [derived].
pub fn published(grid: &Grid, class: MapClass, p: usize) -> Published {
    if class == MapClass::Topical {
        return published_topical(grid, p);
    }
    let n = question::effective_dim(grid);
    let two_n = construction_limit(grid, class);
    let ls = period_bound(grid, class);
    let p128 = p as u128;
    if p >= 1 && p128 <= two_n {
        return Published {
            status: Status::Exists,
            reasons: vec![format!(
                "p ≤ 2^{n} = {two_n}: any p vertices of a unit cube, pairwise at distance 1"
            )],
        };
    }
    let mut reasons = Vec::new();
    if p128 > ls {
        reasons.push(format!(
            "p > {ls} = max_k 2^k·C({n},k) (Lemmens and Scheutzow 2005)"
        ));
    }
    if n <= 3 {
        reasons.push(format!(
            "n' = {n} ≤ 3: the periods are exactly 1..{two_n} (Lyons and Nussbaum 1992 [recalled])"
        ));
    }
    if is_prime(p) {
        reasons.push(format!(
            "p is prime and > 2^{n} = {two_n} (prime-period theorem [recalled])"
        ));
    }
    if reasons.is_empty() {
        Published {
            status: Status::Open,
            reasons: vec!["no published answer known".into()],
        }
    } else {
        Published {
            status: Status::Excluded,
            reasons,
        }
    }
}

/// The topical half of [`published`]: there is no open period, because the
/// middle-layer construction reaches the Lemmens–Scheutzow bound
/// `C(n', ⌊n'/2⌋)` exactly. None of the nonexpansive theorems is shown.
fn published_topical(grid: &Grid, p: usize) -> Published {
    let n = question::effective_dim(grid);
    let bound = period_bound(grid, MapClass::Topical);
    let words = format!("C({n},{}) = {bound}", n / 2);
    if p >= 1 && p as u128 <= bound {
        Published {
            status: Status::Exists,
            reasons: vec![format!(
                "p ≤ {words}: any p points of the middle layer of a unit cube, with t = 1 between any two [derived]"
            )],
        }
    } else {
        Published {
            status: Status::Excluded,
            reasons: vec![format!(
                "p > {words} (Lemmens and Scheutzow 2005, the Gunawardena–Sparrow conjecture)"
            )],
        }
    }
}

/// The theorem that `verdict` for period `p` of `class` on `grid`
/// contradicts, if any: feasible where a theorem excludes the period, or
/// infeasible where the construction exists.
pub fn theorem_conflict(
    grid: &Grid,
    class: MapClass,
    p: usize,
    verdict: Verdict,
) -> Option<String> {
    conflict_with(published(grid, class, p), verdict)
}

/// [`published`] for the question of `record`: on a point set (inside the
/// box `grid`) the upper bounds still hold, as D is a subset of R^n', but the
/// unit-cube construction does not, so "exists" becomes "open".
pub fn published_for(record: &QuestionRecord, grid: &Grid) -> Published {
    let pubd = published(grid, record.class, record.period);
    if record.points.is_none() || pubd.status != Status::Exists {
        return pubd;
    }
    Published {
        status: Status::Open,
        reasons: vec![
            "the unit-cube construction needs a box; D is a point set, decided by the full-map solver"
                .into(),
        ],
    }
}

/// [`theorem_conflict`] for the question of `record` ([`published_for`]).
pub fn theorem_conflict_for(
    record: &QuestionRecord,
    grid: &Grid,
    verdict: Verdict,
) -> Option<String> {
    conflict_with(published_for(record, grid), verdict)
}

fn conflict_with(pubd: Published, verdict: Verdict) -> Option<String> {
    match (pubd.status, verdict) {
        (Status::Excluded, Verdict::Feasible) => Some(format!(
            "published theorems exclude the period ({})",
            pubd.reasons.join("; ")
        )),
        (Status::Exists, Verdict::Infeasible) => Some(format!(
            "the period exists by construction ({})",
            pubd.reasons.join("; ")
        )),
        _ => None,
    }
}

/// One period of a spectrum.
#[derive(Clone, Debug, PartialEq, Serialize)]
pub struct Row {
    /// The period p.
    pub period: usize,
    /// The verdict.
    pub verdict: Verdict,
    /// How it was obtained.
    pub how: How,
    /// Whether the answer was reused from the store rather than computed by this run.
    pub reused: bool,
    /// Seconds the answer took when it was computed.
    pub seconds: f64,
    /// What backs it, in words.
    pub certificate: String,
    /// What the published theorems say.
    pub published: Published,
    /// The full answer, as stored.
    pub answer: Answer,
}

impl Row {
    fn new(grid: &Grid, answer: Answer, reused: bool) -> Row {
        Row {
            period: answer.question.period,
            verdict: answer.verdict,
            how: answer.how,
            reused,
            seconds: answer.stats.seconds,
            certificate: certificate_words(&answer),
            published: published_for(&answer.question, grid),
            answer,
        }
    }
}

/// What backs `a`, in words: `orbit checked; map checked on 27 points`,
/// `LRAT proof checked (1234 steps): proofs/….lrat`, `none: time limit …`.
pub fn certificate_words(a: &Answer) -> String {
    match a.backing {
        Backing::CheckedOrbit => match (a.map_checked_points, a.question.class) {
            (Some(n), MapClass::Nonexpansive) => {
                format!("orbit checked; map checked on {n} points")
            }
            (Some(n), MapClass::Topical) => {
                format!("topical orbit checked; topical map and its clamp checked on {n} points")
            }
            (None, MapClass::Nonexpansive) => "orbit checked".into(),
            (None, MapClass::Topical) => "topical orbit checked".into(),
        },
        Backing::CheckedProof => match &a.proof {
            Some(p) => match &p.file {
                Some(f) => format!("LRAT proof checked ({} steps): {f}", p.steps),
                None => format!("LRAT proof checked ({} steps), not kept", p.steps),
            },
            None => "LRAT proof checked".into(),
        },
        Backing::SolverClaim => "the solver's claim, no proof checked".into(),
        Backing::None => format!("none: {}", a.reason.as_deref().unwrap_or("no answer")),
    }
}

/// Counts of a spectrum.
#[derive(Clone, Debug, Default, PartialEq, Eq, Serialize)]
pub struct Summary {
    /// Feasible periods.
    pub feasible: usize,
    /// Infeasible periods.
    pub infeasible: usize,
    /// Unknown periods.
    pub unknown: usize,
    /// Answers obtained by construction (this run or stored).
    pub by_construction: usize,
    /// Answers obtained by the solver (this run or stored).
    pub by_solver: usize,
    /// Answers reused from the store.
    pub reused: usize,
    /// Whether every period was decided.
    pub all_decided: bool,
}

/// The result of a sweep.
#[derive(Clone, Debug, PartialEq, Serialize)]
pub struct Spectrum {
    /// orbitcnf's version.
    pub tool_version: String,
    /// The box in canonical form (`-1..1,-1..1`).
    pub grid: String,
    /// The box for people (`{-1,0,1}^2`).
    pub grid_name: String,
    /// The points of D when D is a point set (then `grid` is its bounding box).
    #[serde(skip_serializing_if = "Option::is_none")]
    pub points: Option<Vec<Point>>,
    /// The dimension n.
    pub dim: usize,
    /// The class of maps asked about.
    pub class: MapClass,
    /// The question answered for every period, in words ([`question::statement`]
    /// with the period written `p`).
    pub question: String,
    /// Coordinates with more than one value: the dimension that counts for the bounds.
    pub effective_dim: usize,
    /// The class's [`construction_limit`]: `2^n'`, or `C(n', ⌊n'/2⌋)` for topical maps.
    pub construction_limit: u64,
    /// The class's Lemmens–Scheutzow bound ([`period_bound`]):
    /// `max_k 2^k·C(n',k)`, or `C(n', ⌊n'/2⌋)` for topical maps.
    pub lemmens_scheutzow_bound: u64,
    /// The periods swept.
    pub periods: Vec<usize>,
    /// The encoding options as given.
    pub options: EncodeOptions,
    /// The store's folder, when there is one.
    pub store: Option<PathBuf>,
    /// This run's id.
    pub run_id: String,
    /// When this run started (UTC, RFC 3339).
    pub started_at: String,
    /// When it finished.
    pub finished_at: String,
    /// Wall-clock seconds of this run.
    pub elapsed_seconds: f64,
    /// Worker threads.
    pub jobs: usize,
    /// The per-period time limit.
    pub time_limit_seconds: Option<f64>,
    /// Counts.
    pub summary: Summary,
    /// One row per period, increasing.
    pub rows: Vec<Row>,
}

struct Task {
    question: Question,
    key: String,
    proof: Option<(PathBuf, String)>,
}

enum Event {
    Started(usize),
    Done(usize, Box<Result<Answer>>),
}

/// Runs a sweep (see the module documentation).
///
/// # Errors
/// [`Error::Options`] for `jobs == 0` or inconsistent encoding options;
/// [`Error::Question`] for no periods, too many, or a period above the number
/// of grid points; [`Error::Contradiction`] when two answers to a question
/// disagree or an answer contradicts a published theorem; store errors
/// ([`Error::Io`], [`Error::Parse`]); pipeline errors of a period (a failed
/// check, a rejected proof, a solver failure).
pub fn run(cfg: &SweepConfig) -> Result<Spectrum> {
    if cfg.jobs == 0 {
        return Err(Error::Options("--jobs must be at least 1".into()));
    }
    cfg.options.symmetry.validate()?;
    if cfg.periods.is_empty() {
        return Err(Error::Question("no periods to decide".into()));
    }
    if cfg.periods.len() > MAX_PERIODS {
        return Err(Error::Question(format!(
            "{} periods asked; one sweep decides at most {MAX_PERIODS}",
            cfg.periods.len()
        )));
    }
    let questions: Vec<Question> = cfg
        .periods
        .iter()
        .map(|&p| match &cfg.points {
            Some(d) => Question::on_points(d.clone(), p),
            None => Ok(Question::new(cfg.grid.clone(), p)?.with_class(cfg.class)),
        })
        .collect::<Result<_>>()?;
    let mut store = cfg.store.as_deref().map(Store::open).transpose()?;
    let run_id = store::run_id();
    let started_at = store::utc_timestamp(SystemTime::now());
    let t0 = Instant::now();
    let limits = RunLimits {
        time_seconds: cfg.time_limit.map(|d| d.as_secs_f64()),
        max_clauses: cfg.max_clauses,
    };
    let grid = &cfg.grid;
    let mut rows: BTreeMap<usize, Row> = BTreeMap::new();
    let mut constructible = Vec::new();
    let mut queue = VecDeque::new();
    for q in questions {
        let key = store::key_for(&q, &cfg.options);
        if let Some(s) = &store {
            if let Some(a) = reusable(s, grid, &q, &key, &limits, cfg.recheck)? {
                rows.insert(q.period, Row::new(grid, a, true));
                continue;
            }
        }
        if q.points.is_none() && q.period as u128 <= construction_limit(grid, q.class) {
            constructible.push((q, key));
        } else {
            let proof = store.as_ref().map(|s| s.proof_path(&key, &run_id));
            queue.push_back(Task {
                question: q,
                key,
                proof,
            });
        }
    }
    for (q, key) in constructible {
        let a = constructed(&q, key, &cfg.options, &limits, &run_id)?;
        finish(grid, &mut store, &mut rows, a)?;
    }

    let total = cfg.periods.len();
    let mut progress = Progress::new(
        cfg.progress,
        grid.to_string(),
        total,
        t0,
        cfg.jobs,
        limits.time_seconds,
    );
    let n_tasks = queue.len();
    let queue = Mutex::new(queue);
    let stop = AtomicBool::new(false);
    let mut first_error: Option<Error> = None;
    std::thread::scope(|scope| {
        let (tx, rx) = mpsc::channel::<Event>();
        for _ in 0..cfg.jobs.min(n_tasks) {
            let tx = tx.clone();
            let (queue, stop, run_id) = (&queue, &stop, &run_id);
            scope.spawn(move || {
                while !stop.load(Ordering::SeqCst) {
                    let next = queue
                        .lock()
                        .unwrap_or_else(PoisonError::into_inner)
                        .pop_front();
                    let Some(task) = next else { break };
                    let p = task.question.period;
                    if tx.send(Event::Started(p)).is_err() {
                        break;
                    }
                    let answer = Box::new(solved(&task, cfg, &limits, run_id));
                    if tx.send(Event::Done(p, answer)).is_err() {
                        break;
                    }
                }
            });
        }
        drop(tx);
        let mut running: BTreeMap<usize, Instant> = BTreeMap::new();
        loop {
            match rx.recv_timeout(Duration::from_millis(250)) {
                Ok(Event::Started(p)) => {
                    running.insert(p, Instant::now());
                }
                Ok(Event::Done(p, answer)) => {
                    running.remove(&p);
                    let outcome = (*answer).and_then(|a| finish(grid, &mut store, &mut rows, a));
                    if let Err(e) = outcome {
                        stop.store(true, Ordering::SeqCst);
                        progress.clear();
                        if first_error.is_none() {
                            if !running.is_empty() {
                                eprintln!(
                                    "orbitcnf: stopping the sweep at p = {p}: {e}; \
                                     waiting for {} running period(s) to finish",
                                    running.len()
                                );
                            }
                            first_error = Some(e);
                        } else {
                            eprintln!("orbitcnf: also at p = {p}: {e}");
                        }
                    }
                }
                Err(mpsc::RecvTimeoutError::Timeout) => {}
                Err(mpsc::RecvTimeoutError::Disconnected) => break,
            }
            let queued = queue.lock().unwrap_or_else(PoisonError::into_inner).len();
            progress.draw(&rows, &running, queued);
        }
        progress.clear();
    });
    if let Some(e) = first_error {
        return Err(e);
    }

    let rows: Vec<Row> = rows.into_values().collect();
    let summary = Summary {
        feasible: rows
            .iter()
            .filter(|r| r.verdict == Verdict::Feasible)
            .count(),
        infeasible: rows
            .iter()
            .filter(|r| r.verdict == Verdict::Infeasible)
            .count(),
        unknown: rows
            .iter()
            .filter(|r| r.verdict == Verdict::Unknown)
            .count(),
        by_construction: rows.iter().filter(|r| r.how == How::Construction).count(),
        by_solver: rows.iter().filter(|r| r.how == How::Solver).count(),
        reused: rows.iter().filter(|r| r.reused).count(),
        all_decided: rows.iter().all(|r| r.verdict != Verdict::Unknown),
    };
    let n = question::effective_dim(grid);
    Ok(Spectrum {
        tool_version: VERSION.into(),
        grid: grid.spec(),
        grid_name: match &cfg.points {
            Some(d) => format!("D = {d}"),
            None => grid.to_string(),
        },
        points: cfg.points.as_ref().map(|d| d.points().to_vec()),
        dim: grid.dim(),
        class: cfg.class,
        question: match &cfg.points {
            Some(_) => {
                "a periodic orbit of a nonexpansive map D → D (sup-norm) with minimal period p"
                    .into()
            }
            None => question::statement(grid, cfg.class, "p"),
        },
        effective_dim: n,
        construction_limit: u64::try_from(construction_limit(grid, cfg.class)).unwrap_or(u64::MAX),
        lemmens_scheutzow_bound: u64::try_from(period_bound(grid, cfg.class)).unwrap_or(u64::MAX),
        periods: cfg.periods.clone(),
        // A point set always takes the full-map formulation; say so.
        options: match &cfg.points {
            Some(d) => {
                let top = cfg.periods.iter().copied().max().unwrap_or(1);
                Question::on_points(d.clone(), top)
                    .map(|q| cfg.options.resolve(&q))
                    .unwrap_or_else(|_| cfg.options.clone())
            }
            None => cfg.options.clone(),
        },
        store: cfg.store.clone(),
        run_id,
        started_at,
        finished_at: store::utc_timestamp(SystemTime::now()),
        elapsed_seconds: t0.elapsed().as_secs_f64(),
        jobs: cfg.jobs,
        time_limit_seconds: limits.time_seconds,
        summary,
        rows,
    })
}

/// The stored answer to reuse for `q`, after checking the store's answers
/// to `q` against each other and against the theorems.
fn reusable(
    s: &Store,
    grid: &Grid,
    q: &Question,
    key: &str,
    limits: &RunLimits,
    recheck: bool,
) -> Result<Option<Answer>> {
    let record = q.record();
    let all: Vec<&Answer> = s.for_question(&record).collect();
    for (i, a) in all.iter().enumerate() {
        for b in &all[i + 1..] {
            store::check_agree(a, &s.describe_file(&a.key), b, &s.describe_file(&b.key))?;
        }
        if let Some(theorem) = theorem_conflict_for(&record, grid, a.verdict) {
            return Err(Error::Contradiction {
                question: store::question_words(&record),
                first: theorem,
                second: format!("{} says {}", s.describe_file(&a.key), a.describe()),
            });
        }
    }
    let Some(a) = s.get(key) else {
        return Ok(None);
    };
    if !a.is_decided() && limits.exceeds(&a.limits) {
        return Ok(None);
    }
    if recheck {
        s.recheck(a)?;
    } else {
        s.quick_check(a)?;
    }
    Ok(Some(a.clone()))
}

/// Checks a new answer against the theorems, stores it and records its row.
fn finish(
    grid: &Grid,
    store: &mut Option<Store>,
    rows: &mut BTreeMap<usize, Row>,
    a: Answer,
) -> Result<()> {
    let p = a.question.period;
    if let Some(theorem) = theorem_conflict_for(&a.question, grid, a.verdict) {
        let orbit = a
            .orbit
            .as_ref()
            .map(|o| format!(" with the checked orbit {o:?}"))
            .unwrap_or_default();
        return Err(Error::Contradiction {
            question: store::question_words(&a.question),
            first: theorem,
            second: format!(
                "the new answer of run {} says {}{orbit}",
                a.run_id,
                a.describe()
            ),
        });
    }
    let (row_answer, reused) = match store {
        Some(s) => match s.put(a.clone())? {
            Put::Written => (a, false),
            Put::Kept(stored) => {
                if let Some(f) = a.proof.as_ref().and_then(|p| p.file.as_ref()) {
                    let _ = std::fs::remove_file(s.resolve(f));
                }
                (*stored, true)
            }
        },
        None => (a, false),
    };
    rows.insert(p, Row::new(grid, row_answer, reused));
    Ok(())
}

fn base_answer(
    q: &Question,
    key: String,
    options: &EncodeOptions,
    limits: &RunLimits,
    run_id: &str,
    how: How,
    started: SystemTime,
) -> Answer {
    let resolved = options.resolve(q);
    Answer {
        schema: SCHEMA.into(),
        key,
        question: q.record(),
        formulation: resolved.formulation,
        options: resolved,
        verdict: Verdict::Unknown,
        how,
        backing: Backing::None,
        orbit: None,
        profile: None,
        map: None,
        map_checked_points: None,
        proof: None,
        reason: None,
        limits: *limits,
        stats: AnswerStats::default(),
        solver: None,
        tool_version: VERSION.into(),
        run_id: run_id.into(),
        started_at: store::utc_timestamp(started),
        finished_at: String::new(),
    }
}

/// Builds and checks the extension of `orbit` for `q`'s class on boxes of at
/// most [`MAP_CHECK_POINTS`] points; the number of points checked.
///
/// For topical questions both maps `check --map` checks: the unclamped
/// extension, topical on R^n (order-preserving, nonexpansive and
/// homogeneous on the grid, its values possibly outside the box), and its
/// clamp, an order-preserving nonexpansive map of the box into itself.
fn map_check(q: &Question, orbit: &[Point]) -> Result<Option<u64>> {
    let grid = &q.grid;
    if grid.num_points() > MAP_CHECK_POINTS {
        return Ok(None);
    }
    let bounds = grid.ranges();
    let points = match q.class {
        MapClass::Nonexpansive => {
            let table = verify::extend(bounds, orbit)?;
            verify::check_map(&table, orbit)?.points_checked
        }
        MapClass::Topical => {
            let free = verify::extend_topical(bounds, orbit, false)?;
            let points = verify::check_topical_map(&free, orbit, true)?.points_checked;
            let clamped = verify::extend_topical(bounds, orbit, true)?;
            verify::check_topical_map(&clamped, orbit, false)?;
            points
        }
    };
    Ok(Some(points))
}

/// The answer by construction for `q` (which must have `p` at most the
/// class's [`construction_limit`]).
fn constructed(
    q: &Question,
    key: String,
    options: &EncodeOptions,
    limits: &RunLimits,
    run_id: &str,
) -> Result<Answer> {
    let started = SystemTime::now();
    let t = Instant::now();
    let mut a = base_answer(q, key, options, limits, run_id, How::Construction, started);
    let orbit = construct(&q.grid, q.class, q.period).ok_or_else(|| {
        Error::Question(format!(
            "period {} is above the construction limit {} of {} maps and cannot be constructed",
            q.period,
            construction_limit(&q.grid, q.class),
            q.class
        ))
    })?;
    let check = q.check_orbit(&orbit)?;
    a.map_checked_points = map_check(q, &orbit)?;
    a.verdict = Verdict::Feasible;
    a.backing = Backing::CheckedOrbit;
    a.profile = Some(check.profile);
    a.orbit = Some(orbit);
    a.stats.seconds = t.elapsed().as_secs_f64();
    a.finished_at = store::utc_timestamp(SystemTime::now());
    Ok(a)
}

/// The answer of the certified solver for `task`.
fn solved(task: &Task, cfg: &SweepConfig, limits: &RunLimits, run_id: &str) -> Result<Answer> {
    let q = &task.question;
    let started = SystemTime::now();
    let t = Instant::now();
    let mut a = base_answer(
        q,
        task.key.clone(),
        &cfg.options,
        limits,
        run_id,
        How::Solver,
        started,
    );
    let mut backend = Certified {
        lrat: task.proof.as_ref().map(|(abs, _)| abs.clone()),
        drat: None,
    };
    let solve_limits = Limits {
        time: cfg.time_limit,
        progress: false,
    };
    match decide::decide(
        q,
        &cfg.options,
        &mut backend,
        &solve_limits,
        cfg.max_clauses,
    ) {
        Ok(report) => {
            a.verdict = report.verdict;
            a.solver = Some(report.stats.solve.solver.clone());
            a.stats = AnswerStats {
                seconds: 0.0,
                encode_seconds: report.stats.size.encode_seconds,
                solve_seconds: report.stats.solve.seconds,
                conflicts: report.stats.solve.conflicts,
                variables: report.stats.size.variables,
                clauses: report.stats.size.clauses,
            };
            match report.verdict {
                Verdict::Feasible => {
                    let orbit = report.orbit.clone().unwrap_or_default();
                    // decide has checked it; checking again here costs little
                    // and keeps the stored evidence self-contained.
                    let check = q.check_orbit(&orbit)?;
                    a.map_checked_points = match &report.map {
                        // Full map: decide checked the decoded map on all of D.
                        Some(map) => {
                            let mc = verify::check_self_map(q.domain().points(), map, &orbit)?;
                            a.map = Some(map.clone());
                            Some(mc.points_checked)
                        }
                        None => map_check(q, &orbit)?,
                    };
                    a.profile = Some(check.profile);
                    a.orbit = Some(orbit);
                    a.backing = Backing::CheckedOrbit;
                }
                Verdict::Infeasible => match &report.certificate {
                    Certificate::CheckedProof(info) => {
                        let (file, sha256) = match (&task.proof, &info.lrat_file) {
                            (Some((abs, rel)), Some(_)) => {
                                let (digest, _) = store::sha256_file(abs)?;
                                (Some(rel.clone()), Some(digest))
                            }
                            _ => (None, None),
                        };
                        a.proof = Some(ProofRecord {
                            file,
                            sha256,
                            bytes: info.lrat_bytes,
                            steps: info.lrat.steps,
                            check_seconds: info.check_seconds,
                        });
                        a.backing = Backing::CheckedProof;
                    }
                    _ => a.backing = Backing::SolverClaim,
                },
                Verdict::Unknown => {
                    a.reason = report.reason.clone();
                }
            }
        }
        Err(e @ Error::TooLarge { .. }) => {
            a.reason = Some(e.to_string());
        }
        Err(e) => return Err(e),
    }
    a.stats.seconds = t.elapsed().as_secs_f64();
    a.finished_at = store::utc_timestamp(SystemTime::now());
    Ok(a)
}

/// The progress line on stderr.
struct Progress {
    on: bool,
    drawn: bool,
    grid: String,
    total: usize,
    t0: Instant,
    jobs: usize,
    limit: Option<f64>,
    last: Option<Instant>,
}

impl Progress {
    fn new(
        wanted: bool,
        grid: String,
        total: usize,
        t0: Instant,
        jobs: usize,
        limit: Option<f64>,
    ) -> Progress {
        Progress {
            on: wanted && std::io::stderr().is_terminal(),
            drawn: false,
            grid,
            total,
            t0,
            jobs,
            limit,
            last: None,
        }
    }

    fn draw(
        &mut self,
        rows: &BTreeMap<usize, Row>,
        running: &BTreeMap<usize, Instant>,
        queued: usize,
    ) {
        if !self.on {
            return;
        }
        let now = Instant::now();
        if self
            .last
            .is_some_and(|l| now.duration_since(l) < Duration::from_millis(200))
        {
            return;
        }
        self.last = Some(now);
        let count = |v: Verdict| rows.values().filter(|r| r.verdict == v).count();
        let solved: Vec<f64> = rows
            .values()
            .filter(|r| !r.reused && r.how == How::Solver)
            .map(|r| r.seconds)
            .collect();
        let remaining = queued + running.len();
        let lanes = self.jobs.min(remaining).max(1);
        // With a time limit no period runs longer: an upper bound on what is left.
        let at_most = self.limit.map(|t| {
            let waves = queued.div_ceil(lanes) as f64 + if running.is_empty() { 0.0 } else { 1.0 };
            format!(", at most {}", duration_words(waves * t))
        });
        let estimate = if remaining == 0 {
            "finishing".to_string()
        } else if solved.is_empty() {
            format!(
                "estimate after the first solved period{}",
                at_most.unwrap_or_default()
            )
        } else {
            let mean = solved.iter().sum::<f64>() / solved.len() as f64;
            format!(
                "≈ {} left{}",
                duration_words(mean * remaining as f64 / lanes as f64),
                at_most.unwrap_or_default()
            )
        };
        let mut shown: Vec<String> = running
            .iter()
            .take(4)
            .map(|(p, at)| {
                format!(
                    "p={p} {}",
                    duration_words(now.duration_since(*at).as_secs_f64())
                )
            })
            .collect();
        if running.len() > 4 {
            shown.push("…".into());
        }
        let line = format!(
            "spectrum {}: {}/{} done ({} feasible, {} infeasible, {} unknown), {} running{}{}, {} elapsed, {estimate}",
            self.grid,
            rows.len(),
            self.total,
            count(Verdict::Feasible),
            count(Verdict::Infeasible),
            count(Verdict::Unknown),
            running.len(),
            if shown.is_empty() { "" } else { ": " },
            shown.join(", "),
            duration_words(self.t0.elapsed().as_secs_f64()),
        );
        eprint!("\r\x1b[2K{line}");
        self.drawn = true;
    }

    fn clear(&mut self) {
        if self.drawn {
            eprint!("\r\x1b[2K");
            self.drawn = false;
        }
    }
}

/// Seconds in words: `0.42 s`, `12.3 s`, `4m05s`, `2h07m`.
pub fn duration_words(s: f64) -> String {
    if !s.is_finite() || s < 0.0 {
        return "?".into();
    }
    if s < 10.0 {
        format!("{s:.2} s")
    } else if s < 60.0 {
        format!("{s:.1} s")
    } else if s < 3600.0 {
        let m = (s / 60.0).floor();
        format!("{}m{:02}s", m as u64, (s - m * 60.0).floor() as u64)
    } else {
        let h = (s / 3600.0).floor();
        format!(
            "{}h{:02}m",
            h as u64,
            ((s - h * 3600.0) / 60.0).floor() as u64
        )
    }
}

/// An increasing list of periods in short form: `1..8, 10, 12..13`.
pub fn ranges_words(periods: &[usize]) -> String {
    let mut parts: Vec<String> = Vec::new();
    let mut i = 0;
    while i < periods.len() {
        let mut j = i;
        while j + 1 < periods.len() && periods[j + 1] == periods[j] + 1 {
            j += 1;
        }
        parts.push(if j == i {
            periods[i].to_string()
        } else {
            format!("{}..{}", periods[i], periods[j])
        });
        i = j + 1;
    }
    if parts.is_empty() {
        "none".into()
    } else {
        parts.join(", ")
    }
}

fn csv_field(s: &str) -> String {
    if s.contains([',', '"', '\n']) {
        format!("\"{}\"", s.replace('"', "\"\""))
    } else {
        s.to_string()
    }
}

fn md_cell(s: &str) -> String {
    s.replace('|', "\\|").replace('\n', " ")
}

impl Spectrum {
    /// The periods with verdict `v`.
    pub fn periods_with(&self, v: Verdict) -> Vec<usize> {
        self.rows
            .iter()
            .filter(|r| r.verdict == v)
            .map(|r| r.period)
            .collect()
    }

    /// The options as given, with what the class alone switches off
    /// ([`EncodeOptions::for_class`]); each row's answer has them resolved
    /// in full.
    fn options_words(&self) -> String {
        let o = self.options.for_class(self.class);
        let on_off = |b: bool| if b { "on" } else { "off" };
        format!(
            "{} (symmetry {}, count {}, packing {}, classes {})",
            o.formulation,
            if o.symmetry == Symmetry::ALL {
                "all".to_string()
            } else {
                o.symmetry.names()
            },
            on_off(o.count),
            on_off(o.packing),
            on_off(o.classes)
        )
    }

    fn summary_words(&self) -> String {
        let s = &self.summary;
        let mut t = format!(
            "{} feasible ({}), {} infeasible ({}), {} unknown ({})",
            s.feasible,
            ranges_words(&self.periods_with(Verdict::Feasible)),
            s.infeasible,
            ranges_words(&self.periods_with(Verdict::Infeasible)),
            s.unknown,
            ranges_words(&self.periods_with(Verdict::Unknown)),
        );
        t.push_str(if s.all_decided {
            ": every period decided"
        } else {
            ": some periods undecided (a rerun with a larger --time-limit retries them)"
        });
        t
    }

    /// The table for people.
    pub fn to_table(&self) -> String {
        let mut s = String::new();
        let _ = writeln!(
            s,
            "spectrum     {} (n = {}, n' = {}), periods {}",
            self.grid_name,
            self.dim,
            self.effective_dim,
            ranges_words(&self.periods)
        );
        let _ = writeln!(s, "question     for each p: {}", self.question);
        let _ = writeln!(s, "encoding     {}", self.options_words());
        let store = self
            .store
            .as_ref()
            .map_or("none".to_string(), |p| p.display().to_string());
        let _ = writeln!(s, "store        {store}; run {}", self.run_id);
        let _ = writeln!(s);
        let _ = writeln!(
            s,
            "{:>5}  {:<10}  {:<12}  {:<6}  {:>9}  certificate",
            "p", "verdict", "how", "source", "time"
        );
        for r in &self.rows {
            let _ = writeln!(
                s,
                "{:>5}  {:<10}  {:<12}  {:<6}  {:>9}  {}",
                r.period,
                r.verdict.word(),
                r.how.word(),
                if r.reused { "stored" } else { "new" },
                duration_words(r.seconds),
                r.certificate
            );
        }
        let _ = writeln!(s);
        let _ = writeln!(s, "summary      {}", self.summary_words());
        let _ = writeln!(
            s,
            "             {} by construction, {} by the solver; {} reused from the store; {} elapsed with {} job(s)",
            self.summary.by_construction,
            self.summary.by_solver,
            self.summary.reused,
            duration_words(self.elapsed_seconds),
            self.jobs
        );
        if self.class == MapClass::Topical {
            let _ = writeln!(
                s,
                "published    p ≤ C({n},{}) = {b} exist (middle layer of a unit cube [derived]); \
                 p > {b} excluded (Lemmens and Scheutzow 2005)",
                self.effective_dim / 2,
                b = self.lemmens_scheutzow_bound,
                n = self.effective_dim,
            );
        } else {
            // On a point set the bounds hold (D ⊂ R^n') but the construction needs a box.
            let cl = self.construction_limit;
            let on_points = self.points.is_some();
            let small = if self.effective_dim > 3 {
                String::new()
            } else if on_points {
                format!("; n' ≤ 3: p ≤ {cl} (Lyons and Nussbaum 1992 [recalled])")
            } else {
                format!("; n' ≤ 3: exactly 1..{cl} (Lyons and Nussbaum 1992 [recalled])")
            };
            let (head, tail) = if on_points {
                (
                    String::new(),
                    "; the unit-cube construction needs a box, so every period of D went to the full-map solver",
                )
            } else {
                (
                    format!("p ≤ 2^{} = {cl} exist (construction); ", self.effective_dim),
                    "",
                )
            };
            let _ = writeln!(
                s,
                "published    {head}p > {} excluded (Lemmens and Scheutzow 2005){small}; \
                 prime p > {cl} excluded [recalled]{tail}",
                self.lemmens_scheutzow_bound,
            );
        }
        let _ = writeln!(
            s,
            "             every answer agrees with them (a disagreement is an error)"
        );
        s
    }

    /// The whole spectrum as one JSON object (one line): the fields of
    /// [`Spectrum`], each row with its full stored [`Answer`].
    pub fn to_json(&self) -> String {
        serde_json::to_string(self).expect("spectra serialise")
    }

    /// One CSV line per period after a header line.
    pub fn to_csv(&self) -> String {
        let mut s = String::from(
            "period,verdict,how,source,seconds,conflicts,certificate,proof_file,proof_sha256,published,run_id,finished_at\n",
        );
        for r in &self.rows {
            let a = &r.answer;
            let proof = a.proof.as_ref();
            let fields = [
                r.period.to_string(),
                r.verdict.word().into(),
                r.how.word().into(),
                if r.reused { "stored" } else { "new" }.into(),
                format!("{:.3}", r.seconds),
                a.stats.conflicts.map(|c| c.to_string()).unwrap_or_default(),
                r.certificate.clone(),
                proof.and_then(|p| p.file.clone()).unwrap_or_default(),
                proof.and_then(|p| p.sha256.clone()).unwrap_or_default(),
                format!(
                    "{}: {}",
                    r.published.status.word(),
                    r.published.reasons.join("; ")
                ),
                a.run_id.clone(),
                a.finished_at.clone(),
            ];
            let line: Vec<String> = fields.iter().map(|f| csv_field(f)).collect();
            s.push_str(&line.join(","));
            s.push('\n');
        }
        s
    }

    /// The published-bounds list of a topical sweep: the middle-layer
    /// construction and the topical theorem, and none of the nonexpansive
    /// theorems (which bound a larger class and would mislead here).
    fn topical_bounds_markdown(&self, s: &mut String) {
        let (n, b) = (self.effective_dim, self.lemmens_scheutzow_bound);
        let _ = writeln!(
            s,
            "- **Every p ≤ C(n,⌊n/2⌋) occurs** (construction [derived]): the C(n,⌊n/2⌋) points of the middle layer \
             of a unit cube `Π {{a_c, a_c+1}}` are incomparable 0/1 offsets with the same number of ones, so \
             t(y, z) = max_c (y_c − z_c) = 1 for any two of them, and any p of them, in any order, are a periodic \
             orbit of a topical map. Here C({n},{}) = {b}.",
            n / 2
        );
        let _ = writeln!(
            s,
            "- **p ≤ C(n,⌊n/2⌋)** for every periodic orbit of a topical map on R^n: {CITE_LS_TOPICAL}. \
             Here the bound is {b}, so the periods are exactly 1..{b}."
        );
    }

    /// A Markdown page: the computed answers beside the published bounds,
    /// with the sources.
    pub fn to_markdown(&self) -> String {
        let mut s = String::new();
        let n = self.effective_dim;
        let title = match self.class {
            MapClass::Nonexpansive => "sup-norm nonexpansive maps on",
            MapClass::Topical => "topical maps with an orbit in",
        };
        let _ = writeln!(s, "# Periods of {title} {}\n", self.grid_name);
        let _ = writeln!(
            s,
            "Box `{}`: dimension n = {}, effective dimension n' = {n} (coordinates with more than one value). \
             Periods {} computed by orbitcnf {} (run `{}`, finished {}) with the formulation {}.\n\n\
             The question, for each period p: {}.\n",
            self.grid,
            self.dim,
            ranges_words(&self.periods),
            self.tool_version,
            self.run_id,
            self.finished_at,
            self.options_words(),
            self.question
        );
        let _ = writeln!(s, "Summary: {}.\n", self.summary_words());
        let _ = writeln!(
            s,
            "| p | computed | how | time | certificate | published |\n|---:|---|---|---:|---|---|"
        );
        for r in &self.rows {
            let published = match r.published.status {
                Status::Open => "open".into(),
                status => format!("{}: {}", status.word(), r.published.reasons.join("; ")),
            };
            let _ = writeln!(
                s,
                "| {} | {} | {}{} | {} | {} | {} |",
                r.period,
                r.verdict.word(),
                r.how.word(),
                if r.reused { " (stored)" } else { "" },
                duration_words(r.seconds),
                md_cell(&r.certificate),
                md_cell(&published)
            );
        }
        let _ = writeln!(s, "\n## Published bounds\n");
        if self.class == MapClass::Topical {
            self.topical_bounds_markdown(&mut s);
        } else {
            let _ = writeln!(
                s,
                "- **Every p ≤ 2^n occurs** (construction): the {} vertices of a unit cube `Π {{a_c, a_c+1}}` are pairwise \
                 at distance 1, so any p of them, in any order, are an isometric p-cycle. Here 2^{n} = {}.",
                self.construction_limit, self.construction_limit
            );
            let _ = writeln!(
                s,
                "- **p ≤ max_k 2^k·C(n,k)** for every sup-norm nonexpansive map on a subset of R^n: {CITE_LS}. \
                 Here the bound is {}.",
                self.lemmens_scheutzow_bound
            );
            let _ = writeln!(
                s,
                "- **n ≤ 3: the periods are exactly 1..2^n** (p ≤ 8 for n = 3; with the construction): {CITE_LN}. {}",
                if n <= 3 {
                    format!(
                        "It applies here: the periods are exactly 1..{}.",
                        self.construction_limit
                    )
                } else {
                    "It does not apply here (n' > 3).".into()
                }
            );
            let _ = writeln!(
                s,
                "- **A prime period is at most 2^n**: {CITE_PRIME}. Here it excludes the primes above {}.",
                self.construction_limit
            );
        }
        let open: Vec<usize> = self
            .rows
            .iter()
            .filter(|r| r.published.status == Status::Open)
            .map(|r| r.period)
            .collect();
        let _ = writeln!(
            s,
            "\nPeriods no published theorem decides, as far as we know: {}.",
            ranges_words(&open)
        );
        let _ = writeln!(
            s,
            "\nEvery computed answer agrees with the theorems above (orbitcnf reports any disagreement \
             as an error and writes no page). Feasible answers carry an orbit checked point by point; \
             infeasible ones an LRAT proof of the CNF, accepted by orbitcnf's own checker."
        );
        s
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    fn grid(spec: &str, dim: usize) -> Grid {
        Grid::parse(spec, Some(dim)).unwrap()
    }

    #[test]
    fn spectrum_construction_gives_checked_cycles_up_to_two_to_the_n() {
        for (g, limit) in [
            (grid("-1..1", 3), 8),
            (grid("0..3", 2), 4),
            (grid("0..2,5..5,0..1", 3), 4),
            (grid("7..7", 2), 1),
        ] {
            let class = MapClass::Nonexpansive;
            assert_eq!(construction_limit(&g, class), limit);
            let q = |p| Question::new(g.clone(), p).unwrap();
            for p in 1..=limit as usize {
                let orbit = construct(&g, class, p).unwrap();
                let check = verify::check_orbit(g.ranges(), &orbit).unwrap();
                assert!(check.profile.iter().all(|&d| d == 1));
                map_check(&q(p), &orbit).unwrap().unwrap();
            }
            assert!(construct(&g, class, limit as usize + 1).is_none());
            assert!(construct(&g, class, 0).is_none());
        }
    }

    #[test]
    fn spectrum_periods_parse_and_default() {
        assert_eq!(parse_periods("1..4").unwrap(), vec![1, 2, 3, 4]);
        assert_eq!(parse_periods("9, 3,5..=6,5").unwrap(), vec![3, 5, 6, 9]);
        for bad in ["", "0..3", "4..2", "x", "1..", "1,,2", "1..100000"] {
            assert!(parse_periods(bad).is_err(), "{bad}");
        }
        let ne = MapClass::Nonexpansive;
        assert_eq!(
            default_periods(&grid("-1..1", 3), ne),
            (1..=12).collect::<Vec<_>>()
        );
        assert_eq!(
            default_periods(&grid("-1..1", 4), ne),
            (1..=32).collect::<Vec<_>>()
        );
        // Capped by the number of points: {0,1}^3 has 8.
        assert_eq!(
            default_periods(&grid("0..1", 3), ne),
            (1..=8).collect::<Vec<_>>()
        );
        // Topical: one past C(n', ⌊n'/2⌋), with n' the effective dimension.
        let t = MapClass::Topical;
        let upto = |top: usize| (1..=top).collect::<Vec<_>>();
        assert_eq!(default_periods(&grid("0..1", 4), t), upto(7));
        assert_eq!(default_periods(&grid("0..2", 3), t), upto(4));
        assert_eq!(default_periods(&grid("0..1,3..3,0..5", 3), t), upto(3));
        // ... capped by the points: {0,1} has C(1,0) = 1, 1 + 1 = 2 = |D|;
        // a single point has n' = 0 and only p = 1.
        assert_eq!(default_periods(&grid("0..1", 1), t), upto(2));
        assert_eq!(default_periods(&grid("4..4", 2), t), upto(1));
        assert_eq!(ranges_words(&[1, 2, 3, 5, 7, 8]), "1..3, 5, 7..8");
    }

    #[test]
    fn spectrum_published_statuses() {
        let ne = MapClass::Nonexpansive;
        let t3 = grid("-1..1", 3);
        assert_eq!(published(&t3, ne, 8).status, Status::Exists);
        assert_eq!(published(&t3, ne, 9).status, Status::Excluded);
        assert_eq!(published(&t3, ne, 13).reasons.len(), 3);
        let t4 = grid("-1..1", 4);
        assert_eq!(published(&t4, ne, 16).status, Status::Exists);
        assert_eq!(published(&t4, ne, 17).status, Status::Excluded);
        assert_eq!(published(&t4, ne, 18).status, Status::Open);
        assert_eq!(published(&t4, ne, 33).status, Status::Excluded);
        assert!(theorem_conflict(&t4, ne, 17, Verdict::Feasible).is_some());
        assert!(theorem_conflict(&t4, ne, 18, Verdict::Feasible).is_none());
        assert!(theorem_conflict(&t4, ne, 3, Verdict::Infeasible).is_some());
        assert!(theorem_conflict(&t4, ne, 3, Verdict::Unknown).is_none());
    }

    #[test]
    fn spectrum_published_statuses_of_topical_maps() {
        // Lemmens and Scheutzow (2005): topical periods on R^4 are at most
        // C(4,2) = 6; the middle layer gives 1..6 [derived]. Nothing is open,
        // and none of the nonexpansive theorems (2^n, n ≤ 3, primes) is cited.
        let t = MapClass::Topical;
        let b4 = grid("0..1", 4);
        for p in 1..=6 {
            assert_eq!(published(&b4, t, p).status, Status::Exists, "p = {p}");
        }
        for p in [7, 11, 16] {
            let pubd = published(&b4, t, p);
            assert_eq!(pubd.status, Status::Excluded, "p = {p}");
            assert_eq!(pubd.reasons.len(), 1);
            assert!(pubd.reasons[0].contains("C(4,2) = 6"), "{:?}", pubd.reasons);
        }
        // p = 7 is prime and ≤ 2^4 = 16: only the topical bound excludes it;
        // p = 13 is a nonexpansive period of {-1,0,1}^4 but not a topical one.
        let text = format!("{:?}", published(&b4, t, 13));
        assert!(!text.contains("prime") && !text.contains("2^"), "{text}");
        assert!(theorem_conflict(&b4, t, 7, Verdict::Feasible).is_some());
        assert!(theorem_conflict(&b4, t, 6, Verdict::Infeasible).is_some());
        assert!(theorem_conflict(&b4, t, 7, Verdict::Infeasible).is_none());
        // The fixed coordinate does not count: n' = 3, C(3,1) = 3.
        let flat = grid("0..2,1..1,0..2,0..2", 4);
        assert_eq!(published(&flat, t, 3).status, Status::Exists);
        assert_eq!(published(&flat, t, 4).status, Status::Excluded);
    }

    #[test]
    fn spectrum_middle_layer_gives_checked_topical_cycles_up_to_the_bound() {
        // Every p ≤ C(n', ⌊n'/2⌋) on boxes with unequal sides, one-point
        // sides and n' = 0..6: the orbit passes the topical check with t = 1
        // everywhere, and both extensions pass the topical map check.
        let t = MapClass::Topical;
        for (g, limit) in [
            (grid("0..1", 4), 6),
            (grid("0..1", 5), 10),
            (grid("0..1", 6), 20),
            (grid("-1..1", 3), 3),
            (grid("0..2,5..5,0..1", 3), 2),
            (grid("0..1,0..3,-2..0,7..7,1..2", 5), 6),
            (grid("0..3", 1), 1),
            (grid("7..7", 2), 1),
        ] {
            assert_eq!(construction_limit(&g, t), limit, "{g}");
            let q = |p| Question::new(g.clone(), p).unwrap().with_class(t);
            for p in 1..=limit as usize {
                let orbit = construct(&g, t, p).unwrap();
                assert_eq!(orbit.len(), p);
                let check = verify::check_topical_orbit(g.ranges(), &orbit)
                    .unwrap_or_else(|e| panic!("{g} p = {p}: {e}"));
                assert!(check.profile.iter().all(|&d| d == 1), "{g} p = {p}");
                if g.num_points() <= 64 {
                    assert!(map_check(&q(p), &orbit).unwrap().is_some());
                }
            }
            // The whole layer is used, and no more.
            assert_eq!(middle_layer(&g, limit as usize + 5).len(), limit as usize);
            assert!(construct(&g, t, limit as usize + 1).is_none());
            assert!(construct(&g, t, 0).is_none());
        }
        // The layer of {0,1}^4 in order: the 2-subsets 01, 02, 03, 12, 13, 23.
        assert_eq!(
            middle_layer(&grid("0..1", 4), 6),
            vec![
                vec![1, 1, 0, 0],
                vec![1, 0, 1, 0],
                vec![1, 0, 0, 1],
                vec![0, 1, 1, 0],
                vec![0, 1, 0, 1],
                vec![0, 0, 1, 1],
            ]
        );
        // A unit-cube cycle is not topical: (0,0) ≤ (1,0) gives t = 0.
        let cube = construct(&grid("0..1", 2), MapClass::Nonexpansive, 2).unwrap();
        assert!(verify::check_topical_orbit(grid("0..1", 2).ranges(), &cube).is_err());
    }

    #[test]
    fn spectrum_of_a_topical_square_without_store() {
        // {0,1,2}^2: C(2,1) = 2 (Lemmens and Scheutzow 2005); the default
        // periods are 1..3 and p = 3 is refuted with a checked proof.
        let mut cfg = SweepConfig::for_class(grid("0..2", 2), MapClass::Topical);
        assert_eq!(cfg.periods, vec![1, 2, 3]);
        cfg.jobs = 1;
        let s = run(&cfg).unwrap();
        assert_eq!(s.periods_with(Verdict::Feasible), vec![1, 2]);
        assert_eq!(s.periods_with(Verdict::Infeasible), vec![3]);
        assert_eq!(s.rows[1].how, How::Construction);
        assert_eq!(s.rows[2].answer.backing, Backing::CheckedProof);
        assert_eq!(
            s.rows[2].answer.options.formulation,
            crate::encode::Formulation::TopicalCycle
        );
        assert!(
            s.rows[1].certificate.contains("topical map"),
            "{}",
            s.rows[1].certificate
        );
        let table = s.to_table();
        assert!(
            table.contains("forming a periodic orbit of a topical map"),
            "{table}"
        );
        assert!(
            table.contains("topical-cycle/1") && table.contains("count off"),
            "{table}"
        );
        let md = s.to_markdown();
        assert!(md.contains("# Periods of topical maps"), "{md}");
        for absent in ["prime", "Lyons", "2^n", "max_k"] {
            assert!(!md.contains(absent), "{absent:?} in\n{md}");
        }
    }

    #[test]
    fn spectrum_of_the_square_without_store() {
        let mut cfg = SweepConfig::new(grid("-1..1", 2));
        cfg.jobs = 2;
        let s = run(&cfg).unwrap();
        assert_eq!(s.periods_with(Verdict::Feasible), vec![1, 2, 3, 4]);
        assert!(s.summary.all_decided);
        cfg.periods = vec![3, 5];
        let s = run(&cfg).unwrap();
        assert_eq!(s.periods_with(Verdict::Infeasible), vec![5]);
        assert_eq!(s.rows[1].how, How::Solver);
        assert!(
            s.rows[1].certificate.contains("not kept"),
            "{}",
            s.rows[1].certificate
        );
        assert!(s.to_markdown().contains("| 5 | infeasible | solver |"));
        assert!(s.to_csv().lines().count() == 3);
        cfg.periods = vec![10];
        assert!(
            run(&cfg)
                .unwrap_err()
                .to_string()
                .contains("exceeds the 9 points")
        );
        cfg.jobs = 0;
        assert!(run(&cfg).is_err());
    }
}
