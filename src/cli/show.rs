//! `cagerank show`: every descriptor of one isomer, named by its number (`C84:23`) or spiral.
//!
//! Looks the isomer up with the enumerator, asks `score::full_record` for the numbers and prints
//! them as a text block or one JSON object. The science lives in the library.

use super::output::{counted, write_line, Out};
use super::CliError;
use cagerank::enumerate::{self, Spec};
use cagerank::score::{self, nmr, Descriptors, FullRecord, ScoreError};
use cagerank::spiral::{canonical_spiral, Spiral};

/// Shown with every ranking-related output (text after the block, stderr with `--json`).
const CAUTION: &str = "Caution: these descriptors and any ranking built from them are screening \
heuristics, not predictions of real-world stability or safety; refine candidates with quantum \
chemistry.";

/// Show every descriptor of one isomer.
///
/// Descriptors are screening heuristics, not predictions of stability or safety.
#[derive(clap::Args, Debug)]
pub struct Args {
    /// The isomer: `C84:23` (number in the complete list, or in the IPR list with --ipr), or just
    /// the size `C60` together with --spiral.
    #[arg(value_name = "ID")]
    pub id: String,
    /// Read the number in ID as a position in the IPR list.
    #[arg(long)]
    pub ipr: bool,
    /// The 12 pentagon positions of a spiral of this size, comma-separated (e.g. 1,7,9,...).
    #[arg(long, value_name = "INDICES")]
    pub spiral: Option<String>,
    #[command(flatten)]
    pub charge: super::ChargeArg,
    /// One JSON object with every descriptor and the per-bond and per-ring arrays.
    #[arg(long)]
    pub json: bool,
    /// Skip looking up isomer numbers that would need enumerating the whole size.
    #[arg(long)]
    pub no_numbers: bool,
}

pub fn run(args: Args) -> Result<(), CliError> {
    let (atoms, number) = parse_id(&args.id)?;
    let (spiral, number, ipr_number) = match (&args.spiral, number) {
        (Some(list), None) => from_spiral(atoms, list, &args)?,
        (None, Some(n)) => from_number(atoms, n, &args)?,
        (Some(_), Some(_)) => return Err(CliError::usage(
            "give either a number (C84:23) or --spiral with a size (C84 --spiral ...), not both",
        )),
        (None, None) => {
            return Err(CliError::usage(format!(
                "'{}' names a size but no isomer; write C{atoms}:N or add --spiral 1,7,9,...",
                args.id
            )))
        }
    };
    let record = score::full_record(&spiral, number, ipr_number, args.charge.charge).map_err(
        |e| match e {
            ScoreError::Charge(_) => CliError::usage(e.to_string()),
            _ => CliError::failed(e.to_string()),
        },
    )?;
    let mut out = Out::stdout();
    if args.json {
        let text = serde_json::to_string(&record)
            .map_err(|e| CliError::failed(format!("cannot encode JSON: {e}")))?;
        write_line(&mut out, &text)?;
        eprintln!("{CAUTION}");
    } else {
        for line in text_block(&record, &spiral, args.charge.charge) {
            write_line(&mut out, &line)?;
        }
        write_line(&mut out, CAUTION)?;
    }
    out.finish()
}

/// Splits `C84:23` (or `84:23`, or `C84`) into the atom count and the optional number.
fn parse_id(text: &str) -> Result<(u64, Option<u64>), CliError> {
    let bad = || {
        CliError::usage(format!(
            "'{text}' is not an isomer ID; write the size and number like C84:23, or C84 with --spiral"
        ))
    };
    let body = text.trim().trim_start_matches(['C', 'c']);
    let (size, number) = match body.split_once(':') {
        Some((s, n)) => (s, Some(n)),
        None => (body, None),
    };
    let atoms: u64 = size.trim().parse().map_err(|_| bad())?;
    let number = match number {
        Some(n) => match n.trim().parse::<u64>() {
            Ok(k) if k >= 1 => Some(k),
            _ => return Err(bad()),
        },
        None => None,
    };
    Ok((atoms, number))
}

