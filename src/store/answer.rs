//! One stored answer ([`Answer`]), its key ([`key`]), and the digests and
//! timestamps that go with it.

use std::time::{SystemTime, UNIX_EPOCH};

use serde::{Deserialize, Serialize};

use crate::artifact::sha256_hex;
use crate::dimacs::VERSION;
use crate::encode::{EncodeOptions, Formulation};
use crate::error::{Error, Result};
use crate::grid::Point;
use crate::question::{Question, QuestionRecord};
use crate::report::Verdict;

/// The `schema` of every answer file written by this version.
pub const SCHEMA: &str = "orbitcnf-answer/1";
/// Domain separator hashed in front of every key's input.
const KEY_DOMAIN: &[u8] = b"orbitcnf-store-key/1\n";

/// How an answer was obtained.
#[derive(Clone, Copy, Debug, PartialEq, Eq, Serialize, Deserialize)]
#[serde(rename_all = "kebab-case")]
pub enum How {
    /// Built without solving: `p ≤ 2^n'` points of a unit cube, pairwise at
    /// distance 1, or for topical questions `p ≤ C(n', ⌊n'/2⌋)` points of its
    /// middle layer (see [`crate::theory::construct`]).
    Construction,
    /// Decided by [`crate::decide::decide`] with the certified solver.
    Solver,
    /// Read off the answer to another period by the divisor rule (docs/math.md
    /// §9): a multiple of a refuted period is infeasible, a divisor of a
    /// feasible one is feasible with the sub-orbit as its witness. The answer
    /// names that period in [`Answer::divisor`].
    Divisor,
    /// Decided in cubes by `split`, `run-cube` and `merge`, and recorded by
    /// `merge` (the split folder is named in [`Answer::cubes`]).
    Cubes,
}

impl How {
    /// The word used in reports: `construction`, `solver`, `§9` or `cubes`.
    pub fn word(self) -> &'static str {
        match self {
            How::Construction => "construction",
            How::Solver => "solver",
            How::Divisor => "§9",
            How::Cubes => "cubes",
        }
    }
}

/// What backs a stored verdict.
#[derive(Clone, Copy, Debug, PartialEq, Eq, Serialize, Deserialize)]
#[serde(rename_all = "kebab-case")]
pub enum Backing {
    /// The orbit, checked by [`crate::verify::check_orbit`] (feasible answers).
    CheckedOrbit,
    /// An LRAT proof accepted by orbitcnf's own checker (infeasible answers).
    CheckedProof,
    /// A solver's word with no proof checked (never written by `spectrum`,
    /// which always certifies; accepted when read).
    SolverClaim,
    /// The checked proof of the answer to a divisor of the period (named in
    /// [`Answer::divisor`]), which refutes this period too by docs/math.md
    /// §9. It is as strong as that answer: every check of this answer checks
    /// that one ([`crate::store::Store::quick_check`],
    /// [`crate::store::Store::recheck`]).
    Divisor,
    /// Every cube of a split folder (named in [`Answer::cubes`]) refuted with
    /// an LRAT proof, and the proof that the cubes cover every model, all
    /// re-checked by `merge` before it recorded the answer. Every check of
    /// the answer checks that the folder's manifest is still the one
    /// recorded; the full check ([`crate::store::Store::recheck`]) merges
    /// the folder again.
    CheckedCubes,
    /// Nothing (unknown answers).
    None,
}

/// The split folder behind an answer decided in cubes ([`How::Cubes`]).
#[derive(Clone, Debug, PartialEq, Serialize, Deserialize)]
pub struct CubesRecord {
    /// The split folder: as `merge` was given it, made absolute when it
    /// could be; or, for a split that a sweep ran inside the store,
    /// relative to the store (`splits/<key>`), so that the store can move.
    pub folder: String,
    /// Hex SHA-256 of the folder's `manifest.json` when the answer was
    /// recorded: the manifest holds the digests of the formula, of every
    /// cube and of the coverage proof, so it pins the whole split.
    pub manifest_sha256: String,
    /// Cubes in the split.
    pub cubes: u64,
    /// Steps of the coverage proof.
    pub coverage_steps: u64,
    /// Solving seconds summed over the cubes' results.
    pub solve_seconds: f64,
}

