//! Any DIMACS solver that follows the competition conventions, as a [`Backend`].
//!
//! # Protocol
//!
//! The CNF is written as plain DIMACS (the `p cnf` line and one clause per
//! line, in the order of [`Cnf::clauses`], so clause `i` is line `i + 2`,
//! exactly the clauses [`crate::dimacs::render_cnf`] writes) to a file in a
//! fresh temporary folder, and the solver is run as
//!
//! ```text
//! PROGRAM ARGS… CNF [PROOF-ARGS…]
//! ```
//!
//! with no standard input. Its standard output must be in competition form
//! (`c` comments, one `s` line, `v` lines closed by 0; parsed by
//! [`crate::dimacs::parse_solver_output`]) and its exit code must agree with
//! the status: 10 with `s SATISFIABLE`, 20 with `s UNSATISFIABLE`, 0 with
//! `s UNKNOWN` or no status line (CaDiCaL stopped by `-t` prints only
//! `c UNKNOWN`).
//!
//! # Nothing is taken on trust
//!
//! * A model is turned into an assignment by
//!   [`crate::dimacs::model_to_assignment`] and checked against every clause
//!   by [`check_model`] before [`Outcome::Sat`] is returned; the pipeline
//!   then decodes and verifies the orbit independently, as `decode` does.
//! * An exit by a signal, an exit code other than 0, 10 or 20, output that is
//!   not in competition form, a status that contradicts the exit code, a model
//!   that falsifies a clause, a program that cannot be started: each is an
//!   [`Error::ExternalSolver`] with a typed [`ExternalFailure`], never a verdict.
//! * An UNSAT answer without a proof is returned with no
//!   [`super::refute::ProofInfo`], so the
//!   report marks it [`crate::evidence::Evidence::SolverClaim`].
//! * With a [`ProofRequest`] the solver is asked for a proof file. An LRAT
//!   proof is checked by orbitcnf's own checker through
//!   [`super::refute::accept_proof`], in pieces from a file. A DRAT
//!   proof (CaDiCaL's default, binary) is converted to LRAT by `rate`
//!   (`rate -L OUT CNF PROOF`) when `rate` is on `PATH`, and the LRAT is then
//!   checked by orbitcnf's checker, so neither the solver nor the converter
//!   is trusted. Without `rate` the answer stays an uncertified claim and its
//!   solver name says why. A proof that was asked for and is missing, or
//!   that is rejected, is an error.
//!
//! # Time limit
//!
//! The solver runs in the background while orbitcnf polls it; once
//! [`Limits::time`] has passed the process is killed (`SIGKILL`) and the
//! answer is [`Outcome::Unknown`]. Only the solver process itself is killed:
//! a wrapper script should `exec` the solver so that no grandchild survives.
//!
//! On Linux the solver (and `rate`) also dies with orbitcnf: a `run-cube`
//! that its scheduler kills must not leave a CaDiCaL or a `rate` running for
//! hours on a node that is now another job's (seen on this project's own
//! campaigns before the guard).

use std::io::{BufWriter, Read, Write};
use std::path::{Path, PathBuf};
use std::process::{Child, Command, ExitStatus, Stdio};
use std::sync::mpsc;
use std::time::{Duration, Instant};

use super::refute::{accept_proof, temp_proof_file};
use super::{Backend, Limits, Outcome, SolveResult, SolveStats, check_model};
use crate::artifact::persist;
use crate::cnf::Cnf;
use crate::dimacs::{self, Status};
use crate::error::{Error, Result};
use crate::progress::{Progress, ProgressMode, duration_words};
use crate::proof::LratOptions;

/// How much of a solver's standard output is kept; more is an error.
pub const MAX_OUTPUT_BYTES: usize = 1 << 30;

/// How much of a solver's standard error is quoted in messages.
const STDERR_TAIL: usize = 400;

