//! The `cagerank` binary: parse arguments, run, print one-line errors with an exit code.

mod cli;

use clap::error::ErrorKind;
use clap::{CommandFactory, Parser};

fn main() {
    let args = match cli::Cli::try_parse() {
        Ok(args) => args,
        Err(e) => parse_failure(e),
    };
    if let Err(e) = cli::run(args) {
        eprintln!("cagerank: {}", one_line(&e.message));
        std::process::exit(e.code);
    }
}

/// Help and version go to stdout as clap writes them; every other parser error becomes one line
/// on stderr (what is wrong, clap's tip if it has one, where the help is) and exit code 2, like
/// every other bad input.
fn parse_failure(e: clap::Error) -> ! {
    if matches!(
        e.kind(),
        ErrorKind::DisplayHelp
            | ErrorKind::DisplayVersion
            | ErrorKind::DisplayHelpOnMissingArgumentOrSubcommand
    ) {
        e.exit();
    }
    let rendered = e.render().to_string();
    let mut lines = rendered.lines().map(str::trim).filter(|l| !l.is_empty());
    let mut what = lines
        .next()
        .unwrap_or("bad arguments")
        .trim_start_matches("error:")
        .trim()
        .to_string();
    // "the following required arguments were not provided:" lists them on the next lines.
    if what.ends_with(':') {
        let listed: Vec<&str> = lines
            .clone()
            .take_while(|l| !l.starts_with("Usage:") && !l.starts_with("tip:"))
            .collect();
        what = format!("{what} {}", listed.join(", "));
    }
    let tip = lines
        .find_map(|l| l.strip_prefix("tip:"))
        .map(|t| format!("; {}", t.trim()))
        .unwrap_or_default();
    let command = std::env::args()
        .nth(1)
        .filter(|a| {
            cli::Cli::command()
                .get_subcommands()
                .any(|s| s.get_name() == a)
        })
        .map(|c| format!("cagerank {c} --help"))
        .unwrap_or_else(|| "cagerank --help".to_string());
    eprintln!(
        "cagerank: {}",
        one_line(&format!("{what}{tip} (see {command})"))
    );
    std::process::exit(2);
}

/// The message on one line with control characters (from file names or file contents) shown as
/// `?`, so an error never moves the cursor or colours the terminal.
fn one_line(message: &str) -> String {
    message
        .chars()
        .map(|c| if c.is_control() { '?' } else { c })
        .collect()
}
