//! The propositional skeleton of the real question (formulation `real-skeleton/1`).
//!
//! The question: do reals `x_{i,c}` (`i ∈ Z_p`, `c < n`) and a profile
//! `D_1..D_m > 0` (`m = ⌊p/2⌋`) exist with `‖x_i − x_j‖∞ = D_κ(i,j)` for every
//! pair, `κ(i, j) = min(|i − j|, p − |i − j|)`? The skeleton abstracts it to
//! Booleans; the arithmetic is left to the theory ([`super::theory`]).
//!
//! # Variables
//!
//! * `T(i, j, c)` for ordered pairs `i ≠ j` and `c < n`: *the pair is tight
//!   upward from `i` to `j` in coordinate `c`*, `x_{j,c} − x_{i,c} = D_κ(i,j)`
//!   (header text `tight i=I j=J c=C`). The brief's `U(i,j,c)` is `T(i,j,c)`
//!   and its `L(i,j,c)` is `T(j,i,c)` for `i < j`. DIMACS number
//!   `1 + c·p(p−1) + i·(p−1) + (j if j < i else j − 1)` ([`tight_var`]).
//!   `n·p(p−1)` variables.
//! * `A(t, c)` (family `real-sym-first`, when symmetry is on), for the `t`-th
//!   pair `(i, j)`, `i < j`, in lexicographic order ([`pair_index`]) and every
//!   `c`: *some pair `s ≤ t` is tight in `c` (either way)*. Only the
//!   implication from `A` to its reading is encoded. `P·n` variables, where
//!   `P = p(p−1)/2`, numbered after the `T`s, `t`-major.
//!
//! # Clauses (families, in file order)
//!
//! * `real-witness`: `⋁_c T(i,j,c) ∨ T(j,i,c)` for each pair `i < j`: some
//!   coordinate attains the distance. `P` clauses.
//! * `real-antisym`: `¬T(i,j,c) ∨ ¬T(j,i,c)`: `x_j − x_i = D = x_i − x_j`
//!   would give `D = 0`. `n·P` clauses.
//! * `real-chain` (option `transitivity`): `¬T(a,b,c) ∨ ¬T(b,d,c) ∨ T(a,d,c)`
//!   for distinct `a, b, d`: tight steps add up, and the triangle inequality
//!   of the norm with the bound `|x_d − x_a| ≤ D_κ(a,d)` makes the sum tight.
//!   `n·p(p−1)(p−2)` clauses.
//! * `real-sym-first` (option `symmetry`): coordinates are numbered in order
//!   of their first tight pair, and each coordinate's first tight pair is
//!   tight upward. Clauses, with `T↑(t,c) = T(i,j,c)`, `T↓(t,c) = T(j,i,c)`
//!   for the `t`-th pair `(i, j)`:
//!   - `¬A(t,c) ∨ T↑(t,c) ∨ T↓(t,c) ∨ A(t−1,c)` (no `A(−1,c)`): `P·n`;
//!   - `¬T↑(t,c+1) ∨ A(t,c)` and `¬T↓(t,c+1) ∨ A(t,c)` for `c + 1 < n`:
//!     `2P·(n−1)`;
//!   - `¬T↓(t,c) ∨ A(t−1,c)` (the unit `¬T↓(0,c)` for `t = 0`): `P·n`;
//!   - the unit `T(0,1,0)`, implied by the others with the witness of the
//!     first pair: 1.
//!
//! Total without options: `P + n·P`; each option adds its counts above
//! ([`count`] evaluates them; `counts_are_exact` pins them).
//!
//! # Why every clause is sound
//!
//! Each clause holds for the true truth values of some image of every
//! isometric p-cycle under the symmetries; the arguments are written out in
//! `encodings/real-space.md` §3–§4 and checked by brute force
//! (`tests::every_small_cycle_has_an_image_satisfying_the_skeleton`).

use std::io::Write as _;

use serde::{Deserialize, Serialize};

use crate::cnf::{Cnf, FamilyCount, Lit, Var};
use crate::error::{Error, Result};
use crate::varmap::{Meaning, VarMap};

/// Name and version of the formulation, recorded in every skeleton header.
pub const FORMULATION: &str = "real-skeleton/1";

/// Largest dimension accepted.
pub const MAX_DIM: usize = 16;
/// Largest period accepted.
pub const MAX_PERIOD: usize = 256;

