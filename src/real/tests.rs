//! Tests of the whole real-space pipeline, against brute force and published facts.

use super::*;
use crate::brute;
use crate::cnf::Var;

fn run(n: usize, p: usize) -> RealReport {
    decide(n, p, &RealOptions::new(), None, &mut |_| {}).unwrap()
}

fn assert_feasible(r: &RealReport) {
    match &r.answer {
        RealAnswer::Feasible { orbit, check } => {
            assert_eq!(orbit.len(), r.p);
            // docs/math.md §10: every coordinate spans at most max D
            let maxd = check.profile.iter().copied().max().unwrap_or(0);
            for c in 0..r.n {
                let lo = orbit.iter().map(|x| x[c]).min().unwrap();
                let hi = orbit.iter().map(|x| x[c]).max().unwrap();
                assert!(hi - lo <= maxd, "coordinate {c} spans {} > {maxd}", hi - lo);
            }
            // a second, local check of the isometric-cycle condition
            let d =
                |a: &[i64], b: &[i64]| a.iter().zip(b).map(|(x, y)| (x - y).abs()).max().unwrap();
            for k in 1..r.p {
                for i in 0..r.p {
                    assert_eq!(d(&orbit[i], &orbit[(i + k) % r.p]), d(&orbit[0], &orbit[k]));
                }
                assert!(d(&orbit[0], &orbit[k]) > 0);
            }
        }
        a => panic!("n={} p={}: expected feasible, got {a:?}", r.n, r.p),
    }
}

fn assert_certified_infeasible(r: &RealReport) {
    match &r.answer {
        RealAnswer::Infeasible { check: Some(c), .. } => {
            assert_eq!((c.n, c.p), (r.n, r.p));
            assert!(c.lrat.added >= 1);
        }
        a => panic!(
            "n={} p={}: expected a certified refutation, got {a:?}",
            r.n, r.p
        ),
    }
}

/// Periods 1..2^n occur (docs/math.md §5: any cyclic order of {0,1}^n's
/// points, [derived]); above the bound of B. Lemmens and M. Scheutzow, Ergodic
/// Theory Dynam. Systems 25 (2005) 861–871 [paper], max_k 2^k C(n,k) = 2 and 4
/// for n = 1, 2, no period occurs. We refute two periods past the bound.
#[test]
fn dimensions_one_and_two_match_the_published_periods() {
    for (n, top) in [(1usize, 2usize), (2, 4)] {
        for p in 1..=top {
            assert_feasible(&run(n, p));
        }
        for p in top + 1..=top + 2 {
            assert_certified_infeasible(&run(n, p));
        }
    }
}

/// Periods 1..8 occur in R^3 (docs/math.md §5); the refutations of 9..12 (the
/// theorem of R. Lyons and R. D. Nussbaum, 1992 [recalled], with the bound 12 of
/// Lemmens and Scheutzow) are tests of the binary (see below).
#[test]
fn dimension_three_has_every_period_up_to_eight() {
    for p in 1..=8 {
        assert_feasible(&run(3, p));
    }
}

// n = 3, p = 9..12 (R. Lyons and R. D. Nussbaum, 1992 [recalled]) are in
// tests/all/real_cli.rs: one test of the bundled search with bundles
// re-checked, and one ignored test per period with the hand-off to CaDiCaL.

/// Every period feasible on a small box (independent brute force) is feasible
/// over R^n, and the orbit found spans at most max D per coordinate.
#[test]
fn grid_feasible_periods_are_real_feasible() {
    for (n, side) in [(1usize, 3i64), (2, 2), (3, 1)] {
        let bounds = vec![(0, side); n];
        for p in 1..=8usize {
            if brute::find_cycle(&bounds, p).is_some() {
                assert_feasible(&run(n, p));
            }
        }
    }
}

