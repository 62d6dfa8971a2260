//! The divisor rule in a sweep (docs/math.md §9): periods are closed under
//! divisors, so a refuted period settles its multiples and a feasible one
//! its divisors.
//!
//! Which answers settle what ([`decides`]): an infeasible answer with a
//! checked proof (or one read off such a proof) settles every multiple; a
//! feasible answer with a checked orbit every divisor. A solver's unchecked
//! claim settles nothing. The answer made ([`by_divisors`]) is, for a
//! multiple, an infeasible answer backed by [`Backing::Divisor`] that names
//! the refuted period, its store key and its proof's SHA-256, always the
//! period refuted by its own proof, so that checking it
//! ([`crate::store::Store::quick_check`], [`crate::store::Store::recheck`])
//! checks that proof; for a divisor, an ordinary witness (the sub-orbit,
//! with the power of the map on a point set) checked by
//! [`check_witness`]. [`settle`] answers the open periods a sweep's rows
//! settle; the sweep calls it before solving and after every answer.

use std::collections::BTreeMap;
use std::time::{Instant, SystemTime};

use super::answer;
use super::sweep::finish;
use super::{Row, SweepConfig};
use crate::encode::EncodeOptions;
use crate::error::{Error, Result};
use crate::evidence::{check_witness, divisor_witness};
use crate::question::Question;
use crate::report::Verdict;
use crate::store::{self, Answer, Backing, DivisorRecord, How, RunLimits, Store};

/// Whether the answer `a` to a period `p` decides the period `r` by the
/// divisor rule (docs/math.md §9): `r` is a proper multiple of `p` and `a`
/// is infeasible with a checked proof (its own, or that of the divisor it
/// was read off), or `r` is a proper divisor of `p` and `a` feasible with a
/// checked orbit. A solver's unchecked claim decides nothing else.
pub(super) fn decides(a: &Answer, r: usize) -> bool {
    let p = a.question.period;
    if p == 0 || r == 0 || p == r {
        return false;
    }
    match (a.verdict, a.backing) {
        (Verdict::Infeasible, Backing::CheckedProof | Backing::CheckedCubes | Backing::Divisor) => {
            r.is_multiple_of(p)
        }
        (Verdict::Feasible, Backing::CheckedOrbit) => p.is_multiple_of(r),
        _ => false,
    }
}

/// The answer to `q` read off `from`, an answer that [`decides`] it: for an
/// infeasible `from`, infeasible by §9 naming the refuted period at the
/// root (a period refuted by its own proof, so that checking this answer
/// checks that proof); for a feasible one, the sub-orbit
/// ([`divisor_witness`]), checked by [`check_witness`] like any witness,
/// with its extension built and checked on small boxes as for a
/// constructed orbit.
///
/// # Errors
/// [`Error::Question`] when `from` does not decide `q`; check errors of
/// the derived witness (which would mean a bug, since §9 is a theorem).
pub(super) fn by_divisors(
    q: &Question,
    from: &Answer,
    options: &EncodeOptions,
    limits: &RunLimits,
    run_id: &str,
) -> Result<Answer> {
    if !decides(from, q.period) {
        return Err(Error::Question(format!(
            "the answer to p = {} ({}) decides nothing about p = {} by §9",
            from.question.period,
            from.verdict.word(),
            q.period
        )));
    }
    let t = Instant::now();
    let started_at = store::utc_timestamp(SystemTime::now());
    let mut a = Answer::unknown(q, options, *limits, How::Divisor, run_id, started_at);
    match from.verdict {
        Verdict::Infeasible => {
            let root = match (&from.divisor, from.backing) {
                (Some(d), Backing::Divisor) => d.clone(),
                _ => DivisorRecord {
                    period: from.question.period,
                    key: from.key.clone(),
                    proof_sha256: from.evidence_sha256(),
                    proof_file: from.proof.as_ref().and_then(|p| p.file.clone()),
                    split_folder: from.cubes.as_ref().map(|c| c.folder.clone()),
                },
            };
            a.verdict = Verdict::Infeasible;
            a.backing = Backing::Divisor;
            a.divisor = Some(root);
        }
        _ => {
            let orbit = from.orbit.as_deref().unwrap_or_default();
            let (sub, map) = divisor_witness(orbit, from.map.as_deref(), q.period)?;
            let w = check_witness(q, &a.options, &sub, map.as_deref())?;
            a.map_checked_points = match w.map {
                Some(mc) => Some(mc.points_checked),
                None => answer::map_check(q, &sub)?,
            };
            a.verdict = Verdict::Feasible;
            a.backing = Backing::CheckedOrbit;
            a.profile = Some(w.orbit.profile);
            a.orbit = Some(sub);
            a.map = map;
            a.divisor = Some(DivisorRecord {
                period: from.question.period,
                key: from.key.clone(),
                proof_sha256: None,
                proof_file: None,
                split_folder: None,
            });
        }
    }
    a.stats.seconds = t.elapsed().as_secs_f64();
    a.finished_at = store::utc_timestamp(SystemTime::now());
    Ok(a)
}

