//! What the neighbour methods (interpolate, extrapolate) share: their parameters (K, metric,
//! index, strict) and its check, the same-class neighbour lists (for every real row of a class,
//! its K nearest other rows of that class, by exact search or the approximate k-d tree), the
//! draw of a (base row, partner) pair, and the fit and sampling loop around it. A neighbour
//! method only supplies its [`PairRule`]: where on the line through a drawn pair the synthetic
//! row lies, and, if it does not draw base rows uniformly, its [`Bases`] (borderline, adaptive).
//! The line is the chord between the two rows, or, with [`PairPath::Sphere`], the great circle
//! through them (for unit-norm embeddings).

use std::fmt;
use std::str::FromStr;

use ndarray::{Array2, ArrayView1, ArrayViewMut1};
use rand::Rng as _;
use serde::Serialize;

use super::class_fit::{ClassFit, PerClass};
use super::params::{AugmentParams, Param};
use super::{FitNote, FittedAugmenter, MethodKind, Provenance, Synthetic, check_finite};
use crate::data::Subset;
use crate::error::{Error, Result};
use crate::neighbors::{IndexKind, Knn, Metric, knn_within_with};
use crate::seed::Rng;

/// The parameters every neighbour method reads.
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct NeighbourParams {
    /// K nearest same-class neighbours (SMOTE's usual 5).
    pub k: usize,
    /// Euclidean by default, as in SMOTE.
    pub metric: Metric,
    /// Exact search, or the approximate k-d tree for large classes (which may miss a true
    /// neighbour).
    pub index: IndexKind,
    /// Refuse a class with too few rows for K neighbours instead of clamping K or skipping it.
    pub strict: bool,
}

impl Default for NeighbourParams {
    fn default() -> Self {
        NeighbourParams {
            k: 5,
            metric: Metric::Euclidean,
            index: IndexKind::Exact,
            strict: false,
        }
    }
}

impl NeighbourParams {
    /// The shared parameters a neighbour method reads.
    pub const READS: [Param; 4] = [
        Param::Neighbours,
        Param::NeighbourMetric,
        Param::NeighbourIndex,
        Param::Strict,
    ];

    pub(super) fn from_shared(p: &AugmentParams) -> Self {
        NeighbourParams {
            k: p.neighbours,
            metric: p.metric,
            index: p.index,
            strict: p.strict,
        }
    }

    pub(super) fn check(&self) -> Result<()> {
        if self.k == 0 {
            return Err(Error::param(
                Param::Neighbours.name(),
                "K must be at least 1",
                "use 1 or more same-class neighbours (SMOTE's usual K is 5)",
            ));
        }
        Ok(())
    }
}

/// The line a synthetic row is placed on between a base row x and its partner n.
#[derive(Debug, Clone, Copy, PartialEq, Eq, Default, Serialize)]
#[serde(rename_all = "kebab-case")]
pub enum PairPath {
    /// The straight segment x + t·(n − x) (SMOTE's rule).
    #[default]
    Chord,
    /// The great circle through x and n on the unit sphere: spherical linear interpolation
    /// (Shoemake 1985), slerp(x, n; t) = sin((1 − t)θ)/sin θ · x + sin(tθ)/sin θ · n with θ
    /// the angle between them. The row keeps norm 1 and lies at angle |t|·θ from x, where the
    /// chord would cut inside the sphere (its midpoint between rows 90° apart has norm 0.71).
    Sphere,
}

impl PairPath {
    /// The path's name, as results and parameter values spell it.
    pub fn name(self) -> &'static str {
        match self {
            PairPath::Chord => "chord",
            PairPath::Sphere => "sphere",
        }
    }

    /// Write the point at `t` on this path from `x` (t = 0) towards `n` (t = 1) into `out`;
    /// t < 0 goes away from n. Computed in f64.
    pub(super) fn place(
        self,
        t: f32,
        x: ArrayView1<f32>,
        n: ArrayView1<f32>,
        out: ArrayViewMut1<f32>,
    ) {
        match self {
            PairPath::Chord => {
                for ((o, &a), &b) in out.into_iter().zip(x).zip(n) {
                    *o = a + t * (b - a);
                }
            }
            PairPath::Sphere => slerp(f64::from(t), x, n, out),
        }
    }
}

