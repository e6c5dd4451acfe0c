//! `cagerank show`: every descriptor of one isomer, named by its ID (`C84:IPR-23`) or spiral,
//! with its stored tight-binding energy when the catalogue has one; or of one derivative,
//! named by its pattern ID (`C60:IPR-1+2H:5`): sites, the pattern's symmetry, the remaining pi
//! system's Kekulé count and Hückel levels, and its place in the default ranking.
//!
//! Looks the isomer up through `identify::numbers` (a catalogue index when one holds the size,
//! else a search that stops at the isomer), asks `score::full_record` for the numbers and prints
//! them grouped under topology, electronic structure, symmetry and energies, or as one JSON
//! object. Cages of the other face sets (`B12N12:4-6-iso-1`, `C24:4-5-6-all-7`,
//! `C40:5-6-7h1-all-3`) get the same layout with their face counts and contacts, and a 4-6
//! cage its BN values from `score::boron_nitride`. The science lives in the library.

use super::output::{counted, write_line, Out};
use super::query::{catalogue_dir, catalogue_error};
use super::CliError;
use cagerank::cage::FaceSet;
use cagerank::catalogue::energies::{self, EnergyHeader, EnergyRecord};
use cagerank::derivative::named::{Named, Rank, RANK_LIMIT};
use cagerank::derivative::{huckel, BondFilter, Hetero, Kind, PatternId};
use cagerank::enumerate;
use cagerank::export::Numbers;
use cagerank::id::{IsomerId, List};
use cagerank::score::boron_nitride::{self, BnDescriptors, RankFacts};
use cagerank::score::{self, nmr, Descriptors, FullRecord, ScoreError};
use cagerank::spiral::{canonical_spiral, Spiral};
use std::path::{Path, PathBuf};

/// Shown with every ranking-related output (text after the block, stderr with `--json`).
const CAUTION: &str = "Caution: these descriptors, energies and any ranking built from them are \
screening heuristics, not predictions of real-world stability or safety; refine candidates with \
quantum chemistry.";

/// Show every descriptor of one isomer.
///
/// Descriptors are screening heuristics, not predictions of stability or safety.
#[derive(clap::Args, Debug)]
pub struct Args {
    /// The isomer: `C84:IPR-23` (IPR list), `C84:all-51591` (complete list), a bare `C84:23`
    /// (complete list, or the IPR list with --ipr), or just the size `C60` with --spiral; or a
    /// derivative by pattern ID, `C60:IPR-1+2H:5` (see `cagerank derive`).
    #[arg(value_name = "ID")]
    pub id: String,
    /// Read a bare number in ID as a position in the IPR list.
    #[arg(long)]
    pub ipr: bool,
    /// The 12 pentagon positions of a spiral of this size, comma-separated (e.g. 1,7,9,...).
    #[arg(long, value_name = "INDICES")]
    pub spiral: Option<String>,
    #[command(flatten)]
    pub charge: super::ChargeArg,
    /// Catalogue to look numbers and stored energies up in [default: $CAGERANK_CATALOGUE, else
    /// ./catalogues, else the catalogue shipped with this build].
    #[arg(long, value_name = "DIR")]
    pub catalogue: Option<PathBuf>,
    /// One JSON object with every descriptor and the per-bond and per-ring arrays.
    #[arg(long)]
    pub json: bool,
    /// Skip looking up isomer numbers that would need enumerating the whole size.
    #[arg(long)]
    pub no_numbers: bool,
}