/// Answers by the divisor rule (docs/math.md §9) every period of `open`
/// that has no row yet and that a row decides ([`answer::decides`]), storing
/// each answer and recording its row; returns those periods. Two rows that
/// decide a period opposite ways contradict §9, which is an error.
pub(super) fn settle(
    cfg: &SweepConfig,
    limits: &RunLimits,
    run_id: &str,
    store: &mut Option<Store>,
    rows: &mut BTreeMap<usize, Row>,
    open: Vec<&Question>,
) -> Result<Vec<usize>> {
    let mut done = Vec::new();
    for q in open {
        if rows.contains_key(&q.period) {
            continue;
        }
        let mut deciders = rows.values().filter(|r| decides(&r.answer, q.period));
        let Some(first) = deciders.next() else {
            continue;
        };
        if let Some(other) = deciders.find(|r| r.verdict != first.verdict) {
            return Err(Error::Contradiction {
                question: store::question_words(&q.record()),
                first: format!(
                    "by §9 it is {} because p = {} is {}",
                    first.verdict.word(),
                    first.period,
                    first.verdict.word()
                ),
                second: format!(
                    "by §9 it is {} because p = {} is {}",
                    other.verdict.word(),
                    other.period,
                    other.verdict.word()
                ),
            });
        }
        let a = by_divisors(q, &first.answer, &cfg.options, limits, run_id)?;
        finish(&cfg.grid, store, rows, a)?;
        done.push(q.period);
    }
    Ok(done)
}

/// Drops the answer `a` of a period that §9 answered while it was being
/// solved (its row is `row`), after checking that the two agree; a proof
/// `a` left in the store goes, since no answer refers to it.
pub(super) fn dismiss(store: &Option<Store>, row: &Row, a: Answer) -> Result<()> {
    if a.is_decided() && a.verdict != row.verdict {
        return Err(Error::Contradiction {
            question: store::question_words(&a.question),
            first: format!("this run found it {} by §9", row.verdict.word()),
            second: format!("the solver's answer of this run says {}", a.describe()),
        });
    }
    if let (Some(s), Some(f)) = (store, a.proof.as_ref().and_then(|p| p.file.as_ref())) {
        let _ = std::fs::remove_file(s.resolve(f));
    }
    Ok(())
}

#[cfg(test)]
mod tests {
    //! The divisor rule (docs/math.md §9) in sweeps. Expected answers: on
    //! any subset of R^2 no period above max_k 2^k·C(2,k) = 4 occurs
    //! (Lemmens and Scheutzow, Ergodic Theory Dynam. Systems 25 (2005)
    //! 861–871).

    use super::*;
    use crate::grid::Grid;
    use crate::points::PointSet;
    use crate::spectrum::run;

    fn assert_certificate(row: &Row, words: &str) {
        assert!(row.certificate.contains(words), "{}", row.certificate);
    }

    fn square(spec: &str) -> Grid {
        Grid::parse(spec, Some(2)).unwrap()
    }