/// Spherical linear interpolation (Shoemake 1985) between the directions of `x` and `n`. The
/// angle is taken as θ = 2·atan2(|x̂ − n̂|, |x̂ + n̂|), accurate for rows nearly equal and
/// nearly opposite alike. When sin θ vanishes (equal or opposite directions) the great circle
/// is not defined by the pair, so the chord point is used, rescaled to norm 1 (a zero point,
/// possible only for exactly opposite rows at t = ½, is left as x̂).
fn slerp(t: f64, x: ArrayView1<f32>, n: ArrayView1<f32>, mut out: ArrayViewMut1<f32>) {
    let norm = |v: ArrayView1<f32>| v.iter().map(|&a| f64::from(a).powi(2)).sum::<f64>().sqrt();
    let (nx, nn) = (norm(x), norm(n));
    let (nx, nn) = (
        if nx > 0.0 { nx } else { 1.0 },
        if nn > 0.0 { nn } else { 1.0 },
    );
    let (mut diff, mut sum) = (0.0f64, 0.0f64);
    for (&a, &b) in x.iter().zip(n) {
        let (a, b) = (f64::from(a) / nx, f64::from(b) / nn);
        diff += (a - b).powi(2);
        sum += (a + b).powi(2);
    }
    let theta = 2.0 * diff.sqrt().atan2(sum.sqrt());
    let s = theta.sin();
    let (wa, wb) = if s > 1e-9 {
        (((1.0 - t) * theta).sin() / s, (t * theta).sin() / s)
    } else {
        (1.0 - t, t)
    };
    let point = |a: f32, b: f32| wa * f64::from(a) / nx + wb * f64::from(b) / nn;
    let len = x
        .iter()
        .zip(n)
        .map(|(&a, &b)| point(a, b).powi(2))
        .sum::<f64>()
        .sqrt();
    for ((o, &a), &b) in out.iter_mut().zip(x).zip(n) {
        *o = if len > 0.0 {
            (point(a, b) / len) as f32
        } else {
            (f64::from(a) / nx) as f32
        };
    }
}

impl fmt::Display for PairPath {
    fn fmt(&self, f: &mut fmt::Formatter<'_>) -> fmt::Result {
        f.write_str(self.name())
    }
}

impl FromStr for PairPath {
    type Err = Error;
    fn from_str(s: &str) -> Result<Self> {
        match s {
            "chord" => Ok(PairPath::Chord),
            "sphere" => Ok(PairPath::Sphere),
            _ => Err(Error::param(
                Param::Path.name(),
                format!("'{s}' is not a path"),
                "use chord (the straight segment) or sphere (the great circle, for unit-norm rows)",
            )),
        }
    }
}

/// Refuse the sphere path on rows that are not unit-norm, unless synthetic rows are
/// renormalised (`unit_norm`): the great circle is a path between directions, and a row of
/// another length would come back with norm 1, silently unlike the real rows beside it.
pub(super) fn check_sphere_input(
    kind: MethodKind,
    train: &Subset<'_>,
    unit_norm: bool,
) -> Result<()> {
    if unit_norm {
        return Ok(());
    }
    match crate::data::first_not_unit_norm(train.x) {
        None => Ok(()),
        Some((row, norm)) => Err(Error::param(
            Param::Path.name(),
            format!(
                "{kind} along the sphere needs unit-norm rows, but training row {row} has norm {norm:.4}"
            ),
            "normalise the embeddings to unit norm, turn on renormalisation of synthetic rows (`unit-norm`), or use the chord path",
        )),
    }
}

/// How a neighbour method turns a drawn pair (x, n) into a synthetic row.
pub(super) trait PairRule: Copy + Send + Sync + 'static {
    /// The method the rule belongs to (one rule may serve several, which differ in their bases).
    fn kind(&self) -> MethodKind;
    /// The row's weight, drawn (if at all) after its pair, so the draw order is fixed.
    fn weight(&self, rng: &mut Rng) -> f32;
    /// Where the row lies for weight `w`, as t on the path from x (t = 0) to n (t = 1).
    fn position(w: f32) -> f32;
    /// The path the row is placed on.
    fn path(&self) -> PairPath;
}

