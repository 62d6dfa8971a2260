//! What a report shows, derived from an input and re-checked.
//!
//! Every output format draws from the same [`AnswerFacts`]: the orbit after
//! the independent check ([`verify::check_orbit`], or
//! [`verify::check_topical_orbit`] for topical orbits), its profile and
//! distance matrix computed here from the points, the explicit map (built by
//! [`verify::extend`] and checked by [`verify::check_map`] on a box, or the
//! answer's own map checked by [`verify::check_self_map`] on a point set),
//! the certificate in words, and the commands that re-check the answer. A
//! report never draws an orbit the verifier rejects, and never shows a
//! profile that differs from the one its orbit has.

use serde_json::Value;

use super::input::{Answer, Evidence, EvidenceKind, Origin, QuestionFacts, Spectrum};
use crate::error::{Error, Result};
use crate::grid::{Grid, sup_dist};
use crate::points::PointSet;
use crate::question::{MapClass, Question};
use crate::report::Verdict;
use crate::verify;

/// Largest box whose explicit map a report tabulates (the map table of a
/// LaTeX report is one row per point).
pub const MAP_TABLE_LIMIT: u128 = 729;

/// Which distance a matrix holds.
#[derive(Clone, Copy, Debug, PartialEq, Eq)]
pub enum Metric {
    /// `‖x_i − x_j‖∞`, symmetric.
    Sup,
    /// `t(x_i, x_j) = max_c (x_{i,c} − x_{j,c})`, the one-sided distance of
    /// topical maps.
    Topical,
}

/// Where an explicit map comes from.
#[derive(Clone, Copy, Debug, PartialEq, Eq)]
pub enum MapKind {
    /// [`verify::extend`]: `f_c(z) = clamp(min_j (x_{j+1,c} + ‖z − x_j‖∞))`.
    Extension,
    /// [`verify::extend_topical`] without the clamp: `f_c(z) = min_j (x_{j+1,c} + t(z, x_j))`.
    TopicalExtension,
    /// The answer's own map of a point set.
    Given,
}

/// The explicit map of a feasible answer.
#[derive(Clone, Debug, PartialEq, Eq)]
pub struct MapFacts {
    /// Where it comes from.
    pub kind: MapKind,
    /// `(z, f(z))` for every point of D, in lexicographic order of `z`.
    pub entries: Vec<(Vec<i64>, Vec<i64>)>,
    /// The formula or source of the map, in words.
    pub formula: String,
    /// What the check established, in words.
    pub check: String,
    /// Points checked (every point of D).
    pub points_checked: u64,
    /// Pairs of points checked for nonexpansiveness.
    pub pairs_checked: u64,
}

impl MapFacts {
    /// The map as a JSON orbit file that `check` and `report` read:
    /// `{"grid", "class", "orbit", "map": [[z, f(z)], …]}` (the pairs as in
    /// answers and bundles), with the formula and the check's counts.
    /// `class` is left out for the default class.
    pub fn to_json(&self, grid: &str, class: MapClass, orbit: &[Vec<i64>]) -> serde_json::Value {
        let mut doc = serde_json::json!({
            "grid": grid,
            "orbit": orbit,
            "formula": self.formula,
            "map_check": {
                "points_checked": self.points_checked,
                "pairs_checked": self.pairs_checked,
                "period": orbit.len(),
            },
            "map": self.entries,
        });
        if !class.is_default() {
            doc["class"] = class.name().into();
        }
        doc
    }

    /// The map for people, one `z -> f(z)` line per point, as `check --map` prints it.
    pub fn to_text(&self) -> String {
        let mut s = format!(
            "map          x -> f(x), {}\nmap check    {}\n",
            self.formula, self.check
        );
        for (z, fz) in &self.entries {
            s.push_str(&format!("             {z:?} -> {fz:?}\n"));
        }
        s
    }
}

/// A checked orbit and what is drawn from it.
#[derive(Clone, Debug, PartialEq, Eq)]
pub struct OrbitFacts {
    /// `x_0..x_{p−1}`.
    pub orbit: Vec<Vec<i64>>,
    /// The box the orbit lies in (the bounding box of a point set).
    pub bounds: Vec<(i64, i64)>,
    /// `‖x_0 − x_k‖∞` for `k = 1..=⌊p/2⌋`, from the points.
    pub profile: Vec<i64>,
    /// `t(x_0, x_k)` for `k = 1..p−1` (topical orbits only).
    pub topical_profile: Option<Vec<i64>>,
    /// The distance of the class between every two points.
    pub matrix: Vec<Vec<i64>>,
    /// Which distance `matrix` holds.
    pub metric: Metric,
    /// What the orbit check established, in words.
    pub check: String,
    /// The map, when the domain is small enough to tabulate (or given).
    pub map: Option<MapFacts>,
}