    #[test]
    fn a_multiple_of_a_refuted_period_follows_from_its_proof_and_falls_with_it() {
        let dir = tempfile::tempdir().unwrap();
        let mut cfg = SweepConfig::new(square("-2..2"));
        cfg.periods = vec![5, 10];
        cfg.jobs = 1;
        cfg.store = Some(dir.path().to_path_buf());
        let s = run(&cfg).unwrap();
        assert_eq!(s.periods_with(Verdict::Infeasible), vec![5, 10]);
        let (five, ten) = (&s.rows[0].answer, &s.rows[1].answer);
        assert_eq!(
            (five.how, five.backing),
            (How::Solver, Backing::CheckedProof)
        );
        assert_eq!((ten.how, ten.backing), (How::Divisor, Backing::Divisor));
        let rec = ten.divisor.as_ref().unwrap();
        assert_eq!((rec.period, &rec.key), (5, &five.key));
        assert_eq!(
            rec.proof_sha256,
            five.proof.as_ref().unwrap().sha256,
            "the derived answer names the proof"
        );
        assert_certificate(
            &s.rows[1],
            "by §9: p = 5 is infeasible (LRAT proof checked: proofs/",
        );
        assert_eq!(s.summary.by_divisors, 1);

        // Checking the answer to 10 checks the proof of 5.
        let store = Store::open(dir.path()).unwrap();
        store.quick_check(ten).unwrap();
        assert!(store.recheck(ten).unwrap().proof.is_some());
        let proof = store.resolve(five.proof.as_ref().unwrap().file.as_ref().unwrap());
        let good = std::fs::read(&proof).unwrap();
        // Same size, other bytes: the quick check (sizes) passes, the full
        // one refuses 10 because 5's proof no longer matches.
        let mut bad = good.clone();
        let at = bad.iter().position(|b| b.is_ascii_digit()).unwrap();
        bad[at] = if bad[at] == b'9' { b'8' } else { bad[at] + 1 };
        std::fs::write(&proof, &bad).unwrap();
        let e = store.recheck(ten).unwrap_err().to_string();
        assert!(e.contains("p = 5") && e.contains("SHA-256"), "{e}");
        // Removed: even the quick check refuses 10.
        std::fs::remove_file(&proof).unwrap();
        let e = store.quick_check(ten).unwrap_err().to_string();
        assert!(e.contains("p = 5") && e.contains("missing"), "{e}");
        // 5's answer gone: 10 is refused as well.
        std::fs::write(&proof, &good).unwrap();
        std::fs::remove_file(store.answer_path(&five.key)).unwrap();
        let store = Store::open(dir.path()).unwrap();
        let e = store.quick_check(ten).unwrap_err().to_string();
        assert!(e.contains("not in the store"), "{e}");

        // A sweep sets the answer to 10 aside and decides both again.
        let s = run(&cfg).unwrap();
        assert_eq!(s.periods_with(Verdict::Infeasible), vec![5, 10]);
        assert!(
            s.set_aside.iter().any(|f| f.period == Some(10)),
            "{:?}",
            s.set_aside
        );
        assert_eq!(s.rows[0].how, How::Solver);
        assert_eq!(s.rows[1].how, How::Divisor);
        assert!(!s.rows[0].reused && !s.rows[1].reused);

        // A solver's claim refutes no multiple: the stored 10 is refused.
        let store = Store::open(dir.path()).unwrap();
        let mut claim = s.rows[0].answer.clone();
        claim.backing = Backing::SolverClaim;
        let path = store.answer_path(&claim.key);
        std::fs::write(&path, serde_json::to_string(&claim).unwrap()).unwrap();
        let store = Store::open(dir.path()).unwrap();
        let e = store
            .quick_check(&s.rows[1].answer)
            .unwrap_err()
            .to_string();
        assert!(e.contains("not backed by a checked proof"), "{e}");
    }

    #[test]
    fn divisors_of_a_feasible_period_on_a_point_set_get_the_power_of_its_map() {
        // The corners of a square and one point further off: period 4 by
        // the rotation of the corners; stored first, it gives 1 and 2 by
        // §9 (f^4 and f^2 with every 4th and 2nd orbit point), checked on
        // all of D, and the same verdicts as the sweep without the rule.
        let d = PointSet::new(vec![
            vec![0, 0],
            vec![0, 1],
            vec![1, 1],
            vec![1, 0],
            vec![3, 0],
        ])
        .unwrap();
        let dir = tempfile::tempdir().unwrap();
        let mut cfg = SweepConfig::on_points(d);
        assert_eq!(cfg.periods, vec![1, 2, 3, 4]);
        cfg.jobs = 1;
        cfg.store = Some(dir.path().to_path_buf());
        cfg.periods = vec![4];
        let four = run(&cfg).unwrap();
        assert_eq!(four.periods_with(Verdict::Feasible), vec![4]);
        cfg.periods = vec![1, 2, 3, 4];
        let s = run(&cfg).unwrap();
        for r in [&s.rows[0], &s.rows[1]] {
            assert_eq!(r.how, How::Divisor, "p = {}", r.period);
            assert_eq!(r.verdict, Verdict::Feasible);
            assert!(r.answer.map.is_some() && r.answer.map_checked_points == Some(5));
            assert_eq!(r.answer.divisor.as_ref().unwrap().period, 4);
        }
        assert_certificate(&s.rows[1], "by §9: every 2nd point of the orbit of p = 4");
        // Stored, they are checked again as witnesses on reuse.
        let again = run(&cfg).unwrap();
        assert!(again.rows.iter().all(|r| r.reused));
        let mut off = cfg.clone();
        off.store = None;
        off.divisors = false;
        let plain = run(&off).unwrap();
        assert!(plain.rows.iter().all(|r| r.how == How::Solver));
        for v in [Verdict::Feasible, Verdict::Infeasible, Verdict::Unknown] {
            assert_eq!(s.periods_with(v), plain.periods_with(v), "{v:?}");
        }
    }
}
