//! The training-loop stream (`augment::Stream`): batches fixed by (seed, epoch, batch) on any
//! thread count, each batch's synthetic share, the schedules' values, synthetic rows only of
//! grown classes, and every epoch visiting each real row exactly once. Sources beside each
//! check.

use embloom::Dataset;
use embloom::augment::{
    AugmentParams, Batch, MethodKind, ParamGuard, Schedule, Stream, StreamParams, Target,
};

fn signs() -> Dataset {
    embloom::demo::street_signs(7)
}

fn stream(ds: Dataset, p: StreamParams) -> Stream {
    Stream::new(ds, p.check().expect("valid stream params")).expect("stream")
}

fn all(s: &Stream) -> Vec<Batch> {
    s.batches()
        .collect::<embloom::Result<_>>()
        .expect("batches")
}

fn in_pool<T: Send>(threads: usize, f: impl FnOnce() -> T + Send) -> T {
    rayon::ThreadPoolBuilder::new()
        .num_threads(threads)
        .build()
        .unwrap()
        .install(f)
}

#[test]
fn batches_are_the_same_bits_on_one_and_two_threads() {
    // The library's contract (DEVELOPERS.md, Parallel code): the same bits on any thread count.
    let p = || {
        StreamParams::new(MethodKind::Interpolate)
            .batch_size(100)
            .epochs(2)
            .seed(3)
    };
    let one = in_pool(1, || all(&stream(signs(), p())));
    let two = in_pool(2, || all(&stream(signs(), p())));
    assert_eq!(one.len(), two.len());
    for (a, b) in one.iter().zip(&two) {
        assert_eq!(a.labels, b.labels);
        assert_eq!(a.synthetic, b.synthetic);
        let bits = |x: &ndarray::Array2<f32>| x.iter().map(|v| v.to_bits()).collect::<Vec<_>>();
        assert_eq!(bits(&a.x), bits(&b.x));
    }
    // A batch depends on (seed, epoch, batch) only: asked for alone, epoch 1's third batch is
    // the one the full iteration gave.
    let s = stream(signs(), p());
    let e1 = s.epoch(1).unwrap();
    let alone = s.batch(&e1, 2).unwrap();
    let through = &one[s.batches_in(0) + 2];
    assert_eq!(alone.labels, through.labels);
    assert_eq!(alone.x, through.x);
    // A different epoch draws different rows (common practice, no source: fresh draws per epoch).
    let e0 = s.epoch(0).unwrap();
    assert_ne!(s.batch(&e0, 2).unwrap().x, alone.x);
}

#[test]
fn each_full_batch_holds_the_share_of_synthetic_rows() {
    // Definition of the share (StreamParams::synthetic_share): round(share × batch size)
    // synthetic rows per full batch; the last batch keeps the epoch's proportion.
    let s = stream(
        signs(),
        StreamParams::new(MethodKind::Extrapolate)
            .batch_size(64)
            .synthetic_share(Some(0.25)),
    );
    let batches = all(&s);
    // 1280 real rows, 48 per batch: ceil(1280 / 48) = 27 batches.
    assert_eq!(batches.len(), 27);
    assert_eq!(s.len(), 27);
    for b in &batches[..26] {
        assert_eq!(b.x.nrows(), 64);
        assert_eq!(b.synthetic.iter().filter(|&&m| m).count(), 16);
    }
    // The last holds 1280 − 26·48 = 32 real rows and round(32 · 16/48) = 11 synthetic ones.
    let last = batches.last().unwrap();
    assert_eq!(last.synthetic.iter().filter(|&&m| !m).count(), 32);
    assert_eq!(last.synthetic.iter().filter(|&&m| m).count(), 11);
}

#[test]
fn the_share_from_the_target_is_the_grown_sets_share() {
    // Documented default (StreamParams::synthetic_share): planned ÷ (real + planned). The demo
    // counts (data/README.md), sorted: 10 14 16 90 110 120 140 160 180 200 240; the median
    // (the 6th of 11) is 120, so 110, 90, 16, 14, 10 grow by 10 + 30 + 104 + 106 + 110 = 360
    // rows: share 360 / 1640 = 0.2195; in a batch of 100, round(21.95) = 22 synthetic rows.
    let s = stream(
        signs(),
        StreamParams::new(MethodKind::Interpolate).batch_size(100),
    );
    let e = s.epoch(0).unwrap();
    assert!((e.share() - 360.0 / 1640.0).abs() < 1e-12);
    let b = s.batch(&e, 0).unwrap();
    assert_eq!(b.synthetic.iter().filter(|&&m| m).count(), 22);
}

