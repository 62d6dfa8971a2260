//! DIMACS files with an orbitcnf header, and solver output in competition form.
//!
//! A file written by [`write_cnf`] looks like this:
//!
//! ```text
//! c orbitcnf-digest sha256:<hex digest of every byte after this line>
//! c orbitcnf version=0.1.0 formulation=isometric-cycle/1
//! c question {"dim":3,"grid":"-1..1,-1..1,-1..1","period":8}
//! c options {"formulation":"isometric-cycle/1"}
//! c statement a sup-norm nonexpansive map on {-1,0,1}^3 ...
//! c family coord-order vars=48 clauses=24
//! c var 1 coord i=0 c=0 ge=0
//! ...
//! p cnf 392 1096
//! -2 1 0
//! ...
//! ```
//!
//! The question, options and the whole variable map are in the header, so the
//! file alone suffices to decode a model later; the digest makes any change to
//! header or clauses detectable. Following the trade's habits there is one
//! clause per line, an exact `p cnf` line, and no comment line starts with
//! `c --` (CaDiCaL would read it as an option).

use std::io::Write;
use std::path::Path;

use crate::artifact::{sha256_hex, write_atomically};
use crate::cnf::{Cnf, FamilyCount, Lit, Var};
use crate::encode::{EncodeOptions, Encoding, Formulation};
use crate::error::{Error, Result};
use crate::question::{Question, QuestionRecord};
use crate::varmap::{Meaning, VarMap};

const DIGEST_PREFIX: &str = "c orbitcnf-digest sha256:";

/// The tool version written into headers.
pub const VERSION: &str = env!("CARGO_PKG_VERSION");

/// Renders `enc` as a DIMACS file with the orbitcnf header.
pub fn render_cnf(enc: &Encoding) -> Vec<u8> {
    let mut body = Vec::with_capacity(enc.cnf.num_lits() * 6 + enc.map.len() * 32);
    let record = serde_json::to_string(&enc.question.record()).expect("question serialises");
    let options = serde_json::to_string(&enc.options).expect("options serialise");
    let _ = writeln!(
        body,
        "c orbitcnf version={VERSION} formulation={}",
        enc.options.formulation
    );
    let _ = writeln!(body, "c question {record}");
    let _ = writeln!(body, "c options {options}");
    let _ = writeln!(body, "c statement {}", enc.question.statement());
    finish_with_header(body, &enc.families, &enc.map, &enc.cnf)
}

/// Completes a DIMACS file whose first header lines (version, question,
/// options, statement) are in `body`: the family sizes, the variable map,
/// the problem line and the clauses, with the SHA-256 line of all that put
/// first. Every CNF file orbitcnf writes (grid encodings and the real-space
/// skeleton) ends its header this way, so one parser reads them all.
pub fn finish_with_header(
    mut body: Vec<u8>,
    families: &[FamilyCount],
    map: &VarMap,
    cnf: &Cnf,
) -> Vec<u8> {
    for f in families {
        let _ = writeln!(
            body,
            "c family {} vars={} clauses={}",
            f.family, f.vars, f.clauses
        );
    }
    for (v, m) in map.iter() {
        let _ = writeln!(body, "c var {} {m}", v.dimacs());
    }
    let _ = writeln!(body, "p cnf {} {}", cnf.num_vars(), cnf.num_clauses());
    let mut num = itoa_buf();
    for clause in cnf.clauses() {
        for l in clause {
            body.extend_from_slice(num.format(l.dimacs()).as_bytes());
            body.push(b' ');
        }
        body.extend_from_slice(b"0\n");
    }
    let digest = sha256_hex(&body);
    let mut out = Vec::with_capacity(body.len() + 80);
    let _ = writeln!(out, "{DIGEST_PREFIX}{digest}");
    out.extend_from_slice(&body);
    out
}

