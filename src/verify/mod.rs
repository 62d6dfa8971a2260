//! Independent verification of orbits and maps.
//!
//! Nothing here uses encoder, decoder or grid code: the verifier takes the box
//! as plain `(lo, hi)` bounds and points as integer vectors, and does its own
//! arithmetic, so that a bug in the encoding cannot hide itself. A feasible
//! verdict is printed only after [`check_orbit`] has passed, and `check --map`
//! additionally builds the map on the whole box with [`extend`] and checks it
//! by exhaustion with [`check_map`].
//!
//! For topical maps the orbit condition uses the one-sided quantity
//! `t(y, z) = max_c (y_c − z_c)` ([`check_topical_orbit`]); the extension
//! `f_c(z) = min_j (x_{j+1,c} + t(z, x_j))` ([`extend_topical`]) is checked by
//! [`check_topical_map`] for order-preservation, nonexpansiveness, the orbit,
//! and either homogeneity on the grid (unclamped) or staying in the box
//! (clamped).

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
    /// A one-sided distance `t(x_i, x_{i+k})` along the cycle is not constant.
    #[error(
        "one-sided distance not preserved at offset {k}: t(x_0, x_{k}) = {expected} but t(x_{i}, x_{j}) = {got}"
    )]
    OneSidedChanged {
        /// The offset.
        k: usize,
        /// Start of the offending pair.
        i: usize,
        /// End of the offending pair (`i + k` mod p).
        j: usize,
        /// `t(x_0, x_k)`.
        expected: i64,
        /// `t(x_i, x_j)`.
        got: i64,
    },
    /// The map does not preserve the coordinatewise order on some pair.
    #[error("the map is not order-preserving: {y:?} ≤ {z:?} but {fy:?} ≰ {fz:?}")]
    NotOrderPreserving {
        /// The smaller point.
        y: Vec<i64>,
        /// The larger point.
        z: Vec<i64>,
        /// Image of `y`.
        fy: Vec<i64>,
        /// Image of `z`.
        fz: Vec<i64>,
    },
    /// The map does not commute with adding a multiple of `1`.
    #[error("the map is not homogeneous: f({z:?}) = {fz:?} but f(z + {s}·1) = {fzs:?}")]
    NotHomogeneous {
        /// The point.
        z: Vec<i64>,
        /// The shift along `1`.
        s: i64,
        /// Image of `z`.
        fz: Vec<i64>,
        /// Image of `z + s·1`.
        fzs: Vec<i64>,
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
    /// A point of a finite domain is listed twice, or has the wrong dimension.
    #[error("the domain is malformed: {0}")]
    BadDomain(String),
    /// The map sends a point of a finite domain outside the domain.
    #[error("the map sends {from:?} to {to:?}, which is not a point of D")]
    MapLeavesDomain {
        /// The point.
        from: Vec<i64>,
        /// Its image.
        to: Vec<i64>,
    },
    /// An orbit point is not a point of the finite domain.
    #[error("orbit point {index} {point:?} is not a point of D")]
    OrbitLeavesDomain {
        /// Position on the orbit.
        index: usize,
        /// The point.
        point: Vec<i64>,
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
    /// True when the one-sided `t` was checked ([`check_topical_orbit`]);
    /// then `profile` holds `t(x_0, x_k)` for `k = 1..p−1`. Left out of JSON
    /// when false.
    #[serde(skip_serializing_if = "std::ops::Not::not")]
    pub one_sided: bool,
}

impl fmt::Display for OrbitCheck {
    fn fmt(&self, f: &mut fmt::Formatter<'_>) -> fmt::Result {
        let what = if self.one_sided {
            "one-sided distances t(x_i, x_{i+k})"
        } else {
            "distances"
        };
        write!(
            f,
            "{} distinct points in the box, all {} {what} along the cycle preserved",
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
    check_points(bounds, points)?;
    let p = points.len();
    let pairs_checked = constant_along_cycle(points, dist).map_err(
        |Mismatch {
             k,
             i,
             j,
             expected,
             got,
         }| CheckFailure::DistanceChanged {
            k,
            i,
            j,
            expected,
            got,
        },
    )?;
    let profile = (1..=p / 2).map(|k| dist(&points[0], &points[k])).collect();
    Ok(OrbitCheck {
        period: p,
        profile,
        pairs_checked,
        one_sided: false,
    })
}

/// The first pair `(x_i, x_{i+k})` where `quantity` differs from `(x_0, x_k)`.
struct Mismatch {
    k: usize,
    i: usize,
    j: usize,
    expected: i64,
    got: i64,
}

/// Compares `quantity(x_i, x_{i+k})` with `quantity(x_0, x_k)` for every
/// offset `k` and position `i`; the number of ordered pairs compared.
fn constant_along_cycle(
    points: &[Vec<i64>],
    quantity: fn(&[i64], &[i64]) -> i64,
) -> Result<u64, Mismatch> {
    let p = points.len();
    let mut pairs_checked = 0u64;
    for k in 1..p {
        let expected = quantity(&points[0], &points[k]);
        for i in 0..p {
            let j = (i + k) % p;
            let got = quantity(&points[i], &points[j]);
            pairs_checked += 1;
            if got != expected {
                return Err(Mismatch {
                    k,
                    i,
                    j,
                    expected,
                    got,
                });
            }
        }
    }
    Ok(pairs_checked)
}

/// `t(y, z) = max_c (y_c − z_c)`, the one-sided distance of topical maps.
fn one_sided(y: &[i64], z: &[i64]) -> i64 {
    let mut m = i64::MIN;
    for (a, b) in y.iter().zip(z) {
        m = m.max(a - b);
    }
    m
}

/// Checks that `points` is a periodic orbit of a topical map: every point in
/// the box, all distinct, and `t(x_i, x_{i+k}) = t(x_0, x_k)` for every `i`
/// and `k` (indices mod p), with `t(y, z) = max_c (y_c − z_c)`. The profile
/// returned is `t(x_0, x_k)` for `k = 1..p−1`.
///
/// # Errors
/// The first [`CheckFailure`] found.
pub fn check_topical_orbit(
    bounds: &[(i64, i64)],
    points: &[Vec<i64>],
) -> Result<OrbitCheck, CheckFailure> {
    check_points(bounds, points)?;
    let p = points.len();
    let pairs_checked = constant_along_cycle(points, one_sided).map_err(
        |Mismatch {
             k,
             i,
             j,
             expected,
             got,
         }| CheckFailure::OneSidedChanged {
            k,
            i,
            j,
            expected,
            got,
        },
    )?;
    let profile = (1..p).map(|k| one_sided(&points[0], &points[k])).collect();
    Ok(OrbitCheck {
        period: p,
        profile,
        pairs_checked,
        one_sided: true,
    })
}

/// The checks both orbit conditions share: a well-formed box, at least one
/// point, every point of the right length and inside, no point repeated.
fn check_points(bounds: &[(i64, i64)], points: &[Vec<i64>]) -> Result<(), CheckFailure> {
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
    Ok(())
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
    extension(bounds, orbit, dist, true)
}

/// `f_c(z) = min_j ( x_{j+1,c} + reach(z, x_j) )` on every point of the box,
/// clamped into the box when `clamp` is set: the construction behind
/// [`extend`] (`reach` the norm) and [`extend_topical`] (`reach = t`).
fn extension(
    bounds: &[(i64, i64)],
    orbit: &[Vec<i64>],
    reach: fn(&[i64], &[i64]) -> i64,
    clamp: bool,
) -> Result<MapTable, CheckFailure> {
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
                        .map(|j| orbit[(j + 1) % p][c] + reach(&z, &orbit[j]))
                        .min()
                        .unwrap_or(z[c]);
                    if clamp {
                        m.clamp(bounds[c].0, bounds[c].1)
                    } else {
                        m
                    }
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
    lists_every_point_once(map)?;
    for (z, fz) in &map.entries {
        if !inside(bounds, fz) {
            return Err(CheckFailure::MapLeavesBox {
                from: z.clone(),
                to: fz.clone(),
            });
        }
    }
    let n = map.entries.len();
    let pairs_checked = nonexpansive_on_all_pairs(&map.entries)?;
    moves_the_orbit_along(&map.entries, orbit)?;
    let p = orbit.len();
    Ok(MapCheck {
        points_checked: n as u64,
        pairs_checked,
        period: p,
    })
}

/// A table that does not list every point of the box exactly once is
/// reported as [`CheckFailure::BadBox`].
fn lists_every_point_once(map: &MapTable) -> Result<(), CheckFailure> {
    let expected = box_points(&map.bounds);
    let mut args: Vec<&Vec<i64>> = map.entries.iter().map(|(z, _)| z).collect();
    args.sort();
    if args.len() != expected.len() || args.iter().zip(&expected).any(|(a, b)| *a != b) {
        return Err(CheckFailure::BadBox(
            "the map table does not list every point of the box once".into(),
        ));
    }
    Ok(())
}

/// `map` sends `orbit[j]` to `orbit[j+1]` for every `j`.
fn moves_the_orbit_along(
    entries: &[(Vec<i64>, Vec<i64>)],
    orbit: &[Vec<i64>],
) -> Result<(), CheckFailure> {
    let p = orbit.len();
    for (index, x) in orbit.iter().enumerate() {
        let got = entries
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
    Ok(())
}

/// Builds the topical extension of the shift `x_j ↦ x_{j+1}` on the points of
/// the box: `f_c(z) = min_j ( x_{j+1,c} + t(z, x_j) )`, `t(z, y) = max_d (z_d − y_d)`,
/// then, when `clamp` is set, `clamp_[a_c, b_c]` coordinatewise.
///
/// Each `z ↦ x_{j+1,c} + t(z, x_j)` is order-preserving and commutes with
/// `z ↦ z + s·1`, and so does a minimum of such maps: the unclamped `f` is
/// topical on all of R^n, and on a cycle with constant `t` along every offset
/// it sends `x_j` to `x_{j+1}` (`encodings/topical.md`). Its values may leave
/// the box. The clamp keeps order-preservation and nonexpansiveness and
/// gives a map of the box into itself, but in general not homogeneity.
/// [`check_topical_map`] confirms this by exhaustion.
///
/// # Errors
/// As [`extend`].
pub fn extend_topical(
    bounds: &[(i64, i64)],
    orbit: &[Vec<i64>],
    clamp: bool,
) -> Result<MapTable, CheckFailure> {
    extension(bounds, orbit, one_sided, clamp)
}

/// What [`check_topical_map`] established.
#[derive(Clone, Debug, PartialEq, Eq, Serialize)]
pub struct TopicalMapCheck {
    /// Points of the box in the table.
    pub points_checked: u64,
    /// Unordered pairs of distinct points checked for nonexpansiveness.
    pub pairs_checked: u64,
    /// Pairs `y ≤ z` (coordinatewise, `y ≠ z`) checked for `f(y) ≤ f(z)`.
    pub ordered_pairs_checked: u64,
    /// Pairs `(z, z + s·1)`, `s ≥ 1`, both in the box, checked for
    /// `f(z + s·1) = f(z) + s·1`; `None` when homogeneity was not asked for.
    pub homogeneity_checked: Option<u64>,
    /// Points whose image lies outside the box (0 when the box was required).
    pub images_outside_box: u64,
    /// The orbit's length, checked to be moved along by the map.
    pub period: usize,
}

impl fmt::Display for TopicalMapCheck {
    fn fmt(&self, f: &mut fmt::Formatter<'_>) -> fmt::Result {
        write!(
            f,
            "order-preserving on all {} comparable pairs, nonexpansive on all {} pairs, ",
            self.ordered_pairs_checked, self.pairs_checked
        )?;
        match self.homogeneity_checked {
            Some(h) => write!(
                f,
                "f(z + s·1) = f(z) + s·1 on all {h} pairs in the grid ({} of {} images outside the box), ",
                self.images_outside_box, self.points_checked
            )?,
            None => write!(f, "maps all {} points into the box, ", self.points_checked)?,
        }
        write!(
            f,
            "moves the orbit along itself (minimal period {})",
            self.period
        )
    }
}

/// Checks by exhaustion over the box that `map` is order-preserving and
/// nonexpansive on every pair of points and sends `orbit[j]` to `orbit[j+1]`,
/// after [`check_topical_orbit`] on the orbit. With `homogeneous` it also
/// checks `f(z + s·1) = f(z) + s·1` whenever `z` and `z + s·1` are both in
/// the box (images may then lie outside the box); without it, every image
/// must lie in the box.
///
/// # Errors
/// The first [`CheckFailure`] found; a table that does not list every point
/// of the box exactly once is reported as [`CheckFailure::BadBox`].
pub fn check_topical_map(
    map: &MapTable,
    orbit: &[Vec<i64>],
    homogeneous: bool,
) -> Result<TopicalMapCheck, CheckFailure> {
    let bounds = &map.bounds;
    check_topical_orbit(bounds, orbit)?;
    lists_every_point_once(map)?;
    let mut images_outside_box = 0u64;
    for (z, fz) in &map.entries {
        if fz.len() != bounds.len() || !inside(bounds, fz) {
            if !homogeneous || fz.len() != bounds.len() {
                return Err(CheckFailure::MapLeavesBox {
                    from: z.clone(),
                    to: fz.clone(),
                });
            }
            images_outside_box += 1;
        }
    }
    let leq = |y: &[i64], z: &[i64]| y.iter().zip(z).all(|(a, b)| a <= b);
    let n = map.entries.len();
    let (mut pairs_checked, mut ordered_pairs_checked) = (0u64, 0u64);
    let mut homogeneity = 0u64;
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
            for (u, fu, w, fw) in [(y, fy, z, fz), (z, fz, y, fy)] {
                if !leq(u, w) {
                    continue;
                }
                ordered_pairs_checked += 1;
                if !leq(fu, fw) {
                    return Err(CheckFailure::NotOrderPreserving {
                        y: u.clone(),
                        z: w.clone(),
                        fy: fu.clone(),
                        fz: fw.clone(),
                    });
                }
                // w = u + s·1 with s ≥ 1: every coordinate moved by the same s.
                let s = w[0] - u[0];
                if homogeneous && s > 0 && u.iter().zip(w.iter()).all(|(a, b)| b - a == s) {
                    homogeneity += 1;
                    if fu.iter().zip(fw.iter()).any(|(a, b)| b - a != s) {
                        return Err(CheckFailure::NotHomogeneous {
                            z: u.clone(),
                            s,
                            fz: fu.clone(),
                            fzs: fw.clone(),
                        });
                    }
                }
            }
        }
    }
    moves_the_orbit_along(&map.entries, orbit)?;
    Ok(TopicalMapCheck {
        points_checked: n as u64,
        pairs_checked,
        ordered_pairs_checked,
        homogeneity_checked: homogeneous.then_some(homogeneity),
        images_outside_box,
        period: orbit.len(),
    })
}

/// Compares the distance of every unordered pair of arguments with that of
/// their images; returns the number of pairs compared.
fn nonexpansive_on_all_pairs(entries: &[(Vec<i64>, Vec<i64>)]) -> Result<u64, CheckFailure> {
    let mut pairs_checked = 0u64;
    for a in 0..entries.len() {
        let (y, fy) = &entries[a];
        for (z, fz) in &entries[a + 1..] {
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
    Ok(pairs_checked)
}

/// What [`check_self_map`] established.
#[derive(Clone, Debug, PartialEq, Eq, Serialize)]
pub struct SelfMapCheck {
    /// Points of D, each checked to be mapped into D.
    pub points_checked: u64,
    /// Unordered pairs of distinct points of D checked for nonexpansiveness.
    pub pairs_checked: u64,
    /// The minimal period established for the orbit.
    pub period: usize,
}

impl fmt::Display for SelfMapCheck {
    fn fmt(&self, f: &mut fmt::Formatter<'_>) -> fmt::Result {
        write!(
            f,
            "maps all {} points of D into D, nonexpansive on all {} pairs, \
             moves the orbit along itself (minimal period {})",
            self.points_checked, self.pairs_checked, self.period
        )
    }
}

/// Checks a map of a finite set D to itself: `table` lists every point of
/// `domain` exactly once as an argument, every image lies in D, no pair of
/// points is moved farther apart in the sup-norm, and the orbit consists of
/// distinct points of D with `f(x_j) = x_{j+1 mod p}`, so x_0 has minimal
/// period p. Plain arithmetic on the given lists; nothing else is trusted.
///
/// # Errors
/// The first [`CheckFailure`] found.
pub fn check_self_map(
    domain: &[Vec<i64>],
    table: &[(Vec<i64>, Vec<i64>)],
    orbit: &[Vec<i64>],
) -> Result<SelfMapCheck, CheckFailure> {
    let Some(first) = domain.first() else {
        return Err(CheckFailure::BadDomain("D has no points".into()));
    };
    let n = first.len();
    if let Some(z) = domain.iter().find(|z| z.len() != n) {
        return Err(CheckFailure::BadDomain(format!(
            "point {z:?} has {} coordinates, the first point {}",
            z.len(),
            n
        )));
    }
    let mut pts: Vec<&Vec<i64>> = domain.iter().collect();
    pts.sort();
    if let Some(w) = pts.windows(2).find(|w| w[0] == w[1]) {
        return Err(CheckFailure::BadDomain(format!(
            "point {:?} listed twice",
            w[0]
        )));
    }
    let in_d = |z: &Vec<i64>| pts.binary_search(&z).is_ok();
    let mut args: Vec<&Vec<i64>> = table.iter().map(|(z, _)| z).collect();
    args.sort();
    if args != pts {
        return Err(CheckFailure::BadDomain(
            "the map table does not list every point of D exactly once".into(),
        ));
    }
    for (z, fz) in table {
        if !in_d(fz) {
            return Err(CheckFailure::MapLeavesDomain {
                from: z.clone(),
                to: fz.clone(),
            });
        }
    }
    let pairs_checked = nonexpansive_on_all_pairs(table)?;
    let p = orbit.len();
    if p == 0 {
        return Err(CheckFailure::Empty);
    }
    for (index, x) in orbit.iter().enumerate() {
        if !in_d(x) {
            return Err(CheckFailure::OrbitLeavesDomain {
                index,
                point: x.clone(),
            });
        }
        if let Some(second) = (index + 1..p).find(|&j| orbit[j] == *x) {
            return Err(CheckFailure::Repeated {
                first: index,
                second,
                point: x.clone(),
            });
        }
    }
    moves_the_orbit_along(table, orbit)?;
    Ok(SelfMapCheck {
        points_checked: table.len() as u64,
        pairs_checked,
        period: p,
    })
}

#[cfg(test)]
mod tests;