/// Which optional clause families the skeleton contains (all sound; see the module doc).
#[derive(Clone, Debug, PartialEq, Eq, Serialize, Deserialize)]
pub struct SkeletonOptions {
    /// Family `real-chain` (tight steps compose). Default on.
    pub transitivity: bool,
    /// Family `real-sym-first` (signed coordinate permutations). Default on.
    pub symmetry: bool,
}

impl Default for SkeletonOptions {
    fn default() -> Self {
        SkeletonOptions {
            transitivity: true,
            symmetry: true,
        }
    }
}

/// A built skeleton: the CNF, its variable map and per-family counts.
#[derive(Clone, Debug)]
pub struct Skeleton {
    /// Dimension.
    pub n: usize,
    /// Period.
    pub p: usize,
    /// The options it was built with.
    pub options: SkeletonOptions,
    /// The clauses.
    pub cnf: Cnf,
    /// Meaning of every variable.
    pub map: VarMap,
    /// Variables and clauses of each family, in file order.
    pub families: Vec<FamilyCount>,
}

/// The offset class `κ(i, j) = min(|i − j|, p − |i − j|)`, in `1..=⌊p/2⌋` for `i ≠ j`.
pub fn kappa(i: usize, j: usize, p: usize) -> usize {
    let d = i.abs_diff(j) % p;
    d.min(p - d)
}

/// Number of unordered pairs, `p(p−1)/2`.
pub fn num_pairs(p: usize) -> usize {
    p * p.saturating_sub(1) / 2
}

/// Index of the pair `i < j` in lexicographic order `(0,1), (0,2), …, (1,2), …`.
pub fn pair_index(p: usize, i: usize, j: usize) -> usize {
    // pairs before row i: Σ_{r<i} (p−1−r) = i(p−1) − i(i−1)/2
    i * (p - 1) - i * i.saturating_sub(1) / 2 + (j - i - 1)
}

/// The pairs `i < j` in [`pair_index`] order.
pub fn pairs(p: usize) -> impl Iterator<Item = (usize, usize)> {
    (0..p).flat_map(move |i| (i + 1..p).map(move |j| (i, j)))
}

/// The variable `T(i, j, c)` (`i ≠ j`, both `< p`, `c < n`).
pub fn tight_var(n: usize, p: usize, i: usize, j: usize, c: usize) -> Var {
    debug_assert!(i != j && i < p && j < p && c < n);
    let col = if j < i { j } else { j - 1 };
    Var::from_dimacs((1 + c * p * (p - 1) + i * (p - 1) + col) as u32)
}

/// Checks that `(n, p)` is a question the skeleton accepts.
///
/// # Errors
/// [`Error::Question`] for `n = 0`, `p < 2`, or sizes above [`MAX_DIM`], [`MAX_PERIOD`].
pub fn check_size(n: usize, p: usize) -> Result<()> {
    if n == 0 || n > MAX_DIM {
        return Err(Error::Question(format!(
            "real space: dimension {n} is outside 1..={MAX_DIM}"
        )));
    }
    if !(2..=MAX_PERIOD).contains(&p) {
        return Err(Error::Question(format!(
            "real space: period {p} is outside 2..={MAX_PERIOD} (period 1 needs no skeleton)"
        )));
    }
    Ok(())
}

/// Exact variable and clause counts of every family, in file order.
pub fn count(n: usize, p: usize, o: &SkeletonOptions) -> Vec<FamilyCount> {
    let (n64, p64) = (n as u64, p as u64);
    let pp = num_pairs(p) as u64;
    let fc = |family: &str, vars: u64, clauses: u64| FamilyCount {
        family: family.into(),
        vars,
        clauses,
    };
    let mut out = vec![
        fc("real-witness", n64 * p64 * (p64 - 1), pp),
        fc("real-antisym", 0, n64 * pp),
    ];
    if o.transitivity {
        out.push(fc(
            "real-chain",
            0,
            n64 * p64 * (p64 - 1) * p64.saturating_sub(2),
        ));
    }
    if o.symmetry {
        out.push(fc(
            "real-sym-first",
            pp * n64,
            pp * n64 + 2 * pp * (n64 - 1) + pp * n64 + 1,
        ));
    }
    out
}

