"""Tests of flickerkit.svm against analytic Fourier series and the values of reference/svm.csv."""

from __future__ import annotations

import csv
from pathlib import Path

import numpy as np
import pytest

from flickerkit.errors import CaptureWarning, FlickerkitWarning, InputError, SettingsError
from flickerkit.periodicity import Periodicity, fundamental_frequency
from flickerkit.spectrum import modulation_spectrum
from flickerkit.svm import (
    DEFAULT_F_MAX_HZ,
    THRESHOLDS,
    svm_from_components,
    svm_of_spectrum,
    threshold_power,
    threshold_sigmoid,
)

REFERENCE = Path(__file__).resolve().parents[1] / "reference" / "svm.csv"

#: Project tolerance (issue 3): SVM from sampled captures within 1 % of the table.
SAMPLED_RTOL = 0.01
#: Project tolerance (issue 3): a capture that is not a whole number of periods within 2 %.
NOT_WHOLE_RTOL = 0.02
#: reference/svm.csv has 4 decimals; the series sums agree to rounding.
SERIES_ATOL = 6e-5

#: Sample rate of the synthetic captures: PWM up to 2 kHz has 50 samples per
#: period, so 10 % and 50 % duty are whole samples (no duty quantisation).
FS = 100_000.0
DURATION_S = 0.5


def _rows() -> list[dict]:
    with REFERENCE.open(newline="") as fh:
        return list(csv.DictReader(line for line in fh if not line.startswith("#")))


def _series(row: dict, n_harmonics: int = 200_000) -> tuple[np.ndarray, np.ndarray]:
    """Analytic Fourier series (frequencies, C_k relative to the mean) of a table row."""
    f0 = float(row["frequency_hz"])
    k = np.arange(1, n_harmonics + 1, dtype=np.float64)
    if row["kind"] == "sine":
        return np.array([f0]), np.array([float(row["modulation"])])
    if row["kind"] == "fwr":  # analytic: |sin| has C_k = 2/(4k^2 - 1) at k x ripple frequency
        return k * f0, 2.0 / (4.0 * k**2 - 1.0)
    d, b = float(row["duty"]), float(row["off_level"])
    mean = b + d * (1.0 - b)  # analytic: PWM series, C_k = (1-b) 2|sin(pi k D)|/(pi k) / mean
    return k * f0, (1.0 - b) * 2.0 * np.abs(np.sin(np.pi * k * d)) / (np.pi * k) / mean


def _capture(row: dict, duration_s: float = DURATION_S, fs: float = FS) -> np.ndarray:
    """Sampled capture of a table row; PWM edges fall between samples (phase offset)."""
    t = np.arange(int(round(duration_s * fs))) / fs
    f0 = float(row["frequency_hz"])
    if row["kind"] == "sine":
        return 1.0 + float(row["modulation"]) * np.sin(2 * np.pi * f0 * t + 0.3)
    if row["kind"] == "fwr":
        return np.abs(np.sin(2 * np.pi * (f0 / 2.0) * t + 0.3))
    d, b = float(row["duty"]), float(row["off_level"])
    phase = 0.37 / (fs / f0)  # 0.37 of a sample: no edge on a sample instant
    return np.where(((t * f0 + phase) % 1.0) < d, 1.0, b)


ROWS = _rows()
ROW_IDS = [f"{r['kind']}-{r['frequency_hz']}-{r['modulation'] or r['duty']}-{r['off_level']}"
           for r in ROWS]


@pytest.mark.parametrize("row", ROWS, ids=ROW_IDS)
@pytest.mark.parametrize("model, column", [("power", "svm_power"), ("sigmoid", "svm_sigmoid")])
def test_series_reproduce_table(row, model, column):
    # source: analytic Fourier series summed with the CIE TN 006:2016 SVM formula
    # (reference/svm.csv)
    f, c = _series(row)
    assert svm_from_components(f, c, threshold=model) == pytest.approx(
        float(row[column]), abs=SERIES_ATOL, rel=1e-4)


