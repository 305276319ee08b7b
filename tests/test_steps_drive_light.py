"""A drive description's mean light against the table's light column (steps, drive path)."""

import json
import subprocess
import sys

import numpy as np
import pytest

from flickerkit.curves import lightness
from flickerkit.drive import Drive, Edges
from flickerkit.steps import build_table


def test_off_level_light_warned_with_closed_form():
    # analogue: a PWM light with floor a has mean a + (1 - a) D relative to full on (1);
    # a = 0.05, 10-bit counter, step 0 is count 0 -> light a, L* of 5 % = 26.7 (CIE 1976)
    drive = Drive(frequency_hz=1234.56, off_level=0.05)
    t = build_table(8, bits=10, drive=drive)
    d = t.counts / 1023
    expect = np.where(t.counts > 0, 0.05 + 0.95 * d, 0.05)
    np.testing.assert_allclose(t.flicker.model_light, expect, rtol=1e-9, atol=1e-12)
    s = t.summary()["drive_light"]
    worst = np.max(np.abs(lightness(expect) - lightness(d)))
    assert s["largest_lightness_difference"] == pytest.approx(worst, rel=1e-9)
    assert worst > 20  # step 0: 0 vs 26.7 L*
    assert "count / TOP" in s["warning"] and "--calibration" in s["warning"]


def test_delay_darkens_lowest_step_named():
    # analogue: a turn-on delay of 10 us at 1234.56 Hz swallows pulses shorter than
    # 1.2346 % duty; count 1 of 1023 (0.098 %) gives no light
    drive = Drive(frequency_hz=1234.56, turn_on_delay_s=10e-6)
    t = build_table(40, bits=10, drive=drive)
    s = t.summary()["drive_light"]
    lit = np.flatnonzero((t.counts > 0) & (t.counts / 1023 <= 10e-6 * 1234.56))
    assert lit.size and s["model_dark_steps"] == [int(k) for k in lit]
    assert "dark in the model" in s["warning"]


def test_ideal_edges_give_no_warning():
    # analogue: ideal edges and no floor make mean light = duty exactly
    t = build_table(16, bits=12, drive=Drive(frequency_hz=1500.0,
                                             edges=Edges("linear", 1e-8, 1e-8)))
    s = t.summary()["drive_light"]
    assert s["largest_lightness_difference"] < 0.1 and "warning" not in s


def test_cli_prints_the_warning_and_json_carries_the_column():
    cmd = [sys.executable, "-m", "flickerkit", "steps", "-n", "8", "--bits", "10",
           "--pwm-frequency", "1234.56", "--off-level", "0.05", "-q"]
    out = subprocess.run(cmd, capture_output=True, text=True, check=True).stdout
    assert "warning: the light, L*, dL* and visible columns assume light = count / TOP" in out
    js = json.loads(subprocess.run(cmd + ["--format", "json"], capture_output=True, text=True,
                                   check=True).stdout)
    assert js["steps"][0]["model_light"] == pytest.approx(0.05)
    assert "warning" in js["summary"]["drive_light"]


def test_header_and_workbook_carry_the_warning(tmp_path):
    import openpyxl

    cmd = [sys.executable, "-m", "flickerkit", "steps", "-n", "8", "--bits", "10",
           "--pwm-frequency", "1234.56", "--off-level", "0.05", "-q"]
    h = subprocess.run(cmd + ["--format", "c"], capture_output=True, text=True, check=True).stdout
    assert " * WARNING: the light, L*, dL* and visible columns assume" in h
    book = tmp_path / "t.xlsx"
    subprocess.run(cmd + ["--xlsx", str(book)], capture_output=True, text=True, check=True)
    ws = openpyxl.load_workbook(book)["Summary"]
    labels = {ws.cell(row=r, column=1).value: ws.cell(row=r, column=2).value
              for r in range(1, ws.max_row + 1)}
    assert "count / TOP" in labels["Warning"]


def test_workbook_shows_settings_unrounded_and_no_unwrapped_long_line(tmp_path):
    import openpyxl

    book = tmp_path / "t.xlsx"
    subprocess.run([sys.executable, "-m", "flickerkit", "steps", "-n", "8", "--bits", "10",
                    "--pwm-frequency", "1234.56", "-q", "--xlsx", str(book)],
                   capture_output=True, text=True, check=True)
    ws = openpyxl.load_workbook(book)["Summary"]
    for r in range(1, ws.max_row + 1):
        a, b = ws.cell(row=r, column=1), ws.cell(row=r, column=2)
        if a.value in ("PWM frequency [Hz]", "Flicker: pwm frequency hz"):
            assert b.value == 1234.56 and b.number_format == "General"
        if isinstance(b.value, str) and len(b.value) > 60:
            assert b.alignment.wrap_text, a.value
