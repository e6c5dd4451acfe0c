//! `cagerank derive`: every distinct addition or substitution pattern of k sites on one cage,
//! scored and ranked, or only counted.
//!
//! Finds the parent by its ID (or spiral), turns the options into a `derivative::Problem`,
//! and prints what `derivative` lists, scores and counts. The science lives in the library.

use super::output::{write_line, Out};
use super::CliError;
use cagerank::derivative::orbits::{Found, Search};
use cagerank::derivative::score::{default_order, PatternScore, Scorer};
use cagerank::derivative::{
    self, burnside, Addend, BondFilter, DeriveError, Hetero, Kind, Parent, PatternId, Problem,
};
use cagerank::enumerate::{self, Spec};
use cagerank::id::{IdError, IsomerId, List};
use cagerank::spiral::{canonical_spiral, Spiral};
use num_bigint::BigUint;
use std::ops::ControlFlow;

/// Shown with every listing (after a table, on stderr otherwise).
const CAUTION: &str = "Caution: pattern scores and rankings are screening heuristics, not \
predictions of real-world stability or safety; refine candidates with quantum chemistry.";

#[derive(clap::ValueEnum, Clone, Copy, Debug, PartialEq, Eq)]
pub enum OnArg {
    /// Addends on atoms.
    Atoms,
    /// CH2 bridges across any bonds.
    Bonds,
    /// CH2 bridges across 6:6 bonds (between two hexagons).
    #[value(name = "66")]
    HexHex,
    /// CH2 bridges across 6:5 bonds (pentagon and hexagon).
    #[value(name = "56")]
    PentHex,
}

#[derive(clap::ValueEnum, Clone, Copy, Debug, PartialEq, Eq)]
pub enum AddendArg {
    H,
    F,
    Cl,
}

#[derive(clap::ValueEnum, Clone, Copy, Debug, PartialEq, Eq)]
pub enum HeteroArg {
    N,
    B,
}

#[derive(clap::ValueEnum, Clone, Copy, Debug, PartialEq, Eq)]
pub enum FormatArg {
    Table,
    Csv,
    /// One JSON object per line.
    Json,
}

#[derive(clap::ValueEnum, Clone, Copy, Debug, PartialEq, Eq)]
pub enum SortArg {
    /// Default screening order: radicals last, then pi energy, gap, Kekulé count.
    Rank,
    /// Pattern number order, printed as found (constant memory).
    Id,
}

/// List, score and rank every distinct pattern of K addends, bridges or heteroatoms on a cage.
///
/// Scores and rankings are screening heuristics, not stability or safety predictions.
#[derive(clap::Args, Debug)]
pub struct Args {
    /// The parent cage: C60:IPR-1, C60:all-1812, or C60:1812 with --ipr choosing the list; or
    /// the size (C60) together with --spiral.
    #[arg(value_name = "CAGE-ID")]
    pub id: String,
    /// Read a bare number in CAGE-ID as a position in the IPR list.
    #[arg(long)]
    pub ipr: bool,
    /// The 12 pentagon positions of a spiral of this size, comma-separated.
    #[arg(long, value_name = "INDICES")]
    pub spiral: Option<String>,
    /// Number of addends, bridges or heteroatoms.
    #[arg(long = "add", value_name = "K")]
    pub k: usize,
    /// Where the addends go.
    #[arg(long, value_enum, default_value = "atoms")]
    pub on: OnArg,
    /// The atom addend (with --on atoms).
    #[arg(long, value_enum, default_value = "h")]
    pub addend: AddendArg,
    /// Replace K carbons by this heteroatom instead of adding.
    #[arg(long, value_enum, value_name = "N|B")]
    pub substitute: Option<HeteroArg>,
    #[command(flatten)]
    pub charge: super::ChargeArg,
    /// Only count the patterns (Burnside; exact at any size).
    #[arg(long)]
    pub count_only: bool,
    /// Print only the first T patterns of the chosen order.
    #[arg(long, value_name = "T")]
    pub top: Option<usize>,
    #[arg(long, value_enum, default_value = "table")]
    pub format: FormatArg,
    /// Order of the listing.
    #[arg(long, value_enum, default_value = "rank")]
    pub sort: SortArg,
    /// Use only these sites: 1-based atom numbers (bond numbers with bridges), comma-separated.
    #[arg(long, value_name = "LIST")]
    pub sites: Option<String>,
    /// Add K more to this earlier pattern (sequential addition), e.g. C60:IPR-1+2H:7.
    #[arg(long, value_name = "PATTERN-ID")]
    pub onto: Option<String>,
}

