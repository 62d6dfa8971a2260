//! Shared helpers for the integration tests.
//!
//! - [`TestDir`]: a fresh temporary directory per test, removed afterwards.
//! - [`Cmd`]: a command builder for the built `orbitcnf` binary (or any other
//!   program, such as an external SAT solver), run with no stdin.
//! - [`Run`]: a finished command; its assertions print the command line,
//!   what was expected, what happened, and the full stdout and stderr.
//! - [`Q`]: a question (box and period) and its command-line arguments.
//! - Verification: every feasible answer is checked by `orbitcnf check` (the
//!   CLI) or by `orbitcnf::verify::check_orbit` (the library), and in both
//!   cases also by [`assert_isometric_cycle`], a second checker written here
//!   that shares no code with the crate.

#![allow(dead_code)]

use std::collections::HashSet;
use std::ffi::OsStr;
use std::path::{Path, PathBuf};
use std::process::{Command, Stdio};
use std::time::{Duration, Instant};

use serde_json::Value;

use orbitcnf::decide;
use orbitcnf::encode::{DEFAULT_MAX_CLAUSES, EncodeOptions};
use orbitcnf::solve::Limits;
use orbitcnf::solve::bundled::Bundled;
use orbitcnf::{Grid, Question, Report, Verdict};

/// Exit code of a feasible answer.
pub const FEASIBLE: i32 = 10;
/// Exit code of an infeasible answer.
pub const INFEASIBLE: i32 = 20;
/// Exit code of an infeasible answer that rests on a solver's unchecked word.
pub const UNCHECKED: i32 = 21;
/// Exit code of an unknown answer (and of commands with no verdict).
pub const UNKNOWN: i32 = 0;
/// Exit code of an error.
pub const ERROR: i32 = 1;

/// The plain formulation's options (no symmetry breaking, no redundant constraints).
pub const PLAIN: &[&str] = &[
    "--symmetry",
    "none",
    "--no-count",
    "--no-packing",
    "--no-classes",
];

/// The path of the binary under test.
pub fn bin() -> &'static str {
    env!("CARGO_BIN_EXE_orbitcnf")
}

/// A temporary directory that lives as long as the test.
pub struct TestDir {
    dir: tempfile::TempDir,
}

impl TestDir {
    /// A fresh, empty directory.
    pub fn new() -> TestDir {
        TestDir {
            dir: tempfile::Builder::new()
                .prefix("orbitcnf-test-")
                .tempdir()
                .expect("create a temporary directory"),
        }
    }

    /// The directory itself.
    pub fn root(&self) -> &Path {
        self.dir.path()
    }

    /// `name` inside the directory.
    pub fn path(&self, name: &str) -> PathBuf {
        self.dir.path().join(name)
    }

    /// Writes `contents` to `name` and returns its path.
    pub fn write(&self, name: &str, contents: impl AsRef<[u8]>) -> PathBuf {
        let p = self.path(name);
        std::fs::write(&p, contents).unwrap_or_else(|e| panic!("write {}: {e}", p.display()));
        p
    }

    /// The text of `name`.
    pub fn read(&self, name: &str) -> String {
        let p = self.path(name);
        std::fs::read_to_string(&p).unwrap_or_else(|e| panic!("read {}: {e}", p.display()))
    }

    /// The `orbitcnf` binary, run inside this directory.
    pub fn orbitcnf(&self) -> Cmd {
        let mut c = Cmd::new(bin());
        c.cmd.current_dir(self.root());
        c
    }

    /// Any program, run inside this directory.
    pub fn program(&self, program: &str) -> Cmd {
        let mut c = Cmd::new(program);
        c.cmd.current_dir(self.root());
        c
    }
}

/// A command under construction.
pub struct Cmd {
    cmd: Command,
    shown: Vec<String>,
    input: Option<Vec<u8>>,
}

impl Cmd {
    fn new(program: &str) -> Cmd {
        let mut cmd = Command::new(program);
        cmd.stdin(Stdio::null());
        let short = Path::new(program)
            .file_name()
            .map_or(program.to_string(), |n| n.to_string_lossy().into_owned());
        Cmd {
            cmd,
            shown: vec![short],
            input: None,
        }
    }

