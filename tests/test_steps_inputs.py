"""Brightness-table inputs: the project's [steps] table and calibration tables (issue 15)."""

from __future__ import annotations

import json

import numpy as np
import pytest

from flickerkit.cli import main
from flickerkit.errors import InputError, SettingsError
from flickerkit.project import load_project
from flickerkit.report import build_report
from flickerkit.steps import read_transfer_csv

# An invented product: a modelled 1234.56 Hz PWM downlight, with a brightness table request.
PROJECT = """\
[product]
name = "invented test downlight"
[drive]
method = "pwm"
frequency_hz = 1234.56
levels = [100, 50]
[criteria]
apply = ["ieee1789-low-risk"]
[steps]
steps = 40
bits = 8
"""


def _table(tmp_path, extra: str):
    p = tmp_path / "proj.toml"
    p.write_text(PROJECT + extra)
    return build_report(load_project(p), workers=1).steps


def _cli_steps(capsys, *argv: str) -> dict:
    assert main(["steps", "-n", "40", "--bits", "8", "--format", "json", *argv]) == 0
    return json.loads(capsys.readouterr().out)


def test_project_visible_step_is_used(tmp_path, capsys):
    table = _table(tmp_path, "visible_step = 0.8\n").summary()
    assert table["visible_step"] == 0.8 and table["visible_step_source"] == "set by the user"
    # the same request on the command line gives the same visible steps (a project's table
    # has an off step unless `off = false`; the command line adds one with --off)
    cli = _cli_steps(capsys, "--visible-step", "0.8", "--off")["summary"]
    assert table["visible_steps"] == cli["visible_steps"]
    # and the threshold matters for this table: the default (2.3 L*) flags fewer steps
    default = _table(tmp_path, "").summary()
    assert len(default["visible_steps"]) < len(table["visible_steps"])


@pytest.mark.parametrize("value", ["0", "-1", '"big"'])
def test_project_bad_visible_step_is_refused(tmp_path, value):
    with pytest.raises(SettingsError, match=r"proj.toml \[steps\]"):
        _table(tmp_path, f"visible_step = {value}\n")


# An invented calibration of a 10-bit counter: dead zone to count 50, then a soft knee.
ROWS = [(0, 0.0), (50, 0.0), (100, 0.05), (400, 0.31), (700, 0.62), (1023, 1.0)]


def _write(path, sep: str, dec: str, header: str = "count{sep}light") -> None:
    lines = [header.format(sep=sep)] if header else []
    lines += [f"{c}{sep}{str(y).replace('.', dec)}" for c, y in ROWS]
    path.write_text("\n".join(lines) + "\n")


@pytest.mark.parametrize("sep, dec", [(";", ","), ("\t", ","), (" ", "."), (",", ".")])
def test_calibration_reads_like_a_capture_table(tmp_path, capsys, sep, dec):
    # the example: 100;0,12 (semicolon separator, decimal comma) as measure reads it
    plain = tmp_path / "plain.csv"
    _write(plain, ",", ".")
    other = tmp_path / "other.csv"
    _write(other, sep, dec, header="# invented calibration\ncount{sep}light")
    a = read_transfer_csv(plain, top=1023)
    b = read_transfer_csv(other, top=1023)
    np.testing.assert_array_equal(a.counts, b.counts)
    np.testing.assert_array_equal(a.light, b.light)
    np.testing.assert_array_equal(b.counts, [c for c, _ in ROWS])
    assert _cli_steps(capsys, "--bits", "10", "--calibration", str(other))["steps"] == \
        _cli_steps(capsys, "--bits", "10", "--calibration", str(plain))["steps"]


@pytest.mark.parametrize("text, match", [
    ("count;light\n0;0\n100;0,12\n400;x\n1023;1\n", r"line 4, column light: cell 'x' is not"),
    ("count,light,sd\n0,0,0\n100,0.1,0.01\n1023,1,0.01\n", "more than two columns"),
    ("count\n0\n1023\n", "column 2 does not exist"),
])
def test_bad_calibration_is_one_line(tmp_path, capsys, text, match):
    cal = tmp_path / "cal.csv"
    cal.write_text(text)
    with pytest.raises(InputError, match=match):
        read_transfer_csv(cal, top=1023)
    code = main(["steps", "-n", "16", "--bits", "10", "--calibration", str(cal)])
    err = capsys.readouterr().err
    assert code == 1 and err.count("\n") == 1 and "cal.csv" in err
