//! The screening order: which isomers of one size to look at first.
//!
//! The default order is built from published rules, in order of how strongly they are known to
//! matter: fewest pentagon adjacencies (Albertazzi et al., PCCP 1 (1999) 2913), closed Hückel
//! shells before open ones (Fowler & Manolopoulos, Atlas of Fullerenes), lower hexagon strain
//! (Raghavachari, Chem. Phys. Lett. 190 (1992) 397), larger HOMO–LUMO gap, and finally the spiral
//! (isomer number) so that the order is total and reproducible. The reasoning is in
//! `docs/ranking.md`. A rank is a screening heuristic, not a prediction of stability or safety.
//! This module only orders records; it computes no descriptors and prints nothing.

use super::{Descriptors, Shell};
use std::cmp::Ordering;
use std::fmt;
use std::str::FromStr;

/// A descriptor the ranking can sort on (named by its JSON key).
#[derive(Debug, Clone, Copy, PartialEq, Eq, Hash)]
pub enum RankField {
    PentagonAdjacencies,
    /// Ascending = properly-closed, pseudo-closed, meta-closed, open (see [`super::Shell`]).
    Shell,
    HexagonStrain,
    Gap,
    Homo,
    Lumo,
    PiEnergy,
    /// Exact Kekulé count, compared as an integer.
    Kekule,
    Automorphisms,
    /// Canonical spiral, i.e. isomer number order.
    Spiral,
}

impl RankField {
    /// Every field with its key, in the order shown to users.
    pub const ALL: [(RankField, &'static str); 10] = [
        (RankField::PentagonAdjacencies, "pentagon_adjacencies"),
        (RankField::Shell, "shell"),
        (RankField::HexagonStrain, "hexagon_strain"),
        (RankField::Gap, "gap"),
        (RankField::Homo, "homo"),
        (RankField::Lumo, "lumo"),
        (RankField::PiEnergy, "pi_energy"),
        (RankField::Kekule, "kekule"),
        (RankField::Automorphisms, "automorphisms"),
        (RankField::Spiral, "spiral"),
    ];

    pub fn key(self) -> &'static str {
        RankField::ALL
            .iter()
            .find(|(f, _)| *f == self)
            .map(|(_, k)| *k)
            .expect("invariant: ALL lists every field")
    }
}

/// One sort key: a field and a direction. Text form: the JSON key, with a leading `-` for
/// descending (largest first) and an optional `+` for ascending (the default).
#[derive(Debug, Clone, Copy, PartialEq, Eq, Hash)]
pub struct RankKey {
    pub field: RankField,
    pub descending: bool,
}

impl fmt::Display for RankKey {
    fn fmt(&self, f: &mut fmt::Formatter<'_>) -> fmt::Result {
        let sign = if self.descending { "-" } else { "" };
        write!(f, "{sign}{}", self.field.key())
    }
}

/// A `--rank-by` value that cannot be used.
#[derive(Debug, Clone, PartialEq, Eq)]
pub enum RankError {
    /// A key that is not a rankable descriptor.
    UnknownKey(String),
    /// No keys at all (an empty string or only commas).
    Empty,
}

impl fmt::Display for RankError {
    fn fmt(&self, f: &mut fmt::Formatter<'_>) -> fmt::Result {
        let valid: Vec<&str> = RankField::ALL.iter().map(|(_, k)| *k).collect();
        match self {
            RankError::UnknownKey(k) => write!(
                f,
                "unknown rank key '{k}'; valid keys are {} (prefix '-' for largest first)",
                valid.join(", ")
            ),
            RankError::Empty => write!(
                f,
                "no rank keys given; list some of {} separated by commas, e.g. \
                 pentagon_adjacencies,-gap",
                valid.join(", ")
            ),
        }
    }
}

impl std::error::Error for RankError {}

impl FromStr for RankKey {
    type Err = RankError;

    fn from_str(s: &str) -> Result<RankKey, RankError> {
        let s = s.trim();
        let (descending, name) = match s.strip_prefix('-') {
            Some(rest) => (true, rest),
            None => (false, s.strip_prefix('+').unwrap_or(s)),
        };
        let field = RankField::ALL
            .iter()
            .find(|(_, k)| *k == name)
            .map(|(f, _)| *f)
            .ok_or_else(|| RankError::UnknownKey(s.to_string()))?;
        Ok(RankKey { field, descending })
    }
}

/// Parses `KEY,KEY,...` as given to `--rank-by`; empty items are skipped.
pub fn parse_keys(text: &str) -> Result<Vec<RankKey>, RankError> {
    let keys = text
        .split(',')
        .filter(|item| !item.trim().is_empty())
        .map(str::parse)
        .collect::<Result<Vec<RankKey>, RankError>>()?;
    if keys.is_empty() {
        return Err(RankError::Empty);
    }
    Ok(keys)
}

/// The default screening order: `pentagon_adjacencies,shell,hexagon_strain,-gap` (then spiral).
pub fn default_keys() -> Vec<RankKey> {
    let asc = |field| RankKey {
        field,
        descending: false,
    };
    vec![
        asc(RankField::PentagonAdjacencies),
        asc(RankField::Shell),
        asc(RankField::HexagonStrain),
        RankKey {
            field: RankField::Gap,
            descending: true,
        },
    ]
}