type Located = (Spiral, Option<u64>, Option<u64>);

/// The canonical spiral and numbers of the cage wound from a user's (maybe non-canonical) spiral.
fn from_spiral(atoms: u64, list: &str, args: &Args) -> Result<Located, CliError> {
    if args.ipr {
        return Err(CliError::usage(
            "--ipr chooses the list a number refers to; leave it out when giving --spiral",
        ));
    }
    let indices = parse_indices(list)?;
    let given = Spiral::from_pentagon_indices(atoms, &indices)
        .map_err(|e| CliError::usage(e.to_string()))?;
    let canonical = canonical_spiral(&given.to_cage())
        .ok_or_else(|| CliError::failed("the wound cage has no canonical spiral (internal error)"))?
        .spiral;
    let (number, ipr_number) = if args.no_numbers {
        (None, None)
    } else {
        (
            complete_number(&canonical, atoms),
            enumerate::list_number_of(&canonical, true).ok().flatten(),
        )
    };
    Ok((canonical, number, ipr_number))
}

/// Largest size whose complete list `show` enumerates to find a number (C70 takes about half a
/// minute); beyond it the complete-list number is left out and a note says how to get it.
const COMPLETE_LIST_LIMIT: u64 = 70;

fn complete_number(spiral: &Spiral, atoms: u64) -> Option<u64> {
    if atoms > COMPLETE_LIST_LIMIT {
        eprintln!(
            "cagerank: note: the complete-list number of a C{atoms} isomer needs the whole list; \
             run `cagerank enumerate {atoms} --catalogue` and `cagerank query --atoms {atoms}`"
        );
        return None;
    }
    enumerate::list_number_of(spiral, false).ok().flatten()
}

/// Finds isomer `number` of the complete (or IPR) list of C`atoms` by enumeration.
fn from_number(atoms: u64, number: u64, args: &Args) -> Result<Located, CliError> {
    let spec = Spec::fullerene(atoms, args.ipr).map_err(|e| CliError::usage(e.to_string()))?;
    let list = if args.ipr {
        "IPR list"
    } else {
        "complete list"
    };
    let isomer = enumerate::find_by_number(&spec, number).ok_or_else(|| {
        CliError::usage(format!(
            "C{atoms} has no isomer {number} in the {list}; numbers start at 1 and end at the \
             count that `cagerank enumerate --count-only {atoms}` reports"
        ))
    })?;
    let number = match isomer.number {
        Some(n) => Some(n),
        None if !args.no_numbers => complete_number(&isomer.spiral, atoms),
        None => None,
    };
    Ok((isomer.spiral, number, isomer.ipr_number))
}

fn parse_indices(list: &str) -> Result<Vec<u64>, CliError> {
    list.split([',', ' '])
        .filter(|t| !t.trim().is_empty())
        .map(|t| {
            t.trim().parse::<u64>().map_err(|_| {
                CliError::usage(format!(
                    "'{t}' is not a pentagon position; give 12 positive integers like 1,7,9,..."
                ))
            })
        })
        .collect()
}

/// The human-readable block, one string per line.
fn text_block(r: &FullRecord, spiral: &Spiral, charge: i32) -> Vec<String> {
    let d = &r.descriptors;
    let number = r.number.map_or("?".to_string(), |n| n.to_string());
    let ipr = r
        .ipr_number
        .map_or(String::new(), |n| format!(" (IPR list: {n})"));
    let hexagons: u32 = d.hexagon_neighbours.iter().sum();
    vec![
        format!("C{}:{number}{ipr}  {}", r.atoms, d.point_group),
        format!("spiral                {spiral}"),
        format!(
            "cage                  {} atoms, {} bonds, {} rings ({} pentagons, {hexagons} hexagons)",
            r.atoms,
            r.edges.len(),
            r.faces.len(),
            r.faces.iter().filter(|f| f.len() == 5).count(),
        ),
        format!("symmetry              {}", symmetry_text(d)),
        format!("13C NMR pattern       {}", nmr_text(&d.nmr)),
        format!(
            "pentagon adjacencies  {} (penalty estimate {:.0} kJ/mol at 90 per adjacency)",
            d.pentagon_adjacencies, d.pentagon_penalty_kj
        ),
        format!(
            "hexagon neighbours    k=0..6: {:?}, strain (std. dev. of k) {:.4}",
            d.hexagon_neighbours, d.hexagon_strain
        ),
        huckel_text(d, charge),
        format!("Kekulé structures     {}", d.kekule),
        format!("Pauling bond orders   {}", range_text(&r.pauling_bond_orders)),
        format!("Coulson bond orders   {}", range_text(&r.coulson_bond_orders)),
        format!("ring pi content       {}", ring_text(r)),
    ]
}

