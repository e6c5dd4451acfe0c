//! The completion store shared by every search thread (see `Search::solve`).
//!
//! Profiling all C100 showed over a third of the run waiting on memory in a general-purpose hash
//! map: each lookup touched its control bytes and its 48-byte bucket in different cache lines,
//! and at a few hundred megabytes neither stays in cache. This table keeps the whole entry
//! (16-byte key, 8-byte range) in one 24-byte slot with linear probing, so a lookup and the insert
//! that follows a miss usually touch one cache line.

use std::sync::atomic::{AtomicBool, Ordering};
use std::sync::{Mutex, MutexGuard, OnceLock};

/// Bounds on the store (peak process memory up to about 1.2 GB; with hexagon starts twice the
/// caps, see [`WIDE`]); a shard is emptied when it reaches its part of either. On 4 KB pages, all C100 on 2 threads took 151 s with 2^21
/// boundaries, 121 s with 2^22, 103 s with 2^23 and 115 s with 2^24 (0.17, 0.31, 0.61 and
/// 0.91 GB peak): the larger table cost more in TLB and cache misses than its hits saved. On
/// 2 MB pages (see [`advise_huge_pages`]) 2^24 is the faster: all C100 135.7 s against 149.1 s,
/// IPR C120 75.1 / 79.7 s against 85.4 / 82.4 s (interleaved, 0.99 and 0.82 GB peak;
/// measured 2026-12-02; docs/performance.md as of commits a023b6b and 15043ff).
const MAX_BOUNDARIES: usize = 1 << 24;
const MAX_CODES: usize = 1 << 25;
const SHARDS: usize = 64;
/// Slots per shard: a table starts small and doubles when half full, up to twice the boundaries
/// a shard may hold, so probe runs stay short and small runs touch little memory.
const FIRST_SLOTS: usize = 1 << 10;

/// Runs with hexagon starts may use twice the caps above (peak about 2.1 GB). They fill the
/// store at C100: the default all C100 (hexagon starts on) took 235 / 224 / 249 s with twice
/// the caps against 318 / 290 / 326 s, in interleaved pairs (2.0-2.2 against 1.0-1.1 GB peak;
/// four times the caps gave 207 s at 3.6 GB), while IPR C120 gained nothing from them and
/// doubled its memory (35.7 / 27.7 s against 31.4 / 29.3 s; measured 2026-12-03,
/// docs/performance.md as of commit 7b3f36d).
static WIDE: AtomicBool = AtomicBool::new(false);

/// Chooses the caps for the runs that follow (see [`WIDE`]). Runs sharing a process may
/// switch it under each other; that changes speed and memory, never results.
pub(super) fn widen(wide: bool) {
    WIDE.store(wide, Ordering::Relaxed);
}

/// The most memory the store can hold under the caps for runs with (`wide`) or without
/// hexagon starts: every shard's table at its largest slot count and its codes at their cap
/// (about 0.94 GB, or 1.9 GB wide; peaks measured with it full were 1.0-1.1 and 2.0-2.2 GB).
pub(super) fn most_bytes(wide: bool) -> u64 {
    let scale = if wide { 2 } else { 1 };
    let slots = 2 * MAX_BOUNDARIES * std::mem::size_of::<Slot>();
    let codes = MAX_CODES * std::mem::size_of::<u32>();
    (scale * (slots + codes)) as u64
}

/// The per-shard caps now in force: boundaries, completion codes, slots.
fn caps() -> (usize, usize, usize) {
    let scale = if WIDE.load(Ordering::Relaxed) { 2 } else { 1 };
    let boundaries = scale * MAX_BOUNDARIES / SHARDS;
    (boundaries, scale * MAX_CODES / SHARDS, 2 * boundaries)
}

/// One entry: the key's two halves and the range of its codes (`from | to << 32`). The all-zero
/// key marks an empty slot (boundary keys are never zero: their header holds the number of faces
/// to go, at least one).
type Slot = [u64; 3];

#[derive(Default)]
struct Shard {
    /// Open addressing with linear probing; allocated on the first insert.
    slots: Vec<Slot>,
    used: usize,
    codes: Vec<u32>,
}

impl Shard {
    /// Index of the slot holding `key`, or of the empty slot where it would go.
    fn probe(&self, key: [u64; 2], hash: u64) -> usize {
        let mask = self.slots.len() - 1;
        let mut i = hash as usize & mask;
        loop {
            let k = [self.slots[i][0], self.slots[i][1]];
            if k == key || k == [0, 0] {
                return i;
            }
            i = (i + 1) & mask;
        }
    }

    /// Doubles the table, moving every entry to its new place.
    fn grow(&mut self) {
        let doubled = vec![[0; 3]; 2 * self.slots.len()];
        advise_huge_pages(&doubled);
        let old = std::mem::replace(&mut self.slots, doubled);
        for slot in old {
            if slot[..2] != [0, 0] {
                let (parts, hash) = split_key(u128::from(slot[1]) << 64 | u128::from(slot[0]));
                let i = self.probe(parts, hash);
                self.slots[i] = slot;
            }
        }
    }

    fn clear(&mut self) {
        self.slots.fill([0; 3]);
        self.used = 0;
        self.codes.clear();
    }
}

