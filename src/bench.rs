//! The benchmark: a fixed set of questions solved under several encodings in one run.
//!
//! Each case is solved with the default encoding, without the biclique-cover
//! clauses (`--no-bicliques`, the default before that family existed),
//! without them and the two-threshold profile clauses (`--no-nested
//! --no-bicliques`, the default before those), without any profile
//! exclusions (`--no-classes --no-nested --no-bicliques`), with `--symmetry none`
//! (redundant constraints kept) and with the plain reference encoding (no
//! symmetry breaking, no redundant constraints), each under a time limit; the
//! report prints time and conflicts per run and the ratios of the baselines to
//! the default. Every answer goes through the same checked pipeline as
//! `decide`, so a benchmark run is also a consistency check: a verdict that
//! differs between encodings is reported as an error.
//!
//! [`run_spectrum`] times the whole spectrum of `{−1,0,1}^4` (`p = 1..32`)
//! or `{−1,0,1}^5` (`p = 1..80`) the way `orbitcnf spectrum` runs it,
//! without a store or with a new one, against its target.

use std::time::Duration;

use serde::Serialize;

use crate::decide::decide;
use crate::encode::{DEFAULT_MAX_CLAUSES, EncodeOptions, Symmetry};
use crate::error::{Error, Result};
use crate::evidence::Evidence;
use crate::grid::Grid;
use crate::progress::ProgressMode;
use crate::question::Question;
use crate::report::Verdict;
use crate::solve::Limits;
use crate::solve::bundled::Bundled;
use crate::solve::certified::Certified;

/// One benchmark question.
#[derive(Clone, Debug)]
pub struct Case {
    /// Short name, e.g. `t4-p17`.
    pub name: String,
    /// The question.
    pub question: Question,
    /// The target for the default encoding, in seconds, when there is one.
    pub target_seconds: Option<f64>,
}

fn case(name: &str, spec: &str, dim: usize, p: usize, target: Option<f64>) -> Case {
    Case {
        name: name.to_string(),
        question: Question::new(Grid::parse(spec, Some(dim)).expect("valid grid"), p)
            .expect("valid question"),
        target_seconds: target,
    }
}

/// The fixed set. `quick` leaves out the cases that take minutes.
pub fn cases(quick: bool) -> Vec<Case> {
    let mut v = vec![
        case("t3-p8", "-1..1", 3, 8, Some(1.0)),
        case("t3-p9", "-1..1", 3, 9, Some(1.0)),
        case("t3-p10", "-1..1", 3, 10, Some(1.0)),
        case("t3-p11", "-1..1", 3, 11, Some(1.0)),
        case("t3-p12", "-1..1", 3, 12, Some(1.0)),
        case("q3-p9", "0..3", 3, 9, Some(1.0)),
        case("q2-p5", "0..3", 2, 5, Some(1.0)),
        case("t4-p16", "-1..1", 4, 16, Some(20.0)),
        case("t4-p17", "-1..1", 4, 17, Some(20.0)),
    ];
    if !quick {
        // Boxes beyond {−1,0,1}^4, where one profile class or one step of
        // the grid more makes the old default stall.
        v.push(case("q4-p17", "0..3", 4, 17, Some(60.0)));
        v.push(case("f5-p34", "-1..1", 5, 34, Some(60.0)));
        v.push(case("w4-p18", "-2..2", 4, 18, None));
        v.push(case("t4-p18", "-1..1", 4, 18, Some(60.0)));
        v.push(case("t4-p20", "-1..1", 4, 20, Some(60.0)));
        v.push(case("t4-p21", "-1..1", 4, 21, Some(60.0)));
        v.push(case("t4-p24", "-1..1", 4, 24, Some(60.0)));
    }
    v
}

