//! Synthetic rows inside a training loop: per epoch, shuffled mini-batches of the real rows
//! mixed with freshly drawn synthetic rows of the grown classes.
//!
//! Where `grow` writes one fixed augmented set, a [`Stream`] draws new synthetic rows for
//! every batch, so a model trained for many epochs sees many different synthetic rows and
//! the whole grown set is never held in memory: a batch is built from the fitted method when
//! it is asked for. The method is fitted once on all real rows (again only when a schedule
//! changes its magnitude), through the same fit/sample API `grow` and `assess` use.
//!
//! Each epoch visits every real row exactly once, in an order drawn from
//! `seed::stream(seed, [stream, method, epoch, SHUFFLE])`; batch `i` of an epoch draws its
//! synthetic rows and the order of its rows from `seed::stream(seed, [stream, method, epoch,
//! i])`. A batch is therefore fixed by (seed, epoch, batch index) alone, whatever the thread
//! count and whichever batches were asked for before it.
//!
//! A schedule moves the synthetic share and the magnitude over epochs — the curriculum idea
//! behind scheduled augmentation policies (Ho et al. 2019, population-based augmentation),
//! applied in feature space.

use std::sync::{Arc, Mutex};

use ndarray::Array2;
use rand::distributions::{Distribution, WeightedIndex};
use rand::seq::SliceRandom;

use super::params::{AugmentParams, Param, ParamGuard};
use super::{FitNote, FittedAugmenter, MethodKind, Target, UnitNorm, plan_for};
use crate::data::{Dataset, Subset};
use crate::error::{Error, Result};
use crate::seed;

/// Rows per batch when none is given (a common mini-batch size).
pub const DEFAULT_BATCH_SIZE: usize = 256;

/// The last stream-path element of an epoch's shuffle of the real rows; batch indices are
/// far below it.
const SHUFFLE: u64 = u64::MAX;

/// How a value (the synthetic share or the magnitude) moves over the epochs: a factor of the
/// value given, per epoch.
#[derive(Debug, Clone, PartialEq)]
pub enum Schedule {
    /// The value given, every epoch.
    Constant,
    /// A linear ramp from `start` × the value at the first epoch to the full value at the
    /// last (one epoch: the full value).
    Linear {
        /// The factor at the first epoch (finite, ≥ 0; above 1 ramps down).
        start: f64,
    },
    /// Steps: from each listed epoch (0-based, increasing) on, the value × its factor; before
    /// the first step, the full value.
    Steps(Vec<(usize, f64)>),
}

impl Schedule {
    /// The factor of the value at `epoch` (0-based) of `epochs`.
    pub fn factor(&self, epoch: usize, epochs: usize) -> f64 {
        match self {
            Schedule::Constant => 1.0,
            Schedule::Linear { start } => {
                if epochs <= 1 {
                    1.0
                } else {
                    start + (1.0 - start) * epoch as f64 / (epochs - 1) as f64
                }
            }
            Schedule::Steps(steps) => steps
                .iter()
                .rev()
                .find(|(from, _)| *from <= epoch)
                .map_or(1.0, |&(_, f)| f),
        }
    }

    fn is_constant(&self) -> bool {
        match self {
            Schedule::Constant => true,
            Schedule::Linear { start } => *start == 1.0,
            Schedule::Steps(steps) => steps.iter().all(|&(_, f)| f == 1.0),
        }
    }