@pytest.mark.parametrize("row", ROWS, ids=ROW_IDS)
def test_sampled_captures_reproduce_table(row):
    # source: analytic Fourier series + CIE TN 006:2016 SVM sum, power-form threshold of Perz et al.
    # (2018) (reference/svm.csv); project tolerance 1 % (issue 3)
    x = _capture(row)
    spec = modulation_spectrum(x, FS, fundamental_frequency(x, FS))
    result = svm_of_spectrum(spec)
    expected = float(row["svm_power"])
    assert result.method == "whole-period"
    assert result.threshold == "power" and result.threshold_status == "sourced"
    if expected == 0.0:
        assert result.value == pytest.approx(0.0, abs=1e-3)
    else:
        assert result.value == pytest.approx(expected, rel=SAMPLED_RTOL)


@pytest.mark.parametrize("duration_s", [1.0025, 1.0050])
@pytest.mark.parametrize("row", [r for r in ROWS if r["frequency_hz"] == "100"
                                 and r["off_level"] in ("", "0")][:3],
                         ids=lambda r: f"{r['kind']}-{r['modulation'] or r['duty']}")
def test_capture_not_whole_periods(row, duration_s):
    # computed with numpy: a 1.0025 s / 1.005 s window on a 100 Hz sine biases a plain DFT's SVM
    # by -9.6 % / -23 % (3.4796 / 2.9614 instead of 3.8473); project tolerance 2 % (issue 3).
    # Expected values: analytic Fourier series + SVM sum (reference/svm.csv).
    fs = 20_000.0
    x = _capture(row, duration_s=duration_s, fs=fs)
    expected = float(row["svm_power"])
    # the normal path: trimmed to whole periods
    spec = modulation_spectrum(x, fs, fundamental_frequency(x, fs))
    assert svm_of_spectrum(spec).value == pytest.approx(expected, rel=NOT_WHOLE_RTOL)
    # the fallback for captures without a clean period: Hann window, lobe power summed
    no_period = Periodicity(None, None, 0, 0.0, "forced for the test")
    with pytest.warns(CaptureWarning, match="Hann"):
        result = svm_of_spectrum(modulation_spectrum(x, fs, no_period))
    assert result.method == "hann-windowed"
    assert "Hann" in result.method_note
    assert result.value == pytest.approx(expected, rel=NOT_WHOLE_RTOL)


def test_hann_fallback_ignores_leakage_of_the_mean():
    # computed with numpy: with a Hann window the mean leaks into the first bins (C ~ 1 at 1 Hz)
    # and a sum from 0 Hz gives SVM 5.11 instead of 3.85 unless those bins are excluded.
    fs = 20_000.0
    t = np.arange(20_050) / fs
    x = 1.0 + np.sin(2 * np.pi * 100 * t)
    spec = modulation_spectrum(x, fs, Periodicity(None, None, 0, 0.0, "forced"))
    with pytest.warns(CaptureWarning):
        result = svm_of_spectrum(spec, f_min_hz=0.0)
    assert result.value == pytest.approx(3.8473, rel=NOT_WHOLE_RTOL)  # analytic: 1/T(100 Hz)


def test_thresholds_match_their_formulas_at_4_decimals():
    # computed from the two formulas to 4 decimals: power form of Perz et al. (2018),
    # T = 2.865e-5 f^1.543 + 0.225; sigmoid form from memory (unverified)
    f = np.array([80, 100, 120, 200, 300, 500, 800, 1000, 2000], dtype=float)
    power = [0.2498, 0.2599, 0.2713, 0.3268, 0.4152, 0.6434, 1.0892, 1.4443, 3.7782]
    sigmoid = [0.2430, 0.2563, 0.2757, 0.3654, 0.4915, 0.7314, 0.9280, 0.9732, 0.9998]
    np.testing.assert_allclose(threshold_power(f), power, atol=6e-5)
    np.testing.assert_allclose(threshold_sigmoid(f), sigmoid, atol=6e-5)
    assert THRESHOLDS["power"].status == "sourced"
    assert "unverified" in THRESHOLDS["sigmoid"].status


def test_inverse_check_values():
    # analytic: a single sine has SVM = m / T(f), so m = target x T(f)
    # (0.4 x 0.2599 = 0.1040 at 100 Hz)
    for f, m, target in [(100, 0.1040, 0.4), (120, 0.1085, 0.4), (100, 0.2339, 0.9),
                         (120, 0.2441, 0.9)]:
        assert svm_from_components([f], [m]) == pytest.approx(target, abs=5e-4)


