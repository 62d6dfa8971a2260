//! LaTeX tables: booktabs style, compilable on their own, ready to paste.
//!
//! The output is a complete `article` document that `pdflatex` compiles
//! with four packages (`amsmath`, `array`, `booktabs`, `longtable`: TeX Live's
//! `latex-base` and `latex-recommended` sets). Its body sits between the
//! lines `% ---- begin fragment ----` and `% ---- end fragment ----`, to be
//! pasted into a paper that loads the same packages.
//!
//! Every string that comes from an input goes through [`text`], which
//! escapes TeX's special characters and writes the non-ASCII characters the
//! reports use (`→`, `‖`, `≤`, `–`, …) as LaTeX commands, so the document
//! needs no Unicode support; any other non-ASCII character is written as its
//! code point. Numbers are written by the report itself, in math mode.

use std::fmt::Write as _;

use super::facts::{AnswerFacts, MapKind, Metric, OrbitFacts};
use super::input::{Loaded, Spectrum};
use crate::report::Verdict;

/// The LaTeX form of a character the reports use, if it needs one.
fn special(c: char) -> Option<&'static str> {
    Some(match c {
        '\\' => r"\textbackslash{}",
        '{' => r"\{",
        '}' => r"\}",
        '$' => r"\$",
        '&' => r"\&",
        '#' => r"\#",
        '%' => r"\%",
        '_' => r"\_",
        '^' => r"\textasciicircum{}",
        '~' => r"\textasciitilde{}",
        '<' => r"\textless{}",
        '>' => r"\textgreater{}",
        '|' => r"\textbar{}",
        '"' => "''",
        '\n' | '\r' | '\t' => " ",
        '→' => r"$\to$",
        '↦' => r"$\mapsto$",
        '‖' => r"$\|$",
        '∞' => r"$\infty$",
        '−' => r"$-$",
        '≤' => r"$\le$",
        '≥' => r"$\ge$",
        '≠' => r"$\ne$",
        '≡' => r"$\equiv$",
        '±' => r"$\pm$",
        '·' => r"$\cdot$",
        '×' => r"$\times$",
        '∈' => r"$\in$",
        '∉' => r"$\notin$",
        '⊂' => r"$\subset$",
        '∧' => r"$\wedge$",
        '∨' => r"$\vee$",
        '¬' => r"$\neg$",
        '′' => r"$'$",
        '⌊' => r"$\lfloor$",
        '⌋' => r"$\rfloor$",
        '⌈' => r"$\lceil$",
        '⌉' => r"$\rceil$",
        '…' => r"\dots{}",
        '–' => "--",
        '—' => "---",
        '‘' => "`",
        '’' => "'",
        '“' => "``",
        '”' => "''",
        'é' => r"\'e",
        'è' => r"\`e",
        'ö' => r#"\"o"#,
        'ü' => r#"\"u"#,
        'ä' => r#"\"a"#,
        'Σ' => r"$\Sigma$",
        'Π' => r"$\Pi$",
        _ => return None,
    })
}

/// `s` escaped character by character: TeX's special characters escaped,
/// known non-ASCII characters as commands, others as `[U+XXXX]`. For paths,
/// commands and hashes.
pub fn literal(s: &str) -> String {
    let mut out = String::with_capacity(s.len() + 8);
    for c in s.chars() {
        push_char(&mut out, c);
    }
    out
}

fn push_char(out: &mut String, c: char) {
    match special(c) {
        // `$\|$` then `$\infty$` becomes `$\|\infty$`: one formula, no `$$`.
        Some(t) if t.starts_with('$') && out.ends_with('$') && !out.ends_with("\\$") => {
            out.pop();
            out.push_str(&t[1..]);
        }
        Some(t) => out.push_str(t),
        None if c.is_ascii() && !c.is_ascii_control() => out.push(c),
        None if c.is_ascii() => out.push(' '),
        None => {
            let _ = write!(out, r"\texttt{{[U+{:04X}]}}", c as u32);
        }
    }
}