pub fn run(args: Args) -> Result<(), CliError> {
    let dir = catalogue_dir(&args.catalogue);
    if super::export::is_pattern(&args.id) {
        return show_pattern(&args, &dir);
    }
    let (atoms, id) = parse_id(&args.id, args.ipr)?;
    score::check_size(usize::try_from(atoms).unwrap_or(usize::MAX))
        .map_err(|e| CliError::usage(e.to_string()))?;
    if let Some(id) = id.filter(|id| id.face_set != FaceSet::Fullerene) {
        return show_cage(id, &dir, &args);
    }
    let (spiral, number, ipr_number) = match (&args.spiral, id) {
        (Some(list), None) => from_spiral(atoms, list, &args)?,
        (None, Some(id)) => from_id(id, &dir, &args)?,
        (Some(_), Some(_)) => return Err(CliError::usage(
            "give either an ID (C84:IPR-23) or --spiral with a size (C84 --spiral ...), not both",
        )),
        (None, None) => {
            return Err(CliError::usage(format!(
                "'{}' names a size but no isomer; write C{atoms}:IPR-N or C{atoms}:all-N, or add --spiral 1,7,9,...",
                cagerank::id::printable(&args.id)
            )))
        }
    };
    let charge = args.charge.charge;
    let record = score::full_record(&spiral, number, ipr_number, charge).map_err(|e| match e {
        ScoreError::Charge(_) | ScoreError::TooLarge { .. } => CliError::usage(e.to_string()),
        _ => CliError::failed(e.to_string()),
    })?;
    let stored = stored_energy(&dir, &record, charge)?;
    let mut out = Out::stdout();
    if args.json {
        let mut value = serde_json::to_value(&record)
            .map_err(|e| CliError::failed(format!("cannot encode JSON: {e}")))?;
        if let (Some(map), Some(s)) = (value.as_object_mut(), &stored) {
            map.insert("energy_ev".into(), s.record.energy_ev.into());
            map.insert("relative_energy_kj".into(), s.relative_kj.into());
            map.insert("tb_gap_ev".into(), s.record.gap_ev.into());
            map.insert("energy_list".into(), s.list.tag().into());
        }
        write_line(&mut out, &value.to_string())?;
        eprintln!("{CAUTION}");
    } else {
        for line in text_block(&record, &spiral, charge, stored.as_ref()) {
            write_line(&mut out, &line)?;
        }
        write_line(&mut out, CAUTION)?;
    }
    out.finish()
}

/// Shows one cage of another face set: its own layout (or JSON object) and the caution.
fn show_cage(id: IsomerId, dir: &Path, args: &Args) -> Result<(), CliError> {
    if args.spiral.is_some() {
        return Err(CliError::usage(
            "--spiral takes fullerene pentagon positions; give a face-set ID alone",
        ));
    }
    let charge = args.charge.charge;
    let catalogue = dir.is_dir().then_some(dir);
    let (spiral, numbers) = super::export::locate(id, catalogue, !args.no_numbers)?;
    let record = score::full_record(&spiral, numbers.number, numbers.ipr_number, charge).map_err(
        |e| match e {
            ScoreError::Charge(_) | ScoreError::TooLarge { .. } => CliError::usage(e.to_string()),
            _ => CliError::failed(e.to_string()),
        },
    )?;
    let cage = spiral.to_cage();
    let bn = match id.face_set {
        FaceSet::SquareHexagon if charge != 0 => {
            return Err(CliError::usage(
                "a 4-6 cage is shown as the neutral BN cage; leave out --charge",
            ))
        }
        FaceSet::SquareHexagon => {
            let canonical = canonical_spiral(&cage)
                .ok_or_else(|| CliError::failed("the cage has no canonical spiral"))?;
            Some(
                boron_nitride::describe_bn(&cage, &canonical)
                    .map_err(|e| CliError::failed(e.to_string()))?,
            )
        }
        _ => None,
    };
    let facts = boron_nitride::rank_facts(&cage, id.face_set, record.descriptors.gap, bn.as_ref());
    let ids: Vec<String> = [(List::All, record.number), (List::Ipr, record.ipr_number)]
        .iter()
        .filter_map(|&(list, n)| n.map(|n| IsomerId::of(id.face_set, id.atoms, list, n)))
        .map(|i| i.to_string())
        .collect();
    let ids = if ids.is_empty() {
        id.to_string()
    } else {
        ids.join(" = ")
    };
    let mut out = Out::stdout();
    if args.json {
        let mut value = serde_json::to_value(&record)
            .map_err(|e| CliError::failed(format!("cannot encode JSON: {e}")))?;
        if let Some(map) = value.as_object_mut() {
            let counts = cage.face_size_counts();
            map.insert("id".into(), id.to_string().into());
            map.insert("face_set".into(), id.face_set.to_string().into());
            map.insert("formula".into(), id.formula().into());
            map.insert(
                "face_counts".into(),
                serde_json::json!({"4": counts[4], "5": counts[5], "6": counts[6], "7": counts[7]}),
            );
            map.insert("square_adjacencies".into(), cage.adjacencies_of(4).into());
            if let Some(b) = &bn {
                map.insert("bn".into(), cagerank::export::cages::bn_json(b));
            }
        }
        write_line(&mut out, &value.to_string())?;
        eprintln!("{CAUTION}");
    } else {
        let lines = cage_block(
            id,
            &ids,
            &record,
            &spiral,
            bn.as_ref(),
            (&facts, cage.adjacencies_of(4)),
            charge,
        );
        for line in lines {
            write_line(&mut out, &line)?;
        }
        write_line(&mut out, CAUTION)?;
    }
    out.finish()
}

