"""Dimming levels: a fraction inside, percent at the edges, and back without a last-bit error."""

import pytest

from flickerkit.drive import Drive
from flickerkit.levels import fraction, percent
from flickerkit.sweep import sweep


@pytest.mark.parametrize("given", [7.0, 14.0, 29.0, 57.0, 0.1, 1.2345, 100.0])
def test_a_percent_comes_back_as_given(given):
    # 7 / 100 * 100 is 7.000000000000001 in binary floating point (IEEE 754 double, computed)
    assert percent(fraction(given)) == given


def test_percent_keeps_a_level_that_is_not_a_round_trip():
    # a log-spaced plan level keeps every digit (numpy.geomspace(0.001, 1, 25)[3], computed)
    x = 0.0023713737056616554
    assert percent(x) == 100.0 * x
    assert percent(None) is None


def test_drive_json_levels_are_the_percent_given():
    # a sweep of 1234.56 Hz PWM at 7 % and 29 % (invented levels): its JSON says 7 and 29,
    # its rows keep the fractions
    res = sweep(Drive(frequency_hz=1234.56), [fraction(7.0), fraction(29.0)])
    assert [r.level for r in res.rows] == [0.07, 0.29]
    out = res.to_dict()
    assert [r["level"] for r in out["levels"]] == [7.0, 29.0]
    assert out["first_failing_level"]["ieee1789-low-risk"] == 29.0  # full-depth PWM, 98.8 % line
