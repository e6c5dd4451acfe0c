//! Numbering one isomer without listing its whole size: the position of a canonical spiral in
//! its list ([`number_of`]) and the isomer at a position ([`isomer_numbered`]).
//!
//! The search hands out isomers unit by unit in increasing spiral order, and a unit holds exactly
//! the canonical spirals that start with its prefix. So a spiral's position is the count of the
//! units before its own plus its place inside its unit, and no unit after it need run. Where the
//! list's total is published (OEIS A007894 / A046880) and the target sits in the back half of
//! the units, counting the units *after* it is cheaper (IPR cages sit near the end of the
//! complete list: C84:IPR-23 is the 51,591st of 51,592): position = total - isomers after it.
//! Both ways give the same exact number; the choice changes speed only. Counts of units are
//! order-free, so they run in parallel. Reading positions from a catalogue is left to
//! `identify::numbers`, which calls this module when no catalogue holds the size.

use super::{run_unit, run_unit_limited, units, Found, Isomer, Spec, Unit};
use crate::cage::FaceSet;
use crate::spiral::Spiral;
use rayon::prelude::*;
use std::cell::Cell;

/// Fullerenes with n = 20, 22, ..., 100 atoms: OEIS A007894 (from memory; n = 20..70 and 100
/// are also in the project's domain notes, and every value equals the count the search gives:
/// tests for n <= 70, docs/performance.md for n = 72..100).
const ALL_COUNTS: [u64; 41] = [
    1, 0, 1, 1, 2, 3, 6, 6, 15, 17, 40, 45, 89, 116, 199, 271, 437, 580, 924, 1205, 1812, 2385,
    3465, 4478, 6332, 8149, 11190, 14246, 19151, 24109, 31924, 39718, 51592, 63761, 81738, 99918,
    126409, 153493, 191839, 231017, 285914,
];

/// IPR fullerenes with n = 60, 62, ..., 120 atoms: OEIS A046880 (from memory; equal to the
/// search's counts: tests for n = 60..90, 100, docs/performance.md for the rest).
const IPR_COUNTS: [u64; 31] = [
    1, 0, 0, 0, 0, 1, 1, 1, 2, 5, 7, 9, 24, 19, 35, 46, 86, 134, 187, 259, 450, 616, 823, 1233,
    1799, 2355, 3342, 4468, 6063, 8148, 10774,
];

/// Units per window when counting: each unit's pieces already run in parallel, so a few units
/// keep both cores busy, and the bar moves after each window (the last units of a list can take
/// seconds each).
const COUNT_WINDOW: usize = 8;

/// Largest window when walking units in order to find a position.
const MAX_WALK_WINDOW: usize = 64;

/// The published table's count for a list, whatever the search would find (none past the
/// tables): the anchors of [`super::estimate`]'s model.
pub(super) fn table_count(atoms: u32, ipr: bool) -> Option<u64> {
    if ipr {
        return published_ipr(atoms);
    }
    match atoms {
        20..=100 if atoms % 2 == 0 => Some(ALL_COUNTS[(atoms as usize - 20) / 2]),
        _ => None,
    }
}

/// Published number of IPR fullerenes with `atoms` atoms, where the table reaches.
fn published_ipr(atoms: u32) -> Option<u64> {
    match atoms {
        20..=58 => Some(0),
        60..=120 if atoms % 2 == 0 => Some(IPR_COUNTS[(atoms as usize - 60) / 2]),
        _ => None,
    }
}

/// The published length of `spec`'s list, when the search is known to find every cage of that
/// list (so that its own count equals the published one) and the tables reach the size.
pub fn published_count(spec: &Spec) -> Option<u64> {
    if spec.face_set != FaceSet::Fullerene || !spec.starts_verified() || !spec.spiral_complete() {
        return None;
    }
    table_count(spec.atoms, spec.ipr)
}

/// Published (list length, IPR isomers in it) for counting from the end.
fn totals(spec: &Spec) -> Option<(u64, u64)> {
    let total = published_count(spec)?;
    let ipr = if spec.ipr {
        total
    } else {
        published_ipr(spec.atoms)?
    };
    Some((total, ipr))
}

