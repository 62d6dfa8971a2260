//! Decides one real-space question and prints the report as JSON:
//! `cargo run --release --example real_decide -- N P [SECONDS] [CERT_DIR]`.

use std::time::Duration;

use orbitcnf::real::{RealOptions, decide};

fn main() {
    let args: Vec<String> = std::env::args().collect();
    let n: usize = args.get(1).and_then(|a| a.parse().ok()).unwrap_or(3);
    let p: usize = args.get(2).and_then(|a| a.parse().ok()).unwrap_or(9);
    let secs: Option<u64> = args.get(3).and_then(|a| a.parse().ok());
    let mut o = RealOptions::new();
    o.certificate_dir = args.get(4).map(Into::into);
    if std::env::var_os("NOPAT").is_some() {
        o.patterns = false;
    }
    if let Some(after) = std::env::var("HANDOFF").ok().and_then(|a| a.parse().ok()) {
        o.handoff = Some(orbitcnf::real::Handoff {
            command: "cadical -q".into(),
            after: Duration::from_secs(after),
        });
    }
    if std::env::var_os("NOCERT").is_some() {
        o.certify = false;
    }
    let r = decide(n, p, &o, secs.map(Duration::from_secs), &mut |pr| {
        eprintln!(
            "[{:.0}s] conflicts {} decisions {} lemmas {}",
            pr.seconds, pr.stats.conflicts, pr.stats.decisions, pr.lemmas
        )
    });
    match r {
        Ok(r) => println!("{}", serde_json::to_string(&r).unwrap_or_default()),
        Err(e) => {
            eprintln!("error: {e}");
            std::process::exit(1);
        }
    }
}
