"""Brightness tables: quantisation, step judgement, bits needed, calibration."""

from __future__ import annotations

import csv
import itertools
import json
import tomllib
from pathlib import Path

import numpy as np
import pytest
from hypothesis import given, settings
from hypothesis import strategies as st

from flickerkit.capture import make_capture
from flickerkit.curves import lightness
from flickerkit.errors import InputError, SettingsError
from flickerkit.steps import (
    DEFAULT_VISIBLE_STEP,
    build_table,
    fit_transfer,
    isotonic,
    make_counter,
    quantise,
    read_transfer_csv,
    step_changes,
    transfer_from_captures,
)

REFERENCE = Path(__file__).resolve().parent.parent / "reference"
LSTAR = tomllib.loads((REFERENCE / "lstar_64_steps.toml").read_text())

#: reference/lstar_64_steps.toml prints L* figures to 3 decimals (max error) or 2 (step range).
PRINTED_3_DECIMALS = 5e-4
PRINTED_2_DECIMALS = 5e-3
#: Besides the L* of one count (quantisation, computed in the test), a calibrated step may
#: miss the even step by the fit's error at the dead-zone knee: PCHIP puts zero slope at the
#: last dark point. With 40 geometric points on the invented product this is < 0.02 L*.
KNEE_FIT_TOL = 0.05
#: Photometer noise of the noisy case, fraction of full light (invented).
NOISE_FRACTION = 5e-4
#: The fitted transfer follows the invented product within this much light
#: between 25 measured points (PCHIP between smooth points; fraction of full light).
TRANSFER_FIT_TOL = 0.004


def table_ref(bits):
    return next(t for t in LSTAR["table"] if t["bits"] == bits)


# ----------------------------------------------------------------------------- 64-step L* tables


@pytest.mark.parametrize("bits", [8, 12])
def test_64_step_lstar_counts_match_the_computed_table(bits):
    ref = table_ref(bits)
    t = build_table(64, "cie1976", bits=bits, rounding="nearest")
    assert t.counts.tolist() == ref["counts"]  # computed: CIE 15:2004 inverse L*, round(Y TOP)
    s = t.summary()
    assert s["distinct_counts"] == ref["distinct_counts"]
    assert s["steps_lost"] == ref["steps_lost"]
    assert len(s["lit_steps_dark"]) == ref["lit_steps_dark"]
    assert s["monotonic_from_step"] == ref["monotonic_from_step"]


@pytest.mark.parametrize("bits", [8, 10, 12, 14, 16])
def test_64_step_lstar_figures_match_the_computed_table(bits):
    ref = table_ref(bits)
    t = build_table(64, "cie1976", bits=bits, rounding="nearest")
    s = t.summary()
    assert s["steps_lost"] == ref["steps_lost"]
    assert s["max_lightness_error"]["value"] == pytest.approx(ref["max_lightness_error"],
                                                              abs=PRINTED_3_DECIMALS)
    d = t.delta_lightness[1:]
    assert d.max() == pytest.approx(ref["max_delta_lightness"], abs=PRINTED_2_DECIMALS + (
        0.006 if bits == 12 else 0))  # the file keeps 1.77 where its own counts give 1.7647
    if "min_delta_lightness" in ref:
        assert d.min() == pytest.approx(ref["min_delta_lightness"], abs=PRINTED_2_DECIMALS)


def test_8_bit_lstar_table_reports_what_fails():
    s = build_table(64, bits=8, rounding="nearest").summary()
    assert s["collapsed_steps"] == [1, 3, 5, 7, 10]   # read off the computed 8-bit counts
    assert s["lit_steps_dark"] == [1]                 # computed: step 1 -> count 0
    assert s["lowest_lit"]["step"] == 2 and s["lowest_lit"]["count"] == 1
    # analytic: count 1 of 255 is 0.392 % of light, L* = 903.3 * 1/255 = 3.54 (CIE 15:2004)
    assert s["largest_jump"]["delta_lightness"] == pytest.approx(24389 / 27 / 255, rel=1e-12)
    assert s["largest_jump"]["step"] == 2
    assert s["bits_needed"] == 10  # computed: 10 bits is the first without lost steps


