//! Independent verification of orbits and maps.
//!
//! Nothing here uses encoder, decoder or grid code: the verifier takes the box
//! as plain `(lo, hi)` bounds and points as integer vectors, and does its own
//! arithmetic, so that a bug in the encoding cannot hide itself. A feasible
//! verdict is printed only after [`check_orbit`] has passed, and `check --map`
//! additionally builds the map on the whole box with [`extend`] and checks it
//! by exhaustion with [`check_map`].

use std::fmt;

use serde::Serialize;

/// Why an orbit or map was rejected.
#[derive(Clone, Debug, PartialEq, Eq, thiserror::Error)]
#[non_exhaustive]
pub enum CheckFailure {
    /// The box has no coordinates or a reversed range.
    #[error("the box is malformed: {0}")]
    BadBox(String),
    /// No points were given.
    #[error("the orbit has no points")]
    Empty,
    /// A point has the wrong number of coordinates.
    #[error("point {index} has {got} coordinates, the box has {want}")]
    WrongDimension {
        /// Position of the point.
        index: usize,
        /// Its length.
        got: usize,
        /// The box's dimension.
        want: usize,
    },
    /// A point lies outside the box.
    #[error("point {index} {point:?} lies outside the box")]
    OutsideBox {
        /// Position of the point.
        index: usize,
        /// The point.
        point: Vec<i64>,
    },
    /// Two positions hold the same point, so the period would not be minimal.
    #[error("points {first} and {second} are equal ({point:?}); the period would not be minimal")]
    Repeated {
        /// First position.
        first: usize,
        /// Second position.
        second: usize,
        /// The point.
        point: Vec<i64>,
    },
    /// A distance along the cycle is not preserved.
    #[error(
        "distance not preserved at offset {k}: ‖x_0 − x_{k}‖ = {expected} but ‖x_{i} − x_{j}‖ = {got}"
    )]
    DistanceChanged {
        /// The offset.
        k: usize,
        /// Start of the offending pair.
        i: usize,
        /// End of the offending pair (`i + k` mod p).
        j: usize,
        /// `‖x_0 − x_k‖∞`.
        expected: i64,
        /// `‖x_i − x_j‖∞`.
        got: i64,
    },
    /// The map sends a point outside the box.
    #[error("the map sends {from:?} to {to:?}, outside the box")]
    MapLeavesBox {
        /// The point.
        from: Vec<i64>,
        /// Its image.
        to: Vec<i64>,
    },
    /// The map expands some pair.
    #[error("the map expands the pair {y:?}, {z:?}: distance {before} becomes {after}")]
    Expands {
        /// First point.
        y: Vec<i64>,
        /// Second point.
        z: Vec<i64>,
        /// Their distance.
        before: i64,
        /// The distance of their images.
        after: i64,
    },
    /// The map does not move the orbit along itself.
    #[error(
        "the map sends orbit point {index} {from:?} to {got:?}, not to the next point {want:?}"
    )]
    NotTheShift {
        /// Position on the orbit.
        index: usize,
        /// The point.
        from: Vec<i64>,
        /// Its image.
        got: Vec<i64>,
        /// The next orbit point.
        want: Vec<i64>,
    },
    /// The box is too large to check a map on it by exhaustion.
    #[error(
        "the box has {points} points; checking a map on every pair is limited to {limit} points"
    )]
    TooLargeForMap {
        /// Points in the box.
        points: u128,
        /// The limit.
        limit: u128,
    },
}

/// What [`check_orbit`] established.
#[derive(Clone, Debug, PartialEq, Eq, Serialize)]
pub struct OrbitCheck {
    /// The period p: number of distinct points.
    pub period: usize,
    /// `‖x_0 − x_k‖∞` for `k = 1..=⌊p/2⌋`.
    pub profile: Vec<i64>,
    /// Ordered pairs `(i, i+k)` whose distance was compared, `p·(p−1)`.
    pub pairs_checked: u64,
}

impl fmt::Display for OrbitCheck {
    fn fmt(&self, f: &mut fmt::Formatter<'_>) -> fmt::Result {
        write!(
            f,
            "{} distinct points in the box, all {} distances along the cycle preserved",
            self.period, self.pairs_checked
        )
    }
}

fn dist(y: &[i64], z: &[i64]) -> i64 {
    let mut m = 0;
    for (a, b) in y.iter().zip(z) {
        let d = if a > b { a - b } else { b - a };
        if d > m {
            m = d;
        }
    }
    m
}

