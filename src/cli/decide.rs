//! `decide`, `encode` and `decode`: one question, solved here or elsewhere.

use std::io::{Read, Write};
use std::path::{Path, PathBuf};
use std::time::Duration;

use clap::Args;

use orbitcnf::decide::{self, BundleOutcome, Outputs, Request};
use orbitcnf::proof::LratFormat;
use orbitcnf::question::MapClass;
use orbitcnf::solve::Limits;
use orbitcnf::{Error, Report, dimacs, encode};

use super::args::{
    CertifyArgs, EncodingArgs, ProgressArgs, QuestionArgs, ScaleArgs, parse_seconds,
};
use super::{Outcome, code, print_either};

/// Arguments of `decide`.
#[derive(Args, Debug)]
pub struct DecideArgs {
    #[command(flatten)]
    question: QuestionArgs,
    #[command(flatten)]
    encoding: EncodingArgs,
    /// Give up after this many seconds and answer "unknown" (exit 0).
    #[arg(long, value_name = "SECS", value_parser = parse_seconds)]
    time_limit: Option<Duration>,
    /// Print one JSON object instead of the text report.
    #[arg(long)]
    json: bool,
    #[command(flatten)]
    progress: ProgressArgs,
    /// Write the LRAT proof of an infeasible answer to FILE (text LRAT; the
    /// proof is checked by orbitcnf's own checker in any case).
    #[arg(long, value_name = "FILE", conflicts_with = "no_certify")]
    proof: Option<PathBuf>,
    /// Write a binary DRAT proof of an infeasible answer to FILE, for
    /// external checkers such as rate or drat-trim.
    #[arg(long, value_name = "FILE", conflicts_with = "no_certify")]
    drat: Option<PathBuf>,
    /// The encoding of the LRAT proof written with --proof or --bundle:
    /// text, or binary (about 45% of the size, written and checked faster).
    #[arg(long, value_name = "ENC", default_value = "text")]
    proof_encoding: LratFormat,
    /// Write a certificate bundle to DIR: manifest.json, formula.cnf and
    /// proof.lrat (infeasible) or orbit.json (feasible; map.json with the
    /// whole map on a point set); re-check it with `orbitcnf check-bundle
    /// DIR`. An existing bundle in DIR is replaced whole; an unknown or
    /// unchecked verdict writes nothing. With --real --jobs, DIR is the
    /// split folder with every cube's certificate (kept whatever the
    /// verdict; a rerun into it solves only the cubes without a result).
    #[arg(long, value_name = "DIR", conflicts_with = "no_certify")]
    bundle: Option<PathBuf>,
    /// Also print the explicit map of a feasible answer: the nonexpansive
    /// extension f of the orbit's shift on the whole grid (topical: the
    /// topical extension; --points: the map found), checked by exhaustion,
    /// as `check --map` prints it; in JSON under "explicit_map".
    #[arg(long)]
    map: bool,
    /// With --map: write the map as JSON to FILE (as `check --map-out` does)
    /// instead of printing it.
    #[arg(long, value_name = "FILE", requires = "map")]
    map_out: Option<PathBuf>,
    #[command(flatten)]
    certify: CertifyArgs,
    #[command(flatten)]
    scale: ScaleArgs,
    /// With --solver external:'COMMAND': the bundled solver works first and
    /// hands over what it leaves open. On grids: when the question goes to
    /// cubes (after the probe, or with --jobs/--cubes), the bundled solver
    /// tries each cube for SECS seconds and a cube it leaves unknown goes to
    /// COMMAND (with --proof-arg for its proof, checked and assembled like
    /// the others). With --real: search with the bundled CDCL(T) for SECS
    /// seconds, then hand the propositional refutation of the skeleton plus
    /// the lemmas found to COMMAND (run as COMMAND CNF PROOF; a DRAT proof,
    /// converted to LRAT by `rate` and checked).
    #[arg(long, value_name = "SECS", value_parser = parse_seconds)]
    handoff_after: Option<Duration>,
    /// Decide the question as a resumable campaign in the folder DIR, for
    /// questions too hard for one run: the split is written there (about
    /// --cubes N cubes, a million by default: one per whole profile when
    /// they fit, profile prefixes otherwise) or, when DIR holds a split of
    /// this question, taken up with its cube count and every result kept;
    /// its cubes are solved in blocks of 200 on --jobs threads (every core
    /// by default), each refuted cube's LRAT proof checked and kept with
    /// zstd (with --solver external:'COMMAND' --proof-arg … --handoff-after
    /// SECS, cubes still open after SECS go to COMMAND); then the folder is
    /// merged as `merge DIR` does, and its report printed. A run stopped by
    /// --time-limit (no block starts after it) or killed keeps every
    /// result, and the same command goes on from there; cubes run meanwhile
    /// with `run-cube DIR A..B` (elsewhere too) count. No probe is made.
    #[arg(long, value_name = "DIR", conflicts_with_all = [
        "bundle", "proof", "drat", "map", "no_auto_split", "probe", "probe_conflicts",
    ])]
    split_dir: Option<PathBuf>,
    /// With --real: leave out the order lemmas of the profile (totality,
    /// transitivity, crossing-order, equilateral and top-pattern lemmas,
    /// encodings/real-space.md §5), as before they existed; for comparisons.
    #[arg(long, requires = "real")]
    no_order_lemmas: bool,
}

