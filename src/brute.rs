//! Independent brute-force searches: isometric cycles on small boxes and
//! point sets, and every nonexpansive self-map of a small point set.
//!
//! This shares no code with the encoders: it enumerates sequences of distinct
//! points by depth-first search, keeping the distance profile seen so far and
//! cutting a branch as soon as a pair contradicts it. The only reduction is by
//! rotation of the indices: every cycle has a rotation whose first point is
//! its lexicographically smallest, so the search insists on that. It is
//! exhaustive otherwise, and meant for boxes of at most a few dozen points.
//!
//! The same search with the one-sided `t(y, z) = max_c (y_c − z_c)` on
//! ordered pairs in place of the norm finds periodic orbits of topical maps
//! ([`find_topical_cycle`]): the profile then has one entry per offset
//! `1..p−1`, and a pair at positions `l < m` fixes both `T(m − l) = t(x_l, x_m)`
//! and `T(p − m + l) = t(x_m, x_l)`.

/// Searches the box `bounds` for an isometric cycle of `p` distinct points.
/// Returns one if it exists, `None` if none exists.
pub fn find_cycle(bounds: &[(i64, i64)], p: usize) -> Option<Vec<Vec<i64>>> {
    all_cycles(bounds, p, 1).pop()
}

/// Up to `limit` isometric cycles of `p` points in the box, each starting at
/// its lexicographically smallest point, in the order the search meets them.
pub fn all_cycles(bounds: &[(i64, i64)], p: usize, limit: usize) -> Vec<Vec<Vec<i64>>> {
    search(bounds, p, limit, false)
}

/// Searches the box for `p` distinct points with `t(x_i, x_{i+k})`
/// independent of `i` for every `k`: a periodic orbit of a topical map.
pub fn find_topical_cycle(bounds: &[(i64, i64)], p: usize) -> Option<Vec<Vec<i64>>> {
    all_topical_cycles(bounds, p, 1).pop()
}

/// Up to `limit` topical cycles of `p` points, each starting at its
/// lexicographically smallest point.
pub fn all_topical_cycles(bounds: &[(i64, i64)], p: usize, limit: usize) -> Vec<Vec<Vec<i64>>> {
    search(bounds, p, limit, true)
}

/// The search behind both kinds: `one_sided` picks `t` over ordered pairs
/// instead of the sup-norm over unordered ones.
fn search(bounds: &[(i64, i64)], p: usize, limit: usize, one_sided: bool) -> Vec<Vec<Vec<i64>>> {
    let mut pts = vec![Vec::with_capacity(bounds.len())];
    for &(a, b) in bounds {
        pts = pts
            .into_iter()
            .flat_map(|pre: Vec<i64>| {
                (a..=b).map(move |v| {
                    let mut z = pre.clone();
                    z.push(v);
                    z
                })
            })
            .collect();
    }
    cycles_among(&pts, p, limit, one_sided)
}

/// Up to `limit` isometric cycles of `p` points among `pts` (any finite set,
/// in any order), each starting at its first point in the order of `pts`.
pub fn cycles_in(pts: &[Vec<i64>], p: usize, limit: usize) -> Vec<Vec<Vec<i64>>> {
    cycles_among(pts, p, limit, false)
}

/// The search among the points `pts`, for either kind of cycle.
fn cycles_among(pts: &[Vec<i64>], p: usize, limit: usize, one_sided: bool) -> Vec<Vec<Vec<i64>>> {
    if p == 0 || p > pts.len() || limit == 0 {
        return Vec::new();
    }
    let n = pts.len();
    let dist: Vec<Vec<i64>> = (0..n)
        .map(|a| {
            (0..n)
                .map(|b| {
                    if one_sided {
                        pts[a]
                            .iter()
                            .zip(&pts[b])
                            .map(|(x, y)| x - y)
                            .max()
                            .unwrap_or(0)
                    } else {
                        sup_distance(&pts[a], &pts[b])
                    }
                })
                .collect()
        })
        .collect();
    let mut seq: Vec<usize> = Vec::with_capacity(p);
    // Unset entries are i64::MIN (a one-sided value can be negative).
    let mut profile: Vec<i64> = vec![i64::MIN; p + 1];
    let mut found: Vec<Vec<usize>> = Vec::new();
    for first in 0..n {
        seq.push(first);
        if extend(
            &dist,
            p,
            one_sided,
            &mut seq,
            &mut profile,
            &mut found,
            limit,
        ) {
            break;
        }
        seq.pop();
    }
    found
        .into_iter()
        .map(|c| c.iter().map(|&i| pts[i].clone()).collect())
        .collect()
}

