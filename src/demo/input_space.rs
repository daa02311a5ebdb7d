//! The demo's two input-space sets. INVENTED DATA, like the survey they come from: no image
//! was mirrored or brightened. Each set is what a user's own backbone might return for
//! augmented crops — a transform applied to the image, the result embedded again — modelled
//! in the generator's latent space, so `assess --external` can compare input-space and
//! feature-space augmentation on the demo.
//!
//! - **Mirrored crops**: one per crop of every sign type whose mirror image is a real sign
//!   ([`Mirrored`]): the crop's latent is reflected along its type's handedness direction
//!   (about the mirror pair's shared centre, or the type's own mean), which turns a
//!   no-left-turn crop into a no-right-turn one; the pole's offset and the crop's own spread
//!   are kept, since it is the same photograph.
//! - **Brightness-jittered crops**: [`BRIGHTNESS_COPIES`] per crop of the rare sign types, as
//!   a pipeline that augments only its rare classes would make: the embedding moves along one
//!   fixed "brightness" direction by a random amount, the same label.
//!
//! Each row names its parent by the real crop's id.

use ndarray::{Array1, Array2};
use rand_distr::{Distribution, StandardNormal};

use super::generate::{
    BACKGROUND_NOISE, DIMS, LATENT, Mirrored, SIGN_TYPES, crop_id, gaussian_unit, gaussian_vec,
    survey, write_unit,
};
use crate::seed;

/// Jittered copies made of each crop of a rare sign type.
pub const BRIGHTNESS_COPIES: usize = 8;

/// Crops of fewer than this many are the survey's rare sign types (no-right-turn 16,
/// keep-right 14, falling-rocks 10; the next is keep-left with 90).
const RARE_BELOW: usize = 50;

/// Standard deviation of a brightness change's step along its direction, in latent units
/// (a crop's own spread is about 1.2 along each of its type's six axes).
const BRIGHTNESS_STEP: f64 = 0.3;

/// Re-embedding an augmented image does not reproduce its background noise exactly: fresh
/// noise of this share of the survey's is added to every augmented row.
const REEMBED_NOISE: f64 = 0.5;

/// An input-space set as `assess --external` reads it: rows, their labels (class names) and
/// each row's parent (the id of the real crop it was made from).
#[derive(Debug, Clone, PartialEq)]
pub struct InputSpaceSet {
    /// Unit-norm rows, as every embedding of the scenario.
    pub x: Array2<f32>,
    /// The class name of each row: the label the transform gives, not always the parent's.
    pub labels: Vec<String>,
    /// The id of each row's parent among the demo dataset's crops.
    pub parents: Vec<String>,
}

/// The demo's mirrored crops for `seed` (the shipped files use the demo's seed).
pub fn mirrored(seed: u64) -> InputSpaceSet {
    let s = survey(seed);
    let mut rng = seed::stream(seed, &[seed::tag("demo-mirrored")]);
    let made: Vec<(usize, usize, Array1<f64>)> = (0..s.types.len())
        .filter_map(|r| {
            let t = s.types[r];
            let label = match SIGN_TYPES[t].mirrored {
                Mirrored::NotASign => return None,
                Mirrored::Itself => t,
                Mirrored::Partner => SIGN_TYPES[t].mirror.map_or(t, |(partner, _)| partner),
            };
            let (h, centre) = &s.mirror_axes[t];
            let side = (&s.latents[r] - centre).dot(h);
            let step = s.projection.t().dot(h) * (-2.0 * side);
            let v = &s.raw[r] + &step + reembedding_noise(&mut rng);
            Some((r, label, v))
        })
        .collect();
    assemble(made)
}

/// The demo's brightness-jittered crops for `seed`.
pub fn brightness(seed: u64) -> InputSpaceSet {
    let s = survey(seed);
    let mut rng = seed::stream(seed, &[seed::tag("demo-brightness")]);
    let direction = s.projection.t().dot(&gaussian_unit(LATENT, &mut rng));
    let mut made = Vec::new();
    for r in 0..s.types.len() {
        let t = s.types[r];
        if SIGN_TYPES[t].crops >= RARE_BELOW {
            continue;
        }
        for _ in 0..BRIGHTNESS_COPIES {
            let z: f64 = StandardNormal.sample(&mut rng);
            let v = &s.raw[r] + &(&direction * (BRIGHTNESS_STEP * z)) + reembedding_noise(&mut rng);
            made.push((r, t, v));
        }
    }
    assemble(made)
}

fn reembedding_noise(rng: &mut seed::Rng) -> Array1<f64> {
    gaussian_vec(DIMS, BACKGROUND_NOISE * REEMBED_NOISE, rng)
}