impl OrbitFacts {
    /// The period p.
    pub fn period(&self) -> usize {
        self.orbit.len()
    }

    /// The largest value of the profile (the orbit's diameter), 0 for p = 1.
    pub fn diameter(&self) -> i64 {
        self.profile.iter().copied().max().unwrap_or(0)
    }

    /// The position `i` of `z` on the orbit, if `z` is an orbit point.
    pub fn index_of(&self, z: &[i64]) -> Option<usize> {
        self.orbit.iter().position(|x| x == z)
    }

    /// Offsets `k` (1..=⌊p/2⌋) whose distance is below the diameter.
    pub fn close_offsets(&self) -> Vec<usize> {
        let top = self.diameter();
        (1..=self.profile.len())
            .filter(|&k| self.profile[k - 1] < top)
            .collect()
    }

    /// Offsets `k` (1..=⌊p/2⌋) at the diameter.
    pub fn far_offsets(&self) -> Vec<usize> {
        let top = self.diameter();
        (1..=self.profile.len())
            .filter(|&k| self.profile[k - 1] == top)
            .collect()
    }
}

/// An answer ready to be shown.
#[derive(Clone, Debug, PartialEq)]
pub struct AnswerFacts {
    /// The answer as read.
    pub answer: Answer,
    /// The question in words.
    pub statement: String,
    /// The checked orbit, when the answer has one.
    pub orbit: Option<OrbitFacts>,
    /// The certificate in words.
    pub certificate: String,
    /// Whether an infeasible verdict rests on a claim no checker accepted.
    pub unchecked: bool,
    /// The digests of the certificate's files: `(file, SHA-256)`.
    pub digests: Vec<(String, String)>,
    /// Commands that re-check the answer, each with what it checks.
    pub recheck: Vec<(String, String)>,
}

fn fail(what: &str, reason: impl Into<String>) -> Error {
    Error::Render {
        what: what.into(),
        reason: reason.into(),
    }
}

/// `t(y, z) = max_c (y_c − z_c)`.
fn one_sided(y: &[i64], z: &[i64]) -> i64 {
    y.iter().zip(z).map(|(a, b)| a - b).max().unwrap_or(0)
}

/// Checks the orbit of `a` and derives everything drawn from it; `None`
/// when the answer has no orbit.
///
/// # Errors
/// [`Error::Check`] when the verifier rejects the orbit or the map;
/// [`Error::Render`] when the answer's profile is not its orbit's, or a
/// point-set answer lacks its map.
pub fn orbit_facts(a: &Answer) -> Result<Option<OrbitFacts>> {
    let Some(orbit) = &a.orbit else {
        return Ok(None);
    };
    let q = &a.question;
    let bounds = q.bounds.clone().ok_or_else(|| {
        fail(
            "the orbit's report",
            "the answer names no box for its orbit",
        )
    })?;
    let topical = q.is_topical();
    let check = if topical {
        verify::check_topical_orbit(&bounds, orbit)?
    } else {
        verify::check_orbit(&bounds, orbit)?
    };
    let p = orbit.len();
    let profile: Vec<i64> = (1..=p / 2)
        .map(|k| sup_dist(&orbit[0], &orbit[k]))
        .collect();
    if let Some(stated) = &a.profile
        && stated != &check.profile
    {
        return Err(fail(
            "the orbit's report",
            format!(
                "the answer states the profile {stated:?}, its orbit has {:?}",
                check.profile
            ),
        ));
    }
    let metric = if topical {
        Metric::Topical
    } else {
        Metric::Sup
    };
    let matrix = orbit
        .iter()
        .map(|y| {
            orbit
                .iter()
                .map(|z| {
                    if topical {
                        one_sided(y, z)
                    } else {
                        sup_dist(y, z)
                    }
                })
                .collect()
        })
        .collect();
    let map = explicit_map(a, orbit, &bounds, MAP_TABLE_LIMIT)?;
    Ok(Some(OrbitFacts {
        orbit: orbit.clone(),
        bounds,
        profile,
        topical_profile: topical.then(|| check.profile.clone()),
        matrix,
        metric,
        check: format!("passed: {check}"),
        map,
    }))
}