/// The normalisation of `encodings/real-space.md` §4 applied to a cycle:
/// multiplier making `D_1` least among unit classes, then coordinates ordered
/// by their first tight pair and signed so that pair is tight upward.
/// Returns the truth value of every skeleton variable, and the profile.
fn normalised_assignment(orbit: &[Vec<i64>], sk: &skeleton::Skeleton) -> (Vec<bool>, Vec<i64>) {
    let (n, p) = (sk.n, sk.p);
    let d = |a: &[i64], b: &[i64]| a.iter().zip(b).map(|(x, y)| (x - y).abs()).max().unwrap();
    let prof = |o: &[Vec<i64>]| (1..=p / 2).map(|k| d(&o[0], &o[k])).collect::<Vec<i64>>();
    // multiplier
    let g = prof(orbit);
    let best = (1..p)
        .filter(|a| num_integer::Integer::gcd(a, &p) == 1)
        .min_by_key(|&a| g[skeleton::kappa(0, a, p) - 1])
        .unwrap();
    let mut x: Vec<Vec<i64>> = (0..p).map(|i| orbit[(best * i) % p].clone()).collect();
    let g = prof(&x);
    // coordinates by first tight pair (lexicographic pair order), signs upward there
    let tight_at = |x: &[Vec<i64>], c: usize, i: usize, j: usize| {
        (x[j][c] - x[i][c]).abs() == g[skeleton::kappa(i, j, p) - 1]
    };
    let first = |x: &[Vec<i64>], c: usize| {
        skeleton::pairs(p)
            .position(|(i, j)| tight_at(x, c, i, j))
            .unwrap_or(usize::MAX)
    };
    let mut coords: Vec<usize> = (0..n).collect();
    coords.sort_by_key(|&c| first(&x, c));
    x = x
        .iter()
        .map(|pt| coords.iter().map(|&c| pt[c]).collect())
        .collect();
    for c in 0..n {
        if let Some((i, j)) = skeleton::pairs(p).find(|&(i, j)| tight_at(&x, c, i, j))
            && x[j][c] < x[i][c]
        {
            for pt in &mut x {
                pt[c] = -pt[c];
            }
        }
    }
    let mut val = vec![false; sk.cnf.num_vars() as usize];
    for (v, m) in sk.map.iter() {
        val[v.index()] = match m {
            crate::varmap::Meaning::Tight { i, j, c } => {
                x[*j][*c] - x[*i][*c] == g[skeleton::kappa(*i, *j, p) - 1]
            }
            crate::varmap::Meaning::Aux { index, .. } => {
                let (t, c) = (*index as usize / n, *index as usize % n);
                skeleton::pairs(p)
                    .take(t + 1)
                    .any(|(i, j)| tight_at(&x, c, i, j))
            }
            _ => false,
        };
    }
    (val, g)
}

/// Every isometric cycle found by brute force on small boxes has an image
/// under the symmetries whose truth values satisfy every skeleton clause and
/// every order lemma (totality, transitivity, crossing-order; the
/// equilateral lemmas exist only where no cycle does), and whose profile
/// satisfies the normalisation (`D_1 ≤ D_u`; `D_k ≥ 1` after scaling).
#[test]
fn every_small_cycle_has_an_image_satisfying_the_skeleton() {
    let mut seen = 0;
    for (n, side, ps) in [
        (1usize, 4i64, 2..=2usize),
        (2, 2, 2..=4),
        (2, 3, 3..=4),
        (3, 1, 2..=8),
        (3, 2, 5..=6),
    ] {
        let bounds = vec![(0, side); n];
        for p in ps {
            let sk = skeleton::build(n, p, &SkeletonOptions::default()).unwrap();
            let mut th = theory::Theory::new(n, p);
            let order = th.order_lemmas();
            let facts: Vec<Vec<i64>> = th.facts().iter().map(|f| f.coeffs.clone()).collect();
            for orbit in brute::all_cycles(&bounds, p, 300) {
                let (val, g) = normalised_assignment(&orbit, &sk);
                if let Some(k) = sk.cnf.first_falsified(&val) {
                    panic!(
                        "n={n} p={p} orbit {orbit:?}: clause {k} {:?} fails",
                        sk.cnf.clause(k)
                    );
                }
                // the order lemmas, each literal read at this cycle
                let holds =
                    |f: usize| facts[f].iter().zip(&g).map(|(a, d)| a * d).sum::<i64>() >= 0;
                let tight =
                    |i: usize, j: usize, c: usize| val[skeleton::tight_var(n, p, i, j, c).index()];
                for l in &order {
                    let sat = l.conclusions.iter().any(|&(f, _)| holds(f))
                        || l.facts.iter().any(|&(f, _)| !holds(f))
                        || l.atoms.iter().any(|&((i, j, c), _)| !tight(i, j, c));
                    assert!(sat, "n={n} p={p} orbit {orbit:?}: order lemma {l:?} fails");
                }
                for u in 2..=p / 2 {
                    if num_integer::Integer::gcd(&u, &p) == 1 {
                        assert!(
                            g[0] <= g[u - 1],
                            "multiplier normalisation fails for {orbit:?}"
                        );
                    }
                }
                seen += 1;
            }
        }
    }
    assert!(seen > 300, "only {seen} cycles");
}

