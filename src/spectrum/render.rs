//! The reports of a sweep: a table for people, one JSON object, CSV, and a
//! Markdown page with the published statements ([`theory::statements`])
//! beside the computed answers.

use std::fmt::Write as _;

use super::{Checked, Spectrum};
use crate::encode::Symmetry;
use crate::progress::{duration_words, threads_words};
use crate::question::MapClass;
use crate::report::Verdict;
use crate::store::{Answer, Backing, How};
use crate::theory::{self, Status};

/// What backs `a`, and when it was checked, in words: `orbit checked; map
/// checked on 27 points`, `LRAT proof checked (1234 steps): proofs/….lrat`,
/// `LRAT proof checked on 2025-01-31, not re-checked in this run (1234
/// steps): proofs/….lrat`, `none: time limit …`.
pub fn certificate_words(a: &Answer, checked: &Checked) -> String {
    let when = match checked {
        Checked::Earlier { finished_at, .. } => {
            let day = finished_at.split('T').next().unwrap_or(finished_at);
            format!(" on {day}, not re-checked in this run")
        }
        _ => String::new(),
    };
    let mut what = evidence_words(a, &when);
    if let Some(st) = &a.strategy {
        let _ = write!(
            what,
            "; hard: no answer in the {} probe, then {} {} cubes on {}",
            duration_words(st.probe_seconds),
            st.cubes,
            st.cube_rule,
            threads_words(st.threads)
        );
    }
    match checked {
        Checked::Rechecked => format!("{what}; re-checked in this run"),
        _ => what,
    }
}

/// What backs `a`, in words, with `when` after the proof's "checked".
fn evidence_words(a: &Answer, when: &str) -> String {
    // An orbit read off a multiple's (§9) says where it came from.
    let from = match (&a.divisor, a.how) {
        (Some(d), How::Divisor) => format!(
            " (by §9: every {} point of the orbit of p = {})",
            ordinal(d.period / a.question.period.max(1)),
            d.period
        ),
        _ => String::new(),
    };
    match a.backing {
        Backing::CheckedOrbit => match (a.map_checked_points, a.question.class) {
            (Some(n), MapClass::Nonexpansive) => {
                format!("orbit checked{from}; map checked on {n} points")
            }
            (Some(n), MapClass::Topical) => format!(
                "topical orbit checked{from}; topical map and its clamp checked on {n} points"
            ),
            (None, MapClass::Nonexpansive) => format!("orbit checked{from}"),
            (None, MapClass::Topical) => format!("topical orbit checked{from}"),
        },
        Backing::Divisor => match &a.divisor {
            Some(d) => match &d.split_folder {
                Some(folder) => format!(
                    "by §9: p = {} is infeasible (every cube's LRAT proof and the coverage \
                     proof checked{when}: {folder})",
                    d.period
                ),
                None => {
                    let file = d
                        .proof_file
                        .as_ref()
                        .map_or(", not kept".to_string(), |f| format!(": {f}"));
                    format!(
                        "by §9: p = {} is infeasible (LRAT proof checked{when}{file})",
                        d.period
                    )
                }
            },
            None => "by §9, from an unnamed period".into(),
        },
        Backing::CheckedProof => match &a.proof {
            Some(p) => match &p.file {
                Some(f) => format!("LRAT proof checked{when} ({} steps): {f}", p.steps),
                None => format!("LRAT proof checked{when} ({} steps), not kept", p.steps),
            },
            None => format!("LRAT proof checked{when}"),
        },
        Backing::CheckedCubes => match &a.cubes {
            Some(c) => format!(
                "{} cubes, each LRAT proof and the coverage proof ({} steps) checked{when}: {}",
                c.cubes, c.coverage_steps, c.folder
            ),
            None => format!("cubes checked{when} (no split folder recorded)"),
        },
        Backing::SolverClaim => "the solver's claim, no proof checked".into(),
        Backing::None => format!("none: {}", a.reason.as_deref().unwrap_or("no answer")),
    }
}

/// `2nd`, `3rd`, `11th`, …: which point of the orbit is kept.
fn ordinal(m: usize) -> String {
    let suffix = match (m % 10, m % 100) {
        (_, 11..=13) => "th",
        (1, _) => "st",
        (2, _) => "nd",
        (3, _) => "rd",
        _ => "th",
    };
    format!("{m}{suffix}")
}

/// An increasing list of periods in short form: `1..8, 10, 12..13`.
pub fn ranges_words(periods: &[usize]) -> String {
    let parts = crate::report::consecutive_runs(periods);
    if parts.is_empty() {
        "none".into()
    } else {
        parts.join(", ")
    }
}

fn csv_field(s: &str) -> String {
    if s.contains([',', '"', '\n']) {
        format!("\"{}\"", s.replace('"', "\"\""))
    } else {
        s.to_string()
    }
}

