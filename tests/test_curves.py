"""Dimming curves: CIE 1976 L*, power law, IEC 62386-102 log curve, linear, user points."""

from __future__ import annotations

import csv
from pathlib import Path

import numpy as np
import pytest

from flickerkit import curves
from flickerkit.curves import (
    CURVES,
    curve_levels,
    get_curve,
    iec62386_level_light,
    lightness,
    luminance,
    read_curve_csv,
)
from flickerkit.errors import InputError, SettingsError

REFERENCE = Path(__file__).resolve().parent.parent / "reference"

#: colour-science against the closed form: both are double-precision evaluations of the
#: same formula (measured with colour-science 0.4.7: they agree within 1.5e-14).
CLOSED_FORM_TOL = 1e-12
#: reference/cie1976_lightness.csv prints L* to 6 decimals.
PRINTED_LSTAR_TOL = 5e-7
#: ... and relative light to 6 decimals of a percent.
PRINTED_Y_PERCENT_TOL = 5e-7

EPS = 216 / 24389    # (6/29)^3, CIE 15:2004 (exact rational)
KAPPA = 24389 / 27   # (29/3)^3, CIE 15:2004


def closed_form_lightness(t):
    """CIE 1976 L* written out independently of colour-science (CIE 15:2004)."""
    t = np.asarray(t, dtype=float)
    return np.where(t > EPS, 116 * np.cbrt(t) - 16, KAPPA * t)


def closed_form_luminance(L):
    L = np.asarray(L, dtype=float)
    return np.where(L > 8, ((L + 16) / 116) ** 3, L / KAPPA)


def read_csv(name):
    with open(REFERENCE / name, newline="") as fh:
        return list(csv.DictReader(fh))


# ----------------------------------------------------------------------------- CIE 1976


def test_lightness_matches_colour_science_and_closed_form():
    colour = curves._colour()
    y = np.concatenate(([0.0], np.geomspace(1e-6, 1.0, 400), [EPS, EPS * (1 + 1e-9)]))
    ours = lightness(y)
    # cross-check with a general library: colour.lightness on the 0-100 scale
    lib = colour.lightness(100 * y, method="CIE 1976")
    np.testing.assert_allclose(ours, lib, rtol=0, atol=CLOSED_FORM_TOL)
    # analytic: the closed form with the exact constants 216/24389 and 24389/27
    np.testing.assert_allclose(ours, closed_form_lightness(y), rtol=0, atol=CLOSED_FORM_TOL)


def test_luminance_matches_colour_science_and_closed_form():
    colour = curves._colour()
    L = np.concatenate((np.linspace(0, 100, 1001), [8.0, 8.0 + 1e-9]))
    ours = luminance(L)
    np.testing.assert_allclose(ours, colour.luminance(L, method="CIE 1976") / 100,
                               rtol=0, atol=CLOSED_FORM_TOL)
    np.testing.assert_allclose(ours, closed_form_luminance(L), rtol=0, atol=CLOSED_FORM_TOL)
    np.testing.assert_allclose(lightness(ours), L, rtol=0, atol=1e-11)  # analytic: inverse


def test_exact_constants_make_the_joint_continuous():
    # analytic: with 216/24389 and 24389/27 both branches give exactly 8 at the joint
    assert KAPPA * EPS == pytest.approx(8.0, abs=1e-13)
    assert 116 * np.cbrt(EPS) - 16 == pytest.approx(8.0, abs=1e-13)
    assert float(lightness(EPS)) == pytest.approx(8.0, abs=1e-12)


def test_lightness_and_inverse_match_reference_values():
    for row in read_csv("cie1976_lightness.csv"):
        y = float(row["relative_light_percent"]) / 100
        L = float(row["lightness"])
        # the printed input is rounded too: carry its half-digit through the slope
        h = 1e-9
        if "inverse" in row["source"]:
            slope = abs(100 * float(luminance(L + h) - luminance(L - h)) / (2 * h))
            tol = PRINTED_Y_PERCENT_TOL + slope * PRINTED_LSTAR_TOL
            assert 100 * float(luminance(L)) == pytest.approx(100 * y, abs=tol), row
        else:
            slope = abs(float(lightness(y + h) - lightness(y - h)) / (2 * h) / 100)
            tol = PRINTED_LSTAR_TOL + slope * PRINTED_Y_PERCENT_TOL
            assert float(lightness(y)) == pytest.approx(L, abs=tol), row


def test_colour_import_leaves_numpy_print_options_alone():
    before = np.get_printoptions()
    curves._colour()
    assert np.get_printoptions()["legacy"] == before["legacy"]  # colour would set "1.13"


def test_lightness_keeps_shape():
    assert lightness(np.zeros((3, 4))).shape == (3, 4)
    assert luminance(np.full((2,), 100.0)).tolist() == [1.0, 1.0]  # analytic: L* 100 is white


# ----------------------------------------------------------------------------- IEC 62386


def test_iec62386_reference_levels():
    for row in read_csv("iec62386_102.csv"):
        n = int(row["level"])
        tol = 0.5 * 10.0 ** -int(row["decimals"])  # half a unit of the last printed digit
        assert 100 * float(iec62386_level_light(n)) == pytest.approx(
            float(row["light_percent"]), abs=tol), row


