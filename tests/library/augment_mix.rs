//! `mix`: mixup across classes with soft labels (Zhang, Cisse, Dauphin & Lopez-Paz 2018),
//! checked against its definition x = λ·xᵢ + (1 − λ)·xⱼ, target λ·e(yᵢ) + (1 − λ)·e(yⱼ), with
//! λ ~ Beta(α, α) folded to max(λ, 1 − λ); through assess, the exports and the stream.

use embloom::Dataset;
use embloom::assess::{AssessConfig, GrownFile, InputInfo, assess};
use embloom::augment::{
    AugmentParams, MethodKind, Plan, StreamParams, Target, UnitNorm, assemble, build, grow,
    grow_dataset, plan_for,
};
use embloom::data::SoftLabel;
use embloom::error::Error;
use embloom::io::{ReadOptions, read, write};
use embloom::probe::{KnnParams, LinearParams, ProbeKind};
use embloom::seed;
use ndarray::Array2;
use rand::Rng;
use rand_distr::StandardNormal;

/// Invented test input (only the rules are checked): `sizes[c]` rows of class c in `d`
/// dimensions around separate centres, from a seeded stream.
fn blobs(sizes: &[usize], d: usize, seed_: u64) -> Dataset {
    let mut rng = seed::stream(seed_, &[0]);
    let n: usize = sizes.iter().sum();
    let mut x = Array2::<f32>::zeros((n, d));
    let mut labels = Vec::with_capacity(n);
    let mut i = 0;
    for (c, &m) in sizes.iter().enumerate() {
        for _ in 0..m {
            for j in 0..d {
                let z: f64 = rng.sample(StandardNormal);
                x[[i, j]] = (z + if j == c % d { 4.0 } else { 0.0 }) as f32;
            }
            labels.push(c as u32);
            i += 1;
        }
    }
    let classes = (0..sizes.len()).map(|c| format!("class{c}")).collect();
    Dataset::new(x, labels, classes)
}

fn mix_with(alpha: Option<f32>) -> Box<dyn embloom::augment::Augmenter> {
    build(
        MethodKind::Mix,
        &AugmentParams {
            magnitude: alpha,
            ..AugmentParams::default()
        },
    )
    .unwrap()
}

#[test]
fn rows_lie_on_the_segment_to_another_class_at_their_weight() {
    // Zhang et al. 2018, eq. for x̃: x = λ·xᵢ + (1 − λ)·xⱼ; here xᵢ of the grown class, xⱼ of
    // another class, λ folded to [½, 1]; the soft target names yⱼ with share λ for yᵢ.
    let ds = blobs(&[30, 8, 12], 5, 3);
    let plan = Plan {
        add: vec![0, 22, 18],
    };
    let g = grow(&ds, mix_with(None).as_ref(), &plan, false, 9, &[1]).unwrap();
    assert_eq!(g.x.nrows(), 40);
    assert_eq!(g.soft.len(), 40);
    for (r, p) in g.provenance.iter().enumerate() {
        let c = g.labels[r];
        let j = p.partner.expect("every mix row has a partner");
        assert_eq!(ds.labels[p.parent], c);
        assert_ne!(ds.labels[j], c, "row {r}: partner of the same class");
        let l = f64::from(p.weight);
        assert!((0.5..=1.0).contains(&l), "row {r}: λ = {l}");
        for k in 0..ds.dims() {
            let want = l * f64::from(ds.x[[p.parent, k]]) + (1.0 - l) * f64::from(ds.x[[j, k]]);
            let got = f64::from(g.x[[r, k]]);
            assert!(
                (got - want).abs() <= 1e-5 * (1.0 + want.abs()),
                "row {r}, dim {k}: {got} vs {want}"
            );
        }
        assert_eq!(
            g.soft[r],
            Some(SoftLabel {
                partner: ds.labels[j],
                weight: p.weight,
            })
        );
    }
}

