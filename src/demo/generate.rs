//! Generator of the invented street-sign embeddings.
//!
//! Each sign type has a mean in a 32-dimensional latent space and its own low-rank spread;
//! each physical sign (a "pole", the group) adds an offset shared by all its crops, so crops of
//! one sign are more alike than crops of two signs of the same type — which is why the demo
//! splits by group. Mirror pairs share a mean except along one "handedness" direction, so
//! they are close but separable. The latent is mapped to 256 dimensions by a fixed orthonormal
//! projection, background noise is added, and rows are normalised to unit length, as
//! embeddings of contrastive backbones usually are.

use ndarray::{Array1, Array2};
use rand::Rng as _;
use rand_distr::{Distribution, StandardNormal};

use crate::data::Dataset;
use crate::seed::{self, Rng};

/// One invented sign type and how many crops the survey found.
#[derive(Debug, Clone, Copy)]
pub struct SignType {
    /// Display name of the sign type (also its class name).
    pub name: &'static str,
    /// Number of crops of this type in the invented survey.
    pub crops: usize,
    /// Family: 0 round prohibitive, 1 triangular warning, 2 blue mandatory, 3 octagon/other.
    pub family: usize,
    /// For a mirror pair: the partner's index and this side's sign (+1 / −1).
    pub mirror: Option<(usize, f64)>,
    /// What a mirrored crop of this sign shows (the invented mirrored set follows it).
    pub mirrored: Mirrored,
}

/// What a left-right mirrored crop of a sign type shows, decided per type for the invented
/// mirrored set (data/README.md gives the reasons).
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub enum Mirrored {
    /// The same sign: the mirror image of a symmetric sign, or of one whose pictogram is
    /// drawn facing either way.
    Itself,
    /// The mirror pair's other sign: the label moves to it.
    Partner,
    /// No real sign (mirrored digits or lettering); a careful pipeline does not mirror it.
    NotASign,
}

/// The sign types of the demo, in file order. Counts are invented.
pub const SIGN_TYPES: [SignType; 11] = [
    SignType {
        name: "stop",
        crops: 240,
        family: 3,
        mirror: None,
        mirrored: Mirrored::NotASign,
    },
    SignType {
        name: "yield",
        crops: 200,
        family: 1,
        mirror: None,
        mirrored: Mirrored::Itself,
    },
    SignType {
        name: "speed-limit-30",
        crops: 180,
        family: 0,
        mirror: None,
        mirrored: Mirrored::NotASign,
    },
    SignType {
        name: "speed-limit-50",
        crops: 160,
        family: 0,
        mirror: None,
        mirrored: Mirrored::NotASign,
    },
    SignType {
        name: "pedestrian-crossing",
        crops: 140,
        family: 1,
        mirror: None,
        mirrored: Mirrored::Itself,
    },
    SignType {
        name: "no-entry",
        crops: 120,
        family: 0,
        mirror: None,
        mirrored: Mirrored::Itself,
    },
    SignType {
        name: "no-left-turn",
        crops: 110,
        family: 0,
        mirror: Some((7, 1.0)),
        mirrored: Mirrored::Partner,
    },
    SignType {
        name: "no-right-turn",
        crops: 16,
        family: 0,
        mirror: Some((6, -1.0)),
        mirrored: Mirrored::Partner,
    },
    SignType {
        name: "keep-left",
        crops: 90,
        family: 2,
        mirror: Some((9, 1.0)),
        mirrored: Mirrored::Partner,
    },
    SignType {
        name: "keep-right",
        crops: 14,
        family: 2,
        mirror: Some((8, -1.0)),
        mirrored: Mirrored::Partner,
    },
    SignType {
        name: "falling-rocks",
        crops: 10,
        family: 1,
        mirror: None,
        mirrored: Mirrored::Itself,
    },
];

pub(super) const LATENT: usize = 32;
pub(super) const DIMS: usize = 256;
const SPREAD_RANK: usize = 6;

