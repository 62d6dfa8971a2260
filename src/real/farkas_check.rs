//! The independent checker of theory lemmas (Farkas certificates).
//!
//! This module shares no code with the search: it does not use the skeleton
//! builder, the theory, the simplex or the variable map. From `(n, p)` alone
//! it knows what each skeleton variable means, by the closed numbering of
//! `encodings/real-space.md` §2, and it rebuilds every linear constraint
//! with its own small code and checked `i128` arithmetic.
//!
//! # The lemma file
//!
//! ```text
//! c orbitcnf-real-lemmas formulation=real-skeleton/1 n=3 p=9
//! -5 -17 -40 0 y 1 1 2 b 3 4 0 1 b 4 3 0 2 g 1 1 u 2 1
//! ```
//!
//! After the header come two kinds of lines. `f VAR a_1 … a_m` declares the
//! *profile fact* variable `VAR`, which means `a_1·D_1 + … + a_m·D_m ≥ 0`
//! (`m = ⌊p/2⌋`); the first has the number given to [`check_lemmas`] (one
//! past the skeleton's variables), the others follow consecutively. Every
//! other line is one lemma: a clause (DIMACS literals, closed by `0`), then
//! `y` and one multiplier per literal, then any number of groups
//! `b U V C Y` (background row), `g K Y` (scaling row) and `u Q Y`
//! (multiplier row). Multipliers are nonnegative decimal integers. The
//! rows, each the negation of a literal or a constraint every normalised
//! cycle satisfies, are:
//!
//! | token | row |
//! |---|---|
//! | literal `−T(i,j,c)` | `x_{i,c} − x_{j,c} + D_κ(i,j) ≤ 0` (the atom holds: `x_{j,c} − x_{i,c} ≥ D`) |
//! | literal `−F` | `−a·D ≤ 0` (the fact holds) |
//! | literal `+F` | `a·D < 0`, strict (the fact fails) |
//! | `b U V C Y` | `x_{V,C} − x_{U,C} − D_κ(U,V) ≤ 0` (`U ≠ V`) |
//! | `g K Y` | `−D_K ≤ −1` (`1 ≤ K ≤ ⌊p/2⌋`) |
//! | `u Q Y` | `D_1 − D_Q ≤ 0` (`2 ≤ Q ≤ ⌊p/2⌋`, `gcd(Q, p) = 1`) |
//!
//! A line may instead close its clause with `e I_1 … I_q`: an *equilateral
//! lemma*. It is accepted when the `I_t` are more than `2^n` distinct
//! indices of `0..p`, every literal is a negated fact `D_k − D_l ≥ 0`, and
//! these facts, read as `D_k ≥ D_l`, force every class `κ(I_s, I_t)` to one
//! value (each is reachable from each other along them). If every literal
//! were false, the points `x_{I_t}` would be more than `2^n` points at one
//! sup-norm distance, which do not exist in R^n (the volume argument of
//! `encodings/real-space.md` §5).
//!
//! A line may also close its clause with `t A_1 B_1 … A_{n+1} B_{n+1}`: a
//! *top-pattern lemma* over order facts `D_k − D_l ≥ 0` only. It is
//! accepted when the negated facts make the class of the first pair the
//! largest and every pair's class at least as large, and for every two
//! pairs and each way of putting them on the low and high side of one
//! coordinate some cross pair joins an index to itself or has a class that
//! a positive literal makes shorter than another: then the `n + 1` pairs
//! are at the largest distance and need `n + 1` coordinates (see
//! `check_top`).
//!
//! A lemma is accepted when every literal is a negated tight variable
//! `T(i,j,c)` or a declared fact of either sign, and the multiplier-weighted
//! sum of the rows has every coefficient of every `x_{i,c}` and `D_k` equal
//! to 0 and a right-hand side `r` with `r < 0`, or `r = 0` when a strict row
//! has a positive multiplier. The sum then reads `0 ≤ r` (or `0 < r`), which
//! is false, so the rows cannot hold together (Farkas' lemma, in Motzkin's
//! form for strict rows, only in the easy direction): in every solution of
//! the background and the normalisation some literal of the clause is true.

use std::fmt;

/// Why a lemma was rejected; `line` is 1-based in the lemma file.
#[derive(Clone, Debug, PartialEq, Eq)]
pub struct FarkasError {
    /// The lemma file's path, when the caller knows it (empty otherwise).
    pub file: String,
    /// The line of the lemma (0 for the whole file).
    pub line: usize,
    /// What is wrong.
    pub reason: String,
}