def test_band_edges():
    # analytic: a component exactly at 2 kHz counts, one above does not; f_min likewise
    assert svm_from_components([2000.0], [1.0]) == pytest.approx(1 / threshold_power(2000.0))
    assert svm_from_components([2000.001], [1.0]) == 0.0
    assert svm_from_components([79.9], [1.0]) == 0.0
    assert svm_from_components([79.9], [1.0], f_min_hz=50.0) > 0.0
    assert DEFAULT_F_MAX_HZ == 2000.0


def test_vectorised_over_leading_axes():
    # analytic: single sines give C/T; rows are independent
    f = np.array([[100.0, 300.0], [1000.0, 5000.0]])
    c = np.array([[1.0, 0.0], [1.0, 1.0]])
    out = svm_from_components(f, c)
    assert out.shape == (2,)
    np.testing.assert_allclose(out, [1 / threshold_power(100.0), 1 / threshold_power(1000.0)])


def test_scaling_is_linear_in_amplitude():
    # analytic: SVM is homogeneous of degree 1 in the amplitudes
    f = np.array([100.0, 200.0, 300.0])
    c = np.array([0.3, 0.2, 0.1])
    assert svm_from_components(f, 2 * c) == pytest.approx(2 * svm_from_components(f, c))


def test_nan_propagates_and_bad_input_raises():
    assert np.isnan(svm_from_components([100.0], [np.nan]))
    with pytest.raises(InputError, match=">= 0"):
        svm_from_components([100.0], [-0.1])
    with pytest.raises(SettingsError, match="power, sigmoid"):
        svm_from_components([100.0], [0.1], threshold="cubic")
    with pytest.raises(SettingsError, match="f_min < f_max"):
        svm_from_components([100.0], [0.1], f_min_hz=500.0, f_max_hz=100.0)


def test_components_listed_largest_first():
    # analytic: 100 Hz 50 % PWM: the fundamental carries ~99.7 % of the sum (C1 = 4/pi)
    row = {"kind": "pwm", "frequency_hz": "100", "duty": "0.5", "off_level": "0"}
    x = _capture(row)
    result = svm_of_spectrum(modulation_spectrum(x, FS, fundamental_frequency(x, FS)))
    shares = [c.share for c in result.components]
    assert shares == sorted(shares, reverse=True)
    assert result.components[0].frequency_hz == pytest.approx(100.0)
    assert result.components[0].amplitude == pytest.approx(4 / np.pi, rel=1e-3)
    assert result.components[1].frequency_hz == pytest.approx(300.0)
    assert 0.99 < sum(shares) <= 1.0 + 1e-12
    d = result.to_dict()
    assert d["value"] == result.value and d["components"][0]["frequency_hz"] == 100.0


def test_sigmoid_model_is_flagged():
    x = _capture({"kind": "sine", "frequency_hz": "100", "modulation": "1.0"})
    spec = modulation_spectrum(x, FS, fundamental_frequency(x, FS))
    with pytest.warns(FlickerkitWarning, match="unverified"):
        result = svm_of_spectrum(spec, threshold="sigmoid")
    assert result.value == pytest.approx(3.9018, rel=SAMPLED_RTOL)  # analytic: 1/T_sigmoid(100 Hz)
    assert any("unverified" in w for w in result.warnings)


def test_low_sample_rate_is_flagged():
    # a 3 kS/s capture cannot hold components between 1.5 kHz and 2 kHz
    fs = 3000.0
    t = np.arange(3000) / fs
    x = 1 + 0.5 * np.sin(2 * np.pi * 100 * t)
    spec = modulation_spectrum(x, fs, fundamental_frequency(x, fs))
    with pytest.warns(CaptureWarning, match="below the SVM band"):
        result = svm_of_spectrum(spec)
    assert result.value == pytest.approx(0.5 / threshold_power(100.0))


def test_unlocked_modulation_is_flagged():
    # a 100 Hz sine plus a strong 163.7 Hz sine: the second is not a harmonic of the first
    fs = 20_000.0
    t = np.arange(20_000) / fs
    x = 1 + 0.3 * np.sin(2 * np.pi * 100 * t) + 0.3 * np.sin(2 * np.pi * 163.7 * t)
    period = Periodicity(100.0, 200.0, 100, 0.5)  # as if the period finder locked on 100 Hz
    with pytest.warns(CaptureWarning, match="between the harmonics"):
        svm_of_spectrum(modulation_spectrum(x, fs, period))