pub fn run(args: Args) -> Result<(), CliError> {
    let kind = kind_of(&args)?;
    let parent = find_parent(&args)?;
    let mut problem = Problem::new(kind, args.k);
    if let Some(list) = &args.sites {
        problem.allowed = Some(parse_sites(list, &parent, kind)?);
    }
    if let Some(text) = &args.onto {
        problem.base = base_pattern(text, &parent, kind, args.ipr)?;
    }
    let search = Search::new(&parent, &problem).map_err(usage)?;
    let count = burnside::count(&search);
    let mut out = Out::stdout();
    if args.count_only {
        write_line(&mut out, &count_text(&args, &parent, &search, &count))?;
        return out.finish();
    }
    if count > BigUint::from(derivative::LIST_LIMIT) {
        return Err(usage(DeriveError::TooLarge {
            count: count.to_string(),
            limit: derivative::LIST_LIMIT,
        }));
    }
    let scorer = Scorer::new(&parent, &search, args.charge.charge).map_err(usage)?;
    let restricted = problem.allowed.is_some() || !problem.base.is_empty();
    let label = format!("{}+{}{}", parent.label, args.k, kind.token());
    // Scores are computed in parallel by `stream`; the number (and so the ID) is known only
    // when the result comes out in order.
    let score = |f: &Found| scorer.score(f, 0, String::new());
    let named = |mut s: PatternScore, n: u64| {
        s.number = n;
        s.id = format!("{label}:{n}");
        s
    };
    let mut printer = Printer::new(args.format, args.top);
    printer.header(&mut out, &search)?;
    if args.sort == SortArg::Id && !restricted {
        search.stream(score, |n, s| match printer.row(&mut out, &named(s, n)) {
            Ok(true) => ControlFlow::Continue(()),
            _ => ControlFlow::Break(()),
        });
    } else {
        // With --top in rank order only the best T rows need keeping: trim to T whenever 2T
        // have piled up, so memory stays bounded by the top rather than the whole list.
        let keep = match (args.sort, args.top, restricted) {
            (SortArg::Rank, Some(t), false) => Some(t.max(1)),
            _ => None,
        };
        let mut all: Vec<PatternScore> = Vec::new();
        let mut listed = 0u64;
        search.stream(score, |n, s| {
            listed += 1;
            all.push(named(s, n));
            if let Some(t) = keep.filter(|&t| all.len() >= 2 * t) {
                all.sort_by(default_order);
                all.truncate(t);
            }
            ControlFlow::Continue(())
        });
        if BigUint::from(listed) != count {
            return Err(CliError::failed(format!(
                "internal error: listed {listed} patterns but counted {count}; please report this"
            )));
        }
        if restricted {
            name_globally(&parent, &search, &mut all);
        }
        if args.sort == SortArg::Rank {
            all.sort_by(default_order);
        }
        for s in &all {
            if !printer.row(&mut out, s)? {
                break;
            }
        }
    }
    printer.footer(&mut out)?;
    out.finish()
}

fn usage(e: DeriveError) -> CliError {
    CliError::usage(e.to_string())
}

fn kind_of(args: &Args) -> Result<Kind, CliError> {
    if let Some(h) = args.substitute {
        if args.on != OnArg::Atoms {
            return Err(CliError::usage(
                "--substitute replaces atoms; leave out --on (or use --on atoms)",
            ));
        }
        return Ok(Kind::Substitute(match h {
            HeteroArg::N => Hetero::N,
            HeteroArg::B => Hetero::B,
        }));
    }
    Ok(match args.on {
        OnArg::Atoms => Kind::Addend(match args.addend {
            AddendArg::H => Addend::H,
            AddendArg::F => Addend::F,
            AddendArg::Cl => Addend::Cl,
        }),
        OnArg::Bonds => Kind::Bridge(BondFilter::Any),
        OnArg::HexHex => Kind::Bridge(BondFilter::HexHex),
        OnArg::PentHex => Kind::Bridge(BondFilter::PentHex),
    })
}

/// The parent from its ID, or from a size and --spiral.
fn find_parent(args: &Args) -> Result<Parent, CliError> {
    let (label, spiral) = match &args.spiral {
        Some(list) => from_spiral(&args.id, list, args.ipr)?,
        None => from_id(&args.id, args.ipr)?,
    };
    Parent::new(label, &spiral).map_err(usage)
}

fn from_id(text: &str, ipr: bool) -> Result<(String, Spiral), CliError> {
    let id = parse_isomer_id(text, ipr)?;
    let spec = Spec::fullerene(u64::from(id.atoms), id.list.is_ipr())
        .map_err(|e| CliError::usage(e.to_string()))?;
    let isomer = enumerate::find_by_number(&spec, id.number).ok_or_else(|| {
        CliError::usage(format!(
            "{id} does not exist: the {} of C{} is shorter; numbers start at 1",
            id.list.words(),
            id.atoms
        ))
    })?;
    Ok((id.to_string(), isomer.spiral))
}