/// The other period an answer by the divisor rule ([`How::Divisor`]) was
/// read off.
#[derive(Clone, Debug, PartialEq, Eq, Serialize, Deserialize)]
pub struct DivisorRecord {
    /// That period: for an infeasible answer a refuted divisor of this
    /// period; for a feasible one a feasible multiple, whose orbit gave this
    /// answer's orbit (every `m`-th point, `m` the quotient).
    pub period: usize,
    /// The store key of that period's answer.
    pub key: String,
    /// For an infeasible answer: the SHA-256 of that answer's proof file,
    /// when it was kept, or of its split folder's manifest, for an answer
    /// decided in cubes ([`Answer::evidence_sha256`]), so that a replaced
    /// proof or split is noticed.
    #[serde(default, skip_serializing_if = "Option::is_none")]
    pub proof_sha256: Option<String>,
    /// For an infeasible answer: that answer's proof file, relative to the
    /// store, when it was kept (for reports; the check goes by `key`).
    #[serde(default, skip_serializing_if = "Option::is_none")]
    pub proof_file: Option<String>,
    /// For an infeasible answer decided in cubes: its split folder (for
    /// reports; the check goes by `key`).
    #[serde(default, skip_serializing_if = "Option::is_none")]
    pub split_folder: Option<String>,
}

/// The proof of an infeasible answer.
#[derive(Clone, Debug, PartialEq, Serialize, Deserialize)]
pub struct ProofRecord {
    /// The proof file, relative to the store's folder (`proofs/<key>.<run>.lrat`);
    /// `None` when the proof was checked in memory and not kept (no store).
    pub file: Option<String>,
    /// Hex SHA-256 of the proof file's bytes, when it was kept.
    pub sha256: Option<String>,
    /// Size of the text LRAT proof in bytes.
    pub bytes: u64,
    /// Steps the checker verified.
    pub steps: u64,
    /// Seconds the checker took.
    pub check_seconds: f64,
}

/// The limits an answer was computed under; an unknown answer is retried by
/// a later run only with larger limits (see [`RunLimits::exceeds`]).
#[derive(Clone, Copy, Debug, PartialEq, Serialize, Deserialize)]
pub struct RunLimits {
    /// The per-period time limit in seconds, `None` for none.
    pub time_seconds: Option<f64>,
    /// The clause limit of the encoder.
    pub max_clauses: u64,
}

impl RunLimits {
    /// Whether `self` allows strictly more than `old` in some respect: a
    /// longer (or no) time limit, or a larger clause limit.
    pub fn exceeds(&self, old: &RunLimits) -> bool {
        let longer = match (self.time_seconds, old.time_seconds) {
            (None, Some(_)) => true,
            (Some(new), Some(old)) => new > old,
            _ => false,
        };
        longer || self.max_clauses > old.max_clauses
    }
}

/// Sizes and times of one answer.
#[derive(Clone, Debug, Default, PartialEq, Serialize, Deserialize)]
pub struct AnswerStats {
    /// Wall-clock seconds for the whole answer (encode, solve, check).
    pub seconds: f64,
    /// Seconds spent encoding (0 for a construction).
    pub encode_seconds: f64,
    /// Seconds spent solving (0 for a construction).
    pub solve_seconds: f64,
    /// Conflicts of the solver, when it ran.
    pub conflicts: Option<u64>,
    /// Variables of the CNF (0 for a construction).
    pub variables: u64,
    /// Clauses of the CNF (0 for a construction).
    pub clauses: u64,
}