/// What an external solver did wrong. Every case means its answer was not used.
#[derive(Clone, Debug, PartialEq, Eq, thiserror::Error)]
#[non_exhaustive]
pub enum ExternalFailure {
    /// The program is not on `PATH` (or the path does not exist).
    #[error("{program:?} was not found (is it installed and on PATH?)")]
    NotFound {
        /// The program as given.
        program: String,
    },
    /// The program exists but could not be started.
    #[error("could not start {program:?}: {reason}")]
    Spawn {
        /// The program as given.
        program: String,
        /// The operating system's reason.
        reason: String,
    },
    /// The process was ended by a signal that orbitcnf did not send.
    #[error("crashed: killed by signal {signal}{}{}", name.map(|n| format!(" ({n})")).unwrap_or_default(), tail(stderr))]
    Crashed {
        /// The signal number.
        signal: i32,
        /// Its name, for the common ones.
        name: Option<&'static str>,
        /// The end of its standard error.
        stderr: String,
    },
    /// The process exited with a code that is neither 0, 10 nor 20.
    #[error(
        "exited with code {code} (expected 10, 20, or 0 for unknown){}",
        tail(stderr)
    )]
    ExitCode {
        /// The exit code.
        code: i32,
        /// The end of its standard error.
        stderr: String,
    },
    /// The status line contradicts the exit code.
    #[error("its status {status} contradicts its exit code {code}")]
    Inconsistent {
        /// The status as printed (`s SATISFIABLE`, …, or "no status line").
        status: String,
        /// The exit code.
        code: i32,
    },
    /// The standard output is not in competition form.
    #[error("its output is not in competition form: {0}")]
    Output(String),
    /// The model is not a model of the CNF.
    #[error("its model is wrong: {0}")]
    WrongModel(String),
    /// A proof that was asked for is missing or was rejected.
    #[error("its proof: {0}")]
    Proof(String),
}

fn tail(stderr: &str) -> String {
    let t = stderr.trim();
    if t.is_empty() {
        String::new()
    } else {
        format!("; stderr ends: {:?}", t.replace('\n', " | "))
    }
}

/// The format of the proof an external solver writes.
#[derive(Clone, Copy, Debug, PartialEq, Eq)]
pub enum ProofFormat {
    /// DRAT, text or binary (converted to LRAT by `rate` when it is installed).
    Drat,
    /// LRAT, text or binary (checked directly).
    Lrat,
}

impl std::str::FromStr for ProofFormat {
    type Err = String;
    fn from_str(s: &str) -> std::result::Result<ProofFormat, String> {
        match s {
            "drat" => Ok(ProofFormat::Drat),
            "lrat" => Ok(ProofFormat::Lrat),
            other => Err(format!(
                "unknown proof format {other:?}; choose drat or lrat"
            )),
        }
    }
}

/// Asks the solver for a proof of an UNSAT answer.
#[derive(Clone, Debug, PartialEq, Eq)]
pub struct ProofRequest {
    /// Arguments appended after the CNF path; every `{}` in them is replaced
    /// by the proof file's path (for CaDiCaL and Kissat just `["{}"]`).
    pub args: Vec<String>,
    /// What the solver writes there.
    pub format: ProofFormat,
    /// Where to keep the checked LRAT proof, if anywhere.
    pub keep_lrat: Option<PathBuf>,
    /// Where to keep the solver's own proof file, if anywhere.
    pub keep_raw: Option<PathBuf>,
}

/// An external DIMACS solver.
#[derive(Clone, Debug, PartialEq, Eq)]
pub struct External {
    /// The program and its arguments; the CNF path is appended.
    pub command: Vec<String>,
    /// The proof to ask for, if any.
    pub proof: Option<ProofRequest>,
}

impl External {
    /// A solver from a command line such as `cadical -q` (words split at
    /// whitespace; `'…'` and `"…"` quote, `\` escapes outside single quotes).
    ///
    /// # Errors
    /// [`Error::Options`] for an empty command or an unclosed quote.
    pub fn parse(command: &str) -> Result<External> {
        let words = split_words(command)
            .map_err(|r| Error::Options(format!("solver command {command:?}: {r}")))?;
        if words.is_empty() {
            return Err(Error::Options(
                "the external solver command is empty; write e.g. --solver external:'cadical -q'"
                    .into(),
            ));
        }
        Ok(External {
            command: words,
            proof: None,
        })
    }

    /// The command line as one string, for messages and reports.
    pub fn command_line(&self) -> String {
        self.command.join(" ")
    }

    fn failure(&self, failure: ExternalFailure) -> Error {
        Error::ExternalSolver {
            command: self.command_line(),
            failure,
        }
    }
}