/// Builds the skeleton for dimension `n` and period `p`.
///
/// # Errors
/// [`Error::Question`] from [`check_size`].
pub fn build(n: usize, p: usize, options: &SkeletonOptions) -> Result<Skeleton> {
    check_size(n, p)?;
    let mut map = VarMap::new();
    for c in 0..n {
        for i in 0..p {
            for j in (0..p).filter(|&j| j != i) {
                let v = map.fresh(Meaning::Tight { i, j, c });
                debug_assert_eq!(v, tight_var(n, p, i, j, c));
            }
        }
    }
    let t = |i: usize, j: usize, c: usize| tight_var(n, p, i, j, c);
    let mut cnf = Cnf::new();
    cnf.reserve_vars(map.len() as u32);
    let mut families = Vec::new();
    let mut mark = |cnf: &Cnf, name: &str, vars: u64, since: usize| {
        families.push(FamilyCount {
            family: name.into(),
            vars,
            clauses: (cnf.num_clauses() - since) as u64,
        });
    };

    let start = cnf.num_clauses();
    for (i, j) in pairs(p) {
        let c: Vec<Lit> = (0..n)
            .flat_map(|c| [t(i, j, c).pos(), t(j, i, c).pos()])
            .collect();
        cnf.add_clause(&c);
    }
    mark(&cnf, "real-witness", map.len() as u64, start);

    let start = cnf.num_clauses();
    for c in 0..n {
        for (i, j) in pairs(p) {
            cnf.add_clause(&[t(i, j, c).neg(), t(j, i, c).neg()]);
        }
    }
    mark(&cnf, "real-antisym", 0, start);

    if options.transitivity {
        let start = cnf.num_clauses();
        for c in 0..n {
            for a in 0..p {
                for b in (0..p).filter(|&b| b != a) {
                    for d in (0..p).filter(|&d| d != a && d != b) {
                        cnf.add_clause(&[t(a, b, c).neg(), t(b, d, c).neg(), t(a, d, c).pos()]);
                    }
                }
            }
        }
        mark(&cnf, "real-chain", 0, start);
    }

    if options.symmetry {
        let start = cnf.num_clauses();
        let first = map.len();
        let all: Vec<(usize, usize)> = pairs(p).collect();
        let mut index = 0u64;
        let mut avar = Vec::with_capacity(all.len() * n);
        for _ in &all {
            for _ in 0..n {
                avar.push(map.fresh(Meaning::Aux {
                    family: "real-sym-first".into(),
                    index,
                }));
                index += 1;
            }
        }
        cnf.reserve_vars(map.len() as u32);
        let a = |s: usize, c: usize| avar[s * n + c];
        for (s, &(i, j)) in all.iter().enumerate() {
            for c in 0..n {
                let mut cl = vec![a(s, c).neg(), t(i, j, c).pos(), t(j, i, c).pos()];
                if s > 0 {
                    cl.push(a(s - 1, c).pos());
                }
                cnf.add_clause(&cl);
            }
            for c in 0..n.saturating_sub(1) {
                cnf.add_clause(&[t(i, j, c + 1).neg(), a(s, c).pos()]);
                cnf.add_clause(&[t(j, i, c + 1).neg(), a(s, c).pos()]);
            }
            for c in 0..n {
                if s == 0 {
                    cnf.add_clause(&[t(j, i, c).neg()]);
                } else {
                    cnf.add_clause(&[t(j, i, c).neg(), a(s - 1, c).pos()]);
                }
            }
        }
        cnf.add_clause(&[t(0, 1, 0).pos()]);
        mark(&cnf, "real-sym-first", (map.len() - first) as u64, start);
    }
    Ok(Skeleton {
        n,
        p,
        options: options.clone(),
        cnf,
        map,
        families,
    })
}

/// The question line of the header: `{"space":"real","dim":N,"period":P}`.
pub fn question_json(n: usize, p: usize) -> String {
    format!("{{\"space\":\"real\",\"dim\":{n},\"period\":{p}}}")
}

/// Renders the skeleton as DIMACS with an orbitcnf header (digest, version,
/// formulation, question, options, families, the variable map), one clause a line.
pub fn render(sk: &Skeleton) -> Vec<u8> {
    let mut body = Vec::with_capacity(sk.cnf.num_lits() * 6 + sk.map.len() * 28);
    let options = serde_json::to_string(&sk.options).unwrap_or_default();
    let _ = writeln!(
        body,
        "c orbitcnf version={} formulation={FORMULATION}",
        crate::dimacs::VERSION
    );
    let _ = writeln!(body, "c question {}", question_json(sk.n, sk.p));
    let _ = writeln!(body, "c options {options}");
    let _ = writeln!(
        body,
        "c statement an isometric {}-cycle in (R^{}, sup-norm), i.e. a subset of R^{} with a \
         sup-norm nonexpansive map of minimal period {}",
        sk.p, sk.n, sk.n, sk.p
    );
    crate::dimacs::finish_with_header(body, &sk.families, &sk.map, &sk.cnf)
}