/// The block of a cage of another face set, grouped as for fullerenes: identity, topology
/// (face counts and contacts), electronic structure (BN Hückel for 4-6, carbon otherwise),
/// symmetry (NMR patterns) and the keys of the set's default order.
fn cage_block(
    id: IsomerId,
    ids: &str,
    r: &FullRecord,
    spiral: &Spiral,
    bn: Option<&BnDescriptors>,
    (facts, square_adjacencies): (&RankFacts, usize),
    charge: i32,
) -> Vec<String> {
    let d = &r.descriptors;
    let row = |label: &str, value: String| format!("  {label:<31}{value}");
    let counts = {
        let mut c = [0usize; 9];
        for f in &r.faces {
            c[f.len().min(8)] += 1;
        }
        c
    };
    let names = [
        (4, "squares"),
        (5, "pentagons"),
        (6, "hexagons"),
        (7, "heptagons"),
    ];
    let rings: Vec<String> = names
        .iter()
        .filter(|&&(s, _)| counts[s] > 0)
        .map(|&(s, name)| format!("{} {name}", counts[s]))
        .collect();
    let group = bn.map_or(d.point_group.name(), |b| b.point_group.name());
    let what = match bn {
        Some(_) => format!(
            "{} (squares and hexagons) as {}, boron on atom 0 of the canonical-spiral winding",
            id.face_set,
            id.formula()
        ),
        None => {
            let sizes: Vec<String> = id.face_set.sizes().iter().map(u8::to_string).collect();
            format!(
                "{} (rings of {} atoms), carbon",
                id.face_set,
                sizes.join(", ")
            )
        }
    };
    let mut lines = vec![
        format!("{ids}  {group}  charge {charge:+}"),
        "identity".to_string(),
        row("IDs", ids.to_string()),
        row("face set", what),
        row("canonical spiral (face sizes)", spiral.to_string()),
        "topology".to_string(),
        row(
            "atoms, bonds, rings",
            format!(
                "{}, {}, {} ({})",
                r.atoms,
                r.edges.len(),
                r.faces.len(),
                rings.join(", ")
            ),
        ),
    ];
    if counts[4] > 0 {
        let isolated = if square_adjacencies == 0 {
            " (isolated squares)"
        } else {
            ""
        };
        lines.push(row(
            "square adjacencies",
            format!("{square_adjacencies}{isolated}"),
        ));
    }
    if counts[5] > 0 {
        lines.push(row(
            "pentagon adjacencies",
            d.pentagon_adjacencies.to_string(),
        ));
    }
    if let FaceSet::PentagonHexagonHeptagon { heptagons } = id.face_set {
        lines.push(row(
            "heptagons",
            format!("{} (list bound {heptagons})", counts[7]),
        ));
    }
    match bn {
        Some(b) => {
            lines.push(
                "electronic structure (BN Hückel, Van-Catledge 1980: h_B -0.45, h_N 0.51, k_BN 0.66)"
                    .to_string(),
            );
            lines.push(row(
                "HOMO, LUMO, gap (|beta|)",
                format!("{:.4}, {:.4}, {:.4}", b.homo, b.lumo, b.gap),
            ));
            lines.push(row(
                "pi energy (|beta|)",
                format!("{:.4} ({} pi electrons from N)", b.pi_energy, r.atoms),
            ));
            lines.push("symmetry".to_string());
            lines.push(row(
                "point group (B/N cage)",
                format!(
                    "{}, {} automorphisms, {} (bare cage {})",
                    b.point_group.name(),
                    b.automorphisms,
                    if b.chiral { "chiral" } else { "achiral" },
                    b.cage_point_group.name()
                ),
            ));
            lines.push(row("11B NMR pattern", nmr_text(&b.boron_nmr)));
            lines.push(row("15N NMR pattern", nmr_text(&b.nitrogen_nmr)));
            lines.push(row(
                "B and N swapped",
                if b.swap_equivalent {
                    "the same molecule (a symmetry of the cage swaps them)".to_string()
                } else {
                    "a different BN cage on the same graph".to_string()
                },
            ));
        }
        None => {
            lines.push(row("Kekulé structures", d.kekule.to_string()));
            lines.push(row(
                "Pauling bond orders",
                range_text(&r.pauling_bond_orders),
            ));
            lines.push(format!("electronic structure (Hückel, charge {charge:+})"));
            lines.extend(huckel_rows(d).into_iter().map(|(l, v)| row(l, v)));
            lines.push("symmetry".to_string());
            lines.push(row("point group", symmetry_text(d)));
            lines.push(row("13C NMR pattern", nmr_text(&d.nmr)));
        }
    }
    lines.push(format!(
        "ranking (default order of {}, score::boron_nitride::default_order)",
        id.face_set
    ));
    let mut keys = Vec::new();
    if let FaceSet::PentagonHexagonHeptagon { .. } = id.face_set {
        keys.push(format!("heptagons {}", facts.heptagons));
        keys.push(format!(
            "pentagon adjacencies {}",
            facts.isolated_adjacencies
        ));
    } else {
        keys.push(format!("square adjacencies {}", facts.isolated_adjacencies));
    }
    keys.push(format!(
        "{} {:.4}",
        if bn.is_some() { "BN gap" } else { "gap" },
        facts.gap
    ));
    lines.push(row("keys in order", keys.join("; ")));
    lines.push(row(
        "energies",
        "not computed: the tight-binding screen runs for fullerenes only".to_string(),
    ));
    lines
}

