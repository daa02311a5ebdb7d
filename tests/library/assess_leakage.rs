//! The protocol's promise: augmenters see only the fold's real training rows, and synthetic
//! rows never reach a test fold. A planted leaky augmenter must be caught.

use std::sync::{Arc, Mutex};

use embloom::assess::{AssessConfig, InputInfo, assess_with};
use embloom::augment::UnitNorm;
use embloom::augment::{
    self, AugmentParams, Augmenter, FitNote, FittedAugmenter, MethodKind, Provenance, Synthetic,
    Target,
};
use embloom::data::Subset;
use embloom::eval::protocol::make_folds;
use embloom::probe::KnnParams;
use embloom::probe::LinearParams;
use embloom::probe::ProbeKind;
use embloom::seed::Rng;
use embloom::{Dataset, Result};
use ndarray::Array2;

/// Random property-test input (not a figure): 3 classes of 40, 8 and 10 rows in 6 dims.
fn dataset() -> Dataset {
    let counts = [40usize, 8, 10];
    let n: usize = counts.iter().sum();
    let mut labels = Vec::new();
    for (c, &k) in counts.iter().enumerate() {
        labels.extend(std::iter::repeat_n(c as u32, k));
    }
    let x = Array2::from_shape_fn((n, 6), |(i, j)| {
        let h = ((i * 7919 + j * 104_729) % 1000) as f32 / 1000.0;
        h + if j == labels[i] as usize { 1.5 } else { 0.0 }
    });
    let mut ds = Dataset::new(x, labels, vec!["a".into(), "b".into(), "c".into()]);
    ds.ids = Some((0..n).map(|i| i.to_string()).collect());
    ds
}

fn config() -> AssessConfig {
    AssessConfig {
        methods: vec![MethodKind::None, MethodKind::Interpolate],
        probes: vec![ProbeKind::Knn, ProbeKind::Linear],
        folds: 4,
        repeats: 2,
        target: Target::Largest,
        classes: None,
        augment: AugmentParams::default(),
        unit_norm: UnitNorm::Off,
        knn: KnnParams {
            k: 3,
            ..KnnParams::default()
        },
        linear: LinearParams::default(),
        interval: embloom::eval::IntervalKind::default(),
        seed: 5,
        diagnostics: true,
    }
}

fn info(ds: &Dataset) -> InputInfo {
    InputInfo::in_memory("test", ds)
}

/// The rows a method was fitted on as a dataset of their own, each with the id of the input
/// row it is (this file's ids are the row indices), so a test can name the rows a fold gave.
fn as_dataset(train: &Subset<'_>) -> Dataset {
    let mut ds = Dataset::new(
        train.x.to_owned(),
        train.labels.to_vec(),
        train.classes.to_vec(),
    );
    ds.ids = Some(
        (0..train.n_rows())
            .map(|i| train.x.index(i).to_string())
            .collect(),
    );
    ds
}

/// Records the ids of every training set it is fitted on, then behaves like interpolate.
struct Spy {
    seen: Arc<Mutex<Vec<Vec<String>>>>,
    inner: Box<dyn Augmenter>,
}

impl Augmenter for Spy {
    fn kind(&self) -> MethodKind {
        MethodKind::Interpolate
    }
    fn fit(&self, train: &Subset<'_>, classes: &[u32]) -> Result<Box<dyn FittedAugmenter>> {
        self.seen
            .lock()
            .unwrap()
            .push(as_dataset(train).ids.unwrap());
        self.inner.fit(train, classes)
    }
}