impl fmt::Display for FarkasError {
    fn fmt(&self, f: &mut fmt::Formatter<'_>) -> fmt::Result {
        match (self.file.is_empty(), self.line) {
            (true, l) => write!(f, "lemma file line {l}: {}", self.reason),
            (false, 0) => write!(f, "{}: {}", self.file, self.reason),
            (false, l) => write!(f, "{}:{l}: {}", self.file, self.reason),
        }
    }
}

impl std::error::Error for FarkasError {}

/// What an accepted lemma file held.
#[derive(Clone, Debug, PartialEq, Eq, serde::Serialize)]
pub struct FarkasSummary {
    /// Profile facts declared.
    pub facts: usize,
    /// Lemmas checked.
    pub lemmas: usize,
    /// Literals over all lemmas.
    pub literals: usize,
    /// Rows over all lemmas (atoms, background and normalisation).
    pub rows: usize,
    /// Of the lemmas: those justified by the equilateral bound (`e` lines)
    /// instead of Farkas multipliers.
    pub equilateral: usize,
    /// Of the lemmas: those justified by the top-pattern argument (`t` lines).
    pub top: usize,
}

/// The header line a lemma file for `(n, p)` starts with.
pub fn header(n: usize, p: usize) -> String {
    format!("c orbitcnf-real-lemmas formulation=real-skeleton/1 n={n} p={p}")
}

fn gcd(a: usize, b: usize) -> usize {
    if b == 0 { a } else { gcd(b, a % b) }
}

fn class(i: usize, j: usize, p: usize) -> usize {
    let d = i.abs_diff(j);
    if 2 * d > p { p - d } else { d }
}

struct Sum {
    n: usize,
    p: usize,
    x: Vec<i128>,
    d: Vec<i128>,
    rhs: i128,
}

impl Sum {
    fn add(v: &mut i128, by: i128) -> Result<(), String> {
        *v = v
            .checked_add(by)
            .ok_or("arithmetic overflow while adding rows")?;
        Ok(())
    }
    /// `y · (x_{a,c} − x_{b,c} + s·D_κ(a,b)) ≤ y·r`
    fn row(
        &mut self,
        a: usize,
        b: usize,
        c: usize,
        s: i128,
        r: i128,
        y: i128,
    ) -> Result<(), String> {
        let (n, p) = (self.n, self.p);
        if a >= p || b >= p || a == b || c >= n {
            return Err(format!(
                "row names positions {a}, {b} and coordinate {c}, outside n={n}, p={p}"
            ));
        }
        Sum::add(&mut self.x[c * p + a], y)?;
        Sum::add(&mut self.x[c * p + b], -y)?;
        let k = class(a, b, p);
        Sum::add(&mut self.d[k - 1], s.checked_mul(y).ok_or("overflow")?)?;
        Sum::add(&mut self.rhs, r.checked_mul(y).ok_or("overflow")?)
    }
}

fn num(tok: Option<&str>, what: &str) -> Result<i128, String> {
    let t = tok.ok_or_else(|| format!("missing {what}"))?;
    let v: i128 = t
        .parse()
        .map_err(|_| format!("{what}: {t:?} is not an integer"))?;
    if v < 0 {
        return Err(format!("{what}: {v} is negative"));
    }
    Ok(v)
}

fn index(tok: Option<&str>, what: &str) -> Result<usize, String> {
    usize::try_from(num(tok, what)?).map_err(|_| format!("{what} too large"))
}

