//! `cagerank spiral`: wind a pentagon-index spiral and name the isomer it describes, with its
//! IDs in both lists (`C84:all-51591 = C84:IPR-23`).
//!
//! Without `--atoms` the size is inferred: the spiral is wound for every size its largest index
//! allows, and the size is taken when exactly one closes. Numbers come from
//! `identify::numbers` (catalogue first, else a search within its limits).

use super::export::LazyBar;
use super::output::{write_line, Out};
use super::CliError;
use cagerank::catalogue;
use cagerank::id::{IsomerId, List};
use cagerank::identify::numbers::{self, Number, Numbers};
use cagerank::spiral::{canonical_spiral, Spiral};
use serde_json::json;
use std::path::PathBuf;

#[derive(clap::Args, Debug)]
pub struct Args {
    /// The 12 pentagon positions, comma- or space-separated (e.g. 1,7,9,11,13,15,18,20,22,24,26,32).
    #[arg(required = true, value_name = "INDICES", num_args = 1..)]
    pub indices: Vec<String>,
    /// Atom count (default: inferred, when exactly one size closes the spiral).
    #[arg(long)]
    pub atoms: Option<u64>,
    /// One JSON object instead of text.
    #[arg(long)]
    pub json: bool,
    /// Catalogue directory to read isomer numbers from (default: $CAGERANK_CATALOGUE, else
    /// ./catalogues, else the catalogue shipped with this build, when present).
    #[arg(long, value_name = "DIR")]
    pub catalogue: Option<PathBuf>,
    /// Skip looking up isomer numbers (which may search the list).
    #[arg(long)]
    pub no_numbers: bool,
}

pub fn run(args: Args) -> Result<(), CliError> {
    let indices = parse_indices(&args.indices)?;
    let spiral = match args.atoms {
        Some(atoms) => Spiral::from_pentagon_indices(atoms, &indices)
            .map_err(|e| CliError::usage(format!("{e}")))?,
        None => infer_size(&indices)?,
    };
    let atoms = spiral.atoms();
    let cage = spiral.to_cage();
    let canon = canonical_spiral(&cage).ok_or_else(|| {
        CliError::failed("the wound cage has no canonical spiral (internal inconsistency)")
    })?;
    let numbers = if args.no_numbers {
        None
    } else {
        let dir = args
            .catalogue
            .clone()
            .or_else(|| Some(catalogue::default_dir()).filter(|d| d.is_dir()));
        let mut bar = LazyBar::new(format!("numbering C{atoms}"));
        let found = numbers::numbers_with_progress(
            &canon.spiral,
            cage.is_ipr(),
            dir.as_deref(),
            &mut |done, total| bar.update(done, total),
        );
        bar.finish();
        Some(found.map_err(|e| CliError::failed(e.to_string()))?)
    };
    let ids: Vec<String> = numbers
        .map(|n| n.ids(atoms).iter().map(|i| i.to_string()).collect())
        .unwrap_or_default();
    let mut out = Out::stdout();
    let line = if args.json {
        json!({
            "atoms": atoms,
            "ipr": cage.is_ipr(),
            "ids": ids,
            "number": numbers.and_then(|n| n.complete.listed()),
            "ipr_number": numbers.and_then(|n| n.ipr.listed()),
            "spiral": canon.spiral.pentagon_indices(),
            "automorphisms": canon.automorphisms.len(),
        })
        .to_string()
    } else {
        format!(
            "{}\ncanonical spiral {}\ngiven spiral     {}\nsymmetries {}",
            id_text(atoms, numbers),
            canon.spiral,
            spiral,
            canon.automorphisms.len()
        )
    };
    write_line(&mut out, &line)?;
    out.finish()
}

/// `C84:all-51591 = C84:IPR-23`, with `?` for a number not computed.
fn id_text(atoms: usize, numbers: Option<Numbers>) -> String {
    let Some(n) = numbers else {
        return format!("C{atoms}");
    };
    let mut parts = vec![match n.complete {
        Number::Listed(k) => IsomerId::new(atoms as u32, List::All, k).to_string(),
        _ => format!("C{atoms}:all-?"),
    }];
    match n.ipr {
        Number::Listed(k) => parts.push(IsomerId::new(atoms as u32, List::Ipr, k).to_string()),
        Number::NotComputed { .. } => parts.push(format!("C{atoms}:IPR-?")),
        Number::NotListed => {}
    }
    parts.join(" = ")
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

/// The spiral wound at the one size that closes it; refuses when none or several do.
fn infer_size(indices: &[u64]) -> Result<Spiral, CliError> {
    let sizes = cagerank::identify::size::sizes_closing(indices)
        .map_err(|e| CliError::usage(e.to_string()))?;
    match sizes.closing.as_slice() {
        [one] => Ok(one.clone()),
        [] => Err(CliError::usage(format!(
            "no fullerene from C{} to C{} closes this spiral; check the positions, or add --atoms N",
            sizes.tried.0, sizes.tried.1
        ))),
        several => {
            let list: Vec<String> = several.iter().map(|s| format!("C{}", s.atoms())).collect();
            Err(CliError::usage(format!(
                "this spiral closes at {}; add --atoms N to choose",
                list.join(", ")
            )))
        }
    }
}
