//! Command-line front end: argument parsing (clap derive, the single source of help text) and
//! printing. No science lives here; every subcommand calls into the library.

mod cages;
mod derive;
mod draw;
mod energy;
mod enumerate;
mod export;
mod identify;
mod merge;
mod output;
mod plan;
mod progress;
mod query;
mod screen;
mod show;
mod sizes;
mod spiral;
mod stats;
mod verify;

use clap::{Parser, Subcommand};
use std::fmt;

/// An error to show the user: one line, and the process exit code.
#[derive(Debug)]
pub struct CliError {
    pub message: String,
    pub code: i32,
}

impl CliError {
    /// Bad input from the user (exit code 2).
    pub fn usage(message: impl Into<String>) -> CliError {
        CliError {
            message: message.into(),
            code: 2,
        }
    }

    /// A failure while doing the work, e.g. an I/O error (exit code 1).
    pub fn failed(message: impl Into<String>) -> CliError {
        CliError {
            message: message.into(),
            code: 1,
        }
    }
}

impl fmt::Display for CliError {
    fn fmt(&self, f: &mut fmt::Formatter<'_>) -> fmt::Result {
        f.write_str(&self.message)
    }
}

/// The cage-charge option shared by every command that computes Hückel descriptors.
#[derive(clap::Args, Debug, Clone, Copy)]
pub struct ChargeArg {
    /// Cage charge Q (e.g. -6 for a cage holding a trimetallic nitride); fills n/2 - Q/2
    /// orbitals and reports the gap of that ion.
    #[arg(
        long,
        default_value_t = 0,
        allow_hyphen_values = true,
        value_name = "Q"
    )]
    pub charge: i32,
}

#[derive(Parser, Debug)]
#[command(
    name = "cagerank",
    version,
    about = "Enumerate, score, catalogue and export carbon-cage isomers.\n\nRankings are screening heuristics, not predictions of real-world stability or safety."
)]
pub struct Cli {
    #[command(subcommand)]
    pub command: Command,
}

#[derive(Subcommand, Debug)]
pub enum Command {
    /// Enumerate every isomer of the given sizes by canonical face spirals.
    Enumerate(enumerate::Args),
    /// Wind a face spiral and name the isomer it describes.
    Spiral(spiral::Args),
    /// Every descriptor of one isomer (screening heuristics, not stability predictions).
    Show(show::Args),
    /// Write relaxed 3D geometries of a shortlist as XYZ, SDF and JSON with a manifest.
    Export(export::Args),
    /// Draw a Schlegel diagram of one isomer as SVG.
    Draw(draw::Args),
    /// Rank and filter the isomers of one size held in a catalogue (screening heuristics).
    Query(query::Args),
    /// Combine shard catalogues (`--shard K/N` runs) into one.
    Merge(merge::Args),
    /// Estimate units, isomers, CPU time and memory per task of a cluster run from a short sample.
    Plan(plan::Args),
    /// What a catalogue holds per size, with descriptor histograms.
    Stats(stats::Args),
    /// Check every file of a catalogue and report damage.
    Verify(verify::Args),
    /// Name the isomer(s) held in an XYZ or SDF file (bonds perceived from distances).
    Identify(identify::Args),
    /// Relax named isomers with a carbon tight-binding model and report their energies.
    Energy(energy::Args),
    /// Rank one size by relaxed tight-binding energy: graph descriptors pick candidates, the
    /// relaxation ranks them (screening heuristics, not stability predictions).
    Screen(screen::Args),
    /// List, score and rank addition and substitution patterns of one cage (screening heuristics).
    Derive(derive::Args),
}

/// `requested` worker threads capped at the cores this process may use (0 stays 0: one per
/// core), with a note on stderr unless `quiet`: more threads would only share the cores.
pub fn capped_threads(requested: usize, quiet: bool) -> usize {
    let cap = cagerank::enumerate::max_threads();
    if requested <= cap {
        return requested;
    }
    if !quiet {
        eprintln!(
            "cagerank: note: --threads {requested} capped to {cap}, the cores this machine offers; more threads would only share them"
        );
    }
    cap
}

pub fn run(cli: Cli) -> Result<(), CliError> {
    match cli.command {
        Command::Enumerate(a) => enumerate::run(a),
        Command::Spiral(a) => spiral::run(a),
        Command::Show(a) => show::run(a),
        Command::Query(a) => query::run(a),
        Command::Merge(a) => merge::run(a),
        Command::Plan(a) => plan::run(a),
        Command::Stats(a) => stats::run(a),
        Command::Verify(a) => verify::run(a),
        Command::Export(a) => export::run(a),
        Command::Draw(a) => draw::run(a),
        Command::Identify(a) => identify::run(a),
        Command::Energy(a) => energy::run(a),
        Command::Screen(a) => screen::run(a),
        Command::Derive(a) => derive::run(a),
    }
}