@pytest.mark.parametrize("other", LSTAR["other"], ids=lambda o: f"{o['curve']}{o.get('gamma', '')}")
def test_other_64_step_curves_lose_the_computed_steps(other):
    params = {"gamma": other["gamma"]} if "gamma" in other else {}
    lost = [build_table(64, other["curve"], bits=b, off_step=other["off_step"], rounding="nearest",
                        curve_params=params).summary()["steps_lost"] for b in (8, 10, 12, 16)]
    assert lost == other["steps_lost"]  # computed from each curve's formula
    if "lit_steps_dark_8bit" in other:
        s = build_table(64, other["curve"], bits=8, off_step=other["off_step"],
                        rounding="nearest", curve_params=params).summary()
        assert len(s["lit_steps_dark"]) == other["lit_steps_dark_8bit"]


@pytest.mark.parametrize("ref", LSTAR["dali"], ids=lambda r: f"{r['bits']}bit")
def test_iec62386_levels_onto_counters(ref):
    t = build_table(255, "iec62386", off_step=True, bits=ref["bits"], rounding="nearest")
    levels = t.counts[1:]  # arc power levels 1..254
    assert np.unique(levels).size == ref["distinct_counts"]  # computed: IEC 62386-102 curve
    assert int(np.sum(levels == 0)) == ref["levels_to_zero"]
    rising = np.flatnonzero(np.diff(levels) <= 0)
    first = int(rising[-1] + 2) if rising.size else 1  # level number
    assert first == ref["monotonic_from_level"]


def test_unquantised_weber_ratios_match_the_computed_table():
    with open(REFERENCE / "weber_64_steps.csv", newline="") as fh:
        rows = list(csv.DictReader(fh))
    for row in rows:
        params = {"gamma": float(row["gamma"])} if row["gamma"] else {}
        t = build_table(64, row["curve"], off_step=row["off_step"] == "true", bits=16,
                        curve_params=params)
        _, w = step_changes(t.target_light, lightness(t.target_light))
        k = int(row["step"])  # the file's step k -> k+1
        tol = 0.5 * 10.0 ** -int(row["decimals"])
        assert 100 * w[k + 1] == pytest.approx(float(row["weber_percent"]), abs=tol), row


def test_weber_in_the_linear_part_of_lstar_is_one_over_k():
    t = build_table(64, bits=16)
    _, w = step_changes(t.target_light, t.target_lightness)
    k = np.arange(1, 5)  # L*_k = 100 k/63 < 8 for k <= 5: Y proportional to L* (CIE 15:2004)
    np.testing.assert_allclose(w[k + 1], 1 / k, rtol=1e-9)


# ----------------------------------------------------------------------------- rounding


def test_distinct_rounding_is_optimal_by_exhaustive_search():
    rng = np.random.default_rng(5)
    counter = make_counter(top=40, min_count=3)
    for _ in range(40):
        y = np.sort(rng.uniform(0, 0.25, size=rng.integers(3, 10)))
        got = quantise(y, counter)
        c = y * counter.top
        lo = np.where((np.floor(c) > 0) & (np.floor(c) < 3), 0, np.floor(c))
        hi = np.where((np.ceil(c) > 0) & (np.ceil(c) < 3), 3, np.ceil(c))
        best = None
        for pick in itertools.product((0, 1), repeat=y.size):
            s = np.where(np.array(pick) == 1, hi, lo)
            if np.any(np.diff(s) < 0):
                continue
            key = (int(np.sum(np.diff(s) == 0)), float(np.sum((s / 40 - y) ** 2)))
            best = key if best is None or key < best else best
        mine = (int(np.sum(np.diff(got) == 0)), float(np.sum((got / 40 - y) ** 2)))
        assert mine[0] == best[0]  # exhaustive search: fewest repeated counts
        assert mine[1] == pytest.approx(best[1], rel=1e-12, abs=1e-15)


def test_distinct_never_repeats_more_than_nearest():
    for bits in (6, 8, 10):
        for n in (16, 64, 200):
            if n > 2**bits:
                continue
            a = build_table(n, bits=bits, rounding="nearest").summary()["steps_lost"]
            b = build_table(n, bits=bits).summary()["steps_lost"]
            assert b <= a


