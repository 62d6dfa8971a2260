//! One evidence layer: what backs a verdict, and the one way each kind of
//! backing is checked.
//!
//! A verdict is only as good as what backs it ([`Evidence`]):
//!
//! * **feasible** — a [witness](Evidence::Witness): the orbit, and in the
//!   full-map formulation the whole map `f: D → D`, checked by
//!   [`check_witness`] with the independent verifier ([`crate::verify`],
//!   which shares no code with the encoder);
//! * **infeasible** — a [checked proof](Evidence::CheckedProof): an LRAT
//!   refutation of the exact CNF of the question, accepted by orbitcnf's own
//!   checker ([`check_refutation`], [`check_proof_file`]); or, only where the
//!   user chose so, a [solver's claim](Evidence::SolverClaim), which nothing
//!   checks and every output marks as unchecked; or a split folder whose
//!   cubes are all refuted with LRAT proofs and provably cover every model
//!   ([`check_split_refutation`], which merges the folder again);
//! * **unknown** — [nothing](Evidence::None).
//!
//! `decide`, `decode`, certificate bundles, the results store, `spectrum`,
//! `merge` and `check` all check through these functions, so a rule about
//! what a witness or a proof must satisfy lives in one place. The dispatch
//! is on the map class and the formulation: a nonexpansive orbit on a box is
//! an isometric cycle, a topical one must keep `t(x, y) = max_c (x_c − y_c)`,
//! and on a point set (full-map formulation) the orbit proves nothing without
//! the map, which is checked on all of D.

use std::path::{Path, PathBuf};
use std::time::Instant;

use serde::Serialize;

use crate::cnf::Cnf;
use crate::encode::{self, EncodeOptions};
use crate::error::{Error, Result};
use crate::grid::Point;
use crate::proof::{LratOptions, LratSummary};
use crate::question::{MapClass, Question};
use crate::solve::certified::ProofInfo;
use crate::solve::refute::recheck_file;
use crate::verify::{self, OrbitCheck, SelfMapCheck};

/// What backs a verdict.
#[derive(Clone, Debug, PartialEq, Serialize)]
#[serde(tag = "kind", rename_all = "kebab-case")]
pub enum Evidence {
    /// The orbit itself (with the map, in the full-map formulation), checked
    /// by [`check_witness`].
    Witness,
    /// A solver's claim of unsatisfiability, with no proof checked. Reports
    /// say so in the verdict line; it backs an infeasible verdict only where
    /// the user accepted unchecked claims.
    SolverClaim {
        /// Who claims it.
        solver: String,
    },
    /// An LRAT proof of unsatisfiability of the CNF solved, accepted by
    /// orbitcnf's own checker in this run. It certifies the CNF,
    /// symmetry-breaking and redundant clauses included; that those keep
    /// every verdict is argued in `encodings/` and tested against brute force.
    CheckedProof(ProofInfo),
    /// Nothing (unknown verdicts).
    None,
}

impl Evidence {
    /// Whether the evidence was checked: a witness or a checked proof.
    pub fn is_checked(&self) -> bool {
        matches!(self, Evidence::Witness | Evidence::CheckedProof(_))
    }
}

/// What [`check_witness`] established.
#[derive(Clone, Debug, PartialEq, Eq, Serialize)]
pub struct WitnessCheck {
    /// The orbit's check (its profile included).
    pub orbit: OrbitCheck,
    /// The map's check, in the full-map formulation.
    pub map: Option<SelfMapCheck>,
}

/// Checks `orbit` (and `map`) as the witness of a feasible answer to `q`
/// in the formulation of `options`, with the independent verifier.
///
/// * full-map formulation (point sets): `map` must be given; it is checked
///   to be a nonexpansive map of D into itself that moves the orbit along
///   itself with minimal period p, and the orbit must then be an isometric
///   cycle too (an orbit of a nonexpansive map always is);
/// * a topical question: the orbit keeps every `t(x_i, x_{i+k})`;
/// * otherwise: the orbit is an isometric p-cycle of distinct grid points.
///
/// # Errors
/// [`Error::Check`] naming the first failure; [`Error::Decode`] when the
/// orbit has the wrong length or a full-map witness has no map.
pub fn check_witness(
    q: &Question,
    options: &EncodeOptions,
    orbit: &[Point],
    map: Option<&[(Point, Point)]>,
) -> Result<WitnessCheck> {
    if orbit.len() != q.period {
        return Err(Error::Decode(format!(
            "the orbit has {} points but the period is {}",
            orbit.len(),
            q.period
        )));
    }
    if options.formulation.encodes_map() {
        let map = map.ok_or_else(|| {
            Error::Decode(
                "a feasible answer on a point set is backed by its map D → D, and none is given"
                    .into(),
            )
        })?;
        let map_check = verify::check_self_map(q.domain().points(), map, orbit)?;
        let orbit_check = verify::check_orbit(q.grid.ranges(), orbit)?;
        return Ok(WitnessCheck {
            orbit: orbit_check,
            map: Some(map_check),
        });
    }
    Ok(WitnessCheck {
        orbit: check_orbit(q, orbit)?,
        map: None,
    })
}