struct IntBuf(String);
impl IntBuf {
    fn format(&mut self, v: i32) -> &str {
        self.0.clear();
        use std::fmt::Write as _;
        let _ = write!(self.0, "{v}");
        &self.0
    }
}
fn itoa_buf() -> IntBuf {
    IntBuf(String::with_capacity(12))
}

/// Writes `enc` to `path` (atomically: a temporary file renamed into place).
///
/// # Errors
/// [`Error::Io`] naming the path.
pub fn write_cnf(enc: &Encoding, path: &Path) -> Result<()> {
    write_atomically(path, &render_cnf(enc))
}

/// A CNF file read back, header and all.
#[derive(Clone, Debug)]
pub struct CnfFile {
    /// The question recorded in the header.
    pub question: Question,
    /// The encoding options recorded in the header.
    pub options: EncodeOptions,
    /// The orbitcnf version that wrote the file.
    pub version: String,
    /// The variable map recorded in the header.
    pub map: VarMap,
    /// The clauses.
    pub cnf: Cnf,
    /// The 1-based line on which each clause starts.
    pub clause_lines: Vec<usize>,
}

/// Parses plain DIMACS clauses (after any header), recording the line of each clause.
///
/// Comment lines (`c …`) are skipped; the `p cnf V C` line is required and
/// the clause count and variable bound are enforced.
///
/// # Errors
/// [`Error::Parse`] naming the line.
pub fn parse_dimacs(text: &str, path: &str) -> Result<(Cnf, Vec<usize>)> {
    let mut header: Option<(u32, usize)> = None;
    let mut cnf = Cnf::new();
    let mut lines_of = Vec::new();
    let mut current: Vec<Lit> = Vec::new();
    let mut current_line = 0;
    for (n, line) in text.lines().enumerate() {
        let ln = n + 1;
        let t = line.trim();
        if t.is_empty() || t.starts_with('c') {
            continue;
        }
        if let Some(rest) = t.strip_prefix('p') {
            if header.is_some() {
                return Err(Error::parse(path, ln, "a second 'p cnf' line"));
            }
            let f: Vec<&str> = rest.split_whitespace().collect();
            let parsed = match f.as_slice() {
                ["cnf", v, c] => v.parse::<u32>().ok().zip(c.parse::<usize>().ok()),
                _ => None,
            };
            let (v, c) = parsed.ok_or_else(|| {
                Error::parse(
                    path,
                    ln,
                    format!("malformed problem line {t:?}; expected 'p cnf VARS CLAUSES'"),
                )
            })?;
            if v > i32::MAX as u32 {
                return Err(Error::parse(path, ln, "too many variables"));
            }
            header = Some((v, c));
            cnf.reserve_vars(v);
            continue;
        }
        let (vars, _) =
            header.ok_or_else(|| Error::parse(path, ln, "clause before the 'p cnf' line"))?;
        for tok in t.split_whitespace() {
            let x: i64 = tok
                .parse()
                .map_err(|_| Error::parse(path, ln, format!("{tok:?} is not a literal")))?;
            if x == 0 {
                cnf.add_clause(&current);
                lines_of.push(if current.is_empty() { ln } else { current_line });
                current.clear();
                continue;
            }
            if x.unsigned_abs() > vars as u64 {
                return Err(Error::parse(
                    path,
                    ln,
                    format!("literal {x} exceeds the {vars} variables declared"),
                ));
            }
            if current.is_empty() {
                current_line = ln;
            }
            current.push(Lit::from_dimacs(x as i32));
        }
    }
    let (_, clauses) = header.ok_or_else(|| Error::parse(path, 0, "no 'p cnf' line"))?;
    if !current.is_empty() {
        return Err(Error::parse(
            path,
            current_line,
            "the last clause is not closed by 0",
        ));
    }
    if cnf.num_clauses() != clauses {
        return Err(Error::parse(
            path,
            0,
            format!(
                "the 'p cnf' line declares {clauses} clauses, the file has {}",
                cnf.num_clauses()
            ),
        ));
    }
    Ok((cnf, lines_of))
}