    /// Appends one argument.
    pub fn arg(&mut self, a: impl AsRef<OsStr>) -> &mut Cmd {
        self.shown.push(a.as_ref().to_string_lossy().into_owned());
        self.cmd.arg(a);
        self
    }

    /// Appends arguments.
    pub fn args<I, S>(&mut self, args: I) -> &mut Cmd
    where
        I: IntoIterator<Item = S>,
        S: AsRef<OsStr>,
    {
        for a in args {
            self.arg(a);
        }
        self
    }

    /// Feeds `bytes` to the command's standard input (instead of none).
    pub fn stdin(&mut self, bytes: impl Into<Vec<u8>>) -> &mut Cmd {
        self.input = Some(bytes.into());
        self.shown.push("< input".into());
        self
    }

    /// Runs the command to completion. Fails the test if the program could
    /// not be started, was killed by a signal, or panicked.
    pub fn run(&mut self) -> Run {
        let shown = self.shown.join(" ");
        let t0 = Instant::now();
        let out = match self.input.take() {
            None => self.cmd.output(),
            Some(bytes) => {
                use std::io::Write;
                self.cmd
                    .stdin(Stdio::piped())
                    .stdout(Stdio::piped())
                    .stderr(Stdio::piped());
                self.cmd.spawn().and_then(|mut child| {
                    let mut pipe = child.stdin.take().expect("piped stdin");
                    let fed = pipe.write_all(&bytes);
                    drop(pipe);
                    let out = child.wait_with_output();
                    fed.and(out)
                })
            }
        }
        .unwrap_or_else(|e| panic!("could not run `{shown}`: {e}"));
        let run = Run {
            shown,
            code: out.status.code(),
            stdout: String::from_utf8_lossy(&out.stdout).into_owned(),
            stderr: String::from_utf8_lossy(&out.stderr).into_owned(),
            elapsed: t0.elapsed(),
        };
        if run.code.is_none() {
            run.fail("the process to exit", "an exit code", "killed by a signal");
        }
        if run.stderr.contains("panicked") {
            run.fail("no panic", "stderr without \"panicked\"", "a panic");
        }
        run
    }
}

/// A finished command.
pub struct Run {
    /// The command line as typed.
    pub shown: String,
    /// The exit code.
    pub code: Option<i32>,
    /// Standard output.
    pub stdout: String,
    /// Standard error.
    pub stderr: String,
    /// Wall-clock time.
    pub elapsed: Duration,
}

impl Run {
    /// Fails the test, showing what was expected, what happened and the output.
    pub fn fail(&self, what: &str, expected: &str, actual: &str) -> ! {
        panic!(
            "\n==== `{}` ====\nchecking: {what}\nexpected: {expected}\nactual:   {actual}\n\
             exit code: {:?}, {:.2} s\n---- stdout ----\n{}\n---- stderr ----\n{}\n----------------\n",
            self.shown,
            self.code,
            self.elapsed.as_secs_f64(),
            truncate(&self.stdout),
            truncate(&self.stderr)
        )
    }

    /// Asserts the exit code.
    pub fn code(&self, want: i32) -> &Run {
        if self.code != Some(want) {
            self.fail(
                "exit code",
                &format!("{want} ({})", code_name(want)),
                &format!("{:?}", self.code),
            );
        }
        self
    }

    /// Asserts that stdout contains `needle`.
    pub fn stdout_has(&self, needle: &str) -> &Run {
        if !self.stdout.contains(needle) {
            self.fail("stdout", &format!("contains {needle:?}"), "it does not");
        }
        self
    }

    /// Asserts that stderr contains `needle`.
    pub fn stderr_has(&self, needle: &str) -> &Run {
        if !self.stderr.contains(needle) {
            self.fail("stderr", &format!("contains {needle:?}"), "it does not");
        }
        self
    }