def test_distinct_separates_steps_one_count_apart_that_nearest_merges():
    counter = make_counter(top=100)
    y = np.array([0.0, 0.014, 0.026, 0.05])  # ideal counts 0, 1.4, 2.6, 5
    assert quantise(y, counter, rounding="nearest").tolist() == [0, 1, 3, 5]
    y = np.array([0.0, 0.0149, 0.0151, 0.05])  # 1.49 and 1.51: nearest gives 1 and 2 anyway
    assert quantise(y, counter, rounding="nearest").tolist() == [0, 1, 2, 5]
    y = np.array([0.0, 0.012, 0.014, 0.05])  # 1.2, 1.4: nearest 1, 1; distinct 1, 2
    assert quantise(y, counter, rounding="nearest").tolist() == [0, 1, 1, 5]
    assert quantise(y, counter).tolist() == [0, 1, 2, 5]


def test_minimum_on_count_is_respected():
    t = build_table(32, bits=10, min_count=12)
    lit = t.counts[t.counts > 0]
    assert lit.min() >= 12
    assert t.summary()["lowest_lit"]["count"] == 12


def test_bits_needed_is_enough_and_tight():
    for curve, params, n in (("cie1976", {}, 64), ("gamma", {"gamma": 2.2}, 64),
                             ("iec62386", {}, 100)):
        b = build_table(n, curve, bits=16, curve_params=params).bits_needed
        at = build_table(n, curve, bits=b, rounding="nearest", curve_params=params).summary()
        assert at["steps_lost"] == 0  # the claim of bits_for: enough for nearest rounding
        below = build_table(n, curve, bits=b - 1, rounding="nearest", curve_params=params)
        ideal = below.target_light * below.counter.top
        assert np.min(np.diff(np.concatenate(([0], ideal)))[1:]) < 1  # one bit less: < 1 count


# ----------------------------------------------------------------------------- judgement


def test_default_visibility_threshold_is_colour_sciences_jnd():
    from flickerkit import curves

    colour = curves._colour()
    assert DEFAULT_VISIBLE_STEP == colour.difference.JND_CIE1976  # Mahy et al. 1994 via colour
    t = build_table(64, bits=8, rounding="nearest")
    np.testing.assert_array_equal(t.visible, np.nan_to_num(t.delta_lightness) > 2.3)
    t1 = build_table(64, bits=8, rounding="nearest", visible_step=1.0)
    assert t1.visible.sum() > t.visible.sum()
    assert t1.summary()["visible_step_source"] == "set by the user"


def test_per_step_values_are_consistent():
    t = build_table(20, "gamma", bits=10, curve_params={"gamma": 2.0})
    np.testing.assert_array_equal(t.duty, t.counts / 1023)
    np.testing.assert_array_equal(t.relative_light, t.duty)  # no calibration: light = duty
    np.testing.assert_allclose(t.lightness, lightness(t.duty), rtol=0, atol=1e-12)
    np.testing.assert_allclose(t.delta_lightness[1:], np.diff(t.lightness), rtol=0, atol=1e-12)
    assert np.isnan(t.delta_lightness[0]) and np.isnan(t.weber[0])
    assert np.isinf(t.weber[1])  # from the off step (count 0)


def test_json_has_steps_and_summary():
    d = build_table(16, bits=8).to_dict()
    text = json.dumps(d, allow_nan=False)
    back = json.loads(text)
    assert set(back) == {"steps", "summary"}
    assert len(back["steps"]) == 16
    assert {"count", "relative_light", "lightness", "delta_lightness", "weber",
            "visible", "duty"} <= set(back["steps"][0])
    assert back["steps"][1]["weber"] is None  # inf after the off step is written as null


