//! The family tables of the two cycle formulations, `isometric-cycle/1`
//! ([`ISOMETRIC_CYCLE`]) and `topical-cycle/1` ([`TOPICAL_CYCLE`]).
//!
//! Each row names a family, says when it is part of an encoding (from the
//! options as [`super::EncodeOptions::resolve`] left them), gives its exact
//! size from the question alone, and emits it; rows run in table order, which
//! is also the order of the clauses in the CNF. The rows are defined once
//! here and listed by both tables where both formulations have them. The
//! families that resolution always switches off for topical questions
//! (`count-occupancy`, `pack-*`, `sym-reverse`) are not in the topical table.

use std::cell::OnceCell;

use super::family::{Family, always};
use super::{
    bicliques, classes, cliques, coords, count, distance, edges, gaps, orbits, packing, points,
    profile, subbox, symmetry, topical,
};
use crate::question::Question;

/// The context the cycle families share: the question, and what two
/// families need alike, computed at most once per encoding.
#[derive(Debug)]
pub struct Cycle {
    /// The question encoded.
    pub q: Question,
    stabilizer: OnceCell<Vec<(usize, Vec<usize>)>>,
    ruled_out: OnceCell<Vec<classes::Excluded>>,
    bicliques: OnceCell<Vec<bicliques::Exclusion>>,
    /// Whether `biclique-cover` adds the multiplier images of its
    /// exclusions: unless the profile takes two values and the multiplier
    /// break is on (see [`bicliques`]).
    bicliques_images: bool,
    /// What the walk of the top patterns searches for: fooling sets when
    /// `biclique-cover` is on, incompatible cliques when `window-cliques` is.
    walk: bicliques::WalkTests,
    subbox: OnceCell<Vec<Vec<profile::ProfileLit>>>,
    gaps: OnceCell<Vec<gaps::Gap>>,
    /// What `sub-box` carries over from the sub-boxes.
    carried: subbox::Carried,
}

impl Cycle {
    /// The context of `q` under the resolved options `o`; nothing is computed yet.
    pub fn new(q: &Question, o: &super::EncodeOptions) -> Cycle {
        Cycle {
            bicliques_images: !(q.grid.diameter() == 2 && o.symmetry.multiplier),
            walk: bicliques::WalkTests {
                fooling: o.bicliques,
                cliques: o.cliques,
                orbits: o.orbits,
            },
            q: q.clone(),
            stabilizer: OnceCell::new(),
            ruled_out: OnceCell::new(),
            bicliques: OnceCell::new(),
            subbox: OnceCell::new(),
            gaps: OnceCell::new(),
            carried: subbox::Carried {
                classes: o.classes,
                nested: o.nested,
                bicliques: o.bicliques,
                gaps: o.gaps,
                multiplier: o.symmetry.multiplier,
            },
        }
    }

    /// The orbits of the stabilisers ([`symmetry::stabilizer_classes`]),
    /// read by `sym-stabilizer` and `sym-reverse` (empty when the group is
    /// too large, in which case resolution switched both off).
    pub fn stabilizer_classes(&self) -> &[(usize, Vec<usize>)] {
        self.stabilizer
            .get_or_init(|| symmetry::stabilizer_classes(&self.q).unwrap_or_default())
    }

    /// The profiles `pack-classes` excludes ([`classes::ruled_out`]), found
    /// by a search that both its size and its clauses need.
    pub fn ruled_out(&self) -> &[classes::Excluded] {
        self.ruled_out.get_or_init(|| classes::ruled_out(&self.q))
    }

    /// The top patterns `biclique-cover` and `window-cliques` exclude
    /// ([`bicliques::ruled_out`], one walk for both), with their multiplier
    /// images where they are needed.
    pub fn bicliques(&self) -> &[bicliques::Exclusion] {
        self.bicliques
            .get_or_init(|| bicliques::ruled_out(&self.q, self.bicliques_images, self.walk))
    }
}

impl Cycle {
    /// The clauses of `sub-box` ([`subbox::ruled_out`]).
    pub fn subbox(&self) -> &[Vec<profile::ProfileLit>] {
        self.subbox
            .get_or_init(|| subbox::ruled_out(&self.q, self.carried))
    }

    /// The patterns of `pack-gap` ([`gaps::ruled_out`]).
    pub fn gaps(&self) -> &[gaps::Gap] {
        self.gaps
            .get_or_init(|| gaps::ruled_out(&self.q, self.ruled_out()))
    }
}