    /// Factors finite and ≥ 0, steps in increasing epoch order; `name` is the parameter.
    fn check(&self, name: &str) -> Result<()> {
        let bad_factor = |f: f64| !(f.is_finite() && f >= 0.0);
        match self {
            Schedule::Constant => Ok(()),
            Schedule::Linear { start } if bad_factor(*start) => Err(Error::param(
                name,
                format!("a linear ramp starting at {start} × the value"),
                "start the ramp at a finite factor >= 0, e.g. 0 to ramp up from nothing",
            )),
            Schedule::Linear { .. } => Ok(()),
            Schedule::Steps(steps) => {
                if steps.is_empty() {
                    return Err(Error::param(
                        name,
                        "steps without any step",
                        "give at least one (epoch, factor) step, or use a constant schedule",
                    ));
                }
                if let Some(&(e, f)) = steps.iter().find(|&&(_, f)| bad_factor(f)) {
                    return Err(Error::param(
                        name,
                        format!("step at epoch {e} has factor {f}"),
                        "give every step a finite factor >= 0",
                    ));
                }
                if let Some(w) = steps.windows(2).find(|w| w[1].0 <= w[0].0) {
                    return Err(Error::param(
                        name,
                        format!(
                            "step at epoch {} follows the one at epoch {}",
                            w[1].0, w[0].0
                        ),
                        "list steps in increasing epoch order, each epoch once",
                    ));
                }
                Ok(())
            }
        }
    }
}

/// Unchecked stream parameters; [`ParamGuard::check`] gives the valid ones.
#[derive(Debug, Clone)]
pub struct StreamParams(StreamValidParams);

/// Stream parameters that passed their check: a method that makes rows and whose shared
/// parameters are valid at every epoch's magnitude, batch size ≥ 1, epochs ≥ 1, a synthetic
/// share in [0, 1) at every epoch, and valid schedules.
#[derive(Debug, Clone)]
pub struct StreamValidParams {
    method: MethodKind,
    augment: AugmentParams,
    target: Target,
    classes: Option<Vec<String>>,
    batch_size: usize,
    epochs: usize,
    synthetic_share: Option<f64>,
    share_schedule: Schedule,
    magnitude_schedule: Schedule,
    unit_norm: UnitNorm,
    seed: u64,
}

impl StreamParams {
    /// Defaults for `method`: the method's own parameters, target median, every class, batches
    /// of [`DEFAULT_BATCH_SIZE`], one epoch, the share derived from the target, constant
    /// schedules, unit norm auto, seed 0.
    pub fn new(method: MethodKind) -> Self {
        StreamParams(StreamValidParams {
            method,
            augment: AugmentParams::default(),
            target: Target::Median,
            classes: None,
            batch_size: DEFAULT_BATCH_SIZE,
            epochs: 1,
            synthetic_share: None,
            share_schedule: Schedule::Constant,
            magnitude_schedule: Schedule::Constant,
            unit_norm: UnitNorm::Auto,
            seed: 0,
        })
    }

    /// The method's shared parameters (K, magnitude, ...).
    pub fn augment(mut self, augment: AugmentParams) -> Self {
        self.0.augment = augment;
        self
    }

    /// Which classes grow and to what count; it also gives the share of synthetic rows when
    /// none is set (see [`StreamParams::synthetic_share`]) and the mix of classes among them.
    pub fn target(mut self, target: Target) -> Self {
        self.0.target = target;
        self
    }

    /// Grow only the named classes (all classes below the target when `None`).
    pub fn classes(mut self, classes: Option<Vec<String>>) -> Self {
        self.0.classes = classes;
        self
    }

    /// Rows per batch, real and synthetic together.
    pub fn batch_size(mut self, batch_size: usize) -> Self {
        self.0.batch_size = batch_size;
        self
    }

    /// Number of epochs; each visits every real row once.
    pub fn epochs(mut self, epochs: usize) -> Self {
        self.0.epochs = epochs;
        self
    }

    /// The share of each batch that is synthetic, before the share schedule. `None` derives
    /// it from the target: the share synthetic rows would have in the set `grow` writes,
    /// planned rows ÷ (real rows + planned rows).
    pub fn synthetic_share(mut self, share: Option<f64>) -> Self {
        self.0.synthetic_share = share;
        self
    }

    /// How the synthetic share moves over epochs.
    pub fn share_schedule(mut self, schedule: Schedule) -> Self {
        self.0.share_schedule = schedule;
        self
    }

    /// How the magnitude (λ of extrapolate, the noise scale of the noise methods) moves over
    /// epochs, as a factor of the magnitude given (or the method's default).
    pub fn magnitude_schedule(mut self, schedule: Schedule) -> Self {
        self.0.magnitude_schedule = schedule;
        self
    }

