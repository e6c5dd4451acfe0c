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
