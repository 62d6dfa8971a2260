//! The sweep: reuse, construct, solve, check against the theorems, store.

use std::collections::BTreeMap;
use std::sync::Arc;
use std::sync::atomic::{AtomicBool, AtomicU64, Ordering};
use std::time::{Instant, SystemTime};

use super::answer::{self, Probed, Solved, Task};
use super::divisors;
use super::{Checked, MAX_PERIODS, Row, Spectrum, Summary, SweepConfig};
use crate::dimacs::VERSION;
use crate::error::{Error, Result};
use crate::grid::Grid;
use crate::pool::{self, Event};
use crate::progress::{Progress, duration_words};
use crate::question::{self, Question};
use crate::report::Verdict;
use crate::store::{self, Answer, How, Put, RunLimits, Store};
use crate::theory::{self, construction_limit, period_bound, theorem_conflict_for};

/// Runs a sweep (see the module documentation).
///
/// # Errors
/// [`Error::Options`] for `jobs == 0` or inconsistent encoding options;
/// [`Error::Question`] for no periods, too many, or a period above the number
/// of grid points; [`Error::Contradiction`] when two answers to a question
/// disagree or an answer contradicts a published theorem; store errors
/// ([`Error::Io`]; [`Error::Parse`] for a bad file that cannot be moved
/// aside); pipeline errors of a period (a failed check, a rejected proof, a
/// solver failure). A stored file that cannot be used is not an error: it
/// is set aside with a warning ([`Store::set_aside`]) and its period decided
/// again.
pub fn run(cfg: &SweepConfig) -> Result<Spectrum> {
    if cfg.jobs == 0 {
        return Err(Error::Options(
            "a sweep needs at least one worker thread".into(),
        ));
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
    let mut progress = Progress::new(cfg.progress);
    let mut store = cfg.store.as_deref().map(Store::open).transpose()?;
    let mut warned = 0;
    warn_set_aside(&store, &mut warned, &mut progress);
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
    let mut tasks = Vec::new();
    for q in questions {
        let key = store::key_for(&q, &cfg.options);
        if let Some(s) = &mut store {
            let reused = reusable(s, grid, &q, &key, &limits, cfg.recheck)?;
            warn_set_aside(&store, &mut warned, &mut progress);
            if let Some((a, checked)) = reused {
                rows.insert(q.period, Row::new(grid, a, true, checked));
                continue;
            }
        }
        if q.points.is_none() && q.period as u128 <= construction_limit(grid, q.class) {
            constructible.push(q);
        } else {
            let proof = store.as_ref().map(|s| s.proof_path(&key, &run_id));
            tasks.push(Task { question: q, proof });
        }
    }
    for q in constructible {
        let a = answer::constructed(&q, &cfg.options, &limits, &run_id)?;
        finish(grid, &mut store, &mut rows, a)?;
        warn_set_aside(&store, &mut warned, &mut progress);
    }

    let watch = Watch {
        grid: match &cfg.points {
            Some(_) => "D".to_string(),
            None => grid.to_string(),
        },
        total: cfg.periods.len(),
        t0,
        jobs: cfg.jobs,
        limit: limits.time_seconds,
    };
    if cfg.divisors {
        let open: Vec<&Question> = tasks.iter().map(|t| &t.question).collect();
        let done = divisors::settle(cfg, &limits, &run_id, &mut store, &mut rows, open)?;
        warn_set_aside(&store, &mut warned, &mut progress);
        for p in &done {
            progress.event(|| watch.by_divisors(&rows[p], &rows));
        }
        tasks.retain(|t| !rows.contains_key(&t.question.period));
    }
    progress.event(|| {
        let reused = rows.values().filter(|r| r.reused).count();
        let divisors = rows
            .values()
            .filter(|r| !r.reused && r.how == How::Divisor)
            .count();
        format!(
            "spectrum {}: {} of {} periods decided before solving ({} from the store, {} by construction, \
             {} by §9); {} to solve with {} job(s)",
            watch.grid,
            rows.len(),
            watch.total,
            reused,
            rows.len() - reused - divisors,
            divisors,
            tasks.len(),
            cfg.jobs
        )
    });
    let conflicts: Vec<Arc<AtomicU64>> = tasks.iter().map(|_| Arc::default()).collect();
    // Tasks whose answer §9 gives: a worker that comes to one skips it
    // (returns `None`); its row is made on the calling thread.
    let settled: Vec<AtomicBool> = tasks.iter().map(|_| AtomicBool::new(false)).collect();
    let stop = AtomicBool::new(false);
    let mut first_error: Option<Error> = None;
    // Periods the probe left unknown, for cubes once the pool is done.
    let mut hard: Vec<(usize, Probed)> = Vec::new();
    let work = |i: usize| {
        if settled[i].load(Ordering::SeqCst) {
            return None;
        }
        let answer = answer::solved(&tasks[i], cfg, &limits, &run_id, &conflicts[i]);
        // Marked here, before the answer is sent, and not only by the
        // calling thread: a worker taking the next task must not start a
        // search that this answer settles. Should the calling thread then
        // refuse this answer, the sweep stops, so nothing rests on the mark.
        if cfg.divisors
            && let Ok(Solved::Answer(a)) = &answer
        {
            for (j, t) in tasks.iter().enumerate() {
                if divisors::decides(a, t.question.period) {
                    settled[j].store(true, Ordering::SeqCst);
                }
            }
        }
        Some(Box::new(answer))
    };
    pool::run(tasks.len(), cfg.jobs, &stop, work, |event, state| {
        let running: Vec<(usize, Instant, u64)> = state
            .running
            .iter()
            .map(|(&i, &at)| {
                let c = conflicts[i].load(Ordering::Relaxed);
                (tasks[i].question.period, at, c)
            })
            .collect();
        if let Event::Finished(i, answer) = event {
            let p = tasks[i].question.period;
            let outcome = match answer {
                // Skipped: §9 gives its answer (made below, or already).
                None => Ok(Vec::new()),
                Some(answer) => (*answer).and_then(|solved| {
                    let a = match solved {
                        Solved::Answer(a) => *a,
                        Solved::Hard(probed) => {
                            hard.push((i, probed));
                            return Ok(Vec::new());
                        }
                    };
                    let new = !rows.contains_key(&p);
                    if new {
                        finish(grid, &mut store, &mut rows, a)?;
                    } else {
                        // §9 answered it while it ran; the two must agree.
                        divisors::dismiss(&store, &rows[&p], a)?;
                    }
                    Ok(if new { vec![p] } else { Vec::new() })
                }),
            }
            .and_then(|mut decided| {
                if cfg.divisors {
                    let open: Vec<&Question> = tasks
                        .iter()
                        .enumerate()
                        .filter(|(j, _)| !state.running.contains_key(j))
                        .map(|(_, t)| &t.question)
                        .collect();
                    let done =
                        divisors::settle(cfg, &limits, &run_id, &mut store, &mut rows, open)?;
                    for &d in &done {
                        if let Some(j) = tasks.iter().position(|t| t.question.period == d) {
                            settled[j].store(true, Ordering::SeqCst);
                        }
                    }
                    decided.extend(done);
                }
                Ok(decided)
            });
            warn_set_aside(&store, &mut warned, &mut progress);
            match outcome {
                Ok(decided) => {
                    for d in decided {
                        progress.event(|| watch.answered(&rows[&d], &rows, &running, state.queued));
                    }
                }
                Err(e) => {
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
        }
        progress.status(|| {
            format!(
                "spectrum {}: {}",
                watch.grid,
                watch.words(&rows, &running, state.queued)
            )
        });
    });
    progress.clear();
    if let Some(e) = first_error {
        return Err(e);
    }
    hard.sort_by_key(|&(i, _)| tasks[i].question.period);
    for (k, &(i, probed)) in hard.iter().enumerate() {
        let p = tasks[i].question.period;
        if rows.contains_key(&p) {
            continue;
        }
        progress.event(|| {
            let why = match probed.begun {
                true => "a split of it is begun in the store, no probe".to_string(),
                false => format!(
                    "the probe gave no answer in {} ({} conflicts)",
                    duration_words(probed.seconds),
                    probed.conflicts
                ),
            };
            format!(
                "spectrum {}: p={p}: {why}; deciding it in cubes on {} ({} hard period(s) left)",
                watch.grid,
                crate::progress::threads_words(cfg.jobs.max(1)),
                hard.len() - k
            )
        });
        let a = answer::in_cubes(&tasks[i], cfg, &limits, &run_id, &conflicts[i], probed)?;
        finish(grid, &mut store, &mut rows, a)?;
        let mut decided = vec![p];
        if cfg.divisors {
            let open: Vec<&Question> = hard[k + 1..]
                .iter()
                .map(|&(j, _)| &tasks[j].question)
                .collect();
            decided.extend(divisors::settle(
                cfg, &limits, &run_id, &mut store, &mut rows, open,
            )?);
        }
        warn_set_aside(&store, &mut warned, &mut progress);
        for d in decided {
            progress.event(|| watch.answered(&rows[&d], &rows, &[], 0));
        }
    }
    for t in &tasks {
        if let std::collections::btree_map::Entry::Vacant(slot) = rows.entry(t.question.period) {
            // Skipped, yet no row gives it by §9: the answer that settled
            // it was replaced by another run's stored answer of the same
            // verdict that settles nothing (a solver's claim). Unknown, and
            // not stored, so that the next run decides it.
            let started = store::utc_timestamp(SystemTime::now());
            let mut a = Answer::unknown(
                &t.question,
                &cfg.options,
                limits,
                How::Solver,
                &run_id,
                started,
            );
            a.reason = Some(
                "not searched: §9 was to decide it from another period, whose stored \
                 answer turned out not to be checked"
                    .into(),
            );
            a.finished_at = a.started_at.clone();
            slot.insert(Row::new(grid, a, false, Checked::Never));
        }
    }
    progress.event(|| {
        format!(
            "spectrum {}: finished: {} in {}",
            watch.grid,
            watch.decided(&rows),
            duration_words(t0.elapsed().as_secs_f64())
        )
    });

    let rows: Vec<Row> = rows.into_values().collect();
    let summary = Summary::of(&rows);
    let n = theory::effective_dim(grid);
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
        options: cfg.options.for_domain(cfg.class, cfg.points.is_some()),
        store: cfg.store.clone(),
        run_id,
        started_at,
        finished_at: store::utc_timestamp(SystemTime::now()),
        elapsed_seconds: t0.elapsed().as_secs_f64(),
        jobs: cfg.jobs,
        time_limit_seconds: limits.time_seconds,
        summary,
        rows,
        set_aside: store
            .map(|s| s.set_aside_files().to_vec())
            .unwrap_or_default(),
    })
}

/// Warns about the files `store` has set aside since the first `warned`,
/// and counts them in.
fn warn_set_aside(store: &Option<Store>, warned: &mut usize, progress: &mut Progress) {
    let Some(s) = store else { return };
    let all = s.set_aside_files();
    for f in &all[(*warned).min(all.len())..] {
        let is_answer = f
            .file
            .parent()
            .is_some_and(|d| d.ends_with(store::ANSWERS_DIR));
        let again = match (is_answer, f.period) {
            (true, Some(_)) => "; its period is decided again",
            (true, None) => "; it is not read",
            (false, _) => "",
        };
        progress.warn(&format!(
            "a stored file cannot be used and was set aside: {}{again}",
            f.describe()
        ));
    }
    *warned = all.len();
}

/// The stored answer to reuse for `q`, with when its evidence was checked,
/// after checking the store's answers to `q` against each other and against
/// the theorems. An answer whose evidence fails its check is set aside
/// ([`Store::set_aside`]) and `None` returned, so that its period is
/// decided again; only an I/O failure is an error.
fn reusable(
    s: &mut Store,
    grid: &Grid,
    q: &Question,
    key: &str,
    limits: &RunLimits,
    recheck: bool,
) -> Result<Option<(Answer, Checked)>> {
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
    let Some(a) = s.get(key).cloned() else {
        return Ok(None);
    };
    // An unfinished split in the store is always taken up again: its
    // folder keeps every cube result, so the next run goes on from there.
    if !a.is_decided() && (limits.exceeds(&a.limits) || a.how == How::Cubes) {
        return Ok(None);
    }
    match check_stored(s, q, &a, recheck) {
        Ok(checked) => Ok(Some((a, checked))),
        Err(e @ Error::Io { .. }) => Err(e),
        Err(e) => {
            s.set_aside(key, &store::why(&e));
            Ok(None)
        }
    }
}

/// Checks the evidence of the stored answer `a` to `q` before it is reused:
/// in full with `recheck` ([`Store::recheck`]), otherwise the quick check
/// ([`Store::quick_check`]); a feasible answer's box extension is built and
/// checked again too. Says what was checked in this run.
fn check_stored(s: &Store, q: &Question, a: &Answer, recheck: bool) -> Result<Checked> {
    let proof_checked = if recheck {
        s.recheck(a)?.refutation_checked()
    } else {
        s.quick_check(a)?;
        false
    };
    match a.verdict {
        Verdict::Feasible => {
            if let (Some(n), Some(orbit)) = (a.map_checked_points, &a.orbit)
                && !a.options.formulation.encodes_map()
                && answer::map_check(q, orbit)? != Some(n)
            {
                return Err(Error::parse(
                    s.answer_path(&a.key).display().to_string(),
                    0,
                    format!(
                        "the map was checked on {n} points, but the extension is not built on as many now"
                    ),
                ));
            }
            Ok(Checked::Rechecked)
        }
        Verdict::Infeasible if proof_checked => Ok(Checked::Rechecked),
        Verdict::Infeasible => Ok(Checked::earlier(a)),
        Verdict::Unknown => Ok(Checked::Never),
    }
}

/// Checks a new answer against the theorems, stores it and records its row.
pub(super) fn finish(
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
    let (row_answer, reused, checked) = match store {
        Some(s) => match s.put(a.clone())? {
            Put::Written => (a, false, Checked::ThisRun),
            Put::Kept(stored) => {
                // Another run stored the same verdict meanwhile; its answer
                // stands, so this run's proof (never referenced) goes.
                if let Some(f) = a.proof.as_ref().and_then(|p| p.file.as_ref()) {
                    let _ = std::fs::remove_file(s.resolve(f));
                }
                let checked = Checked::earlier(&stored);
                (*stored, true, checked)
            }
        },
        None => (a, false, Checked::ThisRun),
    };
    rows.insert(p, Row::new(grid, row_answer, reused, checked));
    Ok(())
}

/// What the progress lines of a sweep say.
struct Watch {
    grid: String,
    total: usize,
    t0: Instant,
    jobs: usize,
    limit: Option<f64>,
}

impl Watch {
    /// `17/32 periods decided (16 feasible, 1 infeasible, 0 unknown)`.
    fn decided(&self, rows: &BTreeMap<usize, Row>) -> String {
        let count = |v: Verdict| rows.values().filter(|r| r.verdict == v).count();
        format!(
            "{}/{} periods decided ({} feasible, {} infeasible, {} unknown)",
            rows.len(),
            self.total,
            count(Verdict::Feasible),
            count(Verdict::Infeasible),
            count(Verdict::Unknown),
        )
    }

    /// The progress line of a period answered by §9: `p=10 infeasible by
    /// §9 from p = 5; 7/12 periods decided (…)`.
    fn by_divisors(&self, r: &Row, rows: &BTreeMap<usize, Row>) -> String {
        let from = r
            .answer
            .divisor
            .as_ref()
            .map_or("?".to_string(), |d| d.period.to_string());
        format!(
            "spectrum {}: p={} {} by §9 from p = {from}; {}",
            self.grid,
            r.period,
            r.verdict.word(),
            self.decided(rows)
        )
    }

    /// The progress line of the newly answered row `r`: `p=17 infeasible
    /// (solver, 0.47 s); 17/32 periods decided (…)`, or as [`Watch::by_divisors`].
    fn answered(
        &self,
        r: &Row,
        rows: &BTreeMap<usize, Row>,
        running: &[(usize, Instant, u64)],
        queued: usize,
    ) -> String {
        if r.how == How::Divisor {
            return self.by_divisors(r, rows);
        }
        format!(
            "spectrum {}: p={} {} ({}, {}); {}",
            self.grid,
            r.period,
            r.verdict.word(),
            r.how.word(),
            duration_words(r.seconds),
            self.words(rows, running, queued)
        )
    }

    /// The state of the sweep: periods decided, the running ones (period,
    /// start, conflicts so far), time elapsed and an estimate of what is left.
    fn words(
        &self,
        rows: &BTreeMap<usize, Row>,
        running: &[(usize, Instant, u64)],
        queued: usize,
    ) -> String {
        let now = Instant::now();
        let solved: Vec<f64> = rows
            .values()
            .filter(|r| !r.reused && r.how == How::Solver)
            .map(|r| r.seconds)
            .collect();
        let remaining = queued + running.len();
        let lanes = self.jobs.min(remaining).max(1);
        // With a time limit no period runs longer: an upper bound on what is left.
        let bound = self.limit.map(|t| {
            let waves = queued.div_ceil(lanes) as f64 + if running.is_empty() { 0.0 } else { 1.0 };
            waves * t
        });
        let at_most = bound.map(|b| format!(", at most {}", duration_words(b)));
        let estimate = if remaining == 0 {
            "finishing".to_string()
        } else if solved.is_empty() {
            format!(
                "estimate after the first solved period{}",
                at_most.unwrap_or_default()
            )
        } else {
            let mean = solved.iter().sum::<f64>() / solved.len() as f64;
            // Periods that ran out of time (and wrote their proofs) can take
            // longer than the limit; the estimate never exceeds the bound.
            let guess =
                (mean * remaining as f64 / lanes as f64).min(bound.unwrap_or(f64::INFINITY));
            format!(
                "≈ {} left{}",
                duration_words(guess),
                at_most.unwrap_or_default()
            )
        };
        let mut shown: Vec<String> = running
            .iter()
            .take(4)
            .map(|(p, at, conflicts)| {
                format!(
                    "p={p} ({}, {conflicts} conflicts)",
                    duration_words(now.duration_since(*at).as_secs_f64())
                )
            })
            .collect();
        if running.len() > 4 {
            shown.push("…".into());
        }
        format!(
            "{}, {} running{}{}, {} elapsed, {estimate}",
            self.decided(rows),
            running.len(),
            if shown.is_empty() { "" } else { ": " },
            shown.join(", "),
            duration_words(self.t0.elapsed().as_secs_f64()),
        )
    }
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::grid::Grid;
    use crate::question::MapClass;
    use crate::store::Backing;

    fn grid(spec: &str, dim: usize) -> Grid {
        Grid::parse(spec, Some(dim)).unwrap()
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
