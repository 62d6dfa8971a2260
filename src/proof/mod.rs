//! Certificates for "infeasible": unsatisfiability proofs, produced, checked and combined.
//!
//! A model is checked against every clause before orbitcnf believes a
//! "feasible" answer. This module does the same for "infeasible": the bundled
//! solver writes a proof of unsatisfiability ([`produce`]), and orbitcnf checks
//! it with its own LRAT checker ([`lrat`]), which shares no code with the
//! solver or with varisat's checker.
//!
//! * [`lrat`]: LRAT in one place — one streaming reader ([`lrat::read`]),
//!   one writer ([`lrat::write`]), text and binary, and the checker
//!   ([`lrat::check_lrat_read`] and its wrappers), which reports
//!   [`lrat::LratSummary`] or a typed [`lrat::LratError`] with the step and
//!   clause id where it went wrong. It depends only on [`crate::cnf`].
//! * [`produce::solve_with_proof_sinks`] runs varisat 0.2.2 and writes an
//!   LRAT proof (through `varisat-lrat`) and/or a DRAT proof of an UNSAT answer.
//! * [`sequence::solve_in_sequence`] solves many cubes of one formula with
//!   one varisat solver under assumptions and cuts a standalone LRAT proof
//!   of each refuted cube's CNF out of the shared proof.
//! * [`lift`] turns the refutations of cubes into derivations of the cubes'
//!   negations and assembles them with a coverage proof into one proof.
//!
//! Solving and checking meet in [`crate::solve::refute`], the one path that
//! turns a CNF (or a proof written by another program) into a checked proof.
//! A DRAT proof can get a second opinion from an external checker such as
//! `rate` (the tests do this when the `rate` binary is on `PATH`).

pub mod lift;
pub mod lrat;
pub mod produce;
pub mod sequence;
pub mod spool;
#[cfg(test)]
mod tests;

pub use lrat::{
    LratError, LratFormat, LratOptions, LratReason, LratSummary, check_lrat, check_lrat_file,
    check_lrat_read, check_lrat_with,
};
pub use produce::{ProofOutcome, ProofRoute, ProofSinks, solve_with_proof_sinks};

/// Small formulas for the tests of this module.
#[cfg(test)]
pub(crate) mod testgen {
    use crate::cnf::{Cnf, Var};
    use crate::proof::lrat::read::{LratReader, Step};
    use crate::proof::lrat::write::LratWriter;
    use crate::proof::{LratFormat, ProofOutcome, ProofRoute, ProofSinks, solve_with_proof_sinks};
    use crate::solve::Outcome;

    /// The pigeonhole formula PHP(pigeons, holes): unsatisfiable when pigeons > holes.
    /// Variable `i·holes + j + 1` says pigeon `i` sits in hole `j`.
    pub fn php(pigeons: u32, holes: u32) -> Cnf {
        let v = |i: u32, j: u32| Var::from_dimacs(i * holes + j + 1);
        let mut cnf = Cnf::new();
        for i in 0..pigeons {
            let c: Vec<_> = (0..holes).map(|j| v(i, j).pos()).collect();
            cnf.add_clause(&c);
        }
        for j in 0..holes {
            for i in 0..pigeons {
                for k in i + 1..pigeons {
                    cnf.add_clause(&[v(i, j).neg(), v(k, j).neg()]);
                }
            }
        }
        cnf
    }

    /// A deterministic xorshift generator.
    pub struct Rng(pub u64);

    impl Rng {
        /// The next 64 random bits.
        pub fn next(&mut self) -> u64 {
            self.0 ^= self.0 << 13;
            self.0 ^= self.0 >> 7;
            self.0 ^= self.0 << 17;
            self.0
        }

        /// A number in `0..n`.
        pub fn below(&mut self, n: u64) -> u64 {
            self.next() % n
        }
    }

    /// A random 3-CNF over `vars` variables with `clauses` clauses of three distinct variables.
    pub fn random_3sat(vars: u32, clauses: usize, seed: u64) -> Cnf {
        let mut rng = Rng(seed.wrapping_mul(0x9e37_79b9_7f4a_7c15) | 1);
        let mut cnf = Cnf::new();
        cnf.reserve_vars(vars);
        for _ in 0..clauses {
            let mut c = Vec::with_capacity(3);
            while c.len() < 3 {
                let v = Var::from_dimacs(rng.below(u64::from(vars)) as u32 + 1);
                if c.iter().any(|l: &crate::cnf::Lit| l.var() == v) {
                    continue;
                }
                c.push(if rng.next() & 1 == 0 {
                    v.pos()
                } else {
                    v.neg()
                });
            }
            cnf.add_clause(&c);
        }
        cnf
    }

