//! Helpers shared by the integration tests.

/// A permutation of 0..n from a seed (xorshift64 Fisher–Yates), for relabelling cages in
/// property tests: proptest supplies the seed, so a failure shrinks and replays.
pub fn random_perm(n: usize, seed: u64) -> Vec<u32> {
    let mut p: Vec<u32> = (0..n as u32).collect();
    let mut s = seed | 1;
    for i in (1..n).rev() {
        s ^= s << 13;
        s ^= s >> 7;
        s ^= s << 17;
        p.swap(i, (s % (i as u64 + 1)) as usize);
    }
    p
}

/// Runs the cagerank binary with the shipped catalogue as the default one; exit code, stdout
/// and stderr.
pub fn cagerank(args: &[&str]) -> (i32, String, String) {
    let catalogue = std::path::Path::new(env!("CARGO_MANIFEST_DIR")).join("catalogues");
    let out = std::process::Command::new(env!("CARGO_BIN_EXE_cagerank"))
        .args(args)
        .env("CAGERANK_CATALOGUE", catalogue)
        .output()
        .expect("the binary runs");
    (
        out.status.code().unwrap_or(-1),
        String::from_utf8_lossy(&out.stdout).into_owned(),
        String::from_utf8_lossy(&out.stderr).into_owned(),
    )
}
