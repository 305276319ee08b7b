"""Quoted cells, digit grouping, one-column tables: read right or refused at their line.

Layouts written for these tests (invented bench exports), never copied from a maker.
"""

from __future__ import annotations

import json

import numpy as np

from flickerkit.cli import main

from .cliutil import one_line_error

FS = 12_345.0
F = 123.4  # Hz, awkward on purpose
M = 0.3    # analytic: a sine of modulation 0.3 gives percent flicker 30 %


def _light(n: int) -> tuple[np.ndarray, np.ndarray]:
    t = np.arange(n) / FS
    return t, 1.0 + M * np.sin(2 * np.pi * F * t)




def test_quoted_decimal_comma_in_a_comma_separated_file(tmp_path, capsys):
    # "0,25","1,5": the comma separates fields and, inside quotes, is the decimal mark.
    # Before: read as four columns and refused without a line ("expected 4 and found 2").
    t, y = _light(6000)
    rows = "\n".join(f'"{a * 1e3:.5f}","{b:.6f}"'.replace(".", ",") for a, b in zip(t, y))
    p = tmp_path / "bench.csv"
    p.write_text('"time (ms)","light (V)"\n' + rows + "\n")
    assert main(["measure", str(p), "--json"]) == 0
    r = json.loads(capsys.readouterr().out)[0]
    assert abs(r["frequency_hz"] - F) < 0.01
    assert abs(r["percent_flicker"] - 100 * M) < 0.1
    assert r["read"]["column"] == "light (V)"


def test_quoted_number_with_thousands_separator_is_refused_at_its_line(tmp_path, capsys):
    # Light in lux with digit grouping ("1,020.02"): before, refused without a line
    # number ("rows do not all have the same number of fields"); and in a semicolon
    # file with decimal comma ("1.020,02") the rows above the first ungrouped one were
    # taken for header lines.
    t, y = _light(3000)
    lux = 800.0 * y  # 560 ... 1040 lux: some rows need grouping
    lines = [f'"{a:.6f}","{b:,.2f}"' for a, b in zip(t, lux)]
    first = next(i for i, b in enumerate(lux) if b >= 1000.0)
    p = tmp_path / "lux.csv"
    p.write_text("time (s),illuminance (lx)\n" + "\n".join(lines) + "\n")
    err = one_line_error(capsys, ["measure", p], "thousands separator")
    assert f"line {first + 2}" in err
    q = tmp_path / "lux_semicolon.csv"
    q.write_text("time (s);illuminance (lx)\n" + "\n".join(
        f'"{a:.6f}";"{b:,.2f}"'.replace(",", "X").replace(".", ",").replace("X", ".")
        for a, b in zip(t, 1250.0 * y)) + "\n")
    one_line_error(capsys, ["measure", q], "line 2:")


def test_a_decimal_comma_with_three_decimals_is_not_grouping(tmp_path, capsys):
    # "1,020" in a semicolon file with decimal comma is 1.02, not one thousand and twenty.
    t, y = _light(4000)
    p = tmp_path / "three_decimals.csv"
    p.write_text("time (s);light (V)\n" + "\n".join(
        f'"{a:.6f}";"{b:.3f}"'.replace(".", ",") for a, b in zip(t, y)) + "\n")
    assert main(["measure", str(p), "--json"]) == 0
    r = json.loads(capsys.readouterr().out)[0]
    assert abs(r["percent_flicker"] - 100 * M) < 0.2
    assert abs(r["mean"] - 1.0) < 1e-3


def test_one_column_is_not_called_tab_separated(tmp_path, capsys):
    _, y = _light(3000)
    p = tmp_path / "one.txt"
    p.write_text("\n".join(f"{b:.6f}" for b in y) + "\n")
    assert main(["measure", str(p), "-r", str(FS), "--peek"]) == 0
    text = capsys.readouterr()
    both = text.out + text.err
    assert "one-column text table" in both and "tab-separated" not in both


def test_an_unnamed_column_is_not_named_twice(tmp_path, capsys):
    p = tmp_path / "bad.csv"
    p.write_text("0.0,1.0\n0.001,1.1\n0.002,x\n0.003,1.0\n" * 5)
    err = one_line_error(capsys, ["measure", p, "-r", "1000"], "not a number")
    assert "column column" not in err
