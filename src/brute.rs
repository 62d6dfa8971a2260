//! Independent brute-force search for isometric cycles on small boxes.
//!
//! This shares no code with the encoders: it enumerates sequences of distinct
//! points by depth-first search, keeping the distance profile seen so far and
//! cutting a branch as soon as a pair contradicts it. The only reduction is by
//! rotation of the indices: every cycle has a rotation whose first point is
//! its lexicographically smallest, so the search insists on that. It is
//! exhaustive otherwise, and meant for boxes of at most a few dozen points.

/// Searches the box `bounds` for an isometric cycle of `p` distinct points.
/// Returns one if it exists, `None` if none exists.
pub fn find_cycle(bounds: &[(i64, i64)], p: usize) -> Option<Vec<Vec<i64>>> {
    all_cycles(bounds, p, 1).pop()
}

/// Up to `limit` isometric cycles of `p` points in the box, each starting at
/// its lexicographically smallest point, in the order the search meets them.
pub fn all_cycles(bounds: &[(i64, i64)], p: usize, limit: usize) -> Vec<Vec<Vec<i64>>> {
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
    if p == 0 || p > pts.len() || limit == 0 {
        return Vec::new();
    }
    let n = pts.len();
    let dist: Vec<Vec<i64>> = (0..n)
        .map(|a| {
            (0..n)
                .map(|b| {
                    pts[a]
                        .iter()
                        .zip(&pts[b])
                        .map(|(x, y)| (x - y).abs())
                        .max()
                        .unwrap_or(0)
                })
                .collect()
        })
        .collect();
    let mut seq: Vec<usize> = Vec::with_capacity(p);
    let mut profile: Vec<i64> = vec![-1; p / 2 + 1];
    let mut found: Vec<Vec<usize>> = Vec::new();
    for first in 0..n {
        seq.push(first);
        if extend(&dist, p, &mut seq, &mut profile, &mut found, limit) {
            break;
        }
        seq.pop();
    }
    found
        .into_iter()
        .map(|c| c.iter().map(|&i| pts[i].clone()).collect())
        .collect()
}

/// Extends `seq`; records complete cycles in `found` and returns true once `limit` are found.
fn extend(
    dist: &[Vec<i64>],
    p: usize,
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
    // Points are indexed in lexicographic order, so "after the first" is "> seq[0]".
    for cand in seq[0] + 1..dist.len() {
        if seq.contains(&cand) {
            continue;
        }
        let saved = profile.clone();
        let mut ok = true;
        for (l, &prev) in seq.iter().enumerate() {
            let d = m - l;
            let k = d.min(p - d);
            let got = dist[prev][cand];
            if profile[k] < 0 {
                profile[k] = got;
            } else if profile[k] != got {
                ok = false;
                break;
            }
        }
        if ok {
            seq.push(cand);
            if extend(dist, p, seq, profile, found, limit) {
                return true;
            }
            seq.pop();
        }
        *profile = saved;
    }
    false
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
}