/// The explicit map of the orbit of `a`: on a point set the answer's own
/// map, checked by [`verify::check_self_map`]; on a box of at most `limit`
/// points the extension of [`verify::extend`] (topical orbits:
/// [`verify::extend_topical`], unclamped), checked by exhaustion; `None` on
/// larger boxes.
///
/// # Errors
/// [`Error::Check`] when a check fails; [`Error::Render`] for a point set
/// without its map.
pub fn explicit_map(
    a: &Answer,
    orbit: &[Vec<i64>],
    bounds: &[(i64, i64)],
    limit: u128,
) -> Result<Option<MapFacts>> {
    if let Some(points) = &a.question.points {
        let map = a.map.as_ref().ok_or_else(|| {
            fail(
                "the orbit's report",
                "an orbit on a point set is evidence only with its map, and the answer has none",
            )
        })?;
        let check = verify::check_self_map(points, map, orbit)?;
        let mut entries = map.clone();
        entries.sort();
        return Ok(Some(MapFacts {
            kind: MapKind::Given,
            entries,
            formula: "the map f: D → D found by the solver (full-map formulation)".into(),
            check: format!("passed: {check}"),
            points_checked: check.points_checked,
            pairs_checked: check.pairs_checked,
        }));
    }
    let size = bounds.iter().fold(1u128, |n, &(lo, hi)| {
        n.saturating_mul((hi - lo + 1) as u128)
    });
    if size > limit {
        return Ok(None);
    }
    if a.question.is_topical() {
        let table = verify::extend_topical(bounds, orbit, false)?;
        let check = verify::check_topical_map(&table, orbit, true)?;
        return Ok(Some(MapFacts {
            kind: MapKind::TopicalExtension,
            entries: table.entries,
            formula: "f_c(z) = min_j (x_{j+1,c} + t(z, x_j)), t(y, z) = max_c (y_c − z_c), \
                      on the points of the box"
                .into(),
            check: format!("passed: {check}"),
            points_checked: check.points_checked,
            pairs_checked: check.pairs_checked,
        }));
    }
    let table = verify::extend(bounds, orbit)?;
    let check = verify::check_map(&table, orbit)?;
    Ok(Some(MapFacts {
        kind: MapKind::Extension,
        entries: table.entries,
        formula: "f_c(z) = clamp_[a_c, b_c](min_j (x_{j+1,c} + ‖z − x_j‖∞))".into(),
        check: format!("passed: {check}"),
        points_checked: check.points_checked,
        pairs_checked: check.pairs_checked,
    }))
}

/// The explicit map of a feasible [`crate::Report`] (`decide --map`), read
/// through the report's input model and checked as in [`explicit_map`], on
/// boxes of up to [`verify::MAP_CHECK_LIMIT`] points; `None` without an
/// orbit or on a larger box.
///
/// # Errors
/// As [`explicit_map`].
pub fn report_map(report: &crate::Report) -> Result<Option<MapFacts>> {
    let value = serde_json::to_value(report).expect("reports serialise");
    let super::input::Input::Answer(a) = super::input::from_value(&value, "the report")? else {
        return Ok(None);
    };
    match (&a.orbit, &a.question.bounds) {
        (Some(orbit), Some(bounds)) => explicit_map(&a, orbit, bounds, verify::MAP_CHECK_LIMIT),
        _ => Ok(None),
    }
}

/// The question in words: the answer's own statement, else the library's
/// statement of the question, else a plain sentence.
pub fn statement(q: &QuestionFacts, given: Option<&str>) -> String {
    if let Some(s) = given {
        return s.to_string();
    }
    let library = match (&q.points, &q.bounds, q.class) {
        (Some(points), _, Some(class)) => PointSet::new(points.clone())
            .and_then(|d| Question::on_points(d, q.period.max(1)))
            .map(|qq| qq.with_class(class).statement())
            .ok(),
        (None, Some(b), Some(class)) => Grid::new(b.clone())
            .and_then(|g| Question::new(g, q.period.max(1)))
            .map(|qq| qq.with_class(class).statement())
            .ok(),
        _ => None,
    };
    library.unwrap_or_else(|| {
        format!(
            "a {} map on {} (n = {}) with a periodic point of minimal period {}",
            q.class_name,
            q.domain_name(),
            q.dim,
            q.period
        )
    })
}

