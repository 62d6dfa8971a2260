//! `check`, `verify-proof` and `check-bundle`: checking evidence that was
//! written earlier, with no solver involved.

use std::path::PathBuf;

use clap::Args;

use orbitcnf::question::MapClass;
use orbitcnf::{Error, bundle, dimacs, evidence, orbit_file};

use super::args::parse_class;
use super::{Outcome, print_either};

/// Arguments of `check`.
#[derive(Args, Debug)]
pub struct CheckArgs {
    /// The orbit file (JSON).
    orbit: PathBuf,
    /// Also build the extension f on the whole grid and check it by exhaustion.
    #[arg(long)]
    map: bool,
    /// Check the orbit as one of this map class (`nonexpansive` or
    /// `topical`) instead of the class the file names (default nonexpansive).
    /// For topical orbits --map checks the unclamped extension (order-preserving,
    /// nonexpansive, f(x + s·1) = f(x) + s·1 on the grid) and the clamped map
    /// of the grid into itself (order-preserving, nonexpansive).
    #[arg(long = "class", value_name = "CLASS", value_parser = parse_class)]
    class: Option<MapClass>,
    /// With --map: write the map as JSON to FILE instead of printing the table.
    #[arg(long, value_name = "FILE", requires = "map")]
    map_out: Option<PathBuf>,
    /// Print one JSON object instead of text.
    #[arg(long)]
    json: bool,
}

/// Runs `check`.
pub fn run_check(a: CheckArgs) -> Outcome {
    let text = std::fs::read_to_string(&a.orbit).map_err(|e| Error::io(&a.orbit, e))?;
    let name = a.orbit.display().to_string();
    let f = orbit_file::parse(&text, &name)?;
    let found = orbit_file::check(&f, a.class, a.map, &name)?;
    let (mut json, mut text) = (found.json, found.text);
    if let Some((map, formula)) = &found.map {
        let entries: Vec<serde_json::Value> = map
            .iter()
            .map(|(z, fz)| serde_json::json!({"x": z, "f": fz}))
            .collect();
        match &a.map_out {
            Some(path) => {
                let mut doc = found.map_doc;
                doc["map"] = serde_json::Value::Array(entries);
                orbitcnf::artifact::write_atomically(path, (doc.to_string() + "\n").as_bytes())?;
                text.push_str(&format!("map          written to {}\n", path.display()));
            }
            None => {
                json["map"] = serde_json::Value::Array(entries);
                text.push_str(&format!("map          x -> f(x), {formula}\n"));
                for (z, fz) in map {
                    text.push_str(&format!("             {z:?} -> {fz:?}\n"));
                }
            }
        }
    }
    print_either(a.json, || json.to_string(), || text)?;
    Ok(0)
}

/// Arguments of `verify-proof`.
#[derive(Args, Debug)]
pub struct VerifyProofArgs {
    /// The CNF (a file written by `orbitcnf encode`, or plain DIMACS).
    cnf: PathBuf,
    /// The LRAT proof (text or binary, either possibly a zstd frame, as
    /// run-cube --proof-encoding zstd keeps cube proofs).
    proof: PathBuf,
    /// Print one JSON object instead of text.
    #[arg(long)]
    json: bool,
}

/// Runs `verify-proof`.
pub fn run_verify_proof(a: VerifyProofArgs) -> Outcome {
    let text = std::fs::read_to_string(&a.cnf).map_err(|e| Error::io(&a.cnf, e))?;
    let name = a.cnf.display().to_string();
    let cnf = if text.starts_with("c orbitcnf-digest") {
        dimacs::parse_cnf_file(&text, &name)?.cnf
    } else {
        dimacs::parse_dimacs(&text, &name)?.0
    };
    let s = evidence::check_proof_file(&cnf, &a.proof)?.summary;
    print_either(
        a.json,
        || {
            serde_json::json!({"accepted": true, "cnf": name, "proof": a.proof.display().to_string(), "summary": s})
                .to_string()
        },
        || {
            format!(
                "proof        accepted: {name} is unsatisfiable\nsteps        {} ({} clauses added, {} deleted, {} hints), empty clause at id {}\n",
                s.steps, s.added, s.deleted, s.hints, s.empty_clause_id
            )
        },
    )?;
    Ok(0)
}

/// Arguments of `check-bundle`.
#[derive(Args, Debug)]
pub struct CheckBundleArgs {
    /// The bundle's folder.
    dir: PathBuf,
    /// Print one JSON object instead of text.
    #[arg(long)]
    json: bool,
}

/// Runs `check-bundle`.
pub fn run_check_bundle(a: CheckBundleArgs) -> Outcome {
    if orbitcnf::real::cubes::is_real_split(&a.dir) {
        return super::real::check_split(&a.dir, a.json);
    }
    if super::real::is_real_bundle(&a.dir) {
        return super::real::check_bundle(&a.dir, a.json);
    }
    let c = bundle::check_bundle(&a.dir)?;
    print_either(
        a.json,
        || serde_json::to_string(&c).expect("serialises"),
        || c.to_text(),
    )?;
    Ok(0)
}
