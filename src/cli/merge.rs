//! `cagerank merge`: combine shard catalogues (`--shard K/N` runs) into one catalogue that is
//! byte-identical to an unsharded run. Parsing and printing only; see `catalogue::merge`.

use super::output::{counted, write_line, Out};
use super::query::catalogue_error;
use super::CliError;
use cagerank::catalogue;
use std::path::PathBuf;

/// Merge shard catalogues into one (checks they form one complete run).
#[derive(clap::Args, Debug)]
pub struct Args {
    /// Shard catalogue directories, one per `--shard K/N` run.
    #[arg(value_name = "CATALOGUE", required = true)]
    pub inputs: Vec<PathBuf>,
    /// Catalogue directory to write the merged data into.
    #[arg(long, value_name = "DIR")]
    pub into: PathBuf,
}

pub fn run(args: Args) -> Result<(), CliError> {
    let report = catalogue::merge(&args.inputs, &args.into).map_err(catalogue_error)?;
    let mut out = Out::stdout();
    for (path, records) in &report.written {
        write_line(
            &mut out,
            &format!(
                "wrote {} ({})",
                path.display(),
                counted(*records, "isomer", "isomers")
            ),
        )?;
    }
    for path in &report.unchanged {
        write_line(
            &mut out,
            &format!("already present, unchanged: {}", path.display()),
        )?;
    }
    out.finish()
}