/// Runs `decide`.
pub fn run_decide(a: DecideArgs) -> Outcome {
    if let Some(n) = a.question.domain.real_dim()? {
        return run_real(n, a);
    }
    let question = a.question.question()?;
    let options = a.encoding.options(question.points.is_some())?;
    if let Some(dir) = &a.split_dir {
        return run_campaign(dir, &a, &question, options);
    }
    let certify = !a.certify.no_certify;
    let req = Request {
        solver: a.scale.solver(certify, a.drat.is_some(), a.handoff_after)?,
        outputs: Outputs {
            proof: a.proof,
            raw_proof: a.drat,
            bundle: a.bundle,
            format: a.proof_encoding,
        },
        limits: Limits {
            time: a.time_limit,
            progress: a.progress.mode(a.json),
            ..Limits::default()
        },
        max_clauses: a.encoding.max_clauses,
        accept_claims: a.certify.accept_claims(),
        question,
        options,
    };
    // Encoding the largest questions walks patterns and profiles for
    // minutes before the first solve; the watcher reports those walks.
    let watch = orbitcnf::progress::Watcher::start(req.limits.progress, "decide");
    let d = decide::run(&req);
    drop(watch);
    let d = d?;
    match &d.bundle {
        BundleOutcome::NotAsked => {}
        BundleOutcome::Written(dir) => {
            eprintln!("certificate bundle written to {}", dir.display());
        }
        BundleOutcome::NotWritten(why) => eprintln!("no bundle written: {why}"),
    }
    if a.map {
        let mut json = serde_json::to_value(&d.report).expect("reports serialise");
        let mut text = d.report.to_text();
        decide_map(a.map_out.as_deref(), &d.report, &mut json, &mut text)?;
        print_either(a.json, || json.to_string(), || text)?;
    } else {
        print_either(a.json, || d.report.to_json(), || d.report.to_text())?;
    }
    Ok(code(d.report.exit_code()))
}