/// The certificate of `a` in words, and whether it is a claim no checker
/// accepted.
pub fn certificate_words(a: &Answer) -> (String, bool) {
    let e: &Evidence = &a.evidence;
    let steps = e.steps.map(|s| format!("{s} steps")).into_iter();
    let bytes = e.bytes.map(|b| format!("{b} bytes")).into_iter();
    let size: Vec<String> = steps.chain(bytes).collect();
    let size = if size.is_empty() {
        String::new()
    } else {
        format!(" ({})", size.join(", "))
    };
    let words = match &e.kind {
        EvidenceKind::Witness if a.question.points.is_some() => {
            "the orbit and the whole map f: D → D, re-checked for this report".to_string()
        }
        EvidenceKind::Witness => "the orbit itself, re-checked for this report".to_string(),
        EvidenceKind::CheckedProof => {
            format!("an LRAT proof{size} accepted by orbitcnf's own checker")
        }
        EvidenceKind::Proof => {
            format!("an LRAT proof{size} of the bundle's formula.cnf, for orbitcnf's own checker")
        }
        EvidenceKind::SolverClaim => {
            let who = e.solver.as_deref().unwrap_or("a solver");
            return (
                format!("UNCHECKED: the unsatisfiability claim of {who}; no proof was checked"),
                true,
            );
        }
        EvidenceKind::Divisor { period } => {
            let p = period.map_or("a divisor".to_string(), |p| format!("p = {p}"));
            let file = e
                .file
                .as_ref()
                .map(|f| format!(": {f}"))
                .unwrap_or_default();
            format!(
                "by §9 (periods are closed under divisors): {p} is infeasible, refuted with \
                 proofs accepted by orbitcnf's own checker{file}"
            )
        }
        EvidenceKind::CheckedCubes { cubes } => {
            let n = cubes.map_or("every".to_string(), |n| format!("all {n}"));
            let cover = e.steps.map(|s| format!(" ({s} steps)")).unwrap_or_default();
            let file = e
                .file
                .as_ref()
                .map(|f| format!("; split folder {f}"))
                .unwrap_or_default();
            format!(
                "{n} cubes of a split refuted, each by an LRAT proof accepted by orbitcnf's own \
                 checker, and a checked proof{cover} that the cubes cover every model{file}"
            )
        }
        EvidenceKind::None => match &a.reason {
            Some(r) => format!("none: {r}"),
            None => "none".to_string(),
        },
        EvidenceKind::Other(kind) => {
            return (
                format!("a certificate of kind {kind:?}, which this report does not know"),
                a.verdict == Verdict::Infeasible,
            );
        }
    };
    (words, false)
}

/// Everything a report shows about one answer.
///
/// # Errors
/// As [`orbit_facts`].
pub fn answer_facts(a: &Answer, origin: &Origin) -> Result<AnswerFacts> {
    let orbit = orbit_facts(a)?;
    let (certificate, unchecked) = certificate_words(a);
    let mut digests: Vec<(String, String)> = a
        .files
        .iter()
        .map(|f| (f.name.clone(), f.sha256.clone()))
        .collect();
    if digests.is_empty()
        && let Some(h) = &a.evidence.sha256
    {
        let name = a.evidence.file.clone().unwrap_or_else(|| "proof".into());
        digests.push((name, h.clone()));
    }
    Ok(AnswerFacts {
        statement: statement(&a.question, a.statement.as_deref()),
        orbit,
        certificate,
        unchecked,
        digests,
        recheck: recheck_answer(a, origin),
        answer: a.clone(),
    })
}

/// `'…'` around words with characters a POSIX shell would read.
fn shell(word: &str) -> String {
    if !word.is_empty()
        && word
            .chars()
            .all(|c| c.is_ascii_alphanumeric() || "-_./=,:+@%".contains(c))
    {
        word.to_string()
    } else {
        format!("'{}'", word.replace('\'', r"'\''"))
    }
}

/// Whether `q` is a box with a side of 3 or more and a period of 2 or more,
/// where the family `pack-nested` can act.
fn wide_box(q: &QuestionFacts) -> bool {
    q.period >= 2
        && q.points.is_none()
        && q.bounds
            .as_deref()
            .is_some_and(|b| b.iter().any(|(lo, hi)| hi - lo >= 3))
}

