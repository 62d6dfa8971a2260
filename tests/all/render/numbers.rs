//! The numbers in every output equal those of the JSON they came from.
//!
//! The expected values are read here with serde_json alone (orbit, profile,
//! map, verdicts, digests), never through the crate's reader, and distances
//! are computed with the tests' own `util::dist`.

use std::collections::BTreeMap;

use serde_json::Value;

use orbitcnf::render::{self, Format, Picture};

use super::{ANSWERS, SPECTRA, has_orbit, load, path};
use crate::util::dist;

type Point = Vec<i64>;

fn read(p: &std::path::Path) -> Value {
    let text = std::fs::read_to_string(p).unwrap_or_else(|e| panic!("{}: {e}", p.display()));
    serde_json::from_str(&text).unwrap_or_else(|e| panic!("{}: {e}", p.display()))
}

fn points(v: &Value) -> Vec<Point> {
    v.as_array()
        .expect("a list of points")
        .iter()
        .map(|z| {
            z.as_array()
                .expect("a point")
                .iter()
                .map(|c| c.as_i64().expect("an integer"))
                .collect()
        })
        .collect()
}

/// What the JSON of an answer says: orbit, profile, map (when it has them).
struct Expected {
    orbit: Vec<Point>,
    profile: Vec<i64>,
    map: Option<Vec<(Point, Point)>>,
    digests: Vec<String>,
}

fn expected(name: &str) -> Expected {
    let p = path(name);
    let (doc, digests) = if p.is_dir() {
        let manifest = read(&p.join("manifest.json"));
        let digests = manifest["files"]
            .as_array()
            .expect("files")
            .iter()
            .map(|f| f["sha256"].as_str().expect("sha256").to_string())
            .collect();
        let witness = ["map.json", "orbit.json"]
            .into_iter()
            .map(|f| p.join(f))
            .find(|f| f.exists());
        (witness.map(|w| read(&w)).unwrap_or(Value::Null), digests)
    } else {
        (read(&p), Vec::new())
    };
    let orbit = doc.get("orbit").map(points).unwrap_or_default();
    let profile = match doc.get("profile") {
        Some(v) => v
            .as_array()
            .expect("profile")
            .iter()
            .map(|d| d.as_i64().expect("integer"))
            .collect(),
        None => (1..=orbit.len() / 2)
            .map(|k| dist(&orbit[0], &orbit[k]))
            .collect(),
    };
    let map = doc.get("map").map(|m| {
        m.as_array()
            .expect("map")
            .iter()
            .map(|pair| {
                let pr = points(pair);
                (pr[0].clone(), pr[1].clone())
            })
            .collect()
    });
    Expected {
        orbit,
        profile,
        map,
        digests,
    }
}

/// `$(-1, 0, 1)$` → `[-1, 0, 1]`.
fn math_point(s: &str) -> Point {
    let inner = s.trim().trim_start_matches("$(").trim_end_matches(")$");
    inner
        .split(',')
        .map(|c| c.trim().parse().expect("an integer coordinate"))
        .collect()
}

/// The rows of the LaTeX longtable whose caption starts with `caption`.
fn latex_rows<'a>(tex: &'a str, caption: &str) -> Vec<Vec<&'a str>> {
    let start = tex
        .find(&format!("\\caption{{{caption}"))
        .unwrap_or_else(|| panic!("no table {caption:?}"));
    let body = &tex[start..];
    let body = &body[body.find("\\endhead").expect("endhead") + 8
        ..body.find("\\bottomrule").expect("bottomrule")];
    body.lines()
        .filter(|l| l.ends_with("\\\\"))
        .map(|l| {
            l.trim_end_matches("\\\\")
                .split(" & ")
                .map(str::trim)
                .collect()
        })
        .collect()
}

fn number(cell: &str) -> i64 {
    cell.trim_matches('$')
        .parse()
        .unwrap_or_else(|_| panic!("{cell:?} is not a number"))
}