fn check_box(bounds: &[(i64, i64)]) -> Result<(), CheckFailure> {
    if bounds.is_empty() {
        return Err(CheckFailure::BadBox("no coordinates".into()));
    }
    for (c, &(a, b)) in bounds.iter().enumerate() {
        if a > b {
            return Err(CheckFailure::BadBox(format!("coordinate {c}: {a} > {b}")));
        }
    }
    Ok(())
}

fn inside(bounds: &[(i64, i64)], z: &[i64]) -> bool {
    z.len() == bounds.len() && z.iter().zip(bounds).all(|(v, (a, b))| a <= v && v <= b)
}

/// Checks that `points` is an isometric cycle in the box `bounds`: every
/// point inside, all points distinct, and `‖x_i − x_{i+k}‖∞ = ‖x_0 − x_k‖∞`
/// for every `i` and `k` (indices mod p).
///
/// # Errors
/// The first [`CheckFailure`] found.
pub fn check_orbit(bounds: &[(i64, i64)], points: &[Vec<i64>]) -> Result<OrbitCheck, CheckFailure> {
    check_box(bounds)?;
    let p = points.len();
    if p == 0 {
        return Err(CheckFailure::Empty);
    }
    for (index, x) in points.iter().enumerate() {
        if x.len() != bounds.len() {
            return Err(CheckFailure::WrongDimension {
                index,
                got: x.len(),
                want: bounds.len(),
            });
        }
        if !inside(bounds, x) {
            return Err(CheckFailure::OutsideBox {
                index,
                point: x.clone(),
            });
        }
    }
    let mut sorted: Vec<(&Vec<i64>, usize)> = points.iter().zip(0..).collect();
    sorted.sort();
    for w in sorted.windows(2) {
        if w[0].0 == w[1].0 {
            let (first, second) = (w[0].1.min(w[1].1), w[0].1.max(w[1].1));
            return Err(CheckFailure::Repeated {
                first,
                second,
                point: w[0].0.clone(),
            });
        }
    }
    let mut pairs_checked = 0u64;
    for k in 1..p {
        let expected = dist(&points[0], &points[k]);
        for i in 0..p {
            let j = (i + k) % p;
            let got = dist(&points[i], &points[j]);
            pairs_checked += 1;
            if got != expected {
                return Err(CheckFailure::DistanceChanged {
                    k,
                    i,
                    j,
                    expected,
                    got,
                });
            }
        }
    }
    let profile = (1..=p / 2).map(|k| dist(&points[0], &points[k])).collect();
    Ok(OrbitCheck {
        period: p,
        profile,
        pairs_checked,
    })
}

/// Largest box on which [`check_map`] checks every pair.
pub const MAP_CHECK_LIMIT: u128 = 20_000;

/// A map on a whole box, as a table in lexicographic order of the arguments.
#[derive(Clone, Debug, PartialEq, Eq, Serialize)]
pub struct MapTable {
    /// The box.
    pub bounds: Vec<(i64, i64)>,
    /// `(z, f(z))` for every point `z` of the box.
    pub entries: Vec<(Vec<i64>, Vec<i64>)>,
}

fn box_points(bounds: &[(i64, i64)]) -> Vec<Vec<i64>> {
    let mut out = vec![Vec::with_capacity(bounds.len())];
    for &(a, b) in bounds {
        let mut next = Vec::with_capacity(out.len() * (b - a + 1) as usize);
        for prefix in &out {
            for v in a..=b {
                let mut z = prefix.clone();
                z.push(v);
                next.push(z);
            }
        }
        out = next;
    }
    out
}

fn box_size(bounds: &[(i64, i64)]) -> u128 {
    bounds.iter().fold(1u128, |acc, &(a, b)| {
        acc.saturating_mul((b - a + 1) as u128)
    })
}

