//! `cagerank energy`: relax named isomers with the tight-binding model and report their
//! energies, frontier levels and convergence.
//!
//! Parsing and printing only; the model is `cagerank::energy`.

use super::output::{write_line, Out};
use super::progress;
use super::screen::{check_max_force, CAUTION};
use super::CliError;
use cagerank::catalogue::energies::KJ_PER_MOL_PER_EV;
use cagerank::energy::{self, Relaxed, Settings};
use cagerank::enumerate::{self, Spec};
use cagerank::id::{IsomerId, List};
use cagerank::score::symmetry;
use cagerank::spiral::{canonical_spiral, Spiral};
use rayon::prelude::*;
use serde_json::json;

/// Relax named isomers with the carbon tight-binding model of Xu et al. (1992).
///
/// Prints total energy, energy relative to the lowest isomer named, the tight-binding HOMO-LUMO
/// gap, the residual force and whether the cage kept its bonds. Energies are 0 K electronic
/// energies of the bare cage or cage ion: screening values, not stability predictions.
#[derive(clap::Args, Debug)]
pub struct Args {
    /// Isomers: C84:IPR-23, C84:all-51590, or a bare C84:23 (IPR list with --ipr, else the
    /// complete list).
    #[arg(value_name = "ID", required = true)]
    pub ids: Vec<String>,
    /// Read bare numbers as positions in the IPR list.
    #[arg(long)]
    pub ipr: bool,
    #[command(flatten)]
    pub charge: super::ChargeArg,
    /// Convergence: largest residual force on any atom, eV/Å.
    #[arg(long, value_name = "F", default_value_t = 1e-3)]
    pub max_force: f64,
    /// One JSON object per isomer instead of text.
    #[arg(long)]
    pub json: bool,
    /// No progress bar.
    #[arg(long)]
    pub quiet: bool,
}

struct Named {
    id: IsomerId,
    spiral: Spiral,
    group: String,
}

pub fn run(args: Args) -> Result<(), CliError> {
    check_max_force(args.max_force)?;
    let charge = args.charge.charge;
    let mut ids: Vec<IsomerId> = Vec::new();
    for text in &args.ids {
        let id = IsomerId::parse(text, Some(List::from_ipr(args.ipr)))
            .map_err(|e| CliError::usage(e.to_string()))?;
        if !ids.contains(&id) {
            ids.push(id);
        }
    }
    for id in &ids {
        energy::electron_count(id.atoms as usize, charge)
            .map_err(|e| CliError::usage(e.to_string()))?;
    }
    let named = ids
        .iter()
        .map(|&id| find(id, args.quiet))
        .collect::<Result<Vec<_>, _>>()?;
    let settings = Settings {
        max_force: args.max_force,
        ..Settings::default()
    };
    let bar = progress::bar(named.len() as u64, "relaxing", args.quiet);
    let results = named
        .par_iter()
        .map(|n| {
            let r = energy::relax(&n.spiral.to_cage(), charge, settings);
            bar.inc(1);
            r
        })
        .collect::<Vec<_>>();
    bar.finish_and_clear();
    let results = results
        .into_iter()
        .zip(&named)
        .map(|(r, n)| r.map_err(|e| CliError::failed(format!("{}: {e}", n.id))))
        .collect::<Result<Vec<_>, _>>()?;
    let lowest = results
        .iter()
        .zip(&named)
        .filter(|(r, n)| r.graph_kept && r.converged && n.id.atoms == named[0].id.atoms)
        .map(|(r, _)| r.energy_ev)
        .min_by(f64::total_cmp);
    let mut out = Out::stdout();
    for (r, n) in results.iter().zip(&named) {
        let same_size_low = lowest.filter(|_| n.id.atoms == named[0].id.atoms);
        let rel = same_size_low
            .filter(|_| r.graph_kept && r.converged)
            .map(|low| (r.energy_ev - low) * KJ_PER_MOL_PER_EV);
        if args.json {
            write_line(&mut out, &json_of(n, r, rel, charge).to_string())?;
        } else {
            for line in text_of(n, r, rel, charge) {
                write_line(&mut out, &line)?;
            }
        }
    }
    out.finish()?;
    eprintln!("{CAUTION}");
    Ok(())
}

