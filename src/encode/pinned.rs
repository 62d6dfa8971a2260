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
            "4cube-17-no-clique-orbits",
            boxed("-1..1", 4, 17),
            EncodeOptions {
                orbits: false,
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
            "f699af991fb15a388ff04516fa543b7341227ad75be545e5088854de67499748",
        ),
        (
            "4cube-17-no-bicliques",
            "458bd338f61b2609afbdce576af3e9a700d1ea539baf4373da1d7230052da49e",
        ),
        // With window-cliques off, the bytes of before the family.
        (
            "4cube-17-no-window-cliques",
            "247a71d4228c9e8026cf37b076846260aefa26dc9e39c3774cae03f88fdd0475",
        ),
        // clique-orbits off: the bytes of before the family.
        (
            "4cube-17-no-clique-orbits",
            "100f05d4bdab8e592bed29b33880c4474ac55b62eadb2c4671ae2585474c25c8",
        ),
        (
            "4cube-18-default",
            "e19d20a5d853c3f116cf5637c7bc02d0e9a23a9df646554c066d17131608d539",
        ),
        // The bytes of this box before `pack-nested` existed: with the
        // family off the CNF is unchanged, header included.
        (
            "mixed-7-no-nested",
            "64f6a63e5894ac2887c7edcd75c3c0cb918265ed63a9b5502adb129ced83eaa3",
        ),
        // Recorded when `pack-nested` was added (its option in the header,
        // its clauses after `pack-classes`), then again when
        // `biclique-cover` was; the default until `sub-box`.
        (
            "mixed-7-no-sub-box",
            "108d8c1786b167b7913805bba4f48331ba044861a2accad7753366683644bdba",
        ),
        // Recorded when `sub-box` was added (its option in the header, its
        // clauses after `biclique-cover`).
        (
            "mixed-7-default",
            "2f42392d73aaedb465d1849a0f09e3cbd16deae04dab72a1bc341cd2b2a1cd16",
        ),
        (
            "square-5-stabilizer",
            "68762073debce9aceb7adba179fe9250e51feec24b599006be714a427e0da97c",
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
            "5c0f2035f898157ee8fe27aa1cfe7cf8a4dce833087dfcbcfb40a65ad53369f8",
        ),
        (
            "4cube-17-no-bicliques",
            "ddb5ebc835e009ca0d32b78f22470ce8f31487e6d1e260aa982b2ab570189b45",
        ),
        // With window-cliques off, the bytes of before the family.
        (
            "4cube-17-no-window-cliques",
            "6aaf85345421874f4afc73ed319eb07f357c35075095ab774dfb0a62a138230d",
        ),
        // clique-orbits off: the bytes of before the family.
        (
            "4cube-17-no-clique-orbits",
            "b50efb303a429744ab2ab7a9f98541655ba1e5ddc1c4c3d14004cfdd56b881f6",
        ),
        (
            "4cube-18-default",
            "854dbdcef65c0d54fba26a2f59f5611ee93b3cd122a71578dcbf565c00384467",
        ),
        (
            "mixed-7-no-nested",
            "ba3fa508c13759a4371744e0a5988d866e52452b5d2015a0eee444ee371c7f60",
        ),
        // A new key: the option is recorded, so stored answers of the
        // formula without the family are not taken for this one (first
        // `pack-nested`, then `sub-box`).
        (
            "mixed-7-no-sub-box",
            "04b09a92afdde11000af15fe75d04ccba2581411ddf4d56eae65f07d36c7b413",
        ),
        (
            "mixed-7-default",
            "af881bb30f560928eefe058cfff1ea21ef1489fc5918ac770b910b82296e4566",
        ),
        (
            "square-5-stabilizer",
            "502bcbcb15783064dc9f7ea5e86f57d429d2b228ead3c035a1790c4527513431",
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