/// Rows `(parent row, class, raw embedding)` as a set: normalised, labelled by name, parents
/// by the survey's crop ids.
fn assemble(made: Vec<(usize, usize, Array1<f64>)>) -> InputSpaceSet {
    let mut x = Array2::<f32>::zeros((made.len(), DIMS));
    let mut labels = Vec::with_capacity(made.len());
    let mut parents = Vec::with_capacity(made.len());
    for (i, (r, t, v)) in made.iter().enumerate() {
        write_unit(x.row_mut(i), v);
        labels.push(SIGN_TYPES[*t].name.to_string());
        parents.push(crop_id(*r));
    }
    InputSpaceSet { x, labels, parents }
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::demo::generate::survey;
    use crate::demo::street_signs;

    /// The row of the survey a parent id names.
    fn parent_row(id: &str) -> usize {
        id.trim_start_matches("crop-").parse().unwrap()
    }

    #[test]
    fn mirrored_crops_follow_each_sign_types_rule() {
        // Source: the generator's definition (SIGN_TYPES' `mirrored`, data/README.md).
        let real = street_signs(7);
        let set = mirrored(7);
        let expected: usize = SIGN_TYPES
            .iter()
            .filter(|t| t.mirrored != Mirrored::NotASign)
            .map(|t| t.crops)
            .sum();
        assert_eq!(set.x.nrows(), expected);
        for (label, parent) in set.labels.iter().zip(&set.parents) {
            let t = &SIGN_TYPES[real.labels[parent_row(parent)] as usize];
            let want = match t.mirrored {
                Mirrored::Itself => t.name,
                Mirrored::Partner => SIGN_TYPES[t.mirror.unwrap().0].name,
                Mirrored::NotASign => panic!("{} was mirrored", t.name),
            };
            assert_eq!(label, want);
        }
        assert!(crate::data::is_unit_norm(set.x.view()));
        assert_eq!(set, mirrored(7));
    }

    #[test]
    fn a_mirrored_pair_lands_on_its_partner() {
        // Source: the generator's construction: the reflection along the pair's handedness
        // direction maps one side's mean onto the other's, so along that direction mirrored
        // no-left-turn crops sit where the real no-right-turn crops do, not where their own
        // class does. (Other directions keep the photograph's pole and spread.)
        let s = survey(7);
        let real = &s.dataset;
        let set = mirrored(7);
        for (from, to) in [
            ("no-left-turn", "no-right-turn"),
            ("keep-left", "keep-right"),
        ] {
            let (f, t) = (
                real.class_index(from).unwrap(),
                real.class_index(to).unwrap(),
            );
            let axis = s.projection.t().dot(&s.mirror_axes[f as usize].0);
            let along = |x: ndarray::ArrayView2<f32>, rows: Vec<usize>| {
                rows.iter()
                    .map(|&r| x.row(r).mapv(f64::from).dot(&axis))
                    .sum::<f64>()
                    / rows.len() as f64
            };
            let of = |c: u32| {
                (0..real.n_rows())
                    .filter(|&r| real.labels[r] == c)
                    .collect()
            };
            let flipped = along(
                set.x.view(),
                (0..set.x.nrows())
                    .filter(|&i| real.labels[parent_row(&set.parents[i])] == f)
                    .collect(),
            );
            let (own, partner) = (along(real.x.view(), of(f)), along(real.x.view(), of(t)));
            assert!(
                (flipped - partner).abs() < (flipped - own).abs() / 3.0,
                "{from}: mirrored {flipped}, {to} {partner}, {from} {own}"
            );
        }
    }

    #[test]
    fn brightness_copies_keep_their_parents_label_and_stay_near_it() {
        // Source: the generator's definition: BRIGHTNESS_COPIES per crop of the rare types,
        // same label, a small step (the parent is nearer than any other real crop of its type).
        let real = street_signs(7);
        let set = brightness(7);
        let rare: usize = SIGN_TYPES
            .iter()
            .filter(|t| t.crops < RARE_BELOW)
            .map(|t| t.crops)
            .sum();
        assert_eq!(set.x.nrows(), BRIGHTNESS_COPIES * rare);
        let mut nearest_is_parent = 0;
        for (i, parent) in set.parents.iter().enumerate() {
            let p = parent_row(parent);
            assert_eq!(set.labels[i], real.classes[real.labels[p] as usize]);
            let nearest = (0..real.n_rows())
                .map(|r| {
                    let d: f32 = set
                        .x
                        .row(i)
                        .iter()
                        .zip(real.x.row(r))
                        .map(|(a, b)| (a - b) * (a - b))
                        .sum();
                    (d, r)
                })
                .min_by(|a, b| a.0.total_cmp(&b.0))
                .unwrap()
                .1;
            nearest_is_parent += usize::from(nearest == p);
        }
        assert!(
            nearest_is_parent * 10 >= set.x.nrows() * 9,
            "{nearest_is_parent}"
        );
        assert_eq!(set, brightness(7));
    }
}