#[test]
fn augmenters_are_fitted_on_each_folds_training_rows_only() {
    let ds = dataset();
    let cfg = config().validated().unwrap();
    let seen = Arc::new(Mutex::new(Vec::new()));
    let augmenters: Vec<Box<dyn Augmenter>> = vec![
        augment::build(MethodKind::None, &cfg.augment).unwrap(),
        Box::new(Spy {
            seen: seen.clone(),
            inner: augment::build(MethodKind::Interpolate, &cfg.augment).unwrap(),
        }),
    ];
    let results = assess_with(&ds, &cfg, info(&ds), &augmenters).unwrap();
    let (_, folds) = make_folds(&ds, cfg.folds, cfg.repeats, cfg.seed).unwrap();
    let seen = seen.lock().unwrap();
    assert_eq!(seen.len(), folds.len());
    for (fit, fold) in seen.iter().zip(&folds) {
        let train: Vec<String> = fold.train.iter().map(|i| i.to_string()).collect();
        assert_eq!(
            fit, &train,
            "the augmenter saw rows outside the training fold"
        );
        for t in &fold.test {
            assert!(!fit.contains(&t.to_string()));
        }
    }
    // Probes are scored on real test rows only: each record's test count is its fold's size.
    for r in &results.folds {
        let fold = folds
            .iter()
            .find(|f| f.repeat == r.repeat && f.index == r.fold)
            .unwrap();
        assert_eq!(r.test, fold.test.len());
        assert_eq!(r.train_real, fold.train.len());
    }
}

/// An augmenter that smuggles copies of held-out rows in as "synthetic" rows.
struct Leaky {
    all: Dataset,
}

struct LeakyFit {
    rows: Vec<(u32, Vec<f32>)>,
}

impl Augmenter for Leaky {
    fn kind(&self) -> MethodKind {
        MethodKind::Interpolate
    }
    fn fit(&self, train: &Subset<'_>, _classes: &[u32]) -> Result<Box<dyn FittedAugmenter>> {
        let train_ids = as_dataset(train).ids.unwrap();
        let ids = self.all.ids.as_ref().unwrap();
        let rows = (0..self.all.n_rows())
            .filter(|&i| !train_ids.contains(&ids[i]))
            .map(|i| (self.all.labels[i], self.all.x.row(i).to_vec()))
            .collect();
        Ok(Box::new(LeakyFit { rows }))
    }
}

impl FittedAugmenter for LeakyFit {
    fn sample(&self, class: u32, n: usize, _rng: &mut Rng) -> Result<Synthetic> {
        let picked: Vec<&Vec<f32>> = self
            .rows
            .iter()
            .filter(|(c, _)| *c == class)
            .map(|(_, r)| r)
            .cycle()
            .take(n)
            .collect();
        let d = self.rows.first().map_or(0, |r| r.1.len());
        let x = Array2::from_shape_fn((picked.len(), d), |(i, j)| picked[i][j]);
        Ok(Synthetic {
            x,
            provenance: vec![
                Provenance {
                    parent: 0,
                    partner: None,
                    weight: 0.0
                };
                picked.len()
            ],
        })
    }
    fn notes(&self) -> &[FitNote] {
        &[]
    }
}

#[test]
fn a_leaky_augmenter_is_caught() {
    let ds = dataset();
    let cfg = config().validated().unwrap();
    let augmenters: Vec<Box<dyn Augmenter>> = vec![
        augment::build(MethodKind::None, &cfg.augment).unwrap(),
        Box::new(Leaky { all: ds.clone() }),
    ];
    let err = assess_with(&ds, &cfg, info(&ds), &augmenters)
        .unwrap_err()
        .to_string();
    assert!(err.contains("held-out test row"), "{err}");
}

/// Each training set borderline was fitted on, with the parents of the rows it drew.
type Fits = Arc<Mutex<Vec<(Dataset, Vec<usize>)>>>;

/// Records each training set borderline is fitted on and the parents of the rows it draws.
struct DangerSpy {
    fits: Fits,
    inner: Box<dyn Augmenter>,
}

struct DangerSpyFit {
    fits: Fits,
    slot: usize,
    inner: Box<dyn FittedAugmenter>,
}