    /// Asserts an error in the binary's form: exit 1, nothing on stdout, one
    /// line on stderr `orbitcnf: error: …` that contains every one of `needles`.
    pub fn error_with(&self, needles: &[&str]) -> &Run {
        self.code(ERROR);
        if !self.stdout.is_empty() {
            self.fail("stdout of an error", "empty", "some output");
        }
        let lines: Vec<&str> = self.stderr.lines().collect();
        if lines.len() != 1 || !lines[0].starts_with("orbitcnf: error: ") {
            self.fail(
                "stderr of an error",
                "one line starting with \"orbitcnf: error: \"",
                &format!("{} lines", lines.len()),
            );
        }
        for n in needles {
            self.stderr_has(n);
        }
        self
    }

    /// Parses stdout as one JSON value.
    pub fn json(&self) -> Value {
        serde_json::from_str(self.stdout.trim())
            .unwrap_or_else(|e| self.fail("stdout is JSON", "one JSON value", &e.to_string()))
    }
}

fn truncate(s: &str) -> String {
    const MAX: usize = 6000;
    if s.len() <= MAX {
        return s.to_string();
    }
    let mut cut = MAX;
    while !s.is_char_boundary(cut) {
        cut -= 1;
    }
    format!("{}\n… ({} more bytes)", &s[..cut], s.len() - cut)
}

fn code_name(code: i32) -> &'static str {
    match code {
        FEASIBLE => "feasible",
        INFEASIBLE => "infeasible",
        UNKNOWN => "unknown / success",
        ERROR => "error",
        _ => "?",
    }
}

/// A question: the box, one inclusive range per coordinate, and the period.
#[derive(Clone, Debug, PartialEq, Eq)]
pub struct Q {
    /// `(lo, hi)` per coordinate.
    pub bounds: Vec<(i64, i64)>,
    /// The period p.
    pub period: usize,
    /// Encoding flags every command of the question gets after the
    /// question's own arguments ([`Q::without_clique_families`]).
    pub flags: Vec<&'static str>,
}

impl Q {
    /// The question encoded without `window-cliques` and `clique-orbits`.
    /// On the small boxes the split and cube tests use ({−1,0,1}^3 with
    /// p = 9, {−1,0,1}^4 with p = 17, …) those families leave no profile
    /// at all, so that the question has no cube to split; without them
    /// they keep the cubes the tests were written for.
    pub fn without_clique_families(mut self) -> Q {
        self.flags.push("--no-window-cliques");
        self.flags.push("--no-clique-orbits");
        self
    }

    /// The question encoded without `clique-orbits`, as the default was
    /// before that family (the runs recorded before it).
    pub fn without_clique_orbits(mut self) -> Q {
        self.flags.push("--no-clique-orbits");
        self
    }

    /// `{lo..hi}^n` with period `p`.
    pub fn cube(lo: i64, hi: i64, n: usize, p: usize) -> Q {
        Q {
            bounds: vec![(lo, hi); n],
            period: p,
            flags: Vec::new(),
        }
    }

    /// A box given per coordinate.
    pub fn boxed(bounds: &[(i64, i64)], p: usize) -> Q {
        Q {
            bounds: bounds.to_vec(),
            period: p,
            flags: Vec::new(),
        }
    }

    /// The dimension.
    pub fn dim(&self) -> usize {
        self.bounds.len()
    }

    /// The grid in the canonical form the reports use: `-1..1,0..3`.
    pub fn spec(&self) -> String {
        spec_of(&self.bounds)
    }

    /// Number of points of the box.
    pub fn points(&self) -> u64 {
        self.bounds
            .iter()
            .map(|&(a, b)| (b - a + 1) as u64)
            .product()
    }

    /// `--dim N --grid=SPEC --period P`.
    pub fn args(&self) -> Vec<String> {
        let mut args = vec![
            "--dim".into(),
            self.dim().to_string(),
            format!("--grid={}", self.spec()),
            "--period".into(),
            self.period.to_string(),
        ];
        args.extend(self.flags.iter().map(|f| f.to_string()));
        args
    }

