//! `orbitcnf spectrum`: every period of a box, decided, certified and stored.
//!
//! # Design
//!
//! A sweep ([`run`]) takes a box `D`, a map class ([`MapClass`]) and a set of
//! periods and answers each period in one of four ways, cheapest first. The
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
//! The four ways:
//!
//! 1. **From the results store** ([`crate::store`]): a decided answer stored
//!    under the same key (question, resolved encoding options, formulation)
//!    is reused after a cheap check (the orbit, and the map where one was
//!    checked, are checked again; the proof file must be present with its
//!    recorded size), or a full one with [`SweepConfig::recheck`]; each row
//!    says when its evidence was checked ([`Checked`]). An answer that fails
//!    the check, and a file of the store that is not an answer at all, is
//!    set aside with a warning ([`crate::store::Store::set_aside`], listed in
//!    [`Spectrum::set_aside`]) and its period decided as if it were not
//!    stored. A stored
//!    *unknown* is reused unless this run's limits are larger
//!    ([`crate::store::RunLimits::exceeds`]): a longer `--time-limit` (or none),
//!    or a larger `--max-clauses`. Then it is retried.
//! 2. **By construction** ([`construct`](crate::theory::construct)), for `p` up to
//!    [`construction_limit`](crate::theory::construction_limit). Nonexpansive, `p ≤ 2^n'`: the points of the
//!    unit cube `Π_c {a_c, a_c + 1}` (over the coordinates of side ≥ 1, the
//!    others fixed at `a_c`) are pairwise at distance exactly 1, so any `p` of
//!    them in any order are an isometric `p`-cycle ([`unit_cube`](crate::theory::unit_cube)). Topical,
//!    `p ≤ C(n', ⌊n'/2⌋)`: points of the middle layer of that cube
//!    ([`middle_layer`](crate::theory::middle_layer)). The orbit is checked with the class's check
//!    ([`crate::evidence::check_orbit`]), and on boxes of at most
//!    [`MAP_CHECK_POINTS`] points the class's extension is built and checked
//!    by exhaustion ([`crate::verify::extend`] and [`crate::verify::check_map`];
//!    [`crate::verify::extend_topical`] and [`crate::verify::check_topical_map`]). No
//!    solver runs.
//! 3. **By the solver**: [`crate::decide::decide`] (hard periods in cubes, below) with the [`Certified`](crate::solve::certified::Certified) back-end, so
//!    a feasible answer carries a checked orbit and an infeasible one an LRAT
//!    proof accepted by orbitcnf's own checker; with a store the proof is kept
//!    in `proofs/` and its SHA-256 recorded. A formula over `--max-clauses`
//!    is an unknown answer (no answer within the limits), not an error.
//!
//! 4. **By the divisor rule** (docs/math.md §9, unless
//!    [`SweepConfig::divisors`] is off): a period that is a multiple of a
//!    period refuted with a checked proof is infeasible, and a divisor `d`
//!    of a feasible `q` is feasible with every `(q/d)`-th point of `q`'s
//!    orbit (and `f^(q/d)` on a point set) as its witness, checked as any
//!    witness (see `divisors.rs`). Before solving, every solver period the
//!    stored and constructed answers settle this way is answered so; while
//!    solving, every answer settles the periods not yet started, and a
//!    worker that comes to a settled period skips it (a period already
//!    running is finished, and must agree).
//!
//! Solver periods go, in increasing order, to a [`crate::pool`] of
//! [`SweepConfig::jobs`] worker threads. The workers only compute; the
//! calling thread receives every answer, checks it against the published
//! theorems ([`crate::theory::theorem_conflict`]), writes it to the store at once
//! and reports progress ([`SweepConfig::progress`]: a redrawn line, or a log
//! line for every decided period and at intervals). An answer that
//! contradicts a stored one or a theorem stops the sweep: no new period is
//! started, the running ones are finished (and stored), and the error is
//! returned.
//!
//! # Hard periods: a probe, then cubes
//!
//! With [`SweepConfig::split`] (the default), each solver period first gets
//! one ordinary solve of at most [`SweepSplit::probe`] (the *probe*, as in
//! `decide`, [`crate::split::auto`]). A period the probe leaves unknown,
//! while the time limit leaves time, is *hard*: it is set aside until every
//! other period is answered, and the hard periods are then decided one
//! after another, in increasing order, each by
//! [`crate::split::auto::decide_auto`] without a second probe: one cube per
//! whole profile on all [`SweepConfig::jobs`] threads, every cube's proof
//! checked and lifted, one assembled proof of the whole CNF checked and
//! stored like any other. A period with more whole profiles than
//! [`SweepSplit::store_split_above`] (20,000 by default) is, in a sweep with
//! a store, split into a folder of the store instead and solved there in
//! blocks, each cube's proof kept on its own and the folder merged at the
//! end: the campaign of `split`, `run-cube all --jobs N` and `merge
//! --store`, resumable across runs (`store_split.rs`). Without a store such
//! a period gets one solve with the time left. Hardness is measured, not guessed: it is what the probe did
//! not answer. The probe's work is dropped, so the switch cannot change a
//! verdict; its time counts against the time limit. The answer records
//! what was done ([`Answer::strategy`]), and its row says so. Each hard
//! answer settles by §9 the hard periods after it before they start.
//! Cubes the bundled solver leaves open can go to an external solver
//! ([`SweepSplit::handoff`]).
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
//! [`Spectrum`] renders (in `render.rs`) as a table ([`Spectrum::to_table`]),
//! one JSON object ([`Spectrum::to_json`]), CSV ([`Spectrum::to_csv`]) and a
//! Markdown page that sets the published bounds ([`crate::theory::statements`])
//! beside the computed answers ([`Spectrum::to_markdown`]).
//!
//! # Files
//!
//! `mod.rs` the configuration and the result types; `sweep.rs` the sweep
//! ([`run`]); `answer.rs` one period's answer (construction or solver),
//! and the answer of a merged split folder ([`record_merge`]);
//! `divisors.rs` answers by the divisor rule (docs/math.md §9);
//! `render.rs` the reports.