/// Checks one lemma line; returns its clause (DIMACS literals) and its row count.
fn check_line(
    n: usize,
    p: usize,
    first_fact: usize,
    facts: &[Vec<i128>],
    line: &str,
) -> Result<(Vec<i32>, usize), String> {
    let per_c = p * (p - 1);
    let mut toks = line.split_whitespace();
    let mut clause = Vec::new();
    loop {
        let t = toks.next().ok_or("the clause is not closed by 0")?;
        let l: i32 = t.parse().map_err(|_| format!("{t:?} is not a literal"))?;
        if l == 0 {
            break;
        }
        if clause
            .iter()
            .any(|&x: &i32| x.unsigned_abs() == l.unsigned_abs())
        {
            return Err(format!("variable {} occurs twice", l.unsigned_abs()));
        }
        clause.push(l);
    }
    let mut sum = Sum {
        n,
        p,
        x: vec![0; n * p],
        d: vec![0; p / 2],
        rhs: 0,
    };
    let mut strict = false;
    match toks.next() {
        Some("y") => {}
        Some("e") => {
            let set: Vec<&str> = toks.collect();
            return check_equilateral(n, p, first_fact, facts, &clause, &set)
                .map(|()| (clause.clone(), clause.len()));
        }
        Some("t") => {
            let pairs: Vec<&str> = toks.collect();
            return check_top(n, p, first_fact, facts, &clause, &pairs)
                .map(|()| (clause.clone(), clause.len()));
        }
        _ => {
            return Err(
                "expected 'y' and one multiplier per literal, 'e' and an index set, or 't' \
                 and pairs, after the clause"
                    .into(),
            );
        }
    }
    for &l in &clause {
        let y = num(toks.next(), "literal multiplier")?;
        let v = l.unsigned_abs() as usize;
        if v <= n * per_c {
            if l > 0 {
                return Err(format!(
                    "literal {l}: a tight variable may occur only negated"
                ));
            }
            let v = v - 1;
            let c = v / per_c;
            let r = v % per_c;
            let i = r / (p - 1);
            let col = r % (p - 1);
            let j = if col < i { col } else { col + 1 };
            // T(i,j,c): x_j − x_i ≥ D, i.e. x_i − x_j + D ≤ 0
            sum.row(i, j, c, 1, 0, y)?;
        } else if let Some(a) = v.checked_sub(first_fact).and_then(|f| facts.get(f)) {
            // −F: −a·D ≤ 0; +F: a·D < 0
            let s = if l < 0 { -1 } else { 1 };
            for (k, ak) in a.iter().enumerate() {
                let t = ak
                    .checked_mul(y)
                    .and_then(|t| t.checked_mul(s))
                    .ok_or("arithmetic overflow in a fact row")?;
                Sum::add(&mut sum.d[k], t)?;
            }
            if l > 0 && y > 0 {
                strict = true;
            }
        } else {
            return Err(format!(
                "literal {l} is neither a tight variable (1..={}) nor a declared fact",
                n * per_c
            ));
        }
    }
    let mut rows = clause.len();
    while let Some(kind) = toks.next() {
        rows += 1;
        match kind {
            "b" => {
                let u = index(toks.next(), "b: U")?;
                let v = index(toks.next(), "b: V")?;
                let c = index(toks.next(), "b: C")?;
                let y = num(toks.next(), "b: multiplier")?;
                // x_V − x_U − D ≤ 0
                sum.row(v, u, c, -1, 0, y)?;
            }
            "g" => {
                let k = index(toks.next(), "g: K")?;
                let y = num(toks.next(), "g: multiplier")?;
                if k == 0 || k > p / 2 {
                    return Err(format!("g: class {k} outside 1..={}", p / 2));
                }
                Sum::add(&mut sum.d[k - 1], -y)?;
                Sum::add(&mut sum.rhs, -y)?;
            }
            "u" => {
                let q = index(toks.next(), "u: Q")?;
                let y = num(toks.next(), "u: multiplier")?;
                if q < 2 || q > p / 2 || gcd(q, p) != 1 {
                    return Err(format!(
                        "u: {q} is not a unit class other than 1 for p = {p}"
                    ));
                }
                Sum::add(&mut sum.d[0], y)?;
                Sum::add(&mut sum.d[q - 1], -y)?;
            }
            other => return Err(format!("unknown row kind {other:?}")),
        }
    }
    if let Some((idx, _)) = sum.x.iter().enumerate().find(|(_, v)| **v != 0) {
        return Err(format!(
            "the combination leaves x_{{{},{}}} with coefficient {}",
            idx % p,
            idx / p,
            sum.x[idx]
        ));
    }
    if let Some((k, v)) = sum.d.iter().enumerate().find(|(_, v)| **v != 0) {
        return Err(format!(
            "the combination leaves D_{} with coefficient {v}",
            k + 1
        ));
    }
    if sum.rhs > 0 || (sum.rhs == 0 && !strict) {
        return Err(format!(
            "the combination reads 0 {} {}, which is no contradiction",
            if strict { "<" } else { "≤" },
            sum.rhs
        ));
    }
    Ok((clause, rows))
}

