//! The bytes of rendered CNF files, pinned by digest.
//!
//! A refactoring of the encoder must not change a single clause, variable
//! number or header line: a changed CNF means a new formulation version
//! (DEVELOPERS.md, "The formulation in brief"). Each case renders a question
//! with [`crate::dimacs::render_cnf`] and compares the SHA-256 of the bytes
//! (with the tool version blanked, so that a release does not move the pins)
//! with a literal recorded from the encoder before the family table existed.

use super::{EncodeOptions, Symmetry, encode};
use crate::grid::Grid;
use crate::points::PointSet;
use crate::question::{MapClass, Question};

fn boxed(spec: &str, dim: usize, p: usize) -> Question {
    Question::new(Grid::parse(spec, Some(dim)).unwrap(), p).unwrap()
}

fn digest(q: &Question, o: &EncodeOptions) -> String {
    let e = encode(q, o, u64::MAX).unwrap();
    let text = String::from_utf8(crate::dimacs::render_cnf(&e)).unwrap();
    let version = format!("version={} ", crate::dimacs::VERSION);
    let blanked = text.replacen(&version, "version=X ", 1);
    crate::artifact::sha256_hex(blanked.as_bytes())
}

/// The questions and options whose CNF bytes are pinned: every family of
/// every formulation occurs in at least one of them.
fn cases() -> Vec<(&'static str, Question, EncodeOptions)> {
    let five = PointSet::parse("-2 -2\n-2 2\n2 -2\n2 2\n0 1\n", "t").unwrap();
    let stab = EncodeOptions {
        symmetry: Symmetry::parse("isometry,stabilizer,reverse").unwrap(),
        ..EncodeOptions::default()
    };
    vec![
        (
            "cube-8-default",
            boxed("-1..1", 3, 8),
            EncodeOptions::default(),
        ),
        (
            "cube-8-no-twins",
            boxed("-1..1", 3, 8),
            EncodeOptions {
                twins: false,
                ..EncodeOptions::default()
            },
        ),
        ("cube-8-plain", boxed("-1..1", 3, 8), EncodeOptions::plain()),
        (
            "4cube-17-default",
            boxed("-1..1", 4, 17),
            EncodeOptions::default(),
        ),
        (
            "4cube-17-no-bicliques",
            boxed("-1..1", 4, 17),
            EncodeOptions {
                bicliques: false,
                ..EncodeOptions::default()
            },
        ),
        (
            "4cube-17-no-window-cliques",
            boxed("-1..1", 4, 17),
            EncodeOptions {
                cliques: false,
                ..EncodeOptions::default()
            },
        ),
        (
            "4cube-18-default",
            boxed("-1..1", 4, 18),
            EncodeOptions::default(),
        ),
        (
            "mixed-7-no-nested",
            boxed("0..1,-1..1,0..3", 3, 7),
            EncodeOptions {
                nested: false,
                bicliques: false,
                subbox: false,
                gaps: false,
                ..EncodeOptions::default()
            },
        ),
        (
            "mixed-7-no-sub-box",
            boxed("0..1,-1..1,0..3", 3, 7),
            EncodeOptions {
                subbox: false,
                gaps: false,
                ..EncodeOptions::default()
            },
        ),
        (
            "mixed-7-default",
            boxed("0..1,-1..1,0..3", 3, 7),
            EncodeOptions::default(),
        ),
        ("square-5-stabilizer", boxed("-1..1", 2, 5), stab),
        ("point-1", boxed("5..5", 2, 1), EncodeOptions::default()),
        (
            "topical-5-default",
            boxed("0..2", 3, 5).with_class(MapClass::Topical),
            EncodeOptions::default(),
        ),
        (
            "topical-4-plain",
            boxed("0..1,-1..1,0..3", 3, 4).with_class(MapClass::Topical),
            EncodeOptions::plain(),
        ),
        (
            "fullmap-five-4",
            Question::on_points(five, 4).unwrap(),
            EncodeOptions::default(),
        ),
        (
            "fullmap-box-4",
            boxed("0..2", 2, 4),
            EncodeOptions::full_map(),
        ),
    ]
}