    /// Whether synthetic rows are rescaled to unit norm.
    pub fn unit_norm(mut self, unit_norm: UnitNorm) -> Self {
        self.0.unit_norm = unit_norm;
        self
    }

    /// The seed of every random choice.
    pub fn seed(mut self, seed: u64) -> Self {
        self.0.seed = seed;
        self
    }
}

impl StreamValidParams {
    /// The method's shared parameters at `epoch`, its magnitude scaled by the schedule.
    fn augment_at(&self, epoch: usize) -> AugmentParams {
        let mut p = self.augment.clone();
        if self.method.reads_param(Param::Magnitude) {
            let base = p
                .magnitude
                .unwrap_or_else(|| self.method.default_magnitude());
            let f = self.magnitude_schedule.factor(epoch, self.epochs);
            p.magnitude = Some((f64::from(base) * f) as f32);
        }
        p
    }
}

impl ParamGuard for StreamParams {
    type Checked = StreamValidParams;
    type Error = Error;

    fn check_ref(&self) -> Result<&StreamValidParams> {
        let p = &self.0;
        if !p.method.makes_rows() {
            return Err(Error::param(
                "method",
                format!(
                    "{} makes no rows, so a stream would hold real rows only",
                    p.method
                ),
                "stream a method that makes rows, such as interpolate",
            ));
        }
        if p.method.soft_labels() {
            return Err(Error::param(
                "method",
                format!(
                    "{}'s rows have soft labels (a share of the row's class and of a partner class), which a stream's batches carry no place for",
                    p.method
                ),
                "stream a method with hard labels, such as interpolate, or grow a file with mix and read its partner_label and weight",
            ));
        }
        if p.batch_size == 0 {
            return Err(Error::param(
                "batch-size",
                "a batch of 0 rows",
                format!("give at least 1, e.g. the default {DEFAULT_BATCH_SIZE}"),
            ));
        }
        if p.epochs == 0 {
            return Err(Error::param("epochs", "0 epochs", "give at least 1 epoch"));
        }
        p.share_schedule.check("share-schedule")?;
        p.magnitude_schedule.check("magnitude-schedule")?;
        if !p.magnitude_schedule.is_constant() && !p.method.reads_param(Param::Magnitude) {
            return Err(Error::param(
                "magnitude-schedule",
                format!("{} has no magnitude to schedule", p.method),
                "schedule the magnitude of a method that reads one (extrapolate, principal-noise, gaussian-noise), or keep it constant",
            ));
        }
        if let Some(s) = p.synthetic_share {
            check_share(s)?;
            for e in 0..p.epochs {
                check_share(s * p.share_schedule.factor(e, p.epochs))?;
            }
        }
        for e in 0..p.epochs {
            super::build(p.method, &p.augment_at(e))?;
        }
        Ok(p)
    }

    fn check(self) -> Result<StreamValidParams> {
        self.check_ref()?;
        Ok(self.0)
    }
}

/// A share is finite and in [0, 1): a batch must keep a real row.
fn check_share(share: f64) -> Result<()> {
    if share.is_finite() && (0.0..1.0).contains(&share) {
        Ok(())
    } else {
        Err(Error::param(
            "synthetic-share",
            format!("a synthetic share of {share} (at some epoch, after the share schedule)"),
            "give a share in [0, 1) at every epoch, e.g. 0.25, so that each batch keeps real rows",
        ))
    }
}

/// One epoch's sizes.
#[derive(Debug, Clone, Copy, PartialEq)]
struct EpochShape {
    share: f64,
    magnitude: Option<f32>,
    real_per_batch: usize,
    synthetic_per_batch: usize,
    batches: usize,
}

/// One mini-batch: real and synthetic rows in a shuffled order.
#[derive(Debug, Clone)]
pub struct Batch {
    /// The rows, real and synthetic mixed.
    pub x: Array2<f32>,
    /// The class index of each row.
    pub labels: Vec<u32>,
    /// Whether each row is synthetic.
    pub synthetic: Vec<bool>,
    /// The real row each row is (a real row) or was made from (a synthetic row).
    pub parent: Vec<usize>,
}

