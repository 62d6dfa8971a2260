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
//! problem, Quart. Appl. Math. 16 (1958) \[recalled\]). A cycle's weight is a
//! linear form `a·D` with integer `a`, so the whole system is feasible iff
//! some `D` satisfies the normalisation and `a·D ≥ 0` for every cycle.
//!
//! The theory keeps a candidate integer profile `D*` and potentials per
//! coordinate. A new atom is checked incrementally (Dijkstra on reduced
//! costs, as in S. Cotton and O. Maler, Fast and flexible difference
//! constraint propagation for DPLL(T), SAT 2006 \[recalled\]). A negative cycle
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
use num_traits::{One, ToPrimitive, Zero};

use super::lp::{ExactLp, Side};
use super::skeleton::kappa;

/// A theory lemma over tight atoms and profile facts, with its Farkas
/// certificate (or, for [`Lemma::equilateral`], the index set of the
/// equilateral bound).
///
/// The clause is `F_conclusions… ∨ ¬F_facts… ∨ ¬T_atoms…`. Rows in `≤` form
/// (see `encodings/real-space.md` §5): atom `T(i,j,c)` is
/// `x_{i,c} − x_{j,c} + D_κ ≤ 0`; fact `F_f` (assumed true) is `−a_f·D ≤ 0`;
/// each negated conclusion is the strict row `a_f·D < 0`; background
/// `(u, v, c)` is `x_{v,c} − x_{u,c} − D_κ ≤ 0`; `norm k` is `−D_k ≤ −1`;
/// `unit u` is `D_1 − D_u ≤ 0`. The nonnegative integer combination has
/// every variable coefficient 0 and right-hand side `< 0`, or `= 0` when the
/// strict row takes part.
#[derive(Clone, Debug, PartialEq, Eq)]
pub struct Lemma {
    /// The atoms `(i, j, c)`, with their multipliers.
    pub atoms: Vec<((usize, usize, usize), BigInt)>,
    /// Facts assumed true (negative literals), by index, with multipliers.
    pub facts: Vec<(usize, BigInt)>,
    /// The facts concluded (positive literals), with the multipliers of their strict rows.
    pub conclusions: Vec<(usize, BigInt)>,
    /// Background rows `(u, v, c)`, with their multipliers.
    pub background: Vec<((usize, usize, usize), BigInt)>,
    /// Normalisation rows `D_k ≥ 1` (`k` is the class, 1-based), with multipliers.
    pub norm: Vec<(usize, BigInt)>,
    /// Normalisation rows `D_1 ≤ D_u` (`u` is the class), with multipliers.
    pub unit: Vec<(usize, BigInt)>,
    /// `Some(pairs)` for a lemma justified by the top-pattern argument
    /// instead of a Farkas combination: the clause is over order facts only
    /// and says that the classes of these `n + 1` pairs are not all the
    /// largest distance while the named cross classes are shorter
    /// (`encodings/real-space.md` §5, "Top-pattern lemmas").
    pub fooling: Option<Vec<(usize, usize)>>,
    /// `Some(I)` for a lemma justified by the equilateral bound instead of
    /// a Farkas combination: the clause is `¬F_facts…` only, the facts say
    /// `D_k ≥ D_l` and together force every class between two indices of
    /// `I` to the same value, and `|I| > 2^n` (`encodings/real-space.md`
    /// §5, "Equilateral lemmas"). The multipliers are then unused.
    pub equilateral: Option<Vec<usize>>,
}

impl Lemma {
    /// The lemma "these atoms, with these background rows, imply fact
    /// `fact`", whose strict row takes multiplier `g`.
    fn implies(
        atoms: Vec<((usize, usize, usize), BigInt)>,
        background: Vec<((usize, usize, usize), BigInt)>,
        fact: usize,
        g: BigInt,
    ) -> Lemma {
        Lemma {
            atoms,
            facts: Vec::new(),
            conclusions: vec![(fact, g)],
            background,
            norm: Vec::new(),
            unit: Vec::new(),
            equilateral: None,
            fooling: None,
        }
    }
}

