//! `cagerank spiral`: wind a pentagon-index spiral and name the isomer it describes.

use super::output::{write_line, Out};
use super::CliError;
use cagerank::enumerate;
use cagerank::spiral::{canonical_spiral, Spiral};
use serde_json::json;

#[derive(clap::Args, Debug)]
pub struct Args {
    /// The 12 pentagon positions, comma- or space-separated (e.g. 1,7,9,11,13,15,18,20,22,24,26,32).
    #[arg(required = true, value_name = "INDICES", num_args = 1..)]
    pub indices: Vec<String>,
    /// Atom count (default: the smallest cage whose faces include the last index).
    #[arg(long)]
    pub atoms: Option<u64>,
    /// One JSON object instead of text.
    #[arg(long)]
    pub json: bool,
    /// Skip looking up isomer numbers (which enumerates the whole size).
    #[arg(long)]
    pub no_numbers: bool,
}

pub fn run(args: Args) -> Result<(), CliError> {
    let indices = parse_indices(&args.indices)?;
    let atoms = match args.atoms {
        Some(a) => a,
        None => default_atoms(&indices),
    };
    let spiral = Spiral::from_pentagon_indices(atoms, &indices)
        .map_err(|e| CliError::usage(format!("{e}")))?;
    let cage = spiral.to_cage();
    let canon = canonical_spiral(&cage).ok_or_else(|| {
        CliError::failed("the wound cage has no canonical spiral (internal inconsistency)")
    })?;
    let (number, ipr_number) = if args.no_numbers {
        (None, None)
    } else {
        enumerate::numbers_of(&canon.spiral)
    };
    let mut out = Out::stdout();
    let line = if args.json {
        json!({
            "atoms": atoms,
            "ipr": cage.is_ipr(),
            "number": number,
            "ipr_number": ipr_number,
            "spiral": canon.spiral.pentagon_indices(),
            "automorphisms": canon.automorphisms.len(),
        })
        .to_string()
    } else {
        let num = number.map_or("?".into(), |n| n.to_string());
        let ipr = ipr_number.map_or(String::new(), |n| format!(" (IPR {n})"));
        format!(
            "C{atoms}:{num}{ipr}\ncanonical spiral {}\ngiven spiral     {}\nsymmetries {}",
            canon.spiral,
            spiral,
            canon.automorphisms.len()
        )
    };
    write_line(&mut out, &line)?;
    out.finish()
}

fn parse_indices(parts: &[String]) -> Result<Vec<u64>, CliError> {
    parts
        .iter()
        .flat_map(|p| p.split([',', ' ']))
        .filter(|t| !t.trim().is_empty())
        .map(|t| {
            t.trim().parse::<u64>().map_err(|_| {
                CliError::usage(format!(
                    "'{t}' is not a pentagon position; give 12 positive integers such as 1,7,9,..."
                ))
            })
        })
        .collect()
}

/// Smallest fullerene size with at least as many faces as the last index (faces = n/2 + 2).
fn default_atoms(indices: &[u64]) -> u64 {
    let last = indices.iter().copied().max().unwrap_or(12).max(12);
    let n = 2 * (last.saturating_sub(2));
    if n == 22 {
        24
    } else {
        n.max(20)
    }
}
