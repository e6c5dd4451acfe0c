//! `cagerank verify`: check every file of a catalogue (checksums, layout, contents) and report.
//! Exits with code 2 if anything is damaged. Parsing and printing only; see `catalogue::verify`.

use super::output::{write_line, Out};
use super::query::{catalogue_dir, catalogue_error};
use super::CliError;
use cagerank::catalogue;
use std::path::PathBuf;

/// Check a catalogue completely and report damaged files.
#[derive(clap::Args, Debug)]
pub struct Args {
    /// Catalogue directory [default: $CAGERANK_CATALOGUE, else ./catalogues].
    #[arg(value_name = "CATALOGUE")]
    pub catalogue: Option<PathBuf>,
}

pub fn run(args: Args) -> Result<(), CliError> {
    let dir = catalogue_dir(&args.catalogue);
    let report = catalogue::verify(&dir).map_err(catalogue_error)?;
    let mut out = Out::stdout();
    for f in &report.files {
        let line = match (&f.summary, &f.problem) {
            (Some((label, chunks, records)), _) => format!(
                "ok       {}  {label}: {records} isomers in {chunks} chunks",
                f.path.display()
            ),
            (_, Some(problem)) => format!("DAMAGED  {problem}"),
            (None, None) => format!("unknown  {}", f.path.display()),
        };
        write_line(&mut out, &line)?;
    }
    for w in &report.unfinished {
        let line = format!(
            "unfinished run in {} (run the same enumerate command again to finish it)",
            w.display()
        );
        write_line(&mut out, &line)?;
    }
    if report.files.is_empty() {
        write_line(&mut out, &format!("no data files in {}", dir.display()))?;
    }
    out.finish()?;
    let damaged = report.files.iter().filter(|f| f.problem.is_some()).count();
    if damaged > 0 {
        return Err(CliError::usage(format!(
            "{damaged} damaged file(s) in {}; rebuild or restore them",
            dir.display()
        )));
    }
    Ok(())
}