@pytest.mark.parametrize("kwargs, match", [
    (dict(n_steps=1, bits=8), "at least 2"),
    (dict(n_steps=257, bits=8), "at most 256"),
    (dict(n_steps=250, bits=8, min_count=10), "at most 247"),
    (dict(n_steps=10, bits=8, min_level=0.5, max_level=0.2), "below the maximum"),
    (dict(n_steps=10), "bits or as TOP"),
    (dict(n_steps=10, bits=8, top=255), "bits or as TOP"),
    (dict(n_steps=10, bits=40), "1 to 32"),
    (dict(n_steps=10, top=0), "TOP must be"),
    (dict(n_steps=10, bits=8, min_count=300), "minimum on-count"),
    (dict(n_steps=10, bits=8, visible_step=0), "positive"),
    (dict(n_steps=10, bits=8, rounding="up"), "distinct, nearest"),
    (dict(n_steps=10, curve="spline", bits=8), "choose one of"),
])
def test_bad_settings(kwargs, match):
    with pytest.raises(SettingsError, match=match):
        build_table(**kwargs)


# ----------------------------------------------------------------------------- properties


@settings(max_examples=60, deadline=None)
@given(
    n=st.integers(2, 300),
    bits=st.integers(4, 16),
    curve=st.sampled_from(["cie1976", "gamma", "iec62386", "linear"]),
    gamma=st.floats(0.5, 4.0),
    off=st.booleans(),
    lo=st.floats(0.0, 0.3),
    span=st.floats(0.05, 0.7),
    min_count=st.integers(0, 5),
    rounding=st.sampled_from(["distinct", "nearest"]),
)
def test_table_properties(n, bits, curve, gamma, off, lo, span, min_count, rounding):
    counter = make_counter(bits=bits, min_count=min_count)
    if n > counter.levels:
        with pytest.raises(SettingsError, match="do not fit"):
            build_table(n, bits=bits, min_count=min_count)
        return
    if curve == "iec62386":
        lo = max(lo, 1e-3)
    if n < 3 and off:
        off = False
    hi = min(1.0, lo + span)
    params = {"gamma": gamma} if curve == "gamma" else {}
    t = build_table(n, curve, bits=bits, min_level=lo, max_level=hi, off_step=off,
                    min_count=min_count, rounding=rounding, curve_params=params)
    c = t.counts
    assert c.size == n
    assert np.all(np.diff(c) >= 0)                              # monotonic
    assert c.min() >= 0 and c.max() <= counter.top              # within range
    assert np.all((c == 0) | (c >= counter.lowest_lit))         # driver's minimum on-count
    assert np.all(np.diff(t.target_light) >= 0)
    assert t.target_light[-1] == hi and t.target_light[1 if off else 0] == lo  # endpoints
    if off:
        assert c[0] == 0
    # the top step takes a usable count next to its ideal one (below or above it)
    top_ideal = hi * counter.top
    usable = np.concatenate(([0], np.arange(counter.lowest_lit, counter.top + 1)))
    below, above = usable[usable <= top_ideal + 1e-9].max(), usable[usable >= top_ideal - 1e-9]
    assert c[-1] in (below, above.min() if above.size else below)
    assert np.all(t.lightness >= 0) and np.all(t.lightness <= 100 + 1e-9)


# ----------------------------------------------------------------------------- calibration


def invented_product(counts, top=4095, dead=180):
    """Invented LED product: dead zone below count 180, light ~ (c - 180)^1.35 above it
    (driver delay eating the narrow pulses, efficacy changing with drive)."""
    c = np.asarray(counts, dtype=float)
    x = np.clip((c - dead) / (top - dead), 0, 1)
    return 0.8 * x**1.35 + 0.2 * x  # arbitrary units, monotone


def measured(top=4095, n=40, noise=0.0, seed=1):
    counts = np.unique(np.round(np.geomspace(1, top, n))).astype(int)
    counts[-1] = top
    rng = np.random.default_rng(seed)
    light = invented_product(counts, top) * 3.7 + noise * rng.standard_normal(counts.size)
    return counts, light


def test_isotonic_regression():
    np.testing.assert_allclose(isotonic([1, 3, 2, 4]), [1, 2.5, 2.5, 4])  # analytic PAVA
    y = np.random.default_rng(0).normal(size=50).cumsum() * 0.1 + np.arange(50) * 0.05
    f = isotonic(y)
    assert np.all(np.diff(f) >= -1e-15)
    assert f.mean() == pytest.approx(y.mean(), rel=1e-12)  # PAVA keeps block means