/// One answer, as stored in `answers/<key>.json`.
#[derive(Clone, Debug, PartialEq, Serialize, Deserialize)]
pub struct Answer {
    /// Always [`SCHEMA`].
    pub schema: String,
    /// [`key`] of `question` and `options`; also the file's name.
    pub key: String,
    /// The question.
    pub question: QuestionRecord,
    /// The encoding options as resolved for the question.
    pub options: EncodeOptions,
    /// The formulation (the one in `options`), by its stable name.
    pub formulation: Formulation,
    /// `feasible`, `infeasible` or `unknown`.
    #[serde(with = "verdict_word")]
    pub verdict: Verdict,
    /// How the answer was obtained.
    pub how: How,
    /// What backs the verdict.
    pub backing: Backing,
    /// The orbit `x_0..x_{p−1}` of a feasible answer.
    #[serde(default, skip_serializing_if = "Option::is_none")]
    pub orbit: Option<Vec<Point>>,
    /// `‖x_0 − x_k‖∞` for `k = 1..=⌊p/2⌋`, for a feasible answer.
    #[serde(default, skip_serializing_if = "Option::is_none")]
    pub profile: Option<Vec<i64>>,
    /// The whole map `(z, f(z))` on D of a feasible full-map answer, so that
    /// the stored evidence is self-contained (the orbit alone proves nothing
    /// on a point set).
    #[serde(default, skip_serializing_if = "Option::is_none")]
    pub map: Option<Vec<(Point, Point)>>,
    /// Points of the box on which the extension of the orbit's shift to a
    /// nonexpansive map was built and checked by exhaustion, when it was.
    #[serde(default, skip_serializing_if = "Option::is_none")]
    pub map_checked_points: Option<u64>,
    /// The proof of an infeasible answer.
    #[serde(default, skip_serializing_if = "Option::is_none")]
    pub proof: Option<ProofRecord>,
    /// The other period this answer was read off, for an answer by the
    /// divisor rule ([`How::Divisor`]).
    #[serde(default, skip_serializing_if = "Option::is_none")]
    pub divisor: Option<DivisorRecord>,
    /// The split folder of an answer decided in cubes ([`How::Cubes`]).
    #[serde(default, skip_serializing_if = "Option::is_none")]
    pub cubes: Option<CubesRecord>,
    /// Why the answer is unknown.
    #[serde(default, skip_serializing_if = "Option::is_none")]
    pub reason: Option<String>,
    /// The limits in force.
    pub limits: RunLimits,
    /// Sizes and times.
    pub stats: AnswerStats,
    /// The solver, when one ran.
    #[serde(default, skip_serializing_if = "Option::is_none")]
    pub solver: Option<String>,
    /// When the period was hard: the probe that gave no answer and the
    /// cubes that followed (`spectrum` switches as `decide` does).
    #[serde(default, skip_serializing_if = "Option::is_none")]
    pub strategy: Option<crate::report::Strategy>,
    /// The orbitcnf version that computed the answer.
    pub tool_version: String,
    /// The run that computed it ([`run_id`]).
    pub run_id: String,
    /// When its computation started (UTC, RFC 3339).
    pub started_at: String,
    /// When it finished (UTC, RFC 3339).
    pub finished_at: String,
}

impl Answer {
    /// An unknown answer to `q` under `options` (resolved here, and keyed
    /// by [`key_for`]) with nothing behind it yet, computed by run `run_id`
    /// of this orbitcnf under `limits`, started at `started_at`: what every
    /// answer a run computes starts from.
    pub fn unknown(
        q: &Question,
        options: &EncodeOptions,
        limits: RunLimits,
        how: How,
        run_id: &str,
        started_at: String,
    ) -> Answer {
        let resolved = options.resolve(q);
        Answer {
            schema: SCHEMA.into(),
            key: key(&q.record(), &resolved),
            question: q.record(),
            formulation: resolved.formulation,
            options: resolved,
            verdict: Verdict::Unknown,
            how,
            backing: Backing::None,
            orbit: None,
            profile: None,
            map: None,
            map_checked_points: None,
            proof: None,
            divisor: None,
            cubes: None,
            reason: None,
            limits,
            stats: AnswerStats::default(),
            solver: None,
            strategy: None,
            tool_version: VERSION.into(),
            run_id: run_id.into(),
            started_at,
            finished_at: String::new(),
        }
    }

    /// The digest of what refutes an infeasible answer: its kept proof
    /// file's SHA-256, or its split folder's manifest's for an answer
    /// decided in cubes.
    pub fn evidence_sha256(&self) -> Option<String> {
        match (&self.proof, &self.cubes) {
            (Some(p), _) => p.sha256.clone(),
            (None, Some(c)) => Some(c.manifest_sha256.clone()),
            (None, None) => None,
        }
    }

    /// Whether the verdict is feasible or infeasible.
    pub fn is_decided(&self) -> bool {
        self.verdict != Verdict::Unknown
    }

    /// The answer in words for messages: verdict, how, run, time, version.
    pub fn describe(&self) -> String {
        format!(
            "{} by {} (run {}, finished {}, orbitcnf {}, symmetry {}, count {}, packing {}, classes {}{})",
            self.verdict.word(),
            self.how.word(),
            self.run_id,
            self.finished_at,
            self.tool_version,
            self.options.symmetry.names(),
            on_off(self.options.count),
            on_off(self.options.packing),
            on_off(self.options.classes),
            // Recorded (and so named) only where the family acts.
            if self.options.nested {
                ", nested on"
            } else {
                ""
            }
        )
    }
}

