//! Tests of the independent verifier.
use super::*;

#[test]
fn self_maps_of_a_finite_set_are_checked_point_by_point() {
    // D = {0, 1, 5} on a line; f swaps 0 and 1 and sends 5 to 1 (fixing 5 would stretch {1, 5}).
    let d = vec![vec![0], vec![1], vec![5]];
    let f = |t: &[(i64, i64)]| -> Vec<(Vec<i64>, Vec<i64>)> {
        t.iter().map(|&(a, b)| (vec![a], vec![b])).collect()
    };
    let orbit = vec![vec![0], vec![1]];
    let ok = check_self_map(&d, &f(&[(0, 1), (1, 0), (5, 1)]), &orbit).unwrap();
    assert_eq!((ok.points_checked, ok.pairs_checked, ok.period), (3, 3, 2));
    let e = |t: &[(i64, i64)], o: &[Vec<i64>]| check_self_map(&d, &f(t), o).unwrap_err();
    assert!(matches!(
        e(&[(0, 1), (1, 0), (5, 2)], &orbit),
        CheckFailure::MapLeavesDomain { .. }
    ));
    // 0 ↦ 5 and 1 ↦ 0 stretch the pair {0, 1} from distance 1 to 5.
    assert!(matches!(
        e(&[(0, 5), (1, 0), (5, 1)], &[vec![0], vec![5], vec![1]]),
        CheckFailure::Expands { .. }
    ));
    assert!(matches!(
        e(&[(0, 1), (1, 0)], &orbit),
        CheckFailure::BadDomain(_)
    ));
    assert!(matches!(
        e(&[(0, 1), (1, 0), (5, 1)], &[vec![0], vec![5]]),
        CheckFailure::NotTheShift { index: 0, .. }
    ));
    assert!(matches!(
        e(&[(0, 1), (1, 0), (5, 1)], &[vec![0], vec![1], vec![0]]),
        CheckFailure::Repeated {
            first: 0,
            second: 2,
            ..
        }
    ));
    assert!(matches!(
        e(&[(0, 1), (1, 0), (5, 1)], &[vec![3]]),
        CheckFailure::OrbitLeavesDomain { index: 0, .. }
    ));
}

fn square() -> Vec<Vec<i64>> {
    vec![vec![-1, -1], vec![-1, 1], vec![1, 1], vec![1, -1]]
}

#[test]
fn accepts_the_square_and_its_map() {
    let b = [(-1, 1), (-1, 1)];
    let c = check_orbit(&b, &square()).unwrap();
    assert_eq!(c.profile, vec![2, 2]);
    assert_eq!(c.pairs_checked, 12);
    let m = extend(&b, &square()).unwrap();
    let mc = check_map(&m, &square()).unwrap();
    assert_eq!(mc.pairs_checked, 36);
    assert_eq!(mc.points_checked, 9);
}

#[test]
fn rejects_each_kind_of_bad_orbit() {
    let b = [(-1, 1), (-1, 1)];
    let e = |pts: Vec<Vec<i64>>| check_orbit(&b, &pts).unwrap_err();
    assert!(matches!(e(vec![]), CheckFailure::Empty));
    assert!(matches!(
        e(vec![vec![0]]),
        CheckFailure::WrongDimension { .. }
    ));
    assert!(matches!(
        e(vec![vec![0, 2]]),
        CheckFailure::OutsideBox { index: 0, .. }
    ));
    assert!(matches!(
        e(vec![vec![0, 0], vec![1, 1], vec![0, 0]]),
        CheckFailure::Repeated {
            first: 0,
            second: 2,
            ..
        }
    ));
    // 0 → 1 → (1,1)… distances 1, 2: offset 1 gives 1 then 2.
    assert!(matches!(
        e(vec![vec![0, 0], vec![1, 0], vec![-1, 0]]),
        CheckFailure::DistanceChanged { k: 1, .. }
    ));
}