    /// A short label for messages.
    pub fn label(&self) -> String {
        format!(
            "grid {} (n = {}), p = {}",
            self.spec(),
            self.dim(),
            self.period
        )
    }

    /// The question as the library's type.
    pub fn question(&self) -> Question {
        let g = Grid::new(self.bounds.clone()).expect("a valid grid");
        Question::new(g, self.period).expect("a valid question")
    }
}

/// `lo..hi` per coordinate, joined by commas.
pub fn spec_of(bounds: &[(i64, i64)]) -> String {
    bounds
        .iter()
        .map(|(a, b)| format!("{a}..{b}"))
        .collect::<Vec<_>>()
        .join(",")
}

/// The expected answer to a question.
#[derive(Clone, Copy, Debug, PartialEq, Eq)]
pub enum Expect {
    /// An isometric p-cycle exists.
    Feasible,
    /// None exists.
    Infeasible,
}

impl Expect {
    /// The verdict word of the JSON report.
    pub fn word(self) -> &'static str {
        match self {
            Expect::Feasible => "feasible",
            Expect::Infeasible => "infeasible",
        }
    }

    /// The exit code.
    pub fn code(self) -> i32 {
        match self {
            Expect::Feasible => FEASIBLE,
            Expect::Infeasible => INFEASIBLE,
        }
    }

    /// Parses `feasible` / `infeasible`.
    pub fn parse(word: &str) -> Option<Expect> {
        match word {
            "feasible" => Some(Expect::Feasible),
            "infeasible" => Some(Expect::Infeasible),
            _ => None,
        }
    }
}

/// The sup-norm distance, computed here without the crate.
pub fn dist(y: &[i64], z: &[i64]) -> i64 {
    assert_eq!(y.len(), z.len(), "points of different dimensions");
    y.iter()
        .zip(z)
        .map(|(a, b)| (a - b).abs())
        .max()
        .unwrap_or(0)
}

/// An isometric-cycle check that shares no code with the crate: `p` points,
/// each in the box, pairwise distinct, and `‖x_i − x_{i+k}‖∞ = ‖x_0 − x_k‖∞`
/// for all `i, k` (indices mod p).
pub fn assert_isometric_cycle(bounds: &[(i64, i64)], orbit: &[Vec<i64>], p: usize, context: &str) {
    let fail = |why: String| -> ! {
        panic!("{context}: the orbit {orbit:?} is not an isometric {p}-cycle in {bounds:?}: {why}")
    };
    if orbit.len() != p {
        fail(format!("it has {} points", orbit.len()));
    }
    for (i, x) in orbit.iter().enumerate() {
        if x.len() != bounds.len() || x.iter().zip(bounds).any(|(v, (a, b))| v < a || v > b) {
            fail(format!("point {i} {x:?} is not in the box"));
        }
    }
    let distinct: HashSet<&Vec<i64>> = orbit.iter().collect();
    if distinct.len() != p {
        fail("some point is repeated".into());
    }
    for k in 1..p {
        let g = dist(&orbit[0], &orbit[k]);
        for i in 0..p {
            let d = dist(&orbit[i], &orbit[(i + k) % p]);
            if d != g {
                fail(format!(
                    "‖x_{i} − x_{}‖ = {d} but ‖x_0 − x_{k}‖ = {g}",
                    (i + k) % p
                ));
            }
        }
    }
}

/// The orbit of a JSON report (or orbit file): a list of integer lists.
pub fn orbit_of(v: &Value) -> Option<Vec<Vec<i64>>> {
    let list = v.get("orbit")?.as_array()?;
    list.iter()
        .map(|p| {
            p.as_array()?
                .iter()
                .map(Value::as_i64)
                .collect::<Option<Vec<i64>>>()
        })
        .collect()
}