/// One epoch, ready to give its batches: the order of the real rows and the method fitted at
/// the epoch's magnitude.
pub struct Epoch {
    index: usize,
    order: Vec<usize>,
    fitted: Arc<dyn FittedAugmenter>,
    shape: EpochShape,
}

impl Epoch {
    /// The epoch's index (0-based).
    pub fn index(&self) -> usize {
        self.index
    }

    /// Number of batches in the epoch.
    pub fn batches(&self) -> usize {
        self.shape.batches
    }

    /// The synthetic share of a full batch this epoch, after the schedule.
    pub fn share(&self) -> f64 {
        self.shape.share
    }

    /// The method's magnitude this epoch (`None` for a method that reads none).
    pub fn magnitude(&self) -> Option<f32> {
        self.shape.magnitude
    }
}

/// A fitted method and the magnitude it was fitted at.
type FitCache = Option<(Option<f32>, Arc<dyn FittedAugmenter>)>;

/// A training-loop stream over a dataset: see the module documentation.
pub struct Stream {
    data: Dataset,
    params: StreamValidParams,
    /// Classes synthetic rows are drawn from, with their planned row counts as weights.
    draw: Vec<u32>,
    weights: Option<WeightedIndex<f64>>,
    renormalise: bool,
    shapes: Vec<EpochShape>,
    notes: Vec<FitNote>,
    fitted: Mutex<FitCache>,
}

impl Stream {
    /// A stream of `data`'s real rows mixed with synthetic rows of the classes the target
    /// grows. Fits the method at the first epoch's magnitude.
    ///
    /// Refuses a positive synthetic share when no class can be grown (the target leaves every
    /// class as it is, or the method cannot grow any of them), and a share that rounds to a
    /// batch of synthetic rows only.
    pub fn new(data: Dataset, params: StreamValidParams) -> Result<Stream> {
        crate::neighbors::magnitude::check(std::path::Path::new("x"), data.x.view())?;
        let plan = plan_for(&data, params.target, params.classes.as_deref())?;
        let n = data.n_rows();
        if n == 0 {
            return Err(Error::data(
                "the dataset has no rows to stream",
                "pass a matrix with at least one row",
            ));
        }
        let base_share = params
            .synthetic_share
            .unwrap_or_else(|| plan.total() as f64 / (n + plan.total()) as f64);
        let mut shapes = Vec::with_capacity(params.epochs);
        for e in 0..params.epochs {
            let share = base_share * params.share_schedule.factor(e, params.epochs);
            check_share(share)?;
            let b = params.batch_size;
            let synthetic = (share * b as f64).round() as usize;
            if synthetic >= b {
                return Err(Error::param(
                    "synthetic-share",
                    format!(
                        "a share of {share:.4} at epoch {e} rounds to {synthetic} synthetic rows in a batch of {b}, leaving no real row"
                    ),
                    "lower the share, or make batches larger",
                ));
            }
            let real = b - synthetic;
            shapes.push(EpochShape {
                share,
                magnitude: params.augment_at(e).magnitude,
                real_per_batch: real,
                synthetic_per_batch: synthetic,
                batches: n.div_ceil(real),
            });
        }
        let grown = plan.grown_classes();
        let first = fit(&data, &params, &grown, 0)?;
        let notes = first.notes().to_vec();
        let skipped: Vec<u32> = notes
            .iter()
            .filter_map(|n| match n {
                FitNote::Skipped { class, .. } => Some(*class),
                _ => None,
            })
            .collect();
        let draw: Vec<u32> = grown.into_iter().filter(|c| !skipped.contains(c)).collect();
        let wants_rows = shapes.iter().any(|s| s.synthetic_per_batch > 0);
        if wants_rows && draw.is_empty() {
            return Err(Error::data_at(
                params.method.name(),
                if plan.total() == 0 {
                    format!(
                        "the target {} grows no class, so there are no synthetic rows to mix in",
                        params.target
                    )
                } else {
                    "the method cannot grow any of the classes the target grows".to_string()
                },
                "use a target above some class's count (such as largest), or a synthetic share of 0",
            ));
        }
        let weights = if draw.is_empty() {
            None
        } else {
            let w: Vec<f64> = draw.iter().map(|&c| plan.add[c as usize] as f64).collect();
            Some(WeightedIndex::new(w).map_err(|e| {
                Error::data(
                    format!("cannot weigh the grown classes: {e}"),
                    "report this as a bug",
                )
            })?)
        };
        let renormalise = params.unit_norm.resolve(data.view());
        let first_magnitude = shapes[0].magnitude;
        Ok(Stream {
            data,
            params,
            draw,
            weights,
            renormalise,
            shapes,
            notes,
            fitted: Mutex::new(Some((first_magnitude, Arc::from(first)))),
        })
    }