/// (isomers, IPR isomers) found in one unit's results.
fn tally_found(found: &[Found]) -> (u64, u64) {
    let ipr = found.iter().filter(|f| f.ipr).count() as u64;
    (found.len() as u64, ipr)
}

/// Isomer and IPR-isomer counts of `todo`, run in parallel windows; `progress(done, total)` is
/// called after each window.
fn tally(spec: &Spec, todo: &[Unit], progress: &mut dyn FnMut(usize, usize)) -> (u64, u64) {
    let (mut all, mut ipr, mut done) = (0, 0, 0);
    progress(0, todo.len());
    for window in todo.chunks(COUNT_WINDOW) {
        let (a, i) = window
            .par_iter()
            .map(|u| tally_found(&run_unit(spec, u)))
            .reduce(|| (0, 0), |x, y| (x.0 + y.0, x.1 + y.1));
        all += a;
        ipr += i;
        done += window.len();
        progress(done, todo.len());
    }
    (all, ipr)
}

/// Which end of the list a lookup counts from.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub enum End {
    /// Count the isomers before the target (always possible).
    Front,
    /// Count the isomers after it and subtract from the published total.
    Back,
}

/// The isomer whose canonical spiral is `spiral`, with its number in `spec`'s list (for a
/// complete list also its IPR-list number, if IPR), or `None` if it is not on that list (not
/// canonical, wrong size, or not IPR in an IPR list). Runs only the target's unit and the units
/// on one side of it; `progress(done, total)` counts those units.
pub fn number_of(
    spec: &Spec,
    spiral: &Spiral,
    progress: impl FnMut(usize, usize),
) -> Option<Isomer> {
    number_of_from(spec, spiral, None, progress)
}

/// As [`number_of`], counting from the given end (`None`: the cheaper one where the published
/// total allows; `Some(End::Back)` falls back to the front when no total is published).
pub fn number_of_from(
    spec: &Spec,
    spiral: &Spiral,
    from: Option<End>,
    mut progress: impl FnMut(usize, usize),
) -> Option<Isomer> {
    if spiral.atoms() != spec.atoms as usize {
        return None;
    }
    let all = units(spec);
    let sizes = spiral.sizes();
    let u = all.iter().position(|u| sizes.starts_with(&u.prefix))?;
    let found = run_unit(spec, &all[u]);
    let k = found.iter().position(|f| f.spiral == *spiral)?;
    let totals = totals(spec);
    let from = match (from, totals) {
        (_, None) => End::Front,
        (Some(f), _) => f,
        // The work per unit is concentrated at the end of a list (its last units are the
        // slowest by far), so counting from the back pays only for the last few percent.
        (None, Some(_)) if (all.len() - u - 1) * 20 < all.len() => End::Back,
        (None, Some(_)) => End::Front,
    };
    let (number, ipr_number) = match (from, totals) {
        (End::Back, Some((total, ipr_total))) => {
            let (a, i) = tally(spec, &all[u + 1..], &mut progress);
            let (ua, ui) = tally_found(&found[k + 1..]);
            (total - a - ua, ipr_total - i - ui)
        }
        _ => {
            let (b, i) = tally(spec, &all[..u], &mut progress);
            let (ub, ui) = tally_found(&found[..=k]);
            (b + ub, i + ui)
        }
    };
    Some(numbered(spec, found[k].clone(), u, number, ipr_number))
}

/// An isomer with its list numbers, as [`super::enumerate`] would number it.
fn numbered(spec: &Spec, f: Found, unit: usize, number: u64, ipr_number: u64) -> Isomer {
    Isomer {
        number: (!spec.ipr).then_some(number),
        ipr_number: f.ipr.then_some(if spec.ipr { number } else { ipr_number }),
        spiral: f.spiral,
        automorphisms: f.automorphisms,
        ipr: f.ipr,
        unit: unit as u32,
    }
}

