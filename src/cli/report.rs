//! `report`: LaTeX, SVG and HTML for papers and talks ([`orbitcnf::render`]).

use std::path::PathBuf;

use clap::Args;

use orbitcnf::Error;
use orbitcnf::render::{self, Format, Picture};

use super::{Outcome, print};

/// Arguments of `report`.
#[derive(Args, Debug)]
pub struct ReportArgs {
    /// A `decide --json` answer (or a stored answer, an orbit file, a
    /// `spectrum --json` sweep), a certificate bundle folder (`decide
    /// --bundle`), or a results store folder (`spectrum --store`).
    input: PathBuf,
    /// `latex` (a standalone document with booktabs tables), `svg` (one
    /// picture, see --picture) or `html` (one self-contained page).
    #[arg(long, value_name = "FORMAT", default_value = "html", value_parser = parse_format)]
    format: Format,
    /// The SVG picture: `cycle` (the orbit as a cycle graph of its distance
    /// profile), `distances` (the distance matrix), `orbit` (the orbit in its
    /// domain), `spectrum` (a store's or sweep's periods). Default: cycle for
    /// an answer, spectrum for a store.
    #[arg(long, value_name = "PICTURE", value_parser = parse_picture)]
    picture: Option<Picture>,
    /// Where to write (default: stdout).
    #[arg(long, short, value_name = "FILE")]
    output: Option<PathBuf>,
}

fn parse_format(s: &str) -> Result<Format, String> {
    s.parse().map_err(|e: Error| e.to_string())
}

fn parse_picture(s: &str) -> Result<Picture, String> {
    s.parse().map_err(|e: Error| e.to_string())
}

/// Runs `report`: loads the input, renders it, writes it.
pub fn run(a: ReportArgs) -> Outcome {
    let loaded = render::input::load(&a.input)?;
    let text = render::render(&loaded, a.format, a.picture)?;
    match &a.output {
        Some(path) if path.as_os_str() != "-" => {
            orbitcnf::artifact::write_atomically(path, text.as_bytes())?;
            eprintln!("report written to {}", path.display());
        }
        _ => print(&text)?,
    }
    Ok(0)
}