/// Shows one derivative: the pattern's block (or JSON object) and the caution.
fn show_pattern(args: &Args, dir: &Path) -> Result<(), CliError> {
    if args.spiral.is_some() {
        return Err(CliError::usage(
            "a pattern ID names its parent already; leave out --spiral",
        ));
    }
    let catalogue = dir.is_dir().then_some(dir);
    let (parent_id, numbers, named) = super::export::locate_pattern(
        &args.id,
        args.ipr,
        catalogue,
        !args.no_numbers && u64::from(parent_id_atoms(&args.id)) <= COMPLETE_LIST_LIMIT,
        Some(args.charge.charge),
    )?;
    let rank = named.rank(RANK_LIMIT);
    let (centres, electrons) = named.pi_system();
    let parent_ids = parent_ids_text(parent_id, numbers);
    let mut out = Out::stdout();
    if args.json {
        let mut value = serde_json::to_value(&named.score)
            .map_err(|e| CliError::failed(format!("cannot encode JSON: {e}")))?;
        if let Some(map) = value.as_object_mut() {
            map.insert("formula".into(), named.formula().into());
            map.insert("parent".into(), parent_id.to_string().into());
            map.insert("parent_number".into(), numbers.number.into());
            map.insert("parent_ipr_number".into(), numbers.ipr_number.into());
            map.insert(
                "parent_spiral".into(),
                named.parent.spiral.to_string().into(),
            );
            map.insert("kind".into(), named.id.kind.token().into());
            map.insert("k".into(), named.id.k.into());
            map.insert("charge".into(), named.charge.into());
            map.insert("pi_centres".into(), centres.into());
            map.insert("pi_electrons".into(), electrons.into());
            map.insert(
                "group_order".into(),
                named.parent.automorphisms.len().into(),
            );
            map.insert(
                "heteroatom_parameters".into(),
                hetero_parameters(named.id.kind).into(),
            );
            map.insert("rank".into(), rank.map(|r| r.position).into());
            map.insert("rank_of".into(), rank.map(|r| r.of).into());
        }
        write_line(&mut out, &value.to_string())?;
        eprintln!("{CAUTION}");
    } else {
        let block = pattern_block(&named, &parent_ids, (centres, electrons), rank);
        for line in block {
            write_line(&mut out, &line)?;
        }
        write_line(&mut out, CAUTION)?;
    }
    out.finish()
}