/// Whether the family `biclique-cover` can act on `q` (a nonexpansive
/// question on a box, [`crate::encode::bicliques::applies_to`]).
fn bicliques_box(q: &QuestionFacts) -> bool {
    if q.points.is_some() || q.class_name != "nonexpansive" {
        return false;
    }
    let Some(bounds) = q.bounds.clone() else {
        return false;
    };
    crate::grid::Grid::new(bounds)
        .ok()
        .and_then(|g| crate::question::Question::new(g, q.period).ok())
        .is_some_and(|question| crate::encode::bicliques::applies_to(&question))
}

/// The flags that state the domain and class of `q` (not the period).
fn domain_flags(q: &QuestionFacts) -> Vec<String> {
    let mut f = Vec::new();
    if q.points.is_some() {
        f.push("--points".into());
        f.push("D.json".into());
    } else if let Some(g) = &q.grid {
        // One range for all coordinates when they agree, as a person writes it.
        let short = match q.bounds.as_deref() {
            Some([first, rest @ ..]) if rest.iter().all(|b| b == first) => {
                format!("{}..{}", first.0, first.1)
            }
            _ => g.clone(),
        };
        f.push("--dim".into());
        f.push(q.dim.to_string());
        f.push(format!("--grid={short}"));
    }
    if q.class_name != "nonexpansive" {
        f.push("--class".into());
        f.push(q.class_name.clone());
    }
    f
}

/// The flags that rebuild the encoding options recorded in `options`.
/// `wide` says that the question's box has a side of 3 or more, where an
/// isometric-cycle encoding without `nested` or `subbox` was asked for
/// without it (a header records each only when it is on); `cover` says the same of
/// `bicliques` ([`bicliques_box`]).
fn option_flags(options: Option<&Value>, on_points: bool, wide: bool, cover: bool) -> Vec<String> {
    let Some(o) = options else { return Vec::new() };
    let mut f = Vec::new();
    if let Some(sym) = o.get("symmetry").and_then(Value::as_object) {
        let on: Vec<&str> = sym
            .iter()
            .filter(|(_, v)| v.as_bool() == Some(true))
            .map(|(k, _)| k.as_str())
            .collect();
        // serde_json's map is ordered by key; the encoder takes any order.
        if on.is_empty() {
            f.push("--symmetry".into());
            f.push("none".into());
        } else if on.len() < sym.len() {
            f.push("--symmetry".into());
            f.push(on.join(","));
        }
    }
    for (field, flag) in [
        ("count", "--no-count"),
        ("packing", "--no-packing"),
        ("classes", "--no-classes"),
    ] {
        if o.get(field).and_then(Value::as_bool) == Some(false) {
            f.push(flag.into());
        }
    }
    let formulation = o.get("formulation").and_then(Value::as_str);
    let cycle = formulation.is_some_and(|s| s.starts_with("isometric-cycle"));
    if wide && cycle && o.get("nested").and_then(Value::as_bool) != Some(true) {
        f.push("--no-nested".into());
    }
    // `sub-box` acts on exactly the boxes `pack-nested` does (a side of 3
    // or more), and its header entry too is written only when it is on.
    if wide && cycle && o.get("subbox").and_then(Value::as_bool) != Some(true) {
        f.push("--no-sub-box".into());
    }
    if wide && cycle && o.get("gaps").and_then(Value::as_bool) != Some(true) {
        f.push("--no-gaps".into());
    }
    if cover && cycle && o.get("bicliques").and_then(Value::as_bool) != Some(true) {
        f.push("--no-bicliques".into());
    }
    // `window-cliques` acts where `biclique-cover` can; a formula written
    // before it existed (no entry) is reproduced without it.
    if cover && cycle && o.get("cliques").and_then(Value::as_bool) != Some(true) {
        f.push("--no-window-cliques".into());
    }
    // So does `clique-orbits`, newer still.
    if cover && cycle && o.get("orbits").and_then(Value::as_bool) != Some(true) {
        f.push("--no-clique-orbits".into());
    }
    let full_map = formulation.is_some_and(|s| s.starts_with("full-map"));
    if full_map && !on_points {
        f.push("--formulation".into());
        f.push("full-map".into());
    }
    f
}

