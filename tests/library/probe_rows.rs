//! The probes on a fold's rows read in place (`data::Rows`, index lists into the input
//! matrix) give the models and predictions they give on the same rows copied out, bit for bit.

use embloom::data::Rows;
use embloom::neighbors::Metric;
use embloom::probe::{CentroidProbe, LinearParams, LinearProbe};
use embloom::seed;
use ndarray::{Array2, Axis};
use rand::Rng;
use rand_distr::StandardNormal;

/// Four classes of 60 rows around separate means, in 16 dims, rows of the classes mixed.
fn data() -> (Array2<f32>, Vec<u32>) {
    let mut rng = seed::stream(11, &[3]);
    let labels: Vec<u32> = (0..240).map(|i| (i * 7 % 4) as u32).collect();
    let x = Array2::from_shape_fn((240, 16), |(i, j)| {
        let noise: f32 = rng.sample(StandardNormal);
        noise + if j == labels[i] as usize { 3.0 } else { 0.0 }
    });
    (x, labels)
}

#[test]
fn linear_and_centroid_probes_on_picked_rows_equal_their_copies() {
    // common practice, no source: reading rows through an index list must not change a bit.
    let (x, labels) = data();
    let test: Vec<usize> = (0..240).filter(|i| i % 5 == 2).collect();
    let train: Vec<usize> = (0..240).filter(|i| i % 5 != 2).collect();
    let (train_x, test_x) = (x.select(Axis(0), &train), x.select(Axis(0), &test));
    let train_y: Vec<u32> = train.iter().map(|&i| labels[i]).collect();
    // A second part, as assess passes synthetic rows after the real ones.
    let extra = x.select(Axis(0), &[0, 1, 2, 3]);
    let mut y = train_y.clone();
    y.extend([labels[0], labels[1], labels[2], labels[3]]);
    let probe = LinearProbe::new(LinearParams {
        max_iter: 40,
        ..LinearParams::default()
    })
    .unwrap();
    let copied = probe
        .fit_parts_soft(&[train_x.view(), extra.view()], &y, &[], 4, None)
        .unwrap();
    let picked = probe
        .fit_rows_soft(
            &[Rows::picked(x.view(), &train), Rows::all(extra.view())],
            &y,
            &[],
            4,
            None,
        )
        .unwrap();
    assert_eq!(picked, copied);
    let test_rows = Rows::picked(x.view(), &test);
    assert_eq!(picked.predict(test_rows), copied.predict(test_x.view()));
    assert_eq!(
        picked.predict_proba(test_rows),
        copied.predict_proba(test_x.view())
    );
    for metric in [Metric::Cosine, Metric::Euclidean] {
        let centroid = CentroidProbe::new(metric);
        assert_eq!(
            centroid
                .predict(&[Rows::picked(x.view(), &train)], &train_y, 4, test_rows)
                .unwrap(),
            centroid
                .predict(&[train_x.view()], &train_y, 4, test_x.view())
                .unwrap()
        );
    }
}
