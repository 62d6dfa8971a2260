//! Trimming an LRAT proof to the steps the empty clause depends on.
//!
//! A solver's proof adds every clause it learned, but the refutation uses
//! only those reachable from the empty clause through hints. [`trim`] keeps
//! those, in their order, with dense new ids `m+1, m+2, …`, and keeps each
//! deletion of a clause that stays (a clause is deleted no earlier than in
//! the original proof, so every hint still finds it). It reads the proof
//! three times, in bounded memory (about 25 bytes per added clause):
//!
//! 1. forward, recording where each addition starts, up to the empty clause;
//! 2. backward over those additions, rereading each one that is needed (by
//!    its offset) and marking the clauses its hints name as needed;
//! 3. forward, writing the needed additions (hints renumbered) and the
//!    deletions of clauses that are kept or belong to the CNF.
//!
//! Trimming is not trusted: a trimmed proof is checked like any other. An
//! ill-formed input (ids not increasing, a hint to a clause never added, no
//! empty clause) is refused, not repaired.

use std::io::{Read, Seek, SeekFrom, Write};

use super::read::{LratReader, Step, StepKind};
use super::write::LratWriter;
use super::{LratFormat, LratReason};

/// What [`trim`] kept.
#[derive(Clone, Copy, Debug, PartialEq, Eq, serde::Serialize)]
pub struct TrimSummary {
    /// Additions in the proof, up to the empty clause.
    pub added: u64,
    /// Additions kept.
    pub kept: u64,
    /// Bytes written.
    pub bytes: u64,
}

/// The additions of a proof: ids (strictly increasing) and where they start.
struct Additions {
    ids: Vec<u64>,
    offsets: Vec<u64>,
}

impl Additions {
    fn index(&self, id: u64) -> Option<usize> {
        self.ids.binary_search(&id).ok()
    }
}

/// Writes the steps of `proof` (an LRAT refutation of a CNF with `m`
/// clauses over at most `max_var` variables) that the empty clause depends
/// on to `out`, in `format`, with the additions renumbered from `m + 1`.
///
/// # Errors
/// The reader's [`LratReason`] for a malformed proof; [`LratReason::Malformed`]
/// for ids that do not increase, a hint to a clause that was never added,
/// or a proof without the empty clause; [`LratReason::Io`] when `proof` or
/// `out` fails.
pub fn trim<R: Read + Seek>(
    proof: R,
    m: u64,
    max_var: u32,
    out: impl Write,
    format: LratFormat,
) -> Result<TrimSummary, LratReason> {
    trim_inputs(proof, m, m, max_var, out, format).map(|(s, _)| s)
}

