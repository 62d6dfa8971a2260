//! The library's error type.
//!
//! Every error says what was wrong and where it came from (a flag, a file and
//! line, a clause index), so that the binary can print it on one line and a
//! user can fix the input without guessing.

use std::path::PathBuf;

/// Errors of the orbitcnf library.
#[derive(Debug, thiserror::Error)]
#[non_exhaustive]
pub enum Error {
    /// A grid specification such as `-1..1` or `0..1,-1..1` could not be used.
    #[error("grid {spec:?}: {reason}")]
    GridSpec {
        /// The text as the user gave it.
        spec: String,
        /// What is wrong with it.
        reason: String,
    },

    /// The question (grid, dimension, period) is not a valid question.
    #[error("invalid question: {0}")]
    Question(String),

    /// Options that do not fit together or do not fit the question; the
    /// message says which and why.
    #[error("{0}")]
    Options(String),

    /// The CNF would exceed the configured size limit.
    #[error(
        "the CNF would be too large: about {} clauses over {} variables \
         (limit {limit} clauses)",
        human(*clauses), human(*vars)
    )]
    TooLarge {
        /// Estimated number of clauses.
        clauses: u64,
        /// Estimated number of variables.
        vars: u64,
        /// The limit in force.
        limit: u64,
    },

    /// A file could not be parsed; `line` is 1-based, 0 for the whole file
    /// (then the message shows no line number).
    #[error("{}: {reason}", at_line(path, *line))]
    Parse {
        /// The file (or a description of the stream).
        path: String,
        /// 1-based line number, 0 when the problem concerns the whole file.
        line: usize,
        /// What is wrong there.
        reason: String,
    },

    /// A file names a formulation that this version does not know (a newer
    /// version wrote it, or it was edited); `line` is 1-based.
    #[error("{path}:{line}: {source}")]
    UnknownFormulation {
        /// The file.
        path: String,
        /// 1-based line of the name.
        line: usize,
        /// The name and the formulations this version knows.
        #[source]
        source: crate::encode::UnknownFormulation,
    },

    /// Reading or writing a file failed.
    #[error("{}: {source}", path.display())]
    Io {
        /// The file concerned.
        path: PathBuf,
        /// The underlying error.
        #[source]
        source: std::io::Error,
    },

    /// A solver's model falsifies a clause of the CNF it claims to satisfy.
    #[error(
        "{}: the model falsifies clause {index} ({clause}); the solver's answer is wrong",
        at_line(path, *line)
    )]
    ModelViolates {
        /// The CNF file (or `<memory>`).
        path: String,
        /// 1-based line of the clause in the file (0 for an in-memory CNF).
        line: usize,
        /// 0-based index of the clause.
        index: usize,
        /// The clause in DIMACS form.
        clause: String,
    },

    /// An orbit or map failed the independent check.
    #[error("check failed: {0}")]
    Check(#[from] crate::verify::CheckFailure),

    /// Two answers to the same question disagree (a stored result and a new
    /// one, or two stored results), or an answer contradicts a published
    /// theorem. `first` and `second` each say which answer or theorem, how it
    /// was obtained, in which run, when, and by which orbitcnf version.
    #[error("CONTRADICTION for {question}: {first}; but {second}")]
    Contradiction {
        /// The question both concern, in words.
        question: String,
        /// The earlier answer (or the theorem).
        first: String,
        /// The answer that disagrees with it.
        second: String,
    },

    /// A solver back-end failed (crashed, misbehaved, could not be started).
    #[error("solver {solver}: {reason}")]
    Solver {
        /// Name of the back-end.
        solver: String,
        /// What went wrong.
        reason: String,
    },

    /// An unsatisfiability proof was rejected by the checker.
    #[error("proof rejected: {0}")]
    Proof(#[from] crate::proof::LratError),

    /// A model did not give the orbit that decoding needs.
    #[error("decoding the model: {0}")]
    Decode(String),

    /// A real-space certificate does not fit its question (another skeleton,
    /// another question, a missing part).
    #[error("certificate rejected: {0}")]
    Certificate(String),

    /// A theory lemma of a real-space certificate was rejected by the Farkas checker.
    #[error("lemma rejected: {0}")]
    Farkas(#[from] crate::real::farkas_check::FarkasError),
    /// A report, table or picture cannot be made from its input: `what` is
    /// the output asked for, `reason` what the input lacks or contradicts.
    #[error("cannot make {what}: {reason}")]
    Render {
        /// The output asked for (`the cycle picture`, `the LaTeX report`, …).
        what: String,
        /// Why not.
        reason: String,
    },

    /// An external solver misbehaved; its answer was not used.
    #[error("external solver `{command}`: {failure}")]
    ExternalSolver {
        /// The solver's command line.
        command: String,
        /// What went wrong.
        failure: crate::solve::external::ExternalFailure,
    },
}

/// `path:line`, or `path` alone for line 0 (a problem of the whole file).
fn at_line(path: &str, line: usize) -> String {
    if line == 0 {
        path.to_string()
    } else {
        format!("{path}:{line}")
    }
}

/// A count for messages: exact below a trillion, in scientific notation above.
fn human(n: u64) -> String {
    if n < 1_000_000_000_000 {
        n.to_string()
    } else {
        format!("{:.2e}", n as f64)
    }
}

/// Shorthand for results with the library's [`Error`].
pub type Result<T, E = Error> = std::result::Result<T, E>;

impl Error {
    /// An [`Error::Io`] for `path`.
    pub fn io(path: impl Into<PathBuf>, source: std::io::Error) -> Error {
        Error::Io {
            path: path.into(),
            source,
        }
    }

    /// An [`Error::Parse`] about the whole file `path` (no line number).
    pub fn file(path: impl Into<String>, reason: impl Into<String>) -> Error {
        Error::parse(path, 0, reason)
    }

    /// An [`Error::Parse`] at `line` of `path`.
    pub fn parse(path: impl Into<String>, line: usize, reason: impl Into<String>) -> Error {
        Error::Parse {
            path: path.into(),
            line,
            reason: reason.into(),
        }
    }
}