def test_iec62386_step_ratio_and_off():
    x = iec62386_level_light(np.arange(1, 255))
    # analytic: constant ratio 10^(3/253) = 1.027680 per level (IEC 62386-102 logarithmic curve)
    np.testing.assert_allclose(x[1:] / x[:-1], 10 ** (3 / 253), rtol=1e-12)
    assert float(iec62386_level_light(0)) == 0.0  # IEC 62386-102: level 0 is off
    with pytest.raises(SettingsError, match="0 \\(off\\) to 254"):
        iec62386_level_light(255)


def test_log_table_with_off_step_is_the_iec_curve():
    y = curve_levels(255, "iec62386", off_step=True)
    np.testing.assert_allclose(y[1:], iec62386_level_light(np.arange(1, 255)), rtol=1e-12)
    assert y[0] == 0.0


# ----------------------------------------------------------------------------- other curves


def test_gamma_and_linear_are_their_formulas():
    v = np.linspace(0, 1, 11)
    # analytic: Y = v^gamma for an even table from 0 to 100 %
    np.testing.assert_allclose(curve_levels(11, "gamma", gamma=2.2), v ** 2.2, rtol=1e-13)
    np.testing.assert_allclose(curve_levels(11, "linear"), v, rtol=1e-13, atol=1e-15)
    np.testing.assert_allclose(curve_levels(11, "cie1976"), closed_form_luminance(100 * v),
                               rtol=1e-12, atol=1e-15)


def test_range_is_even_in_the_curve_coordinate():
    y = curve_levels(10, "cie1976", min_level=0.01, max_level=0.5)
    L = closed_form_lightness(y)
    assert y[0] == 0.01 and y[-1] == 0.5
    np.testing.assert_allclose(np.diff(L), np.diff(L)[0], rtol=1e-9)  # analytic: even in L*
    g = curve_levels(5, "iec62386", min_level=0.01, max_level=1.0)
    np.testing.assert_allclose(g, [0.01, 10**-1.5, 0.1, 10**-0.5, 1.0], rtol=1e-12)


def test_off_step_adds_a_zero_below_the_range():
    y = curve_levels(5, "gamma", gamma=2.0, min_level=0.04, off_step=True)
    np.testing.assert_allclose(y, [0, 0.04, (0.2 + 0.8 / 3) ** 2, (0.2 + 1.6 / 3) ** 2, 1.0],
                               rtol=1e-12)  # analytic: sqrt range 0.2..1 in 3 equal parts


def test_user_curve_from_csv_is_monotone_and_through_its_points(tmp_path):
    f = tmp_path / "points.csv"
    f.write_text("input,output\n# invented points\n0,0\n0.3,0.02\n0.5,0.1\n0.6,0.4\n1,2\n")
    cv = read_curve_csv(f)
    x = np.linspace(0, 1, 2001)
    y = cv.to_light(x)
    assert np.all(np.diff(y) >= 0)  # PCHIP (Fritsch-Carlson) preserves monotone data
    np.testing.assert_allclose(cv.to_light(np.array([0, 0.3, 0.5, 0.6, 1])),
                               [0, 0.01, 0.05, 0.2, 1.0], atol=1e-12)  # interpolates, scaled
    np.testing.assert_allclose(cv.to_light(cv.to_coordinate(y)), y, atol=1e-4)
    lv = curve_levels(6, cv)
    assert lv[0] == 0 and lv[-1] == 1 and np.all(np.diff(lv) > 0)


def test_user_curve_matches_scipy_pchip():
    from scipy.interpolate import PchipInterpolator

    xs, ys = np.array([0, 1, 2, 4.0]), np.array([0.1, 0.2, 0.7, 1.0])
    cv = get_curve("user", inputs=xs, outputs=ys)
    t = np.linspace(0, 4, 33)
    np.testing.assert_allclose(cv.to_light(t), PchipInterpolator(xs, ys)(t), rtol=1e-13)
    with pytest.raises(SettingsError, match="leaves the curve's range"):
        curve_levels(4, cv, min_level=0.05)


@pytest.mark.parametrize("rows, match", [
    ("0,0\n", "at least 2"),
    ("0,0\n1,0.5\n0.5,1\n", "input is not strictly increasing"),
    ("0,0\n0.5,0.6\n1,0.5\n", "output is not strictly increasing"),
    ("0,0\n1,x\n", "is not a number"),
])
def test_user_curve_bad_files(tmp_path, rows, match):
    f = tmp_path / "bad.csv"
    f.write_text(rows)
    with pytest.raises(InputError, match=match):
        read_curve_csv(f)


# ----------------------------------------------------------------------------- registry


def test_unknown_method_lists_the_names():
    with pytest.raises(ValueError, match="cie1976, gamma, iec62386, linear, user"):
        get_curve("cubic")
    assert set(CURVES) == {"cie1976", "gamma", "iec62386", "linear", "user"}


def test_unknown_parameter_raises():
    with pytest.raises(SettingsError, match="linear"):
        get_curve("linear", gamma=2)


@pytest.mark.parametrize("kwargs, match", [
    (dict(n_steps=1), "at least 2"),
    (dict(n_steps=2, off_step=True), "at least 3"),
    (dict(n_steps=8, min_level=0.5, max_level=0.5), "must be below the maximum"),
    (dict(n_steps=8, min_level=-0.1), "0..100 %"),
    (dict(n_steps=8, max_level=1.5), "0..100 %"),
    (dict(n_steps=8, method="iec62386", min_level=0.0), "above 0 %"),
    (dict(n_steps=8.5), "whole number"),
    (dict(n_steps=8, method="gamma", gamma=0), "positive"),
])
def test_bad_ranges(kwargs, match):
    with pytest.raises(SettingsError, match=match):
        curve_levels(**kwargs)
