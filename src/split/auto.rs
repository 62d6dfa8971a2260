//! `decide` on its own: a probe, then cubes on threads when the probe gives
//! no answer.
//!
//! Most questions are answered by one solve in well under a second, and a
//! split costs more than it saves there (the coverage check, one solver per
//! cube, a proof per cube to lift and assemble). Hard questions are the
//! other way round: `{0,1,2,3}^4, p = 17` had no answer after 300 s of one
//! solve, while 833 of its 834 full-profile cubes were refuted in 86 s on two
//! threads (measured before the `pack-nested` exclusions, with which one
//! solve takes 16 s). So [`decide_auto`] first runs the ordinary solve within a
//! budget (the *probe*: [`AutoOptions::probe`] seconds, or a conflict
//! budget); when that answers, the report is exactly that of the ordinary
//! solve. Only questions with at most [`FULL_PROFILE_CAP`] whole profiles
//! (or in the full-map formulation) are split: on `{−1,0,1}^5, p = 33`
//! (more profiles than the cap) 1024 breadth-first cubes took 10.7 M
//! conflicts for 807 cubes in 360 s, where one solve refutes the question
//! with 297,684, so above the cap `decide` makes one solve of the whole
//! time limit, with the ordinary report (`spectrum` with a store instead
//! splits such a period into a folder of the store and runs it there,
//! `spectrum/store_split.rs`). When it does not, and time remains, the question is split into
//! cubes ([`choose_cubes`]) and solved on [`AutoOptions::jobs`] threads by
//! [`super::jobs::solve_cubes`], certified in the same way as
//! `decide --jobs`: every cube's proof checked and lifted, the coverage
//! proof checked, one assembled LRAT proof of the whole CNF checked. The
//! report then carries a [`Strategy`] saying what was done.
//!
//! Nothing of the probe's work is reused by the cubes: the probe's answer,
//! when there is none, is simply dropped, so the switch cannot affect a
//! verdict; only the time it took counts against the time limit.
//!
//! # Which cubes
//!
//! [`choose_cubes`] takes one cube per whole profile `g(1..K)` that the
//! multiplier lex-leader clauses leave (rule `full-profile`) when there are
//! at most [`FULL_PROFILE_CAP`] of them: such cubes are as small as the
//! profile allows, so one hard profile stays one hard cube instead of
//! holding up a prefix of many easy ones, and they do not depend on the
//! number of threads, so `split --cubes auto` writes the same cubes for a
//! cluster. Above the cap (long profiles, as on `{−1,0,1}^5`), prefixes are
//! refined breadth-first to [`BREADTH_FIRST_TARGET`] cubes (rule
//! `breadth-first`, [`super::profile_cubes`]), which bounds the per-cube
//! cost (one load of the formula, one proof check and lift per cube); only
//! `split --cubes auto` uses these, for clusters with many more cores. In the
//! full-map formulation the cubes are the start points (rule `start-point`,
//! [`super::start_cubes`]).

use std::path::PathBuf;
use std::sync::atomic::Ordering;
use std::time::{Duration, Instant};

use super::jobs::{CubesRun, JobsOptions, solve_cubes};
use super::{Cube, prefix_survives, profile_cubes, start_cubes};
use crate::decide::decide_encoded;
use crate::encode::{EncodeOptions, Encoding, Formulation, encode, profile_len, symmetry};
use crate::error::{Error, Result};
use crate::progress::Progress;
use crate::proof::LratFormat;
use crate::question::Question;
use crate::report::{Report, Strategy, Verdict};
use crate::solve::certified::Certified;
use crate::solve::{Backend, Limits};

/// At most this many full-profile cubes; above it, breadth-first prefixes.
/// Measured on 2026-12-03: the 8,098 whole-profile cubes of {0,1,2,3}^4,
/// p = 24 took 34 minutes on two cores as separate `run-cube` processes
/// (4,000 s in all, 0.5 s a cube on average, the longest 244 s), where one
/// solve had no answer after 1,200 s; with the cap at 4096 `decide` made
/// that one solve.
pub const FULL_PROFILE_CAP: usize = 20_000;