#[test]
fn latex_tables_hold_the_numbers_of_the_answer() {
    for &name in ANSWERS {
        let tex = render::render(&load(name), Format::Latex, None).expect("renders");
        let want = expected(name);
        for d in &want.digests {
            let shown = tex.replace("\\allowbreak ", "");
            assert!(
                shown.contains(d.as_str()),
                "{name}: digest {d} missing from the LaTeX footnote"
            );
        }
        if !has_orbit(name) {
            assert!(
                !tex.contains("\\caption{The orbit"),
                "{name}: an orbit table without an orbit"
            );
            continue;
        }
        let rows = latex_rows(&tex, "The orbit");
        let got: Vec<Point> = rows.iter().map(|r| math_point(r[1])).collect();
        let index: Vec<i64> = rows.iter().map(|r| number(r[0])).collect();
        assert_eq!(got, want.orbit, "{name}: orbit table");
        assert_eq!(
            index,
            (0..want.orbit.len() as i64).collect::<Vec<_>>(),
            "{name}: orbit indices"
        );
        if !want.profile.is_empty() && !name.contains("topical") {
            let rows = latex_rows(&tex, "The distance profile");
            let got: Vec<i64> = rows.iter().map(|r| number(r[1])).collect();
            assert_eq!(got, want.profile, "{name}: profile table");
            let top = *want.profile.iter().max().expect("a profile");
            for r in &rows {
                let kind = if number(r[1]) == top { "far" } else { "close" };
                assert_eq!(r[2], kind, "{name}: offset {}", r[0]);
            }
        }
        let map: Vec<(Point, Point)> = latex_rows(&tex, "The map")
            .iter()
            .map(|r| (math_point(r[0]), math_point(r[1])))
            .collect();
        if let Some(m) = &want.map {
            let mut m = m.clone();
            m.sort();
            assert_eq!(map, m, "{name}: the map table is not the answer's map");
        }
        // Whatever its source, the table is a map moving the orbit along,
        // nonexpansive on every pair (checked here, without the crate).
        let image: BTreeMap<&Point, &Point> = map.iter().map(|(z, f)| (z, f)).collect();
        let p = want.orbit.len();
        for i in 0..p {
            let (x, y) = (&want.orbit[i], &want.orbit[(i + 1) % p]);
            if name.contains("topical") {
                continue; // t is not the sup-norm; the topical map is checked by the crate's own test
            }
            assert_eq!(
                image.get(x),
                Some(&y),
                "{name}: f(x_{i}) is not x_{}",
                (i + 1) % p
            );
        }
        if !name.contains("topical") {
            for (z, fz) in &map {
                for (w, fw) in &map {
                    assert!(
                        dist(fz, fw) <= dist(z, w),
                        "{name}: the map expands {z:?}, {w:?}"
                    );
                }
            }
        }
    }
}

/// The values of attribute `attr` of the elements with class `class` (first class word).
fn svg_elements<'a>(doc: &'a roxmltree::Document<'a>, class: &str) -> Vec<roxmltree::Node<'a, 'a>> {
    doc.descendants()
        .filter(|n| {
            n.attribute("class")
                .is_some_and(|c| c.split(' ').next() == Some(class))
        })
        .collect()
}

fn data_point(n: &roxmltree::Node) -> Point {
    n.attribute("data-x")
        .expect("data-x")
        .split(',')
        .map(|c| c.parse().expect("an integer"))
        .collect()
}

fn data(n: &roxmltree::Node, attr: &str) -> i64 {
    n.attribute(attr)
        .unwrap_or_else(|| panic!("no {attr}"))
        .parse()
        .expect("an integer")
}

#[test]
fn svg_pictures_hold_the_numbers_of_the_answer() {
    for &name in ANSWERS.iter().filter(|n| has_orbit(n)) {
        let loaded = load(name);
        let want = expected(name);
        let p = want.orbit.len();
        let cycle = render::render(&loaded, Format::Svg, Some(Picture::Cycle)).expect("renders");
        let doc = roxmltree::Document::parse(&cycle).expect("XML");
        let nodes: Vec<Point> = svg_elements(&doc, "node").iter().map(data_point).collect();
        assert_eq!(nodes, want.orbit, "{name}: cycle nodes");
        for e in svg_elements(&doc, "edge") {
            let (i, j, k, d) = (
                data(&e, "data-i"),
                data(&e, "data-j"),
                data(&e, "data-k"),
                data(&e, "data-d"),
            );
            assert_eq!(d, want.profile[k as usize - 1], "{name}: edge offset {k}");
            assert_eq!(
                d,
                dist(&want.orbit[i as usize], &want.orbit[j as usize]),
                "{name}: edge {i}-{j}"
            );
        }
        let heat = render::render(&loaded, Format::Svg, Some(Picture::Distances)).expect("renders");
        let doc = roxmltree::Document::parse(&heat).expect("XML");
        let cells = svg_elements(&doc, "cell");
        assert_eq!(cells.len(), p * p, "{name}: cells");
        for c in cells {
            let (i, j, d) = (
                data(&c, "data-i") as usize,
                data(&c, "data-j") as usize,
                data(&c, "data-d"),
            );
            let (x, y) = (&want.orbit[i], &want.orbit[j]);
            let own = if name.contains("topical") {
                x.iter().zip(y).map(|(a, b)| a - b).max().expect("n ≥ 1")
            } else {
                dist(x, y)
            };
            assert_eq!(d, own, "{name}: cell ({i}, {j})");
        }
        let orbit = render::render(&loaded, Format::Svg, Some(Picture::Orbit)).expect("renders");
        let doc = roxmltree::Document::parse(&orbit).expect("XML");
        let pts: Vec<Point> = svg_elements(&doc, "point").iter().map(data_point).collect();
        assert_eq!(pts, want.orbit, "{name}: orbit picture");
    }
}