/// `coord-order` ([`coords`]).
const COORD_ORDER: Family<Cycle> = Family {
    name: coords::FAMILY,
    applies: always,
    searched: false,
    size: |x| coords::size(&x.q),
    add: |e, x| coords::add(e, &x.q),
};
/// `profile` ([`profile`]).
const PROFILE: Family<Cycle> = Family {
    name: profile::FAMILY,
    applies: always,
    searched: false,
    size: |x| profile::size(&x.q),
    add: |e, x| profile::add(e, &x.q),
};
/// `point-eq` ([`points`]), when a later family reads the point indicators.
const POINT_EQ: Family<Cycle> = Family {
    name: points::FAMILY,
    applies: |_, o| o.needs_points(),
    searched: false,
    size: |x| points::size(&x.q),
    add: |e, x| points::add(e, &x.q),
};
/// `sym-translate` ([`symmetry`], step 1).
const SYM_TRANSLATE: Family<Cycle> = Family {
    name: symmetry::TRANSLATE,
    applies: |_, o| o.symmetry.translate,
    searched: false,
    size: |x| symmetry::sizes::translate(&x.q),
    add: |e, x| symmetry::add_translate(e, &x.q),
};
/// `sym-multiplier` ([`symmetry`], step 2).
const SYM_MULTIPLIER: Family<Cycle> = Family {
    name: symmetry::MULTIPLIER,
    applies: |_, o| o.symmetry.multiplier,
    searched: false,
    size: |x| symmetry::sizes::multiplier(&x.q),
    add: |e, x| symmetry::add_multiplier(e, &x.q),
};
/// `sym-rotate` ([`symmetry`], step 3).
const SYM_ROTATE: Family<Cycle> = Family {
    name: symmetry::ROTATE,
    applies: |_, o| o.symmetry.rotate,
    searched: false,
    size: |x| symmetry::sizes::rotate(&x.q),
    add: |e, x| symmetry::add_rotate(e, &x.q),
};
/// `sym-isometry` ([`symmetry`], step 4).
const SYM_ISOMETRY: Family<Cycle> = Family {
    name: symmetry::ISOMETRY,
    applies: |_, o| o.symmetry.isometry,
    searched: false,
    size: |_| symmetry::sizes::isometry(),
    add: |e, x| symmetry::add_isometry(e, &x.q),
};
/// `sym-stabilizer` ([`symmetry`], step 5).
const SYM_STABILIZER: Family<Cycle> = Family {
    name: symmetry::STABILIZER,
    applies: |_, o| o.symmetry.stabilizer,
    searched: false,
    size: |x| symmetry::sizes::stabilizer(&x.q),
    add: |e, x| symmetry::add_stabilizer(e, &x.q, x.stabilizer_classes()),
};

