//! cagerank: enumerate, score, catalogue and export closed carbon cages (fullerenes and
//! related cubic polyhedra).
//!
//! The pipeline is spiral → cage → scores → catalogue → query/export/draw. This crate holds all
//! of the science; the `cagerank` binary only parses arguments and prints. Rankings computed here
//! are screening heuristics, not predictions of real-world stability or safety.

pub mod automorphism;
pub mod cage;
pub mod catalogue;
pub mod derivative;
pub mod draw;
pub mod energy;
pub mod enumerate;
pub mod export;
pub mod geometry;
pub mod id;
pub mod identify;
pub mod plan;
pub mod score;
pub mod screen;
pub mod spiral;
