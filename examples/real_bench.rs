//! The real-space benchmark (n = 3, p = 9..12, certified) against z3:
//! `cargo run --release --example real_bench -- [SECONDS] [HANDOFF_AFTER] [z3]`.

use std::time::Duration;

use orbitcnf::real::{Handoff, RealOptions, bench};

fn main() {
    let args: Vec<String> = std::env::args().collect();
    let limit = args.get(1).and_then(|a| a.parse().ok()).unwrap_or(3600);
    let mut o = RealOptions::new();
    if let Some(after) = args.get(2).and_then(|a| a.parse().ok()) {
        o.handoff = Some(Handoff {
            command: "cadical -q".into(),
            after: Duration::from_secs(after),
        });
    }
    let z3 = args.iter().any(|a| a == "z3");
    match bench::run(&bench::cases(), &o, Duration::from_secs(limit), z3) {
        Ok(rows) => print!("{}", bench::format(&rows)),
        Err(e) => {
            eprintln!("error: {e}");
            std::process::exit(1);
        }
    }
}
