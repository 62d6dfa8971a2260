//! Exact sizes, row by row: every family of every table, on many questions.
//!
//! For each question and option set below, the sizes [`estimate`] reads from
//! the table rows must equal what the encoder emitted family by family, and
//! the totals must be those of the formula. Every row of every table must be
//! reached with at least one clause by some question here, so a new family
//! cannot go untested; a few small cases are pinned to literal numbers, with
//! the formula evaluated in a comment.

use std::collections::BTreeSet;

use super::*;
use crate::grid::Grid;
use crate::points::PointSet;

fn q(spec: &str, dim: usize, p: usize) -> Question {
    Question::new(Grid::parse(spec, Some(dim)).unwrap(), p).unwrap()
}

/// `estimate` predicts every family of `encode`, and the totals add up.
pub(crate) fn assert_estimate_is_exact(question: &Question, opts: &EncodeOptions) -> Encoding {
    let e = encode(question, opts, u64::MAX).unwrap();
    assert_eq!(
        e.families,
        estimate(question, opts),
        "{question:?} {opts:?}"
    );
    let total: u64 = e.families.iter().map(|f| f.clauses).sum();
    assert_eq!(total as usize, e.cnf.num_clauses());
    assert_eq!(e.map.len() as u32, e.cnf.num_vars());
    e
}

/// `(family, vars, clauses)` in the order added.
pub(crate) fn family_counts(e: &Encoding) -> Vec<(&str, u64, u64)> {
    e.families
        .iter()
        .map(|f| (f.family.as_str(), f.vars, f.clauses))
        .collect()
}

/// Every box with up to `dim` coordinates of up to `max_side` points
/// (sides in non-decreasing order), centred as the soundness tests do.
fn boxes(dim: usize, max_side: i64) -> Vec<Grid> {
    let mut out = Vec::new();
    let mut sides: Vec<Vec<i64>> = vec![vec![]];
    for _ in 0..dim {
        sides = sides
            .into_iter()
            .flat_map(|s| {
                let start = s.last().copied().unwrap_or(1);
                (start..=max_side).map(move |k| [s.clone(), vec![k]].concat())
            })
            .collect();
        out.extend(
            sides.iter().map(|s| {
                Grid::new(s.iter().map(|&k| (-(k / 2), k - 1 - k / 2)).collect()).unwrap()
            }),
        );
    }
    out
}

/// `base` with each symmetry set of `names` in turn, then `base` with each
/// `(count, packing, classes)` of `redundant` in turn.
pub(crate) fn variations(
    base: &EncodeOptions,
    names: &[&str],
    redundant: &[(bool, bool, bool)],
) -> Vec<EncodeOptions> {
    let symmetric = names.iter().map(|n| EncodeOptions {
        symmetry: Symmetry::parse(n).unwrap(),
        ..base.clone()
    });
    let counting = redundant
        .iter()
        .map(|&(count, packing, classes)| EncodeOptions {
            count,
            packing,
            classes,
            nested: classes,
            bicliques: classes,
            cliques: classes,
            subbox: classes,
            gaps: classes,
            ..base.clone()
        });
    symmetric.chain(counting).collect()
}

/// The option sets tried on every question: the default, the plain
/// formulation, and each optional family alone (with what it needs).
fn option_sets() -> Vec<EncodeOptions> {
    let mut out = vec![EncodeOptions::default(), EncodeOptions::plain()];
    out.extend(variations(
        &EncodeOptions::plain(),
        &[
            "translate",
            "multiplier",
            "rotate",
            "isometry,stabilizer,reverse",
        ],
        &[
            (true, false, false),
            (false, true, false),
            (false, false, true),
        ],
    ));
    out
}

/// The questions of the cycle formulations: every small box in dimensions
/// one to three, periods up to 9 (and the point count), both classes, and
/// a few larger ones where the packing and exclusion families act.
fn cycle_questions() -> Vec<Question> {
    let mut out = Vec::new();
    let mut grids = boxes(2, 5);
    grids.extend(boxes(3, 3).into_iter().filter(|g| g.dim() == 3));
    for g in grids {
        let max_p = g.num_points().min(9) as usize;
        for p in 1..=max_p {
            for class in [MapClass::Nonexpansive, MapClass::Topical] {
                out.push(Question::new(g.clone(), p).unwrap().with_class(class));
            }
        }
    }
    for (spec, dim, p) in [
        ("-1..1", 3, 9),
        ("-1..1", 4, 17),
        ("-1..1", 4, 18),
        ("0..1,0..1,0..2", 3, 6),
        ("0..3", 3, 12),
        ("0..1,-1..1,0..3", 3, 7),
        ("0..4,0..0,0..2", 3, 8),
    ] {
        out.push(q(spec, dim, p));
        out.push(q(spec, dim, p).with_class(MapClass::Topical));
    }
    out
}