/// What a failed check returns.
#[derive(Debug)]
pub enum TheoryError {
    /// The asserted atoms and facts are infeasible: a lemma explains why.
    Conflict(Box<Lemma>),
    /// Numbers grew past what the potentials can hold, or an invariant broke.
    Internal(String),
}

/// What a successful check returns.
#[derive(Debug)]
pub enum Step {
    /// Everything asserted is consistent; potentials solve every coordinate.
    Done,
    /// The asserted atoms imply the profile fact `fact` (perhaps new: then it
    /// is the last of [`Theory::facts`]); `lemma` is the implication.
    Implied {
        /// The fact's index.
        fact: usize,
        /// The lemma `F_fact ∨ ¬T…`.
        lemma: Lemma,
    },
    /// Each listed fact is inconsistent with the facts in force: its lemma is
    /// `¬F_fact ∨ ¬F…` over facts in force.
    Refuted(Vec<(usize, Lemma)>),
}

/// Something asserted: a tight atom or a profile fact.
#[derive(Clone, Copy, Debug, PartialEq, Eq, Hash)]
pub enum Item {
    /// `T(i, j, c)`.
    Tight(usize, usize, usize),
    /// The profile fact with this index.
    Fact(usize),
}

/// Counters for reports and measurements.
#[derive(Clone, Debug, Default, serde::Serialize)]
pub struct TheoryStats {
    /// Calls of [`Theory::check`].
    pub checks: u64,
    /// Negative cycles turned into implied facts.
    pub implied: u64,
    /// Distinct profile facts.
    pub facts: u64,
    /// Simplex checks.
    pub lp_checks: u64,
    /// Conflicts returned.
    pub conflicts: u64,
    /// Full Bellman–Ford recomputations of one coordinate.
    pub full_recomputes: u64,
}

/// A profile fact `a·D ≥ 0` (`a` with gcd 1), a row of the simplex.
#[derive(Clone, Debug)]
pub struct Fact {
    /// The coefficients `a_1..a_m`.
    pub coeffs: Vec<i64>,
    row: usize,
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
    items: Vec<Item>,
    tight_done: usize,
    fact_done: usize,
    lp_dirty: bool,
    /// The facts in force changed since the last refutation round.
    facts_changed: bool,
    facts: Vec<Fact>,
    fact_of: HashMap<Vec<i64>, usize>,
    active: Vec<bool>,
    row_fact: HashMap<usize, usize>,
    unit_rows: HashMap<usize, usize>,
    lp: ExactLp,
    /// Counters.
    pub stats: TheoryStats,
}