    /// The number of epochs.
    pub fn epochs(&self) -> usize {
        self.shapes.len()
    }

    /// Batches in epoch `epoch` (0 past the last epoch).
    pub fn batches_in(&self, epoch: usize) -> usize {
        self.shapes.get(epoch).map_or(0, |s| s.batches)
    }

    /// Batches over all epochs.
    pub fn len(&self) -> usize {
        self.shapes.iter().map(|s| s.batches).sum()
    }

    /// Whether the stream gives no batch at all (never, for a valid stream).
    pub fn is_empty(&self) -> bool {
        self.len() == 0
    }

    /// The classes synthetic rows are drawn from, in class-index order.
    pub fn grown_classes(&self) -> &[u32] {
        &self.draw
    }

    /// What the fit clamped, adjusted or skipped (see [`super::describe_notes`]).
    pub fn notes(&self) -> &[FitNote] {
        &self.notes
    }

    /// The method streamed.
    pub fn method(&self) -> MethodKind {
        self.params.method
    }

    /// The dataset streamed.
    pub fn data(&self) -> &Dataset {
        &self.data
    }

    /// Epoch `epoch`: its shuffle of the real rows, and the method fitted at its magnitude
    /// (refitted only when the magnitude differs from the last epoch asked for).
    pub fn epoch(&self, epoch: usize) -> Result<Epoch> {
        let Some(&shape) = self.shapes.get(epoch) else {
            return Err(Error::param(
                "epochs",
                format!("epoch {epoch} of a stream of {} epochs", self.shapes.len()),
                "ask for an epoch below the number of epochs",
            ));
        };
        let mut rng = seed::stream(self.params.seed, &self.path(epoch, SHUFFLE));
        let mut order: Vec<usize> = (0..self.data.n_rows()).collect();
        order.shuffle(&mut rng);
        let fitted = {
            let mut cache = self.fitted.lock().unwrap_or_else(|p| p.into_inner());
            match cache.as_ref() {
                Some((m, f)) if *m == shape.magnitude => Arc::clone(f),
                _ => {
                    let f: Arc<dyn FittedAugmenter> =
                        Arc::from(fit(&self.data, &self.params, &self.draw, epoch)?);
                    *cache = Some((shape.magnitude, Arc::clone(&f)));
                    f
                }
            }
        };
        Ok(Epoch {
            index: epoch,
            order,
            fitted,
            shape,
        })
    }