/// Checks that a `decide --json` or `decode --json` report answers `q`:
/// its `question` is `q`, its `verdict` agrees with the exit code, and a
/// feasible report's orbit is verified both here and by `orbitcnf check`.
/// Returns the report.
pub fn check_report(dir: &TestDir, q: &Q, run: &Run) -> Value {
    let v = run.json();
    let question = &v["question"];
    if question["dim"] != q.dim()
        || question["grid"] != q.spec().as_str()
        || question["period"] != q.period
    {
        run.fail(
            "the report's question",
            &format!(
                "{{\"dim\":{},\"grid\":\"{}\",\"period\":{}}}",
                q.dim(),
                q.spec(),
                q.period
            ),
            &question.to_string(),
        );
    }
    let verdict = v["verdict"].as_str().unwrap_or("<missing>");
    let want_code = match verdict {
        "feasible" => FEASIBLE,
        "infeasible" if v["certified"] == true => INFEASIBLE,
        "infeasible" => UNCHECKED,
        "unknown" => UNKNOWN,
        other => run.fail("the verdict", "feasible, infeasible or unknown", other),
    };
    run.code(want_code);
    if verdict == "feasible" {
        let orbit = orbit_of(&v)
            .unwrap_or_else(|| run.fail("a feasible report's orbit", "a list of points", "none"));
        assert_isometric_cycle(&q.bounds, &orbit, q.period, &run.shown);
        cli_check(dir, q, &run.stdout);
    } else if v.get("orbit").is_some() {
        run.fail("a report that is not feasible", "no orbit", "an orbit");
    }
    v
}

/// Runs `orbitcnf check` on `orbit_json` (a report or an orbit file) and
/// asserts that it accepts an isometric `q.period`-cycle in `q`'s grid.
pub fn cli_check(dir: &TestDir, q: &Q, orbit_json: &str) -> Value {
    let file = dir.write(&format!("orbit-{}.json", unique()), orbit_json);
    let run = dir.orbitcnf().arg("check").arg(&file).arg("--json").run();
    run.code(0);
    let v = run.json();
    let p = q.period as u64;
    let oc = &v["orbit_check"];
    if v["grid"] != q.spec().as_str() || oc["period"] != p || oc["pairs_checked"] != p * (p - 1) {
        run.fail(
            "check's findings",
            &format!(
                "grid {}, period {p}, {} pairs checked",
                q.spec(),
                p * (p - 1)
            ),
            &v.to_string(),
        );
    }
    v
}

fn unique() -> u64 {
    use std::sync::atomic::{AtomicU64, Ordering};
    static N: AtomicU64 = AtomicU64::new(0);
    N.fetch_add(1, Ordering::Relaxed)
}

/// Decides `q` with `orbitcnf decide --json`, asserts the expected verdict
/// and verifies the orbit of a feasible answer. Returns the report.
pub fn assert_decides(dir: &TestDir, q: &Q, expect: Expect) -> Value {
    let run = dir
        .orbitcnf()
        .arg("decide")
        .args(q.args())
        .arg("--json")
        .run();
    let v = check_report(dir, q, &run);
    if v["verdict"] != expect.word() {
        run.fail(
            &format!("the verdict for {}", q.label()),
            expect.word(),
            v["verdict"].as_str().unwrap_or("<missing>"),
        );
    }
    assert_certified(&run, &v);
    v
}

/// Asserts that the verdict of the report `v` rests on checked evidence: a
/// feasible one on a witness, an infeasible one on an LRAT proof that
/// orbitcnf's checker accepted (with its steps and empty clause), never on a
/// solver's word.
pub fn assert_certified(run: &Run, v: &Value) {
    let kind = v["certificate"]["kind"].as_str().unwrap_or("<missing>");
    match v["verdict"].as_str() {
        Some("feasible") if kind != "witness" => run.fail("the certificate", "witness", kind),
        Some("infeasible") => {
            if kind != "checked-proof" {
                run.fail("the certificate", "checked-proof", kind);
            }
            let steps = v["certificate"]["lrat"]["steps"].as_u64().unwrap_or(0);
            let empty = v["certificate"]["lrat"]["empty_clause_id"]
                .as_u64()
                .unwrap_or(0);
            if steps == 0 || empty == 0 {
                run.fail(
                    "a checked proof",
                    "steps and an empty clause",
                    &v["certificate"].to_string(),
                );
            }
        }
        _ => {}
    }
    if v["verdict"] != "unknown" && v["certified"] != true {
        run.fail("\"certified\"", "true", &v["certified"].to_string());
    }
}