#[test]
fn schedules_give_their_factors() {
    // The documented definitions of Schedule (linear: start + (1 − start)·e/(E − 1); steps: the
    // factor of the last step at or before the epoch, 1 before the first).
    let lin = Schedule::Linear { start: 0.0 };
    let got: Vec<f64> = (0..5).map(|e| lin.factor(e, 5)).collect();
    assert_eq!(got, vec![0.0, 0.25, 0.5, 0.75, 1.0]);
    let steps = Schedule::Steps(vec![(1, 0.5), (3, 2.0)]);
    let got: Vec<f64> = (0..5).map(|e| steps.factor(e, 5)).collect();
    assert_eq!(got, vec![1.0, 0.5, 0.5, 2.0, 2.0]);
    assert_eq!(Schedule::Constant.factor(3, 5), 1.0);

    // In a stream: the share ramps 0 → 0.3 over 4 epochs, λ of extrapolate (default 0.5)
    // steps to 0.25 then to 1.0.
    let s = stream(
        signs(),
        StreamParams::new(MethodKind::Extrapolate)
            .batch_size(50)
            .epochs(4)
            .synthetic_share(Some(0.3))
            .share_schedule(Schedule::Linear { start: 0.0 })
            .magnitude_schedule(Schedule::Steps(vec![(1, 0.5), (2, 2.0)])),
    );
    let mut shares = Vec::new();
    for e in 0..4 {
        let ep = s.epoch(e).unwrap();
        shares.push(ep.share());
        let lambda = [0.5, 0.25, 1.0, 1.0][e];
        assert_eq!(ep.magnitude(), Some(lambda));
        let b = s.batch(&ep, 0).unwrap();
        let want = (shares[e] * 50.0).round() as usize;
        assert_eq!(b.synthetic.iter().filter(|&&m| m).count(), want);
    }
    for (got, want) in shares.iter().zip([0.0, 0.1, 0.2, 0.3]) {
        assert!((got - want).abs() < 1e-12, "{got} vs {want}");
    }
    // Epoch 0 has share 0: 50 real rows a batch, ceil(1280/50) = 26 batches; epoch 3 has 15
    // synthetic rows a batch, 35 real, ceil(1280/35) = 37.
    assert_eq!(s.batches_in(0), 26);
    assert_eq!(s.batches_in(3), 37);
}

#[test]
fn synthetic_rows_belong_to_grown_classes_only() {
    // Definition of the stream (module docs): synthetic rows only of the classes the target
    // grows; with `classes`, of the named ones.
    let ds = signs();
    let rare = ds.class_index("keep-right").unwrap();
    let s = stream(
        ds,
        StreamParams::new(MethodKind::PrincipalNoise)
            .classes(Some(vec!["keep-right".into()]))
            .target(Target::Largest)
            .batch_size(128),
    );
    assert_eq!(s.grown_classes(), &[rare]);
    let mut synthetic = 0;
    for b in all(&s) {
        for (l, m) in b.labels.iter().zip(&b.synthetic) {
            if *m {
                synthetic += 1;
                assert_eq!(*l, rare);
            }
        }
    }
    assert!(synthetic > 0);
}

#[test]
fn each_epoch_visits_every_real_row_once_in_a_new_order() {
    // Definition of an epoch (common practice, no source): a permutation of the real rows.
    let s = stream(
        signs(),
        StreamParams::new(MethodKind::Interpolate)
            .batch_size(90)
            .epochs(2)
            .seed(11),
    );
    let mut orders = Vec::new();
    let mut it = s.batches();
    for e in 0..2 {
        let mut seen = Vec::new();
        for _ in 0..s.batches_in(e) {
            let b = it.next().unwrap().unwrap();
            for (&p, &m) in b.parent.iter().zip(&b.synthetic) {
                if !m {
                    seen.push(p);
                }
            }
        }
        let mut sorted = seen.clone();
        sorted.sort_unstable();
        assert_eq!(sorted, (0..1280).collect::<Vec<_>>());
        orders.push(seen);
    }
    assert!(it.next().is_none());
    assert_ne!(orders[0], orders[1]);
    // Real rows come through unchanged, with their labels.
    let ds = signs();
    let e = s.epoch(0).unwrap();
    let b = s.batch(&e, 0).unwrap();
    for (i, (&p, &m)) in b.parent.iter().zip(&b.synthetic).enumerate() {
        if !m {
            assert_eq!(b.x.row(i), ds.x.row(p));
            assert_eq!(b.labels[i], ds.labels[p]);
        }
    }
}

#[test]
fn bad_stream_parameters_are_typed_errors() {
    // The library's error convention (DEVELOPERS.md): a Param error by its library name.
    let name = |r: embloom::Result<_>| match r {
        Err(embloom::Error::Param { name, .. }) => name,
        other => panic!(
            "expected a parameter error, got {:?}",
            other.map(|_: ()| ())
        ),
    };
    let check = |p: StreamParams| p.check().map(|_| ());
    assert_eq!(
        name(check(
            StreamParams::new(MethodKind::Interpolate).synthetic_share(Some(1.0))
        )),
        "synthetic-share"
    );
    assert_eq!(
        name(check(
            StreamParams::new(MethodKind::Interpolate)
                .magnitude_schedule(Schedule::Linear { start: 0.0 })
        )),
        "magnitude-schedule"
    );
    assert_eq!(
        name(check(StreamParams::new(MethodKind::Reweight))),
        "method"
    );
    assert_eq!(
        name(check(
            StreamParams::new(MethodKind::Interpolate).batch_size(0)
        )),
        "batch-size"
    );
    assert_eq!(
        name(check(
            StreamParams::new(MethodKind::Interpolate)
                .share_schedule(Schedule::Steps(vec![(2, 1.0), (1, 0.5)]))
        )),
        "share-schedule"
    );
    // λ = 0 at some epoch is refused up front by extrapolate's own check.
    assert_eq!(
        name(check(
            StreamParams::new(MethodKind::Extrapolate)
                .epochs(3)
                .magnitude_schedule(Schedule::Linear { start: 0.0 })
        )),
        "magnitude"
    );
    let p = AugmentParams {
        neighbours: 0,
        ..AugmentParams::default()
    };
    assert_eq!(
        name(check(StreamParams::new(MethodKind::Interpolate).augment(p))),
        "neighbours"
    );
    // A target that grows nothing leaves no class to draw from.
    let r = Stream::new(
        signs(),
        StreamParams::new(MethodKind::Interpolate)
            .target(Target::Count(5))
            .synthetic_share(Some(0.2))
            .check()
            .unwrap(),
    );
    assert!(matches!(r, Err(embloom::Error::Data { .. })));
}
