//! Dealing the units of a run to the shards of a `--shard K/N` split.
//!
//! Units are cut at a fixed spiral depth and listed in spiral order, so unit i's last faces are
//! the binary digits of i: dealing round-robin (unit i to shard i mod N, formats 1 to 3) gave
//! each shard one fixed ending, and all C80 in 8 shards 5 to 15,267 isomers per shard. Here the
//! units are dealt round-robin in a fixed pseudo-random order of their indices instead, so every
//! shard gets the same number of units (within one) and no ending pattern. The dealing depends
//! only on the unit count and N, so every node of a cluster computes the same one and a merge
//! puts the units back in order.
//!
//! What it does not do: balance the work exactly. Cheap estimates of a unit's work from its
//! subtree (viable prefixes a few faces down, counts of a smaller size under the same prefix)
//! were measured and did not predict where the isomers are: in all C80, 91 of the 2,032 units
//! hold every isomer and one holds 4,734 of 31,924 (docs/performance.md), so no dealing of these
//! units keeps 16 or more shards within 25 % of the mean. Finer units for heavy subtrees would
//! need a change of the unit list. This module does not run units or write catalogues; the
//! catalogue records which dealing a shard used (`catalogue::Deal`).

/// The shard (0-based) of every unit of a run of `units` units split into `shards` parts: the
/// units, ordered by [`scramble`] of their index, dealt round-robin.
pub fn owners(units: u32, shards: u32) -> Vec<u32> {
    let shards = shards.max(1);
    let mut owner = vec![0u32; units as usize];
    for (rank, &unit) in scrambled_order(units).iter().enumerate() {
        owner[unit as usize] = rank as u32 % shards;
    }
    owner
}

/// The unit indices 0..units in a fixed pseudo-random order (by [`scramble`]): the order in
/// which units are dealt, and in which `plan` samples them (any prefix of it is a simple random
/// sample of the units).
pub fn scrambled_order(units: u32) -> Vec<u32> {
    let mut order: Vec<u32> = (0..units).collect();
    order.sort_by_key(|&i| (scramble(u64::from(i)), i));
    order
}

/// A fixed bijection of u64 (the finaliser of SplitMix64: Steele, Lea & Flood, "Fast splittable
/// pseudorandom number generators", OOPSLA 2014). Changing it changes which shard holds which
/// unit, so it is part of the shard format.
fn scramble(mut z: u64) -> u64 {
    z = z.wrapping_add(0x9E37_79B9_7F4A_7C15);
    z = (z ^ (z >> 30)).wrapping_mul(0xBF58_476D_1CE4_E5B9);
    z = (z ^ (z >> 27)).wrapping_mul(0x94D0_49BB_1331_11EB);
    z ^ (z >> 31)
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn every_shard_gets_the_same_number_of_units_within_one() {
        for (units, shards) in [(2032u32, 8u32), (2032, 64), (7, 3), (3, 5), (1, 1)] {
            let owner = owners(units, shards);
            let mut count = vec![0u32; shards as usize];
            for &k in &owner {
                count[k as usize] += 1;
            }
            let (lo, hi) = (count.iter().min().unwrap(), count.iter().max().unwrap());
            assert!(hi - lo <= 1, "{units} units in {shards}: {count:?}");
            assert_eq!(count.iter().sum::<u32>(), units);
        }
    }

    #[test]
    fn neighbouring_units_spread_over_the_shards() {
        // The round-robin dealing this replaces gave units 8j + r to one shard for every j:
        // here the eight units of each aligned block of eight must not all share a pattern.
        let owner = owners(2032, 8);
        let same_as_round_robin = owner
            .iter()
            .enumerate()
            .filter(|&(i, &k)| i as u32 % 8 == k)
            .count();
        // A pseudo-random dealing agrees with round-robin on about 1 unit in 8 (common
        // practice, no source); round-robin itself would agree on all 2,032.
        assert!(same_as_round_robin < 2032 / 4, "{same_as_round_robin}");
    }

    #[test]
    fn scramble_is_the_published_splitmix64_finaliser() {
        // SplitMix64 seeded with 0 returns 0xE220A8397B1DCDAF first (reference output of the
        // published algorithm; from memory).
        assert_eq!(scramble(0), 0xE220_A839_7B1D_CDAF);
    }
}