/// The cube count that breadth-first refinement aims for above the cap.
pub const BREADTH_FIRST_TARGET: usize = 1024;

/// The default probe: this many seconds of one ordinary solve. Measured on
/// 2026-12-03: {0,1,2,3}^4 with p = 17 takes one solve 16 to 26 s (loaded
/// machine) and 242 s when a 15 s probe stops just before the answer and
/// the 834 profile cubes follow; a probe of a minute keeps such questions
/// in one solve and costs little on those that need cubes.
pub const DEFAULT_PROBE: Duration = Duration::from_secs(60);

/// How many cubes to make.
#[derive(Clone, Copy, Debug, PartialEq, Eq)]
pub enum CubeTarget {
    /// About this many ([`super::cubes`]).
    Count(usize),
    /// As the automatic strategy chooses them ([`choose_cubes`]).
    Auto,
}

/// How [`decide_auto`] runs.
#[derive(Clone, Debug)]
pub struct AutoOptions {
    /// Produce and check proofs (the default), or take the solver's word.
    pub certify: bool,
    /// Threads for the cubes, at least 1.
    pub jobs: usize,
    /// The probe's time budget. Zero, with no conflict budget, is no
    /// probe: the cubes start at once (for a caller that has probed).
    pub probe: Duration,
    /// The probe's conflict budget (reproducible, unlike time), if any.
    pub probe_conflicts: Option<u64>,
    /// Where to write the LRAT proof of an infeasible answer.
    pub lrat: Option<PathBuf>,
    /// The encoding of the proof written to `lrat`.
    pub format: LratFormat,
    /// Cubes the bundled solver leaves open go to an external solver
    /// ([`super::jobs::CubeHandoff`]); the probe is the bundled solver's.
    pub handoff: Option<super::jobs::CubeHandoff>,
}

/// Cubes and the rule that chose them.
#[derive(Clone, Debug)]
pub struct CubeChoice {
    /// The cubes, in index order.
    pub cubes: Vec<Cube>,
    /// `full-profile`, `breadth-first` or `start-point` (see the module docs).
    pub rule: &'static str,
}

/// Steps [`full_profile_count`] may take, counting each prefix visited and
/// each exclusion clause tested on it: seconds, not minutes. Measured on
/// 2026-12-04 (release build, both cores busy with other work; the ignored
/// test `profile_walk_work_and_time` prints these): {−1,0,1}^5, p = 34
/// takes 18 M steps (0.25 s) for its 1,783 whole profiles; {−2,…,2}^4,
/// p = 25 takes 412 M (4.5 s) for 4,383; {−2,…,2}^4, p = 24 passes the cap
/// after 452 M (8.0 s); {0,1,2,3}^3, p = 36 would need 9.0 G (290 s), where
/// nearly every profile is excluded, so it stops at this limit. Since the
/// exclusion index keeps its clauses in flat lists (2026-12-05, same
/// steps, loaded machine): 0.07 s, 1.35 s, 2.1 s and 47 s for those four,
/// so the limit costs at most about 5 s; {−1,0,1}^5, p = 40 takes 177 M
/// steps (0.6 s) for 8,084 whole profiles, p = 42 632 M (2.6 s) for
/// 15,040, p = 44 563 M for 13,903 and p = 46 849 M for 17,661. Those
/// three are refuted as whole-profile cubes and hopeless in one solve
/// (README: p = 42 was refuted in 15,040 cubes; p = 34 had no answer from
/// one solve in 300 s), which is why the limit went from 500 M to 10^9 on
/// 2026-12-05: `split --cubes auto` and `decide` now take their whole
/// profiles instead of 1,024 breadth-first prefixes or one solve.
pub const WALK_WORK: u64 = 1_000_000_000;

/// Steps between two reports of the walk's progress.
const REPORT_EVERY: u64 = 1 << 20;

