//! The `cagerank` binary: parse arguments, run, print one-line errors with an exit code.

mod cli;

use clap::Parser;

fn main() {
    let args = cli::Cli::parse();
    if let Err(e) = cli::run(args) {
        eprintln!("cagerank: {e}");
        std::process::exit(e.code);
    }
}