mod answer;
mod divisors;
mod render;
mod store_split;
mod sweep;

use std::path::PathBuf;
use std::time::Duration;

use serde::Serialize;

use crate::encode::{DEFAULT_MAX_CLAUSES, EncodeOptions};
use crate::error::{Error, Result};
use crate::grid::{Grid, Point};
use crate::points::PointSet;
use crate::pool;
use crate::progress::ProgressMode;
use crate::question::MapClass;
use crate::report::Verdict;
use crate::store::{Answer, Backing, How, SetAside};
use crate::theory::{Published, period_bound, published_for};

pub use answer::{Recorded, record_merge};
pub use render::{certificate_words, ranges_words};
pub use sweep::run;

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
    /// How progress is shown on stderr ([`crate::progress`]).
    pub progress: ProgressMode,
    /// Fully re-check reused stored answers (proofs re-checked by the LRAT
    /// checker against a fresh encoding) instead of the quick check.
    pub recheck: bool,
    /// Decide periods by the divisor rule (docs/math.md §9) where another
    /// period's answer gives them: a multiple of a refuted period is
    /// infeasible, a divisor of a feasible one feasible (the module
    /// documentation says how).
    pub divisors: bool,
    /// Switch hard periods to cubes after a probe (the module
    /// documentation says how); `None` decides every period by one solve.
    pub split: Option<SweepSplit>,
}