/// The isomer numbered `number` in `spec`'s list (the IPR list when `spec.ipr`), or `None` if the
/// list is shorter. Walks the units in order (from the back when the published total says the
/// number is among the last tenth of a percent) and stops at the unit that holds it.
pub fn isomer_numbered(
    spec: &Spec,
    number: u64,
    progress: impl FnMut(usize, usize),
) -> Option<Isomer> {
    let totals = totals(spec);
    if number == 0 || totals.is_some_and(|(total, _)| number > total) {
        return None;
    }
    let all = units(spec);
    match totals {
        // As in `number_of_from`: the last units hold most of the work, so walk back only for
        // the last tenth of a percent of the list.
        Some((total, ipr_total)) if (total - number).saturating_mul(1000) < total => {
            walk_back(spec, &all, total - number, ipr_total, progress)
        }
        _ => walk_front(spec, &all, number, progress),
    }
}

/// Runs units in windows that grow from 1 to [`MAX_WALK_WINDOW`], in the order of `order`,
/// handing each unit's results to `visit` until it returns `Some`. Each unit of a window runs
/// only as far as its first `limit()` isomers (the count still needed when the window starts):
/// a unit cut short holds the target, so no cut count is ever added up. Progress is reported
/// once before the first window too, so that a bar appears while a single slow unit runs
/// (the first unit of C1000 is most of a lookup of C1000:all-1).
fn walk<T>(
    spec: &Spec,
    all: &[Unit],
    order: &[usize],
    limit: impl Fn() -> usize,
    mut progress: impl FnMut(usize, usize),
    mut visit: impl FnMut(usize, Vec<Found>) -> Option<T>,
) -> Option<T> {
    let (mut at, mut width) = (0, 1);
    progress(0, order.len());
    while at < order.len() {
        let window = &order[at..(at + width).min(order.len())];
        let most = limit();
        let results: Vec<Vec<Found>> = window
            .par_iter()
            .map(|&u| run_unit_limited(spec, &all[u], most))
            .collect();
        for (&u, found) in window.iter().zip(results) {
            if let Some(hit) = visit(u, found) {
                return Some(hit);
            }
        }
        at += window.len();
        progress(at, order.len());
        width = (width * 2).min(MAX_WALK_WINDOW);
    }
    None
}

fn walk_front(
    spec: &Spec,
    all: &[Unit],
    number: u64,
    progress: impl FnMut(usize, usize),
) -> Option<Isomer> {
    let order: Vec<usize> = (0..all.len()).collect();
    let before = Cell::new(0u64);
    let mut ipr_before = 0u64;
    let still_needed = || usize::try_from(number - before.get()).unwrap_or(usize::MAX);
    walk(spec, all, &order, still_needed, progress, |u, found| {
        let (a, i) = tally_found(&found);
        if before.get() + a < number {
            before.set(before.get() + a);
            ipr_before += i;
            return None;
        }
        let k = (number - before.get() - 1) as usize;
        let ipr = ipr_before + tally_found(&found[..=k]).1;
        Some(numbered(spec, found[k].clone(), u, number, ipr))
    })
}

/// Finds the isomer with `after` isomers behind it, counting units from the last.
fn walk_back(
    spec: &Spec,
    all: &[Unit],
    after: u64,
    ipr_total: u64,
    progress: impl FnMut(usize, usize),
) -> Option<Isomer> {
    let order: Vec<usize> = (0..all.len()).rev().collect();
    let (mut behind, mut ipr_behind) = (0u64, 0u64);
    let total = published_count(spec)?;
    // Counting from the back needs every unit's whole list.
    walk(
        spec,
        all,
        &order,
        || usize::MAX,
        progress,
        |u, found| {
            let (a, i) = tally_found(&found);
            if behind + a <= after {
                behind += a;
                ipr_behind += i;
                return None;
            }
            let k = found.len() - 1 - (after - behind) as usize;
            let ipr = ipr_total - ipr_behind - tally_found(&found[k + 1..]).1;
            Some(numbered(spec, found[k].clone(), u, total - after, ipr))
        },
    )
}
