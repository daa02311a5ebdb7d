//! The demo scenario. INVENTED DATA: the city, the survey and every embedding are made up by
//! [`generate::street_signs`]; nothing here was measured.
//!
//! A fictional road authority (the city of Lanterbury) surveys its street signs with a
//! vehicle-mounted camera; a frozen backbone turns each crop into a 256-dimensional unit-norm
//! embedding. Mirror pairs (no-left-turn / no-right-turn, keep-left / keep-right) are exactly
//! the labels a mirror-flip augmentation would corrupt, and three sign types are rare. Two
//! invented input-space sets ([`input_space`]: mirrored and brightness-jittered crops) let the
//! demo compare augmenting the inputs with growing in feature space.

pub mod generate;
pub mod input_space;

pub use generate::{Mirrored, SIGN_TYPES, SignType, street_signs};
pub use input_space::{BRIGHTNESS_COPIES, InputSpaceSet, brightness, mirrored};

use std::path::Path;

use crate::error::Result;
use crate::io::AugmentedSet;

/// Seed of the shipped demo files `data/street-signs*.npz`.
pub const DEMO_SEED: u64 = 7;

/// The demo dataset as an exportable set (every row real).
pub fn demo_set() -> AugmentedSet {
    AugmentedSet::all_real(street_signs(DEMO_SEED))
}

/// The demo's input-space sets, by the name the demo assesses each under and its file name.
pub fn demo_input_space_sets() -> [(&'static str, &'static str, InputSpaceSet); 2] {
    [
        ("mirrored", "street-signs-mirrored.npz", mirrored(DEMO_SEED)),
        (
            "brightness",
            "street-signs-brightness.npz",
            brightness(DEMO_SEED),
        ),
    ]
}

impl InputSpaceSet {
    /// Write the set as `assess --external` reads it: `embeddings`, `labels` and `parent`.
    pub fn write(&self, path: &Path, force: bool) -> Result<()> {
        crate::io::write_with_parents(path, &self.x, &self.labels, &self.parents, force)
    }
}