/// The questions of the full-map formulation: point sets of our own, and boxes.
fn full_map_questions() -> Vec<Question> {
    let mut out = Vec::new();
    for text in [
        "-2 -2\n-2 2\n2 -2\n2 2\n0 1\n",
        "0 0\n1 0\n-1 0\n0 1\n0 -1\n",
        "0 0\n0 1\n1 0\n",
        "0\n3\n4\n9\n",
        "0 0 0\n1 1 0\n2 0 1\n0 2 2\n",
        "7 7\n",
    ] {
        let d = PointSet::parse(text, "t").unwrap();
        for p in 1..=d.len() {
            out.push(Question::on_points(d.clone(), p).unwrap());
        }
    }
    for g in boxes(2, 3) {
        for p in 1..=g.num_points().min(5) as usize {
            out.push(Question::new(g.clone(), p).unwrap());
        }
    }
    out
}

/// The names of the rows that emitted at least one clause in `e`.
fn reached(e: &Encoding, into: &mut BTreeSet<(Formulation, String)>) {
    for f in e.families.iter().filter(|f| f.clauses > 0) {
        into.insert((e.options.formulation, f.family.clone()));
    }
}

fn all_rows() -> BTreeSet<(Formulation, String)> {
    let mut rows = BTreeSet::new();
    for (f, names) in [
        (
            Formulation::IsometricCycle,
            cycle::ISOMETRIC_CYCLE
                .iter()
                .map(|r| r.name)
                .collect::<Vec<_>>(),
        ),
        (
            Formulation::TopicalCycle,
            cycle::TOPICAL_CYCLE.iter().map(|r| r.name).collect(),
        ),
        (
            Formulation::FullMap,
            fullmap::FULL_MAP.iter().map(|r| r.name).collect(),
        ),
    ] {
        rows.extend(names.into_iter().map(|n| (f, n.to_string())));
    }
    rows
}

#[test]
fn every_row_of_every_table_is_exact_on_every_question() {
    let mut seen = BTreeSet::new();
    let mut checked = 0;
    for question in cycle_questions() {
        for o in option_sets() {
            reached(&assert_estimate_is_exact(&question, &o), &mut seen);
            checked += 1;
        }
    }
    for question in full_map_questions() {
        for o in option_sets() {
            let o = EncodeOptions {
                formulation: Formulation::FullMap,
                ..o
            };
            let e = assert_estimate_is_exact(&question, &o);
            assert_eq!(e.options.formulation, Formulation::FullMap);
            reached(&e, &mut seen);
            checked += 1;
        }
    }
    let missing: Vec<_> = all_rows().difference(&seen).cloned().collect();
    assert!(missing.is_empty(), "rows no question reached: {missing:?}");
    assert!(checked > 3000, "{checked} encodings");
}

/// The ladder row of `sym-reverse` shares its name with the ternary row, so
/// the test above counts either; this one forces the ladder on the small
/// questions (it is kept only on large boxes) and checks its size row on
/// every one where step 6 acts.
#[test]
fn the_ladder_row_of_step_six_is_exact_on_every_question() {
    let laddered = super::soundness::with_ladder(|| {
        let mut laddered = 0;
        for question in cycle_questions() {
            for o in option_sets() {
                let e = assert_estimate_is_exact(&question, &o);
                if e.options.reverse_ladder
                    && e.families
                        .iter()
                        .any(|f| f.family == "sym-reverse" && f.clauses > 0)
                {
                    laddered += 1;
                }
            }
        }
        laddered
    });
    assert!(laddered > 100, "{laddered} encodings with the ladder");
}

#[test]
fn base_sizes_are_the_plain_cycle_formulas_and_bound_the_full_map() {
    for question in cycle_questions() {
        let plain: Size = estimate(&question, &EncodeOptions::plain())
            .iter()
            .map(FamilyCount::size)
            .sum();
        let (clauses, vars) = cycle::base_size(&question);
        assert_eq!(
            (clauses as u64, vars as u64),
            (plain.clauses, plain.vars),
            "{question:?}"
        );
    }
    for question in full_map_questions() {
        let plain: Size = estimate(
            &question,
            &EncodeOptions {
                formulation: Formulation::FullMap,
                ..EncodeOptions::plain()
            },
        )
        .iter()
        .map(FamilyCount::size)
        .sum();
        let (clauses, vars) = fullmap::base_size(&question);
        assert!(
            clauses as u64 <= plain.clauses && vars as u64 == plain.vars,
            "{question:?}"
        );
    }
}