#[test]
fn partners_are_uniform_over_the_other_classes_rows() {
    // The draw rule (uniform over every training row of another class): for class 1, partners
    // of class 0 have probability 30 / (30 + 12) = 5/7. Over 6000 draws the standard error is
    // √(5/7 · 2/7 / 6000) ≈ 0.0058; 0.025 is over 4 of them.
    let ds = blobs(&[30, 8, 12], 4, 5);
    let plan = Plan {
        add: vec![0, 6000, 0],
    };
    let g = grow(&ds, mix_with(None).as_ref(), &plan, false, 2, &[3]).unwrap();
    let of_0 = g
        .provenance
        .iter()
        .filter(|p| ds.labels[p.partner.unwrap()] == 0)
        .count() as f64
        / 6000.0;
    assert!((of_0 - 5.0 / 7.0).abs() < 0.025, "{of_0}");
    // Bases are uniform over the class's 8 rows: each about 750 times.
    let mut per_base = [0usize; 8];
    for p in &g.provenance {
        per_base[p.parent - 30] += 1;
    }
    // Binomial(6000, 1/8): sd ≈ 25.6; ±130 is over 5 of them.
    assert!(
        per_base.iter().all(|&n| n.abs_diff(750) < 130),
        "{per_base:?}"
    );
}

#[test]
fn lambda_follows_the_folded_beta_through_grow() {
    // Derived from the Beta(α, α) density (see src/augment/mix.rs):
    // E[max(λ, 1 − λ)] = ½ + 4^(−α) / (α·B(α, α)) = ½ + 1/π at α = ½ (B(½, ½) = π).
    let ds = blobs(&[30, 8], 3, 8);
    let plan = Plan {
        add: vec![0, 40_000],
    };
    let g = grow(&ds, mix_with(Some(0.5)).as_ref(), &plan, false, 4, &[1]).unwrap();
    let mean = g
        .provenance
        .iter()
        .map(|p| f64::from(p.weight))
        .sum::<f64>()
        / 40_000.0;
    // The folded λ's sd is below ¼, so the mean's is below 0.00125: 0.005 is 4 of them.
    let want = 0.5 + 1.0 / std::f64::consts::PI;
    assert!((mean - want).abs() < 0.005, "{mean} vs {want}");
}

#[test]
fn same_seed_same_rows_and_labels_for_any_thread_count() {
    // Common practice, no source: reproducible from the seed alone, whatever the scheduling.
    let ds = blobs(&[40, 12, 9, 30], 6, 5);
    let plan = Plan {
        add: vec![0, 28, 31, 10],
    };
    let method = mix_with(None);
    let run = |threads: usize, seed_: u64| {
        let pool = rayon::ThreadPoolBuilder::new()
            .num_threads(threads)
            .build()
            .unwrap();
        pool.install(|| grow(&ds, method.as_ref(), &plan, false, seed_, &[2, 7]).unwrap())
    };
    let (a, b) = (run(1, 42), run(2, 42));
    assert_eq!(a.x, b.x);
    assert_eq!(a.provenance, b.provenance);
    assert_eq!(a.soft, b.soft);
    assert_ne!(a.x, run(2, 43).x);
}

#[test]
fn a_class_alone_is_skipped_or_refused() {
    // The rule needs a row of another class; a training set of one class has none.
    let ds = blobs(&[6], 3, 1);
    let plan = Plan { add: vec![4] };
    let g = grow(&ds, mix_with(None).as_ref(), &plan, false, 1, &[]).unwrap();
    assert_eq!(g.x.nrows(), 0);
    assert_eq!(g.notes.len(), 1);
    let strict = build(
        MethodKind::Mix,
        &AugmentParams {
            strict: true,
            ..AugmentParams::default()
        },
    )
    .unwrap();
    assert!(grow(&ds, strict.as_ref(), &plan, false, 1, &[]).is_err());
    // α must be > 0; the error names the shared parameter, never a flag.
    let err = build(
        MethodKind::Mix,
        &AugmentParams {
            magnitude: Some(0.0),
            ..AugmentParams::default()
        },
    )
    .err()
    .unwrap();
    match err {
        Error::Param { name, .. } => assert_eq!(name, "magnitude"),
        other => panic!("{other}"),
    }
}

