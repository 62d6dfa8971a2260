//! The command-line layer: one module per group of commands, each with its
//! arguments (built from the shared groups of [`args`]) and a `run` that
//! calls the library and prints. No pipeline logic lives here.

pub mod args;
pub mod bench;
pub mod check;
pub mod cubes;
pub mod decide;
pub mod real;
pub mod report;
pub mod sweep;

use std::io::{self, Write};

use orbitcnf::Error;

/// The exit codes of the commands that give a verdict.
pub const EXIT_CODES: &str = "\
Exit codes (the SAT convention):
  10  feasible: an orbit of minimal period p exists (printed and checked)
  20  infeasible: no such orbit exists (backed by a checked proof)
  21  infeasible on a solver's unchecked word (only with --no-certify or --trust-solver)
   0  unknown: no answer within the limits (or a command with no verdict succeeded)
   1  error: bad input, a failed check, or a solver that misbehaved";

/// A command's result: its exit code, or the error to print.
pub type Outcome = Result<u8, Error>;

/// Writes `text` to stdout; a closed pipe (`| head`) is not an error.
pub fn print(text: &str) -> Result<(), Error> {
    let mut out = io::stdout().lock();
    match out.write_all(text.as_bytes()).and_then(|()| out.flush()) {
        Err(e) if e.kind() != io::ErrorKind::BrokenPipe => Err(Error::io("<stdout>", e)),
        _ => Ok(()),
    }
}

/// Prints `json` (one line) or `text`.
pub fn print_either(
    as_json: bool,
    json: impl FnOnce() -> String,
    text: impl FnOnce() -> String,
) -> Result<(), Error> {
    print(&if as_json { json() + "\n" } else { text() })
}

/// An exit code as the process's byte (the library's codes are 0..=21).
pub fn code(c: i32) -> u8 {
    u8::try_from(c).unwrap_or(1)
}