/// How a sweep decides its hard periods (see the module documentation).
#[derive(Clone, Debug, PartialEq)]
pub struct SweepSplit {
    /// The probe: one ordinary solve of at most this long per period.
    pub probe: Duration,
    /// Cubes the bundled solver leaves open this long go to an external
    /// solver, whose proof is checked and lifted like the bundled solver's.
    pub handoff: Option<crate::split::jobs::CubeHandoff>,
    /// A hard period with more whole profiles than this, in a sweep with a
    /// store, is decided as a split folder inside the store (resumable, see
    /// `store_split.rs`) instead of in memory with one assembled proof.
    pub store_split_above: usize,
    /// About how many cubes such a split has ([`crate::split::cubes`]).
    pub store_split_cubes: usize,
}

/// The default of [`SweepSplit::store_split_cubes`]: the size of the
/// campaigns that settled {−2,…,2}^4, p = 30 (1,000,001 prefix cubes, about
/// 75 minutes on two cores) and {−1,0,1}^5, p = 52 (86,870 whole profiles).
/// The split takes about a minute and 1.3 GB to write at this size. The
/// same as `decide --split-dir`'s ([`crate::split::campaign::CAMPAIGN_CUBES`]).
pub const STORE_SPLIT_CUBES: usize = crate::split::campaign::CAMPAIGN_CUBES;