/// Splits a command line into words, shell-style but without any expansion.
fn split_words(s: &str) -> std::result::Result<Vec<String>, String> {
    let mut words = Vec::new();
    let mut cur = String::new();
    let mut in_word = false;
    let mut chars = s.chars();
    while let Some(c) = chars.next() {
        match c {
            '\'' => {
                in_word = true;
                loop {
                    match chars.next() {
                        Some('\'') => break,
                        Some(x) => cur.push(x),
                        None => return Err("unclosed single quote".into()),
                    }
                }
            }
            '"' => {
                in_word = true;
                loop {
                    match chars.next() {
                        Some('"') => break,
                        Some('\\') => match chars.next() {
                            Some(x) => cur.push(x),
                            None => return Err("a trailing backslash".into()),
                        },
                        Some(x) => cur.push(x),
                        None => return Err("unclosed double quote".into()),
                    }
                }
            }
            '\\' => {
                in_word = true;
                match chars.next() {
                    Some(x) => cur.push(x),
                    None => return Err("a trailing backslash".into()),
                }
            }
            c if c.is_whitespace() => {
                if in_word {
                    words.push(std::mem::take(&mut cur));
                    in_word = false;
                }
            }
            c => {
                in_word = true;
                cur.push(c);
            }
        }
    }
    if in_word {
        words.push(cur);
    }
    Ok(words)
}

/// Writes `cnf` as plain DIMACS: the `p cnf` line, then one clause per line.
///
/// # Errors
/// [`Error::Io`] naming `path`.
pub fn write_plain_dimacs(cnf: &Cnf, path: &Path) -> Result<()> {
    let file = std::fs::File::create(path).map_err(|e| Error::io(path, e))?;
    let mut w = BufWriter::new(file);
    let mut go = || -> std::io::Result<()> {
        writeln!(w, "p cnf {} {}", cnf.num_vars(), cnf.num_clauses())?;
        for clause in cnf.clauses() {
            for l in clause {
                write!(w, "{} ", l.dimacs())?;
            }
            w.write_all(b"0\n")?;
        }
        w.flush()
    };
    go().map_err(|e| Error::io(path, e))
}

/// How a run of a program ended.
enum Ended {
    /// It exited by itself.
    Exited {
        status: ExitStatus,
        stdout: Vec<u8>,
        stderr: String,
    },
    /// The deadline passed and it was killed.
    TimedOut,
}

/// Runs `cmd` to completion or until `deadline`, collecting its output.
/// Asks the kernel to kill the child with `SIGKILL` when the thread that
/// started it ends, which it does only after waiting for the child, or when
/// orbitcnf dies.
#[cfg(target_os = "linux")]
fn die_with_parent(cmd: &mut Command) {
    use std::os::unix::process::CommandExt;
    let parent = std::process::id();
    // SAFETY: between fork and exec the closure calls only prctl and
    // getppid, which are async-signal-safe, and allocates nothing.
    unsafe {
        cmd.pre_exec(move || {
            if libc::prctl(libc::PR_SET_PDEATHSIG, libc::SIGKILL) != 0 {
                return Err(std::io::Error::last_os_error());
            }
            // orbitcnf may have died before the request took effect.
            if libc::getppid() as u32 != parent {
                return Err(std::io::Error::from_raw_os_error(libc::ESRCH));
            }
            Ok(())
        });
    }
}

#[cfg(not(target_os = "linux"))]
fn die_with_parent(_: &mut Command) {}

fn run_until(
    cmd: &mut Command,
    program: &str,
    deadline: Option<Instant>,
    mut progress: Option<(&str, Instant, &mut Progress)>,
) -> std::result::Result<Ended, ExternalFailure> {
    cmd.stdin(Stdio::null())
        .stdout(Stdio::piped())
        .stderr(Stdio::piped());
    die_with_parent(cmd);
    let mut child: Child = cmd.spawn().map_err(|e| match e.kind() {
        std::io::ErrorKind::NotFound => ExternalFailure::NotFound {
            program: program.into(),
        },
        _ => ExternalFailure::Spawn {
            program: program.into(),
            reason: e.to_string(),
        },
    })?;
    let out_rx = reader(child.stdout.take(), MAX_OUTPUT_BYTES);
    let err_rx = reader(child.stderr.take(), 1 << 20);
    let mut pause = Duration::from_millis(1);
    let status = loop {
        match child.try_wait() {
            Ok(Some(status)) => break status,
            Ok(None) => {}
            Err(e) => {
                let _ = child.kill();
                let _ = child.wait();
                return Err(ExternalFailure::Spawn {
                    program: program.into(),
                    reason: format!("waiting for it failed: {e}"),
                });
            }
        }
        if deadline.is_some_and(|d| Instant::now() >= d) {
            let _ = child.kill();
            let _ = child.wait();
            return Ok(Ended::TimedOut);
        }
        if let Some((doing, start, sink)) = progress.as_mut() {
            sink.status(|| format!("{doing}: {}", duration_words(start.elapsed().as_secs_f64())));
        }
        std::thread::sleep(pause);
        pause = (pause * 2).min(Duration::from_millis(20));
    };
    // The pipes close when the process (and anything it left behind) exits;
    // a grandchild that keeps them open is not waited for beyond a grace period.
    let grace = Duration::from_secs(2);
    let (stdout, overflow) = out_rx.recv_timeout(grace).unwrap_or_default();
    if overflow {
        return Err(ExternalFailure::Output(format!(
            "more than {MAX_OUTPUT_BYTES} bytes on standard output"
        )));
    }
    let (err_bytes, _) = err_rx.recv_timeout(grace).unwrap_or_default();
    let err_text = String::from_utf8_lossy(&err_bytes);
    let mut cut = err_text.len().saturating_sub(STDERR_TAIL);
    while !err_text.is_char_boundary(cut) {
        cut += 1;
    }
    Ok(Ended::Exited {
        status,
        stdout,
        stderr: err_text[cut..].to_string(),
    })
}

