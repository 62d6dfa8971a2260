//! The mathematics the repository cites lives in the repository.
//!
//! Code, tests and write-ups cite facts as `docs/math.md §n` (or `§n.m`, or a
//! range `§n–m`). These tests read every such citation in `src/`, `tests/`,
//! `encodings/`, `docs/`, `instances/`, `scripts/`, `build.rs`, `README.md`
//! and `DEVELOPERS.md`, plus the bare `§n` cross-references inside
//! `docs/math.md` itself, and check that `docs/math.md` has each section: a
//! heading `## n. …` for a section, a heading or a paragraph label
//! `**n.m.**` for a subsection. They also check that no file still points to
//! the notes kept outside the repository, which readers of a clone cannot see.

use std::collections::BTreeSet;
use std::path::{Path, PathBuf};

/// The document, relative to the repository root.
const DOC: &str = "docs/math.md";

/// Directories and files scanned for citations, relative to the root.
const SCANNED: &[&str] = &[
    "src",
    "tests",
    "encodings",
    "docs",
    "instances",
    "scripts",
    "build.rs",
    "README.md",
    "DEVELOPERS.md",
];

fn root() -> PathBuf {
    PathBuf::from(env!("CARGO_MANIFEST_DIR"))
}

/// Every text file under `path` (or `path` itself), in a stable order.
fn text_files(path: &Path, out: &mut Vec<PathBuf>) {
    if path.is_dir() {
        let mut entries: Vec<PathBuf> = std::fs::read_dir(path)
            .unwrap_or_else(|e| panic!("cannot list {}: {e}", path.display()))
            .map(|entry| entry.expect("directory entry").path())
            .collect();
        entries.sort();
        for entry in entries {
            text_files(&entry, out);
        }
    } else if path.is_file() {
        out.push(path.to_path_buf());
    }
}

/// A section number at the start of `s` (`4`, `2.3`, `10`), without a
/// trailing sentence dot, and the rest of `s`.
fn number_at(s: &str) -> Option<(String, &str)> {
    let digits = |t: &str| t.len() - t.trim_start_matches(|c: char| c.is_ascii_digit()).len();
    let mut end = digits(s);
    if end == 0 {
        return None;
    }
    while s[end..].starts_with('.') && digits(&s[end + 1..]) > 0 {
        end += 1 + digits(&s[end + 1..]);
    }
    Some((s[..end].to_string(), &s[end..]))
}

/// The section numbers of one citation that starts at `s` (just after the
/// `§`): `3`, `1–2` (both ends and every section between), `6.2`.
fn cited_numbers(s: &str) -> Vec<String> {
    let s = s.trim_start_matches('§');
    let Some((first, rest)) = number_at(s) else {
        return Vec::new();
    };
    let range_end = ["–", "-"]
        .iter()
        .find_map(|dash| rest.strip_prefix(dash))
        .and_then(number_at);
    match range_end {
        Some((last, _)) => match (first.parse::<u32>(), last.parse::<u32>()) {
            (Ok(a), Ok(b)) if a <= b => (a..=b).map(|k| k.to_string()).collect(),
            _ => vec![first, last],
        },
        None => vec![first],
    }
}

/// The citations of the document in `text`: the numbers after each
/// `math.md` that is followed (across spaces, backticks and a line break
/// inside a comment) by `§`, each with its 1-based line.
fn citations(text: &str) -> Vec<(usize, String)> {
    let mut out = Vec::new();
    for (at, _) in text.match_indices("math.md") {
        let after = &text[at + "math.md".len()..];
        let rest = after.trim_start_matches(|c: char| c.is_whitespace() || "`/!".contains(c));
        if rest.starts_with('§') {
            let line = text[..at].matches('\n').count() + 1;
            out.extend(cited_numbers(rest).into_iter().map(|n| (line, n)));
        }
    }
    out
}