/// Reads `(n, p, options)` from the header of a rendered skeleton, so that a
/// checker can re-build it and compare bytes.
///
/// # Errors
/// [`Error::Parse`] when the header lines are missing or malformed.
pub fn read_header(text: &str, path: &str) -> Result<(usize, usize, SkeletonOptions)> {
    let mut q = None;
    let mut o = None;
    for (ln, line) in text.lines().enumerate().take(8) {
        if let Some(rest) = line.strip_prefix("c question ") {
            let v: serde_json::Value = serde_json::from_str(rest)
                .map_err(|e| Error::parse(path, ln + 1, format!("question: {e}")))?;
            let get = |k: &str| v.get(k).and_then(|x| x.as_u64()).map(|x| x as usize);
            if v.get("space").and_then(|s| s.as_str()) != Some("real") {
                return Err(Error::parse(path, ln + 1, "not a real-space question"));
            }
            q = get("dim").zip(get("period"));
        } else if let Some(rest) = line.strip_prefix("c options ") {
            o = Some(
                serde_json::from_str::<SkeletonOptions>(rest)
                    .map_err(|e| Error::parse(path, ln + 1, format!("options: {e}")))?,
            );
        }
    }
    let (n, p) =
        q.ok_or_else(|| Error::parse(path, 0, "no 'c question' line with dim and period"))?;
    let o = o.ok_or_else(|| Error::parse(path, 0, "no 'c options' line"))?;
    Ok((n, p, o))
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn counts_are_exact() {
        for n in 1..=4 {
            for p in 2..=9 {
                for (tr, sy) in [(false, false), (true, false), (false, true), (true, true)] {
                    let o = SkeletonOptions {
                        transitivity: tr,
                        symmetry: sy,
                    };
                    let sk = build(n, p, &o).unwrap();
                    assert_eq!(sk.families, count(n, p, &o), "n={n} p={p} {o:?}");
                    let total: u64 = sk.families.iter().map(|f| f.clauses).sum();
                    assert_eq!(total as usize, sk.cnf.num_clauses());
                    let vars: u64 = sk.families.iter().map(|f| f.vars).sum();
                    assert_eq!(vars as u32, sk.cnf.num_vars());
                }
            }
        }
        // n = 3, p = 9: P = 36. witness 36; antisym 3·36 = 108; chain 3·9·8·7 = 1512;
        // sym 36·3 + 2·36·2 + 36·3 + 1 = 361 clauses over 108 variables; T-variables 3·72 = 216.
        let f = count(3, 9, &SkeletonOptions::default());
        let c: Vec<u64> = f.iter().map(|f| f.clauses).collect();
        let v: Vec<u64> = f.iter().map(|f| f.vars).collect();
        assert_eq!(c, vec![36, 108, 1512, 361]);
        assert_eq!(v, vec![216, 0, 0, 108]);
    }

    #[test]
    fn numbering_and_pairs() {
        assert_eq!(pair_index(5, 0, 1), 0);
        assert_eq!(pair_index(5, 0, 4), 3);
        assert_eq!(pair_index(5, 1, 2), 4);
        assert_eq!(pair_index(5, 3, 4), 9);
        for (t, (i, j)) in pairs(7).enumerate() {
            assert_eq!(pair_index(7, i, j), t);
        }
        let sk = build(2, 4, &SkeletonOptions::default()).unwrap();
        for (v, m) in sk.map.iter() {
            if let Meaning::Tight { i, j, c } = *m {
                assert_eq!(tight_var(2, 4, i, j, c), v);
            }
        }
        assert_eq!(kappa(0, 7, 9), 2);
        assert_eq!(kappa(3, 3, 9), 0);
    }

    #[test]
    fn header_round_trip_and_size_errors() {
        let o = SkeletonOptions {
            transitivity: false,
            symmetry: true,
        };
        let sk = build(2, 5, &o).unwrap();
        let text = String::from_utf8(render(&sk)).unwrap();
        assert_eq!(read_header(&text, "x").unwrap(), (2, 5, o));
        let parsed = crate::dimacs::parse_dimacs(&text, "x").unwrap().0;
        assert_eq!(parsed, sk.cnf);
        assert!(build(0, 5, &SkeletonOptions::default()).is_err());
        assert!(build(2, 1, &SkeletonOptions::default()).is_err());
        assert!(build(2, 1000, &SkeletonOptions::default()).is_err());
    }
}
