"""Tests of flickerkit.filtered (JA10.6 filtered percent flicker)."""

from __future__ import annotations

import csv
from pathlib import Path

import numpy as np
import pytest

from flickerkit.errors import CaptureWarning
from flickerkit.filtered import JA10_CUTOFFS_HZ, filtered_percent_flicker
from flickerkit.periodicity import Periodicity, fundamental_frequency

REFERENCE = Path(__file__).resolve().parents[1] / "reference" / "ja10-filtered.csv"

#: Sampled captures (100 samples or more per PWM period, harmonics up to 1 kHz well below
#: Nyquist) against the continuous series: within 0.1 percentage point (chosen: the sampled
#: series differs from the continuous one by (pi f / fs)^2 / 6 < 0.02 % up to 1 kHz).
TABLE_TOL_PP = 0.1
#: Through the automatic period finder (its period estimate may be a sample off).
AUTO_TOL_PP = 0.5


def _rows() -> list[dict]:
    with REFERENCE.open(newline="") as fh:
        return list(csv.DictReader(line for line in fh if not line.startswith("#")))


def _capture(row: dict) -> tuple[np.ndarray, float, Periodicity]:
    f0 = float(row["frequency_hz"])
    fs = 96_000.0 if f0 == 120.0 else 100_000.0  # whole samples per period and per duty
    n_per = int(round(fs / f0))
    t = np.arange(int(fs)) / fs  # 1 s, a whole number of periods
    if row["kind"] == "fwr":
        x = np.abs(np.sin(2 * np.pi * (f0 / 2) * t))
    else:
        x = np.where(((t * f0 + 0.37 / n_per) % 1.0) < float(row["duty"]), 1.0, 0.0)
    exact = Periodicity(f0, float(n_per), int(round(f0)), 1.0)
    return x, fs, exact


ROWS = _rows()


@pytest.mark.parametrize("row", ROWS, ids=lambda r: f"{r['kind']}-{r['frequency_hz']}-{r['duty']}")
def test_ja10_filtered_table(row):
    # source: analytic: the California JA10.6 procedure applied to the continuous Fourier series
    # (reference/ja10-filtered.csv)
    x, fs, exact = _capture(row)
    result = filtered_percent_flicker(x, fs, exact)
    expected = [float(row[f"pf_{c:g}"]) for c in JA10_CUTOFFS_HZ]
    assert result.cutoffs_hz == JA10_CUTOFFS_HZ
    np.testing.assert_allclose(result.percent_flicker, expected, atol=TABLE_TOL_PP)
    assert result.whole_periods >= 1 and not result.warnings


@pytest.mark.parametrize("row", ROWS[:2], ids=["pwm-50", "pwm-10"])
def test_ja10_filtered_table_with_period_found(row):
    # source as above; the period is found by flickerkit.periodicity
    x, fs, _ = _capture(row)
    result = filtered_percent_flicker(x, fs, fundamental_frequency(x, fs))
    expected = [float(row[f"pf_{c:g}"]) for c in JA10_CUTOFFS_HZ]
    np.testing.assert_allclose(result.percent_flicker, expected, atol=AUTO_TOL_PP)


def test_component_at_cutoff_is_kept():
    # JA10.6 zeroes the data *above* the cut-off: a 1 kHz fundamental counts "below 1000 Hz"
    row = {"kind": "pwm", "frequency_hz": "1000", "duty": "0.1"}
    x, fs, exact = _capture(row)
    at = filtered_percent_flicker(x, fs, exact, cutoffs_hz=[1000.0]).percent_flicker[0]
    below = filtered_percent_flicker(x, fs, exact, cutoffs_hz=[999.9]).percent_flicker[0]
    assert at == pytest.approx(196.726, abs=TABLE_TOL_PP)  # analytic, reference/ja10-filtered.csv
    assert below == pytest.approx(0.0, abs=1e-9)


def test_sum_of_cosines():
    # analytic: 1 + 0.3 cos(a) + 0.1 cos(3a): max 1.4, min 0.6 -> 40 %; fundamental alone 30 %
    fs = 20_000.0
    t = np.arange(20_000) / fs
    x = 1 + 0.3 * np.cos(2 * np.pi * 120 * t) + 0.1 * np.cos(2 * np.pi * 360 * t)
    result = filtered_percent_flicker(x, fs)
    np.testing.assert_allclose(result.percent_flicker, [0, 0, 30, 40, 40], atol=1e-9)
    assert result.as_mapping() == dict(zip(["40", "90", "200", "400", "1000"],
                                           result.percent_flicker))
    assert result.to_dict()["component_at_cutoff"] == "kept"


def test_no_period_is_flagged():
    fs = 20_000.0
    t = np.arange(20_000) / fs
    x = 1 + 0.2 * np.cos(2 * np.pi * 120 * t)
    no_period = Periodicity(None, None, 0, 0.0, "forced for the test")
    with pytest.warns(CaptureWarning, match="whole capture"):
        result = filtered_percent_flicker(x, fs, no_period)
    assert result.whole_periods == 0
    assert result.percent_flicker[2] == pytest.approx(20.0, abs=0.5)  # analytic: m = 0.2


def test_cutoff_above_nyquist_is_flagged():
    fs = 1500.0
    t = np.arange(1500) / fs
    x = 1 + 0.2 * np.cos(2 * np.pi * 120 * t)
    with pytest.warns(CaptureWarning, match="Nyquist"):
        result = filtered_percent_flicker(x, fs)
    # analytic 20 %; 12.5 samples per period miss the crest by up to 1 - cos(pi / 12.5)
    assert result.percent_flicker[-1] == pytest.approx(20.0, abs=20 * (1 - np.cos(np.pi / 12.5)))


def test_max_samples_limits_the_span_to_whole_periods():
    # analytic: 1 + 0.2 cos at 120 Hz gives 20 % whatever the span; the span is whole periods
    fs = 24_000.0
    t = np.arange(240_000) / fs
    x = 1 + 0.2 * np.cos(2 * np.pi * 120 * t)
    period = Periodicity(120.0, 200.0, 1200, 1.0)
    result = filtered_percent_flicker(x, fs, period, max_samples=30_050)
    assert result.n_samples <= 30_050 and result.n_samples % 200 == 0
    assert result.duration_s == pytest.approx(result.n_samples / fs)
    assert result.percent_flicker[2] == pytest.approx(20.0, abs=1e-9)