/// The atom count of a pattern ID's parent, for deciding whether the complete-list number is
/// worth a search (0 when it does not parse; `locate_pattern` reports that properly).
fn parent_id_atoms(text: &str) -> u32 {
    PatternId::parse(text)
        .ok()
        .and_then(|p| IsomerId::parse(&p.parent, Some(List::All)).ok())
        .map_or(0, |id| id.atoms)
}

/// "C60:IPR-1 = C60:all-1812": the parent's ID as asked and its ID in the other list.
fn parent_ids_text(id: IsomerId, numbers: Numbers) -> String {
    let mut text = id.to_string();
    for (list, n) in [(List::All, numbers.number), (List::Ipr, numbers.ipr_number)] {
        if let Some(n) = n.filter(|_| list != id.list) {
            text.push_str(&format!(" = {}", IsomerId::new(id.atoms, list, n)));
        }
    }
    text
}

/// The Van-Catledge parameters the pattern's Hückel levels use, as text.
fn hetero_parameters(kind: Kind) -> String {
    let h = |x: Option<Hetero>| huckel::coulomb(x);
    let k = |a: Option<Hetero>, b: Option<Hetero>| huckel::resonance(a, b);
    match kind {
        Kind::Substitute(x) => {
            let s = x.symbol();
            format!(
                "h_{s} {:.2}, k_C{s} {:.2}, k_{s}{s} {:.2} (Van-Catledge 1980)",
                h(Some(x)),
                k(None, Some(x)),
                k(Some(x), Some(x))
            )
        }
        _ => "none (carbon only: h 0, k 1)".to_string(),
    }
}

/// What the pattern places, in words: "2 H addends on atoms", "2 CH2 bridges on 6:6 bonds".
fn kind_words(kind: Kind, k: usize) -> String {
    let plural = |one: &str, many: &str| if k == 1 { one } else { many }.to_string();
    match kind {
        Kind::Addend(a) => format!("{k} {} {}", a.symbol(), plural("addend", "addends")),
        Kind::Bridge(f) => format!(
            "{k} CH2 {} {}",
            plural("bridge", "bridges"),
            match f {
                BondFilter::Any => "across bonds",
                BondFilter::HexHex => "across 6:6 bonds",
                BondFilter::PentHex => "across 6:5 bonds",
            }
        ),
        Kind::Substitute(h) => format!(
            "{k} {} {} in place of carbon",
            h.symbol(),
            plural("atom", "atoms")
        ),
    }
}