/// Parses a file written by [`write_cnf`], checking its digest.
///
/// # Errors
/// [`Error::Parse`] when the header is missing, altered (digest mismatch) or
/// malformed, or the clauses are malformed; each names the line.
pub fn parse_cnf_file(text: &str, path: &str) -> Result<CnfFile> {
    let (first, body) = text.split_once('\n').unwrap_or((text, ""));
    let want = first
        .trim_end_matches('\r')
        .strip_prefix(DIGEST_PREFIX)
        .ok_or_else(|| {
            Error::parse(
                path,
                1,
                "no orbitcnf header: the first line should be 'c orbitcnf-digest sha256:…' \
             (write the file with 'orbitcnf encode')",
            )
        })?;
    let got = sha256_hex(body.as_bytes());
    if want.trim() != got {
        return Err(Error::parse(
            path,
            1,
            "the header or the clauses were altered after encoding (sha256 digest mismatch)",
        ));
    }
    let mut version = None;
    let mut formulation: Option<(Formulation, usize)> = None;
    let mut question = None;
    let mut options: Option<(EncodeOptions, usize)> = None;
    let mut pairs: Vec<(u32, Meaning)> = Vec::new();
    for (n, line) in text.lines().enumerate().skip(1) {
        let ln = n + 1;
        if line.starts_with('p') {
            break;
        }
        let bad = |r: String| Error::parse(path, ln, r);
        if let Some(rest) = line.strip_prefix("c orbitcnf ") {
            version = rest
                .split_whitespace()
                .find_map(|w| w.strip_prefix("version="))
                .map(str::to_string);
            if let Some(name) = rest
                .split_whitespace()
                .find_map(|w| w.strip_prefix("formulation="))
            {
                let f = name.parse().map_err(|source| Error::UnknownFormulation {
                    path: path.to_string(),
                    line: ln,
                    source,
                })?;
                formulation = Some((f, ln));
            }
        } else if let Some(rest) = line.strip_prefix("c question ") {
            let r: QuestionRecord =
                serde_json::from_str(rest).map_err(|e| bad(format!("question record: {e}")))?;
            question = Some(Question::from_record(&r).map_err(|e| bad(e.to_string()))?);
        } else if let Some(rest) = line.strip_prefix("c options ") {
            options = Some((
                serde_json::from_str::<EncodeOptions>(rest)
                    .map_err(|e| bad(format!("encoding options: {e}")))?,
                ln,
            ));
        } else if let Some(rest) = line.strip_prefix("c var ") {
            let (num, meaning) = rest
                .split_once(' ')
                .ok_or_else(|| bad("expected 'c var N MEANING'".into()))?;
            let num: u32 = num
                .parse()
                .map_err(|_| bad(format!("{num:?} is not a variable number")))?;
            let meaning: Meaning = meaning.parse().map_err(bad)?;
            pairs.push((num, meaning));
        }
    }
    let missing = |what: &str| Error::parse(path, 0, format!("the header has no {what} line"));
    let question = question.ok_or_else(|| missing("'c question'"))?;
    let (options, options_line) = options.ok_or_else(|| missing("'c options'"))?;
    // Both lines have always been written; they must name the same formulation.
    if let Some((f, ln)) = formulation.filter(|(f, _)| *f != options.formulation) {
        return Err(Error::parse(
            path,
            options_line,
            format!(
                "the options say formulation {}, line {ln} says {f}",
                options.formulation
            ),
        ));
    }
    let version = version.ok_or_else(|| missing("'c orbitcnf version=…'"))?;
    let map = VarMap::from_pairs(pairs)
        .map_err(|r| Error::parse(path, 0, format!("variable map: {r}")))?;
    let (cnf, clause_lines) = parse_dimacs(text, path)?;
    if map.len() != cnf.num_vars() as usize {
        return Err(Error::parse(
            path,
            0,
            format!(
                "the variable map lists {} variables, the 'p cnf' line {}",
                map.len(),
                cnf.num_vars()
            ),
        ));
    }
    Ok(CnfFile {
        question,
        options,
        version,
        map,
        cnf,
        clause_lines,
    })
}

