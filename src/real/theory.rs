//! The arithmetic behind the skeleton: is a set of tight atoms realisable in R^n?
//!
//! Asserted atoms `T(i, j, c)` ("`x_{j,c} − x_{i,c} = D_κ(i,j)`") together with
//! the background `|x_{j,c} − x_{i,c}| ≤ D_κ(i,j)` (every pair, every
//! coordinate) and the normalisation `D_k ≥ 1`, `D_1 ≤ D_u` (units `u`) form a
//! linear system over `(x, D)`. Negated atoms are never asserted: the
//! background already says `≤`, and a solution of the system with *more*
//! tight pairs than the skeleton's model is still an isometric cycle.
//!
//! # Method
//!
//! For a fixed profile `D`, each coordinate is a system of difference
//! constraints on a complete graph of `p` nodes: the edge `u → v` says
//! `x_v − x_u ≤ w(u, v)` with `w = −D_κ` when `T(v, u, c)` is asserted and
//! `w = +D_κ` otherwise. It is feasible iff no cycle has negative weight, and
//! then shortest-path potentials are a solution (R. Bellman, On a routing
//! problem, Quart. Appl. Math. 16 (1958) [recalled]). A cycle's weight is a
//! linear form `a·D` with integer `a`, so the whole system is feasible iff
//! some `D` satisfies the normalisation and `a·D ≥ 0` for every cycle.
//!
//! The theory keeps a candidate integer profile `D*` and potentials per
//! coordinate. A new atom is checked incrementally (Dijkstra on reduced
//! costs, as in S. Cotton and O. Maler, Fast and flexible difference
//! constraint propagation for DPLL(T), SAT 2006 [recalled]). A negative cycle
//! becomes a *cut* `a·D ≥ 0` in the exact simplex over `D` ([`super::lp`]);
//! if the simplex finds a new `D*`, all potentials are recomputed
//! (Bellman–Ford), otherwise its conflict row gives Farkas multipliers over
//! cuts and normalisation bounds, and every cut is a sum of edge constraints,
//! so the multipliers carry over to atoms and background constraints: a
//! [`Lemma`]. Nothing here decides a verdict alone: lemmas are re-checked by
//! [`super::farkas_check`], feasible answers by [`crate::verify::check_orbit`].

use std::collections::HashMap;

use num_bigint::BigInt;
use num_integer::Integer;
use num_rational::BigRational;
use num_traits::{One, Signed, ToPrimitive, Zero};

use super::lp::{ExactLp, Side};
use super::skeleton::kappa;

/// A theory lemma: not all of `atoms` hold, with the Farkas certificate.
///
/// Rows in `≤` form (see `encodings/real-space.md` §5): atom `T(i,j,c)` is
/// `x_{i,c} − x_{j,c} + D_κ ≤ 0`; background `(u, v, c)` is
/// `x_{v,c} − x_{u,c} − D_κ ≤ 0`; `norm k` is `−D_k ≤ −1`; `unit u` is
/// `D_1 − D_u ≤ 0`. The nonnegative integer combination has every variable
/// coefficient 0 and a negative right-hand side.
#[derive(Clone, Debug, PartialEq, Eq)]
pub struct Lemma {
    /// The atoms `(i, j, c)`, with their multipliers.
    pub atoms: Vec<((usize, usize, usize), BigInt)>,
    /// Background rows `(u, v, c)`, with their multipliers.
    pub background: Vec<((usize, usize, usize), BigInt)>,
    /// Normalisation rows `D_k ≥ 1` (`k` is the class, 1-based), with multipliers.
    pub norm: Vec<(usize, BigInt)>,
    /// Normalisation rows `D_1 ≤ D_u` (`u` is the class), with multipliers.
    pub unit: Vec<(usize, BigInt)>,
}

/// What a failed check returns.
#[derive(Debug)]
pub enum TheoryError {
    /// The asserted atoms are infeasible: a lemma explains why.
    Conflict(Lemma),
    /// Numbers grew past what the potentials can hold, or an invariant broke.
    Internal(String),
}