/// One solve of one case under one encoding.
#[derive(Clone, Debug, Serialize)]
pub struct Run {
    /// The encoding's name: `default`, `no-bicliques`, `no-nested`, `no-classes`,
    /// `symmetry-none` or `plain`.
    pub encoding: String,
    /// The encoding resolves to the same options as the default on this
    /// question (so the formula is the same), and was not solved again: the
    /// figures are the default's.
    pub same_as_default: bool,
    /// The verdict.
    pub verdict: Verdict,
    /// Wall-clock seconds (encode and solve).
    pub seconds: f64,
    /// Conflicts.
    pub conflicts: Option<u64>,
    /// Clauses of the formula.
    pub clauses: u64,
}

/// All runs of one case.
#[derive(Clone, Debug, Serialize)]
pub struct Row {
    /// The case's name.
    pub name: String,
    /// The question in words.
    pub statement: String,
    /// The target for the default encoding.
    pub target_seconds: Option<f64>,
    /// The runs, default first.
    pub runs: Vec<Run>,
    /// For infeasible cases: the default encoding solved again with a
    /// checked LRAT proof.
    pub proof: Option<ProofCost>,
}

/// What certifying an infeasible answer costs.
#[derive(Clone, Debug, Serialize)]
pub struct ProofCost {
    /// Seconds to solve while writing the LRAT proof.
    pub solve_seconds: f64,
    /// Seconds for orbitcnf's checker to accept it.
    pub check_seconds: f64,
    /// Size of the LRAT proof (binary: the certified back-end writes a proof
    /// it does not keep in binary).
    pub lrat_bytes: u64,
    /// Steps of the proof.
    pub steps: u64,
}

/// The encodings compared: the default and five baselines (the default
/// without the biclique-cover clauses, without those and the two-threshold
/// profile clauses, without any profile exclusions, without symmetry
/// breaking, and plain). Each of the first three is the default of before
/// the family it leaves out, so `window-cliques` and `clique-orbits`,
/// newer than all of them, are off in each: their formulas (and the figures measured on them) are
/// those of before.
pub fn encodings() -> Vec<(&'static str, EncodeOptions)> {
    vec![
        ("default", EncodeOptions::default()),
        (
            "no-bicliques",
            EncodeOptions {
                bicliques: false,
                cliques: false,
                orbits: false,
                ..EncodeOptions::default()
            },
        ),
        (
            "no-nested",
            EncodeOptions {
                nested: false,
                bicliques: false,
                cliques: false,
                orbits: false,
                ..EncodeOptions::default()
            },
        ),
        (
            "no-classes",
            EncodeOptions {
                classes: false,
                nested: false,
                bicliques: false,
                cliques: false,
                orbits: false,
                ..EncodeOptions::default()
            },
        ),
        (
            "symmetry-none",
            EncodeOptions {
                symmetry: Symmetry::NONE,
                ..EncodeOptions::default()
            },
        ),
        ("plain", EncodeOptions::plain()),
    ]
}

/// The cases to run: all (or the quick ones), or those named in `only`
/// (comma-separated).
///
/// # Errors
/// [`crate::Error::Options`] naming an unknown case and listing the known ones.
pub fn select(quick: bool, only: Option<&str>) -> Result<Vec<Case>> {
    let mut chosen = cases(quick);
    if let Some(only) = only {
        let names: Vec<&str> = only.split(',').map(str::trim).collect();
        if let Some(bad) = names.iter().find(|n| !chosen.iter().any(|c| c.name == **n)) {
            let all: Vec<String> = cases(false).into_iter().map(|c| c.name).collect();
            return Err(crate::Error::Options(format!(
                "no benchmark case {bad:?}; cases are {}",
                all.join(", ")
            )));
        }
        chosen.retain(|c| names.contains(&c.name.as_str()));
    }
    Ok(chosen)
}