/// Reads and parses a CNF file written by [`write_cnf`].
///
/// # Errors
/// As [`parse_cnf_file`], and [`Error::Io`] when the file cannot be read.
pub fn read_cnf_file(path: &Path) -> Result<CnfFile> {
    let text = std::fs::read_to_string(path).map_err(|e| Error::io(path, e))?;
    parse_cnf_file(&text, &path.display().to_string())
}

/// The status a solver reported.
#[derive(Clone, Copy, Debug, PartialEq, Eq)]
pub enum Status {
    /// `s SATISFIABLE`.
    Sat,
    /// `s UNSATISFIABLE`.
    Unsat,
    /// `s UNKNOWN`, or no `s` line at all (some solvers print only `c UNKNOWN` on a limit).
    Unknown,
}

/// A solver's answer as printed in competition form.
#[derive(Clone, Debug, PartialEq, Eq)]
pub struct SolverAnswer {
    /// The status line.
    pub status: Status,
    /// The model's literals from the `v` lines, when satisfiable.
    pub model: Option<Vec<Lit>>,
    /// Why the status is unknown, when it is.
    pub note: Option<String>,
}

/// Parses solver output: `c` comments, one `s` line, `v` lines ending in 0.
///
/// # Errors
/// [`Error::Parse`] naming the line for anything else: a second `s` line, a
/// malformed `v` line, a model without `s SATISFIABLE`, a satisfiable answer
/// without a complete model.
pub fn parse_solver_output(text: &str, path: &str) -> Result<SolverAnswer> {
    let mut status: Option<(Status, usize)> = None;
    let mut model: Vec<Lit> = Vec::new();
    let mut closed = false;
    let mut first_v = None;
    let mut saw_unknown_comment = false;
    for (n, line) in text.lines().enumerate() {
        let ln = n + 1;
        let t = line.trim();
        if t.is_empty() {
            continue;
        }
        if t == "c" || t.starts_with("c ") || t.starts_with("c\t") {
            if t.split_whitespace().nth(1) == Some("UNKNOWN") {
                saw_unknown_comment = true;
            }
            continue;
        }
        if let Some(rest) = t.strip_prefix("s ") {
            if let Some((_, l)) = status {
                return Err(Error::parse(
                    path,
                    ln,
                    format!("a second status line (the first is on line {l})"),
                ));
            }
            let s = match rest.trim() {
                "SATISFIABLE" => Status::Sat,
                "UNSATISFIABLE" => Status::Unsat,
                "UNKNOWN" | "INDETERMINATE" => Status::Unknown,
                other => return Err(Error::parse(path, ln, format!("unknown status {other:?}"))),
            };
            status = Some((s, ln));
            continue;
        }
        if t == "v" || t.starts_with("v ") {
            first_v.get_or_insert(ln);
            for tok in t[1..].split_whitespace() {
                if closed {
                    return Err(Error::parse(
                        path,
                        ln,
                        format!("{tok:?} after the model's closing 0"),
                    ));
                }
                let x: i64 = tok
                    .parse()
                    .map_err(|_| Error::parse(path, ln, format!("{tok:?} is not a literal")))?;
                if x == 0 {
                    closed = true;
                } else if x.unsigned_abs() > i32::MAX as u64 {
                    return Err(Error::parse(path, ln, format!("literal {x} out of range")));
                } else {
                    model.push(Lit::from_dimacs(x as i32));
                }
            }
            continue;
        }
        let shown: String = t.chars().take(40).collect();
        return Err(Error::parse(
            path,
            ln,
            format!("unexpected line {shown:?}; expected 'c', 's' or 'v' lines"),
        ));
    }
    match status {
        Some((Status::Sat, ln)) => {
            if first_v.is_none() {
                return Err(Error::parse(
                    path,
                    ln,
                    "s SATISFIABLE but no 'v' lines with a model",
                ));
            }
            if !closed {
                return Err(Error::parse(
                    path,
                    0,
                    "the model's 'v' lines are not closed by 0",
                ));
            }
            Ok(SolverAnswer {
                status: Status::Sat,
                model: Some(model),
                note: None,
            })
        }
        Some((s, _)) => {
            if let Some(l) = first_v {
                return Err(Error::parse(
                    path,
                    l,
                    "'v' lines but the status is not SATISFIABLE",
                ));
            }
            let note = (s == Status::Unknown).then(|| "the solver answered s UNKNOWN".to_string());
            Ok(SolverAnswer {
                status: s,
                model: None,
                note,
            })
        }
        None => {
            if let Some(l) = first_v {
                return Err(Error::parse(
                    path,
                    l,
                    "'v' lines without an 's SATISFIABLE' line",
                ));
            }
            let note = if saw_unknown_comment {
                "the solver printed c UNKNOWN and no status line (a limit was hit)"
            } else {
                "the solver printed no status line"
            };
            Ok(SolverAnswer {
                status: Status::Unknown,
                model: None,
                note: Some(note.into()),
            })
        }
    }
}

