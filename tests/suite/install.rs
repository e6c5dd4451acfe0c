//! Running from anywhere (issue 24 item 10): commands find the catalogue shipped with the source
//! tree when neither `$CAGERANK_CATALOGUE` nor `./catalogues` exists, and `enumerate --catalogue`
//! without a directory writes in the working directory, never into the shipped catalogue.

use std::path::PathBuf;
use std::process::Command;

fn scratch(name: &str) -> PathBuf {
    let dir = std::env::temp_dir().join(format!("cagerank-install-{name}-{}", std::process::id()));
    let _ = std::fs::remove_dir_all(&dir);
    std::fs::create_dir_all(&dir).expect("scratch directory");
    dir
}

fn cagerank_in(dir: &PathBuf, args: &[&str]) -> std::process::Output {
    Command::new(env!("CARGO_BIN_EXE_cagerank"))
        .args(args)
        .current_dir(dir)
        .env_remove("CAGERANK_CATALOGUE")
        .output()
        .expect("the binary runs")
}

#[test]
fn queries_from_another_directory_read_the_shipped_catalogue() {
    let dir = scratch("query");
    let out = cagerank_in(
        &dir,
        &["query", "--atoms", "60", "--ipr", "--format", "csv"],
    );
    let stdout = String::from_utf8_lossy(&out.stdout);
    assert!(
        out.status.success(),
        "{}",
        String::from_utf8_lossy(&out.stderr)
    );
    // IPR C60 is one cage (OEIS A046880), the Ih one with 12,500 Kekulé structures (Klein,
    // Schmalz, Hite & Seitz, J. Am. Chem. Soc. 108 (1986) 1301).
    assert_eq!(stdout.lines().count(), 2, "{stdout}");
    assert!(
        stdout.contains(",Ih,") && stdout.contains(",12500,"),
        "{stdout}"
    );
    let _ = std::fs::remove_dir_all(&dir);
}

#[test]
fn writers_without_a_directory_write_here_and_not_into_the_shipped_catalogue() {
    let dir = scratch("write");
    let shipped = PathBuf::from(env!("CARGO_MANIFEST_DIR")).join("catalogues");
    let before: Vec<_> = std::fs::read_dir(&shipped)
        .expect("shipped catalogue")
        .map(|e| e.expect("entry").file_name())
        .collect();
    // screen stores energies, so it too writes only where it is told or in ./catalogues: here
    // there is none yet, which is a one-line error, not a write into the source tree.
    let out = cagerank_in(
        &dir,
        &["screen", "--atoms", "60", "--ipr", "--charge", "-6"],
    );
    assert_eq!(
        out.status.code(),
        Some(2),
        "{}",
        String::from_utf8_lossy(&out.stderr)
    );
    let out = cagerank_in(&dir, &["enumerate", "24", "--catalogue", "--quiet"]);
    assert!(
        out.status.success(),
        "{}",
        String::from_utf8_lossy(&out.stderr)
    );
    assert!(dir
        .join("catalogues")
        .join("fullerene-c24-all.cgr")
        .is_file());
    let after: Vec<_> = std::fs::read_dir(&shipped)
        .expect("shipped catalogue")
        .map(|e| e.expect("entry").file_name())
        .collect();
    assert_eq!(
        before.len(),
        after.len(),
        "the shipped catalogue gained files"
    );
    let _ = std::fs::remove_dir_all(&dir);
}