/// Checks `orbit` as an isometric cycle of `q`'s class on `q`'s box (a
/// topical cycle for topical maps), without a map: what backs a feasible
/// answer on a box, whose map is then built by exhaustion or extension.
pub fn check_orbit(q: &Question, orbit: &[Point]) -> Result<OrbitCheck> {
    let bounds = q.grid.ranges();
    Ok(match q.class {
        MapClass::Topical => verify::check_topical_orbit(bounds, orbit)?,
        MapClass::Nonexpansive => verify::check_orbit(bounds, orbit)?,
    })
}

/// A map `D → D` as its table of pairs `(z, f(z))`.
pub type MapTable = Vec<(Point, Point)>;

/// The witness of period `d` read off the witness `orbit` (and `map`, in
/// the full-map formulation) of period `q = orbit.len()`, for `d` dividing
/// `q` (docs/math.md §9): with `m = q/d`, the orbit `y_j = x_{j·m}`
/// (`j = 0..d−1`) and the map `f^m`.
///
/// Why it is a witness of the same kind: `f^m` is a composition of
/// nonexpansive (topical) self-maps of D, hence one itself, and moves `y_j`
/// to `y_{j+1}` with minimal period `d` (§9). On a box the map is not part
/// of the witness, and the orbit is one of `f^m` all the same: its
/// distances `d(y_j, y_{j+k}) = d(x_0, x_{k·m})` (and the topical
/// `t(y_j, y_{j+k})`) depend on `k` only, and its points are distinct.
/// Nothing here is trusted: the result is checked by [`check_witness`] like
/// any other witness.
///
/// # Errors
/// [`Error::Question`] when `d` is 0 or does not divide `q`;
/// [`Error::Decode`] when a point of the orbit has no image in `map`.
pub fn divisor_witness(
    orbit: &[Point],
    map: Option<&[(Point, Point)]>,
    d: usize,
) -> Result<(Vec<Point>, Option<MapTable>)> {
    let q = orbit.len();
    if d == 0 || !q.is_multiple_of(d) {
        return Err(Error::Question(format!(
            "period {d} does not divide {q}, so an orbit of period {q} gives none of period {d}"
        )));
    }
    let m = q / d;
    let sub: Vec<Point> = (0..d).map(|j| orbit[j * m].clone()).collect();
    let Some(map) = map else {
        return Ok((sub, None));
    };
    let image: std::collections::HashMap<&Point, &Point> =
        map.iter().map(|(z, fz)| (z, fz)).collect();
    let power = map
        .iter()
        .map(|(z, _)| {
            let mut y = z;
            for _ in 0..m {
                y = image.get(y).copied().ok_or_else(|| {
                    Error::Decode(format!(
                        "the map gives no image of {y:?}, so its power cannot be taken"
                    ))
                })?;
            }
            Ok((z.clone(), y.clone()))
        })
        .collect::<Result<Vec<_>>>()?;
    Ok((sub, Some(power)))
}

/// What [`check_proof_file`] established.
#[derive(Clone, Debug, PartialEq, Serialize)]
pub struct ProofCheck {
    /// The checker's summary.
    pub summary: LratSummary,
    /// The proof file's size in bytes.
    pub bytes: u64,
    /// Seconds the check took.
    pub seconds: f64,
}

/// The checker's options for proofs of orbitcnf's CNFs: the CNF's clause `i`
/// is LRAT clause `i + 1`, and derived clauses come after it.
pub fn lrat_options() -> LratOptions {
    LratOptions {
        ids_follow_cnf: true,
        ..LratOptions::default()
    }
}

/// Checks the LRAT proof (text or binary) in `path` against `cnf` with
/// orbitcnf's own checker, reading it in pieces.
///
/// # Errors
/// [`Error::Io`] when the file cannot be read; [`Error::Proof`] naming the
/// step and the reason when the proof is rejected.
pub fn check_proof_file(cnf: &Cnf, path: &Path) -> Result<ProofCheck> {
    let t = Instant::now();
    let stored = recheck_file(cnf, path, &lrat_options())?;
    Ok(ProofCheck {
        summary: stored.check?,
        bytes: stored.bytes,
        seconds: t.elapsed().as_secs_f64(),
    })
}