/// The number of whole profiles `g(1..K)` that no multiplier map rules out
/// ([`prefix_survives`]) and no profile-exclusion clause excludes (tested
/// on each prefix as soon as it decides the clause, [`super::ExclusionIndex`]),
/// or `None` when there are more than `cap` or the walk does more than
/// [`WALK_WORK`] steps (where nearly every profile is excluded, the walk
/// could otherwise take minutes before the first solve). The
/// walk is depth-first and stops as soon as the count passes `cap`; a
/// prefix that is ruled out is not extended, since every extension of it is
/// ruled out too.
pub fn full_profile_count(enc: &Encoding, cap: usize) -> Option<usize> {
    profile_walk(enc, cap, WALK_WORK).0
}

/// [`full_profile_count`] with the work limit `limit`, and the steps the
/// walk took (to the point where it stopped).
fn profile_walk(enc: &Encoding, cap: usize, limit: u64) -> (Option<usize>, u64) {
    let q = &enc.question;
    let k_max = profile_len(q);
    let l = q.grid.diameter() as i64;
    let maps = if enc.options.symmetry.multiplier {
        symmetry::multiplier_maps_for(q)
    } else {
        Vec::new()
    };
    let excluded = super::ExclusionIndex::new(super::profile_exclusions(enc));
    struct Walk<'a> {
        k_max: usize,
        l: i64,
        maps: &'a [Vec<usize>],
        excluded: &'a super::ExclusionIndex,
        cap: usize,
        limit: u64,
        // When to tell the progress reports next (`nodes` at that point).
        next_report: std::cell::Cell<u64>,
    }
    fn walk(prefix: &mut Vec<i64>, w: &Walk, count: &mut usize, nodes: &mut u64) -> bool {
        let (k_max, l, maps) = (w.k_max, w.l, w.maps);
        if prefix.len() == k_max {
            // Every exclusion was tested on the way down.
            *count += 1;
            return *count <= w.cap;
        }
        for v in 1..=l {
            prefix.push(v);
            *nodes += 1;
            if *nodes >= w.next_report.get() {
                crate::progress::step_done(*nodes);
                w.next_report.set(*nodes + REPORT_EVERY);
            }
            let ok = *nodes <= w.limit
                && (!prefix_survives(prefix, maps, k_max)
                    || {
                        let (falsified, tested) = w.excluded.test_at_end(prefix);
                        *nodes += tested;
                        falsified
                    }
                    || walk(prefix, w, count, nodes));
            prefix.pop();
            if !ok {
                return false;
            }
        }
        true
    }
    let mut count = 0;
    let w = Walk {
        k_max,
        l,
        maps: &maps,
        excluded: &excluded,
        cap,
        limit,
        next_report: std::cell::Cell::new(REPORT_EVERY),
    };
    let mut nodes = 0;
    let _step = crate::progress::begin_step("walk of the whole profiles", limit);
    let done = walk(&mut Vec::new(), &w, &mut count, &mut nodes);
    (done.then_some(count), nodes)
}

/// The cubes of the automatic strategy (see the module docs).
///
/// # Errors
/// As [`profile_cubes`] and [`start_cubes`].
pub fn choose_cubes(enc: &Encoding) -> Result<CubeChoice> {
    if enc.options.formulation == Formulation::FullMap {
        return Ok(CubeChoice {
            cubes: start_cubes(enc, 2)?,
            rule: "start-point",
        });
    }
    choose_counted(enc, full_profile_count(enc, FULL_PROFILE_CAP))
}

/// [`choose_cubes`] for a profile question whose count of whole profiles
/// ([`full_profile_count`] with [`FULL_PROFILE_CAP`]) is known: a caller
/// that has counted them does not walk them again.
fn choose_counted(enc: &Encoding, count: Option<usize>) -> Result<CubeChoice> {
    Ok(match count {
        Some(_) => CubeChoice {
            // A target no prefix list reaches refines every prefix to a whole profile.
            cubes: profile_cubes(enc, usize::MAX)?,
            rule: "full-profile",
        },
        None => CubeChoice {
            cubes: profile_cubes(enc, BREADTH_FIRST_TARGET)?,
            rule: "breadth-first",
        },
    })
}