/// Checks an equilateral lemma: its index set `I` has more than `2^n`
/// distinct indices of `0..p`, every literal is a negated fact of the form
/// `D_k − D_l ≥ 0`, and these relations, read as edges `k → l`, lead from
/// every class of a pair of `I` to every other. If every literal were
/// false, all those classes would have one distance, and the points of `I`
/// would be more than `2^n` points of `(R^n, ‖·‖∞)` at equal distances,
/// which the volume argument of `encodings/real-space.md` §5 excludes.
fn check_equilateral(
    n: usize,
    p: usize,
    first_fact: usize,
    facts: &[Vec<i128>],
    clause: &[i32],
    set: &[&str],
) -> Result<(), String> {
    let mut idx = Vec::with_capacity(set.len());
    for t in set {
        let i: usize = t.parse().map_err(|_| format!("e: {t:?} is not an index"))?;
        if i >= p || idx.contains(&i) {
            return Err(format!("e: index {i} is out of 0..{p} or repeated"));
        }
        idx.push(i);
    }
    let bound_exceeded = u32::try_from(n)
        .ok()
        .and_then(|n| 1u128.checked_shl(n))
        .is_some_and(|b| (idx.len() as u128) > b);
    if !bound_exceeded {
        return Err(format!(
            "e: {} indices are not more than 2^{n}, so the equilateral bound says nothing",
            idx.len()
        ));
    }
    let m = p / 2;
    let mut edge = vec![vec![false; m + 1]; m + 1];
    for &l in clause {
        let v = l.unsigned_abs() as usize;
        let a = v
            .checked_sub(first_fact)
            .and_then(|f| facts.get(f))
            .filter(|_| l < 0)
            .ok_or_else(|| format!("e: literal {l} is not a negated declared fact"))?;
        let (k, j) = order_fact(a)
            .ok_or_else(|| format!("e: fact of literal {l} is not of the form D_k − D_l ≥ 0"))?;
        edge[k][j] = true;
    }
    let mut classes: Vec<usize> = Vec::new();
    for &i in &idx {
        for &j in &idx {
            if i != j {
                let k = class(i, j, p);
                if !classes.contains(&k) {
                    classes.push(k);
                }
            }
        }
    }
    // reachability along k → l (D_k ≥ D_l) from the first class, both ways
    let k0 = classes[0];
    let (down, up) = (reach(&edge, k0, true), reach(&edge, k0, false));
    if let Some(k) = classes.iter().find(|&&k| !down[k] || !up[k]) {
        return Err(format!(
            "e: the facts do not force D_{k} to equal D_{k0}, so the set need not be equilateral"
        ));
    }
    Ok(())
}

/// The class pair `(k, l)` of an order fact `D_k − D_l ≥ 0` (classes from 1).
fn order_fact(a: &[i128]) -> Option<(usize, usize)> {
    let plus: Vec<usize> = (0..a.len()).filter(|&k| a[k] == 1).collect();
    let minus: Vec<usize> = (0..a.len()).filter(|&k| a[k] == -1).collect();
    let zeros = a.iter().filter(|&&x| x == 0).count();
    (plus.len() == 1 && minus.len() == 1 && zeros + 2 == a.len())
        .then(|| (plus[0] + 1, minus[0] + 1))
}

