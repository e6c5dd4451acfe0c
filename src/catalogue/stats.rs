//! Distributions of the main descriptors per data file, for `cagerank stats`. Computes counts
//! only; drawing text bars or SVG is left to the CLI.

use super::format::DataFile;
use super::record::{shell_from_code, PointGroup};
use super::{data_files, CatalogueError, RunInfo};
use std::collections::BTreeMap;
use std::path::Path;

/// Number of equal-width bins for continuous descriptors.
pub const BINS: usize = 12;

/// A histogram of a continuous value over equal-width bins from `min` to `max`.
#[derive(Debug, Clone, PartialEq)]
pub struct Histogram {
    pub min: f32,
    pub max: f32,
    pub counts: Vec<u64>,
}

impl Histogram {
    fn of(values: &[f32]) -> Histogram {
        let finite: Vec<f32> = values.iter().copied().filter(|v| v.is_finite()).collect();
        let min = finite.iter().copied().fold(f32::INFINITY, f32::min);
        let max = finite.iter().copied().fold(f32::NEG_INFINITY, f32::max);
        let mut counts = vec![0u64; BINS];
        if finite.is_empty() {
            return Histogram {
                min: 0.0,
                max: 0.0,
                counts,
            };
        }
        let width = (max - min) / BINS as f32;
        for v in finite {
            let bin = if width > 0.0 {
                ((v - min) / width) as usize
            } else {
                0
            };
            counts[bin.min(BINS - 1)] += 1;
        }
        Histogram { min, max, counts }
    }

    /// Lower edge of bin `i`.
    pub fn edge(&self, i: usize) -> f32 {
        self.min + (self.max - self.min) * i as f32 / BINS as f32
    }
}

/// What one data file holds.
#[derive(Debug, Clone)]
pub struct FileStats {
    pub info: RunInfo,
    pub records: u64,
    pub ipr: u64,
    pub chiral: u64,
    pub pentagon_adjacencies: BTreeMap<u32, u64>,
    pub point_groups: BTreeMap<&'static str, u64>,
    pub shells: BTreeMap<&'static str, u64>,
    pub gap: Histogram,
    pub strain: Histogram,
}

/// Statistics of every data file in a catalogue, ordered by face set, then numerically by
/// size (C20 before C100), then complete list before IPR, then charge, then shard.
pub fn catalogue_stats(dir: &Path) -> Result<Vec<FileStats>, CatalogueError> {
    let mut all = data_files(dir)?
        .iter()
        .map(|p| file_stats(p))
        .collect::<Result<Vec<_>, _>>()?;
    all.sort_by_key(|s| order_key(&s.info));
    Ok(all)
}

/// The order of [`catalogue_stats`].
fn order_key(info: &RunInfo) -> (&'static str, u32, bool, i32, Option<super::ShardId>) {
    (
        info.face_set.name(),
        info.atoms,
        info.ipr,
        info.charge,
        info.shard,
    )
}

pub fn file_stats(path: &Path) -> Result<FileStats, CatalogueError> {
    let mut file = DataFile::open(path)?;
    let mut s = FileStats {
        info: file.info.clone(),
        records: file.record_count(),
        ipr: file.ipr_count(),
        chiral: 0,
        pentagon_adjacencies: BTreeMap::new(),
        point_groups: BTreeMap::new(),
        shells: BTreeMap::new(),
        gap: Histogram::of(&[]),
        strain: Histogram::of(&[]),
    };
    let (mut gaps, mut strains) = (Vec::new(), Vec::new());
    for c in 0..file.chunk_count() {
        let chunk = file.read_chunk(c)?;
        for i in 0..chunk.len() {
            s.chiral += chunk.chiral(i) as u64;
            *s.pentagon_adjacencies
                .entry(chunk.pentagon_adjacencies(i))
                .or_default() += 1;
            let group = PointGroup::from_code(chunk.point_group_code(i))
                .expect("invariant: checked at decode");
            *s.point_groups.entry(group.name()).or_default() += 1;
            let shell = shell_from_code(chunk.shell_code(i)).expect("invariant: checked at decode");
            *s.shells.entry(shell.name()).or_default() += 1;
            gaps.push(chunk.gap(i));
            strains.push(chunk.hexagon_strain(i));
        }
    }
    s.gap = Histogram::of(&gaps);
    s.strain = Histogram::of(&strains);
    Ok(s)
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn sizes_sort_numerically_not_by_name() {
        let info = |atoms, ipr, charge| RunInfo {
            face_set: crate::cage::FaceSet::Fullerene,
            atoms,
            ipr,
            unit_count: 1,
            unit_depth: 1,
            shard: None,
            made_by: String::new(),
            all_starts: false,
            charge,
        };
        let mut runs = [
            info(100, false, 0),
            info(20, false, 0),
            info(60, true, -6),
            info(60, false, 0),
        ];
        runs.sort_by_key(order_key);
        let got: Vec<(u32, bool)> = runs.iter().map(|r| (r.atoms, r.ipr)).collect();
        // By name, "fullerene-c100" sorts before "fullerene-c20".
        assert_eq!(got, [(20, false), (60, false), (60, true), (100, false)]);
    }

    #[test]
    fn histogram_puts_extremes_in_end_bins() {
        let h = Histogram::of(&[0.0, 1.2, 0.6, f32::NAN]);
        assert_eq!(h.counts.iter().sum::<u64>(), 3);
        assert_eq!(h.counts[0], 1);
        assert_eq!(h.counts[BINS - 1], 1);
        assert_eq!(h.counts[BINS / 2], 1);
    }
}
