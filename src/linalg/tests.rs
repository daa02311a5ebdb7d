//! Both kernels against a naive f64 product on awkward shapes: edge tiles in both
//! directions, one row or column, inner sizes that are not a multiple of the lane width or of
//! the inner block, transposed and sliced operands, and accumulation into `c`.

use ndarray::{Array2, ArrayView2, s};
use rand::Rng;

use super::{Kernel, sgemm_with};
use crate::seed;

fn random(rows: usize, cols: usize, tag: u64) -> Array2<f32> {
    let mut rng = seed::stream(tag, &[seed::tag("linalg-test")]);
    Array2::from_shape_simple_fn((rows, cols), || rng.gen_range(-1.0f32..1.0))
}

/// `c0 + a · b` in f64 and, per entry, Higham's bound γ_k Σ|a||b| for an f32 product summed
/// in any order (plus the rounding of `c0`), doubled for safety.
fn reference(
    a: ArrayView2<'_, f32>,
    b: ArrayView2<'_, f32>,
    c0: Option<&Array2<f32>>,
) -> (Array2<f64>, Array2<f64>) {
    let (m, k) = a.dim();
    let n = b.ncols();
    let u = f64::from(f32::EPSILON) / 2.0;
    let gamma = (k + 1) as f64 * u / (1.0 - (k + 1) as f64 * u);
    let mut exact = Array2::zeros((m, n));
    let mut bound = Array2::zeros((m, n));
    for i in 0..m {
        for j in 0..n {
            let mut sum = c0.map_or(0.0, |c| f64::from(c[[i, j]]));
            let mut abs = sum.abs();
            for p in 0..k {
                let t = f64::from(a[[i, p]]) * f64::from(b[[p, j]]);
                sum += t;
                abs += t.abs();
            }
            exact[[i, j]] = sum;
            bound[[i, j]] = 2.0 * gamma * abs + f64::MIN_POSITIVE;
        }
    }
    (exact, bound)
}

fn check(kernel: Kernel, a: ArrayView2<'_, f32>, b: ArrayView2<'_, f32>, accumulate: bool) {
    let (m, n) = (a.nrows(), b.ncols());
    let c0 = random(m, n, 99);
    let mut c = if accumulate {
        c0.clone()
    } else {
        Array2::from_elem((m, n), f32::NAN)
    };
    sgemm_with(kernel, a, b, &mut c.view_mut(), accumulate);
    let (exact, bound) = reference(a, b, accumulate.then_some(&c0));
    for ((&got, &want), &tol) in c.iter().zip(&exact).zip(&bound) {
        assert!(
            (f64::from(got) - want).abs() <= tol,
            "{kernel:?} {m}×{}·{}×{n} accumulate={accumulate}: {got} vs {want} (bound {tol})",
            a.ncols(),
            b.nrows()
        );
    }
}

const SHAPES: &[(usize, usize, usize)] = &[
    (1, 1, 1),
    (1, 7, 33),
    (12, 32, 16),
    (13, 33, 17),
    (11, 31, 5),
    (25, 65, 257),
    (100, 256, 300),
    (256, 100, 513),
    (3, 200, 1),
    (40, 1, 40),
];

#[test]
fn row_major_operands_match_an_f64_product() {
    for kernel in [Kernel::Avx512, Kernel::Portable] {
        for &(m, n, k) in SHAPES {
            let a = random(m, k, 1);
            let b = random(k, n, 2);
            check(kernel, a.view(), b.view(), false);
            check(kernel, a.view(), b.view(), true);
        }
    }
}

#[test]
fn transposed_and_sliced_operands_match_an_f64_product() {
    for kernel in [Kernel::Avx512, Kernel::Portable] {
        for &(m, n, k) in SHAPES {
            // Column-major a and b (transposed standard arrays), as the callers pass them.
            let at = random(k, m, 3);
            let bt = random(n, k, 4);
            check(kernel, at.t(), bt.t(), false);
            check(kernel, at.t(), bt.t(), true);
            // Every other column: contiguous along neither axis.
            let wide = random(m, 2 * k, 5);
            let b = random(k, n, 6);
            check(kernel, wide.slice(s![.., ..;2]), b.view(), false);
        }
    }
}

#[test]
fn column_major_and_strided_outputs_are_written_in_place() {
    let (m, n, k) = (29, 45, 70);
    let a = random(m, k, 7);
    let b = random(k, n, 8);
    let (exact, bound) = reference(a.view(), b.view(), None);
    // Column-major output.
    let mut ct = Array2::<f32>::zeros((n, m));
    sgemm_with(
        Kernel::Avx512,
        a.view(),
        b.view(),
        &mut ct.view_mut().reversed_axes(),
        false,
    );
    // A block of a wider output: rows contiguous, row stride past the block.
    let mut wide = Array2::<f32>::from_elem((m, n + 5), 7.0);
    sgemm_with(
        Kernel::Avx512,
        a.view(),
        b.view(),
        &mut wide.slice_mut(s![.., 2..n + 2]),
        false,
    );
    for i in 0..m {
        for j in 0..n {
            for got in [ct[[j, i]], wide[[i, j + 2]]] {
                assert!((f64::from(got) - exact[[i, j]]).abs() <= bound[[i, j]]);
            }
        }
        // The columns outside the block are untouched.
        assert_eq!(wide[[i, 0]], 7.0);
        assert_eq!(wide[[i, n + 4]], 7.0);
    }
}

#[test]
fn an_empty_inner_dimension_gives_zeros_or_leaves_c() {
    for kernel in [Kernel::Avx512, Kernel::Portable] {
        let a = Array2::<f32>::zeros((5, 0));
        let b = Array2::<f32>::zeros((0, 3));
        let mut c = Array2::from_elem((5, 3), 2.0f32);
        sgemm_with(kernel, a.view(), b.view(), &mut c.view_mut(), true);
        assert!(c.iter().all(|&v| v == 2.0));
        sgemm_with(kernel, a.view(), b.view(), &mut c.view_mut(), false);
        assert!(c.iter().all(|&v| v == 0.0));
    }
}

#[test]
fn the_same_shape_gives_the_same_bits_on_every_thread() {
    // The packing buffers are per thread; a product must not depend on which thread ran it
    // or on what that thread multiplied before.
    let a = random(256, 512, 9);
    let b = random(512, 300, 10);
    let mut here = Array2::<f32>::zeros((256, 300));
    sgemm_with(
        Kernel::Avx512,
        a.view(),
        b.view(),
        &mut here.view_mut(),
        false,
    );
    let there = std::thread::spawn(move || {
        let small = random(13, 7, 11);
        let mut junk = Array2::<f32>::zeros((13, 13));
        sgemm_with(
            Kernel::Avx512,
            small.view(),
            small.t(),
            &mut junk.view_mut(),
            false,
        );
        let mut c = Array2::<f32>::zeros((256, 300));
        sgemm_with(Kernel::Avx512, a.view(), b.view(), &mut c.view_mut(), false);
        c
    })
    .join()
    .expect("the product thread finished");
    assert!(
        here.iter()
            .zip(&there)
            .all(|(x, y)| x.to_bits() == y.to_bits())
    );
}