/// At most this many facts are tested per refutation round (each test is a simplex check).
const MAX_REFUTATION_TESTS: usize = 16;

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
            items: Vec::new(),
            tight_done: 0,
            fact_done: 0,
            lp_dirty: false,
            facts_changed: false,
            facts: Vec::new(),
            fact_of: HashMap::new(),
            active: Vec::new(),
            row_fact: HashMap::new(),
            unit_rows,
            lp,
            stats: TheoryStats::default(),
        }
    }

    /// The profile facts created so far, by index.
    pub fn facts(&self) -> &[Fact] {
        &self.facts
    }

    /// Number of items asserted.
    pub fn num_asserted(&self) -> usize {
        self.items.len()
    }

    /// Asserts an item; it is examined by the next [`Theory::check`].
    pub fn assert_item(&mut self, item: Item) {
        self.items.push(item);
    }

    /// Retracts items until `len` remain.
    pub fn backtrack(&mut self, len: usize) {
        while self.items.len() > len {
            let idx = self.items.len() - 1;
            match self.items[idx] {
                Item::Tight(i, j, c) => {
                    if idx < self.tight_done {
                        self.tight[(c * self.p + i) * self.p + j] = false;
                    }
                }
                Item::Fact(f) => {
                    if idx < self.fact_done {
                        self.facts_changed = true;
                        self.active[f] = false;
                        self.lp.set_zero_bound(self.facts[f].row, false, false);
                    }
                }
            }
            self.items.pop();
        }
        self.tight_done = self.tight_done.min(len);
        self.fact_done = self.fact_done.min(len);
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

    /// The potentials of coordinate `c` (a solution for `D*` after [`Step::Done`]).
    pub fn potentials(&self, c: usize) -> &[i64] {
        &self.pot[c * self.p..(c + 1) * self.p]
    }

    /// Re-checks, edge by edge, that the potentials solve every coordinate's
    /// system under `D*` with every asserted atom tight; names the first violation.
    pub fn audit(&self) -> Result<(), String> {
        let p = self.p;
        if self.tight_done != self.items.len()
            || self.fact_done != self.items.len()
            || self.dirty.iter().any(|&x| x)
        {
            return Err("the theory has unexamined items".into());
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
        for item in &self.items {
            if let Item::Tight(i, j, c) = *item
                && !self.tight[(c * p + i) * p + j]
            {
                return Err(format!("atom T({i},{j},{c}) is asserted but not marked"));
            }
        }
        Ok(())
    }

    /// Examines everything asserted since the last call: facts go to the
    /// simplex, atoms to their coordinate.
    ///
    /// # Errors
    /// [`TheoryError::Conflict`] with a lemma when the asserted items are
    /// infeasible; [`TheoryError::Internal`] when numbers grow too large.
    pub fn check(&mut self) -> Result<Step, TheoryError> {
        self.check_with(&|_| false)
    }

    /// [`Theory::check`], and then, when the facts in force changed, the
    /// refutation of every fact `f` with `open(f)` that the facts in force contradict.
    ///
    /// # Errors
    /// As [`Theory::check`].
    pub fn check_with(&mut self, open: &dyn Fn(usize) -> bool) -> Result<Step, TheoryError> {
        self.stats.checks += 1;
        while self.fact_done < self.items.len() {
            if let Item::Fact(f) = self.items[self.fact_done] {
                if self.active[f] {
                    return Err(TheoryError::Internal(format!("fact {f} asserted twice")));
                }
                self.active[f] = true;
                self.lp.set_zero_bound(self.facts[f].row, false, true);
                self.lp_dirty = true;
                self.facts_changed = true;
            }
            self.fact_done += 1;
        }
        if self.lp_dirty {
            self.stats.lp_checks += 1;
            if let Some(conflict) = self.lp.check() {
                self.stats.conflicts += 1;
                return Err(TheoryError::Conflict(Box::new(
                    self.profile_lemma(&conflict.terms)?,
                )));
            }
            self.lp_dirty = false;
            self.set_profile()?;
        }
        if self.dirty.iter().any(|&x| x) {
            // pending atoms join their coordinate's recomputation
            while self.tight_done < self.items.len() {
                if let Item::Tight(i, j, c) = self.items[self.tight_done] {
                    self.tight[(c * self.p + i) * self.p + j] = true;
                    self.dirty[c] = true;
                }
                self.tight_done += 1;
            }
            for c in 0..self.n {
                if self.dirty[c] {
                    self.stats.full_recomputes += 1;
                    match self.bellman_ford(c)? {
                        None => self.dirty[c] = false,
                        Some(cycle) => return self.implied(c, &cycle, None),
                    }
                }
            }
        }
        while self.tight_done < self.items.len() {
            if let Item::Tight(i, j, c) = self.items[self.tight_done] {
                if let Some(path) = self.incremental(i, j, c) {
                    return self.implied(c, &path, Some((i, j)));
                }
                self.tight[(c * self.p + i) * self.p + j] = true;
            }
            self.tight_done += 1;
        }
        if self.facts_changed {
            self.facts_changed = false;
            let refuted = self.refute_facts(open)?;
            if !refuted.is_empty() {
                return Ok(Step::Refuted(refuted));
            }
        }
        Ok(Step::Done)
    }

    /// The facts with `open(f)` that cannot hold together with the facts in
    /// force, each with its lemma. Tested on a copy of the simplex, so the
    /// current profile stays; a fact that the current profile satisfies is
    /// consistent and needs no test.
    fn refute_facts(
        &mut self,
        open: &dyn Fn(usize) -> bool,
    ) -> Result<Vec<(usize, Lemma)>, TheoryError> {
        let mut out = Vec::new();
        let mut lp: Option<ExactLp> = None;
        let mut tested = 0;
        for f in 0..self.facts.len() {
            if self.active[f] || !open(f) {
                continue;
            }
            let dot: i128 = self.facts[f]
                .coeffs
                .iter()
                .zip(&self.d)
                .map(|(a, d)| i128::from(*a) * i128::from(*d))
                .sum();
            if dot >= 0 {
                continue;
            }
            tested += 1;
            if tested > MAX_REFUTATION_TESTS {
                break;
            }
            let test = lp.get_or_insert_with(|| self.lp.clone());
            let row = self.facts[f].row;
            test.set_zero_bound(row, false, true);
            self.stats.lp_checks += 1;
            let conflict = test.check();
            test.set_zero_bound(row, false, false);
            if let Some(conflict) = conflict {
                self.active[f] = true;
                let lemma = self.profile_lemma(&conflict.terms);
                self.active[f] = false;
                out.push((f, lemma?));
                if test.check().is_some() {
                    return Err(TheoryError::Internal(
                        "the facts in force became infeasible".into(),
                    ));
                }
            }
        }
        Ok(out)
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

    /// The fact implied by a negative cycle. `extra = Some((i, j))` closes the
    /// path `i → … → j` with the atom `T(i, j, c)` (edge `j → i`) being
    /// examined; `None` means `nodes` is a closed cycle.
    fn implied(
        &mut self,
        c: usize,
        nodes: &[usize],
        extra: Option<(usize, usize)>,
    ) -> Result<Step, TheoryError> {
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
                atoms.push(((v, u, c), BigInt::one()));
                coeffs[k - 1] -= 1;
            } else {
                background.push(((u, v, c), BigInt::one()));
                coeffs[k - 1] += 1;
            }
        }
        if let Some((i, j)) = extra {
            let k = self.kap[i * p + j];
            weight -= self.d[k - 1];
            atoms.push(((i, j, c), BigInt::one()));
            coeffs[k - 1] -= 1;
        }
        if weight >= 0 {
            return Err(TheoryError::Internal(format!(
                "cycle of weight {weight} in coordinate {c} reported as negative"
            )));
        }
        self.stats.implied += 1;
        let (fact, g) = self.fact_for(&coeffs);
        if self.active[fact] {
            return Err(TheoryError::Internal(
                "a fact in force is violated by the current profile".into(),
            ));
        }
        atoms.sort();
        background.sort();
        Ok(Step::Implied {
            fact,
            lemma: Lemma::implies(atoms, background, fact, BigInt::from(g)),
        })
    }

    /// The fact `a·D ≥ 0` for `a = coeffs / g` (`g` the gcd), created if new; returns it and `g`.
    fn fact_for(&mut self, coeffs: &[i64]) -> (usize, i64) {
        let g = coeffs.iter().fold(0i64, |g, &a| g.gcd(&a)).max(1);
        let reduced: Vec<i64> = coeffs.iter().map(|a| a / g).collect();
        if let Some(&f) = self.fact_of.get(&reduced) {
            return (f, g);
        }
        let row = self.lp.add_row(&reduced);
        let f = self.facts.len();
        self.facts.push(Fact {
            coeffs: reduced.clone(),
            row,
        });
        self.active.push(false);
        self.fact_of.insert(reduced, f);
        self.row_fact.insert(row, f);
        self.stats.facts += 1;
        (f, g)
    }

    /// The order lemmas of the profile: the facts `D_x ≥ D_y` for all
    /// classes `x ≠ y`, their totality (`D_x ≥ D_y ∨ D_y ≥ D_x`) and
    /// transitivity, each with its Farkas certificate, and the equilateral
    /// lemmas of [`equilateral_sets`] (`encodings/real-space.md` §5). They let
    /// the search split on the order of the profile, which is where the
    /// equilateral bound, a counting argument that resolution finds only
    /// slowly, applies.
    pub fn order_lemmas(&mut self) -> Vec<Lemma> {
        let m = self.m;
        let mut ge = vec![vec![0usize; m]; m];
        for (x, row) in ge.iter_mut().enumerate() {
            for (y, slot) in row.iter_mut().enumerate() {
                if x != y {
                    let mut a = vec![0i64; m];
                    a[x] = 1;
                    a[y] = -1;
                    *slot = self.fact_for(&a).0;
                }
            }
        }
        let one = BigInt::one;
        let lemma = |facts: Vec<usize>, conclusions: Vec<usize>| Lemma {
            atoms: Vec::new(),
            facts: facts.into_iter().map(|f| (f, one())).collect(),
            conclusions: conclusions.into_iter().map(|f| (f, one())).collect(),
            background: Vec::new(),
            norm: Vec::new(),
            unit: Vec::new(),
            equilateral: None,
            fooling: None,
        };
        let mut out = Vec::new();
        for x in 0..m {
            for y in x + 1..m {
                // strict rows D_x − D_y < 0 and D_y − D_x < 0 sum to 0 < 0
                out.push(lemma(vec![], vec![ge[x][y], ge[y][x]]));
            }
        }
        for x in 0..m {
            for y in (0..m).filter(|&y| y != x) {
                for z in (0..m).filter(|&z| z != x && z != y) {
                    // D_y − D_x ≤ 0, D_z − D_y ≤ 0 and D_x − D_z < 0 sum to 0 < 0
                    out.push(lemma(vec![ge[x][y], ge[y][z]], vec![ge[x][z]]));
                }
            }
        }
        let (n, p) = (self.n, self.p);
        let pairs = p * (p - 1);
        if n * pairs * pairs <= CROSSING_ORDER_CAP {
            let k = |u: usize, v: usize| kappa(u, v, p) - 1;
            for c in 0..n {
                for a in 0..p {
                    for b in (0..p).filter(|&b| b != a) {
                        for e in 0..p {
                            for d in (0..p).filter(|&d| d != e && d != a) {
                                if (e, d) == (a, b) || e == b {
                                    continue;
                                }
                                let (k1, k2, j, h) = (k(a, b), k(e, d), k(a, d), k(e, b));
                                // j = k1 leaves nothing to conclude; (k2, h) = (j, k1)
                                // would make the clause a tautology
                                if j == k1 || (k2, h) == (j, k1) {
                                    continue;
                                }
                                // atoms T(a,b,c), T(e,d,c) and background (a,d), (e,b)
                                // sum to D_k1 + D_k2 − D_j − D_h ≤ 0; with
                                // D_k2 ≥ D_h (fact) and D_j < D_k1 (strict) to 0 < 0
                                let mut l = lemma(
                                    if h == k2 { vec![] } else { vec![ge[k2][h]] },
                                    vec![ge[j][k1]],
                                );
                                let mut atoms = vec![((a, b, c), one()), ((e, d, c), one())];
                                atoms.sort();
                                l.atoms = atoms;
                                let mut bg = vec![((a, d, c), one()), ((e, b, c), one())];
                                bg.sort();
                                l.background = bg;
                                out.push(l);
                            }
                        }
                    }
                }
            }
        }
        for set in equilateral_sets(self.n, self.p, EQUILATERAL_BUDGET) {
            let classes = classes_of(&set, self.p);
            let r = classes.len();
            let facts = (0..r)
                .map(|t| ge[classes[t] - 1][classes[(t + 1) % r] - 1])
                .collect();
            let mut l = lemma(facts, vec![]);
            l.equilateral = Some(set);
            out.push(l);
        }
        for TopExclusion { pairs, far, close } in top_exclusions(n, p) {
            let k0 = far[0];
            let mut facts: Vec<usize> = (1..=m)
                .filter(|&l| l != k0)
                .map(|l| ge[k0 - 1][l - 1])
                .collect();
            facts.extend(far[1..].iter().map(|&k| ge[k - 1][k0 - 1]));
            let conclusions = close.iter().map(|&j| ge[j - 1][k0 - 1]).collect();
            let mut l = lemma(facts, conclusions);
            l.fooling = Some(pairs);
            out.push(l);
        }
        out
    }

    /// The implication lemmas of every cycle with two atoms, in every
    /// coordinate: chains `T(a,b,c) ∧ T(b,e,c) → D_κ(a,e) ≥ D_κ(a,b) + D_κ(b,e)`
    /// and crossings `T(a,b,c) ∧ T(d,e,c) → D_κ(a,e) + D_κ(d,b) ≥ D_κ(a,b) + D_κ(d,e)`
    /// (`a, b, d, e` distinct), skipping those whose fact holds for every
    /// profile. Each is `F ∨ ¬T ∨ ¬T` with its certificate.
    pub fn pattern_lemmas(&mut self) -> Vec<(usize, Lemma)> {
        let (n, p) = (self.n, self.p);
        let k = |u: usize, v: usize| kappa(u, v, p);
        let mut out = Vec::new();
        let one = BigInt::one;
        for c in 0..n {
            let mut emit = |th: &mut Theory,
                            atoms: Vec<(usize, usize)>,
                            bg: Vec<(usize, usize)>| {
                let mut coeffs = vec![0i64; th.m];
                for &(a, b) in &atoms {
                    coeffs[k(a, b) - 1] -= 1;
                }
                for &(u, v) in &bg {
                    coeffs[k(u, v) - 1] += 1;
                }
                if coeffs.iter().all(|&x| x >= 0) {
                    return;
                }
                let (fact, g) = th.fact_for(&coeffs);
                let mut atoms: Vec<_> = atoms.iter().map(|&(a, b)| ((a, b, c), one())).collect();
                let mut background: Vec<_> = bg.iter().map(|&(u, v)| ((u, v, c), one())).collect();
                atoms.sort();
                background.sort();
                out.push((
                    fact,
                    Lemma::implies(atoms, background, fact, BigInt::from(g)),
                ));
            };
            for a in 0..p {
                for b in (0..p).filter(|&b| b != a) {
                    for e in (0..p).filter(|&e| e != a && e != b) {
                        // edges b→a and e→b (atoms), a→e (background)
                        emit(self, vec![(a, b), (b, e)], vec![(a, e)]);
                    }
                }
            }
            for a in 0..p {
                for b in (0..p).filter(|&b| b != a) {
                    for d in (0..p).filter(|&d| d != a && d != b) {
                        for e in (0..p).filter(|&e| e != a && e != b && e != d) {
                            if (a, b) < (d, e) {
                                // edges b→a, e→d (atoms), a→e, d→b (background)
                                emit(self, vec![(a, b), (d, e)], vec![(a, e), (d, b)]);
                            }
                        }
                    }
                }
            }
        }
        out
    }

    /// Scales the simplex's rational profile to integers; marks every
    /// coordinate for recomputation when it changed.
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
        if d != self.d {
            self.d = d;
            self.dirty.iter_mut().for_each(|x| *x = true);
        }
        Ok(())
    }

    /// Converts the simplex's conflict into a lemma over facts, with integer multipliers.
    fn profile_lemma(&self, terms: &[(usize, Side, BigRational)]) -> Result<Lemma, TheoryError> {
        let mut facts: Vec<(usize, BigRational)> = Vec::new();
        let mut norm: Vec<(usize, BigRational)> = Vec::new();
        let mut unit: Vec<(usize, BigRational)> = Vec::new();
        for (v, side, mu) in terms {
            if *v < self.m && *side == Side::Lower {
                norm.push((v + 1, mu.clone()));
            } else if let (Some(&u), Side::Upper) = (self.unit_rows.get(v), side) {
                unit.push((u, mu.clone()));
            } else if let (Some(&f), Side::Lower, true) = (
                self.row_fact.get(v),
                side,
                self.row_fact.get(v).is_some_and(|&f| self.active[f]),
            ) {
                facts.push((f, mu.clone()));
            } else {
                return Err(TheoryError::Internal(format!(
                    "simplex conflict names variable {v} ({side:?}) without a bound in force"
                )));
            }
        }
        let all = facts
            .iter()
            .chain(norm.iter())
            .chain(unit.iter())
            .map(|x| &x.1);
        let l = all.clone().fold(BigInt::one(), |l, x| l.lcm(x.denom()));
        let ints: Vec<BigInt> = all.map(|x| x.numer() * (&l / x.denom())).collect();
        let g = ints.iter().fold(BigInt::zero(), |g, x| g.gcd(x));
        let int = |x: &BigRational| x.numer() * (&l / x.denom()) / &g;
        let mut out = Lemma {
            atoms: Vec::new(),
            facts: facts.iter().map(|(f, x)| (*f, int(x))).collect(),
            conclusions: Vec::new(),
            background: Vec::new(),
            norm: norm.iter().map(|(k, x)| (*k, int(x))).collect(),
            unit: unit.iter().map(|(k, x)| (*k, int(x))).collect(),
            equilateral: None,
            fooling: None,
        };
        out.facts.sort();
        out.norm.sort();
        out.unit.sort();
        Ok(out)
    }
}