/// Runs `case` under every encoding of [`encodings`] (or only the default
/// when `baselines` is false), each within `limit`.
///
/// # Errors
/// Pipeline errors, and [`Error::Solver`] when two encodings give
/// contradicting verdicts.
pub fn run_case(case: &Case, limit: Duration, baselines: bool) -> Result<Row> {
    let mut runs: Vec<Run> = Vec::new();
    for (name, options) in encodings() {
        if !baselines && name != "default" {
            continue;
        }
        let same = |o: &EncodeOptions| o.resolve(&case.question);
        if name != "default" && same(&options) == same(&EncodeOptions::default()) {
            let mut copy = runs[0].clone();
            copy.encoding = name.to_string();
            copy.same_as_default = true;
            runs.push(copy);
            continue;
        }
        let limits = Limits {
            time: Some(limit),
            progress: ProgressMode::auto(),
            ..Limits::default()
        };
        let r = decide(
            &case.question,
            &options,
            &mut Bundled,
            &limits,
            DEFAULT_MAX_CLAUSES,
        )?;
        let run = Run {
            encoding: name.to_string(),
            same_as_default: false,
            verdict: r.verdict,
            seconds: r.stats.size.encode_seconds + r.stats.solve.seconds,
            conflicts: r.stats.solve.conflicts,
            clauses: r.stats.size.clauses,
        };
        if let Some(first) = runs.iter().find(|x| x.verdict != Verdict::Unknown)
            && run.verdict != Verdict::Unknown
            && run.verdict != first.verdict
        {
            return Err(Error::Solver {
                solver: "bench".into(),
                reason: format!(
                    "{}: encoding {} says {} but {} says {}",
                    case.name,
                    first.encoding,
                    first.verdict.word(),
                    run.encoding,
                    run.verdict.word()
                ),
            });
        }
        runs.push(run);
    }
    let mut proof = None;
    if runs[0].verdict == Verdict::Infeasible {
        let limits = Limits {
            time: Some(limit),
            progress: ProgressMode::auto(),
            ..Limits::default()
        };
        let mut backend = Certified::default();
        let r = decide(
            &case.question,
            &EncodeOptions::default(),
            &mut backend,
            &limits,
            DEFAULT_MAX_CLAUSES,
        )?;
        if let Evidence::CheckedProof(info) = &r.certificate {
            proof = Some(ProofCost {
                solve_seconds: r.stats.solve.seconds,
                check_seconds: info.check_seconds,
                lrat_bytes: info.lrat_bytes,
                steps: info.lrat.steps,
            });
        }
    }
    Ok(Row {
        name: case.name.clone(),
        statement: case.question.statement(),
        target_seconds: case.target_seconds,
        runs,
        proof,
    })
}

/// The table header of [`format_row`].
pub fn header() -> String {
    format!(
        "{:<8} {:<11} {:>9} {:>10} {:>7} | {:>9} {:>10} {:>8} | {:>9} {:>10} {:>8} | {:>9} {:>10} {:>8} | {:>9} {:>10} {:>8} | {:>9} {:>10} {:>8} | {:>9} {:>8} {:>10}",
        "case",
        "verdict",
        "default s",
        "conflicts",
        "target",
        "no-bicl",
        "conflicts",
        "ratio",
        "no-nest",
        "conflicts",
        "ratio",
        "no-class",
        "conflicts",
        "ratio",
        "sym-none",
        "conflicts",
        "ratio",
        "plain s",
        "conflicts",
        "ratio",
        "LRAT s",
        "check s",
        "MB"
    )
}

