"""planner.physics.arrays against the library functions they stand in for: numpy.unique,
numpy.quantile (Hyndman & Fan 1996 definition 7) and statistics.NormalDist.inv_cdf."""

from __future__ import annotations

from statistics import NormalDist

import numpy as np
import pytest

from planner.physics.arrays import distinct, normal_quantile, quantile


@pytest.mark.parametrize("values", [[3.0, 1.0, 1.0, 2.0], [5.0], [], [[2.0, 1.0], [1.0, 4.0]],
                                    np.linspace(0, 1, 7).tolist() * 3])
def test_distinct_is_numpy_unique(values):
    assert distinct(values).tolist() == np.unique(np.asarray(values, dtype=float)).tolist()


@pytest.mark.parametrize("q", [0.0, 0.1, 0.2, 0.5, 0.9, 1.0, [0.1, 0.9], [0.2, 0.5, 0.8]])
def test_quantile_is_numpy_quantile(q):
    x = np.random.default_rng(5).lognormal(size=(4, 3, 37))
    for axis in (-1, 0, 1):
        assert quantile(x, q, axis=axis) == pytest.approx(np.quantile(x, q, axis=axis), abs=1e-12)
    assert quantile(x[0, 0], q) == pytest.approx(np.quantile(x[0, 0], q), abs=1e-12)


def test_quantile_refuses_what_numpy_refuses():
    with pytest.raises(ValueError):
        quantile([1.0, 2.0], 1.5)
    with pytest.raises(ValueError):
        quantile([], 0.5)


def test_normal_quantile_is_the_inverse_normal_cdf():
    """Reference: statistics.NormalDist().inv_cdf (Wichura 1988, AS241), to 1e-12; and the
    familiar 1.959964 at 0.975 (two-sided 95 %)."""
    p = np.concatenate([[1e-9, 1e-6, 1e-3], (np.arange(128) + 0.5) / 128, [0.5, 0.999, 1 - 1e-9]])
    expected = np.array([NormalDist().inv_cdf(v) for v in p])
    assert normal_quantile(p) == pytest.approx(expected, abs=1e-12)
    assert float(normal_quantile(0.975)) == pytest.approx(1.959964, abs=1e-6)
    with pytest.raises(ValueError):
        normal_quantile([0.0, 0.5])