/// Builds the extension of the shift `x_j ↦ x_{j+1}` to the whole box:
/// `f_c(z) = clamp_[a_c, b_c]( min_j ( x_{j+1,c} + ‖z − x_j‖∞ ) )`.
///
/// Each `z ↦ x_{j+1,c} + ‖z − x_j‖∞` is 1-Lipschitz for the sup-norm, and a
/// minimum of 1-Lipschitz functions, then a clamp, stay 1-Lipschitz, so `f` is
/// nonexpansive when the orbit is isometric; at `z = x_j` the minimum is
/// `x_{j+1,c}`. [`check_map`] confirms all of this by exhaustion.
///
/// # Errors
/// [`CheckFailure::TooLargeForMap`] above [`MAP_CHECK_LIMIT`] points, or a
/// malformed box or orbit.
pub fn extend(bounds: &[(i64, i64)], orbit: &[Vec<i64>]) -> Result<MapTable, CheckFailure> {
    check_box(bounds)?;
    if orbit.is_empty() {
        return Err(CheckFailure::Empty);
    }
    let points = box_size(bounds);
    if points > MAP_CHECK_LIMIT {
        return Err(CheckFailure::TooLargeForMap {
            points,
            limit: MAP_CHECK_LIMIT,
        });
    }
    let p = orbit.len();
    let entries = box_points(bounds)
        .into_iter()
        .map(|z| {
            let image = (0..bounds.len())
                .map(|c| {
                    let m = (0..p)
                        .map(|j| orbit[(j + 1) % p][c] + dist(&z, &orbit[j]))
                        .min()
                        .unwrap_or(z[c]);
                    m.clamp(bounds[c].0, bounds[c].1)
                })
                .collect();
            (z, image)
        })
        .collect();
    Ok(MapTable {
        bounds: bounds.to_vec(),
        entries,
    })
}

/// What [`check_map`] established.
#[derive(Clone, Debug, PartialEq, Eq, Serialize)]
pub struct MapCheck {
    /// Points of the box, each checked to map into the box.
    pub points_checked: u64,
    /// Unordered pairs of distinct points checked for nonexpansiveness: `N·(N−1)/2`.
    pub pairs_checked: u64,
    /// The orbit's length, checked to be moved along by the map.
    pub period: usize,
}

impl fmt::Display for MapCheck {
    fn fmt(&self, f: &mut fmt::Formatter<'_>) -> fmt::Result {
        write!(
            f,
            "maps all {} points into the box, nonexpansive on all {} pairs, \
             moves the orbit along itself (minimal period {})",
            self.points_checked, self.pairs_checked, self.period
        )
    }
}

/// Checks by exhaustion that `map` sends the box into itself, is nonexpansive
/// on every pair of points, and sends `orbit[j]` to `orbit[j+1]`; with
/// [`check_orbit`] (distinct points) the orbit then has minimal period p.
///
/// # Errors
/// The first [`CheckFailure`] found; a table that does not list every point
/// of the box exactly once is reported as [`CheckFailure::BadBox`].
pub fn check_map(map: &MapTable, orbit: &[Vec<i64>]) -> Result<MapCheck, CheckFailure> {
    let bounds = &map.bounds;
    check_orbit(bounds, orbit)?;
    let expected = box_points(bounds);
    let mut args: Vec<&Vec<i64>> = map.entries.iter().map(|(z, _)| z).collect();
    args.sort();
    if args.len() != expected.len() || args.iter().zip(&expected).any(|(a, b)| *a != b) {
        return Err(CheckFailure::BadBox(
            "the map table does not list every point of the box once".into(),
        ));
    }
    for (z, fz) in &map.entries {
        if !inside(bounds, fz) {
            return Err(CheckFailure::MapLeavesBox {
                from: z.clone(),
                to: fz.clone(),
            });
        }
    }
    let n = map.entries.len();
    let mut pairs_checked = 0u64;
    for a in 0..n {
        let (y, fy) = &map.entries[a];
        for (z, fz) in &map.entries[a + 1..] {
            let (before, after) = (dist(y, z), dist(fy, fz));
            pairs_checked += 1;
            if after > before {
                return Err(CheckFailure::Expands {
                    y: y.clone(),
                    z: z.clone(),
                    before,
                    after,
                });
            }
        }
    }
    let p = orbit.len();
    for (index, x) in orbit.iter().enumerate() {
        let got = map
            .entries
            .iter()
            .find(|(z, _)| z == x)
            .map(|(_, fz)| fz.clone())
            .unwrap_or_default();
        let want = orbit[(index + 1) % p].clone();
        if got != want {
            return Err(CheckFailure::NotTheShift {
                index,
                from: x.clone(),
                got,
                want,
            });
        }
    }
    Ok(MapCheck {
        points_checked: n as u64,
        pairs_checked,
        period: p,
    })
}

#[cfg(test)]
mod tests {
    use super::*;

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
}