/// The lemma file of `lemmas` with the theory's facts numbered right after
/// the skeleton's `T` variables, as the search numbers them: the first fact
/// variable, the fact table and the text.
fn lemma_file(
    th: &theory::Theory,
    n: usize,
    p: usize,
    lemmas: &[theory::Lemma],
) -> (u32, Vec<(u32, Vec<i64>)>, String) {
    let base = (n * p * (p - 1)) as u32 + 1;
    let facts: Vec<(u32, Vec<i64>)> = th
        .facts()
        .iter()
        .enumerate()
        .map(|(f, x)| (base + f as u32, x.coeffs.clone()))
        .collect();
    let mut buf = Vec::new();
    certificate::render_lemmas(n, p, &facts, lemmas, &mut buf).unwrap();
    (base, facts, String::from_utf8(buf).unwrap())
}

/// The pattern lemmas (two-atom cycles) all pass the independent checker.
#[test]
fn pattern_lemmas_pass_the_farkas_checker() {
    for (n, p) in [(1, 5), (2, 6), (3, 7)] {
        let mut th = theory::Theory::new(n, p);
        let lemmas: Vec<theory::Lemma> = th.pattern_lemmas().into_iter().map(|x| x.1).collect();
        let (base, facts, text) = lemma_file(&th, n, p, &lemmas);
        let (clauses, s) = farkas_check::check_lemmas(n, p, base as usize, &text).unwrap();
        assert_eq!(clauses.len(), lemmas.len());
        assert_eq!(s.facts, facts.len());
    }
}

fn certificate_of(n: usize, p: usize, dir: &Path) {
    let mut o = RealOptions::new();
    o.certificate_dir = Some(dir.to_path_buf());
    assert_certified_infeasible(&decide(n, p, &o, None, &mut |_| {}).unwrap());
}