/// Counters for reports and measurements.
#[derive(Clone, Debug, Default, serde::Serialize)]
pub struct TheoryStats {
    /// Calls of [`Theory::check`].
    pub checks: u64,
    /// Negative cycles turned into cuts.
    pub cuts: u64,
    /// Simplex checks.
    pub lp_checks: u64,
    /// Conflicts returned.
    pub conflicts: u64,
    /// Full Bellman–Ford recomputations of one coordinate.
    pub full_recomputes: u64,
}

/// A cut: a negative cycle in one coordinate, kept as the reason of a bound.
#[derive(Clone, Debug)]
struct Cut {
    atoms: Vec<(usize, usize, usize)>,
    background: Vec<(usize, usize, usize)>,
    /// gcd of the cycle's coefficients; the row is the cycle divided by it.
    g: i64,
    row: usize,
    stamp: usize,
}

/// The theory solver (see the module doc).
#[derive(Clone, Debug)]
pub struct Theory {
    n: usize,
    p: usize,
    m: usize,
    kap: Vec<usize>,
    d: Vec<i64>,
    pot: Vec<i64>,
    tight: Vec<bool>,
    dirty: Vec<bool>,
    asserted: Vec<(usize, usize, usize)>,
    processed: usize,
    cuts: Vec<Cut>,
    rows: HashMap<Vec<i64>, usize>,
    owner: HashMap<usize, usize>,
    unit_rows: HashMap<usize, usize>,
    lp: ExactLp,
    /// Counters.
    pub stats: TheoryStats,
}

/// Largest profile value the potentials accept (keeps all sums far from i64 overflow).
const MAX_D: i64 = 1 << 40;

impl Theory {
    /// The theory for dimension `n` and period `p ≥ 2`.
    pub fn new(n: usize, p: usize) -> Theory {
        let m = p / 2;
        let mut kap = vec![0; p * p];
        for i in 0..p {
            for j in 0..p {
                kap[i * p + j] = kappa(i, j, p);
            }
        }
        let mut lp = ExactLp::new(m);
        let mut unit_rows = HashMap::new();
        for u in 2..=m {
            if u.gcd(&p) == 1 {
                let mut a = vec![0i64; m];
                a[0] = 1;
                a[u - 1] = -1;
                let s = lp.add_row(&a);
                lp.set_zero_bound(s, true, true);
                unit_rows.insert(s, u);
            }
        }
        Theory {
            n,
            p,
            m,
            kap,
            d: vec![1; m],
            pot: vec![0; n * p],
            tight: vec![false; n * p * p],
            dirty: vec![true; n],
            asserted: Vec::new(),
            processed: 0,
            cuts: Vec::new(),
            rows: HashMap::new(),
            owner: HashMap::new(),
            unit_rows,
            lp,
            stats: TheoryStats::default(),
        }
    }

    /// Number of atoms asserted.
    pub fn num_asserted(&self) -> usize {
        self.asserted.len()
    }

    /// Asserts `T(i, j, c)`; it is examined by the next [`Theory::check`].
    pub fn assert_atom(&mut self, i: usize, j: usize, c: usize) {
        self.asserted.push((i, j, c));
    }

    /// Retracts atoms until `len` remain (and every cut that may depend on the retracted ones).
    pub fn backtrack(&mut self, len: usize) {
        while self.asserted.len() > len {
            let idx = self.asserted.len() - 1;
            let (i, j, c) = self.asserted[idx];
            if idx < self.processed {
                self.tight[(c * self.p + i) * self.p + j] = false;
            }
            self.asserted.pop();
        }
        self.processed = self.processed.min(len);
        while self.cuts.last().is_some_and(|k| k.stamp > len) {
            if let Some(k) = self.cuts.pop() {
                let idx = self.cuts.len();
                if self.owner.get(&k.row) == Some(&idx) {
                    self.owner.remove(&k.row);
                    self.lp.set_zero_bound(k.row, false, false);
                }
            }
        }
    }

    fn w(&self, c: usize, u: usize, v: usize) -> i64 {
        let d = self.d[self.kap[u * self.p + v] - 1];
        if self.tight[(c * self.p + v) * self.p + u] {
            -d
        } else {
            d
        }
    }

    /// The current integer profile `D*` (a positive multiple of a feasible profile).
    pub fn profile(&self) -> &[i64] {
        &self.d
    }

    /// The potentials of coordinate `c` (a solution for `D*` after a successful check).
    pub fn potentials(&self, c: usize) -> &[i64] {
        &self.pot[c * self.p..(c + 1) * self.p]
    }