/// One line of the table: figures of each run and ratios of the baselines to the default.
/// A baseline that hit the limit shows `>limit` and a ratio of at least that much.
pub fn format_row(row: &Row) -> String {
    let d = &row.runs[0];
    let target = match row.target_seconds {
        Some(t) if d.verdict == Verdict::Unknown || d.seconds > t => format!("MISS {t}"),
        Some(t) => format!("ok {t}"),
        None => "-".into(),
    };
    let fmt_run = |r: &Run| {
        if r.same_as_default {
            return format!("{:>9} {:>10} {:>8}", "=default", "", "");
        }
        let secs = if r.verdict == Verdict::Unknown {
            format!(">{:.1}", r.seconds)
        } else {
            format!("{:.3}", r.seconds)
        };
        let ratio = if d.verdict == Verdict::Unknown {
            "-".to_string()
        } else {
            let x = r.seconds / d.seconds.max(1e-3);
            if r.verdict == Verdict::Unknown {
                format!(">{x:.0}x")
            } else {
                format!("{x:.1}x")
            }
        };
        format!(
            "{:>9} {:>10} {:>8}",
            secs,
            r.conflicts.map(|c| c.to_string()).unwrap_or_default(),
            ratio
        )
    };
    let mut line = format!(
        "{:<8} {:<11} {:>9} {:>10} {:>7}",
        row.name,
        d.verdict.word(),
        if d.verdict == Verdict::Unknown {
            format!(">{:.1}", d.seconds)
        } else {
            format!("{:.3}", d.seconds)
        },
        d.conflicts.map(|c| c.to_string()).unwrap_or_default(),
        target
    );
    for r in &row.runs[1..] {
        line.push_str(" | ");
        line.push_str(&fmt_run(r));
    }
    for _ in row.runs.len()..encodings().len() {
        line.push_str(&format!(" | {:>9} {:>10} {:>8}", "-", "-", "-"));
    }
    if let Some(p) = &row.proof {
        line.push_str(&format!(
            " | {:>9.3} {:>8.3} {:>10.2}",
            p.solve_seconds,
            p.check_seconds,
            p.lrat_bytes as f64 / 1e6
        ));
    }
    line
}

/// The wall-time target of the `{−1,0,1}^4` spectrum, in seconds.
pub const SPECTRUM_TARGET_SECONDS: f64 = 900.0;

/// The wall-time target of the `{−1,0,1}^5` spectrum on 2 cores, in
/// seconds (two hours).
pub const SPECTRUM5_TARGET_SECONDS: f64 = 7200.0;

/// The target of the timed spectrum of `{−1,0,1}^dim`.
///
/// # Errors
/// [`Error::Options`] for a dimension without a target (only 4 and 5 have one).
pub fn spectrum_target(dim: usize) -> Result<f64> {
    match dim {
        4 => Ok(SPECTRUM_TARGET_SECONDS),
        5 => Ok(SPECTRUM5_TARGET_SECONDS),
        _ => Err(Error::Options(format!(
            "the timed spectra are those of {{-1,0,1}}^4 and {{-1,0,1}}^5, not dimension {dim}"
        ))),
    }
}

/// How to run a timed spectrum.
#[derive(Clone, Debug)]
pub struct SpectrumBench {
    /// The dimension n of `{−1,0,1}^n` (4 or 5).
    pub dim: usize,
    /// Worker threads.
    pub jobs: usize,
    /// Time limit per period.
    pub limit: Duration,
    /// A results store for the sweep: hard periods with more than 20,000
    /// whole profiles are split inside it (the only way they can be
    /// decided); answers already in it are reused, and then the run is not
    /// a timing of them. `None`: no store.
    pub store: Option<std::path::PathBuf>,
    /// Cubes of hard periods that the bundled solver leaves open go to an
    /// external solver.
    pub handoff: Option<crate::split::jobs::CubeHandoff>,
}

/// The figures of one timed spectrum.
#[derive(Clone, Debug, Serialize)]
pub struct SpectrumFigures {
    /// The grid swept, as `{-1,0,1}^4`.
    pub grid: String,
    /// The periods swept.
    pub periods: String,
    /// Worker threads.
    pub jobs: usize,
    /// Wall-clock seconds for the whole sweep.
    pub seconds: f64,
    /// The target.
    pub target_seconds: f64,
    /// Periods answered by construction.
    pub by_construction: usize,
    /// Periods answered by the solver in one solve or in cubes in memory
    /// (each infeasible one with a checked LRAT proof).
    pub by_solver: usize,
    /// Periods answered by a merged split folder in the store.
    pub by_cubes: usize,
    /// Periods answered by §9 (a refuted divisor, or a sub-orbit).
    pub by_divisors: usize,
    /// Answers reused from the store (not timed by this run).
    pub reused: usize,
    /// Periods left unknown.
    pub unknown: usize,
    /// Periods answered "infeasible" without a checked certificate (must be 0).
    pub uncertified: usize,
    /// The slowest period decided by solving, and its seconds.
    pub slowest: Option<(usize, f64)>,
}