fn md_cell(s: &str) -> String {
    s.replace('|', "\\|").replace('\n', " ")
}

impl Spectrum {
    /// [`Spectrum::options`] in words: the formulation and the families.
    fn options_words(&self) -> String {
        let o = &self.options;
        let on_off = |b: bool| if b { "on" } else { "off" };
        // `pack-nested` acts only on boxes with a side of 3 or more; it is
        // named only there, so the words for other boxes are as before.
        let wide = crate::grid::Grid::parse(&self.grid, None).is_ok_and(|g| g.diameter() >= 3);
        let nested = if wide && self.points.is_none() {
            format!(", nested {}", on_off(o.nested))
        } else {
            String::new()
        };
        format!(
            "{} (symmetry {}, count {}, packing {}, classes {}{nested})",
            o.formulation,
            if o.symmetry == Symmetry::ALL {
                "all".to_string()
            } else {
                o.symmetry.names()
            },
            on_off(o.count),
            on_off(o.packing),
            on_off(o.classes)
        )
    }

    fn summary_words(&self) -> String {
        let s = &self.summary;
        let mut t = format!(
            "{} feasible ({}), {} infeasible ({}), {} unknown ({})",
            s.feasible,
            ranges_words(&self.periods_with(Verdict::Feasible)),
            s.infeasible,
            ranges_words(&self.periods_with(Verdict::Infeasible)),
            s.unknown,
            ranges_words(&self.periods_with(Verdict::Unknown)),
        );
        let splits = self
            .rows
            .iter()
            .any(|r| r.verdict == Verdict::Unknown && r.how == How::Cubes);
        t.push_str(if s.all_decided {
            ": every period decided"
        } else if splits {
            ": some periods undecided (a rerun goes on with the splits in the store; \
             others are retried with a larger --time-limit)"
        } else {
            ": some periods undecided (a rerun with a larger --time-limit retries them)"
        });
        t
    }

    /// The table for people.
    pub fn to_table(&self) -> String {
        let mut s = String::new();
        let _ = writeln!(
            s,
            "spectrum     {} (n = {}, n' = {}), periods {}",
            self.grid_name,
            self.dim,
            self.effective_dim,
            ranges_words(&self.periods)
        );
        let _ = writeln!(s, "question     for each p: {}", self.question);
        let _ = writeln!(s, "encoding     {}", self.options_words());
        let store = self
            .store
            .as_ref()
            .map_or("none".to_string(), |p| p.display().to_string());
        let _ = writeln!(s, "store        {store}; run {}", self.run_id);
        let _ = writeln!(s);
        let _ = writeln!(
            s,
            "{:>5}  {:<10}  {:<12}  {:<6}  {:>9}  certificate",
            "p", "verdict", "how", "source", "time"
        );
        for r in &self.rows {
            let _ = writeln!(
                s,
                "{:>5}  {:<10}  {:<12}  {:<6}  {:>9}  {}",
                r.period,
                r.verdict.word(),
                r.how.word(),
                if r.reused { "stored" } else { "new" },
                duration_words(r.seconds),
                r.certificate
            );
        }
        let _ = writeln!(s);
        let _ = writeln!(s, "summary      {}", self.summary_words());
        let _ = writeln!(
            s,
            "             {} by construction, {} by the solver{}, {} by §9 (divisors); {} reused from the store; {} elapsed with {} job(s)",
            self.summary.by_construction,
            self.summary.by_solver,
            // Named only when there are some, so that sweeps without
            // merged splits read as they always did.
            match self.summary.by_cubes {
                0 => String::new(),
                n => format!(", {n} in cubes (merged split folders)"),
            },
            self.summary.by_divisors,
            self.summary.reused,
            duration_words(self.elapsed_seconds),
            self.jobs
        );
        if self.summary.proofs_not_rechecked > 0 {
            let _ = writeln!(
                s,
                "             {} reused proof(s) not re-checked in this run (--recheck re-checks them)",
                self.summary.proofs_not_rechecked
            );
        }
        for f in &self.set_aside {
            let _ = writeln!(s, "set aside    {}", f.describe());
        }
        let shorts: Vec<String> = self
            .statements()
            .into_iter()
            .filter_map(|t| t.short)
            .collect();
        let _ = writeln!(s, "published    {}", shorts.join("; "));
        let _ = writeln!(
            s,
            "             every answer agrees with them (a disagreement is an error)"
        );
        s
    }

    /// The whole spectrum as one JSON object (one line): the fields of
    /// [`Spectrum`], each row with its full stored [`Answer`].
    pub fn to_json(&self) -> String {
        serde_json::to_string(self).expect("spectra serialise")
    }