/// An isomer ID; a bare number is in the complete list, or in the IPR list with --ipr.
fn parse_isomer_id(text: &str, ipr: bool) -> Result<IsomerId, CliError> {
    let bare = if ipr { Some(List::Ipr) } else { None };
    match IsomerId::parse(text, bare) {
        Err(IdError::NoList { .. }) => IsomerId::parse(text, Some(List::All)),
        other => other,
    }
    .map_err(|e| CliError::usage(e.to_string()))
}

/// A size (`C60`) and pentagon positions; the parent is named by its number in the IPR list
/// when it obeys the IPR, in the complete list otherwise.
fn from_spiral(text: &str, list: &str, ipr: bool) -> Result<(String, Spiral), CliError> {
    if ipr {
        return Err(CliError::usage(
            "--ipr chooses the list a number refers to; leave it out when giving --spiral",
        ));
    }
    let body = text.trim().trim_start_matches(['C', 'c']);
    let atoms: u64 = body.parse().map_err(|_| {
        CliError::usage(format!(
            "with --spiral give only the size, like C60, not '{}'",
            cagerank::id::printable(text)
        ))
    })?;
    let indices: Vec<u64> = list
        .split([',', ' '])
        .filter(|t| !t.trim().is_empty())
        .map(|t| {
            t.trim().parse().map_err(|_| {
                CliError::usage(format!(
                    "'{}' is not a pentagon position; give 12 positive integers like 1,7,9,...",
                    cagerank::id::printable(t)
                ))
            })
        })
        .collect::<Result<_, _>>()?;
    let given = Spiral::from_pentagon_indices(atoms, &indices)
        .map_err(|e| CliError::usage(e.to_string()))?;
    let cage = given.to_cage();
    let canonical = canonical_spiral(&cage)
        .ok_or_else(|| usage(DeriveError::NoSpiral))?
        .spiral;
    let in_ipr = cage.is_ipr();
    let number = enumerate::list_number_of(&canonical, in_ipr)
        .map_err(|e| CliError::failed(e.to_string()))?
        .ok_or_else(|| CliError::failed("the spiral's cage is not on its list (internal error)"))?;
    let id = IsomerId::new(atoms as u32, List::from_ipr(in_ipr), number);
    Ok((id.to_string(), canonical))
}

fn parse_sites(list: &str, parent: &Parent, kind: Kind) -> Result<Vec<u32>, CliError> {
    let limit = if kind.on_bonds() {
        parent.cage.edges().len()
    } else {
        parent.cage.atoms()
    };
    let mut sites = Vec::new();
    for token in list.split([',', ' ']).filter(|t| !t.trim().is_empty()) {
        let bad = |why: &str| {
            usage(DeriveError::BadSite {
                text: format!("site '{}' {why}", token.trim()),
            })
        };
        let n: usize = token.trim().parse().map_err(|_| bad("is not a number"))?;
        if n == 0 || n > limit {
            return Err(bad(&format!("is not between 1 and {limit}")));
        }
        sites.push(n as u32 - 1);
    }
    sites.sort_unstable();
    if sites.windows(2).any(|w| w[0] == w[1]) {
        return Err(usage(DeriveError::BadSite {
            text: "a site is listed twice".into(),
        }));
    }
    Ok(sites)
}

/// The sites of the earlier pattern named by `text`, which must be on this parent and of this
/// kind.
fn base_pattern(text: &str, parent: &Parent, kind: Kind, ipr: bool) -> Result<Vec<u32>, CliError> {
    let id = PatternId::parse(text).map_err(usage)?;
    let named = parse_isomer_id(&id.parent, ipr)?.to_string();
    if named != parent.label {
        return Err(CliError::usage(format!(
            "{} is a pattern of {}, not of {}; give the same parent",
            cagerank::id::printable(text),
            cagerank::id::printable(&id.parent),
            parent.label
        )));
    }
    if id.kind != kind {
        return Err(usage(DeriveError::KindMismatch {
            base: id.kind.token(),
            asked: kind.token(),
        }));
    }
    let (_, found) = derivative::find_pattern(parent, &id).map_err(usage)?;
    Ok(found.sites)
}

/// Sequential and site-restricted runs: replace each run-local ID by the pattern's ID in the
/// parent's own list of all base + K sites (one pass over that list).
fn name_globally(parent: &Parent, search: &Search, all: &mut [PatternScore]) {
    let total = search.base.len() + search.k;
    let Ok(global) = Search::new(parent, &Problem::new(search.kind, total)) else {
        return;
    };
    if burnside::count(&global) > BigUint::from(derivative::LIST_LIMIT) {
        eprintln!(
            "cagerank: note: the list of all {total}-site patterns is too long to number; IDs \
             here are positions in this run"
        );
        return;
    }
    let forms: Vec<Vec<u32>> = all
        .iter()
        .map(|s| {
            let sites: Vec<u32> = search
                .base
                .iter()
                .copied()
                .chain(s.sites.iter().map(|x| x - 1))
                .collect();
            global.canonical_form(&sites)
        })
        .collect();
    let numbers = global.numbers_of(&forms);
    for (s, n) in all.iter_mut().zip(numbers) {
        if let Some(n) = n {
            s.id = format!("{}+{total}{}:{n}", parent.label, search.kind.token());
        }
    }
}

