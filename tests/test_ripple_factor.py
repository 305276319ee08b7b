"""The ripple factor by Horner's rule against the plain sum of exponentials."""

import numpy as np
import pytest

from flickerkit.drive import Drive, Ripple
from flickerkit.light import _ripple_factor


@pytest.mark.parametrize("shape", ["sine", "rectified"])
def test_horner_equals_direct_sum(shape):
    light = Drive(frequency_hz=1234.56, ripple=Ripple(7.3, 60.0, shape, 41.0)).at(0.37).light()
    w, rho = light._ripple_terms()
    t = np.random.default_rng(7).uniform(0.0, 3.0, 20_000).reshape(100, 200)
    direct = (rho[None, :] * np.exp(1j * w[None, :] * t.reshape(-1, 1))).real.sum(axis=1)
    got = _ripple_factor(w, rho, light.ripple.frequency_hz, t)
    assert got.shape == t.shape
    np.testing.assert_allclose(got.ravel(), direct, rtol=0, atol=1e-12)


def test_sine_ripple_extremes_closed_form():
    # analytic: steady light times 1 + m sin(2 pi 120 t) with percent flicker 4 % has
    # extremes 1 -+ 0.04 of the mean
    light = Drive(method="analogue", ripple=Ripple(4.0, 60.0, "sine")).at(1.0).light()
    lo, hi = light.extremes()
    assert lo == pytest.approx(0.96 * light.mean, rel=1e-9)
    assert hi == pytest.approx(1.04 * light.mean, rel=1e-9)


def test_non_harmonic_frequencies_fall_back_to_the_sum():
    w = 2 * np.pi * np.array([100.0, 250.5])
    rho = np.array([0.1 + 0.02j, 0.03j])
    t = np.linspace(0.0, 0.1, 777)
    direct = (rho[None, :] * np.exp(1j * w[None, :] * t[:, None])).real.sum(axis=1)
    np.testing.assert_allclose(_ripple_factor(w, rho, 100.0, t), direct, atol=1e-15)