/// [`top_exclusions`] walks the top patterns only up to this many classes.
pub const TOP_PATTERN_MAX_CLASSES: usize = 13;

/// A partial top pattern that no cycle in R^n has (see [`top_exclusions`]).
#[derive(Clone, Debug, PartialEq, Eq)]
pub struct TopExclusion {
    /// `n + 1` pairs `(a, b)`, `a < b`: a fooling set of the far graph.
    pub pairs: Vec<(usize, usize)>,
    /// The classes that must be the largest distance (sorted).
    pub far: Vec<usize>,
    /// The classes that must be shorter (sorted).
    pub close: Vec<usize>,
}

/// Partial top patterns of the profile that no cycle in R^n has: for each,
/// `n + 1` pairs (a fooling set of the far graph), the classes that must be
/// the largest distance (`far`, sorted) and the classes that must be
/// shorter (`close`, sorted), as [`crate::encode::bicliques::exclusion`]
/// describes them. Every nonempty top pattern is walked that no exclusion
/// found so far covers, and searched for a fooling set of `n + 1` pairs
/// ([`crate::encode::bicliques::fooling_set`], with its node budget). Empty
/// for `p ≤ 2^n` or more than [`TOP_PATTERN_MAX_CLASSES`] classes.
pub fn top_exclusions(n: usize, p: usize) -> Vec<TopExclusion> {
    use crate::encode::bicliques::{exclusion, fooling_set};
    let m = p / 2;
    let beyond = u32::try_from(n)
        .ok()
        .and_then(|n| 1usize.checked_shl(n))
        .is_none_or(|b| p > b);
    if !beyond || m == 0 || m > TOP_PATTERN_MAX_CLASSES {
        return Vec::new();
    }
    let mut out: Vec<TopExclusion> = Vec::new();
    let bit = |k: usize| 1u64 << (k - 1);
    for mask in 1u64..(1u64 << m) {
        let covered = out.iter().any(|x| {
            x.far.iter().all(|&k| mask & bit(k) != 0) && x.close.iter().all(|&j| mask & bit(j) == 0)
        });
        if covered {
            continue;
        }
        let Some(pairs) = fooling_set(p, mask, n + 1) else {
            continue;
        };
        if let Some(x) = exclusion(p, mask, &pairs) {
            out.push(TopExclusion {
                pairs,
                far: x.far,
                close: x.close,
            });
        }
    }
    out
}