/// Sweeps `{−1,0,1}^n` over its default periods (`p = 1..32` for n = 4,
/// `p = 1..80` for n = 5: up to the Lemmens–Scheutzow bound) as `orbitcnf
/// spectrum` runs it, and reports the figures.
///
/// # Errors
/// [`Error::Options`] for a dimension without a target; pipeline errors of
/// the sweep.
pub fn run_spectrum(b: &SpectrumBench) -> Result<SpectrumFigures> {
    let target_seconds = spectrum_target(b.dim)?;
    let grid = Grid::parse("-1..1", Some(b.dim)).expect("valid grid");
    let shown = grid.to_string();
    let mut cfg = crate::spectrum::SweepConfig::new(grid);
    cfg.jobs = b.jobs.max(1);
    cfg.time_limit = Some(b.limit);
    cfg.progress = ProgressMode::auto();
    cfg.store = b.store.clone();
    if let Some(split) = cfg.split.as_mut() {
        split.handoff = b.handoff.clone();
    }
    let start = std::time::Instant::now();
    let sp = crate::spectrum::run(&cfg)?;
    let seconds = start.elapsed().as_secs_f64();
    let uncertified = sp
        .rows
        .iter()
        .filter(|r| {
            r.verdict == Verdict::Infeasible
                && !matches!(
                    r.answer.backing,
                    crate::store::Backing::CheckedProof
                        | crate::store::Backing::Divisor
                        | crate::store::Backing::CheckedCubes
                )
        })
        .count();
    let slowest = sp
        .rows
        .iter()
        .filter(|r| {
            !r.reused && matches!(r.how, crate::store::How::Solver | crate::store::How::Cubes)
        })
        .map(|r| (r.period, r.seconds))
        .max_by(|a, b| a.1.total_cmp(&b.1));
    Ok(SpectrumFigures {
        grid: shown,
        periods: crate::spectrum::ranges_words(&cfg.periods),
        jobs: cfg.jobs,
        seconds,
        target_seconds,
        by_construction: sp.summary.by_construction,
        by_solver: sp.summary.by_solver,
        by_cubes: sp.summary.by_cubes,
        by_divisors: sp.summary.by_divisors,
        reused: sp.summary.reused,
        unknown: sp.summary.unknown,
        uncertified,
        slowest,
    })
}

/// One line for [`SpectrumFigures`]: `ok` only when every period is
/// decided with a checked certificate, nothing was reused from a store,
/// and the wall time is within the target.
pub fn format_spectrum(f: &SpectrumFigures) -> String {
    let decided = f.by_construction + f.by_solver + f.by_cubes + f.by_divisors;
    let ok = f.unknown == 0 && f.uncertified == 0 && f.reused == 0 && f.seconds <= f.target_seconds;
    format!(
        "spectrum {} p = {}, {} job(s): {:.1} s wall ({} {} s); {} decided ({} by construction, \
         {} by the solver with checked proofs, {} in split folders, {} by §9), {} unknown, \
         {} uncertified{}{}",
        f.grid,
        f.periods,
        f.jobs,
        f.seconds,
        if ok { "ok" } else { "MISS" },
        f.target_seconds,
        decided,
        f.by_construction,
        f.by_solver,
        f.by_cubes,
        f.by_divisors,
        f.unknown,
        f.uncertified,
        match f.reused {
            0 => String::new(),
            n => format!("; {n} reused from the store, so not a timing of the whole spectrum"),
        },
        f.slowest
            .map(|(p, s)| format!("; slowest p = {p} in {s:.1} s"))
            .unwrap_or_default()
    )
}