/// Checks a top-pattern lemma (`t` line): `n + 1` distinct pairs of
/// distinct indices; every literal an order fact `D_k − D_l ≥ 0`, negated
/// (read as `D_k ≥ D_l`) or not (read as `D_k < D_l`); the negated ones
/// making the class `k₀` of the first pair at least every class and every
/// pair's class at least `k₀`; and for every two pairs and each of the two
/// ways to put them on the low and high side of one coordinate, a cross
/// pair that joins an index to itself or whose class is shorter than some
/// class (a positive literal). If every literal were false, the pairs would
/// all be at the largest distance and need `n + 1` different coordinates
/// (`encodings/real-space.md` §5, "Top-pattern lemmas").
fn check_top(
    n: usize,
    p: usize,
    first_fact: usize,
    facts: &[Vec<i128>],
    clause: &[i32],
    toks: &[&str],
) -> Result<(), String> {
    let m = p / 2;
    if !toks.len().is_multiple_of(2) {
        return Err("t: an odd number of indices".into());
    }
    let mut pairs: Vec<(usize, usize)> = Vec::new();
    for w in toks.chunks(2) {
        let idx = |t: &str| {
            t.parse::<usize>()
                .ok()
                .filter(|&i| i < p)
                .ok_or_else(|| format!("t: {t:?} is not an index of 0..{p}"))
        };
        let (a, b) = (idx(w[0])?, idx(w[1])?);
        if a == b
            || pairs
                .iter()
                .any(|&(x, y)| (x, y) == (a, b) || (x, y) == (b, a))
        {
            return Err(format!("t: pair ({a}, {b}) is degenerate or repeated"));
        }
        pairs.push((a, b));
    }
    if pairs.len() != n + 1 {
        return Err(format!(
            "t: {} pairs where n + 1 = {} are needed",
            pairs.len(),
            n + 1
        ));
    }
    let mut ge = vec![vec![false; m + 1]; m + 1];
    let mut shorter = vec![false; m + 1];
    for &l in clause {
        let a = (l.unsigned_abs() as usize)
            .checked_sub(first_fact)
            .and_then(|f| facts.get(f))
            .ok_or_else(|| format!("t: literal {l} is not a declared fact"))?;
        let (k, j) = order_fact(a)
            .ok_or_else(|| format!("t: fact of literal {l} is not of the form D_k − D_l ≥ 0"))?;
        if l < 0 {
            ge[k][j] = true;
        } else {
            shorter[k] = true;
        }
    }
    let k0 = class(pairs[0].0, pairs[0].1, p);
    let (below, above) = (reach(&ge, k0, true), reach(&ge, k0, false));
    if let Some(l) = (1..=m).find(|&l| !below[l]) {
        return Err(format!("t: the facts do not make D_{k0} at least D_{l}"));
    }
    if let Some(&(a, b)) = pairs.iter().find(|&&(a, b)| !above[class(a, b, p)]) {
        return Err(format!(
            "t: the facts do not make pair ({a}, {b}) a longest pair"
        ));
    }
    let blocked = |u: usize, v: usize| u == v || shorter[class(u, v, p)];
    for (x, &(a, b)) in pairs.iter().enumerate() {
        for &(e, f) in &pairs[x + 1..] {
            let same_sides = blocked(a, f) || blocked(e, b);
            let crossed = blocked(a, e) || blocked(f, b);
            if !same_sides || !crossed {
                return Err(format!(
                    "t: pairs ({a}, {b}) and ({e}, {f}) could share a coordinate"
                ));
            }
        }
    }
    Ok(())
}

/// Checks every lemma of a lemma file for `(n, p)`, whose fact variables
/// start at `first_fact`; returns the clauses in file order.
///
/// # Errors
/// [`FarkasError`] naming the first line that fails and why.
pub fn check_lemmas(
    n: usize,
    p: usize,
    first_fact: usize,
    text: &str,
) -> Result<(Vec<Vec<i32>>, FarkasSummary), FarkasError> {
    let err = |line: usize, reason: String| FarkasError {
        file: String::new(),
        line,
        reason,
    };
    if n == 0 || p < 2 {
        return Err(err(0, format!("no lemmas exist for n = {n}, p = {p}")));
    }
    if first_fact <= n * p * (p - 1) {
        return Err(err(
            0,
            format!("facts would overlap the tight variables (first fact {first_fact})"),
        ));
    }
    let mut lines = text.lines().enumerate();
    match lines.next() {
        Some((_, h)) if h.trim_end() == header(n, p) => {}
        _ => {
            return Err(err(
                1,
                format!("the first line should be {:?}", header(n, p)),
            ));
        }
    }
    let mut facts: Vec<Vec<i128>> = Vec::new();
    let mut clauses = Vec::new();
    let mut summary = FarkasSummary {
        facts: 0,
        lemmas: 0,
        literals: 0,
        rows: 0,
        equilateral: 0,
        top: 0,
    };
    for (k, line) in lines {
        let t = line.trim();
        if t.is_empty() || t.starts_with('c') {
            continue;
        }
        if let Some(rest) = t.strip_prefix("f ") {
            let mut w = rest.split_whitespace();
            let v = index(w.next(), "f: VAR").map_err(|r| err(k + 1, r))?;
            if v != first_fact + facts.len() {
                return Err(err(
                    k + 1,
                    format!(
                        "fact variable {v} declared where {} was expected",
                        first_fact + facts.len()
                    ),
                ));
            }
            let a: Vec<i128> = w
                .map(|x| {
                    x.parse::<i128>()
                        .map_err(|_| format!("f: {x:?} is not an integer"))
                })
                .collect::<Result<_, _>>()
                .map_err(|r| err(k + 1, r))?;
            if a.len() != p / 2 {
                return Err(err(
                    k + 1,
                    format!("f: {} coefficients, expected {}", a.len(), p / 2),
                ));
            }
            facts.push(a);
            summary.facts += 1;
            continue;
        }
        let (clause, rows) = check_line(n, p, first_fact, &facts, t).map_err(|r| err(k + 1, r))?;
        summary.lemmas += 1;
        if t.contains(" 0 e ") || t.starts_with("0 e ") {
            summary.equilateral += 1;
        }
        if t.contains(" 0 t ") || t.starts_with("0 t ") {
            summary.top += 1;
        }
        summary.literals += clause.len();
        summary.rows += rows;
        clauses.push(clause);
    }
    Ok((clauses, summary))
}