fn on_off(b: bool) -> &'static str {
    if b { "on" } else { "off" }
}

/// Serde for [`Verdict`] as its word (the report type only serialises).
mod verdict_word {
    use serde::{Deserialize, Deserializer, Serializer};

    use crate::report::Verdict;

    pub fn serialize<S: Serializer>(v: &Verdict, s: S) -> Result<S::Ok, S::Error> {
        s.serialize_str(v.word())
    }

    pub fn deserialize<'de, D: Deserializer<'de>>(d: D) -> Result<Verdict, D::Error> {
        let w = String::deserialize(d)?;
        match w.as_str() {
            "feasible" => Ok(Verdict::Feasible),
            "infeasible" => Ok(Verdict::Infeasible),
            "unknown" => Ok(Verdict::Unknown),
            other => Err(serde::de::Error::custom(format!(
                "unknown verdict {other:?} (expected feasible, infeasible or unknown)"
            ))),
        }
    }
}

#[derive(Serialize)]
struct KeyInput<'a> {
    question: &'a QuestionRecord,
    options: &'a EncodeOptions,
    formulation: Formulation,
}

/// The store key of a question under `resolved` options: the hex SHA-256 of
/// a domain tag and the JSON of question record, options and the options'
/// formulation version. Stable: field order is fixed by the types.
pub fn key(question: &QuestionRecord, resolved: &EncodeOptions) -> String {
    let input = KeyInput {
        question,
        options: resolved,
        formulation: resolved.formulation,
    };
    let mut bytes = KEY_DOMAIN.to_vec();
    bytes.extend(serde_json::to_vec(&input).expect("key input serialises"));
    sha256_hex(&bytes)
}

/// The key of `q` under `options` as they resolve for `q`.
pub fn key_for(q: &Question, options: &EncodeOptions) -> String {
    key(&q.record(), &options.resolve(q))
}

/// `t` as UTC in RFC 3339 with milliseconds: `2025-01-31T23:59:59.123Z`.
pub fn utc_timestamp(t: SystemTime) -> String {
    let d = t.duration_since(UNIX_EPOCH).unwrap_or_default();
    let secs = d.as_secs();
    let (y, m, day) = civil_from_days((secs / 86_400) as i64);
    let s = secs % 86_400;
    format!(
        "{y:04}-{m:02}-{day:02}T{:02}:{:02}:{:02}.{:03}Z",
        s / 3600,
        s / 60 % 60,
        s % 60,
        d.subsec_millis()
    )
}

/// Year, month, day of the proleptic Gregorian calendar for days since 1970-01-01.
fn civil_from_days(z: i64) -> (i64, u32, u32) {
    let z = z + 719_468;
    let era = z.div_euclid(146_097);
    let doe = z.rem_euclid(146_097);
    let yoe = (doe - doe / 1460 + doe / 36_524 - doe / 146_096) / 365;
    let doy = doe - (365 * yoe + yoe / 4 - yoe / 100);
    let mp = (5 * doy + 2) / 153;
    let d = (doy - (153 * mp + 2) / 5 + 1) as u32;
    let m = if mp < 10 { mp + 3 } else { mp - 9 } as u32;
    let y = yoe + era * 400 + i64::from(m <= 2);
    (y, m, d)
}

/// A fresh run id: the UTC start time (to the millisecond) and the process
/// id, e.g. `20250131T235959.123Z-4242`. Unique per run and sortable by time.
pub fn run_id() -> String {
    let t = utc_timestamp(SystemTime::now()).replace(['-', ':'], "");
    format!("{t}-{}", std::process::id())
}

/// Fails with [`Error::Contradiction`] when `a` and `b` are answers to the
/// same question with different decided verdicts; `a` is named first.
///
/// # Errors
/// [`Error::Contradiction`] naming both answers.
pub fn check_agree(a: &Answer, a_where: &str, b: &Answer, b_where: &str) -> Result<()> {
    if a.question == b.question && a.is_decided() && b.is_decided() && a.verdict != b.verdict {
        return Err(Error::Contradiction {
            question: question_words(&a.question),
            first: format!("{a_where} says {}", a.describe()),
            second: format!("{b_where} says {}", b.describe()),
        });
    }
    Ok(())
}

/// `grid G (n = N), p = P`, for messages, with `, topical maps` after it
/// for a topical question.
pub fn question_words(q: &QuestionRecord) -> String {
    let class = if q.class.is_default() {
        String::new()
    } else {
        format!(", {} maps", q.class)
    };
    format!("grid {} (n = {}), p = {}{class}", q.grid, q.dim, q.period)
}