/// The sup-norm distance, computed here for the brute force and the tests
/// that check lemmas on its cycles (no encoder code involved).
pub fn sup_distance(a: &[i64], b: &[i64]) -> i64 {
    a.iter()
        .zip(b)
        .map(|(x, y)| (x - y).abs())
        .max()
        .unwrap_or(0)
}

/// Extends `seq`; records complete cycles in `found` and returns true once `limit` are found.
fn extend(
    dist: &[Vec<i64>],
    p: usize,
    one_sided: bool,
    seq: &mut Vec<usize>,
    profile: &mut Vec<i64>,
    found: &mut Vec<Vec<usize>>,
    limit: usize,
) -> bool {
    if seq.len() == p {
        found.push(seq.clone());
        return found.len() >= limit;
    }
    let m = seq.len();
    // Every cycle has a rotation starting at its point of least index, so "after the first" is "> seq[0]".
    for cand in seq[0] + 1..dist.len() {
        if seq.contains(&cand) {
            continue;
        }
        let saved = profile.clone();
        let mut ok = true;
        'pairs: for (l, &prev) in seq.iter().enumerate() {
            let d = m - l;
            let checks = if one_sided {
                [(d, dist[prev][cand]), (p - d, dist[cand][prev])]
            } else {
                let k = d.min(p - d);
                [(k, dist[prev][cand]), (k, dist[prev][cand])]
            };
            for (k, got) in checks {
                if profile[k] == i64::MIN {
                    profile[k] = got;
                } else if profile[k] != got {
                    ok = false;
                    break 'pairs;
                }
            }
        }
        if ok {
            seq.push(cand);
            if extend(dist, p, one_sided, seq, profile, found, limit) {
                return true;
            }
            seq.pop();
        }
        *profile = saved;
    }
    false
}

fn sup(y: &[i64], z: &[i64]) -> i64 {
    y.iter()
        .zip(z)
        .map(|(a, b)| (a - b).abs())
        .max()
        .unwrap_or(0)
}

/// Calls `visit` with every nonexpansive map of `pts` to itself, as the list
/// of image indices, until `visit` returns true; returns whether it did.
///
/// Depth-first over f(0), f(1), …: a choice for f(k) is kept only if it is
/// within `d(k, j)` of f(j) for every earlier j, so every branch that
/// survives to the end is a nonexpansive map and every nonexpansive map is
/// reached. Meant for sets of up to about 9 points.
pub fn each_nonexpansive_map(pts: &[Vec<i64>], mut visit: impl FnMut(&[usize]) -> bool) -> bool {
    let n = pts.len();
    let d: Vec<Vec<i64>> = (0..n)
        .map(|a| (0..n).map(|b| sup(&pts[a], &pts[b])).collect())
        .collect();
    fn go(d: &[Vec<i64>], f: &mut Vec<usize>, visit: &mut dyn FnMut(&[usize]) -> bool) -> bool {
        let k = f.len();
        if k == d.len() {
            return visit(f);
        }
        for w in 0..d.len() {
            if (0..k).all(|j| d[w][f[j]] <= d[k][j]) {
                f.push(w);
                if go(d, f, visit) {
                    return true;
                }
                f.pop();
            }
        }
        false
    }
    go(&d, &mut Vec::with_capacity(n), &mut visit)
}

