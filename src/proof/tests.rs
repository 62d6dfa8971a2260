//! The checker on real proofs: every proof the bundled solver writes is
//! accepted, every tampered one is rejected at the tampered step, and the
//! DRAT proofs of the same runs pass `rate`, an independent checker.

use std::io::Write;

use crate::cnf::Cnf;
use crate::proof::lrat::read::{Step, StepKind};
use crate::proof::lrat::{LratError, LratFormat, LratReason, check_lrat, check_lrat_with};
use crate::proof::testgen::{
    cnf_of, dimacs, lrat_of, php, random_3sat, random_unsat, steps_of, strict, text_lrat, text_of,
};
use crate::proof::{ProofSinks, solve_with_proof_sinks};
use crate::solve::Outcome;

#[test]
fn varisat_proofs_are_accepted() {
    let mut cnfs = vec![php(4, 3), php(5, 4), php(6, 5)];
    cnfs.extend(random_unsat(60, 6));
    cnfs.extend(random_unsat(100, 2));
    for cnf in &cnfs {
        for binary in [false, true] {
            let (out, proof) = lrat_of(cnf, binary);
            assert_eq!(out.outcome, Outcome::Unsat);
            assert_eq!(out.lrat_bytes, Some(proof.len() as u64));
            // Accepting means no step was RAT: the checker rejects negative hints.
            let s = check_lrat_with(cnf, &proof, &strict()).unwrap();
            assert_eq!(s.cnf_clauses, cnf.num_clauses());
            assert_eq!(s.ignored_tail_bytes, 0);
            let want = if binary {
                LratFormat::Binary
            } else {
                LratFormat::Text
            };
            assert_eq!(s.format, want);
            assert!(s.added >= 1 && s.hints >= 1);
        }
    }
    let text = text_lrat(&php(5, 4));
    assert!(
        steps_of(&text).iter().all(|s| s.rat_hint().is_none()),
        "varisat wrote a negative (RAT) hint"
    );
}

/// Applies `edit` to a copy of `lines` and checks the result against `cnf`.
fn tampered(cnf: &Cnf, lines: &[Step], edit: impl FnOnce(&mut Vec<Step>)) -> LratError {
    let mut t = lines.to_vec();
    edit(&mut t);
    check_lrat_with(cnf, text_of(&t), &strict()).expect_err("a tampered proof was accepted")
}

fn tamper_every_step(cnf: &Cnf) {
    let text = text_lrat(cnf);
    let lines = steps_of(&text);
    check_lrat_with(cnf, text_of(&lines), &strict()).unwrap();
    let n = lines.len() as u64;
    let mut prev_add: Option<u64> = None;
    for (k, line) in lines.iter().enumerate() {
        let step = k as u64 + 1;
        if line.kind != StepKind::Add {
            continue;
        }
        let (id, lits, hints) = (&line.id, &line.lits, &line.refs);
        // Change a literal: negate the first one.
        if let Some(&l) = lits.first()
            && !lits.contains(&-l)
        {
            let e = tampered(cnf, &lines, |t| t[k].lits[0] = -l);
            assert_eq!((e.step, e.id), (step, Some(*id)), "{e}");
            assert!(e.reason.is_rup_failure(), "{e}");
        }
        // Drop the last hint, the conflict: the others still propagate.
        let e = tampered(cnf, &lines, |t| {
            t[k].refs.pop();
        });
        assert_eq!(e.step, step);
        assert_eq!(
            e.reason,
            LratReason::NoConflict {
                hints: hints.len() - 1
            }
        );
        // Drop the first hint.
        if hints.len() >= 2 {
            let e = tampered(cnf, &lines, |t| {
                t[k].refs.remove(0);
            });
            assert_eq!(e.step, step);
            assert!(e.reason.is_rup_failure(), "{e}");
        }
        // A negative hint makes it a RAT step.
        let e = tampered(cnf, &lines, |t| t[k].refs[0] = -t[k].refs[0]);
        assert_eq!(e.step, step);
        assert_eq!(e.reason, LratReason::RatNotSupported { hint: -hints[0] });
        // A hint to a clause that never existed.
        let e = tampered(cnf, &lines, |t| t[k].refs[0] = 1_000_000_000);
        assert_eq!(e.step, step);
        assert_eq!(
            e.reason,
            LratReason::UnknownHint {
                hint: 1_000_000_000
            }
        );
        // Delete the first hint's clause just before, then use it.
        let h = hints[0] as u64;
        let e = tampered(cnf, &lines, |t| {
            let delete = Step {
                kind: StepKind::Delete,
                id: id - 1,
                refs: vec![h as i64],
                ..Step::default()
            };
            t.insert(k, delete)
        });
        assert_eq!((e.step, e.id), (step + 1, Some(*id)));
        assert_eq!(
            e.reason,
            LratReason::DeletedHint {
                hint: h,
                deleted_in_step: step
            }
        );
        // Reuse the previous addition's id.
        if let Some(p) = prev_add {
            let e = tampered(cnf, &lines, |t| t[k].id = p);
            assert_eq!((e.step, e.id), (step, Some(p)));
            assert!(
                matches!(e.reason, LratReason::IdNotIncreasing { id, .. } if id == p),
                "{e}"
            );
        }
        prev_add = Some(*id);
    }
    // Truncation: without the last line the empty clause is missing; cut
    // inside the last line, the step is incomplete.
    let e = tampered(cnf, &lines, |t| {
        t.pop();
    });
    assert_eq!(e.step, n);
    assert_eq!(e.reason, LratReason::NoEmptyClause { steps: n - 1 });
    let cut = &text[..text.len() - 3];
    let e = check_lrat(cnf, cut).unwrap_err();
    assert_eq!((e.step, e.reason), (n, LratReason::Truncated));
}

