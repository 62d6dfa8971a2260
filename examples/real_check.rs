//! Checks a real-space certificate directory and prints the summary as JSON:
//! `cargo run --release --example real_check -- N P DIR`.

use orbitcnf::real::certificate::check_dir;

fn main() {
    let args: Vec<String> = std::env::args().collect();
    let n: usize = args.get(1).and_then(|a| a.parse().ok()).unwrap_or(0);
    let p: usize = args.get(2).and_then(|a| a.parse().ok()).unwrap_or(0);
    let dir = std::path::PathBuf::from(args.get(3).cloned().unwrap_or_default());
    match check_dir(n, p, &dir) {
        Ok(s) => println!("{}", serde_json::to_string(&s).unwrap_or_default()),
        Err(e) => {
            eprintln!("rejected: {e}");
            std::process::exit(1);
        }
    }
}
