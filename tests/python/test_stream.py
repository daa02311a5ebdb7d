"""embloom.Stream: batches for a training loop (sources beside each check)."""

import numpy as np
import pytest

import embloom

from conftest import ROOT


def test_batches_hold_the_share_and_only_grown_classes_synthetic(small_set):
    x, y = small_set
    s = embloom.Stream(x, y, method="interpolate", classes=["c"], target="largest",
                       batch_size=10, epochs=3, synthetic_share=0.3, seed=5)
    # Definition (Stream docstring): round(0.3 × 10) = 3 synthetic rows a full batch, 7 real;
    # 58 real rows → ceil(58 / 7) = 9 batches an epoch.
    assert len(s) == 27 and [s.batches_in(e) for e in range(3)] == [9, 9, 9]
    batches = list(s)
    assert len(batches) == len(s)
    for e in range(3):
        epoch = batches[9 * e: 9 * (e + 1)]
        for xb, yb, mask in epoch[:-1]:
            assert xb.shape == (10, 8) and xb.dtype == np.float32 and mask.dtype == bool
            assert mask.sum() == 3
        # Synthetic rows only of the named class; real rows of each class once per epoch.
        real = np.concatenate([yb[~m] for _, yb, m in epoch])
        assert set(np.concatenate([yb[m] for _, yb, m in epoch])) == {"c"}
        names, counts = np.unique(real, return_counts=True)
        assert dict(zip(names, counts)) == {"a": 40, "b": 12, "c": 6}


def test_batches_are_fixed_by_the_seed(small_set):
    x, y = small_set
    a = list(embloom.Stream(x, y, batch_size=16, epochs=2, seed=1))
    b = list(embloom.Stream(x, y, batch_size=16, epochs=2, seed=1))
    c = list(embloom.Stream(x, y, batch_size=16, epochs=2, seed=2))
    assert all(p[0].tobytes() == q[0].tobytes() and (p[1] == q[1]).all() for p, q in zip(a, b))
    assert any(p[0].tobytes() != q[0].tobytes() for p, q in zip(a, c))


def test_schedules_and_bad_parameters(small_set):
    x, y = small_set
    # Share ramps from 0 (linear schedule): the first epoch has no synthetic rows.
    s = embloom.Stream(x, y, method="extrapolate", batch_size=10, epochs=3,
                       synthetic_share=0.4,
                       schedule={"share": "linear", "magnitude": ("steps", [(1, 2.0)])})
    first = [m.sum() for _, _, m in s.epoch(0)]
    last = [m.sum() for _, _, m in s.epoch(2)]
    assert sum(first) == 0 and last[0] == 4
    with pytest.raises(embloom.ParameterError, match="synthetic-share"):
        embloom.Stream(x, y, synthetic_share=1.0)
    with pytest.raises(embloom.ParameterError, match="magnitude-schedule"):
        embloom.Stream(x, y, method="interpolate", schedule={"magnitude": "linear"})
    with pytest.raises(embloom.ParameterError):
        embloom.Stream(x, y, schedule="cosine")


def softmax_loss(w, b, x, onehot):
    z = x @ w + b
    z -= z.max(axis=1, keepdims=True)
    p = np.exp(z)
    p /= p.sum(axis=1, keepdims=True)
    return float(-(onehot * np.log(p + 1e-12)).sum(axis=1).mean()), p


def test_a_numpy_softmax_regression_learns_from_the_stream():
    ds = embloom.read(ROOT / "data" / "street-signs.npz")
    stream = embloom.Stream(ds.x, ds.y, method="interpolate", target="median",
                            batch_size=64, epochs=4, seed=0)
    classes = list(stream.classes)
    index = {c: i for i, c in enumerate(classes)}
    d, k = ds.x.shape[1], len(classes)
    w, b = np.zeros((d, k)), np.zeros(k)
    full = np.eye(k)[[index[c] for c in ds.y]]
    start, _ = softmax_loss(w, b, ds.x, full)
    synthetic = 0
    for xb, yb, mask in stream:
        onehot = np.eye(k)[[index[c] for c in yb]]
        _, p = softmax_loss(w, b, xb, onehot)
        grad = (p - onehot) / len(xb)
        w -= 2.0 * xb.T @ grad
        b -= 2.0 * grad.sum(axis=0)
        synthetic += int(mask.sum())
    end, p = softmax_loss(w, b, ds.x, full)
    # Common practice, no source: with all-zero weights the loss is log(k) = log 11; four
    # epochs of gradient descent must take the training loss well below it.
    assert start == pytest.approx(np.log(11))
    assert end < 0.5 * start
    assert synthetic > 0


def test_mix_is_refused_with_the_reason(small_set):
    # A batch carries hard labels only; mix rows have soft ones (Zhang et al. 2018).
    x, y = small_set
    with pytest.raises(embloom.ParameterError, match="soft labels"):
        embloom.Stream(x, y, method="mix")