#[test]
fn accepts_a_topical_cycle_and_both_extensions() {
    // The three points of weight 1 in {0,1}^3: t = 1 between any two.
    let b = [(0, 1), (0, 1), (0, 1)];
    let orbit = vec![vec![1, 0, 0], vec![0, 1, 0], vec![0, 0, 1]];
    let c = check_topical_orbit(&b, &orbit).unwrap();
    assert_eq!((c.profile.clone(), c.pairs_checked), (vec![1, 1], 6));
    let free = extend_topical(&b, &orbit, false).unwrap();
    let m = check_topical_map(&free, &orbit, true).unwrap();
    // 8 points: 28 pairs; comparable pairs = 3^3 − 8 = 19; z, z + 1 in the box: (0,0,0), (1,1,1).
    assert_eq!(
        (
            m.pairs_checked,
            m.ordered_pairs_checked,
            m.homogeneity_checked
        ),
        (28, 19, Some(1))
    );
    // f(1,1,1)_c = min_j (x_{j+1,c} + 1) = 1 and f(0,0,0) = 0: inside here.
    assert_eq!(m.images_outside_box, 0);
    let clamped = extend_topical(&b, &orbit, true).unwrap();
    assert!(check_topical_map(&clamped, &orbit, false).is_ok());
}

#[test]
fn rejects_topical_failures() {
    let b = [(0, 2), (0, 2)];
    // Isometric (all distances 1 or 2 in a pattern) but not topical:
    // (0,0) → (1,1) is comparable, t((0,0),(1,1)) = −1.
    let e = check_topical_orbit(&b, &[vec![0, 0], vec![1, 1]]).unwrap_err();
    assert!(
        matches!(e, CheckFailure::OneSidedChanged { k: 1, .. }),
        "{e}"
    );
    let orbit = vec![vec![1, 0], vec![0, 1]];
    let mut m = extend_topical(&b, &orbit, false).unwrap();
    assert!(check_topical_map(&m, &orbit, true).is_ok());
    // Break order-preservation at (0,0) ≤ (0,1) = orbit point 1 ↦ (1,0).
    let at = m
        .entries
        .iter()
        .position(|(z, _)| z == &vec![0, 0])
        .unwrap();
    m.entries[at].1 = vec![2, 0];
    assert!(matches!(
        check_topical_map(&m, &orbit, true),
        Err(CheckFailure::NotOrderPreserving { .. } | CheckFailure::Expands { .. })
    ));
    // Break homogeneity: f(2,2) must be f(1,1) + 1·1 = (2,2); take (2,1).
    // (Pairs are met in table order, so (0,0), (2,2) with s = 2 comes first.)
    let mut h = extend_topical(&b, &orbit, false).unwrap();
    let at = h
        .entries
        .iter()
        .position(|(z, _)| z == &vec![2, 2])
        .unwrap();
    assert_eq!(h.entries[at].1, vec![2, 2]);
    h.entries[at].1 = vec![2, 1];
    let err = check_topical_map(&h, &orbit, true).unwrap_err();
    assert!(
        matches!(err, CheckFailure::NotHomogeneous { s: 2, .. }),
        "{err}"
    );
}

#[test]
fn rejects_an_expanding_table() {
    let b = [(0, 1)];
    let orbit = vec![vec![0], vec![1]];
    let mut m = extend(&b, &orbit).unwrap();
    assert!(check_map(&m, &orbit).is_ok());
    m.entries[0].1 = vec![0];
    assert!(matches!(
        check_map(&m, &orbit),
        Err(CheckFailure::NotTheShift { .. })
    ));
    let b3 = [(0, 2)];
    let bad = MapTable {
        bounds: b3.to_vec(),
        entries: vec![(vec![0], vec![0]), (vec![1], vec![2]), (vec![2], vec![0])],
    };
    assert!(matches!(
        check_map(&bad, &[vec![0]]),
        Err(CheckFailure::Expands { .. })
    ));
}