/// Something that can be ranked: descriptors, a spiral for the final tie-break, a rank slot.
pub trait Rankable {
    fn descriptors(&self) -> &Descriptors;
    /// The spiral as [`super::spiral_numbers`] writes it; compared lexicographically, this is
    /// isomer number order within one size.
    fn spiral_numbers(&self) -> &[u32];
    fn set_rank(&mut self, rank: u64);
}

/// The values the ranking reads, from whatever holds them: scored isomers, or catalogue rows
/// still in their columns. Keeping one comparator over this trait means the catalogue's
/// `query` and the scorer's `rank` cannot drift apart.
pub trait RankFields {
    fn pentagon_adjacencies(&self) -> u32;
    fn shell(&self) -> Shell;
    fn hexagon_strain(&self) -> f64;
    fn gap(&self) -> f64;
    fn homo(&self) -> f64;
    fn lumo(&self) -> f64;
    fn pi_energy(&self) -> f64;
    fn automorphisms(&self) -> u32;
    /// Exact Kekulé counts compared as integers.
    fn cmp_kekule(&self, other: &Self) -> Ordering;
    /// Isomer-number (canonical spiral) order: the `spiral` key and the final tie-break.
    fn cmp_spiral(&self, other: &Self) -> Ordering;
}

impl<T: Rankable> RankFields for T {
    fn pentagon_adjacencies(&self) -> u32 {
        self.descriptors().pentagon_adjacencies
    }
    fn shell(&self) -> Shell {
        self.descriptors().shell
    }
    fn hexagon_strain(&self) -> f64 {
        self.descriptors().hexagon_strain
    }
    fn gap(&self) -> f64 {
        self.descriptors().gap
    }
    fn homo(&self) -> f64 {
        self.descriptors().homo
    }
    fn lumo(&self) -> f64 {
        self.descriptors().lumo
    }
    fn pi_energy(&self) -> f64 {
        self.descriptors().pi_energy
    }
    fn automorphisms(&self) -> u32 {
        self.descriptors().automorphisms
    }
    fn cmp_kekule(&self, other: &Self) -> Ordering {
        compare_decimal(&self.descriptors().kekule, &other.descriptors().kekule)
    }
    fn cmp_spiral(&self, other: &Self) -> Ordering {
        self.spiral_numbers().cmp(other.spiral_numbers())
    }
}

/// Compares two records by `keys`, then by spiral (ascending) so that distinct isomers never tie.
pub fn compare<T: RankFields>(a: &T, b: &T, keys: &[RankKey]) -> Ordering {
    keys.iter()
        .map(|key| {
            let ord = compare_field(a, b, key.field);
            if key.descending {
                ord.reverse()
            } else {
                ord
            }
        })
        .find(|ord| ord.is_ne())
        .unwrap_or_else(|| a.cmp_spiral(b))
}

fn compare_field<T: RankFields>(a: &T, b: &T, field: RankField) -> Ordering {
    match field {
        RankField::PentagonAdjacencies => a.pentagon_adjacencies().cmp(&b.pentagon_adjacencies()),
        RankField::Shell => a.shell().cmp(&b.shell()),
        RankField::HexagonStrain => a.hexagon_strain().total_cmp(&b.hexagon_strain()),
        RankField::Gap => a.gap().total_cmp(&b.gap()),
        RankField::Homo => a.homo().total_cmp(&b.homo()),
        RankField::Lumo => a.lumo().total_cmp(&b.lumo()),
        RankField::PiEnergy => a.pi_energy().total_cmp(&b.pi_energy()),
        RankField::Kekule => a.cmp_kekule(b),
        RankField::Automorphisms => a.automorphisms().cmp(&b.automorphisms()),
        RankField::Spiral => a.cmp_spiral(b),
    }
}

/// Compares two non-negative decimal integers without leading zeros exactly: the longer is
/// larger, equal lengths compare digit by digit.
fn compare_decimal(a: &str, b: &str) -> Ordering {
    a.len().cmp(&b.len()).then_with(|| a.cmp(b))
}