/// Checks the proof in `path` as the refutation of `q` under `options`: the
/// question is encoded afresh, so the proof must refute exactly the CNF that
/// this orbitcnf builds for it.
///
/// # Errors
/// Encoding errors; as [`check_proof_file`].
pub fn check_refutation(q: &Question, options: &EncodeOptions, path: &Path) -> Result<ProofCheck> {
    let enc = encode::encode(q, options, u64::MAX)?;
    check_proof_file(&enc.cnf, path)
}

/// The [`ProofInfo`] of a proof checked by [`check_proof_file`], kept at `file`.
pub fn proof_info(check: ProofCheck, file: Option<PathBuf>) -> ProofInfo {
    ProofInfo {
        lrat: check.summary,
        lrat_bytes: check.bytes,
        lrat_file: file,
        drat_file: None,
        drat_bytes: None,
        check_seconds: check.seconds,
    }
}

/// What [`check_split_refutation`] established about a split folder.
#[derive(Clone, Debug, PartialEq, Serialize)]
pub struct SplitRefutation {
    /// Cubes in the split, each refuted with an LRAT proof checked now.
    pub cubes: usize,
    /// Steps of the coverage proof, checked now.
    pub coverage_steps: u64,
    /// Solving seconds summed over the cubes' results.
    pub solve_seconds: f64,
}

/// The hex SHA-256 of the split folder `dir`'s manifest, which pins the
/// whole split (the digests of its formula, cubes and coverage proof), or
/// an error saying that the folder or its manifest is gone.
///
/// # Errors
/// [`Error::Parse`] about the manifest when it cannot be read.
pub fn split_manifest_digest(dir: &Path) -> Result<String> {
    let path = dir.join(crate::split::MANIFEST);
    crate::artifact::sha256_file(&path)
        .map(|(digest, _)| digest)
        .map_err(|e| {
            Error::parse(
                path.display().to_string(),
                0,
                format!("the split folder's manifest cannot be read ({e})"),
            )
        })
}