/// The pattern's block, grouped under identity, symmetry, pi system, electronic structure and
/// ranking, with units in the labels.
fn pattern_block(
    named: &Named,
    parent_ids: &str,
    (centres, electrons): (usize, i64),
    rank: Option<Rank>,
) -> Vec<String> {
    let s = &named.score;
    let row = |label: &str, value: String| format!("  {label:<31}{value}");
    let on_bonds = named.id.kind.on_bonds();
    let places = if on_bonds {
        format!(
            "{} 6:6, {} 6:5, {} 5:5 bonds",
            s.bonds_66, s.bonds_56, s.bonds_55
        )
    } else {
        format!(
            "{} on a pentagon, {} only on hexagons",
            s.pentagon_atoms, s.hexagon_atoms
        )
    };
    let charge = named.charge;
    let mut lines = vec![
        format!(
            "{}  {}  {}  charge {charge:+}",
            named.id,
            named.formula(),
            s.point_group
        ),
        "identity".to_string(),
        row("pattern ID", named.id.to_string()),
        row("parent", parent_ids.to_string()),
        row("parent canonical spiral", named.parent.spiral.to_string()),
        row("formula", named.formula()),
        row("what", kind_words(named.id.kind, named.id.k)),
        row(
            if on_bonds {
                "sites (bonds: atoms)"
            } else {
                "sites (atoms)"
            },
            named.sites_text(),
        ),
        row("where", places),
        "symmetry".to_string(),
        row(
            "point group (stabiliser)",
            format!(
                "{}, {} of {} automorphisms, {}",
                s.point_group,
                s.stabiliser,
                named.parent.automorphisms.len(),
                if s.chiral { "chiral" } else { "achiral" }
            ),
        ),
        row(
            "equivalent placements",
            format!("{} (orbit on the numbered cage)", s.orbit),
        ),
        "pi system (remaining graph)".to_string(),
        row("pi centres, electrons", format!("{centres}, {electrons}")),
        row("Kekulé structures", s.kekule.clone()),
        row(
            "radical",
            if s.radical {
                "yes: no Kekulé structure, the neutral derivative is a radical".to_string()
            } else if !s.kekule_structure {
                "no closed-shell Kekulé structure (charged or substituted)".to_string()
            } else {
                "no".to_string()
            },
        ),
        format!("electronic structure (Hückel, charge {charge:+})"),
        row("heteroatom parameters", hetero_parameters(named.id.kind)),
        row(
            "HOMO, LUMO, gap (|beta|)",
            format!("{:.4}, {:.4}, {:.4}", s.homo, s.lumo, s.gap),
        ),
        row(
            "pi energy (|beta|)",
            format!(
                "{:.4} total, {:.4} per pi centre",
                s.pi_energy,
                s.pi_energy / centres.max(1) as f64
            ),
        ),
        "ranking (default screening order, docs/derivatives.md)".to_string(),
    ];
    lines.push(row(
        "rank in its list",
        match rank {
            Some(r) => format!(
                "{} of {} ({}+{}{} with charge {charge:+})",
                r.position,
                r.of,
                named.parent.label,
                named.id.k,
                named.id.kind.token()
            ),
            None => format!(
                "not computed: the list has more than {RANK_LIMIT} patterns; `cagerank derive` \
                 with --top T ranks it"
            ),
        },
    ));
    lines.push(row(
        "keys in order",
        format!(
            "Kekulé structure {}; pi energy {:.4}; gap {:.4}; Kekulé count {}",
            if s.kekule_structure { "yes" } else { "no" },
            s.pi_energy,
            s.gap,
            s.kekule
        ),
    ));
    lines
}