/// `decide --split-dir DIR`: the question as a resumable campaign in DIR
/// ([`orbitcnf::split::campaign`]), printed as `merge` prints its folder.
fn run_campaign(
    dir: &Path,
    a: &DecideArgs,
    q: &orbitcnf::Question,
    options: orbitcnf::encode::EncodeOptions,
) -> Outcome {
    use orbitcnf::split::campaign::{Campaign, CampaignOptions, run_campaign};
    if a.certify.no_certify || a.certify.accept_claims() {
        return Err(Error::Options(
            "a campaign keeps only checked verdicts: every refuted cube's proof is checked".into(),
        ));
    }
    let jobs = a.scale.jobs.unwrap_or_else(orbitcnf::pool::default_jobs);
    if jobs == 0 || a.scale.cubes == Some(0) {
        return Err(Error::Options("--jobs and --cubes need at least 1".into()));
    }
    let handoff = match a.handoff_after {
        Some(after) => Some(a.scale.cube_handoff(true, after)?),
        None if a.scale.solver.external(true)?.is_some() => {
            return Err(Error::Options(
                "a campaign solves its cubes with the bundled solver; an external solver \
                 takes the cubes it leaves open after --handoff-after SECS"
                    .into(),
            ));
        }
        None => None,
    };
    let progress = a.progress.mode(a.json);
    let o = CampaignOptions {
        cubes: a
            .scale
            .cubes
            .unwrap_or(orbitcnf::split::campaign::CAMPAIGN_CUBES),
        jobs,
        time_limit: a.time_limit,
        handoff,
        progress,
        label: format!("decide {}: p={}", q.grid, q.period),
        options,
        max_clauses: a.encoding.max_clauses,
    };
    let folder = dir.display().to_string();
    match run_campaign(dir, q, None, &o)? {
        Campaign::Merged {
            report, taken_up, ..
        } => {
            let how = match taken_up {
                true => "taken up from an earlier run",
                false => "written in this run",
            };
            print_either(
                a.json,
                || {
                    let mut v = serde_json::to_value(&report).expect("serialises");
                    v["split_dir"] = folder.clone().into();
                    v["taken_up"] = taken_up.into();
                    v.to_string()
                },
                || format!("{}campaign     {folder}, {how}\n", report.to_text()),
            )?;
            Ok(code(report.exit_code()))
        }
        Campaign::Unfinished(u) => {
            let why = u.why(&folder, a.time_limit);
            print_either(
                a.json,
                || {
                    serde_json::json!({
                        "verdict": "unknown",
                        "question": q.record(),
                        "statement": q.statement(),
                        "split_dir": folder,
                        "cubes": u.cubes,
                        "finished": u.finished,
                        "reason": why,
                    })
                    .to_string()
                },
                || {
                    format!(
                        "question     {}\nverdict      unknown: {why}\n\
                         next         the same command goes on; `orbitcnf run-cube {folder} A..B` \
                         runs cubes elsewhere meanwhile, `orbitcnf merge {folder}` merges\n",
                        q.statement()
                    )
                },
            )?;
            Ok(code(orbitcnf::report::Verdict::Unknown.exit_code()))
        }
    }
}

/// `decide --real`: the real-space question, with the flags that apply to it.
fn run_real(n: usize, a: DecideArgs) -> Outcome {
    let grid_only = [
        (a.proof.is_some(), "--proof"),
        (a.drat.is_some(), "--drat"),
        (
            a.scale.probe.is_some() || a.scale.probe_conflicts.is_some() || a.scale.no_auto_split,
            "--probe/--no-auto-split",
        ),
        (!a.scale.solver.proof_arg.is_empty(), "--proof-arg"),
        (a.encoding.symmetry != "all", "--symmetry"),
        (
            a.encoding.no_count || a.encoding.no_packing || a.encoding.no_classes,
            "--no-count/--no-packing/--no-classes",
        ),
        (a.encoding.formulation.is_some(), "--formulation"),
        (a.question.class.class != MapClass::Nonexpansive, "--class"),
        (a.split_dir.is_some(), "--split-dir"),
    ];
    if let Some((_, flag)) = grid_only.iter().find(|(on, _)| *on) {
        let hint = if flag.starts_with("--proof") || flag.starts_with("--drat") {
            "; a real-space certificate (Farkas lemmas plus an LRAT proof) is kept with --bundle DIR"
        } else if *flag == "--split-dir" {
            "; with --jobs, --bundle DIR is the real question's resumable split folder"
        } else {
            ""
        };
        return Err(Error::Options(format!(
            "{flag} applies to grid questions, not to --real{hint}"
        )));
    }
    let handoff = super::real::handoff(&a.scale.solver.solver, a.handoff_after)?;
    if a.scale.jobs == Some(0) || a.scale.cubes == Some(0) {
        return Err(Error::Options("--jobs and --cubes need at least 1".into()));
    }
    super::real::decide(super::real::RealDecide {
        n,
        p: a.question.period,
        time_limit: a.time_limit,
        json: a.json,
        progress: a.progress.mode(a.json),
        bundle: a.bundle,
        certify: !a.certify.no_certify,
        handoff,
        order: !a.no_order_lemmas,
        jobs: a.scale.jobs,
        cubes: a.scale.cubes,
    })
}