/// A changed multiplier, a changed or missing lemma, and a proof for another
/// skeleton are each rejected, with the reason.
#[test]
fn tampered_certificates_are_rejected() {
    let tmp = tempfile::tempdir().unwrap();
    let dir = tmp.path().join("c");
    certificate_of(2, 6, &dir);
    certificate::check_dir(2, 6, &dir).unwrap();
    let lem_path = dir.join(certificate::LEMMAS);
    let good = std::fs::read_to_string(&lem_path).unwrap();
    let restore = || std::fs::write(&lem_path, &good).unwrap();

    // a changed Farkas multiplier
    let line = good.lines().position(|l| l.contains(" y 1 1")).unwrap();
    let bad: Vec<String> = good
        .lines()
        .enumerate()
        .map(|(k, l)| {
            if k == line {
                l.replacen(" y 1 1", " y 2 1", 1)
            } else {
                l.to_string()
            }
        })
        .collect();
    std::fs::write(&lem_path, bad.join("\n") + "\n").unwrap();
    match certificate::check_dir(2, 6, &dir) {
        Err(Error::Farkas(e)) => assert_eq!(e.line, line + 1, "{e}"),
        r => panic!("changed multiplier accepted: {r:?}"),
    }
    restore();

    // a changed lemma clause (a literal replaced by another tight variable)
    let line = good.lines().position(|l| l.starts_with('-')).unwrap();
    let mut lines: Vec<String> = good.lines().map(String::from).collect();
    let first_lit: i64 = lines[line]
        .split_whitespace()
        .next()
        .unwrap()
        .parse()
        .unwrap();
    let other = if first_lit == -1 { -2 } else { -1 };
    lines[line] = lines[line].replacen(&first_lit.to_string(), &other.to_string(), 1);
    std::fs::write(&lem_path, lines.join("\n") + "\n").unwrap();
    assert!(matches!(
        certificate::check_dir(2, 6, &dir),
        Err(Error::Farkas(_) | Error::Proof(_))
    ));
    restore();

    // a missing lemma: the proof's ids no longer fit
    let all: Vec<&str> = good.lines().collect();
    let last = all
        .iter()
        .rposition(|l| l.starts_with('-') || l.chars().next().is_some_and(|c| c.is_ascii_digit()))
        .unwrap();
    let fewer: Vec<&str> = good
        .lines()
        .enumerate()
        .filter(|(k, _)| *k != last)
        .map(|x| x.1)
        .collect();
    std::fs::write(&lem_path, fewer.join("\n") + "\n").unwrap();
    assert!(matches!(
        certificate::check_dir(2, 6, &dir),
        Err(Error::Proof(_))
    ));
    restore();
    certificate::check_dir(2, 6, &dir).unwrap();

    // the certificate does not answer another question
    assert!(matches!(
        certificate::check_dir(2, 7, &dir),
        Err(Error::Certificate(_))
    ));
    // a proof made for another skeleton: the skeleton of n = 2, p = 5 in its place
    let other = tmp.path().join("d");
    certificate_of(2, 5, &other);
    std::fs::copy(other.join(certificate::PROOF), dir.join(certificate::PROOF)).unwrap();
    assert!(matches!(
        certificate::check_dir(2, 6, &dir),
        Err(Error::Proof(_))
    ));
    // a skeleton with other options than its header says
    let sk_path = dir.join(certificate::SKELETON);
    let text = std::fs::read_to_string(&sk_path).unwrap();
    std::fs::write(
        &sk_path,
        text.replacen("\"transitivity\":true", "\"transitivity\":false", 1),
    )
    .unwrap();
    assert!(matches!(
        certificate::check_dir(2, 6, &dir),
        Err(Error::Certificate(_))
    ));
}

#[test]
fn orbit_coordinates_come_from_tight_variables() {
    // the closed numbering used by the Farkas checker agrees with the variable map
    let sk = skeleton::build(3, 5, &SkeletonOptions::default()).unwrap();
    for (v, m) in sk.map.iter() {
        if let crate::varmap::Meaning::Tight { i, j, c } = *m {
            assert_eq!(v, skeleton::tight_var(3, 5, i, j, c));
            assert!(v.dimacs() as usize <= 3 * 5 * 4);
        }
    }
    let _ = Var::from_dimacs(1);
}

/// The order lemmas (totality, transitivity) and the equilateral lemmas all
/// pass the independent checker, which rejects an equilateral line with too
/// few indices, with a fact that does not force equality, or with a
/// positive literal.
#[test]
fn order_and_equilateral_lemmas_pass_the_checker_and_tampering_is_caught() {
    for (n, p) in [(1, 4), (2, 6), (2, 9), (3, 9), (3, 12)] {
        let mut th = theory::Theory::new(n, p);
        let lemmas = th.order_lemmas();
        let eq = lemmas.iter().filter(|l| l.equilateral.is_some()).count();
        assert_eq!(eq, theory::equilateral_sets(n, p, u64::MAX).len());
        assert!(eq >= 1, "n={n} p={p}: no equilateral lemma");
        let (base, _, text) = lemma_file(&th, n, p, &lemmas);
        let (clauses, _) = farkas_check::check_lemmas(n, p, base as usize, &text).unwrap();
        assert_eq!(clauses.len(), lemmas.len());
        // tamper with the first equilateral line
        let lines: Vec<&str> = text.lines().collect();
        let at = lines.iter().position(|l| l.contains(" 0 e ")).unwrap();
        let (clause, set) = lines[at].split_once(" 0 e ").unwrap();
        let mut idx: Vec<&str> = set.split_whitespace().collect();
        let tampered = |line: String| {
            let mut t = lines.clone();
            t[at] = &line;
            let r = farkas_check::check_lemmas(n, p, base as usize, &(t.join("\n") + "\n"));
            let e = r.expect_err("tampered equilateral lemma accepted");
            assert_eq!(e.line, at + 1, "{e}");
            e.reason
        };
        idx.pop();
        let r = tampered(format!("{clause} 0 e {}", idx.join(" ")));
        assert!(r.contains("not more than"), "{r}");
        let lits: Vec<&str> = clause.split_whitespace().collect();
        let r = tampered(format!("{} 0 e {set}", lits[1..].join(" ")));
        assert!(
            r.contains("do not force") || r.contains("is no"),
            "dropping a literal: {r}"
        );
        let flipped = lits[0].trim_start_matches('-');
        let r = tampered(format!("{flipped} {} 0 e {set}", lits[1..].join(" ")));
        assert!(r.contains("not a negated declared fact"), "{r}");
    }
}