/// The demo dataset for `seed` (the shipped file uses seed 7). Rows are interleaved across
/// sign types in survey order; labels are sign-type names; groups are pole ids.
pub fn street_signs(seed: u64) -> Dataset {
    survey(seed).dataset
}

/// The invented survey behind the demo dataset: the rows, and what made them, so the
/// input-space sets (`super::input_space`) can change a crop the way a transform of its image
/// would and embed it again.
pub(super) struct Survey {
    pub dataset: Dataset,
    /// The fixed map from the latent space to the embedding (`LATENT` orthonormal rows).
    pub projection: Array2<f64>,
    /// Per row, its sign type's index in [`SIGN_TYPES`].
    pub types: Vec<usize>,
    /// Per row, its latent vector.
    pub latents: Vec<Array1<f64>>,
    /// Per row, its embedding before normalisation (projection plus background noise).
    pub raw: Vec<Array1<f64>>,
    /// Per sign type, the direction a mirror flips and the point it flips about: the pair's
    /// shared centre for a mirror pair, the type's own mean otherwise.
    pub mirror_axes: Vec<(Array1<f64>, Array1<f64>)>,
}

/// Standard deviation of the background noise added to every embedding coordinate.
pub(super) const BACKGROUND_NOISE: f64 = 0.035;

pub(super) fn survey(seed: u64) -> Survey {
    let mut rng = seed::stream(seed, &[seed::tag("demo-street-signs")]);
    let projection = orthonormal_rows(LATENT, DIMS, &mut rng);
    let families: Vec<Array1<f64>> = (0..4)
        .map(|_| gaussian_vec(LATENT, 1.0, &mut rng))
        .collect();
    let handedness = [
        gaussian_unit(LATENT, &mut rng),
        gaussian_unit(LATENT, &mut rng),
    ];

    // Means: family + own offset; mirror pairs share the offset of the first member and differ
    // only by ± a handedness step.
    let mut offsets: Vec<Array1<f64>> = Vec::new();
    for (i, t) in SIGN_TYPES.iter().enumerate() {
        let own = match t.mirror {
            Some((partner, _)) if partner < i => offsets[partner].clone(),
            _ => gaussian_vec(LATENT, 0.55, &mut rng),
        };
        offsets.push(own);
    }
    let means: Vec<Array1<f64>> = SIGN_TYPES
        .iter()
        .enumerate()
        .map(|(i, t)| {
            let mut m = &families[t.family] + &offsets[i];
            if let Some((_, side)) = t.mirror {
                let h = &handedness[usize::from(t.family == 2)];
                m = m + h * (0.45 * side);
            }
            m
        })
        .collect();
    let mirror_axes: Vec<(Array1<f64>, Array1<f64>)> = SIGN_TYPES
        .iter()
        .enumerate()
        .map(|(i, t)| {
            let h = handedness[usize::from(t.family == 2)].clone();
            let centre = match t.mirror {
                Some(_) => &families[t.family] + &offsets[i],
                None => means[i].clone(),
            };
            (h, centre)
        })
        .collect();
    let spreads: Vec<Array2<f64>> = SIGN_TYPES
        .iter()
        .map(|_| gaussian_matrix(SPREAD_RANK, LATENT, 0.22, &mut rng))
        .collect();

    // Crops: each pole yields 1-4 crops of one sign type.
    let mut rows: Vec<(usize, usize, Array1<f64>)> = Vec::new(); // (type, pole, latent)
    let mut pole = 0usize;
    for (t, ty) in SIGN_TYPES.iter().enumerate() {
        let mut left = ty.crops;
        while left > 0 {
            let n = rng.gen_range(1..=4usize).min(left);
            let pole_offset = gaussian_vec(LATENT, 0.18, &mut rng);
            for _ in 0..n {
                let z = gaussian_vec(SPREAD_RANK, 1.0, &mut rng);
                let latent = &means[t]
                    + &pole_offset
                    + &spreads[t].t().dot(&z)
                    + &gaussian_vec(LATENT, 0.08, &mut rng);
                rows.push((t, pole, latent));
            }
            pole += 1;
            left -= n;
        }
    }
    // Survey order: a seeded shuffle, so sign types are interleaved as a drive would find them.
    for i in (1..rows.len()).rev() {
        let j = rng.gen_range(0..=i);
        rows.swap(i, j);
    }

    let mut x = Array2::<f32>::zeros((rows.len(), DIMS));
    let mut raw = Vec::with_capacity(rows.len());
    for (r, (_, _, latent)) in rows.iter().enumerate() {
        let v = projection.t().dot(latent) + gaussian_vec(DIMS, BACKGROUND_NOISE, &mut rng);
        write_unit(x.row_mut(r), &v);
        raw.push(v);
    }
    // Class indices follow SIGN_TYPES order so that reports list sign types consistently.
    let labels = rows.iter().map(|(t, _, _)| *t as u32).collect();
    let mut ds = Dataset::new(
        x,
        labels,
        SIGN_TYPES.iter().map(|t| t.name.to_string()).collect(),
    );
    ds.ids = Some((0..rows.len()).map(crop_id).collect());
    ds.groups = Some(
        rows.iter()
            .map(|(_, p, _)| format!("pole-{p:04}"))
            .collect(),
    );
    Survey {
        dataset: ds,
        projection,
        types: rows.iter().map(|(t, _, _)| *t).collect(),
        latents: rows.into_iter().map(|(_, _, l)| l).collect(),
        raw,
        mirror_axes,
    }
}