/// Asks Linux to back a large table with 2 MB pages. Lookups land on random slots of a few
/// hundred megabytes, so with 4 KB pages nearly every one also misses the TLB; with huge pages
/// IPR C120 ran 11-19 % faster in two interleaved pairs (measured 2026-12-02; docs/performance.md
/// as of commit dabaa79). Advice only: if the kernel declines, nothing changes but speed.
#[cfg(target_os = "linux")]
fn advise_huge_pages(slots: &[Slot]) {
    const PAGE: usize = 4096;
    const HUGE_PAGE: usize = 2 << 20;
    let start = slots.as_ptr() as usize;
    let end = start + std::mem::size_of_val(slots);
    let first = start.next_multiple_of(PAGE);
    let last = end / PAGE * PAGE;
    if last > first + HUGE_PAGE {
        // SAFETY: [first, last) is page-aligned and lies inside the live allocation `slots`;
        // MADV_HUGEPAGE changes only how the kernel backs those pages, never their contents,
        // and its result is ignored because the advice is optional.
        unsafe {
            libc::madvise(
                first as *mut libc::c_void,
                last - first,
                libc::MADV_HUGEPAGE,
            );
        }
    }
}

#[cfg(not(target_os = "linux"))]
fn advise_huge_pages(_slots: &[Slot]) {}

static STORE: OnceLock<Vec<Mutex<Shard>>> = OnceLock::new();

/// The key's halves and its hash.
fn split_key(key: u128) -> ([u64; 2], u64) {
    let parts = [key as u64, (key >> 64) as u64];
    (parts, hash(key))
}

/// Key bits left out of the hash: the free valencies of the newest three boundary faces (two
/// and a half with IPR flags). Boundaries looked up one after another (siblings and cousins in
/// the search) differ mostly there, so they land in neighbouring slots and one cache miss often
/// serves several lookups; the full key is still compared. Interleaved on 2 threads: all C90
/// 34.0 / 35.7 s against 39.4 / 40.1 s, all C80 about 7 % faster; IPR C110 within the noise.
/// Leaving out 22 bits was slower (the groups sharing a slot grow too long).
const NEAR_BITS: u32 = 10;

/// Multiply-fold of the key without its [`NEAR_BITS`]: the keys are dense bit patterns, so a
/// DoS-resistant hash would only cost time.
fn hash(key: u128) -> u64 {
    let key = key >> NEAR_BITS;
    let (low, high) = (key as u64, (key >> 64) as u64);
    let mut h = (low ^ high.rotate_left(29)).wrapping_mul(0x9E37_79B9_7F4A_7C15);
    h ^= h >> 32;
    h.wrapping_mul(0x9E37_79B9_7F4A_7C15)
}

fn shard(hash: u64) -> MutexGuard<'static, Shard> {
    let shards = STORE.get_or_init(|| (0..SHARDS).map(|_| Mutex::default()).collect());
    // The top bits pick the shard and the low bits the slot, so the two stay independent.
    lock(&shards[(hash >> 58) as usize % SHARDS])
}

/// A panic elsewhere cannot leave a shard inconsistent (ranges are stored after their codes),
/// so a poisoned lock is taken as it is.
fn lock(shard: &Mutex<Shard>) -> MutexGuard<'_, Shard> {
    shard
        .lock()
        .unwrap_or_else(|poisoned| poisoned.into_inner())
}

/// Copies the completions stored for `key` into `out` (replacing its contents); false if the
/// key is unknown.
pub(super) fn recall(key: u128, out: &mut Vec<u32>) -> bool {
    let (parts, hash) = split_key(key);
    let shard = shard(hash);
    if shard.slots.is_empty() {
        return false;
    }
    let [k0, k1, range] = shard.slots[shard.probe(parts, hash)];
    if [k0, k1] != parts {
        return false;
    }
    out.clear();
    out.extend_from_slice(&shard.codes[range as u32 as usize..(range >> 32) as usize]);
    true
}

/// Stores `codes` as the completions of `key`. A shard that is full is emptied first; another
/// thread may have stored the same key meanwhile, in which case its entry (the same
/// completions) is kept.
pub(super) fn remember(key: u128, codes: &[u32]) {
    let (max_boundaries, max_codes, max_slots) = caps();
    if codes.len() > max_codes {
        return;
    }
    let (parts, hash) = split_key(key);
    let mut shard = shard(hash);
    if shard.slots.is_empty() {
        shard.slots = vec![[0; 3]; FIRST_SLOTS];
    }
    if shard.used >= max_boundaries || shard.codes.len() + codes.len() > max_codes {
        shard.clear();
    } else if 2 * (shard.used + 1) > shard.slots.len() && shard.slots.len() < max_slots {
        shard.grow();
    }
    let i = shard.probe(parts, hash);
    if shard.slots[i][..2] == parts {
        return;
    }
    let from = shard.codes.len() as u64;
    shard.codes.extend_from_slice(codes);
    let to = shard.codes.len() as u64;
    shard.slots[i] = [parts[0], parts[1], from | to << 32];
    shard.used += 1;
}

/// Empties the store (results never depend on it; benchmarks start cold as a fresh process).
pub(super) fn forget() {
    if let Some(shards) = STORE.get() {
        for shard in shards {
            lock(shard).clear();
        }
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn remembers_recalls_and_keeps_the_first_entry() {
        // The search never makes this key: read as a header, 0xABCD has face-set code 3, which
        // no face set has, and its boundary-length field (0) does not match its bits.
        let key = 0xABCD_u128 << 110 | 12345;
        let mut out = vec![99];
        assert!(!recall(key, &mut out));
        remember(key, &[1, 2, 3]);
        assert!(recall(key, &mut out));
        assert_eq!(out, [1, 2, 3]);
        remember(key, &[4]);
        assert!(recall(key, &mut out));
        assert_eq!(out, [1, 2, 3]);
        assert!(!recall(key + 1, &mut out));
        remember(key + 1, &[]);
        assert!(recall(key + 1, &mut out));
        assert!(out.is_empty());
    }
}