/// Decides `q` through the library with the bundled solver and no limits;
/// a feasible answer's orbit is verified by `orbitcnf::verify::check_orbit`
/// and by [`assert_isometric_cycle`].
pub fn decide_lib(q: &Q) -> Report {
    decide_lib_with(q, &EncodeOptions::default())
}

/// As [`decide_lib`], with the encoding options `options`.
pub fn decide_lib_with(q: &Q, options: &EncodeOptions) -> Report {
    let report = decide::decide(
        &q.question(),
        options,
        &mut Bundled,
        &Limits::default(),
        DEFAULT_MAX_CLAUSES,
    )
    .unwrap_or_else(|e| panic!("{}, {options:?}: decide failed: {e}", q.label()));
    match report.verdict {
        Verdict::Feasible => {
            let orbit = report
                .orbit
                .as_ref()
                .unwrap_or_else(|| panic!("{}: feasible without an orbit", q.label()));
            let check = orbitcnf::verify::check_orbit(&q.bounds, orbit)
                .unwrap_or_else(|e| panic!("{}: check_orbit rejects {orbit:?}: {e}", q.label()));
            assert_eq!(check.period, q.period, "{}", q.label());
            assert_isometric_cycle(&q.bounds, orbit, q.period, &q.label());
        }
        Verdict::Infeasible => {
            assert!(
                report.orbit.is_none(),
                "{}: infeasible with an orbit",
                q.label()
            );
        }
        Verdict::Unknown => panic!(
            "{}: unknown without a limit ({:?})",
            q.label(),
            report.reason
        ),
    }
    report
}

/// Says that a test is skipped, and why, where the person running the tests
/// sees it: libtest captures `eprintln!`, not a direct write to stderr.
pub fn skip(why: &str) {
    use std::io::Write;
    let name = std::thread::current()
        .name()
        .unwrap_or("a test")
        .to_string();
    let _ = writeln!(
        std::io::stderr(),
        "SKIPPED {name}: {why} (under CI this test fails instead)"
    );
}

/// Whether an external program is on the PATH. When it is missing the test
/// fails if the environment variable `CI` is set (CI must install it), and
/// otherwise prints a note and returns false, so the caller skips.
pub fn have_tool(name: &str) -> bool {
    let found = std::env::var_os("PATH").is_some_and(|path| {
        std::env::split_paths(&path).any(|d| {
            let f = d.join(name);
            f.is_file()
                && std::fs::metadata(&f).is_ok_and(|m| {
                    use std::os::unix::fs::PermissionsExt;
                    m.permissions().mode() & 0o111 != 0
                })
        })
    });
    if !found {
        if std::env::var_os("CI").is_some() {
            panic!("{name} is not installed, and CI is set: .ci/run must install it");
        }
        skip(&format!("{name} is not installed"));
    }
    found
}

/// For a test run on purpose (ignored by default): fails at once, naming the
/// program, unless every one of `names` is on the PATH.
pub fn require_tools(names: &[&str]) {
    for name in names {
        assert!(have_tool(name), "this check needs `{name}` on PATH");
    }
}

/// Encodes `q` with the default options to the file `name` in `dir`
/// (`orbitcnf encode`), which must succeed.
pub fn encode(dir: &TestDir, q: &Q, name: &str) {
    dir.orbitcnf()
        .arg("encode")
        .args(q.args())
        .arg("-o")
        .arg(name)
        .run()
        .code(0);
}

/// Asserts that the sweep report `v` set a stored answer aside because its
/// split folder failed the check.
pub fn assert_split_folder_set_aside(v: &serde_json::Value) {
    let reason = v["set_aside"][0]["reason"].as_str().unwrap_or_default();
    assert!(reason.contains("its split folder"), "{}", v["set_aside"]);
}