/// Turns a solver's literals into a total assignment of `num_vars` variables.
/// Variables the solver left out are set false; the caller then checks every
/// clause, so any total assignment that satisfies the CNF is as good as another.
///
/// # Errors
/// [`Error::Parse`] (line 0 of `path`) for a literal beyond `num_vars` or a
/// variable given both signs.
pub fn model_to_assignment(lits: &[Lit], num_vars: u32, path: &str) -> Result<Vec<bool>> {
    let mut model = vec![None; num_vars as usize];
    for &l in lits {
        let v: Var = l.var();
        let slot = model.get_mut(v.index()).ok_or_else(|| {
            Error::parse(
                path,
                0,
                format!(
                    "the model mentions variable {}, the CNF has {num_vars}",
                    v.dimacs()
                ),
            )
        })?;
        match *slot {
            Some(b) if b != l.is_positive() => {
                return Err(Error::parse(
                    path,
                    0,
                    format!("the model gives variable {} both signs", v.dimacs()),
                ));
            }
            _ => *slot = Some(l.is_positive()),
        }
    }
    Ok(model.into_iter().map(|b| b.unwrap_or(false)).collect())
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn solver_output_forms() {
        let a = parse_solver_output("c hi\ns SATISFIABLE\nv 1 -2\nv 3 0\n", "o").unwrap();
        assert_eq!(a.status, Status::Sat);
        assert_eq!(a.model.unwrap().len(), 3);
        let u = parse_solver_output("s UNSATISFIABLE\n", "o").unwrap();
        assert_eq!(u.status, Status::Unsat);
        let k = parse_solver_output("c UNKNOWN\n", "o").unwrap();
        assert_eq!(k.status, Status::Unknown);
        assert!(k.note.unwrap().contains("c UNKNOWN"));
        let e = |t: &str| parse_solver_output(t, "o").unwrap_err().to_string();
        assert!(e("s SATISFIABLE\nv 1 2\n").contains("not closed by 0"));
        assert!(e("s SATISFIABLE\n").contains("no 'v' lines"));
        assert!(e("s SATISFIABLE\ns UNSATISFIABLE\n").contains("o:2: a second status line"));
        assert!(e("v 1 0\n").contains("without an 's SATISFIABLE'"));
        assert!(e("s SATISFIABLE\nv 1 x 0\n").contains("o:2: \"x\" is not a literal"));
        assert!(e("hello\n").contains("o:1: unexpected line"));
        assert!(e("s SATISFIABLE\nv 1 0 2\n").contains("after the model's closing 0"));
    }

    #[test]
    fn plain_dimacs_is_checked() {
        let (cnf, lines) = parse_dimacs("c x\np cnf 3 2\n1 -2 0\n3\n0\n", "f").unwrap();
        assert_eq!(cnf.num_clauses(), 2);
        assert_eq!(lines, vec![3, 4]);
        let e = |t: &str| parse_dimacs(t, "f").unwrap_err().to_string();
        assert!(e("p cnf 2 1\n1 3 0\n").contains("f:2: literal 3 exceeds"));
        assert!(e("p cnf 2 2\n1 0\n").contains("declares 2 clauses"));
        assert!(e("1 0\n").contains("before the 'p cnf'"));
        assert!(e("p cnf 2 1\n1 2\n").contains("not closed"));
        assert!(e("p dnf 2 1\n").contains("malformed problem line"));
    }

    /// The body of a CNF file as versions before the profile exclusions
    /// wrote it (options without `classes`), with `formulation` in both places.
    fn old_body(header_name: &str, options_name: &str) -> String {
        format!(
            "c orbitcnf version=0.1.0 formulation={header_name}\n\
             c question {{\"dim\":1,\"grid\":\"0..1\",\"period\":2}}\n\
             c options {{\"formulation\":\"{options_name}\",\"symmetry\":{{\"translate\":false,\
             \"multiplier\":false,\"rotate\":false,\"isometry\":false,\"stabilizer\":false,\
             \"reverse\":false}},\"count\":false,\"packing\":false}}\n\
             c family coord-order vars=2 clauses=0\n\
             c var 1 coord i=0 c=0 ge=1\nc var 2 coord i=1 c=0 ge=1\nc var 3 profile k=1 ge=1\n\
             c var 4 diff i=0 j=1 c=0 ge=1\nc var 5 diff i=1 j=0 c=0 ge=1\n\
             p cnf 5 6\n3 0\n-4 1 0\n-4 -2 0\n-5 2 0\n-5 -1 0\n-3 4 5 0\n"
        )
    }

    fn with_digest(body: &str) -> String {
        format!("{DIGEST_PREFIX}{}\n{body}", sha256_hex(body.as_bytes()))
    }

    #[test]
    fn old_headers_still_read_and_unknown_formulations_are_refused() {
        let name = "isometric-cycle/1";
        let f = parse_cnf_file(&with_digest(&old_body(name, name)), "old.cnf").unwrap();
        assert_eq!(f.options.formulation, Formulation::IsometricCycle);
        assert!(!f.options.classes);
        assert_eq!((f.map.len(), f.cnf.num_clauses()), (5, 6));

        let e = parse_cnf_file(&with_digest(&old_body("spiral/3", name)), "new.cnf").unwrap_err();
        let Error::UnknownFormulation { path, line, source } = &e else {
            panic!("{e:?}");
        };
        assert_eq!(
            (path.as_str(), *line, source.name.as_str()),
            ("new.cnf", 2, "spiral/3")
        );
        assert!(
            e.to_string()
                .starts_with("new.cnf:2: unknown formulation \"spiral/3\""),
            "{e}"
        );

        let e = parse_cnf_file(&with_digest(&old_body(name, "full-map/1")), "mixed.cnf")
            .unwrap_err()
            .to_string();
        assert!(
            e.contains(
                "mixed.cnf:4: the options say formulation full-map/1, line 2 says isometric-cycle/1"
            ),
            "{e}"
        );
    }

    #[test]
    fn assignments_from_literals() {
        let lits = [Lit::from_dimacs(2), Lit::from_dimacs(-1)];
        assert_eq!(
            model_to_assignment(&lits, 3, "o").unwrap(),
            vec![false, true, false]
        );
        assert!(model_to_assignment(&[Lit::from_dimacs(4)], 3, "o").is_err());
        let both = [Lit::from_dimacs(1), Lit::from_dimacs(-1)];
        assert!(
            model_to_assignment(&both, 3, "o")
                .unwrap_err()
                .to_string()
                .contains("both signs")
        );
    }
}
