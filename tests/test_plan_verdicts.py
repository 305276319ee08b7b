"""The plan's closing verdict must say only what its own settings table shows."""

import math

from flickerkit.drive import Drive, Edges
from flickerkit.planner import Resolution, parse_targets, plan
from flickerkit.timers import Timer


def test_pulse_limited_verdict_names_the_setting_that_reaches_the_level():
    # timer arithmetic by hand: 170 MHz, 16-bit counter; edge TOP 65535 gives
    # 170e6 / 65536 = 2593.99 Hz with 65536 counts (16 bits); centre at >= 2000.26 Hz gives
    # TOP floor(170e6 / (2 * 2000.26)) = 42494, 170e6 / 84988 = 2000.28 Hz, log2 42494 = 15.37
    # bits. A 0.45 us linear rise is 0.45e-6 * 2593.99 = 0.117 % of the edge period (misses
    # the 0.1 % level) but 0.0900 % of the centre period (makes it, without the 16 bits).
    drive = Drive(edges=Edges("linear", 0.45e-6, 0.0))
    p = plan(drive, parse_targets("svm<=0.4"), timer=Timer(170e6),
             resolution=Resolution(bits=16, min_level=0.001), tolerance=0.0001)
    by_mode = {r.setting.mode: r for r in p.settings}
    assert by_mode["edge"].setting.top == 65535 and by_mode["centre"].setting.top == 42494
    assert math.isclose(by_mode["centre"].setting.frequency_hz, 170e6 / 84988)
    assert by_mode["centre"].reaches_smallest_level and not by_mode["edge"].reaches_smallest_level
    assert p.feasible is False
    # before: "every timer setting ... has the resolution ..., but none makes the smallest level"
    assert "none makes" not in p.verdict and "every timer setting" not in p.verdict
    assert "centre prescaler 1 TOP 42494" in p.verdict and "15.37 bits" in p.verdict


def test_pulse_limited_verdict_when_no_setting_reaches_the_level():
    # 0.5 us: 0.5e-6 * 2000.28 = 0.100014 % > 0.1 %, so neither setting makes the level
    drive = Drive(edges=Edges("linear", 0.5e-6, 0.0))
    p = plan(drive, parse_targets("svm<=0.4"), timer=Timer(170e6),
             resolution=Resolution(bits=16, min_level=0.001), tolerance=0.0001)
    assert not any(r.reaches_smallest_level for r in p.settings)
    assert p.verdict.endswith("no setting makes the smallest level")


def test_phased_channels_warn_that_one_channel_alone_fails(tmp_path):
    import openpyxl

    from flickerkit.export.modelbooks import write_plan_workbook

    # analytic: 3 ideal channels at 0/120/240 deg sum to light repeating at 3 f, so IEEE 1789
    # low-risk (100 % modulation allowed from 1250 Hz, IEEE 1789-2015 Fig. 18) is met from
    # f = 1250 / 3 = 416.67 Hz; one channel alone is 100 % PWM at f, above the 0.08 f % line
    targets = parse_targets("ieee1789-low-risk")
    p = plan(Drive(channels=3), targets, levels=[0.001, 0.1, 1.0])
    assert math.isclose(p.lowest_frequency_hz, 1250 / 3, rel_tol=1e-3)
    assert len(p.warnings) == 1 and "one channel alone" in p.warnings[0]
    assert "fails ieee1789-low-risk" in p.warnings[0]
    assert p.to_dict()["warnings"] == list(p.warnings)
    book = tmp_path / "p.xlsx"
    write_plan_workbook(book, p)
    ws = openpyxl.load_workbook(book)["Plan"]
    assert any(ws.cell(row=r, column=1).value == "Warning" for r in range(1, ws.max_row + 1))
    # one channel: nothing to warn about
    assert plan(Drive(), targets, levels=[0.001, 1.0]).warnings == ()


def test_plan_refuses_fixed_counts_with_a_timer(tmp_path):
    import subprocess
    import sys

    # the drive's 64 counts would quantise the judged light while the settings table lists
    # 12543 counts (16 MHz / 1275.6 Hz, edge): one of the two must go
    r = subprocess.run([sys.executable, "-m", "flickerkit", "plan", "-t", "ieee1789-low-risk",
                        "--clock-mhz", "16", "--counts", "64"], capture_output=True, text=True)
    assert r.returncode != 0 and "Traceback" not in r.stderr
    assert "64 counts per period" in r.stderr and r.stderr.count("\n") == 1
