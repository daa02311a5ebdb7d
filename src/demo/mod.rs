//! The demo scenario. INVENTED DATA: the city, the survey and every embedding are made up by
//! [`generate::street_signs`]; nothing here was measured.
//!
//! A fictional road authority (the city of Lanterbury) surveys its street signs with a
//! vehicle-mounted camera; a frozen backbone turns each crop into a 256-dimensional unit-norm
//! embedding. Mirror pairs (no-left-turn / no-right-turn, keep-left / keep-right) are exactly
//! the labels a mirror-flip augmentation would corrupt, and three sign types are rare.

pub mod generate;

pub use generate::{SIGN_TYPES, SignType, street_signs};

use crate::io::AugmentedSet;

/// Seed of the shipped demo file `data/street-signs.npz`.
pub const DEMO_SEED: u64 = 7;

/// The demo dataset as an exportable set (every row real).
pub fn demo_set() -> AugmentedSet {
    AugmentedSet::all_real(street_signs(DEMO_SEED))
}