#[test]
fn rendered_cnf_bytes_are_unchanged() {
    let want = [
        // Step 7 (`sym-twins`) acts on even periods from 8 on; without it,
        // the bytes of before.
        (
            "cube-8-default",
            "3432d0b2c2927c48444ef5e04d1de5c36f086ca8ebe9bb9a0ddeb8be3925119e",
        ),
        (
            "cube-8-no-twins",
            "76d22ea062edf4b097c8e58ac62f2896142fe59fe2dcfe13ed2fd392c6a68d97",
        ),
        (
            "cube-8-plain",
            "04b42b06bc66f341965469cab67632ddcb6765bd00cecfa0ceeee0b5316c6175",
        ),
        // Recorded when `biclique-cover` was added (its option in the
        // header, its clauses after `pack-nested`); without the family the
        // bytes are those of before.
        (
            "4cube-17-default",
            "100f05d4bdab8e592bed29b33880c4474ac55b62eadb2c4671ae2585474c25c8",
        ),
        (
            "4cube-17-no-bicliques",
            "ca0f8d65f88429d494da72e4c5e93eb8c90003ccd8d5a1f318f010698d1e08cc",
        ),
        // With window-cliques off, the bytes of before the family.
        (
            "4cube-17-no-window-cliques",
            "121f821a2317da84be47bb9c9f5877778a882140914120f91934d24566de4569",
        ),
        (
            "4cube-18-default",
            "70ddc09c3f36a2ff2e503aa033c2c70d2cd34a2c28a8049098ca7c17dcd4b05f",
        ),
        // The bytes of this box before `pack-nested` existed: with the
        // family off the CNF is unchanged, header included.
        (
            "mixed-7-no-nested",
            "ab2019d5d789b8cafcd128f838510e0d28e7573cb2be8d0d2c1757d5cae24e01",
        ),
        // Recorded when `pack-nested` was added (its option in the header,
        // its clauses after `pack-classes`), then again when
        // `biclique-cover` was; the default until `sub-box`.
        (
            "mixed-7-no-sub-box",
            "2d7a83bd438b0851001b784d5e8962ccbe486b87870e98f86b823373299af649",
        ),
        // Recorded when `sub-box` was added (its option in the header, its
        // clauses after `biclique-cover`).
        (
            "mixed-7-default",
            "6ec5a1420a951337ec5cac4b24b48d437078e3b5423d0aca2f3d9508ad0c95a1",
        ),
        (
            "square-5-stabilizer",
            "9ef48e4a4b991039e50d3ff4de1b80f0a5cb5ea686d60924494fc96bda60f69e",
        ),
        (
            "point-1",
            "f9136a6a916c7ef41874ee0c002e08b6caebd667b61f73943ac1a7ccf1121554",
        ),
        (
            "topical-5-default",
            "dfc8dcfc592a35e951e079511e1b27bb253fcf8acb582a55866b148dc5ecf541",
        ),
        (
            "topical-4-plain",
            "96993d99417ee59ca85575ec209a011d1d3fea7e129e527b4209bbbf2d04f3b8",
        ),
        (
            "fullmap-five-4",
            "353c5a02edf6ae1625de04ddf8ea23c50ce5f4d5a602c825f56a76847207f2d3",
        ),
        (
            "fullmap-box-4",
            "b5726302213190423734e9d4b322d1b559d4d1e5297216447aee085f06a30966",
        ),
    ];
    let got: Vec<(&str, String)> = cases()
        .into_iter()
        .map(|(name, q, o)| (name, digest(&q, &o)))
        .collect();
    let mut changed = Vec::new();
    for ((name, d), (wname, w)) in got.iter().zip(want) {
        assert_eq!(*name, wname);
        if d != w {
            changed.push(format!("{name}: {d}"));
        }
    }
    assert!(changed.is_empty(), "the CNF bytes changed: {changed:#?}");
}

/// The store keys of the same cases ([`crate::store::key`] of the question
/// record and the resolved options): a store written before the formulation
/// became a type must still find its answers.
#[test]
fn store_keys_are_unchanged() {
    let want = [
        // A new key where step 7 acts (the option is recorded); without
        // it, the key of before.
        (
            "cube-8-default",
            "b3e681986c694f181baa200768450bb5018106c6f11ec49c39526ed7c00e67fa",
        ),
        (
            "cube-8-no-twins",
            "045864f42f2d03e13596203d8866132ee4d3b0d8749c6b145237ad5c63d5462a",
        ),
        (
            "cube-8-plain",
            "ddc47b2ca49ea25043b37fe65711e5cc568057d3b237e163b919b995037ba154",
        ),
        // New keys where `biclique-cover` acts (the option is recorded);
        // without it, the keys of before.
        (
            "4cube-17-default",
            "b50efb303a429744ab2ab7a9f98541655ba1e5ddc1c4c3d14004cfdd56b881f6",
        ),
        (
            "4cube-17-no-bicliques",
            "566214fb391fea76c9dc677d026c3830fb908b11639623db33febc3b36c1f814",
        ),
        // With window-cliques off, the bytes of before the family.
        (
            "4cube-17-no-window-cliques",
            "c5294c4d652fe004569a4f954a3c0234288c0d5fb4dc57dd67a8667a01239c24",
        ),
        (
            "4cube-18-default",
            "75e747fea08bf1adf0695446d57c041d54acf7dc930eac993d621f65b7507077",
        ),
        (
            "mixed-7-no-nested",
            "fe9db78283821a1fb4f1d459e7403e1a1c21478f282f999366cbb38a49612999",
        ),
        // A new key: the option is recorded, so stored answers of the
        // formula without the family are not taken for this one (first
        // `pack-nested`, then `sub-box`).
        (
            "mixed-7-no-sub-box",
            "58c223e12ba744e8e6e215c8a3d7d3501a511795e151f9637a9ba9e06da3fd26",
        ),
        (
            "mixed-7-default",
            "b0ae8bc1e8ea298a9a4a2f5263636ff81443e3a6e135645ff2871fbb3b3391da",
        ),
        (
            "square-5-stabilizer",
            "69cd1aa4700770763a6c612f34bcbc999e1d85b2eb7f0344b90f4b17e970663f",
        ),
        (
            "point-1",
            "10ace28e3fae7709ab3087923508ef43b20cd3cd1803d26f6ba83b4f06e1bd0f",
        ),
        (
            "topical-5-default",
            "3ae80e785c9ff501aaa3b38614831a3039fa975792fc3c77666c128419246fd8",
        ),
        (
            "topical-4-plain",
            "dde21d552a76f76262655d33fbf5b1224ab5b7528583b222e28c754eb5d3e146",
        ),
        (
            "fullmap-five-4",
            "ee2b9cf4882b73df6c679c7f350b36cc2b966a1ebc8a55837fe4a4e19a208179",
        ),
        (
            "fullmap-box-4",
            "db6cdd83dd2228812e9bbc44559d10c693c1f02151b94b71b18e7770308d1498",
        ),
    ];
    let mut changed = Vec::new();
    for ((name, q, o), (wname, w)) in cases().into_iter().zip(want) {
        assert_eq!(name, wname);
        let k = crate::store::key(&q.record(), &o.resolve(&q));
        if k != w {
            changed.push(format!("{name}: {k}"));
        }
    }
    assert!(changed.is_empty(), "the store keys changed: {changed:#?}");
}
