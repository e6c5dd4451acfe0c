//! `cagerank draw`: a Schlegel diagram of one isomer as SVG or PNG (by the output's extension),
//! written atomically.
//!
//! Finds the isomer by its ID (catalogue first, else a search up to it), reads its symmetry
//! from the canonical spiral and hands everything to `draw`, which lays it out, writes the SVG
//! and converts it. A pattern ID (`C60:IPR-1+2H:5`) draws its parent with the pattern's sites
//! marked. The caution is printed once on stderr, not drawn.

use super::CliError;
use cagerank::cage::Cage;
use cagerank::catalogue;
use cagerank::derivative::Kind;
use cagerank::draw::render::{self, ImageFormat};
use cagerank::draw::{self, Colouring, Marks, OuterFace};
use cagerank::export::{write_atomic, CAUTION};
use cagerank::spiral::{canonical_spiral, Automorphism};
use std::io::Write;
use std::path::{Path, PathBuf};

#[derive(clap::ValueEnum, Clone, Copy, Debug)]
pub enum ColourArg {
    /// Rings filled by size: squares, pentagons, hexagons and heptagons each in their own
    /// colour, with a legend of the sizes present.
    Faces,
    /// Bonds coloured and thickened by Pauling bond order.
    BondOrders,
    /// Rings coloured by pi-electron content (pentagons outlined).
    PiContent,
}

#[derive(clap::ValueEnum, Clone, Copy, Debug)]
pub enum OuterArg {
    Pentagon,
    Hexagon,
}

/// Draw a Schlegel diagram (the cage seen through one face) as SVG or PNG.
#[derive(clap::Args, Debug)]
pub struct Args {
    /// The isomer, e.g. C84:IPR-23, C84:all-51591, B12N12:4-6-iso-1 or C32:5-6-7h1-all-5; a
    /// bare C84:23 is in the IPR list with
    /// --ipr, else in the complete list. A pattern ID such as C60:IPR-1+2H:5 draws the parent
    /// with the derivative's sites marked (atoms, or bonds for CH2 bridges).
    #[arg(value_name = "ID")]
    pub id: String,
    /// Read a bare number in ID as a position in the IPR list.
    #[arg(long)]
    pub ipr: bool,
    /// Output file; its extension picks the format: .svg or .png (rasterised at twice the SVG
    /// size). For PDF write .svg and convert it with any SVG tool.
    #[arg(short = 'o', long = "output", value_name = "FILE")]
    pub output: PathBuf,
    /// Catalogue directory to find the isomer in (default: $CAGERANK_CATALOGUE, else ./catalogues, else the
    /// catalogue shipped with this build, when present; otherwise the list is searched up to the number).
    #[arg(long, value_name = "DIR")]
    pub catalogue: Option<PathBuf>,
    /// What the colours show (bond orders and pi content are the bare cage's).
    #[arg(long = "color", value_enum, default_value = "faces")]
    pub colour: ColourArg,
    /// Number the atoms (1-based, in the order the canonical spiral winds them).
    #[arg(long)]
    pub labels: bool,
    /// Kind of face to look through (default: the most symmetric face of any kind).
    #[arg(long, value_enum)]
    pub outer: Option<OuterArg>,
}

pub fn run(args: Args) -> Result<(), CliError> {
    let format =
        ImageFormat::from_path(&args.output).map_err(|e| CliError::usage(e.to_string()))?;
    let dir = args
        .catalogue
        .clone()
        .or_else(|| Some(catalogue::default_dir()).filter(|d| d.is_dir()));
    let options = options(&args);
    let (cage, automorphisms, title, marks) = if super::export::is_pattern(&args.id) {
        pattern_picture(&args, dir.as_deref())?
    } else {
        isomer_picture(&args, dir.as_deref())?
    };
    let mut svg = Vec::new();
    draw::schlegel_svg_marked(
        &mut svg,
        &cage,
        &automorphisms,
        &title,
        options,
        marks.as_ref(),
    )
    .map_err(|e| match e {
        draw::DrawError::Io(io) => CliError::failed(io.to_string()),
        other => CliError::usage(other.to_string()),
    })?;
    let svg = String::from_utf8(svg)
        .map_err(|_| CliError::failed("the drawing is not UTF-8 (internal inconsistency)"))?;
    let rendered = render::render(&svg, format).map_err(|e| CliError::failed(e.to_string()))?;
    write_atomic(&args.output, |w| w.write_all(&rendered.bytes))
        .map_err(|e| CliError::failed(e.to_string()))?;
    println!("{}", args.output.display());
    if rendered.text_dropped {
        eprintln!(
            "cagerank: warning: no fonts found on this system, so the picture has no text (title, \
             legend, labels); install a font package (e.g. fonts-dejavu-core) or write .svg"
        );
    }
    eprintln!("{CAUTION}");
    Ok(())
}

/// What to draw: the cage, the automorphisms that pick the outer face, the title, and the
/// sites to mark.
type Picture = (Cage, Vec<Automorphism>, String, Option<Marks>);

/// A pattern's parent with the pattern's sites marked; the outer face follows the pattern's
/// own symmetry (its stabiliser).
fn pattern_picture(args: &Args, dir: Option<&Path>) -> Result<Picture, CliError> {
    let (parent_id, _, named) =
        super::export::locate_pattern(&args.id, args.ipr, dir, false, None)?;
    let title = format!(
        "{}  {}  {}  on {parent_id}",
        named.id,
        named.formula(),
        named.score.point_group
    );
    let k = named.id.k;
    let legend = match named.id.kind {
        Kind::Addend(a) => format!("{k} {} addend{}", a.symbol(), plural(k)),
        Kind::Bridge(_) => format!("{k} CH2 bridge{}", plural(k)),
        Kind::Substitute(h) => format!("{k} {} in place of C", h.symbol()),
    };
    let marks = Marks {
        atoms: named.marked_atoms(),
        bonds: named.marked_bonds(),
        legend,
    };
    let automorphisms = named.symmetry();
    Ok((named.parent.cage, automorphisms, title, Some(marks)))
}

fn plural(k: usize) -> &'static str {
    if k == 1 {
        ""
    } else {
        "s"
    }
}

fn isomer_picture(args: &Args, dir: Option<&Path>) -> Result<Picture, CliError> {
    let id = super::export::parse_id(&args.id, args.ipr)?;
    let (spiral, numbers) = super::export::locate(id, dir, false)?;
    let cage = spiral.to_cage();
    let automorphisms = canonical_spiral(&cage)
        .map(|c| c.automorphisms)
        .unwrap_or_default();
    let mut title = id.to_string();
    for (list, n) in [
        (cagerank::id::List::All, numbers.number),
        (cagerank::id::List::Ipr, numbers.ipr_number),
    ] {
        if let Some(n) = n.filter(|_| list != id.list) {
            title.push_str(&format!(
                " = {}",
                cagerank::id::IsomerId::of(id.face_set, id.atoms, list, n)
            ));
        }
    }
    let title = format!("{title}  spiral {spiral}");
    Ok((cage, automorphisms, title, None))
}

fn options(args: &Args) -> draw::Options {
    draw::Options {
        colouring: match args.colour {
            ColourArg::Faces => Colouring::Faces,
            ColourArg::BondOrders => Colouring::BondOrders,
            ColourArg::PiContent => Colouring::PiContent,
        },
        labels: args.labels,
        outer: match args.outer {
            None => OuterFace::Auto,
            Some(OuterArg::Pentagon) => OuterFace::Pentagon,
            Some(OuterArg::Hexagon) => OuterFace::Hexagon,
        },
    }
}