/// Reads a pipe to its end in a thread, keeping at most `cap` bytes.
fn reader(pipe: Option<impl Read + Send + 'static>, cap: usize) -> mpsc::Receiver<(Vec<u8>, bool)> {
    let (tx, rx) = mpsc::channel();
    std::thread::spawn(move || {
        let mut kept = Vec::new();
        let mut overflow = false;
        if let Some(mut p) = pipe {
            let mut buf = [0u8; 64 * 1024];
            loop {
                match p.read(&mut buf) {
                    Ok(0) | Err(_) => break,
                    Ok(n) => {
                        if kept.len() + n > cap {
                            overflow = true;
                        } else {
                            kept.extend_from_slice(&buf[..n]);
                        }
                    }
                }
            }
        }
        let _ = tx.send((kept, overflow));
    });
    rx
}

#[cfg(unix)]
fn signal_of(status: &ExitStatus) -> Option<i32> {
    use std::os::unix::process::ExitStatusExt;
    status.signal()
}

#[cfg(not(unix))]
fn signal_of(_status: &ExitStatus) -> Option<i32> {
    None
}

fn signal_name(signal: i32) -> Option<&'static str> {
    Some(match signal {
        1 => "SIGHUP",
        2 => "SIGINT",
        4 => "SIGILL",
        6 => "SIGABRT",
        7 => "SIGBUS",
        8 => "SIGFPE",
        9 => "SIGKILL",
        11 => "SIGSEGV",
        13 => "SIGPIPE",
        15 => "SIGTERM",
        24 => "SIGXCPU",
        _ => return None,
    })
}

/// The first number after `c conflicts:` in the solver's comments, if any.
fn conflicts_of(text: &str) -> Option<u64> {
    text.lines().find_map(|l| {
        let rest = l
            .trim()
            .strip_prefix("c")?
            .trim_start()
            .strip_prefix("conflicts:")?;
        rest.split_whitespace().next()?.parse().ok()
    })
}

/// Whether `name` is an executable file in a folder of `PATH`.
fn on_path(name: &str) -> bool {
    std::env::var_os("PATH").is_some_and(|path| {
        std::env::split_paths(&path).any(|d| {
            let f = d.join(name);
            f.is_file() && is_executable(&f)
        })
    })
}

#[cfg(unix)]
fn is_executable(f: &Path) -> bool {
    use std::os::unix::fs::PermissionsExt;
    std::fs::metadata(f).is_ok_and(|m| m.permissions().mode() & 0o111 != 0)
}

#[cfg(not(unix))]
fn is_executable(_f: &Path) -> bool {
    true
}

/// The DRAT-to-LRAT converter used for DRAT proofs.
pub const DRAT_CONVERTER: &str = "rate";

impl Backend for External {
    fn name(&self) -> String {
        format!("external `{}`", self.command_line())
    }