/// Period → verdict word, read from the store's answer files or the sweep's rows.
fn verdicts(name: &str) -> BTreeMap<u64, String> {
    let p = path(name);
    let docs: Vec<Value> = if p.is_dir() {
        let mut files: Vec<_> = std::fs::read_dir(p.join("answers"))
            .expect("answers")
            .map(|e| e.expect("entry").path())
            .collect();
        files.sort();
        files.iter().map(|f| read(f)).collect()
    } else {
        read(&p)["rows"]
            .as_array()
            .expect("rows")
            .iter()
            .map(|r| r["answer"].clone())
            .collect()
    };
    docs.iter()
        .map(|a| {
            (
                a["question"]["period"].as_u64().expect("period"),
                a["verdict"].as_str().expect("verdict").to_string(),
            )
        })
        .collect()
}

#[test]
fn spectrum_outputs_hold_the_verdicts_of_the_answers() {
    for &name in SPECTRA {
        let want = verdicts(name);
        let loaded = load(name);
        let svg = render::render(&loaded, Format::Svg, Some(Picture::Spectrum)).expect("renders");
        let doc = roxmltree::Document::parse(&svg).expect("XML");
        let got: BTreeMap<u64, String> = svg_elements(&doc, "period")
            .iter()
            .map(|n| {
                (
                    data(n, "data-p") as u64,
                    n.attribute("data-verdict").expect("verdict").to_string(),
                )
            })
            .collect();
        assert_eq!(got, want, "{name}: strip");
        let tex = render::render(&loaded, Format::Latex, None).expect("renders");
        let got: BTreeMap<u64, String> = latex_rows(&tex, "Periods on")
            .iter()
            .map(|r| (number(r[0]) as u64, r[1].to_string()))
            .collect();
        assert_eq!(got, want, "{name}: LaTeX table");
        let html = render::render(&loaded, Format::Html, None).expect("renders");
        let got: BTreeMap<u64, String> = html
            .lines()
            .filter_map(|l| l.strip_prefix("<tr class=\""))
            .map(|l| {
                let verdict = l.split('"').next().expect("class");
                let p = l
                    .split("<td class=\"num\">")
                    .nth(1)
                    .expect("p")
                    .split('<')
                    .next()
                    .expect("p");
                (p.parse().expect("a period"), verdict.to_string())
            })
            .collect();
        assert_eq!(got, want, "{name}: HTML table");
    }
}

#[test]
fn html_tables_hold_the_numbers_of_the_answer() {
    for &name in ANSWERS.iter().filter(|n| has_orbit(n)) {
        let html = render::render(&load(name), Format::Html, None).expect("renders");
        let want = expected(name);
        let table = html
            .split("<table class=\"orbit\">")
            .nth(1)
            .expect("orbit table");
        let table = table.split("</table>").next().expect("end");
        let got: Vec<Point> = table
            .lines()
            .filter(|l| l.starts_with("<tr><td class=\"num\">"))
            .map(|l| {
                let z = l
                    .split("<code>")
                    .nth(1)
                    .expect("code")
                    .split("</code>")
                    .next()
                    .expect("point");
                z.trim_matches(|c| c == '(' || c == ')')
                    .split(", ")
                    .map(|c| c.parse().expect("an integer"))
                    .collect()
            })
            .collect();
        assert_eq!(got, want.orbit, "{name}: HTML orbit table");
        if !name.contains("topical") && !want.profile.is_empty() {
            let table = html
                .split("<table class=\"profile\">")
                .nth(1)
                .expect("profile table");
            let table = table.split("</table>").next().expect("end");
            let got: Vec<i64> = table
                .lines()
                .filter(|l| l.starts_with("<tr><td class=\"num\">"))
                .map(|l| {
                    l.split("<td class=\"num\">")
                        .nth(2)
                        .expect("g")
                        .split('<')
                        .next()
                        .expect("g")
                        .parse()
                        .expect("integer")
                })
                .collect();
            assert_eq!(got, want.profile, "{name}: HTML profile table");
        }
    }
}