/// Splits `C84:IPR-23`, `C84:23` (list from `--ipr`) or a bare size `C84` into the atom count
/// and the optional ID.
fn parse_id(text: &str, ipr: bool) -> Result<(u64, Option<IsomerId>), CliError> {
    if text.contains([':', '_']) {
        let id = IsomerId::parse(text, Some(List::from_ipr(ipr)))
            .map_err(|e| CliError::usage(e.to_string()))?;
        return Ok((u64::from(id.atoms), Some(id)));
    }
    let size = text.trim().trim_start_matches(['C', 'c']);
    match size.parse::<u64>() {
        Ok(atoms) if size.bytes().all(|b| b.is_ascii_digit()) => Ok((atoms, None)),
        _ => Err(CliError::usage(format!(
            "'{}' is not an isomer ID; write C84:IPR-23 or C84:all-23, or a size like C84 with --spiral",
            cagerank::id::printable(text)
        ))),
    }
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

/// Largest size whose complete list `show` searches to find a number when no catalogue holds
/// it (C70 takes seconds); beyond it the number is left out and a note says how to get it.
const COMPLETE_LIST_LIMIT: u64 = 70;

fn complete_number(spiral: &Spiral, atoms: u64) -> Option<u64> {
    if atoms > COMPLETE_LIST_LIMIT {
        complete_number_note(atoms);
        return None;
    }
    enumerate::list_number_of(spiral, false).ok().flatten()
}

fn complete_number_note(atoms: u64) {
    eprintln!(
        "cagerank: note: the complete-list number of a C{atoms} isomer needs the whole list; \
         run `cagerank enumerate {atoms} --catalogue` once and `show` reads it from there"
    );
}

/// Finds the isomer named by `id`: by index in a catalogue that holds its list, else by a search
/// that stops at it (with a progress bar on a terminal).
fn from_id(id: IsomerId, dir: &Path, args: &Args) -> Result<Located, CliError> {
    let both = !args.no_numbers && u64::from(id.atoms) <= COMPLETE_LIST_LIMIT;
    let catalogue = dir.is_dir().then_some(dir);
    let (spiral, numbers) = super::export::locate(id, catalogue, both)?;
    if !args.no_numbers && numbers.number.is_none() && id.list.is_ipr() {
        complete_number_note(u64::from(id.atoms));
    }
    Ok((spiral, numbers.number, numbers.ipr_number))
}

/// A stored tight-binding result for the shown isomer and charge.
struct Stored {
    record: EnergyRecord,
    relative_kj: Option<f64>,
    /// The list whose screen stored it (relative energies are within that list).
    list: List,
    /// How many isomers of that list have stored energies.
    relaxed: usize,
}

/// The isomer's stored energy for `charge`, from the IPR list's screen if there is one, else
/// the complete list's.
fn stored_energy(dir: &Path, r: &FullRecord, charge: i32) -> Result<Option<Stored>, CliError> {
    if !dir.is_dir() {
        return Ok(None);
    }
    let spiral_faces = r.spiral.iter().map(|&p| (p, 5u8)).collect::<Vec<_>>();
    for (list, number) in [(List::Ipr, r.ipr_number), (List::All, r.number)] {
        let Some(number) = number else { continue };
        let key = EnergyHeader {
            face_set: FaceSet::Fullerene,
            atoms: r.atoms as u32,
            ipr: list.is_ipr(),
            charge,
            model: cagerank::screen::MODEL.to_string(),
            max_force: 0.0,
            made_by: String::new(),
        };
        let Some(energies) = energies::read(dir, &key).map_err(catalogue_error)? else {
            continue;
        };
        if let Some(e) = energies
            .get(number)
            .filter(|e| e.special_faces == spiral_faces)
        {
            return Ok(Some(Stored {
                record: e.clone(),
                relative_kj: energies.relative_kj(e),
                list,
                relaxed: energies.records.len(),
            }));
        }
    }
    Ok(None)
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

/// The human-readable block, one string per line, grouped under our own headings with units in
/// the labels.
fn text_block(
    r: &FullRecord,
    spiral: &Spiral,
    charge: i32,
    stored: Option<&Stored>,
) -> Vec<String> {
    let d = &r.descriptors;
    let atoms = r.atoms as u32;
    let ids: Vec<String> = [(List::All, r.number), (List::Ipr, r.ipr_number)]
        .iter()
        .filter_map(|&(list, n)| n.map(|n| IsomerId::new(atoms, list, n).to_string()))
        .collect();
    let ids = if ids.is_empty() {
        format!("C{atoms} (number not looked up)")
    } else {
        ids.join(" = ")
    };
    let hexagons: u32 = d.hexagon_neighbours.iter().sum();
    let row = |label: &str, value: String| format!("  {label:<31}{value}");
    let mut lines = vec![
        format!("{ids}  {}  charge {charge:+}", d.point_group),
        "identity".to_string(),
        row("IDs", ids.clone()),
        row("canonical spiral", spiral.to_string()),
        "topology".to_string(),
        row(
            "atoms, bonds, rings",
            format!(
                "{}, {}, {} ({} pentagons, {hexagons} hexagons)",
                r.atoms,
                r.edges.len(),
                r.faces.len(),
                r.faces.iter().filter(|f| f.len() == 5).count(),
            ),
        ),
        row(
            "pentagon adjacencies",
            format!(
                "{} (penalty estimate {:.0} kJ/mol at 90 kJ/mol each)",
                d.pentagon_adjacencies, d.pentagon_penalty_kj
            ),
        ),
        row(
            "hexagon neighbours k=0..6",
            format!(
                "{:?}, strain (std. dev. of k) {:.4}",
                d.hexagon_neighbours, d.hexagon_strain
            ),
        ),
        row("Kekulé structures", d.kekule.to_string()),
        row("Pauling bond orders", range_text(&r.pauling_bond_orders)),
        row("ring pi content (electrons)", ring_text(r)),
        format!("electronic structure (Hückel, charge {charge:+})"),
    ];
    lines.extend(huckel_rows(d).into_iter().map(|(l, v)| row(l, v)));
    lines.push(row(
        "Coulson bond orders",
        range_text(&r.coulson_bond_orders),
    ));
    lines.push("symmetry".to_string());
    lines.push(row("point group", symmetry_text(d)));
    lines.push(row("13C NMR pattern", nmr_text(&d.nmr)));
    lines.push(format!(
        "energies (tight binding, Xu et al. 1992, charge {charge:+})"
    ));
    match stored {
        Some(s) => lines.extend(energy_rows(s, r.atoms).into_iter().map(|(l, v)| row(l, v))),
        None => lines.push(row(
            "not computed",
            format!(
                "run `cagerank screen --atoms {}{}{}` or `cagerank energy {}`",
                r.atoms,
                if d.pentagon_adjacencies == 0 {
                    " --ipr"
                } else {
                    ""
                },
                if charge == 0 {
                    String::new()
                } else {
                    format!(" --charge {charge}")
                },
                ids.split(" = ").next().unwrap_or_default()
            ),
        )),
    }
    lines
}

/// Frontier orbitals, shell and pi energy, in units of |beta|.
fn huckel_rows(d: &Descriptors) -> Vec<(&'static str, String)> {
    let mut rows = match d.somo {
        None => vec![(
            "HOMO, LUMO, gap (|beta|)",
            format!("{:.4}, {:.4}, {:.4}", d.homo, d.lumo, d.gap),
        )],
        Some(somo) => vec![
            (
                "HOMO, SOMO, LUMO (|beta|)",
                format!("{:.4}, {somo:.4}, {:.4}", d.homo, d.lumo),
            ),
            (
                "SOMO-LUMO, HOMO-SOMO (|beta|)",
                format!("{:.4}, {:.4}", d.gap, d.homo - somo),
            ),
        ],
    };
    rows.push(("shell", d.shell.name().to_string()));
    rows.push(("pi energy (|beta|/atom)", format!("{:.4}", d.pi_energy)));
    rows
}

/// The stored tight-binding result.
fn energy_rows(s: &Stored, atoms: usize) -> Vec<(&'static str, String)> {
    let e = &s.record;
    let mut rows = vec![(
        "total (eV)",
        format!(
            "{:.4} ({:.5} per atom)",
            e.energy_ev,
            e.energy_ev / atoms as f64
        ),
    )];
    rows.push((
        "relative (kJ/mol)",
        match s.relative_kj {
            Some(rel) => format!(
                "{rel:.1} (0 = the lowest of the {} relaxed in the {})",
                s.relaxed,
                s.list.words()
            ),
            None => "not ranked (rearranged or not converged)".to_string(),
        },
    ));
    rows.push(match e.somo {
        Some([level, below, above]) => (
            "SOMO; gaps below, above (eV)",
            format!("{level:.4}; {below:.4}, {above:.4}"),
        ),
        None => (
            "HOMO, LUMO, gap (eV)",
            format!("{:.4}, {:.4}, {:.4}", e.homo_ev, e.lumo_ev, e.gap_ev),
        ),
    });
    rows.push((
        "max residual force (eV/Å)",
        format!(
            "{:.1e}, {} after {} iterations, bond graph {}",
            e.max_force,
            if e.converged {
                "converged"
            } else {
                "not converged"
            },
            e.iterations,
            if e.graph_kept { "kept" } else { "CHANGED" }
        ),
    ));
    rows
}

/// "D5h, 20 automorphisms, achiral" (shared with `identify`).
pub(super) fn symmetry_text(d: &Descriptors) -> String {
    let chirality = if d.chiral { "chiral" } else { "achiral" };
    format!(
        "{}, {} automorphisms, {chirality}",
        d.point_group, d.automorphisms
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
        let (atoms, id) = parse_id("C84:23", true).unwrap();
        assert_eq!((atoms, id), (84, Some(IsomerId::new(84, List::Ipr, 23))));
        assert_eq!(
            parse_id("C84:all-23", false).unwrap().1.unwrap().list,
            List::All
        );
        assert_eq!(parse_id("60", false).unwrap(), (60, None));
        assert!(parse_id("C84:0", false).is_err());
        assert!(parse_id("C84:x", false).is_err());
        assert!(parse_id("fullerene", false).is_err());
        assert_eq!(parse_id("C84:-1", false).unwrap_err().code, 2);
    }
}