/// "D5h, 20 automorphisms, achiral" (shared with `identify`).
pub(super) fn symmetry_text(d: &Descriptors) -> String {
    let chirality = if d.chiral { "chiral" } else { "achiral" };
    format!(
        "{}, {} automorphisms, {chirality}",
        d.point_group, d.automorphisms
    )
}

/// The frontier orbitals: HOMO, LUMO and gap, or for an odd electron count HOMO, SOMO, LUMO
/// and the gaps on either side of the SOMO.
fn huckel_text(d: &Descriptors, charge: i32) -> String {
    let levels = match d.somo {
        None => format!(
            "HOMO {:.4}, LUMO {:.4}, gap {:.4} |beta|",
            d.homo, d.lumo, d.gap
        ),
        Some(somo) => format!(
            "HOMO {:.4}, SOMO {somo:.4}, LUMO {:.4}; SOMO-LUMO gap {:.4}, HOMO-SOMO gap {:.4} |beta|",
            d.homo,
            d.lumo,
            d.gap,
            d.homo - somo
        ),
    };
    format!(
        "Hückel (charge {charge:+})    {levels}, {}, pi energy {:.4} |beta|/atom",
        d.shell.name(),
        d.pi_energy
    )
}

/// "11 lines: 1x4,10x8" (lines x intensity, as the literature writes it; shared with
/// `identify`).
pub(super) fn nmr_text(nmr: &[(u32, u32)]) -> String {
    format!(
        "{}: {}",
        counted(nmr::line_count(nmr), "line", "lines"),
        nmr::format_pattern(nmr)
    )
}

fn range_text(values: &[f64]) -> String {
    if values.is_empty() {
        return "none".to_string();
    }
    let min = values.iter().copied().fold(f64::INFINITY, f64::min);
    let max = values.iter().copied().fold(f64::NEG_INFINITY, f64::max);
    format!("{min:.4} to {max:.4} over {} bonds", values.len())
}

/// Mean ring pi content per ring size, e.g. "pentagons 1.4000, hexagons 2.1600 (mean)".
fn ring_text(r: &FullRecord) -> String {
    let mean_of = |size: usize| {
        let values: Vec<f64> = r
            .faces
            .iter()
            .zip(&r.ring_pi_content)
            .filter(|(f, _)| f.len() == size)
            .map(|(_, &c)| c)
            .collect();
        (!values.is_empty()).then(|| values.iter().sum::<f64>() / values.len() as f64)
    };
    let names = [(4, "squares"), (5, "pentagons"), (6, "hexagons")];
    let parts: Vec<String> = names
        .iter()
        .filter_map(|&(size, name)| mean_of(size).map(|m| format!("{name} {m:.4}")))
        .collect();
    format!("{} (mean per ring)", parts.join(", "))
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn ids_parse_or_fail_cleanly() {
        assert_eq!(parse_id("C84:23").unwrap(), (84, Some(23)));
        assert_eq!(parse_id("60").unwrap(), (60, None));
        assert!(parse_id("C84:0").is_err());
        assert!(parse_id("C84:x").is_err());
        assert!(parse_id("fullerene").is_err());
        assert_eq!(parse_id("C84:-1").unwrap_err().code, 2);
    }
}