    /// Re-checks, edge by edge, that the potentials solve every coordinate's
    /// system under `D*` with every asserted atom tight; names the first violation.
    pub fn audit(&self) -> Result<(), String> {
        let p = self.p;
        if self.processed != self.asserted.len() || self.dirty.iter().any(|&x| x) {
            return Err("the theory has unexamined atoms".into());
        }
        for c in 0..self.n {
            for u in 0..p {
                for v in 0..p {
                    if u != v && self.pot[c * p + v] - self.pot[c * p + u] > self.w(c, u, v) {
                        return Err(format!("edge {u} -> {v} in coordinate {c} is violated"));
                    }
                }
            }
        }
        for &(i, j, c) in &self.asserted {
            if !self.tight[(c * p + i) * p + j] {
                return Err(format!("atom T({i},{j},{c}) is asserted but not marked"));
            }
        }
        Ok(())
    }

    /// Examines every atom asserted since the last call.
    ///
    /// # Errors
    /// [`TheoryError::Conflict`] with a lemma over asserted atoms when they are
    /// infeasible; [`TheoryError::Internal`] when numbers grow too large.
    pub fn check(&mut self) -> Result<(), TheoryError> {
        self.stats.checks += 1;
        let mut rounds = 0u64;
        loop {
            rounds += 1;
            if rounds > 1_000_000 {
                return Err(TheoryError::Internal("cut loop does not settle".into()));
            }
            if self.dirty.iter().any(|&x| x) {
                // pending atoms join their coordinate's recomputation
                while self.processed < self.asserted.len() {
                    let (i, j, c) = self.asserted[self.processed];
                    self.tight[(c * self.p + i) * self.p + j] = true;
                    self.dirty[c] = true;
                    self.processed += 1;
                }
                let mut found = None;
                for c in 0..self.n {
                    if self.dirty[c] {
                        self.stats.full_recomputes += 1;
                        match self.bellman_ford(c)? {
                            None => self.dirty[c] = false,
                            Some(cycle) => {
                                found = Some((c, cycle));
                                break;
                            }
                        }
                    }
                }
                if let Some((c, cycle)) = found {
                    let stamp = self.asserted.len();
                    self.add_cut(c, &cycle, None, stamp)?;
                    continue;
                }
            }
            let mut again = false;
            while self.processed < self.asserted.len() {
                let (i, j, c) = self.asserted[self.processed];
                match self.incremental(i, j, c) {
                    None => {
                        self.tight[(c * self.p + i) * self.p + j] = true;
                        self.processed += 1;
                    }
                    Some(path) => {
                        let stamp = self.processed + 1;
                        self.add_cut(c, &path, Some((i, j)), stamp)?;
                        again = true;
                        break;
                    }
                }
            }
            if !again {
                return Ok(());
            }
        }
    }

    /// Shortest-path potentials for coordinate `c` from the current ones, or a
    /// negative cycle as a closed node sequence `v_0 → v_1 → … → v_0` (listed
    /// without repeating `v_0`).
    fn bellman_ford(&mut self, c: usize) -> Result<Option<Vec<usize>>, TheoryError> {
        let p = self.p;
        let mut pi = self.pot[c * p..(c + 1) * p].to_vec();
        let mut parent = vec![usize::MAX; p];
        for _ in 0..p {
            let mut last = None;
            for u in 0..p {
                for v in 0..p {
                    if u != v {
                        let nv = pi[u] + self.w(c, u, v);
                        if nv < pi[v] {
                            pi[v] = nv;
                            parent[v] = u;
                            last = Some(v);
                        }
                    }
                }
            }
            if last.is_none() {
                self.pot[c * p..(c + 1) * p].copy_from_slice(&pi);
                return Ok(None);
            }
        }
        // Still relaxing after p rounds: the parent graph has a cycle, and it is negative.
        for start in 0..p {
            let mut seen = vec![false; p];
            let mut x = start;
            while x != usize::MAX && !seen[x] {
                seen[x] = true;
                x = parent[x];
            }
            if x == usize::MAX {
                continue;
            }
            let mut cycle = vec![x];
            let mut y = parent[x];
            while y != x {
                cycle.push(y);
                y = parent[y];
            }
            // parents point backwards: reverse to follow the edges forwards
            cycle.reverse();
            return Ok(Some(cycle));
        }
        Err(TheoryError::Internal(format!(
            "Bellman-Ford in coordinate {c} still relaxes but its parent graph has no cycle"
        )))
    }