/// The isomer's canonical spiral and point group, found by enumerating its list.
fn find(id: IsomerId, quiet: bool) -> Result<Named, CliError> {
    let spec = Spec::fullerene(u64::from(id.atoms), id.list.is_ipr())
        .map_err(|e| CliError::usage(e.to_string()))?;
    let bar = progress::bar(0, &format!("finding {id}"), quiet);
    let iso = enumerate::find_by_number(&spec, id.number);
    bar.finish_and_clear();
    let iso = iso.ok_or_else(|| {
        CliError::usage(format!(
            "C{} has no isomer {} in the {}; numbers start at 1",
            id.atoms,
            id.number,
            id.list.words()
        ))
    })?;
    let cage = iso.spiral.to_cage();
    let group = canonical_spiral(&cage)
        .map(|c| {
            symmetry::symmetry(&cage, &c.automorphisms)
                .point_group
                .name()
        })
        .unwrap_or_default();
    Ok(Named {
        id,
        spiral: iso.spiral,
        group,
    })
}

fn text_of(n: &Named, r: &Relaxed, rel: Option<f64>, charge: i32) -> Vec<String> {
    let atoms = r.coords.len() as f64;
    let f = &r.frontier;
    let mut lines = vec![format!(
        "{}  {}  charge {charge:+}  (tight binding, Xu et al. 1992)",
        n.id, n.group
    )];
    lines.push("  energies".into());
    lines.push(format!(
        "    total (eV)                {:.6}  ({:.6} per atom)",
        r.energy_ev,
        r.energy_ev / atoms
    ));
    lines.push(format!(
        "    band, repulsive (eV)      {:.6}, {:.6}",
        r.band_ev, r.repulsive_ev
    ));
    if let Some(rel) = rel {
        lines.push(format!(
            "    relative (kJ/mol)         {rel:.1}  (to the lowest named)"
        ));
    }
    lines.push("  electronic structure".into());
    match f.somo {
        Some(s) => lines.push(format!(
            "    SOMO (eV)                 {:.4}  gap below {:.4}, gap above {:.4}  (open-shell doublet)",
            s.level_ev, s.gap_below_ev, s.gap_above_ev
        )),
        None => lines.push(format!(
            "    HOMO, LUMO, gap (eV)      {:.4}, {:.4}, {:.4}{}",
            f.homo_ev,
            f.lumo_ev,
            f.gap_ev,
            if f.partly_filled {
                "  (open shell: degenerate, partly filled)"
            } else {
                ""
            }
        )),
    }
    lines.push("  relaxation".into());
    lines.push(format!(
        "    max force (eV/Å)          {:.2e}  {} after {} iterations{}",
        r.max_force,
        if r.converged {
            "converged"
        } else {
            "NOT converged"
        },
        r.iterations,
        if r.perturbed {
            ", relaxed again from a perturbed start"
        } else {
            ""
        }
    ));
    lines.push(format!(
        "    bond graph                {}",
        if r.graph_kept {
            "kept (same cage)"
        } else {
            "CHANGED: the cage rearranged; do not rank this result"
        }
    ));
    lines
}

fn json_of(n: &Named, r: &Relaxed, rel: Option<f64>, charge: i32) -> serde_json::Value {
    let f = &r.frontier;
    json!({
        "id": n.id.to_string(),
        "atoms": n.id.atoms,
        "list": n.id.list.tag(),
        "number": (n.id.list == List::All).then_some(n.id.number),
        "ipr_number": n.id.list.is_ipr().then_some(n.id.number),
        "charge": charge,
        "point_group": n.group,
        "energy_ev": r.energy_ev,
        "band_ev": r.band_ev,
        "repulsive_ev": r.repulsive_ev,
        "relative_energy_kj": rel,
        "tb_homo_ev": f.homo_ev,
        "tb_lumo_ev": f.lumo_ev,
        "tb_gap_ev": f.gap_ev,
        "tb_somo_ev": f.somo.map(|s| s.level_ev),
        "open_shell": f.partly_filled || f.somo.is_some(),
        "max_force": r.max_force,
        "iterations": r.iterations,
        "converged": r.converged,
        "graph_kept": r.graph_kept,
        "perturbed": r.perturbed,
    })
}