/// The id of the survey's row `r`.
pub(super) fn crop_id(r: usize) -> String {
    format!("crop-{r:05}")
}

/// `v` scaled to unit length, as f32, into `row`: every embedding of the scenario is unit-norm.
pub(super) fn write_unit(mut row: ndarray::ArrayViewMut1<f32>, v: &Array1<f64>) {
    let norm = v.dot(v).sqrt();
    for (dst, src) in row.iter_mut().zip(v.iter()) {
        *dst = (*src / norm) as f32;
    }
}

pub(super) fn gaussian_vec(n: usize, scale: f64, rng: &mut Rng) -> Array1<f64> {
    Array1::from_shape_fn(n, |_| {
        scale * {
            let z: f64 = StandardNormal.sample(rng);
            z
        }
    })
}

pub(super) fn gaussian_unit(n: usize, rng: &mut Rng) -> Array1<f64> {
    let v = gaussian_vec(n, 1.0, rng);
    let norm = v.dot(&v).sqrt();
    v / norm
}

fn gaussian_matrix(r: usize, c: usize, scale: f64, rng: &mut Rng) -> Array2<f64> {
    Array2::from_shape_fn((r, c), |_| {
        scale * {
            let z: f64 = StandardNormal.sample(rng);
            z
        }
    })
}

/// `r` orthonormal rows of length `c` (Gram-Schmidt on Gaussian rows).
fn orthonormal_rows(r: usize, c: usize, rng: &mut Rng) -> Array2<f64> {
    let mut m = gaussian_matrix(r, c, 1.0, rng);
    for i in 0..r {
        for j in 0..i {
            let proj = m.row(i).dot(&m.row(j));
            let rj = m.row(j).to_owned();
            m.row_mut(i).scaled_add(-proj, &rj);
        }
        let norm = m.row(i).dot(&m.row(i)).sqrt();
        m.row_mut(i).mapv_inplace(|v| v / norm);
    }
    m
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn shape_counts_and_determinism() {
        // The counts are the invented ones in SIGN_TYPES; the shape is the scenario's 256 dims.
        let a = street_signs(7);
        assert_eq!(a.dims(), 256);
        assert_eq!(
            a.class_counts(),
            SIGN_TYPES.iter().map(|t| t.crops).collect::<Vec<_>>()
        );
        let b = street_signs(7);
        assert_eq!(a.x, b.x);
        assert!(crate::data::is_unit_norm(a.view()));
    }
}