/// [`Theory::order_lemmas`] writes its crossing lemmas only while
/// `n·(p(p−1))²`, about their number, is at most this.
pub const CROSSING_ORDER_CAP: usize = 1_000_000;

/// Search nodes [`equilateral_sets`] may spend in [`Theory::order_lemmas`].
pub const EQUILATERAL_BUDGET: u64 = 2_000_000;

/// The classes `κ(i, j)` of the pairs of `set`, sorted, without repeats.
pub fn classes_of(set: &[usize], p: usize) -> Vec<usize> {
    let mut k: Vec<usize> = set
        .iter()
        .flat_map(|&i| {
            set.iter()
                .filter(move |&&j| j != i)
                .map(move |&j| kappa(i, j, p))
        })
        .collect();
    k.sort_unstable();
    k.dedup();
    k
}

/// Index sets `I ⊆ Z_p` of more than `2^n` indices whose pairs fall in at
/// least two classes, one for each class set `K` of two or more classes
/// that is minimal (no subset, not even a single class, has such an `I`): if the profile were constant on `K`, the points of `I`
/// would be an equilateral set of more than `2^n` points in
/// `(R^n, ‖·‖∞)`, which does not exist (`encodings/real-space.md` §5).
/// A set `I` for `K` is a clique of the circulant graph on `Z_p` with
/// offsets `K`, found by a search from index 0 (the graph is
/// vertex-transitive). At most `budget` search nodes in all; past that the
/// list is cut short, which only means fewer lemmas. Empty when
/// `2^n ≥ p` or `p > 41` (more than 2^20 class sets).
pub fn equilateral_sets(n: usize, p: usize, budget: u64) -> Vec<Vec<usize>> {
    let q = match 1usize.checked_shl(n as u32) {
        Some(v) if v < p && n < 63 => v + 1,
        _ => return Vec::new(),
    };
    if p > 41 {
        return Vec::new();
    }
    let m = p / 2;
    let mut masks: Vec<u64> = (1u64..(1u64 << m)).collect();
    masks.sort_by_key(|k| (k.count_ones(), *k));
    let mut found: Vec<u64> = Vec::new();
    let mut out = Vec::new();
    let mut nodes = 0u64;
    for k in masks {
        if found.iter().any(|&f| f & !k == 0) {
            continue;
        }
        // the degree of a vertex bounds the clique: 2|K|, one less with p/2 ∈ K
        let half = p.is_multiple_of(2) && k & (1 << (m - 1)) != 0;
        if 2 * (k.count_ones() as usize) - usize::from(half) + 1 < q {
            continue;
        }
        let adj: Vec<u64> = (0..p)
            .map(|i| {
                (0..p)
                    .filter(|&j| j != i && k & (1 << (kappa(i, j, p) - 1)) != 0)
                    .fold(0u64, |a, j| a | (1 << j))
            })
            .collect();
        let mut clique = vec![0usize];
        if grow_clique(&adj, &mut clique, adj[0], q, &mut nodes, budget) {
            found.push(k);
            // one class alone would make an empty clause; such a period
            // (a multiple of 3 in R^1) is left to the search
            if k.count_ones() >= 2 {
                out.push(clique);
            }
        }
        if nodes >= budget {
            break;
        }
    }
    out
}

/// Extends `clique` by vertices of `cand` (all adjacent to the clique) to size `q`.
fn grow_clique(
    adj: &[u64],
    clique: &mut Vec<usize>,
    mut cand: u64,
    q: usize,
    nodes: &mut u64,
    budget: u64,
) -> bool {
    if clique.len() == q {
        return true;
    }
    while cand != 0 && *nodes < budget {
        if clique.len() + (cand.count_ones() as usize) < q {
            return false;
        }
        *nodes += 1;
        let v = cand.trailing_zeros() as usize;
        cand &= cand - 1;
        clique.push(v);
        if grow_clique(adj, clique, cand & adj[v], q, nodes, budget) {
            return true;
        }
        clique.pop();
    }
    false
}