/// `s` as LaTeX prose: as [`literal`], except that `^` and `_` followed by
/// a word or a `{…}` group become a superscript or subscript, as the reports
/// write exponents and indices (`{-1,0,1}^3`, `x_{j+1,c}`).
pub fn text(s: &str) -> String {
    let chars: Vec<char> = s.chars().collect();
    let mut out = String::with_capacity(s.len() + 8);
    let mut i = 0;
    while i < chars.len() {
        let c = chars[i];
        let script = match c {
            '^' => Some("textsuperscript"),
            '_' => Some("textsubscript"),
            _ => None,
        };
        let group = script.and_then(|_| {
            let rest = &chars[i + 1..];
            match rest.first() {
                Some('{') => rest
                    .iter()
                    .position(|&d| d == '}')
                    .map(|end| (1, end, end + 1)),
                Some(d) if d.is_ascii_alphanumeric() => {
                    let len = rest
                        .iter()
                        .take_while(|d| d.is_ascii_alphanumeric())
                        .count();
                    Some((0, len, len))
                }
                _ => None,
            }
        });
        match (script, group) {
            (Some(cmd), Some((from, to, used))) => {
                let inner: String = chars[i + 1 + from..i + 1 + to].iter().collect();
                let _ = write!(out, "\\{cmd}{{{}}}", literal(&inner));
                i += 1 + used;
            }
            _ => {
                push_char(&mut out, c);
                i += 1;
            }
        }
    }
    out
}

/// A hash in typewriter type, breakable every 8 characters.
pub fn breakable(s: &str) -> String {
    let chars: Vec<char> = s.chars().collect();
    let parts: Vec<String> = chars
        .chunks(8)
        .map(|c| literal(&c.iter().collect::<String>()))
        .collect();
    format!(r"\texttt{{{}}}", parts.join(r"\allowbreak "))
}

/// A shell command in typewriter type, breakable at spaces and after `/`.
pub fn command(s: &str) -> String {
    format!(r"\texttt{{{}}}", literal(s).replace('/', r"/\allowbreak{}"))
}

/// A point in math mode: `$(-1, 0, 1)$`.
fn point(z: &[i64]) -> String {
    let parts: Vec<String> = z.iter().map(|v| v.to_string()).collect();
    format!("$({})$", parts.join(", "))
}

fn verdict_words(v: Verdict, unchecked: bool) -> &'static str {
    match (v, unchecked) {
        (Verdict::Feasible, _) => "feasible",
        (Verdict::Infeasible, false) => "infeasible",
        (Verdict::Infeasible, true) => "infeasible (unchecked claim)",
        (Verdict::Unknown, _) => "unknown",
    }
}

const PREAMBLE: &str = "\\documentclass[10pt]{article}\n\
\\usepackage{amsmath}\n\
\\usepackage{array}\n\
\\usepackage{booktabs}\n\
\\usepackage{longtable}\n\
\\begin{document}\n";

fn header(out: &mut String, loaded: &Loaded) {
    let _ = writeln!(
        out,
        "% orbitcnf {} report (LaTeX) of {}",
        crate::dimacs::VERSION,
        loaded
            .origin
            .path()
            .display()
            .to_string()
            .replace(['\n', '\r'], " ")
    );
    out.push_str(
        "% Compile with pdflatex. To paste into a paper, load amsmath, array, booktabs\n\
         % and longtable and copy the lines between the fragment markers.\n",
    );
    out.push_str(PREAMBLE);
    out.push_str("% ---- begin fragment ----\n");
}

fn footer(out: &mut String) {
    out.push_str("% ---- end fragment ----\n\\end{document}\n");
}

/// The LaTeX document of one answer.
pub fn answer(loaded: &Loaded, f: &AnswerFacts) -> String {
    let mut out = String::new();
    header(&mut out, loaded);
    let a = &f.answer;
    let digests: Vec<String> = f
        .digests
        .iter()
        .map(|(name, h)| format!("{} {}", command(name), breakable(h)))
        .collect();
    let note = if digests.is_empty() {
        format!("Certificate: {}.", text(&f.certificate))
    } else {
        format!(
            "Certificate: {}. SHA-256: {}.",
            text(&f.certificate),
            digests.join("; ")
        )
    };
    let _ = writeln!(
        out,
        "\\paragraph{{Question.}} Existence of {}.\\footnote{{\\raggedright {note}}}",
        text(&f.statement)
    );
    let _ = writeln!(
        out,
        "\\paragraph{{Answer.}} {} --- {}.",
        verdict_words(a.verdict, f.unchecked),
        text(&f.certificate)
    );
    if let Some(o) = &f.orbit {
        orbit_tables(&mut out, o);
    }
    if !f.recheck.is_empty() {
        out.push_str("\\paragraph{Re-check.}\n{\\raggedright\n\\begin{itemize}\n");
        for (cmd, what) in &f.recheck {
            let _ = writeln!(out, "\\item {}: {}", command(cmd), text(what));
        }
        out.push_str("\\end{itemize}\n\\par}\n");
    }
    footer(&mut out);
    out
}