/// `equilateral_sets` against brute force: every set is a clique of more
/// than 2^n indices of the circulant graph of its classes, and its class
/// sets are exactly the minimal class sets (two classes or more) whose
/// circulant graph has such a clique, found here by trying every subset.
#[test]
fn equilateral_sets_are_exactly_the_minimal_class_sets_with_large_cliques() {
    for (n, p) in [(1, 3), (1, 6), (2, 5), (2, 8), (2, 11), (3, 9), (3, 12)] {
        let q = (1usize << n) + 1;
        let sets = theory::equilateral_sets(n, p, u64::MAX);
        let mut ks = Vec::new();
        for set in &sets {
            assert_eq!(set.len(), q);
            let k = theory::classes_of(set, p);
            assert!(k.len() >= 2);
            ks.push(k);
        }
        let m = p / 2;
        let has_clique = |k: &[usize]| {
            (0u32..1 << p).any(|s| {
                s.count_ones() as usize == q
                    && (0..p).all(|i| {
                        (0..p).all(|j| {
                            i == j
                                || s & (1 << i) == 0
                                || s & (1 << j) == 0
                                || k.contains(&skeleton::kappa(i, j, p))
                        })
                    })
            })
        };
        let subsets: Vec<Vec<usize>> = (1u32..1 << m)
            .map(|b| (1..=m).filter(|&k| b & (1 << (k - 1)) != 0).collect())
            .collect();
        let good: Vec<&Vec<usize>> = subsets.iter().filter(|k| has_clique(k)).collect();
        let minimal: Vec<&Vec<usize>> = good
            .iter()
            .copied()
            .filter(|k| k.len() >= 2)
            .filter(|k| {
                !good
                    .iter()
                    .any(|g| g.len() < k.len() && g.iter().all(|x| k.contains(x)))
            })
            .collect();
        let mut want: Vec<Vec<usize>> = minimal.into_iter().cloned().collect();
        want.sort();
        ks.sort();
        assert_eq!(ks, want, "n={n} p={p}");
    }
}

/// The bound behind the equilateral lemmas, by brute force on small boxes:
/// (R^n, sup-norm) has 2^n points at one distance from each other but not
/// 2^n + 1, for n = 1, 2 (on {0..4}^n, every distance; Petty's bound
/// [recalled], proved in encodings/real-space.md §5).
#[test]
fn no_equilateral_set_beyond_two_to_the_n_on_small_boxes() {
    for n in 1..=2usize {
        let pts: Vec<Vec<i64>> = (0..5i64.pow(n as u32))
            .map(|mut v| {
                (0..n)
                    .map(|_| {
                        let x = v % 5;
                        v /= 5;
                        x
                    })
                    .collect()
            })
            .collect();
        let d = |a: &[i64], b: &[i64]| a.iter().zip(b).map(|(x, y)| (x - y).abs()).max().unwrap();
        for r in 1..=4 {
            // largest set at pairwise distance r, by extending cliques
            fn grow(
                pts: &[Vec<i64>],
                set: &mut Vec<usize>,
                from: usize,
                ok: &dyn Fn(usize, usize) -> bool,
            ) -> usize {
                let mut best = set.len();
                for v in from..pts.len() {
                    if set.iter().all(|&u| ok(u, v)) {
                        set.push(v);
                        best = best.max(grow(pts, set, v + 1, ok));
                        set.pop();
                    }
                }
                best
            }
            let ok = |u: usize, v: usize| d(&pts[u], &pts[v]) == r;
            let best = grow(&pts, &mut Vec::new(), 0, &ok);
            assert_eq!(best, 1 << n, "n={n} r={r}");
        }
    }
}

