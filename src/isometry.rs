//! The isometries of a box: signed coordinate permutations that map it onto itself.
//!
//! The isometries of `(R^n, ‖·‖∞)` are `x ↦ Px + b` with `P` a signed
//! permutation matrix (recalled, a standard consequence of Mazur–Ulam). Those
//! mapping the box `D` onto itself permute coordinates of equal side length
//! and reflect any coordinate, `z_c ↦ a_c + b_c − z_c`. This module lists
//! them, computes orbits of grid points, and the *type* of a point: the
//! sorted list of `(side, distance to the nearer face)` over its coordinates.
//! Two points have the same type iff an isometry maps one to the other.

use crate::grid::{Grid, Point};

/// One isometry of a box: `z'_{perm[c]} = a_{perm[c]} + (flip[c] ? b_c − z_c : z_c − a_c)`.
#[derive(Clone, Debug, PartialEq, Eq)]
pub struct Isometry {
    /// Where each coordinate goes.
    pub perm: Vec<usize>,
    /// Whether each coordinate is reflected before it moves.
    pub flip: Vec<bool>,
}

impl Isometry {
    /// The image of `z`.
    pub fn apply(&self, g: &Grid, z: &[i64]) -> Point {
        let mut out = vec![0; z.len()];
        for c in 0..z.len() {
            let off = if self.flip[c] {
                g.hi(c) - z[c]
            } else {
                z[c] - g.lo(c)
            };
            out[self.perm[c]] = g.lo(self.perm[c]) + off;
        }
        out
    }
}

/// The lexicographic index of a grid point (last coordinate fastest), as in [`Grid::points`].
pub fn index_of(g: &Grid, z: &[i64]) -> usize {
    let mut idx = 0usize;
    for c in 0..g.dim() {
        idx = idx * (g.side(c) as usize + 1) + (z[c] - g.lo(c)) as usize;
    }
    idx
}

/// The type of `z`: `(side_c, min(z_c − a_c, b_c − z_c))` over all `c`, sorted.
pub fn type_key(g: &Grid, z: &[i64]) -> Vec<(u64, u64)> {
    let mut key: Vec<(u64, u64)> = (0..g.dim())
        .map(|c| (g.side(c), (z[c] - g.lo(c)).min(g.hi(c) - z[c]) as u64))
        .collect();
    key.sort_unstable();
    key
}

/// Number of isometries of the box, saturating.
pub fn group_order(g: &Grid) -> u128 {
    let mut sides: Vec<u64> = (0..g.dim()).map(|c| g.side(c)).filter(|&s| s > 0).collect();
    sides.sort_unstable();
    let mut order = 1u128;
    let mut run = 0u128;
    for (i, s) in sides.iter().enumerate() {
        run = if i > 0 && sides[i - 1] == *s {
            run + 1
        } else {
            1
        };
        order = order.saturating_mul(2 * run);
    }
    order
}

/// All isometries of the box, or `None` when there are more than `limit`.
/// Coordinates with a one-point side are never moved (their reflection is the identity).
pub fn elements(g: &Grid, limit: u128) -> Option<Vec<Isometry>> {
    if group_order(g) > limit {
        return None;
    }
    let n = g.dim();
    let movable: Vec<usize> = (0..n).filter(|&c| g.side(c) > 0).collect();
    let mut perms: Vec<Vec<usize>> = vec![(0..n).collect()];
    // Permute within classes of equal side, one class at a time.
    let mut classes: Vec<Vec<usize>> = Vec::new();
    for &c in &movable {
        match classes.iter_mut().find(|cl| g.side(cl[0]) == g.side(c)) {
            Some(cl) => cl.push(c),
            None => classes.push(vec![c]),
        }
    }
    for cl in &classes {
        let mut next = Vec::new();
        for p in &perms {
            for arrangement in permutations(cl) {
                let mut q = p.clone();
                for (src, &dst) in cl.iter().zip(&arrangement) {
                    q[*src] = dst;
                }
                next.push(q);
            }
        }
        perms = next;
    }
    let mut out = Vec::new();
    for p in &perms {
        for mask in 0u64..(1u64 << movable.len()) {
            let mut flip = vec![false; n];
            for (b, &c) in movable.iter().enumerate() {
                flip[c] = mask >> b & 1 == 1;
            }
            out.push(Isometry {
                perm: p.clone(),
                flip,
            });
        }
    }
    Some(out)
}

fn permutations(items: &[usize]) -> Vec<Vec<usize>> {
    if items.len() <= 1 {
        return vec![items.to_vec()];
    }
    let mut out = Vec::new();
    for i in 0..items.len() {
        let mut rest = items.to_vec();
        let x = rest.remove(i);
        for mut tail in permutations(&rest) {
            tail.insert(0, x);
            out.push(tail);
        }
    }
    out
}

/// For each grid point (by index), the index of the smallest point of its
/// orbit under `group`.
pub fn orbit_min(g: &Grid, points: &[Point], group: &[Isometry]) -> Vec<usize> {
    points
        .iter()
        .map(|z| {
            group
                .iter()
                .map(|s| index_of(g, &s.apply(g, z)))
                .min()
                .unwrap_or(index_of(g, z))
        })
        .collect()
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn the_hyperoctahedral_group_of_the_cube() {
        let g = Grid::parse("-1..1", Some(3)).unwrap();
        assert_eq!(group_order(&g), 48);
        let els = elements(&g, 1000).unwrap();
        assert_eq!(els.len(), 48);
        let pts: Vec<Point> = g.points().collect();
        let reps = orbit_min(&g, &pts, &els);
        let mut distinct = reps.clone();
        distinct.sort_unstable();
        distinct.dedup();
        // Orbits of {-1,0,1}^3: by the number of nonzero coordinates, 0..=3.
        assert_eq!(distinct.len(), 4);
        for (z, &r) in pts.iter().zip(&reps) {
            assert_eq!(type_key(&g, z), type_key(&g, &pts[r]));
        }
    }

    #[test]
    fn unequal_sides_are_not_exchanged() {
        let g = Grid::parse("0..1,0..2,3..3", None).unwrap();
        assert_eq!(group_order(&g), 4);
        let els = elements(&g, 100).unwrap();
        assert_eq!(els.len(), 4);
        for s in &els {
            for z in g.points() {
                assert!(g.contains(&s.apply(&g, &z)));
            }
        }
        assert_eq!(index_of(&g, &[1, 2, 3]), 5);
    }
}