impl Default for SweepSplit {
    /// The probe of `decide` ([`crate::split::auto::DEFAULT_PROBE`]), no
    /// hand-off, splits in the store above `decide`'s cap of whole profiles
    /// ([`crate::split::auto::FULL_PROFILE_CAP`]) with
    /// [`STORE_SPLIT_CUBES`] cubes.
    fn default() -> SweepSplit {
        SweepSplit {
            probe: crate::split::auto::DEFAULT_PROBE,
            handoff: None,
            store_split_above: crate::split::auto::FULL_PROFILE_CAP,
            store_split_cubes: STORE_SPLIT_CUBES,
        }
    }
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
            jobs: pool::default_jobs(),
            time_limit: None,
            max_clauses: DEFAULT_MAX_CLAUSES,
            store: None,
            progress: ProgressMode::Off,
            recheck: false,
            divisors: true,
            split: Some(SweepSplit::default()),
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
/// [`Error::Question`] quoting the whole list and naming the bad part, a
/// period 0, a reversed range, or more than [`MAX_PERIODS`] periods.
pub fn parse_periods(text: &str) -> Result<Vec<usize>> {
    let bad = |why: String| Error::Question(format!("the period list {text:?}: {why}"));
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

/// When the evidence behind a row's verdict was checked.
#[derive(Clone, Debug, PartialEq, Eq, Serialize)]
#[serde(tag = "when", rename_all = "kebab-case")]
pub enum Checked {
    /// By this run, which computed the answer.
    ThisRun,
    /// Reused from the store and checked again by this run: a feasible
    /// answer's orbit and map on every reuse, an infeasible answer's proof
    /// with [`SweepConfig::recheck`].
    Rechecked,
    /// Reused from the store without checking the proof again (only that
    /// its file is there, with its recorded size): it was checked by the
    /// run that computed the answer.
    Earlier {
        /// That run.
        run_id: String,
        /// When it finished (UTC, RFC 3339).
        finished_at: String,
    },
    /// Nothing was checked: an unknown answer, or a solver's claim.
    Never,
}

impl Checked {
    /// `now` for an answer whose evidence is checkable (an orbit or a
    /// proof), [`Checked::Never`] for any other.
    fn of(a: &Answer, now: Checked) -> Checked {
        match a.backing {
            Backing::CheckedOrbit
            | Backing::CheckedProof
            | Backing::CheckedCubes
            | Backing::Divisor => now,
            Backing::SolverClaim | Backing::None => Checked::Never,
        }
    }

    /// [`Checked::Earlier`], by the run that computed `a`.
    fn earlier(a: &Answer) -> Checked {
        Checked::Earlier {
            run_id: a.run_id.clone(),
            finished_at: a.finished_at.clone(),
        }
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
    /// When its evidence was checked.
    pub checked: Checked,
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
    fn new(grid: &Grid, answer: Answer, reused: bool, checked: Checked) -> Row {
        let checked = Checked::of(&answer, checked);
        Row {
            period: answer.question.period,
            verdict: answer.verdict,
            how: answer.how,
            reused,
            seconds: answer.stats.seconds,
            certificate: certificate_words(&answer, &checked),
            checked,
            published: published_for(&answer.question, grid),
            answer,
        }
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
    /// Answers read off another period's by the divisor rule (docs/math.md
    /// §9; this run or stored).
    pub by_divisors: usize,
    /// Answers of merged split folders, recorded by `merge` (always stored).
    pub by_cubes: usize,
    /// Answers reused from the store.
    pub reused: usize,
    /// Reused infeasible answers whose proof this run did not check again
    /// ([`Checked::Earlier`]).
    pub proofs_not_rechecked: usize,
    /// Whether every period was decided.
    pub all_decided: bool,
}

impl Summary {
    /// The counts of `rows`.
    fn of(rows: &[Row]) -> Summary {
        let count = |f: &dyn Fn(&Row) -> bool| rows.iter().filter(|r| f(r)).count();
        Summary {
            feasible: count(&|r| r.verdict == Verdict::Feasible),
            infeasible: count(&|r| r.verdict == Verdict::Infeasible),
            unknown: count(&|r| r.verdict == Verdict::Unknown),
            by_construction: count(&|r| r.how == How::Construction),
            by_solver: count(&|r| r.how == How::Solver),
            by_divisors: count(&|r| r.how == How::Divisor),
            by_cubes: count(&|r| r.how == How::Cubes),
            reused: count(&|r| r.reused),
            proofs_not_rechecked: count(&|r| {
                r.verdict == Verdict::Infeasible && matches!(r.checked, Checked::Earlier { .. })
            }),
            all_decided: rows.iter().all(|r| r.verdict != Verdict::Unknown),
        }
    }
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
    /// The question answered for every period, in words ([`crate::question::statement`]
    /// with the period written `p`).
    pub question: String,
    /// Coordinates with more than one value: the dimension that counts for the bounds.
    pub effective_dim: usize,
    /// The class's [`construction_limit`](crate::theory::construction_limit): `2^n'`, or `C(n', ⌊n'/2⌋)` for topical maps.
    pub construction_limit: u64,
    /// The class's Lemmens–Scheutzow bound ([`period_bound`]):
    /// `max_k 2^k·C(n',k)`, or `C(n', ⌊n'/2⌋)` for topical maps.
    pub lemmens_scheutzow_bound: u64,
    /// The periods swept.
    pub periods: Vec<usize>,
    /// The encoding options as given, with what the class and the kind of
    /// domain switch off whatever the period
    /// ([`EncodeOptions::for_domain`]): the formulation that ran, as every
    /// report names it. Each row's answer has the options resolved in full.
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
    /// Files of the store this run could not use and moved aside (their
    /// periods were decided again).
    pub set_aside: Vec<SetAside>,
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
}

#[cfg(test)]
mod tests {
    use super::*;

    fn grid(spec: &str, dim: usize) -> Grid {
        Grid::parse(spec, Some(dim)).unwrap()
    }

    #[test]
    fn spectrum_periods_parse_and_default() {
        assert_eq!(parse_periods("1..4").unwrap(), vec![1, 2, 3, 4]);
        assert_eq!(parse_periods("9, 3,5..=6,5").unwrap(), vec![3, 5, 6, 9]);
        for bad in ["", "0..3", "4..2", "x", "1..", "1,,2", "1..100000"] {
            // The error quotes the list and names no command-line flag.
            let e = parse_periods(bad).expect_err(bad).to_string();
            assert!(e.contains(&format!("the period list {bad:?}")), "{e}");
            assert!(!e.contains("--"), "{e}");
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
}