/// `decide --map`: the explicit map of a feasible answer, added to the JSON
/// and the text, or written to `out`.
fn decide_map(
    out: Option<&Path>,
    report: &Report,
    json: &mut serde_json::Value,
    text: &mut String,
) -> Result<(), Error> {
    let Some(m) = orbitcnf::render::facts::report_map(report)? else {
        if report.orbit.is_some() {
            text.push_str(&format!(
                "map          not built: the box has more than {} points\n",
                orbitcnf::verify::MAP_CHECK_LIMIT
            ));
        }
        return Ok(());
    };
    let orbit = report.orbit.as_deref().unwrap_or_default();
    let doc = m.to_json(&report.question.grid, report.question.class, orbit);
    match out {
        Some(path) => {
            orbitcnf::artifact::write_atomically(path, (doc.to_string() + "\n").as_bytes())?;
            eprintln!("map written to {}", path.display());
        }
        None => {
            json["explicit_map"] = doc;
            text.push_str(&m.to_text());
        }
    }
    Ok(())
}

/// Arguments of `encode`.
#[derive(Args, Debug)]
pub struct EncodeArgs {
    #[command(flatten)]
    question: QuestionArgs,
    #[command(flatten)]
    encoding: EncodingArgs,
    /// Where to write the CNF (`-` for stdout).
    #[arg(long, short, value_name = "FILE")]
    output: PathBuf,
    #[command(flatten)]
    progress: ProgressArgs,
}

/// Runs `encode`.
pub fn run_encode(a: EncodeArgs) -> Outcome {
    let q = a.question.question()?;
    let options = a.encoding.options(q.points.is_some())?;
    let watch = orbitcnf::progress::Watcher::start(a.progress.mode(false), "encode");
    let enc = encode::encode(&q, &options, a.encoding.max_clauses);
    drop(watch);
    let enc = enc?;
    if a.output.as_os_str() == "-" {
        let mut out = std::io::stdout().lock();
        match out.write_all(&dimacs::render_cnf(&enc)) {
            Err(e) if e.kind() != std::io::ErrorKind::BrokenPipe => {
                return Err(Error::io("<stdout>", e));
            }
            _ => {}
        }
    } else {
        dimacs::write_cnf(&enc, &a.output)?;
        eprintln!(
            "wrote {} ({} variables, {} clauses) for {}",
            a.output.display(),
            enc.cnf.num_vars(),
            enc.cnf.num_clauses(),
            q.statement()
        );
    }
    Ok(0)
}

/// Arguments of `decode`.
#[derive(Args, Debug)]
pub struct DecodeArgs {
    /// The CNF file written by `orbitcnf encode`.
    cnf: PathBuf,
    /// The solver's output: `s` line and `v` lines, as DIMACS solvers print
    /// them (`-` reads standard input).
    solver_output: PathBuf,
    /// An LRAT proof (text or binary) backing an "unsatisfiable" answer; it
    /// is checked against the CNF with orbitcnf's own checker. Without it an
    /// "unsatisfiable" is the solver's unchecked claim (see --trust-solver).
    #[arg(long, value_name = "FILE")]
    proof: Option<PathBuf>,
    /// Accept an "unsatisfiable" without a proof as an infeasible verdict,
    /// marked UNCHECKED (exit 21); without this it is reported as unknown.
    #[arg(long, conflicts_with = "proof")]
    trust_solver: bool,
    /// Print one JSON object instead of the text report.
    #[arg(long)]
    json: bool,
}

/// Runs `decode`.
pub fn run_decode(a: DecodeArgs) -> Outcome {
    let file = dimacs::read_cnf_file(&a.cnf)?;
    let (text, out_path) = if a.solver_output.as_os_str() == "-" {
        let mut text = String::new();
        std::io::stdin()
            .read_to_string(&mut text)
            .map_err(|e| Error::io("<stdin>", e))?;
        (text, "<stdin>".to_string())
    } else {
        let text = std::fs::read_to_string(&a.solver_output)
            .map_err(|e| Error::io(&a.solver_output, e))?;
        (text, a.solver_output.display().to_string())
    };
    let answer = dimacs::parse_solver_output(&text, &out_path)?;
    let report = decide::decode_answer(
        &file,
        &a.cnf.display().to_string(),
        &answer,
        &out_path,
        a.proof.as_deref(),
    )?;
    let report = if a.trust_solver {
        report
    } else {
        decide::require_checked(report)
    };
    print_either(a.json, || report.to_json(), || report.to_text())?;
    Ok(code(report.exit_code()))
}
