//! The report's 2-D views in a real assessment: at most 12 grown classes per method, largest
//! first, each with its nearest rival classes.

use crate::common::value;
use embloom::Dataset;
use embloom::assess::{AssessConfig, InputInfo, MAX_SCATTER_CLASSES, SCATTER_RIVALS, assess};
use embloom::augment::{AugmentParams, MethodKind, Target, UnitNorm};
use embloom::eval::IntervalKind;
use embloom::probe::{KnnParams, LinearParams, ProbeKind};
use ndarray::Array2;

#[test]
fn views_are_limited_to_twelve_grown_classes_largest_first_with_their_rivals() {
    // One class of 80 rows and 14 of 10, 12, ..., 36 rows in 16 dims, class c's mean at 3 on axis c;
    // every small class grows to the largest. Common practice, no source: the limit and the
    // order are the report's own rules.
    let sizes: Vec<usize> = std::iter::once(80).chain((10..38).step_by(2)).collect();
    let n: usize = sizes.iter().sum();
    let mut x = Array2::<f32>::zeros((n, 16));
    let mut labels = Vec::new();
    let mut i = 0;
    for (c, &s) in sizes.iter().enumerate() {
        for _ in 0..s {
            for j in 0..16 {
                x[[i, j]] = if j == c { 3.0 } else { 0.0 } + value(i, j, 5);
            }
            labels.push(c as u32);
            i += 1;
        }
    }
    let names: Vec<String> = (0..sizes.len()).map(|c| format!("k{c:02}")).collect();
    let ds = Dataset::new(x, labels, names.clone());
    let cfg = AssessConfig {
        methods: vec![MethodKind::None, MethodKind::Interpolate],
        probes: vec![ProbeKind::Knn],
        folds: 2,
        repeats: 1,
        target: Target::Largest,
        classes: None,
        augment: AugmentParams::default(),
        unit_norm: UnitNorm::Off,
        knn: KnnParams::default(),
        linear: LinearParams::default(),
        interval: IntervalKind::CorrectedT,
        seed: 3,
        diagnostics: true,
    }
    .validated()
    .unwrap();
    let r = assess(&ds, &cfg, InputInfo::in_memory("views", &ds)).unwrap();
    assert_eq!(r.grown_classes.len(), 14);
    let mut drawn: Vec<&str> = r.scatter.iter().map(|s| s.class.as_str()).collect();
    assert_eq!(MAX_SCATTER_CLASSES, 12);
    // The 12 largest grown classes, sizes 36 down to 14, are classes 14 down to 3.
    drawn.sort();
    let expected: Vec<String> = (3..15).map(|c| format!("k{c:02}")).collect();
    assert_eq!(drawn, expected);
    for s in &r.scatter {
        assert_eq!(s.rivals.len(), SCATTER_RIVALS);
        assert!(!s.rivals.contains(&s.class));
        assert_eq!(s.others.len(), s.others_rival.len());
        assert!(s.others_rival.iter().all(|&k| k < s.rivals.len()));
        assert!(!s.real.is_empty() && !s.synthetic.is_empty());
    }
    // The page names the two classes left out.
    let html = embloom::report::html_report(&r);
    // The page draws them largest first.
    let at: Vec<usize> = (3..15)
        .rev()
        .map(|c| html.find(&format!("k{c:02} — interpolate")).unwrap())
        .collect();
    assert!(at.windows(2).all(|w| w[0] < w[1]), "{at:?}");
    let rest = html
        .split("id=\"scatter-rest\"")
        .nth(1)
        .expect("the classes not drawn are listed");
    let rest = &rest[..rest.find("</p>").unwrap()];
    assert!(rest.contains("k02") && rest.contains("k01"), "{rest}");
    assert!(!rest.contains("k03"), "{rest}");
}