/// SMOTE's rule (Chawla et al. 2002), shared by every method that interpolates: u ~ U(0,1)
/// per row, then x + u·(n − x) (or, on the sphere, the point at angle u·θ from x towards n).
/// The methods using it differ only in their [`Bases`].
#[derive(Clone, Copy)]
pub(super) struct Segment(pub MethodKind, pub PairPath);

impl PairRule for Segment {
    fn kind(&self) -> MethodKind {
        self.0
    }

    fn weight(&self, rng: &mut Rng) -> f32 {
        rng.r#gen()
    }

    fn position(u: f32) -> f32 {
        u
    }

    fn path(&self) -> PairPath {
        self.1
    }
}

/// Which real rows of a class are base rows x, and how often each is used.
#[derive(Debug, Clone, PartialEq)]
pub(super) enum Bases {
    /// Every row, drawn uniformly (SMOTE).
    All,
    /// Only these rows (local indices into the class rows), drawn uniformly among them.
    Among(Vec<usize>),
    /// Every row, with a share of the class's rows proportional to its weight (weights ≥ 0,
    /// not all 0); see [`apportion`] for how shares become whole counts.
    Shares(Vec<f64>),
}

/// Fit `rule` with `params` on the classes `classes` of `train`, every row a base.
pub(super) fn fit<R: PairRule>(
    rule: R,
    params: &NeighbourParams,
    train: &Subset<'_>,
    classes: &[u32],
) -> Result<Box<dyn FittedAugmenter>> {
    fit_with_bases(rule, params, train, classes, |_, _| {
        Ok((Bases::All, Vec::new()))
    })
}

/// [`fit`], with the base rows of each class chosen by `bases(class, rows)` (`rows`: the
/// class's train row indices), which may add notes for the class.
pub(super) fn fit_with_bases<R, B>(
    rule: R,
    params: &NeighbourParams,
    train: &Subset<'_>,
    classes: &[u32],
    bases: B,
) -> Result<Box<dyn FittedAugmenter>>
where
    R: PairRule,
    B: Fn(u32, &[usize]) -> Result<(Bases, Vec<FitNote>)> + Sync,
{
    let fit = |c: u32, rows: &[usize]| -> Result<ClassFit<ClassNeighbours>> {
        let fit = ClassNeighbours::fit(train, c, rows, params.k, params.metric, params.index)?;
        let ClassFit::Ready {
            mut model,
            mut notes,
        } = fit
        else {
            return Ok(fit);
        };
        let (b, more) = bases(c, rows)?;
        model.bases = b;
        notes.extend(more);
        Ok(ClassFit::Ready { model, notes })
    };
    let per_class = PerClass::fit(rule.kind(), train, classes, params.strict, fit)?;
    Ok(Box::new(FittedPairs { per_class, rule }))
}

/// Whole counts summing exactly to `n`, proportional to `weights` (≥ 0, sum > 0), by the
/// largest-remainder rule: each row first gets ⌊n·wᵢ/Σw⌋, then the rows left over go one each
/// to the largest fractional parts, ties to the lower index. Deterministic, no random draw.
pub(super) fn apportion(weights: &[f64], n: usize) -> Vec<usize> {
    let total: f64 = weights.iter().sum();
    let quotas: Vec<f64> = weights.iter().map(|w| n as f64 * w / total).collect();
    let mut counts: Vec<usize> = quotas.iter().map(|q| q.floor() as usize).collect();
    let given: usize = counts.iter().sum();
    let mut order: Vec<usize> = (0..weights.len()).collect();
    order.sort_by(|&a, &b| {
        let (fa, fb) = (quotas[a] - quotas[a].floor(), quotas[b] - quotas[b].floor());
        fb.total_cmp(&fa).then(a.cmp(&b))
    });
    for &i in order.iter().cycle().take(n.saturating_sub(given)) {
        counts[i] += 1;
    }
    counts
}