    /// One CSV line per period after a header line.
    pub fn to_csv(&self) -> String {
        let mut s = String::from(
            "period,verdict,how,source,seconds,conflicts,certificate,proof_file,proof_sha256,published,run_id,finished_at\n",
        );
        for r in &self.rows {
            let a = &r.answer;
            let proof = a.proof.as_ref();
            let fields = [
                r.period.to_string(),
                r.verdict.word().into(),
                r.how.word().into(),
                if r.reused { "stored" } else { "new" }.into(),
                format!("{:.3}", r.seconds),
                a.stats.conflicts.map(|c| c.to_string()).unwrap_or_default(),
                r.certificate.clone(),
                proof.and_then(|p| p.file.clone()).unwrap_or_default(),
                proof.and_then(|p| p.sha256.clone()).unwrap_or_default(),
                format!(
                    "{}: {}",
                    r.published.status.word(),
                    r.published.reasons.join("; ")
                ),
                a.run_id.clone(),
                a.finished_at.clone(),
            ];
            let line: Vec<String> = fields.iter().map(|f| csv_field(f)).collect();
            s.push_str(&line.join(","));
            s.push('\n');
        }
        s
    }

    /// The published statements about this sweep's domain and class.
    fn statements(&self) -> Vec<theory::Statement> {
        theory::statements(self.effective_dim, self.class, self.points.is_some())
    }

    /// The domain for the page: ``Box `-1..1,-1..1` `` or, for a point set,
    /// ``Point set D = {…} (|D| = 6) in the box `0..3,0..3` `` (the box then
    /// gives n and n').
    fn domain_words(&self) -> String {
        match &self.points {
            None => format!("Box `{}`", self.grid),
            Some(p) => format!(
                "Point set {} (|D| = {}) in the box `{}`",
                self.grid_name,
                p.len(),
                self.grid
            ),
        }
    }

    /// A Markdown page: the computed answers beside the published bounds,
    /// with the sources.
    pub fn to_markdown(&self) -> String {
        let mut s = String::new();
        let n = self.effective_dim;
        let title = match self.class {
            MapClass::Nonexpansive => "sup-norm nonexpansive maps on",
            MapClass::Topical => "topical maps with an orbit in",
        };
        let _ = writeln!(s, "# Periods of {title} {}\n", self.grid_name);
        let _ = writeln!(
            s,
            "{}: dimension n = {}, effective dimension n' = {n} (coordinates with more than one value). \
             Periods {} computed by orbitcnf {} (run `{}`, finished {}) with the formulation {}.\n\n\
             The question, for each period p: {}.\n",
            self.domain_words(),
            self.dim,
            ranges_words(&self.periods),
            self.tool_version,
            self.run_id,
            self.finished_at,
            self.options_words(),
            self.question
        );
        let _ = writeln!(s, "Summary: {}.\n", self.summary_words());
        if !self.set_aside.is_empty() {
            let _ = writeln!(
                s,
                "Stored files this run could not use were moved aside, and their periods decided again:\n"
            );
            for f in &self.set_aside {
                let _ = writeln!(s, "- {}", md_cell(&f.describe()));
            }
            let _ = writeln!(s);
        }
        let _ = writeln!(
            s,
            "| p | computed | how | time | certificate | published |\n|---:|---|---|---:|---|---|"
        );
        for r in &self.rows {
            let published = match r.published.status {
                Status::Open => "open".into(),
                status => format!("{}: {}", status.word(), r.published.reasons.join("; ")),
            };
            let _ = writeln!(
                s,
                "| {} | {} | {}{} | {} | {} | {} |",
                r.period,
                r.verdict.word(),
                r.how.word(),
                if r.reused { " (stored)" } else { "" },
                duration_words(r.seconds),
                md_cell(&r.certificate),
                md_cell(&published)
            );
        }
        let _ = writeln!(s, "\n## Published bounds\n");
        for t in self.statements() {
            let _ = writeln!(s, "- {}", t.long);
        }
        let open: Vec<usize> = self
            .rows
            .iter()
            .filter(|r| r.published.status == Status::Open)
            .map(|r| r.period)
            .collect();
        let _ = writeln!(
            s,
            "\nPeriods no published theorem decides, as far as we know: {}.",
            ranges_words(&open)
        );
        let _ = writeln!(
            s,
            "\nEvery computed answer agrees with the theorems above (orbitcnf reports any disagreement \
             as an error and writes no page). Feasible answers carry {}; \
             infeasible ones an LRAT proof of the CNF, accepted by orbitcnf's own checker{}.",
            match self.points {
                None => "an orbit checked point by point",
                Some(_) => "an orbit and the whole map D → D, checked point by point",
            },
            if self.summary.by_divisors > 0 {
                " (for an answer by §9, the proof of the refuted divisor it names: periods are \
                 closed under divisors, docs/math.md §9)"
            } else {
                ""
            }
        );
        s
    }
}
