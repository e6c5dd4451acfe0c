//! Buffered standard output that treats a closed pipe (e.g. `| head`) as a normal end.

use super::CliError;
use std::io::{self, BufWriter, Write};

pub struct Out {
    inner: BufWriter<io::Stdout>,
    closed: bool,
}

impl Out {
    pub fn stdout() -> Out {
        Out {
            inner: BufWriter::new(io::stdout()),
            closed: false,
        }
    }

    /// True once the reader has gone away; callers can stop producing lines.
    pub fn is_closed(&self) -> bool {
        self.closed
    }

    /// Sends what is buffered now, for output that comes slowly (one line per sampled size).
    pub fn flush(&mut self) -> Result<(), CliError> {
        if self.closed {
            return Ok(());
        }
        match self.inner.flush() {
            Err(e) if e.kind() == io::ErrorKind::BrokenPipe => {
                self.closed = true;
                Ok(())
            }
            Err(e) => Err(CliError::failed(format!("cannot write output: {e}"))),
            Ok(()) => Ok(()),
        }
    }

    pub fn finish(mut self) -> Result<(), CliError> {
        if self.closed {
            return Ok(());
        }
        match self.inner.flush() {
            Err(e) if e.kind() != io::ErrorKind::BrokenPipe => {
                Err(CliError::failed(format!("cannot write output: {e}")))
            }
            _ => Ok(()),
        }
    }
}

/// Writes one line; after the reader has gone away further lines are dropped silently.
pub fn write_line(out: &mut Out, line: &str) -> Result<(), CliError> {
    if out.closed {
        return Ok(());
    }
    match writeln!(out.inner, "{line}") {
        Ok(()) => Ok(()),
        Err(e) if e.kind() == io::ErrorKind::BrokenPipe => {
            out.closed = true;
            Ok(())
        }
        Err(e) => Err(CliError::failed(format!("cannot write output: {e}"))),
    }
}

/// "1 line", "3 lines": a count with its noun in the right number (`plural` is the noun's
/// plural form, for nouns that do not just take an "s").
pub fn counted(n: u64, singular: &str, plural: &str) -> String {
    if n == 1 {
        format!("1 {singular}")
    } else {
        format!("{n} {plural}")
    }
}

/// 285914 -> "285,914".
pub fn grouped(n: u64) -> String {
    let digits = n.to_string();
    let mut out = String::new();
    for (i, c) in digits.chars().enumerate() {
        if i > 0 && (digits.len() - i) % 3 == 0 {
            out.push(',');
        }
        out.push(c);
    }
    out
}
