//! Schlegel diagrams of cages as SVG: the cage seen through one face and flattened onto the
//! plane without edge crossings, pentagons filled, optionally coloured by Pauling bond order or
//! ring pi-electron content, with a legend, the isomer ID and the screening caution. A
//! derivative's sites ([`Marks`]: substituted or added-to atoms, bridged bonds) are marked on
//! its parent's diagram, with a legend entry.
//!
//! Layout lives in [`schlegel`], SVG text in [`svg`]; values come from `score::bonds`. Finding
//! the cage (or pattern) for an ID and writing the file are left to the caller (`cli`).

pub mod render;
pub mod schlegel;
pub mod svg;

pub use schlegel::OuterFace;

use crate::cage::Cage;
use crate::export::CAUTION;
use crate::score::bonds::{pauling_bond_orders, ring_pi_content};
use crate::spiral::Automorphism;
use std::fmt;
use std::io::{self, Write};

/// What the colours show.
#[derive(Debug, Clone, Copy, PartialEq, Eq, Default)]
pub enum Colouring {
    /// Rings filled by size: squares, pentagons, hexagons and heptagons each in their own
    /// colour, with a legend of the sizes present.
    #[default]
    Faces,
    /// Bonds coloured by Pauling bond order.
    BondOrders,
    /// Faces coloured by ring pi-electron content (Randić & Balaban 2004).
    PiContent,
}

/// Drawing options.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub struct Options {
    pub colouring: Colouring,
    pub labels: bool,
    pub outer: OuterFace,
}

impl Default for Options {
    fn default() -> Self {
        Options {
            colouring: Colouring::Faces,
            labels: false,
            outer: OuterFace::Auto,
        }
    }
}

/// Sites of a derivative to mark: atoms and bonds of the cage (0-based, cage numbering) and the
/// legend text that says what they carry (e.g. `2 H addends`).
#[derive(Debug, Clone, PartialEq, Eq, Default)]
pub struct Marks {
    pub atoms: Vec<u32>,
    pub bonds: Vec<u32>,
    pub legend: String,
}

/// Why a drawing could not be made.
#[derive(Debug)]
pub enum DrawError {
    /// The requested kind of outer face does not occur in this cage.
    NoSuchFace {
        size: usize,
    },
    Io(io::Error),
}

impl fmt::Display for DrawError {
    fn fmt(&self, f: &mut fmt::Formatter<'_>) -> fmt::Result {
        match self {
            DrawError::NoSuchFace { size } => {
                write!(f, "this cage has no face with {size} atoms to look through; choose another --outer")
            }
            DrawError::Io(e) => write!(f, "cannot write the drawing: {e}"),
        }
    }
}

impl std::error::Error for DrawError {}

/// Draws the Schlegel diagram of `cage` titled `title` into `w`. `automorphisms` (identity
/// first, as from the canonical spiral) pick the most symmetric outer face; pass `&[]` if unknown.
pub fn schlegel_svg(
    w: &mut impl Write,
    cage: &Cage,
    automorphisms: &[Automorphism],
    title: &str,
    options: Options,
) -> Result<(), DrawError> {
    schlegel_svg_marked(w, cage, automorphisms, title, options, None)
}

/// As [`schlegel_svg`], with a derivative's sites marked. Pass the automorphisms that keep the
/// pattern in place (its stabiliser) so that the outer face follows the derivative's own
/// symmetry.
pub fn schlegel_svg_marked(
    w: &mut impl Write,
    cage: &Cage,
    automorphisms: &[Automorphism],
    title: &str,
    options: Options,
    marks: Option<&Marks>,
) -> Result<(), DrawError> {
    let outer = schlegel::choose_outer(cage, automorphisms, options.outer).ok_or(
        DrawError::NoSuchFace {
            size: if options.outer == OuterFace::Pentagon {
                5
            } else {
                6
            },
        },
    )?;
    let points = schlegel::embed(cage, outer);
    let colours = match options.colouring {
        Colouring::Faces => svg::Colours::Faces,
        Colouring::BondOrders => svg::Colours::Bonds(pauling_bond_orders(cage)),
        Colouring::PiContent => {
            svg::Colours::FaceValues(ring_pi_content(cage, &pauling_bond_orders(cage)))
        }
    };
    let picture = svg::Picture {
        title,
        caution: CAUTION,
        points: &points,
        faces: cage.faces(),
        outer,
        edges: cage.edges(),
        colours,
        labels: options.labels,
        marks,
    };
    svg::write(w, &picture).map_err(DrawError::Io)
}