/// As [`trim`], for a CNF whose clauses `m0 + 1..=m` may be left out as
/// well: those no kept addition names as a hint go, and the others are
/// renumbered densely from `m0 + 1`, in their order (the additions follow
/// them). Returns, beside the summary, whether each of those clauses was
/// kept (index `k` for clause `m0 + 1 + k`). The caller must write the
/// CNF's clauses the same way: the kept ones of `m0 + 1..=m`, in order.
/// Used for the theory lemmas of a real-space certificate after a
/// hand-off, where the external solver's proof names only some of them.
///
/// # Errors
/// As [`trim`].
pub fn trim_inputs<R: Read + Seek>(
    mut proof: R,
    m0: u64,
    m: u64,
    max_var: u32,
    out: impl Write,
    format: LratFormat,
) -> Result<(TrimSummary, Vec<bool>), LratReason> {
    let m0 = m0.min(m);
    let mut input_used = vec![false; (m - m0) as usize];
    let io = |e: std::io::Error| LratReason::Io(e.to_string());
    let malformed = |s: String| LratReason::Malformed(s);
    // 1. Where every addition starts.
    proof.seek(SeekFrom::Start(0)).map_err(io)?;
    let mut adds = Additions {
        ids: Vec::new(),
        offsets: Vec::new(),
    };
    let mut step = Step::default();
    let in_format;
    {
        let mut reader = LratReader::new(&mut proof, None, max_var)?;
        in_format = reader.format();
        loop {
            if !reader.next_step(&mut step)? {
                return Err(malformed(
                    "the proof does not derive the empty clause".into(),
                ));
            }
            if step.kind == StepKind::Delete {
                continue;
            }
            if step.id <= m || adds.ids.last().is_some_and(|&last| step.id <= last) {
                return Err(malformed(format!(
                    "clause id {} does not increase",
                    step.id
                )));
            }
            adds.ids.push(step.id);
            adds.offsets.push(step.offset as u64);
            if step.lits.is_empty() {
                break;
            }
        }
    }
    // 2. Which additions the empty clause depends on.
    let n = adds.ids.len();
    let mut needed = vec![false; n];
    needed[n - 1] = true;
    for i in (0..n).rev() {
        if !needed[i] {
            continue;
        }
        proof.seek(SeekFrom::Start(adds.offsets[i])).map_err(io)?;
        let mut reader = LratReader::with_lookahead(&mut proof, Some(in_format), max_var, 4096)?;
        if !reader.next_step(&mut step)? || step.id != adds.ids[i] {
            return Err(malformed(format!(
                "clause {} moved while trimming",
                adds.ids[i]
            )));
        }
        for &h in &step.refs {
            let h = h.unsigned_abs();
            if h <= m {
                if h > m0 {
                    input_used[(h - m0 - 1) as usize] = true;
                }
                continue;
            }
            let j = adds.index(h).filter(|&j| j < i).ok_or_else(|| {
                malformed(format!(
                    "clause {}: hint {h} names no earlier addition",
                    step.id
                ))
            })?;
            needed[j] = true;
        }
    }
    // 3. The needed additions, renumbered, and the deletions that still matter.
    let mut new_id = vec![0u64; n];
    // new_input[k]: the new id of clause m0 + 1 + k, 0 when it goes.
    let mut new_input = vec![0u64; input_used.len()];
    let mut last_input = m0;
    for (k, &used) in input_used.iter().enumerate() {
        if used {
            last_input += 1;
            new_input[k] = last_input;
        }
    }
    let mut next = last_input + 1;
    proof.seek(SeekFrom::Start(0)).map_err(io)?;
    let mut reader = LratReader::new(&mut proof, Some(in_format), max_var)?;
    let mut writer = LratWriter::new(out, format);
    let renumber = |id: u64, new_id: &[u64]| -> Option<u64> {
        if id <= m0 {
            return Some(id);
        }
        if id <= m {
            let k = new_input[(id - m0 - 1) as usize];
            return (k != 0).then_some(k);
        }
        let j = adds.index(id)?;
        (needed[j] && new_id[j] != 0).then(|| new_id[j])
    };
    let mut i = 0;
    while i < n {
        if !reader.next_step(&mut step)? {
            return Err(malformed("the proof changed while trimming".into()));
        }
        match step.kind {
            StepKind::Delete => {
                let gone: Vec<u64> = step
                    .refs
                    .iter()
                    .filter_map(|&d| renumber(d as u64, &new_id))
                    .collect();
                writer.delete(next - 1, gone).map_err(io)?;
            }
            StepKind::Add => {
                if needed[i] {
                    let mut hints = Vec::with_capacity(step.refs.len());
                    for &h in &step.refs {
                        let g = renumber(h.unsigned_abs(), &new_id)
                            .ok_or_else(|| malformed(format!("hint {h} was trimmed away")))?;
                        hints.push(if h < 0 { -(g as i64) } else { g as i64 });
                    }
                    new_id[i] = next;
                    writer
                        .add(next, step.lits.iter().copied(), hints)
                        .map_err(io)?;
                    next += 1;
                }
                i += 1;
            }
        }
    }
    let (_, bytes) = writer.finish().map_err(io)?;
    Ok((
        TrimSummary {
            added: n as u64,
            kept: next - last_input - 1,
            bytes,
        },
        input_used,
    ))
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::proof::check_lrat_with;
    use crate::proof::testgen::{lrat_of, php, random_unsat, square, strict, to_binary};

    fn trimmed(proof: &[u8], m: u64, format: LratFormat) -> (TrimSummary, Vec<u8>) {
        let mut out = Vec::new();
        let s = trim(std::io::Cursor::new(proof), m, u32::MAX, &mut out, format).unwrap();
        assert_eq!(s.bytes, out.len() as u64);
        (s, out)
    }

    #[test]
    fn unnamed_input_clauses_go_when_they_may() {
        let cnf = |clauses: &[&[i32]]| {
            let mut f = crate::cnf::Cnf::new();
            for c in clauses {
                let c: Vec<crate::cnf::Lit> =
                    c.iter().map(|&x| crate::cnf::Lit::from_dimacs(x)).collect();
                f.add_clause(&c);
            }
            f
        };
        // Clauses 3..5 may go; 3 is never named, 4 and 5 are.
        let full = cnf(&[&[1, 2], &[1, -2], &[5, 6], &[-1, 2], &[-1, -2]]);
        let p = "6 1 0 1 2 0\n6 d 3 0\n7 0 6 4 5 0\n";
        check_lrat_with(&full, p, &Default::default()).unwrap();
        let mut out = Vec::new();
        let (s, kept) = trim_inputs(
            std::io::Cursor::new(p),
            2,
            5,
            u32::MAX,
            &mut out,
            LratFormat::Text,
        )
        .unwrap();
        assert_eq!(kept, [false, true, true]);
        assert_eq!((s.added, s.kept), (2, 2));
        let text = String::from_utf8(out).unwrap();
        assert!(text.starts_with("5 1 0 1 2 0\n"), "{text}");
        assert!(text.ends_with("6 0 5 3 4 0\n"), "{text}");
        // The proof is one of the CNF without clause 3, and of no other.
        check_lrat_with(&square(), &text, &Default::default()).unwrap();
        assert!(check_lrat_with(&full, &text, &Default::default()).is_err());
        // With nothing that may go, as trim.
        let mut again = Vec::new();
        let (_, none) = trim_inputs(
            std::io::Cursor::new(p),
            5,
            5,
            u32::MAX,
            &mut again,
            LratFormat::Text,
        )
        .unwrap();
        assert!(none.is_empty());
        assert_eq!(again, trimmed(p.as_bytes(), 5, LratFormat::Text).1);
    }

    #[test]
    fn unused_steps_go_and_the_rest_is_renumbered() {
        // Clause 5 is never used, 6 is; 7 is the empty clause.
        let p = "5 1 2 0 1 0\n6 1 0 1 2 0\n6 d 1 5 0\n7 0 6 3 4 0\n8 2 0 0\n";
        check_lrat_with(&square(), p, &Default::default()).unwrap();
        let (s, out) = trimmed(p.as_bytes(), 4, LratFormat::Text);
        assert_eq!((s.added, s.kept), (3, 2));
        assert_eq!(
            String::from_utf8(out).unwrap(),
            "5 1 0 1 2 0\n5 d 1 0\n6 0 5 3 4 0\n"
        );
        let (_, bin) = trimmed(&to_binary(p), 4, LratFormat::Binary);
        assert_eq!(bin, to_binary("5 1 0 1 2 0\n5 d 1 0\n6 0 5 3 4 0\n"));
    }

    #[test]
    fn trimmed_solver_proofs_are_accepted_and_smaller() {
        let mut cnfs = vec![php(6, 5), php(7, 6)];
        cnfs.extend(random_unsat(100, 2));
        for cnf in &cnfs {
            let m = cnf.num_clauses() as u64;
            for binary in [false, true] {
                let (_, proof) = lrat_of(cnf, binary);
                let full = check_lrat_with(cnf, &proof, &strict()).unwrap();
                for format in [LratFormat::Text, LratFormat::Binary] {
                    let (s, out) = trimmed(&proof, m, format);
                    let t = check_lrat_with(cnf, &out, &strict()).unwrap();
                    assert_eq!(t.added, s.kept);
                    assert_eq!(s.added, full.added);
                    assert!(s.kept <= s.added);
                    // Trimming again changes nothing.
                    let (again, out2) = trimmed(&out, m, format);
                    assert_eq!(again.kept, s.kept);
                    assert_eq!(out2, out);
                }
            }
        }
    }

    #[test]
    fn ill_formed_proofs_are_refused() {
        for p in [
            "5 1 0 1 2 0\n",              // no empty clause
            "5 1 0 1 2 0\n5 0 5 3 4 0\n", // an id that does not increase
            "5 1 0 1 2 0\n6 0 9 3 4 0\n", // a hint to nothing
            "5 1 0 6 0\n6 0 5 3 4 0\n",   // a hint forward
            "3 1 0 1 2 0\n6 0 3 3 4 0\n", // an id of the CNF
        ] {
            let r = trim(
                std::io::Cursor::new(p),
                4,
                u32::MAX,
                Vec::new(),
                LratFormat::Text,
            );
            assert!(matches!(r, Err(LratReason::Malformed(_))), "{p:?}: {r:?}");
        }
    }
}