/// The bare `§n` references inside the document itself: every `§` that is
/// not the second of `§§` and does not follow another file's name.
fn self_references(doc: &str) -> Vec<(usize, String)> {
    let mut out = Vec::new();
    for (at, _) in doc.match_indices('§') {
        let before = doc[..at].trim_end_matches(|c: char| c.is_whitespace() || c == '`');
        let other_file = before.ends_with(".md") && !before.ends_with("math.md");
        if before.ends_with('§') || other_file {
            continue;
        }
        let line = doc[..at].matches('\n').count() + 1;
        out.extend(cited_numbers(&doc[at..]).into_iter().map(|n| (line, n)));
    }
    out
}

/// The sections the document defines: numbered headings (`## 4. …`,
/// `### 4.1 …`) and paragraph labels (`**4.1.** …`).
fn sections(doc: &str) -> BTreeSet<String> {
    doc.lines()
        .filter_map(|line| {
            let line = line.trim_start();
            let label = if line.starts_with('#') {
                line.trim_start_matches('#').trim_start()
            } else {
                line.strip_prefix("**")?
            };
            number_at(label).map(|(n, _)| n)
        })
        .collect()
}

#[test]
fn math_doc_citation_parser_reads_ranges_and_subsections() {
    let text = "see docs/math.md §1–2 and `docs/math.md` §4.\n\
                // (docs/math.md\n// §8) and docs/math.md §6.2, not `docs/math.md §n` \
                nor encodings/full-map.md §1.1";
    let got: Vec<(usize, String)> = citations(text);
    let want: Vec<(usize, String)> = [(1, "1"), (1, "2"), (1, "4"), (2, "8"), (3, "6.2")]
        .iter()
        .map(|&(l, n)| (l, n.to_string()))
        .collect();
    assert_eq!(got, want);
    let doc = "## 2. Two\n**2.3.** Label\n### 7.1 Sub\nby §§1–2, `x.md` §9, §2.3.";
    assert_eq!(
        sections(doc),
        ["2", "2.3", "7.1"].iter().map(|s| s.to_string()).collect()
    );
    let refs: Vec<String> = self_references(doc).into_iter().map(|(_, n)| n).collect();
    assert_eq!(refs, ["1", "2", "2.3"]);
}

#[test]
fn math_doc_has_every_cited_section() {
    let root = root();
    let doc = std::fs::read_to_string(root.join(DOC)).expect("docs/math.md is in the repository");
    let defined = sections(&doc);
    // The ten sections that the code has cited since the start.
    for k in 1..=10 {
        assert!(
            defined.contains(&k.to_string()),
            "{DOC} has no heading `## {k}. …`; defined: {defined:?}"
        );
    }

    // Built from pieces so that this file does not match itself.
    let stale = ["MATH", ".md"].concat();
    let mut files = Vec::new();
    for entry in SCANNED {
        text_files(&root.join(entry), &mut files);
    }
    let mut problems = Vec::new();
    let mut n_citations = 0;
    for file in &files {
        // Binary files (none today) have nothing to cite.
        let Ok(text) = std::fs::read_to_string(file) else {
            continue;
        };
        let name = file
            .strip_prefix(&root)
            .unwrap_or(file)
            .display()
            .to_string();
        for (line, _) in text.match_indices(&stale) {
            let line = text[..line].matches('\n').count() + 1;
            problems.push(format!(
                "{name}:{line}: points to notes outside the repository ({stale}); \
                 cite {DOC} §n instead"
            ));
        }
        let mut cited = citations(&text);
        if name == DOC {
            cited.extend(self_references(&text));
        }
        n_citations += cited.len();
        for (line, number) in cited {
            if !defined.contains(&number) {
                problems.push(format!(
                    "{name}:{line}: cites {DOC} §{number}, which has no heading or \
                     label `{number}.`; add it to {DOC} or fix the citation"
                ));
            }
        }
    }
    assert!(
        problems.is_empty(),
        "{} problem(s):\n{}",
        problems.len(),
        problems.join("\n")
    );
    // A parser that silently finds nothing would pass the loop above.
    assert!(
        n_citations >= 30,
        "only {n_citations} citations of {DOC} found in {} files; is the scan broken?",
        files.len()
    );
}