/// Whether the far graph of `mask` (classes at the largest distance) is the
/// union of `n` bicliques "low end × high end" of coordinates, by brute force
/// over each point's side (low, high or neither) in each coordinate.
fn far_graph_fits(n: usize, p: usize, mask: u64) -> bool {
    let far = |a: usize, b: usize| mask >> (skeleton::kappa(a, b, p) - 1) & 1 == 1;
    // sides[i][c]: 0 neither, 1 low, 2 high
    fn go(
        i: usize,
        n: usize,
        p: usize,
        sides: &mut Vec<Vec<u8>>,
        far: &dyn Fn(usize, usize) -> bool,
    ) -> bool {
        if i == p {
            return true;
        }
        for code in 0..3usize.pow(n as u32) {
            let s: Vec<u8> = (0..n)
                .map(|c| (code / 3usize.pow(c as u32) % 3) as u8)
                .collect();
            let ok = (0..i).all(|j| {
                let split = (0..n).any(|c| s[c] != 0 && sides[j][c] != 0 && s[c] != sides[j][c]);
                split == far(i, j)
            });
            if ok {
                sides.push(s);
                if go(i + 1, n, p, sides, far) {
                    return true;
                }
                sides.pop();
            }
        }
        false
    }
    go(0, n, p, &mut Vec::new(), &far)
}

/// Every top-pattern exclusion holds against brute force: no top pattern
/// it covers has a far graph that is the union of `n` bicliques, which is
/// what a cycle in R^n with that top pattern would need
/// (encodings/real-space.md §5, "Top-pattern lemmas"). And the lemmas pass
/// the checker, which rejects a missing pair and a missing shorter class.
#[test]
fn top_pattern_exclusions_hold_against_brute_force_and_the_checker() {
    let mut found = 0;
    for (n, p) in [
        (1usize, 3usize),
        (1, 4),
        (1, 5),
        (2, 5),
        (2, 6),
        (2, 7),
        (2, 8),
    ] {
        let m = p / 2;
        let ex = theory::top_exclusions(n, p);
        found += ex.len();
        for theory::TopExclusion { pairs, far, close } in &ex {
            assert_eq!(pairs.len(), n + 1);
            for mask in 1u64..1 << m {
                let covers = far.iter().all(|&k| mask >> (k - 1) & 1 == 1)
                    && close.iter().all(|&j| mask >> (j - 1) & 1 == 0);
                if covers {
                    assert!(
                        !far_graph_fits(n, p, mask),
                        "n={n} p={p} mask {mask:b}: excluded, but the far graph fits"
                    );
                }
            }
        }
        let mut th = theory::Theory::new(n, p);
        let lemmas = th.order_lemmas();
        assert_eq!(
            lemmas.iter().filter(|l| l.fooling.is_some()).count(),
            ex.len()
        );
        let (base, _, text) = lemma_file(&th, n, p, &lemmas);
        let (_, summary) = farkas_check::check_lemmas(n, p, base as usize, &text).unwrap();
        assert_eq!(summary.top, ex.len());
        let lines: Vec<&str> = text.lines().collect();
        let Some(at) = lines.iter().position(|l| l.contains(" 0 t ")) else {
            continue;
        };
        let (clause, pairs) = lines[at].split_once(" 0 t ").unwrap();
        let tampered = |line: String| {
            let mut t = lines.clone();
            t[at] = &line;
            farkas_check::check_lemmas(n, p, base as usize, &(t.join("\n") + "\n"))
                .expect_err("tampered top-pattern lemma accepted")
                .reason
        };
        let ws: Vec<&str> = pairs.split_whitespace().collect();
        let r = tampered(format!("{clause} 0 t {}", ws[..ws.len() - 2].join(" ")));
        assert!(r.contains("pairs where"), "{r}");
        let lits: Vec<&str> = clause.split_whitespace().collect();
        if let Some(pos) = lits.iter().position(|l| !l.starts_with('-')) {
            let mut fewer = lits.clone();
            fewer.remove(pos);
            let r = tampered(format!("{} 0 t {pairs}", fewer.join(" ")));
            assert!(r.contains("could share"), "{r}");
        }
    }
    assert!(found >= 10, "only {found} exclusions");
}
