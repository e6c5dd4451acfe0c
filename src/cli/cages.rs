//! Command-line pieces for cages of face sets other than the fullerenes' (`--faces 4-6`,
//! `4-5-6`, `5-6-7 --heptagons H`, `--isolated`): parsing the flags and sizes, and printing
//! one such isomer or a count. The science (search, BN descriptors) is in
//! `enumerate::faces` and `score::boron_nitride`; this module only parses and prints.

use super::sizes::Size;
use super::CliError;
use cagerank::cage::FaceSet;
use cagerank::enumerate::{faces, Isomer, Spec};
use cagerank::id::{IsomerId, List};
use cagerank::score::boron_nitride::{describe_bn, BnDescriptors};
use cagerank::score::nmr::format_pattern;
use cagerank::score::{Descriptors, Scored};
use cagerank::spiral::canonical_spiral;
use serde_json::json;

#[derive(clap::Args, Debug, Clone)]
pub struct FacesArg {
    /// Face set: fullerene (pentagons and hexagons, the default), 4-6 (squares and hexagons:
    /// boron-nitride cages, listed as B_xN_x), 4-5-6, or 5-6-7 (pentagons, hexagons and at most
    /// --heptagons heptagons). Face-spiral completeness is proved for none of 4-6, 4-5-6,
    /// 5-6-7: they are searched from every start, and their counts were checked against an
    /// independent construction up to 20 atoms (README, "Other face sets").
    #[arg(long, value_name = "SET", default_value = "fullerene")]
    pub faces: String,
    /// Most heptagons a 5-6-7 cage may have (required with --faces 5-6-7).
    #[arg(long, value_name = "H")]
    pub heptagons: Option<u8>,
    /// Only cages obeying the face set's isolation rule: no two squares sharing an edge for 4-6
    /// and 4-5-6 (the isolated-square rule of BN cages), no two pentagons for fullerenes (the
    /// same as --ipr) and 5-6-7.
    #[arg(long)]
    pub isolated: bool,
}

impl FacesArg {
    /// The face set asked for; a one-line usage error says what to write.
    pub fn face_set(&self) -> Result<FaceSet, CliError> {
        FaceSet::parse(&self.faces, self.heptagons).map_err(CliError::usage)
    }
}

/// Sizes for a face set other than fullerenes: every even count from the set's smallest cage
/// on (a size with no cage, like 4-6 with 10 atoms, lists nothing).
pub fn parse_sizes(args: &[String], set: FaceSet) -> Result<Vec<Size>, CliError> {
    let smallest = faces::smallest_atoms(set);
    let mut out = Vec::new();
    for arg in args {
        let (lo, hi) = match arg.split_once("..") {
            Some((a, b)) => (count(a, arg)?, count(b, arg)?),
            None => {
                let n = count(arg, arg)?;
                (n, n)
            }
        };
        if lo > hi || lo % 2 == 1 || hi % 2 == 1 {
            return Err(CliError::usage(format!(
                "'{arg}' must be an even atom count of at least {smallest} or a range of them, \
                 e.g. {smallest}..{}",
                smallest + 40
            )));
        }
        for n in (lo..=hi).step_by(2) {
            Spec::cages(n, set, false).map_err(|e| CliError::usage(format!("{e} ('{arg}')")))?;
        }
        out.extend((lo..=hi).step_by(2).map(Size::Atoms));
    }
    Ok(out)
}

fn count(text: &str, arg: &str) -> Result<u64, CliError> {
    let t = text.trim().trim_start_matches(['C', 'c']);
    t.parse().map_err(|_| {
        CliError::usage(format!(
            "'{arg}' is not an atom count or range; use e.g. 24 or 8..40"
        ))
    })
}