/// Checks the split folder `dir` as the refutation of `q` under `options`:
/// its manifest must still have the SHA-256 `manifest_sha256` and state
/// exactly this question and these options, and a fresh merge (on `jobs`
/// threads) must re-check the formula, every cube's digest, the coverage
/// proof and every cube's LRAT proof, with no cube pending and none
/// refuted only on a solver's word.
///
/// # Errors
/// [`Error::Parse`] naming what differs or which cubes lack a checked
/// proof; the errors of [`crate::split::run::merge`] for a damaged split.
pub fn check_split_refutation(
    q: &Question,
    options: &EncodeOptions,
    dir: &Path,
    manifest_sha256: &str,
    jobs: usize,
) -> Result<SplitRefutation> {
    let where_ = dir.display().to_string();
    let bad = |why: String| Error::parse(&where_, 0, why);
    if split_manifest_digest(dir)? != manifest_sha256 {
        return Err(bad(
            "its manifest.json is not the one recorded (SHA-256 differs)".into(),
        ));
    }
    let m = crate::split::SplitManifest::read(dir)?;
    if m.question != q.record() {
        return Err(bad(format!(
            "the split is about another question ({})",
            Question::from_record(&m.question)
                .map(|other| other.statement())
                .unwrap_or_else(|_| "unreadable".into())
        )));
    }
    if m.options.resolve(q) != options.resolve(q) {
        return Err(bad(
            "the split was encoded with other options than the answer records".into(),
        ));
    }
    let r = crate::split::run::merge(
        dir,
        None,
        false,
        crate::proof::lrat::compressed::FileEncoding::Text,
        crate::progress::ProgressMode::Off,
        jobs,
    )?;
    if let Some(cube) = r.feasible_cube {
        return Err(bad(format!(
            "the merge is feasible (cube {cube} has a checked orbit), not a refutation"
        )));
    }
    if r.verdict != crate::report::Verdict::Infeasible || !r.uncertified.is_empty() {
        let missing: Vec<usize> = r
            .pending
            .iter()
            .map(|p| p.index)
            .chain(r.uncertified.iter().copied())
            .collect();
        return Err(bad(format!(
            "the merge is {}, not a certified refutation: cubes {} have no checked proof",
            r.verdict.word(),
            crate::split::index_ranges(&missing)
        )));
    }
    Ok(SplitRefutation {
        cubes: r.cubes,
        coverage_steps: r.coverage.steps,
        solve_seconds: r.solve_seconds,
    })
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::brute;
    use crate::grid::Grid;
    use crate::points::PointSet;

    fn divisors(q: usize) -> Vec<usize> {
        (1..q).filter(|&d| q.is_multiple_of(d)).collect()
    }

    /// Every divisor's witness read off `orbit` passes the independent
    /// check of its own question (`question(d)`).
    fn assert_divisors_check(orbit: &[Point], question: &dyn Fn(usize) -> Question) {
        for d in divisors(orbit.len()) {
            let q = question(d);
            let options = EncodeOptions::default().resolve(&q);
            let (sub, map) = divisor_witness(orbit, None, d).unwrap();
            assert_eq!(sub.len(), d);
            assert!(map.is_none());
            if let Err(e) = check_witness(&q, &options, &sub, None) {
                panic!("d = {d} from {orbit:?}: {e}");
            }
        }
    }

    #[test]
    fn sub_orbits_of_isometric_cycles_found_by_brute_force_are_isometric_cycles() {
        // {-1,0,1}^3: 8-cycles (and 6-cycles) found by the independent brute
        // force; every divisor's sub-orbit is checked by the verifier.
        let bounds = [(-1, 1); 3];
        let grid = Grid::parse("-1..1", Some(3)).unwrap();
        // The search meets cycles of the unit cube (all distances 1) first;
        // those with a distance 2 are the ones where the check can bite.
        let far = |o: &Vec<Point>| o.iter().any(|z| brute::sup_distance(&o[0], z) == 2);
        let cycles_with_2 = |p: usize| -> Vec<Vec<Point>> {
            brute::all_cycles(&bounds, p, 3000)
                .into_iter()
                .filter(far)
                .take(40)
                .collect()
        };
        for p in [8, 6] {
            let cycles = cycles_with_2(p);
            assert!(!cycles.is_empty(), "p = {p}");
            for orbit in &cycles {
                assert_divisors_check(orbit, &|d| Question::new(grid.clone(), d).unwrap());
            }
        }
        // What is not a divisor is refused, and so is 0.
        let orbit = brute::find_cycle(&bounds, 8).unwrap();
        for bad in [0, 3, 5, 16] {
            assert!(divisor_witness(&orbit, None, bad).is_err(), "{bad}");
        }
        // The check is not vacuous: another choice of 4 points of an
        // 8-cycle (x_0, x_2, x_4, x_7) need not be a 4-cycle, and some fail.
        let q4 = Question::new(grid.clone(), 4).unwrap();
        let o4 = EncodeOptions::default().resolve(&q4);
        let failing = cycles_with_2(8).iter().any(|o| {
            let other = vec![o[0].clone(), o[2].clone(), o[4].clone(), o[7].clone()];
            check_witness(&q4, &o4, &other, None).is_err()
        });
        assert!(
            failing,
            "x_0, x_2, x_4, x_7 is a 4-cycle in every 8-cycle tried"
        );
    }

    #[test]
    fn sub_orbits_of_topical_cycles_are_topical_cycles() {
        // {0,1}^4: topical 6-cycles exist (C(4,2) = 6, Lemmens and
        // Scheutzow 2005); their sub-orbits of 3, 2, 1 points pass the
        // topical check.
        let grid = Grid::parse("0..1", Some(4)).unwrap();
        let cycles = brute::all_topical_cycles(&[(0, 1); 4], 6, 20);
        assert!(!cycles.is_empty());
        for orbit in &cycles {
            assert_divisors_check(orbit, &|d| {
                Question::new(grid.clone(), d)
                    .unwrap()
                    .with_class(MapClass::Topical)
            });
        }
    }

    #[test]
    fn powers_of_maps_found_by_brute_force_are_full_map_witnesses() {
        // A point set with a nonexpansive map of period 4 (the corners of a
        // square, found by the brute-force map search); the power f^(4/d)
        // with every (4/d)-th orbit point passes the full-map check.
        let pts: Vec<Point> = vec![vec![0, 0], vec![0, 1], vec![1, 1], vec![1, 0], vec![3, 0]];
        let d = PointSet::new(pts.clone()).unwrap();
        let (f, orbit) = brute::find_map(&pts, 4).expect("a 4-cycle of the square's corners");
        let map: Vec<(Point, Point)> = f
            .iter()
            .enumerate()
            .map(|(i, &j)| (pts[i].clone(), pts[j].clone()))
            .collect();
        let orbit: Vec<Point> = orbit.iter().map(|&i| pts[i].clone()).collect();
        for div in divisors(4) {
            let q = Question::on_points(d.clone(), div).unwrap();
            let options = EncodeOptions::default().resolve(&q);
            assert!(options.formulation.encodes_map());
            let (sub, power) = divisor_witness(&orbit, Some(&map), div).unwrap();
            let power = power.expect("a map");
            if let Err(e) = check_witness(&q, &options, &sub, Some(&power)) {
                panic!("d = {div}: {e}");
            }
            // The orbit alone is no witness on a point set, and f itself
            // does not have the sub-orbit as an orbit of period d < 4.
            assert!(check_witness(&q, &options, &sub, None).is_err());
            assert!(check_witness(&q, &options, &sub, Some(&map)).is_err());
        }
    }
}
