//! Every `cagerank` command shown in README.md and docs/ runs and succeeds, so the documentation
//! cannot drift from the program (a documented `query --rank-by -gap` once failed).
//!
//! Commands are taken from fenced shell blocks (lines starting with `cagerank`) and from inline
//! code spans that hold a whole command (no `<placeholders>`, `[options]`, `...` or `|`). They
//! run in a scratch directory, against a scratch copy of the shipped catalogue, in document
//! order, so a `screen` shown before a `show` stores what the `show` reads. docs/performance.md
//! is left out on purpose: its commands are the benchmarks themselves (minutes each), rerun by
//! hand when figures are updated.

use std::path::{Path, PathBuf};
use std::process::Command;

fn root() -> PathBuf {
    PathBuf::from(env!("CARGO_MANIFEST_DIR"))
}

/// The documents whose commands must run.
fn documents() -> Vec<PathBuf> {
    let mut docs = vec![root().join("README.md")];
    let mut more: Vec<PathBuf> = std::fs::read_dir(root().join("docs"))
        .unwrap()
        .map(|e| e.unwrap().path())
        .filter(|p| p.extension().is_some_and(|e| e == "md"))
        .filter(|p| !p.ends_with("performance.md"))
        .collect();
    more.sort();
    docs.extend(more);
    docs
}

/// A command as written: without a trailing `# comment`, if it is whole.
fn whole_command(text: &str) -> Option<String> {
    let text = text.split(" #").next().unwrap_or(text).trim();
    let text = text.strip_prefix("$ ").unwrap_or(text);
    let placeholder = ['<', '[', '|'].iter().any(|c| text.contains(*c)) || text.contains("...");
    (text.starts_with("cagerank ") && !placeholder).then(|| text.to_string())
}

/// Commands in fenced blocks and whole commands in inline code, in document order.
fn commands_in(text: &str) -> Vec<String> {
    let mut out = Vec::new();
    let mut fenced = false;
    for line in text.lines() {
        if line.trim_start().starts_with("```") {
            fenced = !fenced;
            continue;
        }
        if fenced {
            out.extend(whole_command(line));
            continue;
        }
        for (i, span) in line.split('`').enumerate() {
            // `cagerank screen` in prose names a command; an example has arguments.
            if i % 2 == 1 && span.split_whitespace().count() > 2 {
                out.extend(whole_command(span));
            }
        }
    }
    out
}

/// Splits a command line into words, honouring single and double quotes.
fn words(command: &str) -> Vec<String> {
    let mut out = Vec::new();
    let mut word = String::new();
    let mut quote = None;
    let mut started = false;
    for c in command.chars() {
        match (quote, c) {
            (Some(q), c) if c == q => quote = None,
            (Some(_), c) => word.push(c),
            (None, '"' | '\'') => {
                quote = Some(c);
                started = true;
            }
            (None, c) if c.is_whitespace() => {
                if started || !word.is_empty() {
                    out.push(std::mem::take(&mut word));
                    started = false;
                }
            }
            (None, c) => word.push(c),
        }
    }
    if started || !word.is_empty() {
        out.push(word);
    }
    out
}

fn copy_dir(from: &Path, to: &Path) {
    std::fs::create_dir_all(to).unwrap();
    for entry in std::fs::read_dir(from).unwrap() {
        let path = entry.unwrap().path();
        if path.is_file() {
            std::fs::copy(&path, to.join(path.file_name().unwrap())).unwrap();
        }
    }
}

#[test]
fn the_quoted_command_splitter_keeps_quoted_words_together() {
    assert_eq!(
        words(r#"cagerank export --method "B3LYP D3BJ" --out x"#),
        ["cagerank", "export", "--method", "B3LYP D3BJ", "--out", "x"]
    );
    assert_eq!(
        commands_in("see `cagerank show C60:IPR-1`, `cagerank show <ID>` and `cagerank show`\n```sh\ncagerank spiral 1,7 # note\n```"),
        ["cagerank show C60:IPR-1", "cagerank spiral 1,7"]
    );
}

#[test]
fn every_command_in_readme_and_docs_runs() {
    let work = std::env::temp_dir().join(format!("cagerank-docs-{}", std::process::id()));
    let _ = std::fs::remove_dir_all(&work);
    let catalogue = work.join("catalogues");
    copy_dir(&root().join("catalogues"), &catalogue);
    // Relative paths in the docs (tests/data/..., scripts/...) resolve as from the repository.
    #[cfg(unix)]
    for dir in ["tests", "scripts"] {
        std::os::unix::fs::symlink(root().join(dir), work.join(dir)).unwrap();
    }
    let mut ran = 0;
    let mut failures = Vec::new();
    for doc in documents() {
        let text = std::fs::read_to_string(&doc).unwrap();
        for command in commands_in(&text) {
            let args = words(&command);
            let out = Command::new(env!("CARGO_BIN_EXE_cagerank"))
                .args(&args[1..])
                .current_dir(&work)
                .env("CAGERANK_CATALOGUE", &catalogue)
                .output()
                .expect("binary runs");
            ran += 1;
            if !out.status.success() {
                failures.push(format!(
                    "{}: `{command}` exited {:?}: {}",
                    doc.file_name().unwrap().to_string_lossy(),
                    out.status.code(),
                    String::from_utf8_lossy(&out.stderr).trim()
                ));
            }
        }
    }
    let _ = std::fs::remove_dir_all(&work);
    assert!(ran >= 10, "only {ran} documented commands found");
    assert!(failures.is_empty(), "{}", failures.join("\n"));
}
