//! Isomer numbers for identified cages read from the shipped catalogue instead of enumerating.

use cagerank::enumerate::{find_by_number, Spec};
use cagerank::identify::numbers::{from_catalogue, Number};
use cagerank::spiral::Spiral;
use std::path::PathBuf;

fn shipped() -> PathBuf {
    PathBuf::from(env!("CARGO_MANIFEST_DIR")).join("catalogues")
}

#[test]
fn c70_d5h_numbers_come_from_the_catalogue() {
    // Atlas (from memory): C70-D5h is C70:8149 and the only IPR C70.
    let s =
        Spiral::from_pentagon_indices(70, &[1, 7, 9, 11, 13, 15, 27, 29, 31, 33, 35, 37]).unwrap();
    let (complete, ipr) = from_catalogue(&shipped(), &s, true).unwrap();
    assert_eq!(complete, Some(Number::Listed(8149)));
    assert_eq!(ipr, Some(Number::Listed(1)));
}

#[test]
fn catalogue_numbers_agree_with_enumeration() {
    for n in [1u64, 17, 271] {
        let iso = find_by_number(&Spec::fullerene(50, false).unwrap(), n).unwrap();
        let (complete, ipr) = from_catalogue(&shipped(), &iso.spiral, false).unwrap();
        assert_eq!(complete, Some(Number::Listed(n)));
        assert_eq!(ipr, Some(Number::NotListed));
    }
}

#[test]
fn ipr_only_sizes_give_the_ipr_number_and_leave_the_complete_one_open() {
    // The shipped catalogue holds the IPR list of C100 but not its complete list.
    let iso = find_by_number(&Spec::fullerene(100, true).unwrap(), 450).unwrap();
    let (complete, ipr) = from_catalogue(&shipped(), &iso.spiral, true).unwrap();
    assert_eq!(complete, None);
    assert_eq!(ipr, Some(Number::Listed(450)));
}