#[test]
fn clause_counts_of_the_cube_question() {
    // {-1,0,1}^3, p = 8: S = 6, L = 2, K = 4, 28 pairs (formulas in encodings/isometric-cycle.md).
    let e = encode(&q("-1..1", 3, 8), &EncodeOptions::plain(), u64::MAX).unwrap();
    assert_eq!(
        family_counts(&e),
        vec![
            ("coord-order", 48, 24),
            ("profile", 8, 8),
            ("dist-upper", 0, 168),
            ("dist-lower", 336, 896),
        ]
    );
}

/// The `sym-*` entries of [`family_counts`].
fn symmetry_counts(e: &Encoding) -> Vec<(&str, u64, u64)> {
    let mut all = family_counts(e);
    all.retain(|f| f.0.starts_with("sym-"));
    all
}

#[test]
fn symmetry_counts_of_the_cube_question() {
    // {-1,0,1}^3, p = 8, every break (formulas in symmetry/sizes.rs and
    // encodings/symmetry.md): n' = 3, N = 27, L = 2, K = 4, one side class
    // s = 2 with m = 3.
    let e = encode(&q("-1..1", 3, 8), &EncodeOptions::default(), u64::MAX).unwrap();
    assert_eq!(
        symmetry_counts(&e),
        vec![
            // n' = 3 clauses.
            ("sym-translate", 0, 3),
            // φ(8) = 4, τ(8) = 4: μ = 1, F = 2·3 − 4 = 2, F_K = 1 (p even):
            // μ(K − 1) = 3 vars; (F − F_K) + (μK − F)(L − 1) + (μ(K − 1) − F + F_K)L
            // = 1 + 2 + 2·2 = 7 clauses.
            ("sym-multiplier", 3, 7),
            // T = C(1 + 3, 3) = 4 types, 2^3 = 8 corners: p(T − 1) = 24 vars;
            // (p − 1)((N − 8) + (T − 2) + (T − 1)) + (T − 1) = 7·24 + 3 = 171 clauses.
            ("sym-rotate", 24, 171),
            ("sym-isometry", 0, 1),
            // |R|·N − P = 4·27 − C(⌈9/2⌉ + 2, 3) = 108 − 35 = 73 clauses.
            ("sym-stabilizer", 0, 73),
            // Σ_r Σ_j (c_1 + … + c_{j−1}) over the four representatives (the
            // same formula is evaluated by hand on the square below).
            ("sym-reverse", 0, 417),
            // h = 4: M = 1 pair of offsets, one pair of twins (k = 2):
            // 1 + M·L + (N − 1) = 29 vars; 1 + 4·M·L + (4N − 4) = 113 clauses.
            ("sym-twins", 29, 113),
        ]
    );
}

#[test]
fn stabilizer_and_reverse_counts_of_the_square_by_hand() {
    // {-1,0,1}^2 (points numbered 0..8 in grid order, (−1,−1) = 0, (0,0) = 4),
    // p = 5. R = {0, 1, 4} (corner, edge, centre), N = 9, one side class
    // s = 2, m = 2: P = C(⌈9/2⌉ + 1, 2) = 15, so sym-stabilizer has
    // 3·9 − 15 = 12 clauses. Orbits of the stabilisers, by least point:
    // r = 0 (the swap): {0} {1,3} {2,6} {4} {5,7} {8}: 1 + 3 + 5 + 6 + 8 = 23;
    // r = 1 (the flip of the second coordinate): {0,2} {1} {3,5} {4} {6,8} {7}:
    // 3 + 5 + 6 + 8 = 22; r = 4 (the whole group): {0,2,6,8} {1,3,5,7} {4}:
    // 0 + 4 = 4. sym-reverse: 23 + 22 + 4 = 49 clauses.
    let o = EncodeOptions {
        symmetry: Symmetry::parse("isometry,stabilizer,reverse").unwrap(),
        ..EncodeOptions::plain()
    };
    let e = encode(&q("-1..1", 2, 5), &o, u64::MAX).unwrap();
    assert_eq!(
        symmetry_counts(&e),
        vec![
            ("sym-isometry", 0, 1),
            ("sym-stabilizer", 0, 12),
            ("sym-reverse", 0, 49)
        ]
    );
}

#[test]
fn clause_counts_of_a_topical_question() {
    // {0,1,2}^2, p = 3: s = (2, 2), L = 2, K = p − 1 = 2, 3 pairs
    // (formulas in encodings/topical.md).
    // coord-order 3·4 / 3·2; profile K·L = 4 / 4; tdist-upper 3·(2 + 2) = 12;
    // tdist-lower 3·2·4 = 24 vars, 3·(2L + 2·(2·5)) = 3·24 = 72 clauses.
    let t = q("0..2", 2, 3).with_class(MapClass::Topical);
    let e = encode(&t, &EncodeOptions::plain(), u64::MAX).unwrap();
    assert_eq!(
        family_counts(&e),
        vec![
            ("coord-order", 12, 6),
            ("profile", 4, 4),
            ("tdist-upper", 0, 12),
            ("tdist-lower", 24, 72),
        ]
    );
    // The default adds: sym-translate one clause per coordinate; sym-sort with
    // N = 9, P = 1: 1 + 1·2 + 2·8 = 19 vars, 1 + 2·2 + 2·17 = 39 clauses.
    let d = encode(&t, &EncodeOptions::default(), u64::MAX).unwrap();
    let sort = d.families.iter().find(|f| f.family == "sym-sort").unwrap();
    assert_eq!((sort.vars, sort.clauses), (19, 39));
    let names: Vec<&str> = d.families.iter().map(|f| f.family.as_str()).collect();
    assert!(!names.contains(&"count-occupancy") && !names.contains(&"sym-reverse"));
}

