//! The atom count of a fullerene spiral written without one: a list of 12 pentagon positions
//! fixes the cage only together with the number of faces, so every size the positions allow is
//! wound and the sizes whose spiral closes are reported.
//!
//! The smallest candidate has as many faces as the largest position (faces = n/2 + 2); larger
//! ones add hexagons after the last pentagon. Winding is left to `spiral`; deciding what to do
//! with several sizes (ask the user) is left to the caller.

use crate::spiral::{Spiral, SpiralError};

/// Hexagons after the last pentagon beyond which no size is tried: four times the largest
/// position plus a margin. A closing run of hexagons caps the boundary left by the last
/// pentagon, which grows with the faces before it (common practice, no source: a generous bound;
/// every spiral of the shipped catalogues ends within a few faces of its last pentagon).
fn trailing_limit(last: u64) -> u64 {
    4 * last + 20
}

/// What winding at every allowed size gave.
#[derive(Debug, Clone, PartialEq, Eq)]
pub struct Closing {
    /// The spiral at each size that closes, smallest first.
    pub closing: Vec<Spiral>,
    /// The smallest and largest atom counts tried.
    pub tried: (u64, u64),
}

/// Winds `indices` at every fullerene size whose face count reaches the largest position,
/// up to a generous limit. Errors that no size can cure (not 12 positions, not increasing, a
/// zero) are returned as they are.
pub fn sizes_closing(indices: &[u64]) -> Result<Closing, SpiralError> {
    let last = indices.iter().copied().max().unwrap_or(0);
    // Faces = n/2 + 2, so the smallest n with `last` faces is 2 * (last - 2); C20 is the least.
    let smallest = (2 * last.saturating_sub(2)).max(20);
    let largest = smallest + 2 * trailing_limit(last);
    match Spiral::from_pentagon_indices(smallest, indices) {
        Err(e @ (SpiralError::WrongCount { .. } | SpiralError::NotIncreasing { .. })) => {
            return Err(e)
        }
        Err(SpiralError::OutOfRange { index: 0, faces }) => {
            return Err(SpiralError::OutOfRange { index: 0, faces })
        }
        _ => {}
    }
    let closing = (smallest..=largest)
        .step_by(2)
        .filter_map(|n| Spiral::from_pentagon_indices(n, indices).ok())
        .collect();
    Ok(Closing {
        closing,
        tried: (smallest, largest),
    })
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn structural_errors_are_not_blamed_on_the_size() {
        assert!(matches!(
            sizes_closing(&[1, 2, 3]),
            Err(SpiralError::WrongCount { .. })
        ));
        assert!(matches!(
            sizes_closing(&[1, 7, 9, 11, 13, 15, 18, 20, 22, 24, 26, 26]),
            Err(SpiralError::NotIncreasing { .. })
        ));
    }
}