/// Assigns ranks 1 (best) to N by `keys` (spiral as the final tie-break) without reordering.
pub fn rank<T: Rankable>(records: &mut [T], keys: &[RankKey]) {
    let mut order: Vec<usize> = (0..records.len()).collect();
    order.sort_by(|&i, &j| compare(&records[i], &records[j], keys));
    for (position, index) in order.into_iter().enumerate() {
        records[index].set_rank(position as u64 + 1);
    }
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::score::symmetry::PointGroup;
    use crate::score::{Scored, Shell};

    fn record(spiral: u32, np: u32, shell: Shell, strain: f64, gap: f64, kekule: &str) -> Scored {
        Scored {
            atoms: 60,
            number: Some(u64::from(spiral)),
            ipr_number: None,
            spiral_numbers: vec![1, spiral],
            descriptors: Descriptors {
                pentagon_adjacencies: np,
                pentagon_penalty_kj: 90.0 * f64::from(np),
                hexagon_neighbours: [0; 7],
                hexagon_strain: strain,
                homo: 0.5,
                lumo: 0.5 - gap,
                gap,
                somo: (shell == Shell::OpenDoublet).then_some(0.1),
                shell,
                pi_energy: 1.5,
                kekule: kekule.to_string(),
                automorphisms: 1,
                point_group: PointGroup::C1,
                chiral: true,
                nmr: vec![(1, 60)],
            },
            rank: None,
        }
    }

    /// A hand-made set with ties on every key but the last, so each key gets exercised.
    fn sample() -> Vec<Scored> {
        use Shell::*;
        vec![
            record(9, 2, Open, 0.1, 0.0, "100"),
            record(3, 0, MetaClosed, 0.5, 0.2, "99"),
            record(7, 0, ProperlyClosed, 0.5, 0.3, "1000"),
            record(2, 0, ProperlyClosed, 0.5, 0.1, "5"),
            record(8, 0, ProperlyClosed, 0.2, 0.1, "7"),
            record(5, 1, PseudoClosed, 0.0, 0.9, "12"),
            record(4, 0, ProperlyClosed, 0.5, 0.3, "1000"),
            record(6, 2, OpenDoublet, 0.9, 0.05, "3"),
        ]
    }

    /// The default order written out independently as a key tuple (common practice, no source:
    /// a brute-force check of the comparator).
    fn default_le(a: &Scored, b: &Scored) -> bool {
        let shell_index = |s: Shell| match s {
            Shell::ProperlyClosed => 0,
            Shell::PseudoClosed => 1,
            Shell::MetaClosed => 2,
            // A radical with a level of its own before a partly filled degenerate level.
            Shell::OpenDoublet => 3,
            Shell::Open => 4,
        };
        let key = |r: &Scored| {
            let d = &r.descriptors;
            (
                d.pentagon_adjacencies,
                shell_index(d.shell),
                d.hexagon_strain,
                -d.gap,
                r.spiral_numbers.clone(),
            )
        };
        key(a).partial_cmp(&key(b)) != Some(Ordering::Greater)
    }

    /// Every permutation of 0..n (n! of them; fine for n = 8).
    fn permutations(n: usize) -> Vec<Vec<usize>> {
        if n == 0 {
            return vec![vec![]];
        }
        let mut out = Vec::new();
        for p in permutations(n - 1) {
            for slot in 0..n {
                let mut q = p.clone();
                q.insert(slot, n - 1);
                out.push(q);
            }
        }
        out
    }

    #[test]
    fn default_rank_equals_brute_force_sort() {
        let mut records = sample();
        rank(&mut records, &default_keys());
        let sorted: Vec<Vec<usize>> = permutations(records.len())
            .into_iter()
            .filter(|p| {
                p.windows(2)
                    .all(|w| default_le(&records[w[0]], &records[w[1]]))
            })
            .collect();
        assert_eq!(sorted.len(), 1, "distinct spirals make the order total");
        for (position, &index) in sorted[0].iter().enumerate() {
            assert_eq!(records[index].rank, Some(position as u64 + 1));
        }
        // Spot check by hand: spiral 8 (N_p 0, properly closed, lowest strain) is first;
        // spirals 4 and 7 tie on every key and are split by spiral.
        let rank_of = |s: u32| {
            records
                .iter()
                .find(|r| r.spiral_numbers[1] == s)
                .unwrap()
                .rank
        };
        assert_eq!(rank_of(8), Some(1));
        assert_eq!((rank_of(4), rank_of(7)), (Some(2), Some(3)));
        assert_eq!((rank_of(6), rank_of(9)), (Some(7), Some(8)));
    }

    #[test]
    fn kekule_key_compares_as_integers() {
        let mut records = sample();
        rank(&mut records, &parse_keys("-kekule").unwrap());
        let top: Vec<u32> = {
            let mut r: Vec<&Scored> = records.iter().collect();
            r.sort_by_key(|x| x.rank);
            r.iter().map(|x| x.spiral_numbers[1]).collect()
        };
        // 1000 (spirals 4, 7 by spiral), 100, 99, 12, 7, 5, 3: numeric, not string, order.
        assert_eq!(top, vec![4, 7, 9, 3, 5, 8, 2, 6]);
    }

    #[test]
    fn rank_keys_parse_with_directions_and_reject_unknown_names() {
        let keys = parse_keys("pentagon_adjacencies, -gap,+shell").unwrap();
        assert_eq!(keys.len(), 3);
        assert!(keys[1].descending && keys[1].field == RankField::Gap);
        assert!(!keys[2].descending && keys[2].field == RankField::Shell);
        assert_eq!(keys[1].to_string(), "-gap");
        let err = parse_keys("gap,stability").unwrap_err();
        assert_eq!(err, RankError::UnknownKey("stability".into()));
        assert!(err.to_string().contains("pentagon_adjacencies"));
        assert_eq!(parse_keys(" , "), Err(RankError::Empty));
    }
}
