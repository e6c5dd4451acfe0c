//! `cagerank verify`: check every file of a catalogue (checksums, layout, contents) and report.
//! Exits with code 2 if anything is damaged. Parsing and printing only; see `catalogue::verify`.

use super::output::{counted, write_line, Out};
use super::query::{catalogue_dir, catalogue_error};
use super::CliError;
use cagerank::catalogue;
use std::path::PathBuf;

/// Check a catalogue completely and report damaged files.
#[derive(clap::Args, Debug)]
pub struct Args {
    /// Catalogue directory [default: $CAGERANK_CATALOGUE, else ./catalogues, else the catalogue shipped with this build].
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
                "ok       {}  {label}: {} in {}",
                f.path.display(),
                counted(*records, "isomer", "isomers"),
                counted(*chunks as u64, "chunk", "chunks")
            ),
            (_, Some(problem)) => format!("DAMAGED  {problem}"),
            (None, None) => format!("unknown  {}", f.path.display()),
        };
        write_line(&mut out, &line)?;
    }
    for (work, label) in &report.unfinished {
        let what = label.as_ref().map_or(String::new(), |l| format!(" of {l}"));
        let line = format!(
            "unfinished run{what} in {} (run the same enumerate command again to finish it)",
            work.display()
        );
        write_line(&mut out, &line)?;
    }
    for problem in &report.work_problems {
        write_line(&mut out, &format!("DAMAGED  {problem}"))?;
    }
    if report.files.is_empty() {
        write_line(&mut out, &format!("no data files in {}", dir.display()))?;
    }
    out.finish()?;
    let damaged =
        report.files.iter().filter(|f| f.problem.is_some()).count() + report.work_problems.len();
    if damaged > 0 {
        return Err(CliError::usage(format!(
            "{} in {}; rebuild, restore or delete them",
            counted(
                damaged as u64,
                "damaged or misplaced file",
                "damaged or misplaced files"
            ),
            dir.display()
        )));
    }
    Ok(())
}