    /// (1∨2), (1∨¬2), (¬1∨2), (¬1∨¬2): ids 1..4.
    pub fn square() -> Cnf {
        let mut cnf = Cnf::new();
        for c in [[1, 2], [1, -2], [-1, 2], [-1, -2]] {
            let c: Vec<crate::cnf::Lit> =
                c.iter().map(|&x| crate::cnf::Lit::from_dimacs(x)).collect();
            cnf.add_clause(&c);
        }
        cnf
    }

    /// A text LRAT refutation of [`square`], with a deletion.
    pub const GOOD: &str = "5 1 0 1 2 0\n5 d 1 2 0\n6 0 5 3 4 0\n";

    /// The steps of a text proof, up to the first that does not parse, in
    /// the binary encoding (what they say is not checked).
    pub fn to_binary(text: impl AsRef<[u8]>) -> Vec<u8> {
        let mut reader = LratReader::new(text.as_ref(), None, i32::MAX as u32).unwrap();
        let mut writer = LratWriter::new(Vec::new(), LratFormat::Binary);
        let mut step = Step::default();
        while let Ok(true) = reader.next_step(&mut step) {
            writer.step(&step).unwrap();
        }
        writer.finish().unwrap().0
    }

    /// The CNF in DIMACS.
    pub fn dimacs(cnf: &Cnf) -> String {
        let mut s = format!("p cnf {} {}\n", cnf.num_vars(), cnf.num_clauses());
        for c in cnf.clauses() {
            s.push_str(&crate::cnf::clause_text(c));
            s.push('\n');
        }
        s
    }

    /// Checker options for proofs whose ids follow the CNF's.
    pub fn strict() -> crate::proof::LratOptions {
        crate::proof::LratOptions {
            ids_follow_cnf: true,
            ..crate::proof::LratOptions::default()
        }
    }

    /// Solves and returns the outcome with the LRAT proof (text or binary).
    pub fn lrat_of(cnf: &Cnf, binary: bool) -> (ProofOutcome, Vec<u8>) {
        let mut proof = Vec::new();
        let sinks = ProofSinks {
            lrat: Some(&mut proof),
            lrat_binary: binary,
            ..ProofSinks::default()
        };
        let out = solve_with_proof_sinks(cnf, sinks, None).unwrap();
        (out, proof)
    }

    pub fn text_lrat(cnf: &Cnf) -> String {
        let (out, proof) = lrat_of(cnf, false);
        assert_eq!(out.outcome, Outcome::Unsat);
        assert_eq!(out.route, ProofRoute::Solver);
        String::from_utf8(proof).unwrap()
    }

    /// The steps of an LRAT proof, as the reader gives them.
    pub fn steps_of(proof: impl AsRef<[u8]>) -> Vec<Step> {
        let mut reader = LratReader::new(proof.as_ref(), None, i32::MAX as u32).unwrap();
        let mut steps = Vec::new();
        let mut step = Step::default();
        while reader.next_step(&mut step).unwrap() {
            steps.push(step.clone());
        }
        steps
    }

    /// `steps` as a text LRAT proof.
    pub fn text_of(steps: &[Step]) -> Vec<u8> {
        let mut writer = LratWriter::new(Vec::new(), LratFormat::Text);
        for s in steps {
            writer.step(s).unwrap();
        }
        writer.finish().unwrap().0
    }

    /// UNSAT random 3-CNFs at the threshold ratio 4.26, found by trying seeds.
    pub fn random_unsat(vars: u32, count: usize) -> Vec<Cnf> {
        let clauses = (f64::from(vars) * 4.26).round() as usize;
        let mut found = Vec::new();
        let mut sat = 0usize;
        for seed in 1.. {
            let cnf = random_3sat(vars, clauses, seed);
            match crate::proof::solve_with_proof_sinks(&cnf, Default::default(), None)
                .unwrap()
                .outcome
            {
                Outcome::Unsat => found.push(cnf),
                Outcome::Sat(m) => {
                    assert_eq!(cnf.first_falsified(&m), None);
                    sat += 1;
                }
                Outcome::Unknown(r) => panic!("{r}"),
            }
            if found.len() == count {
                break;
            }
        }
        let _ = sat;
        found
    }
    /// A CNF from DIMACS clauses.
    pub fn cnf_of(clauses: &[&[i32]]) -> Cnf {
        let mut cnf = Cnf::new();
        for c in clauses {
            let c: Vec<crate::cnf::Lit> =
                c.iter().map(|&x| crate::cnf::Lit::from_dimacs(x)).collect();
            cnf.add_clause(&c);
        }
        cnf
    }
}
