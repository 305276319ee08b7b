"""IEEE 1789-2015 boundaries (reference/ieee1789_boundaries.csv) and regions."""

import numpy as np
import pytest

from flickerkit import ieee1789

from .conftest import read_reference

ROWS = read_reference("ieee1789_boundaries.csv")
#: reference/ieee1789_boundaries.csv prints the limits to 3-4 significant figures.
REL_TOL = 1e-3


@pytest.mark.parametrize("row", ROWS, ids=lambda r: r["frequency_hz"])
def test_boundary_values(row):
    f = float(row["frequency_hz"])
    assert ieee1789.low_risk_limit_percent(f) == pytest.approx(float(row["low_risk_max_percent"]),
                                                               rel=REL_TOL)
    assert ieee1789.noel_limit_percent(f) == pytest.approx(float(row["noel_max_percent"]),
                                                           rel=REL_TOL)


def test_vectorised_limits_match_scalar():
    f = np.array([float(r["frequency_hz"]) for r in ROWS])
    lr = ieee1789.low_risk_limit_percent(f)
    assert lr.shape == f.shape
    assert all(lr[i] == ieee1789.low_risk_limit_percent(x) for i, x in enumerate(f))


def test_one_point_follows_the_vectorised_rule_at_breaks_and_odd_values():
    # one (frequency, modulation) point takes a path without numpy; it must give what the
    # array form gives on the breaks (90, 1250, 3000 Hz: module notes), either side of them,
    # at zero and negative frequencies and for non-finite values
    f = np.array([-1.0, 0.0, 1.0, 89.999, 90.0, 90.001, 1249.9, 1250.0, 1250.001, 2999.9,
                  3000.0, 3000.001, np.inf, np.nan])
    m = np.array([0.0, 0.5, 2.2, 3.0, 7.2, 8.0, 41.6, 99.0, 100.0, np.nan])
    ff, mm = (a.ravel() for a in np.meshgrid(f, m))
    regions = ieee1789.region_of(ff, mm)
    for fn in (ieee1789.low_risk_limit_percent, ieee1789.noel_limit_percent):
        lim = fn(f)
        for i, x in enumerate(f):
            one = fn(float(x))
            assert isinstance(one, float)
            assert one == lim[i] or (np.isnan(one) and np.isnan(lim[i]))
    assert [ieee1789.region_of(float(a), float(b)) for a, b in zip(ff, mm)] == list(regions)


def test_verdicts_just_inside_and_outside():
    # IEEE 1789 at 100 Hz: low-risk line 8 %, NOEL 3.33 % (IEEE Std 1789-2015 lines, from memory)
    assert ieee1789.classify(100.0, 7.9).region == "low-risk"
    assert ieee1789.classify(100.0, 8.1).region == "above-low-risk"
    assert ieee1789.classify(100.0, 3.3).region == "no-observable-effect"
    # strict comparison: exactly on the line is outside
    assert ieee1789.classify(100.0, 8.0).region == "above-low-risk"
    r = ieee1789.classify(100.0, 7.9)
    assert r.low_risk_margin_percent == pytest.approx(0.1)
    assert r.noel_margin_percent == pytest.approx(3.33 - 7.9)


def test_full_depth_pwm_regions_against_frequency():
    # IEEE Std 1789-2015 lines, recalled from memory: 100 % modulation is low-risk only above
    # 1250 Hz, NOEL only above 3000 Hz
    assert ieee1789.classify(1250.0, 100.0).region == "above-low-risk"
    assert ieee1789.classify(1250.5, 100.0).region == "low-risk"
    assert ieee1789.classify(3000.0, 100.0).region == "low-risk"
    assert ieee1789.classify(3000.5, 100.0).region == "no-observable-effect"


def test_per_harmonic_mode_reports_worst_component():
    # 50 % PWM at 500 Hz: C1 = 4/pi (127 %) fails, the decision is the fundamental
    k = np.arange(1, 8)
    c = 2 * np.abs(np.sin(np.pi * k * 0.5)) / (np.pi * k * 0.5)
    r = ieee1789.classify_components(500.0 * k, c)
    assert r.mode == "per-harmonic"
    assert r.harmonic == 1
    assert r.region == "above-low-risk"
    # a small 3rd harmonic at 300 Hz on a 100 Hz fundamental: both inside NOEL (recalled
    # 0.0333 f: 3.33 % and 10 %); by relative margin (3.33 - 2)/3.33 = 0.40 < (10 - 5)/10 = 0.5
    # the 100 Hz component decides (analytic)
    r = ieee1789.classify_components(np.array([100.0, 300.0]), np.array([0.02, 0.05]))
    assert r.harmonic == 1 and r.frequency_hz == 100.0
    assert r.region == "no-observable-effect"
    with pytest.raises(ValueError):
        ieee1789.classify_components(np.array([]), np.array([]))