/// The families of `isometric-cycle/1`, in the order they are added.
pub static ISOMETRIC_CYCLE: &[Family<Cycle>] = &[
    COORD_ORDER,
    PROFILE,
    Family {
        name: distance::FAMILY_UPPER,
        applies: always,
        searched: false,
        size: |x| distance::size_upper(&x.q),
        add: |e, x| distance::add_upper(e, &x.q),
    },
    Family {
        name: distance::FAMILY_LOWER,
        applies: always,
        searched: false,
        size: |x| distance::size_lower(&x.q),
        add: |e, x| distance::add_lower(e, &x.q),
    },
    POINT_EQ,
    Family {
        name: count::FAMILY,
        applies: |_, o| o.count,
        searched: false,
        size: |x| count::size(&x.q),
        add: |e, x| count::add(e, &x.q),
    },
    Family {
        name: packing::FAMILY,
        applies: |_, o| o.packing,
        searched: false,
        size: |x| packing::size(&x.q),
        add: |e, x| packing::add(e, &x.q),
    },
    Family {
        name: classes::FAMILY,
        applies: |_, o| o.classes,
        searched: true,
        size: |x| classes::size(&classes::select(x.ruled_out(), false)),
        add: |e, x| classes::add(e, &x.q, &classes::select(x.ruled_out(), false)),
    },
    Family {
        name: classes::FAMILY_NESTED,
        applies: |_, o| o.nested,
        searched: true,
        size: |x| classes::size(&classes::select(x.ruled_out(), true)),
        add: |e, x| classes::add(e, &x.q, &classes::select(x.ruled_out(), true)),
    },
    Family {
        name: gaps::FAMILY,
        applies: |_, o| o.gaps,
        searched: true,
        size: |x| gaps::size(x.gaps()),
        add: |e, x| gaps::add(e, &x.q, x.gaps()),
    },
    Family {
        name: bicliques::FAMILY,
        applies: |_, o| o.bicliques,
        searched: true,
        size: |x| bicliques::size(x.bicliques(), bicliques::Found::FoolingSet),
        add: |e, x| bicliques::add(e, &x.q, x.bicliques(), bicliques::Found::FoolingSet),
    },
    Family {
        name: cliques::FAMILY,
        applies: |_, o| o.cliques,
        searched: true,
        size: |x| bicliques::size(x.bicliques(), bicliques::Found::WindowCliques),
        add: |e, x| bicliques::add(e, &x.q, x.bicliques(), bicliques::Found::WindowCliques),
    },
    Family {
        name: orbits::FAMILY,
        applies: |_, o| o.orbits,
        searched: true,
        size: |x| bicliques::size(x.bicliques(), bicliques::Found::CliqueOrbits),
        add: |e, x| bicliques::add(e, &x.q, x.bicliques(), bicliques::Found::CliqueOrbits),
    },
    Family {
        name: subbox::FAMILY,
        applies: |_, o| o.subbox,
        searched: true,
        size: |x| subbox::size(x.subbox()),
        add: |e, x| subbox::add(e, &x.q, x.subbox()),
    },
    Family {
        name: edges::FAMILY,
        applies: |_, o| o.classes,
        searched: false,
        size: |x| edges::size(&x.q),
        add: |e, x| edges::add(e, &x.q),
    },
    SYM_TRANSLATE,
    SYM_MULTIPLIER,
    SYM_ROTATE,
    SYM_ISOMETRY,
    SYM_STABILIZER,
    Family {
        name: symmetry::REVERSE,
        applies: |_, o| o.symmetry.reverse && !o.reverse_ladder,
        searched: false,
        size: |x| symmetry::sizes::reverse(x.stabilizer_classes()),
        add: |e, x| symmetry::add_reverse(e, &x.q, x.stabilizer_classes()),
    },
    Family {
        name: symmetry::REVERSE,
        applies: |_, o| o.symmetry.reverse && o.reverse_ladder,
        searched: false,
        size: |x| symmetry::sizes::reverse_ladder(x.stabilizer_classes()),
        add: |e, x| symmetry::add_reverse_ladder(e, &x.q, x.stabilizer_classes()),
    },
    Family {
        name: symmetry::TWINS,
        applies: |_, o| o.twins,
        searched: false,
        size: |x| symmetry::sizes::twins(&x.q),
        add: |e, x| symmetry::add_twins(e, &x.q),
    },
];

/// The families of `topical-cycle/1`, in the order they are added.
pub static TOPICAL_CYCLE: &[Family<Cycle>] = &[
    COORD_ORDER,
    PROFILE,
    Family {
        name: topical::FAMILY_UPPER,
        applies: always,
        searched: false,
        size: |x| topical::size_upper(&x.q),
        add: |e, x| topical::add_upper(e, &x.q),
    },
    Family {
        name: topical::FAMILY_LOWER,
        applies: always,
        searched: false,
        size: |x| topical::size_lower(&x.q),
        add: |e, x| topical::add_lower(e, &x.q),
    },
    POINT_EQ,
    SYM_TRANSLATE,
    SYM_MULTIPLIER,
    SYM_ROTATE,
    Family {
        name: symmetry::SORT,
        applies: |_, o| o.symmetry.rotate,
        searched: false,
        size: |x| symmetry::sizes::sort(&x.q),
        add: |e, x| symmetry::add_sort(e, &x.q),
    },
    SYM_ISOMETRY,
    SYM_STABILIZER,
];

/// The sizes of the families every encoding of `q` has (`coord-order`,
/// `profile` and the two distance families), in floating point so that no
/// question can overflow them: `(clauses, variables)`. Equal to the sum of
/// those rows' sizes whenever that fits in `u64` (a test checks this), so a
/// formula refused on this figure alone is refused on its exact base size.
pub fn base_size(q: &Question) -> (f64, f64) {
    let p = q.period as f64;
    let pairs = p * (p - 1.0) / 2.0;
    let k = super::profile_len(q) as f64;
    let l = q.grid.diameter() as f64;
    let sides: Vec<f64> = (0..q.dim()).map(|c| q.grid.side(c) as f64).collect();
    let sum = |f: &dyn Fn(f64) -> f64| sides.iter().map(|&s| f(s)).sum::<f64>();
    // coord-order + profile + upper + lower (+ the topical lower bound's second cover).
    let covers = if q.class.is_default() { l } else { 2.0 * l };
    let clauses = p * sum(&|s| (s - 1.0).max(0.0))
        + k * l
        + pairs * (sum(&|s| s * (s - 1.0)) + covers + sum(&|s| s * (s + 3.0)));
    let vars = p * sum(&|s| s) + k * l + pairs * 2.0 * sum(&|s| s);
    (clauses, vars)
}