/// Decides `q` by a probe and, when it gives no answer, by cubes on
/// threads (see the module docs).
///
/// # Errors
/// [`Error::Options`] for no threads; as [`crate::decide::decide`] and
/// [`super::jobs::decide_parallel`].
pub fn decide_auto(
    q: &Question,
    options: &EncodeOptions,
    opts: &AutoOptions,
    limits: &Limits,
    max_clauses: u64,
) -> Result<Report> {
    if opts.jobs == 0 {
        return Err(Error::Options(
            "a run in cubes needs at least one thread".into(),
        ));
    }
    let t0 = Instant::now();
    let enc = encode(q, options, max_clauses)?;
    let encode_seconds = t0.elapsed().as_secs_f64();
    decide_auto_encoded(q, options, &enc, encode_seconds, opts, limits)
}

/// [`decide_auto`] with `enc`, the encoding of `q` under `options` that the
/// caller has made already, in `encode_seconds`.
///
/// # Errors
/// As [`decide_auto`].
pub fn decide_auto_encoded(
    q: &Question,
    options: &EncodeOptions,
    enc: &Encoding,
    encode_seconds: f64,
    opts: &AutoOptions,
    limits: &Limits,
) -> Result<Report> {
    if opts.jobs == 0 {
        return Err(Error::Options(
            "a run in cubes needs at least one thread".into(),
        ));
    }
    let start = Instant::now();
    // A caller's counter (a sweep's progress line) sees the probe's and the
    // cubes' conflicts.
    let conflicts = limits.conflicts.clone().unwrap_or_default();
    let probe_time = match limits.time {
        Some(t) => t.min(opts.probe),
        None => opts.probe,
    };
    let probe_limits = Limits {
        time: Some(probe_time),
        conflicts: Some(conflicts.clone()),
        max_conflicts: opts.probe_conflicts,
        ..limits.clone()
    };
    let mut backend = Certified::or_bundled(opts.certify, opts.lrat.clone(), opts.format);
    let backend: &mut dyn Backend = backend.as_mut();
    // Breadth-first prefixes were measured to cost far more than one solve
    // ({−1,0,1}^5, p = 33: 10.7 M conflicts over 807 of 1024 cubes in 360 s,
    // against 297,684 conflicts for the whole question in one solve), so
    // above the cap the question gets one solve with all the time there is.
    let full_map = enc.options.formulation == Formulation::FullMap;
    let count = if full_map {
        None
    } else {
        full_profile_count(enc, FULL_PROFILE_CAP)
    };
    let whole_profiles = full_map || count.is_some();
    if count == Some(0) {
        // The profile exclusions leave no profile at all: the formula's
        // profile clauses alone are contradictory, which one solve finds at
        // once, and there is nothing to split.
        Progress::new(limits.progress).event(|| {
            "decide: no lex-leader profile survives the profile exclusions; one solve, no cubes"
                .to_string()
        });
        let limits = Limits {
            conflicts: Some(conflicts),
            ..limits.clone()
        };
        return decide_encoded(q, options, enc, encode_seconds, backend, &limits);
    }
    if !whole_profiles {
        Progress::new(limits.progress).event(|| {
            format!(
                "decide: more than {FULL_PROFILE_CAP} lex-leader profiles; one solve, no switch to \
                 cubes (a sweep with a store, or a split folder, decides p = {} in resumable \
                 cubes instead)",
                q.period
            )
        });
        let limits = Limits {
            conflicts: Some(conflicts),
            ..limits.clone()
        };
        return decide_encoded(q, options, enc, encode_seconds, backend, &limits);
    }
    // A zero budget is no probe: the caller has probed already (`spectrum`).
    let why = if opts.probe.is_zero() && opts.probe_conflicts.is_none() {
        None
    } else {
        let probe = decide_encoded(q, options, enc, encode_seconds, backend, &probe_limits)?;
        // The probe's answer stands when there is one, and so does its
        // unknown when the probe was given all the time there is.
        let no_time_left = limits
            .time
            .is_some_and(|t| t <= opts.probe || start.elapsed() >= t);
        if probe.verdict != Verdict::Unknown || no_time_left {
            return Ok(probe);
        }
        Some(probe.reason.unwrap_or_else(|| "no answer".into()))
    };
    let probe_seconds = start.elapsed().as_secs_f64();
    let probe_conflicts = conflicts.load(Ordering::Relaxed);
    // The count above is the one `choose_cubes` would make again.
    let choice = if full_map {
        choose_cubes(enc)?
    } else {
        choose_counted(enc, count)?
    };
    let threads = opts.jobs.min(choice.cubes.len().max(1));
    let strategy = Strategy {
        probe_budget_seconds: opts.probe.as_secs_f64(),
        probe_budget_conflicts: opts.probe_conflicts,
        probe_seconds,
        probe_conflicts,
        cubes: choice.cubes.len(),
        cube_rule: choice.rule.into(),
        threads,
    };
    Progress::new(limits.progress).event(|| {
        format!(
            "decide: {}switching to {} {} cubes on {}",
            why.as_ref()
                .map(|w| format!("the probe gave no answer ({w}); "))
                .unwrap_or_default(),
            strategy.cubes,
            strategy.cube_rule,
            crate::progress::threads_words(threads)
        )
    });
    let run = CubesRun {
        enc,
        encode_seconds,
        cubes: &choice.cubes,
        start,
        conflicts,
    };
    let jobs = JobsOptions {
        jobs: threads,
        cubes: choice.cubes.len(),
        certify: opts.certify,
        lrat: opts.lrat.clone(),
        format: opts.format,
        handoff: opts.handoff.clone(),
    };
    let mut report = solve_cubes(q, &run, &jobs, limits)?;
    report.strategy = Some(strategy);
    Ok(report)
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::grid::Grid;

    fn enc(spec: &str, dim: usize, p: usize) -> Encoding {
        let q = Question::new(Grid::parse(spec, Some(dim)).unwrap(), p).unwrap();
        encode(&q, &EncodeOptions::default(), u64::MAX).unwrap()
    }

    /// Brute force: every vector of {1..L}^K that survives every map.
    fn brute_count(e: &Encoding) -> usize {
        let k = profile_len(&e.question);
        let l = e.question.grid.diameter() as i64;
        let maps = symmetry::multiplier_maps_for(&e.question);
        let mut count = 0;
        let mut g = vec![1i64; k];
        loop {
            count += usize::from(prefix_survives(&g, &maps, k));
            let Some(i) = g.iter().rposition(|&v| v < l) else {
                return count;
            };
            g[i] += 1;
            g[i + 1..].iter_mut().for_each(|v| *v = 1);
        }
    }

    /// Without the profile exclusions, whose excluded profiles have no cube
    /// (the brute force counts lex-leaders only).
    fn enc_without_exclusions(spec: &str, dim: usize, p: usize) -> Encoding {
        let q = Question::new(Grid::parse(spec, Some(dim)).unwrap(), p).unwrap();
        let o = EncodeOptions {
            classes: false,
            nested: false,
            bicliques: false,
            cliques: false,
            orbits: false,
            subbox: false,
            ..EncodeOptions::default()
        };
        encode(&q, &o, u64::MAX).unwrap()
    }

    #[test]
    fn the_count_of_whole_profiles_is_the_number_of_full_profile_cubes() {
        for (spec, dim, p) in [
            ("-1..1", 3, 9),
            ("-1..1", 4, 17),
            ("0..3", 2, 7),
            ("0..3", 4, 17),
        ] {
            let e = enc_without_exclusions(spec, dim, p);
            let all = profile_cubes(&e, usize::MAX).unwrap();
            assert!(
                all.iter()
                    .all(|c| c.prefix.len() == profile_len(&e.question))
            );
            assert_eq!(brute_count(&e), all.len(), "{spec} {dim} {p}");
            assert_eq!(full_profile_count(&e, usize::MAX), Some(all.len()));
            assert_eq!(full_profile_count(&e, all.len()), Some(all.len()));
            assert_eq!(full_profile_count(&e, all.len() - 1), None);
        }
        // The figure of the 300 s experiment on {0,1,2,3}^4, p = 17.
        assert_eq!(
            full_profile_count(&enc_without_exclusions("0..3", 4, 17), usize::MAX),
            Some(834)
        );
        // With the profile exclusions, the profiles they exclude get no cube.
        for (spec, dim, p) in [("-1..1", 3, 9), ("-1..1", 4, 17), ("0..3", 4, 17)] {
            let e = enc(spec, dim, p);
            let all = profile_cubes(&e, usize::MAX).unwrap();
            assert_eq!(full_profile_count(&e, usize::MAX), Some(all.len()));
            assert!(all.len() < brute_count(&e), "{spec} {dim} {p}");
        }
    }

    /// The walk's work on the questions that set [`WALK_WORK`], printed
    /// with the time it takes (figures for its doc comment).
    #[test]
    #[ignore = "prints measurements; a few seconds in release"]
    fn profile_walk_work_and_time() {
        for (spec, dim, p) in [
            ("-1..1", 5, 34),
            ("-1..1", 5, 40),
            ("-1..1", 5, 42),
            ("-1..1", 5, 44),
            ("-1..1", 5, 46),
            ("-2..2", 4, 25),
            ("-2..2", 4, 24),
            ("0..3", 3, 36),
        ] {
            let e = enc(spec, dim, p);
            let t = std::time::Instant::now();
            let (count, work) = profile_walk(&e, FULL_PROFILE_CAP, u64::MAX);
            eprintln!(
                "{spec}^{dim} p={p}: {count:?} profiles, work {work}, {:.2?}",
                t.elapsed()
            );
        }
    }

    #[test]
    fn the_rule_takes_whole_profiles_below_the_cap_and_prefixes_above() {
        let small = choose_cubes(&enc("-1..1", 4, 17)).unwrap();
        assert_eq!(small.rule, "full-profile");
        // {−1,0,1}^5, p = 34: 16,460 lex-leaders; the profile exclusions
        // leave 1,783 of them with `biclique-cover` alone, 6 with
        // `window-cliques` beside it, one cube each.
        let cover = enc("-1..1", 5, 34);
        assert_eq!(full_profile_count(&cover, FULL_PROFILE_CAP), Some(6));
        assert_eq!(
            full_profile_count(&enc_without_exclusions("-1..1", 5, 34), usize::MAX),
            Some(16_460)
        );
        // {−2,…,2}^4, p = 25: 1,187 whole profiles (4,383 before
        // `window-cliques`), although its prefixes
        // g(1..11) number more than 30,000 (most whole profiles are
        // excluded at the last offset). The walk's work counts the clauses
        // it really tests, not every clause at each depth, which had
        // stopped it early here.
        let m25 = enc("-2..2", 4, 25);
        assert_eq!(full_profile_count(&m25, FULL_PROFILE_CAP), Some(1187));
        assert_eq!(choose_cubes(&m25).unwrap().rule, "full-profile");
        // {−2,…,2}^4, p = 24: more than the cap even with the exclusions
        // (146,529 whole profiles, `split --cubes 200000`).
        let big = enc("-2..2", 4, 24);
        assert_eq!(full_profile_count(&big, FULL_PROFILE_CAP), None);
        let c = choose_cubes(&big).unwrap();
        assert_eq!(c.rule, "breadth-first");
        assert!(c.cubes.len() >= BREADTH_FIRST_TARGET, "{}", c.cubes.len());
    }
}