def test_fitted_transfer_follows_the_product():
    counts, light = measured()
    tr = fit_transfer(counts, light, top=4095)
    grid = np.arange(0, 4096, 7)
    assert np.all(np.diff(tr.relative_light(np.arange(4096))) >= 0)  # monotone fit
    np.testing.assert_allclose(tr.relative_light(grid), invented_product(grid),
                               atol=TRANSFER_FIT_TOL)
    assert tr.added_zero  # measured from count 1: (0, 0) added


def test_calibration_makes_a_dead_zone_product_even():
    counts, light = measured()
    tr = fit_transfer(counts, light, top=4095)
    t = build_table(32, bits=12, transfer=tr)
    ideal = 100 / 31  # analytic: 32 steps even in L* from 0 to 100
    # judge with the invented product itself, not with the fit
    c = t.counts.astype(float)
    true_L = lightness(invented_product(c))
    one_count = np.max(lightness(invented_product(c + 1))[1:] - true_L[1:])
    np.testing.assert_allclose(np.diff(true_L), ideal, atol=one_count + KNEE_FIT_TOL)
    # without calibration the same table is far from even on this product
    un_L = lightness(invented_product(t.uncalibrated_counts))
    assert np.sum(un_L[1:] == 0) >= 5  # analytic: counts below 180 give no light
    assert np.max(np.abs(np.diff(un_L) - ideal)) > 0.9 * ideal
    s = t.summary()["calibration"]
    assert s["uncalibrated_dark_steps"] >= 1
    assert s["calibrated_largest_jump"] < s["uncalibrated_largest_jump"]
    assert s["dead_zone_to_count"] == counts[counts <= 180].max()  # last measured dark count
    assert t.summary()["lit_steps_dark"] == []


def test_calibration_with_noisy_light_is_even_within_the_noise():
    counts, light = measured(noise=NOISE_FRACTION * 3.7)
    t = build_table(32, bits=12, transfer=fit_transfer(counts, light, top=4095))
    c = t.counts.astype(float)
    true_L = lightness(invented_product(c))
    # analytic: near black L* = 903.3 Y, so a light error of 3 sigma on either end of a step
    # moves it by up to 2 * 3 * 903.3 * sigma in L*
    tol = 2 * 3 * (24389 / 27) * NOISE_FRACTION + KNEE_FIT_TOL
    np.testing.assert_allclose(np.diff(true_L), 100 / 31, atol=tol)


def test_calibration_from_csv_and_from_captures(tmp_path):
    counts, light = measured()
    f = tmp_path / "cal.csv"
    f.write_text("count,light\n" + "".join(f"{c},{v}\n" for c, v in zip(counts, light)))
    a = build_table(24, bits=12, transfer=read_transfer_csv(f, top=4095))
    caps = [make_capture(np.full(64, v) + 0.01 * np.sin(np.arange(64)), 1e5) for v in light]
    b = build_table(24, bits=12, transfer=transfer_from_captures(list(counts)[::-1], caps[::-1],
                                                                   top=4095))
    np.testing.assert_array_equal(a.counts, b.counts)  # the means of the captures are the light


@pytest.mark.parametrize("rows, match", [
    ("count,light\n4095,1\n", "at least 2"),
    ("0,0\n100,0.2\n50,0.3\n4095,1\n", "not strictly increasing"),
    ("0,0\n100,0.5\n200,0.2\n4095,1\n", "not monotonic"),
    ("0,0\n100,0.5\n2000,0.9\n", "full scale"),
    ("0,0\n4095,0\n", "no light"),
    ("0,0\n5000,1\n", "0..TOP"),
])
def test_bad_calibration_files(tmp_path, rows, match):
    f = tmp_path / "cal.csv"
    f.write_text(rows)
    with pytest.raises(InputError, match=match):
        read_transfer_csv(f, top=4095)


def test_small_dips_are_noise():
    tr = fit_transfer([0, 100, 200, 4095], [0, 0.3, 0.295, 1.0], top=4095)
    assert tr.fitted[1] == tr.fitted[2] == pytest.approx(0.2975)  # PAVA pools the dip