struct FittedPairs<R> {
    per_class: PerClass<ClassNeighbours>,
    rule: R,
}

impl<R: PairRule> FittedAugmenter for FittedPairs<R> {
    fn sample(&self, class: u32, n: usize, rng: &mut Rng) -> Result<Synthetic> {
        let Some(nb) = self.per_class.get(class)? else {
            return Ok(self.per_class.empty());
        };
        let mut x = Array2::<f32>::zeros((n, nb.dims()));
        let path = self.rule.path();
        let mut provenance = Vec::with_capacity(n);
        let schedule: Option<Vec<usize>> = match &nb.bases {
            Bases::Shares(w) => Some(
                apportion(w, n)
                    .into_iter()
                    .enumerate()
                    .flat_map(|(i, c)| std::iter::repeat_n(i, c))
                    .collect(),
            ),
            _ => None,
        };
        for (r, mut out) in x.rows_mut().into_iter().enumerate() {
            let base = match (&schedule, &nb.bases) {
                (Some(s), _) => s[r],
                (None, Bases::Among(v)) => v[rng.gen_range(0..v.len())],
                (None, _) => rng.gen_range(0..nb.rows.len()),
            };
            let pair = nb.pair(base, rng);
            let w = self.rule.weight(rng);
            path.place(R::position(w), pair.x, pair.n, out.view_mut());
            provenance.push(Provenance {
                parent: pair.parent,
                partner: Some(pair.partner),
                weight: w,
            });
        }
        check_finite(self.rule.kind(), class, &x)?;
        Ok(Synthetic { x, provenance })
    }

    fn notes(&self) -> &[FitNote] {
        self.per_class.notes()
    }
}

/// One class's rows and their neighbour lists.
struct ClassNeighbours {
    /// Train row index of each class row.
    rows: Vec<usize>,
    /// The class rows, in `rows` order.
    x: Array2<f32>,
    /// Neighbours within `x` (local indices), K per row, never the row itself.
    knn: Knn,
    /// Which rows are bases.
    bases: Bases,
}

/// A drawn pair: the base row and one of its K neighbours.
struct Pair<'a> {
    pub parent: usize,
    pub partner: usize,
    pub x: ArrayView1<'a, f32>,
    pub n: ArrayView1<'a, f32>,
}

impl ClassNeighbours {
    /// Neighbour lists for the class rows `rows` of `train`. A one-row class has no
    /// neighbour and is skipped; K is reduced to `rows - 1` when the class is that small.
    fn fit(
        train: &Subset<'_>,
        class: u32,
        rows: &[usize],
        k: usize,
        metric: Metric,
        index: IndexKind,
    ) -> Result<ClassFit<Self>> {
        let m = rows.len();
        if m < 2 {
            return Ok(ClassFit::Skip(
                "only one training row, so no same-class neighbour".into(),
            ));
        }
        let used = k.min(m - 1);
        let notes = (used < k)
            .then_some(FitNote::Clamped { class, k: used })
            .into_iter()
            .collect();
        let x = train.x.select(rows);
        let knn = knn_within_with(index, x.view(), used, metric);
        if knn.k == 0 || knn.n_queries() != m {
            return Ok(ClassFit::Skip(
                "the neighbour search returned no neighbours".into(),
            ));
        }
        Ok(ClassFit::Ready {
            model: ClassNeighbours {
                rows: rows.to_vec(),
                x,
                knn,
                bases: Bases::All,
            },
            notes,
        })
    }

    /// The base row `base` (local index, chosen by the caller: drawn before the partner when
    /// drawn at all) and a partner uniform among its K neighbours. The draw order (base,
    /// partner, weight) is fixed, so a seed always gives the same pairs.
    fn pair(&self, base: usize, rng: &mut Rng) -> Pair<'_> {
        let j = rng.gen_range(0..self.knn.k);
        let other = self.knn.row(base).0[j] as usize;
        Pair {
            parent: self.rows[base],
            partner: self.rows[other],
            x: self.x.row(base),
            n: self.x.row(other),
        }
    }

    fn dims(&self) -> usize {
        self.x.ncols()
    }
}