    /// Checks the new atom `T(i, j, c)` (edge `j → i`, weight `−D`). Returns a
    /// path `i → … → j` closing a negative cycle with the new edge, or `None`
    /// after updating the potentials.
    fn incremental(&mut self, i: usize, j: usize, c: usize) -> Option<Vec<usize>> {
        let p = self.p;
        let base = c * p;
        let d = self.d[self.kap[i * p + j] - 1];
        let gamma = self.pot[base + j] - d - self.pot[base + i];
        if gamma >= 0 {
            return None;
        }
        let limit = -gamma;
        let mut dist = vec![i64::MAX; p];
        let mut par = vec![usize::MAX; p];
        let mut done = vec![false; p];
        dist[i] = 0;
        let mut settled = Vec::new();
        loop {
            let mut u = usize::MAX;
            for v in 0..p {
                if !done[v] && dist[v] < limit && (u == usize::MAX || dist[v] < dist[u]) {
                    u = v;
                }
            }
            if u == usize::MAX {
                break;
            }
            if u == j {
                let mut path = vec![j];
                let mut x = j;
                while x != i {
                    x = par[x];
                    path.push(x);
                }
                path.reverse();
                return Some(path);
            }
            done[u] = true;
            settled.push(u);
            for v in 0..p {
                if v != u && !done[v] {
                    let r = self.pot[base + u] + self.w(c, u, v) - self.pot[base + v];
                    let nd = dist[u] + r;
                    if nd < dist[v] {
                        dist[v] = nd;
                        par[v] = u;
                    }
                }
            }
        }
        for v in settled {
            self.pot[base + v] += gamma + dist[v];
        }
        None
    }

    /// Turns the cycle into a cut, asserts it, and re-solves the simplex.
    /// `extra = Some((i, j))` closes the path `i → … → j` with the new atom
    /// `T(i, j, c)` (edge `j → i`); `None` means `nodes` is a closed cycle.
    fn add_cut(
        &mut self,
        c: usize,
        nodes: &[usize],
        extra: Option<(usize, usize)>,
        stamp: usize,
    ) -> Result<(), TheoryError> {
        let p = self.p;
        let mut coeffs = vec![0i64; self.m];
        let mut atoms = Vec::new();
        let mut background = Vec::new();
        let steps = match extra {
            Some(_) => nodes.len() - 1,
            None => nodes.len(),
        };
        let mut weight = 0i64;
        for s in 0..steps {
            let (u, v) = (nodes[s], nodes[(s + 1) % nodes.len()]);
            let k = self.kap[u * p + v];
            weight += self.w(c, u, v);
            if self.tight[(c * p + v) * p + u] {
                atoms.push((v, u, c));
                coeffs[k - 1] -= 1;
            } else {
                background.push((u, v, c));
                coeffs[k - 1] += 1;
            }
        }
        if let Some((i, j)) = extra {
            let k = self.kap[i * p + j];
            weight -= self.d[k - 1];
            atoms.push((i, j, c));
            coeffs[k - 1] -= 1;
        }
        if weight >= 0 {
            return Err(TheoryError::Internal(format!(
                "cycle of weight {weight} in coordinate {c} reported as negative"
            )));
        }
        self.stats.cuts += 1;
        let g = coeffs.iter().fold(0i64, |g, &a| g.gcd(&a)).max(1);
        let reduced: Vec<i64> = coeffs.iter().map(|a| a / g).collect();
        let row = match self.rows.get(&reduced) {
            Some(&r) => r,
            None => {
                let r = self.lp.add_row(&reduced);
                self.rows.insert(reduced, r);
                r
            }
        };
        if self.owner.contains_key(&row) {
            return Err(TheoryError::Internal(
                "a cut already in force is violated by the current profile".into(),
            ));
        }
        let idx = self.cuts.len();
        self.cuts.push(Cut {
            atoms,
            background,
            g,
            row,
            stamp,
        });
        self.owner.insert(row, idx);
        self.lp.set_zero_bound(row, false, true);
        self.stats.lp_checks += 1;
        match self.lp.check() {
            Some(conflict) => {
                self.stats.conflicts += 1;
                Err(TheoryError::Conflict(self.lemma(&conflict.terms)?))
            }
            None => {
                self.set_profile()?;
                Ok(())
            }
        }
    }