#[cfg(test)]
pub(crate) mod tests {
    use super::*;
    use crate::grid::Grid;
    use crate::question::MapClass;

    /// An answer to `p` on {-1,0,1}^2 with nothing behind it, for tests.
    pub(crate) fn answer(
        period: usize,
        verdict: Verdict,
        options: EncodeOptions,
        run: &str,
    ) -> Answer {
        let q = Question::new(Grid::parse("-1..1", Some(2)).unwrap(), period).unwrap();
        let limits = RunLimits {
            time_seconds: Some(1.0),
            max_clauses: 10,
        };
        let started = "2025-01-01T00:00:00.000Z".to_string();
        let mut a = Answer::unknown(&q, &options, limits, How::Solver, run, started);
        a.verdict = verdict;
        a.tool_version = "test".into();
        a.finished_at = "2025-01-01T00:00:01.000Z".into();
        a
    }

    #[test]
    fn keys_are_stable_and_depend_on_question_and_options() {
        let a = answer(5, Verdict::Infeasible, EncodeOptions::default(), "r");
        let b = answer(5, Verdict::Infeasible, EncodeOptions::plain(), "r");
        let c = answer(6, Verdict::Infeasible, EncodeOptions::default(), "r");
        assert_eq!(a.key.len(), 64);
        assert_ne!(a.key, b.key);
        assert_ne!(a.key, c.key);
        assert_eq!(a.key, key(&a.question, &a.options));
    }

    #[test]
    fn nonexpansive_keys_are_unchanged_by_classes_and_topical_keys_differ() {
        // The literal is sha256sum of the key input written out by hand (the
        // domain line, then the JSON of question, options and formulation as
        // stores made before map classes existed spell it), so stores
        // written by older versions are still found.
        let record = |class| QuestionRecord {
            dim: 2,
            grid: "-1..1,-1..1".into(),
            period: 5,
            class,
            points: None,
        };
        // Keys are made from resolved options (`key_for`); on this grid
        // resolution leaves out `nested`, which the older stores never had.
        let nonexpansive = Question::from_record(&record(MapClass::Nonexpansive)).unwrap();
        // `biclique-cover`, newer than those stores, acts on this question:
        // the key of the formula without it is the old one.
        let options = EncodeOptions {
            bicliques: false,
            cliques: false,
            orbits: false,
            ..EncodeOptions::default()
        }
        .resolve(&nonexpansive);
        assert_eq!(
            key(&record(MapClass::Nonexpansive), &options),
            "919a13f12f7ea9ba7fad8be039643be110cc2be1c86f0584daa814ef61caafc5"
        );
        let topical = record(MapClass::Topical);
        assert_ne!(
            key(&topical, &options),
            key(&record(MapClass::Nonexpansive), &options)
        );
        let q = Question::from_record(&topical).unwrap();
        let plain = q.clone().with_class(MapClass::Nonexpansive);
        assert_ne!(key_for(&q, &options), key_for(&plain, &options));
        assert_eq!(
            question_words(&topical),
            "grid -1..1,-1..1 (n = 2), p = 5, topical maps"
        );
    }

    #[test]
    fn retry_needs_larger_limits() {
        let old = RunLimits {
            time_seconds: Some(10.0),
            max_clauses: 100,
        };
        let same = old;
        let longer = RunLimits {
            time_seconds: Some(20.0),
            ..old
        };
        let unlimited = RunLimits {
            time_seconds: None,
            ..old
        };
        let bigger = RunLimits {
            max_clauses: 200,
            ..old
        };
        assert!(!same.exceeds(&old));
        assert!(longer.exceeds(&old) && unlimited.exceeds(&old) && bigger.exceeds(&old));
        assert!(!old.exceeds(&longer));
    }

    #[test]
    fn timestamps_are_rfc3339_utc() {
        let t = UNIX_EPOCH + std::time::Duration::from_millis(1_700_000_000_123);
        assert_eq!(utc_timestamp(t), "2023-11-14T22:13:20.123Z");
        assert_eq!(utc_timestamp(UNIX_EPOCH), "1970-01-01T00:00:00.000Z");
        let t = UNIX_EPOCH + std::time::Duration::from_secs(951_782_400); // leap day 2000
        assert_eq!(utc_timestamp(t), "2000-02-29T00:00:00.000Z");
    }
}