/// Trimming a proof on disk, with figures: `ORBITCNF_TRIM=CNF:PROOF cargo
/// test --release --lib measure_trim -- --ignored --nocapture`.
#[cfg(test)]
#[test]
#[ignore = "a measurement on files given in ORBITCNF_TRIM"]
fn measure_trim() {
    use std::time::Instant;
    let Some(spec) = std::env::var_os("ORBITCNF_TRIM") else {
        return;
    };
    let spec = spec.to_string_lossy().to_string();
    let (cnf_path, proof_path) = spec.split_once(':').expect("CNF:PROOF");
    let text = std::fs::read_to_string(cnf_path).unwrap();
    let cnf = if text.starts_with("c orbitcnf-digest") {
        crate::dimacs::parse_cnf_file(&text, cnf_path).unwrap().cnf
    } else {
        crate::dimacs::parse_dimacs(&text, cnf_path).unwrap().0
    };
    let m = cnf.num_clauses() as u64;
    for format in [LratFormat::Text, LratFormat::Binary] {
        let out_path = format!("{proof_path}.trimmed.{format:?}");
        let t = Instant::now();
        let file = std::fs::File::open(proof_path).unwrap();
        let out = std::io::BufWriter::new(std::fs::File::create(&out_path).unwrap());
        let s = trim(file, m, cnf.num_vars(), out, format).unwrap();
        let trim_s = t.elapsed().as_secs_f64();
        let t = Instant::now();
        let c = crate::proof::check_lrat_file(
            &cnf,
            std::path::Path::new(&out_path),
            &Default::default(),
        )
        .unwrap();
        println!(
            "{format:?}: kept {} of {} additions, {} bytes, trim {trim_s:.2} s, check {:.2} s ({} steps)",
            s.kept,
            s.added,
            s.bytes,
            t.elapsed().as_secs_f64(),
            c.steps
        );
    }
}