impl Augmenter for DangerSpy {
    fn kind(&self) -> MethodKind {
        MethodKind::Borderline
    }
    fn fit(&self, train: &Subset<'_>, classes: &[u32]) -> Result<Box<dyn FittedAugmenter>> {
        let mut fits = self.fits.lock().unwrap();
        fits.push((as_dataset(train), Vec::new()));
        Ok(Box::new(DangerSpyFit {
            fits: self.fits.clone(),
            slot: fits.len() - 1,
            inner: self.inner.fit(train, classes)?,
        }))
    }
}

impl FittedAugmenter for DangerSpyFit {
    fn sample(&self, class: u32, n: usize, rng: &mut Rng) -> Result<Synthetic> {
        let s = self.inner.sample(class, n, rng)?;
        let mut fits = self.fits.lock().unwrap();
        fits[self.slot]
            .1
            .extend(s.provenance.iter().map(|p| p.parent));
        Ok(s)
    }
    fn notes(&self) -> &[FitNote] {
        self.inner.notes()
    }
}

/// Rows of `ds` in danger by Borderline-SMOTE1's rule (Han, Wang & Mao 2005): of the `m`
/// nearest other rows (all classes, euclidean, brute force in f64), m/2 ≤ m' < m of another
/// class.
fn danger_rows(ds: &Dataset, m: usize) -> Vec<usize> {
    let d = |a: usize, b: usize| -> f64 {
        ds.x.row(a)
            .iter()
            .zip(ds.x.row(b))
            .map(|(&p, &q)| (f64::from(p) - f64::from(q)).powi(2))
            .sum()
    };
    (0..ds.n_rows())
        .filter(|&i| {
            let mut others: Vec<usize> = (0..ds.n_rows()).filter(|&j| j != i).collect();
            others.sort_by(|&a, &b| d(i, a).total_cmp(&d(i, b)));
            let m_other = others[..m]
                .iter()
                .filter(|&&j| ds.labels[j] != ds.labels[i])
                .count();
            2 * m_other >= m && m_other < m
        })
        .collect()
}

#[test]
fn borderline_judges_danger_on_the_folds_training_rows_only() {
    let ds = dataset();
    let mut cfg = config();
    cfg.methods = vec![MethodKind::None, MethodKind::Borderline];
    let cfg = cfg.validated().unwrap();
    let fits = Arc::new(Mutex::new(Vec::new()));
    let augmenters: Vec<Box<dyn Augmenter>> = vec![
        augment::build(MethodKind::None, &cfg.augment).unwrap(),
        Box::new(DangerSpy {
            fits: fits.clone(),
            inner: augment::build(MethodKind::Borderline, &cfg.augment).unwrap(),
        }),
    ];
    assess_with(&ds, &cfg, info(&ds), &augmenters).unwrap();
    let full_danger = danger_rows(&ds, 10);
    let fits = fits.lock().unwrap();
    let mut differs = 0;
    for (train, parents) in fits.iter() {
        let danger = danger_rows(train, 10);
        // A grown class with no row in danger falls back to every row; the others must draw
        // their bases from the rows in danger *within this training fold*.
        for &p in parents {
            let class_has_danger = danger.iter().any(|&r| train.labels[r] == train.labels[p]);
            if class_has_danger {
                assert!(
                    danger.contains(&p),
                    "base row {p} is not in danger in its fold"
                );
            }
        }
        // Ids are the input rows: the danger set judged on the fold differs from the one the
        // whole input would give for these rows, so using all rows would be caught.
        let ids: Vec<usize> = train
            .ids
            .as_ref()
            .unwrap()
            .iter()
            .map(|s| s.parse().unwrap())
            .collect();
        let on_full: Vec<usize> = (0..train.n_rows())
            .filter(|&r| full_danger.contains(&ids[r]))
            .collect();
        differs += usize::from(on_full != danger);
    }
    assert_eq!(fits.len(), 8);
    assert!(
        differs > 0,
        "the example does not separate fold and full-data danger"
    );
}