#[test]
fn every_formulation_of_this_version_is_accepted_and_others_are_named() {
    // Options read back from a header or a store are already resolved, so
    // each formulation must be accepted again.
    let box_q = q("0..1", 2, 2);
    for class in [MapClass::Nonexpansive, MapClass::Topical] {
        let t = box_q.clone().with_class(class);
        let resolved = EncodeOptions::default().resolve(&t);
        assert_eq!(resolved.formulation, Formulation::of_class(class));
        assert!(encode(&t, &resolved, u64::MAX).is_ok());
    }
    assert!(encode(&box_q, &EncodeOptions::full_map(), u64::MAX).is_ok());
    // Options naming a formulation this version does not know do not read.
    let json = serde_json::to_string(&EncodeOptions::default()).unwrap();
    assert!(
        json.contains("\"formulation\":\"isometric-cycle/1\""),
        "{json}"
    );
    let odd = json.replace("isometric-cycle/1", "sideways/9");
    let e = serde_json::from_str::<EncodeOptions>(&odd)
        .unwrap_err()
        .to_string();
    assert!(e.contains("unknown formulation \"sideways/9\""), "{e}");
}

#[test]
fn oversized_questions_are_refused_from_the_base_families() {
    // {0..40}^6, p = 300: 44 850 pairs, sides 40, L = 40, K = 150.
    // coord-order 300·6·39 = 70 200, profile 150·40 = 6 000, dist-upper
    // 44 850·6·40·39 = 419 796 000, dist-lower 44 850·(40 + 6·40·43) =
    // 464 646 000 clauses: 884 518 200; variables 300·240 + 6 000 + 44 850·480
    // = 21 606 000. Refused before any point or group is listed.
    let err = encode(
        &q("0..40", 6, 300),
        &EncodeOptions::default(),
        DEFAULT_MAX_CLAUSES,
    )
    .unwrap_err()
    .to_string();
    assert!(
        err.contains("too large: about 884518200 clauses over 21606000 variables"),
        "{err}"
    );
    // Near the limit the exact size decides, not the base: the plain cube
    // question has 1 096 clauses, the default more.
    let cube = q("-1..1", 3, 8);
    assert!(encode(&cube, &EncodeOptions::plain(), 1_096).is_ok());
    let err = encode(&cube, &EncodeOptions::default(), 1_096).unwrap_err();
    let Error::TooLarge { clauses, .. } = err else {
        panic!("{err}");
    };
    let exact: u64 = estimate(&cube, &EncodeOptions::default())
        .iter()
        .map(|f| f.clauses)
        .sum();
    assert_eq!(clauses, exact);
}

#[test]
fn an_oversized_question_is_refused_before_the_window_searches() {
    // {0,…,40}^2 with p = 12: the closed-form families alone exceed the
    // default limit, while the window searches of `pack-classes` and its
    // companions on such windows take minutes ({0,…,30}^2 fitted once step
    // 6 became a ladder). The refusal reports the closed-form rows' size:
    // every row but the searched ones.
    let question = q("0..40", 2, 12);
    let err = encode(&question, &EncodeOptions::default(), DEFAULT_MAX_CLAUSES).unwrap_err();
    let Error::TooLarge { clauses, .. } = err else {
        panic!("{err}");
    };
    let mut closed = EncodeOptions::default();
    (
        closed.classes,
        closed.nested,
        closed.gaps,
        closed.bicliques,
        closed.cliques,
        closed.orbits,
        closed.subbox,
    ) = (false, false, false, false, false, false, false);
    // `pack-edges` is closed-form but switched with `pack-classes`.
    let without: u64 = estimate(&question, &closed).iter().map(|f| f.clauses).sum();
    assert_eq!(clauses, without + edges::size(&question).clauses);
    assert!(clauses > DEFAULT_MAX_CLAUSES);
}

#[test]
fn offset_classes_fold_around_the_cycle() {
    assert_eq!(offset_class(0, 7, 8), 1);
    assert_eq!(offset_class(2, 6, 8), 4);
    assert_eq!(pairs(4).count(), 6);
}