#[test]
fn assess_runs_mix_on_every_probe_and_repeats_itself() {
    // Common practice, no source: the method runs end to end on the three probes, and the
    // figures do not depend on the thread count.
    let ds = blobs(&[40, 10, 12], 6, 7);
    let cfg = AssessConfig {
        methods: vec![MethodKind::None, MethodKind::Mix, MethodKind::Interpolate],
        probes: vec![ProbeKind::Knn, ProbeKind::Linear, ProbeKind::Centroid],
        folds: 3,
        repeats: 1,
        target: Target::Largest,
        classes: None,
        augment: AugmentParams::default(),
        unit_norm: UnitNorm::Off,
        knn: KnnParams {
            k: 5,
            ..KnnParams::default()
        },
        linear: LinearParams::default(),
        interval: embloom::eval::IntervalKind::default(),
        seed: 3,
        diagnostics: true,
    }
    .validated()
    .unwrap();
    let run = |threads: usize| {
        let pool = rayon::ThreadPoolBuilder::new()
            .num_threads(threads)
            .build()
            .unwrap();
        pool.install(|| assess(&ds, &cfg, InputInfo::in_memory("test", &ds)).unwrap())
    };
    let (a, b) = (run(1), run(2));
    let mix_rows: Vec<_> = a
        .folds
        .iter()
        .filter(|f| serde_json::to_value(&f.method).unwrap() == "mix")
        .collect();
    assert_eq!(mix_rows.len(), 9);
    assert!(mix_rows.iter().all(|f| f.train_synthetic > 0));
    let strip = |r: &embloom::assess::AssessResults| {
        let mut v = serde_json::to_value(r).unwrap();
        v.as_object_mut().unwrap().remove("elapsed_seconds");
        v
    };
    assert_eq!(strip(&a), strip(&b));
}

#[test]
fn exports_carry_the_partner_label_and_a_grown_file_with_mix_is_refused() {
    // The export's promise: the soft target weight·e(label) + (1 − weight)·e(partner_label)
    // can be rebuilt from the file alone.
    let ds = blobs(&[20, 6, 7], 4, 2);
    let plan = plan_for(&ds, Target::Largest, None).unwrap();
    let grown = grow_dataset(
        &ds,
        &plan,
        MethodKind::Mix,
        &AugmentParams::default(),
        UnitNorm::Off,
        5,
    )
    .unwrap();
    let set = assemble(&ds, &grown, MethodKind::Mix).unwrap();
    let labels = set
        .partner_label
        .as_ref()
        .expect("a mix set has partner labels");
    let n_real = ds.n_rows();
    assert!(labels[..n_real].iter().all(String::is_empty));
    for (r, label) in labels.iter().enumerate().skip(n_real) {
        let j = set.partner[r] as usize;
        assert_eq!(*label, ds.classes[ds.labels[j] as usize]);
        assert_ne!(set.data.labels[r], ds.labels[j]);
        assert!((0.5..=1.0).contains(&set.weight[r]));
    }
    // Other methods' sets have no such column.
    let plain = grow_dataset(
        &ds,
        &plan,
        MethodKind::Interpolate,
        &AugmentParams::default(),
        UnitNorm::Off,
        5,
    )
    .unwrap();
    assert!(
        assemble(&ds, &plain, MethodKind::Interpolate)
            .unwrap()
            .partner_label
            .is_none()
    );

    let dir = tempfile::tempdir().unwrap();
    for ext in ["csv", "tsv", "npz", "safetensors"] {
        let path = dir.path().join(format!("mixed.{ext}"));
        write(&path, &set, false).unwrap();
        // The file reads back: the partner label is provenance, not a feature.
        let back = read(&path, &ReadOptions::default()).unwrap();
        assert_eq!(back.dataset.x, set.data.x, "{ext}");
        assert_eq!(back.dataset.dims(), ds.dims(), "{ext}");
        assert_eq!(back.partner.as_deref(), Some(&set.partner[..]), "{ext}");
        if ext == "csv" || ext == "tsv" {
            let text = std::fs::read_to_string(&path).unwrap();
            let sep = if ext == "csv" { ',' } else { '\t' };
            let header: Vec<&str> = text.lines().next().unwrap().split(sep).collect();
            let col = header.iter().position(|h| *h == "partner_label").unwrap();
            assert_eq!(col, header.len() - 1, "{ext}: partner_label comes last");
            for (line, want) in text.lines().skip(1).zip(labels) {
                assert_eq!(line.split(sep).nth(col).unwrap(), want, "{ext}");
            }
        }
        // assess cannot score soft rows read from a file, and says so.
        let err = GrownFile::split(
            &path,
            back.dataset,
            back.origin.as_deref(),
            back.parent.as_deref(),
            back.partner.as_deref(),
        )
        .unwrap_err();
        assert!(err.to_string().contains("mix rows"), "{err}");
    }
}

#[test]
fn the_stream_refuses_soft_labels() {
    // A stream's batches carry hard labels only, so mix is refused with a reason.
    use embloom::augment::ParamGuard;
    let err = StreamParams::new(MethodKind::Mix).check().unwrap_err();
    assert!(err.to_string().contains("soft labels"), "{err}");
}