fn orbit_tables(out: &mut String, o: &OrbitFacts) {
    let p = o.period();
    out.push_str("\n\\begin{longtable}{rl}\n");
    let _ = writeln!(
        out,
        "\\caption{{The orbit $x_0, \\dots, x_{{{}}}$ (period $p = {p}$); {}.}}\\\\",
        p - 1,
        text(&o.check)
    );
    out.push_str("\\toprule\n$i$ & $x_i$ \\\\\n\\midrule\n\\endhead\n");
    for (i, z) in o.orbit.iter().enumerate() {
        let _ = writeln!(out, "${i}$ & {} \\\\", point(z));
    }
    out.push_str("\\bottomrule\n\\end{longtable}\n");
    // The profile: vertical, with close and far offsets.
    let (quantity, rows): (&str, Vec<(usize, i64)>) = match (&o.metric, &o.topical_profile) {
        (Metric::Topical, Some(t)) => (
            "t(x_0, x_k) = \\max_c (x_{0,c} - x_{k,c})",
            t.iter().enumerate().map(|(k, &d)| (k + 1, d)).collect(),
        ),
        _ => (
            "g(k) = \\|x_0 - x_k\\|_\\infty",
            o.profile
                .iter()
                .enumerate()
                .map(|(k, &d)| (k + 1, d))
                .collect(),
        ),
    };
    if rows.is_empty() {
        out.push_str("\nThe orbit is a fixed point: it has no distance profile.\n");
    } else {
        let top = o.diameter();
        let sup = matches!(o.metric, Metric::Sup);
        out.push_str("\n\\begin{longtable}{rr");
        out.push_str(if sup { "l}\n" } else { "}\n" });
        let _ = writeln!(
            out,
            "\\caption{{The distance profile ${quantity}$; it is the same from every $x_i$.}}\\\\"
        );
        out.push_str("\\toprule\n$k$ & ");
        let _ = write!(out, "${}$", if sup { "g(k)" } else { "t(x_0, x_k)" });
        out.push_str(if sup { " & offset \\\\\n" } else { " \\\\\n" });
        out.push_str("\\midrule\n\\endhead\n");
        for (k, d) in rows {
            if sup {
                let kind = if d == top { "far" } else { "close" };
                let _ = writeln!(out, "${k}$ & ${d}$ & {kind} \\\\");
            } else {
                let _ = writeln!(out, "${k}$ & ${d}$ \\\\");
            }
        }
        out.push_str("\\bottomrule\n\\end{longtable}\n");
    }
    if let Some(m) = &o.map {
        out.push_str("\n\\begin{longtable}{lll}\n");
        let formula = match m.kind {
            MapKind::Extension => {
                "$f_c(z) = \\min\\bigl(b_c, \\max\\bigl(a_c, \\min_j (x_{j+1,c} + \\|z - x_j\\|_\\infty)\\bigr)\\bigr)$ \
                 on the box $\\prod_c [a_c, b_c]$"
            }
            MapKind::TopicalExtension => {
                "$f_c(z) = \\min_j (x_{j+1,c} + t(z, x_j))$ with $t(y, z) = \\max_c (y_c - z_c)$"
            }
            MapKind::Given => {
                "the map $f\\colon D \\to D$ found by the solver (full-map formulation)"
            }
        };
        let _ = writeln!(
            out,
            "\\caption{{The map on all {} points of the domain: {formula}; check {}.}}\\\\",
            m.entries.len(),
            text(&m.check)
        );
        out.push_str("\\toprule\n$z$ & $f(z)$ & orbit \\\\\n\\midrule\n\\endhead\n");
        for (z, fz) in &m.entries {
            let mark = o
                .index_of(z)
                .map(|i| format!("$x_{{{i}}}$"))
                .unwrap_or_default();
            let _ = writeln!(out, "{} & {} & {mark} \\\\", point(z), point(fz));
        }
        out.push_str("\\bottomrule\n\\end{longtable}\n");
    }
}

/// The LaTeX document of one or more spectra.
pub fn spectra(loaded: &Loaded, spectra: &[Spectrum], recheck: &[Vec<(String, String)>]) -> String {
    let mut out = String::new();
    header(&mut out, loaded);
    for (s, commands) in spectra.iter().zip(recheck) {
        spectrum(&mut out, s, commands);
    }
    footer(&mut out);
    out
}