    /// Scales the simplex's rational profile to integers and marks every coordinate for recomputation.
    fn set_profile(&mut self) -> Result<(), TheoryError> {
        let q = self.lp.profile();
        let l = q.iter().fold(BigInt::one(), |l, x| l.lcm(x.denom()));
        let ints: Vec<BigInt> = q.iter().map(|x| x.numer() * (&l / x.denom())).collect();
        let g = ints.iter().fold(BigInt::zero(), |g, x| g.gcd(x));
        let mut d = Vec::with_capacity(ints.len());
        for x in &ints {
            let v = (x / &g).to_i64().filter(|&v| (1..=MAX_D).contains(&v));
            d.push(v.ok_or_else(|| {
                TheoryError::Internal(format!("profile value {x} out of range after scaling"))
            })?);
        }
        self.d = d;
        self.dirty.iter_mut().for_each(|x| *x = true);
        Ok(())
    }

    /// Converts the simplex's conflict into a lemma with integer multipliers.
    fn lemma(&self, terms: &[(usize, Side, BigRational)]) -> Result<Lemma, TheoryError> {
        let mut atoms: HashMap<(usize, usize, usize), BigRational> = HashMap::new();
        let mut bg: HashMap<(usize, usize, usize), BigRational> = HashMap::new();
        let mut norm: Vec<(usize, BigRational)> = Vec::new();
        let mut unit: Vec<(usize, BigRational)> = Vec::new();
        for (v, side, mu) in terms {
            if *v < self.m && *side == Side::Lower {
                norm.push((v + 1, mu.clone()));
            } else if let (Some(&u), Side::Upper) = (self.unit_rows.get(v), side) {
                unit.push((u, mu.clone()));
            } else if let (Some(&idx), Side::Lower) = (self.owner.get(v), side) {
                let cut = &self.cuts[idx];
                let share = mu / BigRational::from_integer(cut.g.into());
                for a in &cut.atoms {
                    *atoms.entry(*a).or_insert_with(BigRational::zero) += &share;
                }
                for b in &cut.background {
                    *bg.entry(*b).or_insert_with(BigRational::zero) += &share;
                }
            } else {
                return Err(TheoryError::Internal(format!(
                    "simplex conflict names variable {v} ({side:?}) without a bound in force"
                )));
            }
        }
        let all = atoms
            .values()
            .chain(bg.values())
            .chain(norm.iter().map(|x| &x.1))
            .chain(unit.iter().map(|x| &x.1));
        let l = all.fold(BigInt::one(), |l, x| l.lcm(x.denom()));
        let int = |x: &BigRational| x.numer() * (&l / x.denom());
        let mut out = Lemma {
            atoms: atoms.iter().map(|(a, x)| (*a, int(x))).collect(),
            background: bg.iter().map(|(a, x)| (*a, int(x))).collect(),
            norm: norm.iter().map(|(k, x)| (*k, int(x))).collect(),
            unit: unit.iter().map(|(k, x)| (*k, int(x))).collect(),
        };
        let g = out
            .atoms
            .iter()
            .map(|x| &x.1)
            .chain(out.background.iter().map(|x| &x.1))
            .chain(out.norm.iter().map(|x| &x.1))
            .chain(out.unit.iter().map(|x| &x.1))
            .fold(BigInt::zero(), |g, x| g.gcd(x));
        if g > BigInt::one() {
            for x in out.atoms.iter_mut().map(|x| &mut x.1) {
                *x /= &g;
            }
            for x in out.background.iter_mut().map(|x| &mut x.1) {
                *x /= &g;
            }
            for x in out.norm.iter_mut().map(|x| &mut x.1) {
                *x /= &g;
            }
            for x in out.unit.iter_mut().map(|x| &mut x.1) {
                *x /= &g;
            }
        }
        out.atoms.retain(|x| x.1.is_positive());
        out.background.retain(|x| x.1.is_positive());
        out.atoms.sort();
        out.background.sort();
        out.norm.sort();
        out.unit.sort();
        Ok(out)
    }
}