/// The search for one size of a non-fullerene set (`--ipr` is the fullerene rule and is
/// refused here in favour of `--isolated`). `smallest_starts` (`--pentagon-starts`) starts
/// spirals only on the set's smallest face, a completeness check that may miss cages.
pub fn spec(
    set: FaceSet,
    atoms: u64,
    isolated: bool,
    ipr: bool,
    smallest_starts: bool,
) -> Result<Spec, CliError> {
    if ipr {
        return Err(CliError::usage(format!(
            "--ipr is the fullerene rule; for face set {set} use --isolated"
        )));
    }
    let mut spec = Spec::cages(atoms, set, isolated).map_err(|e| CliError::usage(e.to_string()))?;
    if smallest_starts {
        spec.all_starts = false;
        eprintln!(
            "cagerank: warning: spirals start only on the smallest face of {set}; this may miss \
             cages (all 4-5-6 cages of 20 atoms: 22 of 23)"
        );
    }
    Ok(spec)
}

/// The isomer's ID in its own list (the complete list unless only the isolated list numbers it).
pub fn isomer_id(set: FaceSet, atoms: u64, iso: &Isomer) -> Option<IsomerId> {
    match (iso.number, iso.ipr_number) {
        (Some(n), _) => Some(IsomerId::of(set, atoms as u32, List::All, n)),
        (None, Some(i)) => Some(IsomerId::of(set, atoms as u32, List::Ipr, i)),
        (None, None) => None,
    }
}

/// BN descriptors of a 4-6 cage (`None` for other sets or if the cage cannot be read).
fn bn_of(set: FaceSet, iso: &Isomer) -> Option<BnDescriptors> {
    if set != FaceSet::SquareHexagon {
        return None;
    }
    let cage = iso.spiral.to_cage();
    let canonical = canonical_spiral(&cage)?;
    describe_bn(&cage, &canonical).ok()
}

/// One enumerated isomer of a non-fullerene set, as text or JSON.
pub fn isomer_line(
    json_out: bool,
    set: FaceSet,
    atoms: u64,
    iso: &Isomer,
    d: Descriptors,
) -> String {
    let id = isomer_id(set, atoms, iso);
    let cage = iso.spiral.to_cage();
    let counts = cage.face_size_counts();
    let bn = bn_of(set, iso);
    if json_out {
        let mut v = serde_json::to_value(Scored::new(&iso.spiral, iso.number, iso.ipr_number, d))
            .unwrap_or_default();
        if let Some(m) = v.as_object_mut() {
            m.remove("rank");
            m.insert("face_set".into(), json!(set.to_string()));
            m.insert("id".into(), json!(id.map(|i| i.to_string())));
            m.insert("isolated".into(), json!(iso.ipr));
            m.insert("square_adjacencies".into(), json!(cage.adjacencies_of(4)));
            m.insert(
                "face_counts".into(),
                json!({"4": counts[4], "5": counts[5], "6": counts[6], "7": counts[7]}),
            );
            if let Some(b) = &bn {
                m.insert("bn".into(), cagerank::export::cages::bn_json(b));
            }
        }
        return v.to_string();
    }
    let id = id.map_or_else(|| format!("C{atoms} unit {}", iso.unit), |i| i.to_string());
    let faces = format!("f4 {} f5 {} f7 {}", counts[4], counts[5], counts[7]);
    match bn {
        Some(b) => format!(
            "{id:<22} {:<5} sq-adj {:>2}  BN gap {:>7.4}  11B {}  15N {}  spiral {}",
            b.point_group.name(),
            b.square_adjacencies,
            b.gap,
            format_pattern(&b.boron_nmr),
            format_pattern(&b.nitrogen_nmr),
            iso.spiral
        ),
        None => format!(
            "{id:<22} {:<5} {faces}  sq-adj {:>2}  Np {:>2}  gap {:>7.4}  13C {}  spiral {}",
            d.point_group.name(),
            cage.adjacencies_of(4),
            d.pentagon_adjacencies,
            d.gap,
            format_pattern(&d.nmr),
            iso.spiral
        ),
    }
}

/// The count line of one size of a non-fullerene set.
pub fn count_line(json_out: bool, set: FaceSet, atoms: u64, isolated: bool, count: u64) -> String {
    if json_out {
        return json!({"atoms": atoms, "face_set": set.to_string(), "isolated": isolated,
                      "isomers": count})
        .to_string();
    }
    let formula = IsomerId::of(set, atoms as u32, List::All, 1).formula();
    let list = if isolated { ", isolated" } else { "" };
    let word = if count == 1 { "isomer" } else { "isomers" };
    format!("{formula} ({set}{list}): {count} {word}")
}