fn spectrum(out: &mut String, s: &Spectrum, recheck: &[(String, String)]) {
    let statement = s.statement.clone().unwrap_or_else(|| {
        let mut q = s.question.clone();
        q.period = 1;
        super::facts::statement(&q, None).replace("minimal period 1", "minimal period p")
    });
    let how_to: Vec<String> = recheck.iter().map(|(c, _)| command(c)).collect();
    let note = if how_to.is_empty() {
        "Each proof's SHA-256 is given with its certificate.".to_string()
    } else {
        format!(
            "Each proof's SHA-256 is given with its certificate; re-check all of them with {}.",
            how_to.join(" and ")
        )
    };
    let n = s.question.effective_dim();
    let _ = writeln!(
        out,
        "\\paragraph{{Question.}} Existence, for each period $p$, of {}.\\footnote{{\\raggedright {note}}}",
        text(&statement)
    );
    let bound = if s.question.is_topical() {
        format!(
            "$C(n', \\lfloor n'/2 \\rfloor) = {}$ for $n' = {n}$",
            s.bound
        )
    } else {
        format!(
            "$2^{{n'}} = {}$ and $\\max_k 2^k \\binom{{n'}}{{k}} = {}$ for $n' = {n}$",
            s.construction_limit, s.bound
        )
    };
    let _ = writeln!(out, "The bounds: {bound} (Lemmens and Scheutzow 2005).");
    out.push_str("\n{\\small\\setlength{\\tabcolsep}{4pt}\n\\begin{longtable}{rll>{\\raggedright\\arraybackslash}p{3.7cm}>{\\raggedright\\arraybackslash}p{3.5cm}}\n");
    let _ = writeln!(
        out,
        "\\caption{{Periods on {}.}}\\\\",
        text(&s.question.domain_name())
    );
    out.push_str(
        "\\toprule\n$p$ & verdict & how & certificate & published \\\\\n\\midrule\n\\endhead\n",
    );
    for row in &s.rows {
        let a = &row.answer;
        let (cert, unchecked) = super::facts::certificate_words(a);
        let cert = match &a.evidence.sha256 {
            Some(h) => format!("{}; SHA-256 {}", text(&cert), breakable(h)),
            None => text(&cert),
        };
        let published = format!(
            "{}: {}",
            row.published.status,
            row.published.reasons.join("; ")
        );
        let _ = writeln!(
            out,
            "${}$ & {} & {} & {} & {} \\\\",
            row.period,
            verdict_words(a.verdict, unchecked),
            text(a.how.as_deref().unwrap_or("")),
            cert,
            text(&published)
        );
    }
    out.push_str("\\bottomrule\n\\end{longtable}\n}\n");
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn special_characters_are_escaped() {
        assert_eq!(
            text(r"a_ b^ {x} 100% & $5 #1 ~ \ |"),
            r"a\_ b\textasciicircum{} \{x\} 100\% \& \$5 \#1 \textasciitilde{} \textbackslash{} \textbar{}"
        );
        assert_eq!(
            text("D → D, ‖x‖∞ ≤ 2·3"),
            r"D $\to$ D, $\|$x$\|\infty$ $\le$ 2$\cdot$3"
        );
        assert_eq!(text("Lemmens–Scheutzow"), "Lemmens--Scheutzow");
        assert_eq!(text("ℵ"), r"\texttt{[U+2135]}");
        assert_eq!(text("a\nb\u{7}"), "a b ");
        assert_eq!(literal("a_b^c"), r"a\_b\textasciicircum{}c");
        assert_eq!(literal("\\$→"), r"\textbackslash{}\$$\to$");
    }

    #[test]
    fn exponents_and_indices_become_scripts() {
        assert_eq!(text("{-1,0,1}^3"), r"\{-1,0,1\}\textsuperscript{3}");
        assert_eq!(
            text("x_{j+1,c} and x_i"),
            r"x\textsubscript{j+1,c} and x\textsubscript{i}"
        );
        assert_eq!(text("a ^ b_"), r"a \textasciicircum{} b\_");
        assert_eq!(
            command("orbitcnf check a/b_c"),
            r"\texttt{orbitcnf check a/\allowbreak{}b\_c}"
        );
    }

    #[test]
    fn long_tokens_break_every_eight_characters() {
        assert_eq!(
            breakable("0123456789ab"),
            r"\texttt{01234567\allowbreak 89ab}"
        );
        assert_eq!(breakable("a_b"), r"\texttt{a\_b}");
    }
}