fn count_text(args: &Args, parent: &Parent, search: &Search, count: &BigUint) -> String {
    let what = format!("{}+{}{}", parent.label, args.k, search.kind.token());
    match args.format {
        FormatArg::Json => serde_json::json!({
            "parent": parent.label,
            "kind": search.kind.token(),
            "k": args.k,
            "group_order": search.group.order(),
            "patterns": count.to_string(),
        })
        .to_string(),
        FormatArg::Csv => format!(
            "pattern,group_order,patterns\n{what},{},{count}",
            search.group.order()
        ),
        FormatArg::Table => format!(
            "{what}: {count} {} (symmetry group of order {})",
            if *count == BigUint::from(1u8) {
                "pattern"
            } else {
                "patterns"
            },
            search.group.order()
        ),
    }
}

/// Prints rows in the chosen format, stopping after `top`.
struct Printer {
    format: FormatArg,
    left: usize,
    printed: usize,
    bonds: bool,
}

impl Printer {
    fn new(format: FormatArg, top: Option<usize>) -> Printer {
        Printer {
            format,
            left: top.unwrap_or(usize::MAX),
            printed: 0,
            bonds: false,
        }
    }

    fn header(&mut self, out: &mut Out, search: &Search) -> Result<(), CliError> {
        self.bonds = search.kind.on_bonds();
        let places = if self.bonds {
            "bonds_66,bonds_56,bonds_55"
        } else {
            "pentagon_atoms,hexagon_atoms"
        };
        match self.format {
            FormatArg::Json => Ok(()),
            FormatArg::Csv => write_line(
                out,
                &format!(
                    "order,id,sites,point_group,chiral,orbit,kekule_structure,radical,kekule,homo,lumo,gap,pi_energy,{places}"
                ),
            ),
            FormatArg::Table => write_line(
                out,
                &format!(
                    "{:>5}  {:<28} {:<6} {:<7} {:>12} {:>8} {:>8} {:>8} {:>11}  {:<10} sites",
                    "order", "id", "group", "chiral", "kekule", "homo", "lumo", "gap", "pi_energy",
                    if self.bonds { "66/56/55" } else { "pent/hex" }
                ),
            ),
        }
    }

    /// Prints one row; false once `top` rows are out or the reader has gone.
    fn row(&mut self, out: &mut Out, s: &PatternScore) -> Result<bool, CliError> {
        if self.left == 0 || out.is_closed() {
            return Ok(false);
        }
        self.left -= 1;
        self.printed += 1;
        let sites = s
            .sites
            .iter()
            .map(u32::to_string)
            .collect::<Vec<_>>()
            .join(" ");
        let places = if self.bonds {
            format!("{}/{}/{}", s.bonds_66, s.bonds_56, s.bonds_55)
        } else {
            format!("{}/{}", s.pentagon_atoms, s.hexagon_atoms)
        };
        let kekule = if s.radical {
            "0 radical".to_string()
        } else {
            s.kekule.clone()
        };
        let line = match self.format {
            FormatArg::Json => serde_json::to_string(s)
                .map_err(|e| CliError::failed(format!("cannot encode JSON: {e}")))?,
            FormatArg::Csv => format!(
                "{},{},{},{},{},{},{},{},{},{:.6},{:.6},{:.6},{:.6},{}",
                self.printed,
                s.id,
                sites,
                s.point_group,
                s.chiral,
                s.orbit,
                s.kekule_structure,
                s.radical,
                s.kekule,
                s.homo,
                s.lumo,
                s.gap,
                s.pi_energy,
                places.replace('/', ",")
            ),
            FormatArg::Table => format!(
                "{:>5}  {:<28} {:<6} {:<7} {:>12} {:>8.4} {:>8.4} {:>8.4} {:>11.4}  {:<10} {sites}",
                self.printed,
                s.id,
                s.point_group.to_string(),
                if s.chiral { "chiral" } else { "achiral" },
                kekule,
                s.homo,
                s.lumo,
                s.gap,
                s.pi_energy,
                places
            ),
        };
        write_line(out, &line)?;
        Ok(self.left > 0)
    }

    fn footer(&self, out: &mut Out) -> Result<(), CliError> {
        if self.format == FormatArg::Table {
            write_line(out, CAUTION)
        } else {
            eprintln!("{CAUTION}");
            Ok(())
        }
    }
}