fn command(words: &[String]) -> String {
    let quoted: Vec<String> = words.iter().map(|w| shell(w)).collect();
    quoted.join(" ")
}

/// The orbitcnf commands that re-check `a`, each with what it checks.
pub fn recheck_answer(a: &Answer, origin: &Origin) -> Vec<(String, String)> {
    let path = origin.path().display().to_string();
    let q = &a.question;
    let mut out = Vec::new();
    let with_points = if q.points.is_some() {
        " (D.json holds the points of D listed above, as JSON)"
    } else {
        ""
    };
    match origin {
        Origin::Bundle(_) => out.push((
            command(&["orbitcnf".into(), "check-bundle".into(), path]),
            "re-encodes the question, compares formula.cnf byte for byte, checks every file's \
             SHA-256, and checks the proof with orbitcnf's LRAT checker (or the orbit and map \
             with the verifier)"
                .into(),
        )),
        _ if a.verdict == Verdict::Feasible && a.orbit.is_some() => {
            let mut w = vec!["orbitcnf".into(), "check".into(), path];
            if q.points.is_none() {
                w.push("--map".into());
            }
            out.push((
                command(&w),
                "checks the orbit with the independent verifier and the map f on every pair of points"
                    .into(),
            ));
        }
        // Only a proof that was kept can be checked again; a solver's claim
        // or a proof checked in memory is re-decided below instead.
        _ if a.verdict == Verdict::Infeasible && a.evidence.file.is_some() => {
            let mut enc = vec!["orbitcnf".into(), "encode".into()];
            enc.extend(domain_flags(q));
            enc.extend(["--period".into(), q.period.to_string()]);
            enc.extend(option_flags(
                a.options.as_ref(),
                q.points.is_some(),
                wide_box(q),
                bicliques_box(q),
            ));
            enc.extend(["-o".into(), "formula.cnf".into()]);
            out.push((
                command(&enc),
                format!("rebuilds the CNF that was refuted{with_points}"),
            ));
            let proof = a.evidence.file.clone().unwrap_or_default();
            out.push((
                command(&[
                    "orbitcnf".into(),
                    "verify-proof".into(),
                    "formula.cnf".into(),
                    proof,
                ]),
                "checks the LRAT proof against it with orbitcnf's own checker".into(),
            ));
        }
        _ => {}
    }
    if !matches!(origin, Origin::Bundle(_)) && a.verdict != Verdict::Unknown {
        let mut w = vec!["orbitcnf".into(), "decide".into()];
        w.extend(domain_flags(q));
        w.extend(["--period".into(), q.period.to_string()]);
        w.extend(option_flags(
            a.options.as_ref(),
            q.points.is_some(),
            wide_box(q),
            bicliques_box(q),
        ));
        w.extend(["--bundle".into(), "bundle".into()]);
        out.push((
            command(&w) + " && orbitcnf check-bundle bundle",
            format!("decides the question again and re-checks the certificate bundle it writes{with_points}"),
        ));
    }
    out
}

/// The command that re-checks every stored answer of `s`, when it came from a store.
pub fn recheck_spectrum(s: &Spectrum, origin: &Origin) -> Vec<(String, String)> {
    let Origin::Store(dir) = origin else {
        return Vec::new();
    };
    // Only decided periods: a stored unknown would be solved again.
    let periods: Vec<String> = s
        .rows
        .iter()
        .filter(|r| r.answer.verdict != Verdict::Unknown)
        .map(|r| r.period.to_string())
        .collect();
    if periods.is_empty() {
        return Vec::new();
    }
    let mut w = vec!["orbitcnf".into(), "spectrum".into()];
    w.extend(domain_flags(&s.question));
    w.extend([
        "--store".into(),
        dir.display().to_string(),
        "--periods".into(),
        periods.join(","),
        "--recheck".into(),
    ]);
    // Stored answers record their options as resolved for each period; the
    // sweep resolves the options it is given the same way, so the defaults
    // find the answers of a default sweep.
    vec![(
        command(&w),
        "re-checks every decided stored answer in full: each orbit with the verifier, each proof \
         file against its SHA-256 and with the LRAT checker against a fresh encoding (add the \
         encoding options of the sweep that filled the store, if it was not run with the defaults)"
            .into(),
    )]
}

/// The class of `q` for theorems, nonexpansive when unknown.
pub fn class_of(q: &QuestionFacts) -> MapClass {
    q.class.unwrap_or_default()
}
