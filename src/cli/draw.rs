//! `cagerank draw`: a Schlegel diagram of one isomer as SVG, written atomically.
//!
//! Finds the isomer by its ID with the enumerator, reads its symmetry from the canonical spiral
//! and hands everything to `draw`, which lays it out and writes the SVG.

use super::CliError;
use cagerank::draw::{self, Colouring, OuterFace};
use cagerank::export::{write_atomic, CAUTION};
use cagerank::spiral::canonical_spiral;
use std::path::PathBuf;

#[derive(clap::ValueEnum, Clone, Copy, Debug)]
pub enum ColourArg {
    /// Pentagons filled, hexagons pale.
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

/// Draw a Schlegel diagram (the cage seen through one face) as SVG.
#[derive(clap::Args, Debug)]
pub struct Args {
    /// The isomer, e.g. C84:23 (number in the complete list, or in the IPR list with --ipr).
    #[arg(value_name = "ID")]
    pub id: String,
    /// Read the number in ID as a position in the IPR list.
    #[arg(long)]
    pub ipr: bool,
    /// Output SVG file.
    #[arg(short = 'o', long = "output", value_name = "FILE.svg")]
    pub output: PathBuf,
    /// What the colours show.
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
    let (atoms, number) = super::export::parse_id(&args.id)?;
    let (spiral, _) = super::export::find(atoms, number, args.ipr)?;
    let cage = spiral.to_cage();
    let automorphisms = canonical_spiral(&cage)
        .map(|c| c.automorphisms)
        .unwrap_or_default();
    let options = draw::Options {
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
    };
    let list = if args.ipr {
        "IPR list"
    } else {
        "complete list"
    };
    let title = format!("C{atoms}:{number} ({list})  spiral {spiral}");
    let mut failure = None;
    write_atomic(&args.output, |w| {
        draw::schlegel_svg(w, &cage, &automorphisms, &title, options).map_err(|e| match e {
            draw::DrawError::Io(io) => io,
            other => {
                let message = other.to_string();
                failure = Some(message.clone());
                std::io::Error::other(message)
            }
        })
    })
    .map_err(|e| match failure.take() {
        Some(message) => CliError::usage(message),
        None => CliError::failed(e.to_string()),
    })?;
    println!("{}", args.output.display());
    eprintln!("{CAUTION}");
    Ok(())
}
