"""The block-wise second pass against the same sums written directly with numpy."""

import numpy as np
import pytest

from flickerkit import metrics, reduce


@pytest.mark.parametrize("block", [997, 4096, 2**22])
@pytest.mark.parametrize("seed", range(3))
def test_second_pass_equals_direct_sums(block, seed):
    rng = np.random.default_rng(seed)
    n = 50_000
    T = float(rng.uniform(80, 900))  # an awkward, fractional period [samples]
    # quantised light (a recorder's codes), so the maximum and the next value repeat
    x = np.round(1 + 0.5 * np.sign(np.sin(2 * np.pi * np.arange(n) / T))
                 + 0.05 * rng.standard_normal(n), 2)
    x[rng.integers(0, n, 7)] = x.max()  # the maximum in several blocks
    P = int(n // T)
    bounds = metrics.period_bounds(P, T, n)
    means = np.array([x[a:b].mean() for a, b in zip(bounds[:-1], bounds[1:])])
    span = x[bounds[0]:bounds[-1]]
    above, span_above, at_max, at_next = reduce.second_pass(x, bounds, means, span.mean(),
                                                            float(x.max()), block=block)
    # reference: the definitions, over whole arrays
    expected = [np.maximum(x[a:b] - m, 0).sum() for a, b, m in
                zip(bounds[:-1], bounds[1:], means)]
    np.testing.assert_allclose(above, expected, rtol=1e-12, atol=1e-9)
    assert span_above == pytest.approx(np.maximum(span - span.mean(), 0).sum(), rel=1e-12)
    assert at_max == np.count_nonzero(x == x.max())
    second = np.unique(x)[-2]
    assert at_next == np.count_nonzero(x == second)