    /// Batch `index` of `epoch`: its share of the epoch's real rows, then synthetic rows of
    /// the grown classes (each row's class drawn in proportion to the rows the target plans
    /// for it), all in a shuffled order. The last batch of an epoch holds the remaining real
    /// rows and synthetic rows in the epoch's proportion.
    pub fn batch(&self, epoch: &Epoch, index: usize) -> Result<Batch> {
        let s = epoch.shape;
        if index >= s.batches {
            return Err(Error::param(
                "batch",
                format!("batch {index} of an epoch of {} batches", s.batches),
                "ask for a batch below the epoch's number of batches",
            ));
        }
        let start = index * s.real_per_batch;
        let real = &epoch.order[start..(start + s.real_per_batch).min(epoch.order.len())];
        let n_syn = if real.len() == s.real_per_batch {
            s.synthetic_per_batch
        } else {
            (real.len() as f64 * s.synthetic_per_batch as f64 / s.real_per_batch as f64).round()
                as usize
        };
        let mut rng = seed::stream(self.params.seed, &self.path(epoch.index, index as u64));
        let mut per_class = vec![0usize; self.draw.len()];
        if let Some(w) = &self.weights {
            for _ in 0..n_syn {
                per_class[w.sample(&mut rng)] += 1;
            }
        }
        let d = self.data.dims();
        let total = real.len() + n_syn;
        let mut rows: Vec<f32> = Vec::with_capacity(total * d);
        let mut labels = Vec::with_capacity(total);
        let mut parent = Vec::with_capacity(total);
        for &r in real {
            rows.extend(self.data.x.row(r).iter());
            labels.push(self.data.labels[r]);
            parent.push(r);
        }
        for (&c, &k) in self.draw.iter().zip(&per_class) {
            if k == 0 {
                continue;
            }
            let mut syn = epoch.fitted.sample(c, k, &mut rng)?;
            if self.renormalise {
                super::grow::renormalise(&mut syn.x);
            }
            rows.extend(syn.x.iter());
            labels.extend(std::iter::repeat_n(c, syn.x.nrows()));
            parent.extend(syn.provenance.iter().map(|p| p.parent));
        }
        let made = labels.len();
        let mut order: Vec<usize> = (0..made).collect();
        order.shuffle(&mut rng);
        let mut x = Array2::zeros((made, d));
        for (mut out, &i) in x.rows_mut().into_iter().zip(&order) {
            out.assign(&ndarray::ArrayView1::from(&rows[i * d..(i + 1) * d]));
        }
        Ok(Batch {
            x,
            labels: order.iter().map(|&i| labels[i]).collect(),
            synthetic: order.iter().map(|&i| i >= real.len()).collect(),
            parent: order.iter().map(|&i| parent[i]).collect(),
        })
    }

    /// Every batch of every epoch, in order.
    pub fn batches(&self) -> Batches<'_> {
        Batches {
            stream: self,
            epoch: None,
            next_epoch: 0,
            next_batch: 0,
            failed: false,
        }
    }

    fn path(&self, epoch: usize, last: u64) -> [u64; 4] {
        [
            seed::tag("stream"),
            seed::tag(self.params.method.name()),
            epoch as u64,
            last,
        ]
    }
}

/// Fit the method on every real row for `classes`, at `epoch`'s magnitude.
fn fit(
    data: &Dataset,
    params: &StreamValidParams,
    classes: &[u32],
    epoch: usize,
) -> Result<Box<dyn FittedAugmenter>> {
    let augmenter = super::build(params.method, &params.augment_at(epoch))?;
    augmenter.fit(&Subset::of(data), classes)
}

/// The iterator of [`Stream::batches`]; it stops after the first error.
pub struct Batches<'a> {
    stream: &'a Stream,
    epoch: Option<Epoch>,
    next_epoch: usize,
    next_batch: usize,
    failed: bool,
}

impl Iterator for Batches<'_> {
    type Item = Result<Batch>;

    fn next(&mut self) -> Option<Result<Batch>> {
        if self.failed {
            return None;
        }
        if self
            .epoch
            .as_ref()
            .is_some_and(|e| self.next_batch >= e.batches())
        {
            self.epoch = None;
            self.next_batch = 0;
        }
        if self.epoch.is_none() {
            if self.next_epoch >= self.stream.epochs() {
                return None;
            }
            match self.stream.epoch(self.next_epoch) {
                Ok(e) => self.epoch = Some(e),
                Err(err) => {
                    self.failed = true;
                    return Some(Err(err));
                }
            }
            self.next_epoch += 1;
        }
        let epoch = self.epoch.as_ref()?;
        let out = self.stream.batch(epoch, self.next_batch);
        self.next_batch += 1;
        self.failed = out.is_err();
        Some(out)
    }
}