#[test]
fn tampered_proofs_are_rejected_at_the_tampered_step() {
    tamper_every_step(&php(5, 4));
    for cnf in random_unsat(60, 2) {
        tamper_every_step(&cnf);
    }
}

#[test]
fn a_proof_for_another_cnf_is_rejected() {
    let cnf = php(5, 4);
    let proof = text_lrat(&cnf);
    // The same clauses, two of them swapped.
    let mut swapped = Cnf::new();
    let order: Vec<usize> = (0..cnf.num_clauses())
        .map(|i| match i {
            0 => 1,
            1 => 0,
            i => i,
        })
        .collect();
    for &i in &order {
        swapped.add_clause(cnf.clause(i));
    }
    let e = check_lrat_with(&swapped, &proof, &strict()).unwrap_err();
    assert!(e.reason.is_rup_failure(), "{e}");
    // Fewer clauses: caught at step 1 with the option; later without it.
    let small = php(4, 3);
    let e = check_lrat_with(&small, &proof, &strict()).unwrap_err();
    assert_eq!(e.step, 1);
    assert_eq!(
        e.reason,
        LratReason::IdNotAfterCnf {
            id: 46,
            expected: 23
        }
    );
    let e = check_lrat(&small, &proof).unwrap_err();
    assert!(
        e.reason.is_rup_failure()
            || matches!(
                e.reason,
                LratReason::LiteralOutOfRange { .. } | LratReason::UnknownHint { .. }
            ),
        "{e}"
    );
    // More clauses: the proof's first id collides with the CNF's.
    let e = check_lrat(&php(6, 5), &proof).unwrap_err();
    assert_eq!(e.step, 1);
    assert_eq!(
        e.reason,
        LratReason::IdNotIncreasing {
            id: 46,
            previous: 81
        }
    );
    // A random CNF of the same shape (45 clauses over 20 variables).
    let mut other = random_3sat(20, 44, 7);
    other.add_clause(cnf.clause(44));
    let e = check_lrat_with(&other, &proof, &strict()).unwrap_err();
    assert!(e.reason.is_rup_failure(), "{e}");
}
/// The `rate` binary, or `None` (with a note) when it is not installed.
/// Under CI (env `CI` set) a missing `rate` is a failure.
fn rate() -> Option<std::process::Command> {
    let found = std::process::Command::new("rate")
        .arg("--version")
        .output()
        .is_ok_and(|o| o.status.success());
    if found {
        return Some(std::process::Command::new("rate"));
    }
    let hint = "install it with: cargo install rate --version 0.3.0 --locked";
    if std::env::var_os("CI").is_some() {
        panic!("the DRAT checker `rate` is not on PATH; {hint}");
    }
    // Written to the real stderr, so that libtest's capture does not hide the skip.
    let _ = writeln!(
        std::io::stderr(),
        "note: skipping the DRAT second opinion: `rate` is not on PATH; {hint}"
    );
    None
}

#[test]
fn rate_verifies_the_drat_proofs() {
    let Some(_) = rate() else { return };
    let dir = tempfile::tempdir().unwrap();
    let mut cnfs = vec![php(5, 4), php(6, 5), cnf_of(&[&[1], &[2, 3], &[-1]])];
    cnfs.extend(random_unsat(60, 2));
    for (i, cnf) in cnfs.iter().enumerate() {
        for binary in [false, true] {
            let cnf_path = dir.path().join(format!("f{i}.cnf"));
            std::fs::write(&cnf_path, dimacs(cnf)).unwrap();
            let mut drat = Vec::new();
            let mut lrat = Vec::new();
            let sinks = ProofSinks {
                lrat: Some(&mut lrat),
                drat: Some(&mut drat),
                drat_binary: binary,
                ..ProofSinks::default()
            };
            let out = solve_with_proof_sinks(cnf, sinks, None).unwrap();
            assert_eq!(out.outcome, Outcome::Unsat);
            check_lrat_with(cnf, &lrat, &strict()).unwrap();
            let drat_path = dir.path().join(format!("f{i}-{binary}.drat"));
            std::fs::write(&drat_path, &drat).unwrap();
            let rate_lrat = dir.path().join(format!("f{i}-{binary}.rate.lrat"));
            let o = rate()
                .unwrap()
                .arg(&cnf_path)
                .arg(&drat_path)
                .arg("--lrat")
                .arg(&rate_lrat)
                .output()
                .unwrap();
            let stdout = String::from_utf8_lossy(&o.stdout);
            assert!(
                o.status.success() && stdout.lines().any(|l| l == "s VERIFIED"),
                "rate rejected the DRAT proof of formula {i} (binary {binary}):\n{stdout}\n{}",
                String::from_utf8_lossy(&o.stderr)
            );
            // rate's own LRAT certificate, from the same DRAT proof, passes our checker too.
            let theirs = std::fs::read(&rate_lrat).unwrap();
            check_lrat(cnf, &theirs).unwrap();
        }
    }
}