/// The minimal periods of the periodic points of the map `f` (image indices).
pub fn periods_of(f: &[usize]) -> Vec<usize> {
    let mut out = Vec::new();
    for start in 0..f.len() {
        let mut z = f[start];
        let mut len = 1;
        while z != start && len <= f.len() {
            z = f[z];
            len += 1;
        }
        if z == start && !out.contains(&len) {
            out.push(len);
        }
    }
    out.sort_unstable();
    out
}

/// Every p for which some nonexpansive map `pts → pts` has a periodic point
/// of minimal period p, by enumerating all such maps.
pub fn map_periods(pts: &[Vec<i64>]) -> Vec<usize> {
    let mut seen = vec![false; pts.len() + 1];
    each_nonexpansive_map(pts, |f| {
        for p in periods_of(f) {
            seen[p] = true;
        }
        false
    });
    (1..=pts.len()).filter(|&p| seen[p]).collect()
}

/// A nonexpansive map of `pts` to itself with a periodic point of minimal
/// period `p`, as `(map as image indices, orbit as indices)`, if one exists.
pub fn find_map(pts: &[Vec<i64>], p: usize) -> Option<(Vec<usize>, Vec<usize>)> {
    let mut found = None;
    each_nonexpansive_map(pts, |f| {
        for start in 0..f.len() {
            let mut orbit = vec![start];
            let mut z = f[start];
            while z != start && orbit.len() <= p {
                orbit.push(z);
                z = f[z];
            }
            if z == start && orbit.len() == p {
                found = Some((f.to_vec(), orbit));
                return true;
            }
        }
        false
    });
    found
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn finds_the_square_and_nothing_longer_on_a_segment() {
        assert_eq!(find_cycle(&[(-1, 1), (-1, 1)], 4).map(|c| c.len()), Some(4));
        assert!(find_cycle(&[(0, 3)], 2).is_some());
        assert!(find_cycle(&[(0, 3)], 3).is_none());
        assert_eq!(find_cycle(&[(0, 0)], 1), Some(vec![vec![0]]));
        // {0,1}^2: every cyclic order of the 4 points is isometric; 3 start at (0,0).
        assert_eq!(all_cycles(&[(0, 1), (0, 1)], 4, 100).len(), 6);
    }

    #[test]
    fn topical_cycles_on_the_square_are_antichains() {
        // On {0,1}^2 the only antichain of two points is {(0,1), (1,0)}.
        let b = [(0, 1), (0, 1)];
        assert_eq!(
            all_topical_cycles(&b, 2, 100),
            vec![vec![vec![0, 1], vec![1, 0]]]
        );
        assert!(find_topical_cycle(&b, 3).is_none());
        // A segment carries no topical 2-cycle: two points of a line are comparable.
        assert!(find_topical_cycle(&[(0, 3)], 2).is_none());
        assert_eq!(find_topical_cycle(&[(0, 3)], 1), Some(vec![vec![0]]));
    }

    #[test]
    fn maps_of_tiny_sets_are_all_enumerated() {
        // {0,1}: all 4 self-maps are nonexpansive; periods 1 and 2.
        let two = vec![vec![0], vec![1]];
        let mut count = 0;
        each_nonexpansive_map(&two, |_| {
            count += 1;
            false
        });
        assert_eq!(count, 4);
        assert_eq!(map_periods(&two), vec![1, 2]);
        // {0,1,2}: a 3-cycle sends the neighbours 1, 2 to 2, 0 (or 0, 2 to …), stretching a pair.
        assert_eq!(map_periods(&[vec![0], vec![1], vec![2]]), vec![1, 2]);
        assert_eq!(periods_of(&[1, 0, 2, 4, 5, 3]), vec![1, 2, 3]);
        let (f, orbit) = find_map(&two, 2).unwrap();
        assert_eq!((f, orbit), (vec![1, 0], vec![0, 1]));
    }
}