    fn solve(&mut self, cnf: &Cnf, limits: &Limits) -> Result<SolveResult> {
        let start = Instant::now();
        let deadline = limits.time.map(|t| start + t);
        let tmp = tempfile::Builder::new()
            .prefix("orbitcnf-external-")
            .tempdir()
            .map_err(|e| Error::io(std::env::temp_dir(), e))?;
        let cnf_path = tmp.path().join("formula.cnf");
        write_plain_dimacs(cnf, &cnf_path)?;
        let proof_path = tmp
            .path()
            .join(match self.proof.as_ref().map(|p| p.format) {
                Some(ProofFormat::Lrat) => "proof.lrat",
                _ => "proof.drat",
            });
        let program = &self.command[0];
        let mut cmd = Command::new(program);
        cmd.args(&self.command[1..]).arg(&cnf_path);
        if let Some(req) = &self.proof {
            let p = proof_path.display().to_string();
            cmd.args(req.args.iter().map(|a| a.replace("{}", &p)));
        }
        let name = self.name();
        let mut progress = Progress::new(limits.progress);
        let doing = format!("solving with {name}");
        let ended = run_until(
            &mut cmd,
            program,
            deadline,
            Some((&*doing, start, &mut progress)),
        );
        progress.clear();
        let stats = |conflicts| SolveStats {
            solver: name.clone(),
            seconds: start.elapsed().as_secs_f64(),
            conflicts,
        };
        let (status, stdout, stderr) = match ended.map_err(|f| self.failure(f))? {
            Ended::TimedOut => {
                return Ok(SolveResult {
                    outcome: Outcome::Unknown(format!(
                        "time limit of {:.1} s reached; the solver was stopped",
                        limits.time.map(|t| t.as_secs_f64()).unwrap_or(0.0)
                    )),
                    stats: stats(None),
                    proof: None,
                });
            }
            Ended::Exited {
                status,
                stdout,
                stderr,
            } => (status, stdout, stderr),
        };
        if let Some(signal) = signal_of(&status) {
            return Err(self.failure(ExternalFailure::Crashed {
                signal,
                name: signal_name(signal),
                stderr,
            }));
        }
        let code = status.code().unwrap_or(-1);
        if ![0, 10, 20].contains(&code) {
            return Err(self.failure(ExternalFailure::ExitCode { code, stderr }));
        }
        let text = String::from_utf8_lossy(&stdout);
        let answer = dimacs::parse_solver_output(&text, "<standard output>")
            .map_err(|e| self.failure(ExternalFailure::Output(e.to_string())))?;
        let expected = match answer.status {
            Status::Sat => 10,
            Status::Unsat => 20,
            Status::Unknown => 0,
        };
        if code != expected {
            let status = match answer.status {
                Status::Sat => "s SATISFIABLE",
                Status::Unsat => "s UNSATISFIABLE",
                Status::Unknown if text.lines().any(|l| l.trim_start().starts_with("s ")) => {
                    "s UNKNOWN"
                }
                Status::Unknown => "(no status line)",
            };
            return Err(self.failure(ExternalFailure::Inconsistent {
                status: status.into(),
                code,
            }));
        }
        let conflicts = conflicts_of(&text);
        match answer.status {
            Status::Sat => {
                let lits = answer.model.as_deref().unwrap_or_default();
                let model = dimacs::model_to_assignment(lits, cnf.num_vars(), "<standard output>")
                    .and_then(|m| {
                        check_model(cnf, &m, &cnf_path.display().to_string(), None)?;
                        Ok(m)
                    })
                    .map_err(|e| self.failure(ExternalFailure::WrongModel(e.to_string())))?;
                Ok(SolveResult {
                    outcome: Outcome::Sat(model),
                    stats: stats(conflicts),
                    proof: None,
                })
            }
            Status::Unknown => Ok(SolveResult {
                outcome: Outcome::Unknown(
                    answer
                        .note
                        .unwrap_or_else(|| "the solver gave no answer".into()),
                ),
                stats: stats(conflicts),
                proof: None,
            }),
            Status::Unsat => {
                let Some(req) = self.proof.clone() else {
                    return Ok(SolveResult {
                        outcome: Outcome::Unsat,
                        stats: stats(conflicts),
                        proof: None,
                    });
                };
                self.check_proof(
                    cnf,
                    &cnf_path,
                    &proof_path,
                    &req,
                    (deadline, limits.progress),
                    stats(conflicts),
                )
            }
        }
    }
}