/// The classes reachable from `from` along the order facts `edge[k][l]`
/// (D_k ≥ D_l), forwards (the classes at most as long) or backwards (at
/// least as long); classes are numbered from 1, as `edge` is indexed.
fn reach(edge: &[Vec<bool>], from: usize, forward: bool) -> Vec<bool> {
    let m = edge.len() - 1;
    let mut seen = vec![false; m + 1];
    let mut stack = vec![from];
    seen[from] = true;
    while let Some(k) = stack.pop() {
        for l in 1..=m {
            let e = if forward { edge[k][l] } else { edge[l][k] };
            if e && !seen[l] {
                seen[l] = true;
                stack.push(l);
            }
        }
    }
    seen
}

#[cfg(test)]
mod tests {
    use super::*;

    // n = 1, p = 3: T(0,1,0) = var 1, T(1,2,0) = var 4, T(0,2,0) = var 2.
    // x_1 − x_0 = D_1, x_2 − x_1 = D_1, and |x_2 − x_0| ≤ D_1 give 2D_1 ≤ D_1: 0 ≤ −1 with D_1 ≥ 1.
    const GOOD: &str = "c orbitcnf-real-lemmas formulation=real-skeleton/1 n=1 p=3\n-1 -4 0 y 1 1 b 0 2 0 1 g 1 1\n";

    #[test]
    fn accepts_a_correct_lemma_and_rejects_changes() {
        let (cl, s) = check_lemmas(1, 3, 7, GOOD).unwrap();
        assert_eq!(cl, vec![vec![-1, -4]]);
        assert_eq!(s.rows, 4);
        let bad_mult = GOOD.replace("y 1 1", "y 1 2");
        let e = check_lemmas(1, 3, 7, &bad_mult).unwrap_err();
        assert!(e.reason.contains("coefficient"), "{e}");
        let bad_lit = GOOD.replace("-1 -4 0 y 1 1", "-1 -5 0 y 1 1");
        assert!(check_lemmas(1, 3, 7, &bad_lit).is_err());
        let positive = GOOD.replace("-1 -4 0", "1 -4 0");
        assert!(
            check_lemmas(1, 3, 7, &positive)
                .unwrap_err()
                .reason
                .contains("only negated")
        );
        let no_g = GOOD.replace(" g 1 1", "");
        assert!(
            check_lemmas(1, 3, 7, &no_g)
                .unwrap_err()
                .reason
                .contains("D_1")
        );
        let zero = GOOD
            .replace("g 1 1", "g 1 0")
            .replace("b 0 2 0 1", "b 0 2 0 1 b 0 2 0 0");
        assert!(check_lemmas(1, 3, 7, &zero).is_err());
        assert!(check_lemmas(1, 4, 13, GOOD).is_err());
        // an implication: T(0,1,0) ∧ T(1,2,0) → 2·D_1 ≤ D_2 (n = 1, p = 5; fact variable 21)
        let imp = "c orbitcnf-real-lemmas formulation=real-skeleton/1 n=1 p=5\nf 21 -2 1\n21 -1 -6 0 y 1 1 1 b 0 2 0 1\n";
        let (cl, s) = check_lemmas(1, 5, 21, imp).unwrap();
        assert_eq!((cl, s.facts), (vec![vec![21, -1, -6]], 1));
        assert!(check_lemmas(1, 5, 21, &imp.replace("y 1 1 1", "y 0 1 1")).is_err());
        assert!(
            check_lemmas(1, 5, 22, imp)
                .unwrap_err()
                .reason
                .contains("declared where")
        );
        assert!(check_lemmas(1, 5, 21, &imp.replace("f 21 -2 1", "f 21 -2 2")).is_err());
        let unit = GOOD.replace("g 1 1", "u 1 1");
        assert!(
            check_lemmas(1, 3, 7, &unit)
                .unwrap_err()
                .reason
                .contains("unit")
        );
    }
}