impl External {
    /// Certifies an UNSAT answer with the proof the solver wrote at `raw`.
    fn check_proof(
        &self,
        cnf: &Cnf,
        cnf_path: &Path,
        raw: &Path,
        req: &ProofRequest,
        (deadline, progress): (Option<Instant>, ProgressMode),
        mut stats: SolveStats,
    ) -> Result<SolveResult> {
        let raw_bytes = std::fs::metadata(raw)
            .map_err(|e| {
                self.failure(ExternalFailure::Proof(format!(
                    "the solver answered UNSAT but left no proof file ({e})"
                )))
            })?
            .len();
        let keep_raw = || -> Result<Option<PathBuf>> {
            match &req.keep_raw {
                Some(p) => {
                    let tmp = temp_proof_file(Some(p))?;
                    copy_into(raw, &tmp)?;
                    persist(tmp, p)?;
                    Ok(Some(p.clone()))
                }
                None => Ok(None),
            }
        };
        let lrat = temp_proof_file(req.keep_lrat.as_deref())?;
        match req.format {
            ProofFormat::Lrat => copy_into(raw, &lrat)?,
            ProofFormat::Drat => {
                if !on_path(DRAT_CONVERTER) {
                    keep_raw()?;
                    stats.solver = format!(
                        "{} (its DRAT proof was not checked: `{DRAT_CONVERTER}` is not on PATH)",
                        stats.solver
                    );
                    return Ok(SolveResult {
                        outcome: Outcome::Unsat,
                        stats,
                        proof: None,
                    });
                }
                let mut cmd = Command::new(DRAT_CONVERTER);
                cmd.arg("-L").arg(lrat.path()).arg(cnf_path).arg(raw);
                let converter = |f: ExternalFailure| Error::ExternalSolver {
                    command: format!("{DRAT_CONVERTER} (DRAT to LRAT)"),
                    failure: f,
                };
                // Turning a large DRAT proof into LRAT can take longer than
                // the solve did, so it reports progress as the solve does.
                let mut sink = Progress::new(progress);
                let doing = format!(
                    "converting the DRAT proof ({:.0} MB) to LRAT with `{DRAT_CONVERTER}`",
                    raw_bytes as f64 / 1e6
                );
                let ended = run_until(
                    &mut cmd,
                    DRAT_CONVERTER,
                    deadline,
                    Some((&*doing, Instant::now(), &mut sink)),
                );
                sink.clear();
                match ended.map_err(converter)? {
                    Ended::TimedOut => {
                        return Ok(SolveResult {
                            outcome: Outcome::Unknown(
                                "time limit reached while converting the solver's DRAT proof"
                                    .into(),
                            ),
                            stats,
                            proof: None,
                        });
                    }
                    Ended::Exited { status, stdout, .. } => {
                        let verified = String::from_utf8_lossy(&stdout)
                            .lines()
                            .any(|l| l.trim() == "s VERIFIED");
                        if !status.success() || !verified {
                            return Err(self.failure(ExternalFailure::Proof(format!(
                                "{DRAT_CONVERTER} does not verify its DRAT proof (exit {:?})",
                                status.code()
                            ))));
                        }
                    }
                }
            }
        }
        let checked = accept_proof(cnf, lrat, req.keep_lrat.as_deref(), &LratOptions::default())
            .map_err(|e| match e {
                Error::Proof(e) => self.failure(ExternalFailure::Proof(format!(
                    "the LRAT proof was rejected by orbitcnf's checker: {e}"
                ))),
                e => e,
            })?;
        let mut info = checked.info;
        if req.format == ProofFormat::Drat {
            info.drat_file = keep_raw()?;
            info.drat_bytes = info.drat_file.as_ref().map(|_| raw_bytes);
        } else {
            keep_raw()?;
        }
        Ok(SolveResult {
            outcome: Outcome::Unsat,
            stats,
            proof: Some(info),
        })
    }
}

/// Copies the file at `from` into the temporary file `to`, in pieces.
fn copy_into(from: &Path, to: &tempfile::NamedTempFile) -> Result<()> {
    let mut src = std::fs::File::open(from).map_err(|e| Error::io(from, e))?;
    let mut dst = to.as_file();
    std::io::copy(&mut src, &mut dst).map_err(|e| Error::io(to.path(), e))?;
    Ok(())
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn command_lines_split_like_a_shell() {
        let w = |s: &str| split_words(s).unwrap();
        assert_eq!(w("cadical -q"), vec!["cadical", "-q"]);
        assert_eq!(
            w("  a  'b c' \"d\\\"e\" f\\ g "),
            vec!["a", "b c", "d\"e", "f g"]
        );
        assert_eq!(w("''"), vec![""]);
        assert!(split_words("a 'b").is_err());
        assert!(External::parse("   ").is_err());
    }

    #[test]
    fn conflict_counts_are_read_from_comments() {
        let t = "c [ statistics ]\nc conflicts:                 1234        56.7    per second\ns UNSATISFIABLE\n";
        assert_eq!(conflicts_of(t), Some(1234));
        assert_eq!(conflicts_of("s SATISFIABLE\n"), None);
    }
}
