"""Text-table layouts seen from bench scopes and loggers, each in a file written here.

Every file below is invented for this test in the layout named (no instrument maker's
file was copied). Each holds the same light -- rectangular PWM at an awkward
1234.56 Hz, duty D = 0.3, off-level b = 0.2, averaged over each sample interval --
usually beside a gate-drive channel, so that reading the wrong channel, the wrong
time base or the wrong rows shows in the figures.
"""

import json

import numpy as np
import pytest

from flickerkit.assess import assess
from flickerkit.cli import main
from flickerkit.errors import InputError
from flickerkit.readers import ReadOptions, read_capture

from .synth import pwm

F = 1234.56
FS = 200_000.0
DT = 1.0 / FS
D, B = 0.3, 0.2
#: analytic: PWM D, off-level b -> PF = 100(1-b)/(1+b), FI = D(1-D)(1-b)/(b+D(1-b))
PF = 100 * (1 - B) / (1 + B)
FI = D * (1 - D) * (1 - B) / (B + D * (1 - B))
#: 162 samples per period: the interval-averaged edges move PF/FI by well under 1 %
REL_TOL = 0.01
#: frequency from the autocorrelation over 0.1 s (about 123 periods)
F_TOL = 5e-4
#: the samples as printed in the files (7 significant digits)
PRINT_TOL = 1e-6


@pytest.fixture(scope="module")
def light():
    return pwm(F, D, B, FS, 0.1)


@pytest.fixture(scope="module")
def gate(light):
    return np.where(light > 0.6, 4.93, 0.02)  # the drive that switches the LED


def check(cap, light, fs=FS):
    """The capture holds the light, at the right rate, and gives the analytic figures."""
    assert cap.sample_rate_hz == pytest.approx(fs, rel=1e-9)
    assert cap.n_samples == light.size
    np.testing.assert_allclose(np.asarray(cap.samples), light, atol=PRINT_TOL)
    a = assess(cap)
    assert a.frequency_hz == pytest.approx(F, rel=F_TOL)
    assert a.percent_flicker == pytest.approx(PF, rel=REL_TOL)
    assert a.flicker_index == pytest.approx(FI, rel=REL_TOL)
    return a


def rows(*cols, sep=",", fmt="{:.7g}", end=""):
    return "".join(sep.join(fmt.format(c) if not isinstance(c, str) else c for c in r) + end
                   + "\n" for r in zip(*cols))


def test_names_row_then_units_row(tmp_path, light, gate):
    t = np.arange(light.size) * DT
    p = tmp_path / "units_row.csv"
    p.write_text("Time,CH1,CH2\nSecond,Volt,Volt\n" + rows(t, gate, light, fmt="{:.9g}"))
    cap = read_capture(p, ReadOptions(column="CH2"))
    check(cap, light)
    assert cap.read.unit == "Volt" and cap.read.column == "CH2"
    assert cap.read.rows_skipped == 2
    assert "units row" in cap.read.time_base and "names + units rows" in cap.read.layout
    # by number: column 3 is CH2
    check(read_capture(p, ReadOptions(column=3)), light)


def test_units_row_in_milliseconds(tmp_path, light):
    t = np.arange(light.size) * DT * 1e3
    p = tmp_path / "ms_units.csv"
    p.write_text("Time,Light\nms,V\n" + rows(t, light, fmt="{:.9g}"))
    cap = read_capture(p)
    check(cap, light)
    assert "in ms" in cap.read.time_base


def test_index_with_start_and_increment_on_the_units_row(tmp_path, light, gate):
    """The issue's layout: a sample index, the time base in two extra columns under the names."""
    n = np.arange(light.size)
    p = tmp_path / "index_increment.csv"
    # trailing separator on every row, as the exporter writes it
    p.write_text(f"X,CH1,CH2,Start,Increment,\nSequence,Volt,Volt,-2.5e-03,{DT:.6e},\n"
                 + rows(n, gate, light, end=","))
    cap = read_capture(p, ReadOptions(column="CH2"))
    check(cap, light)  # analytic: rate = 1 / increment = 200 kHz, not 1 Hz
    assert "Increment" in cap.read.time_base and "index" in cap.read.layout


def test_index_with_origin_and_interval_in_the_first_data_row(tmp_path, light):
    n = np.arange(light.size)
    p = tmp_path / "first_row.csv"
    body = rows(n, light).splitlines()
    body[0] += f",-0.001,{DT:.6e}"
    p.write_text("Index,Photodiode,Origin,Interval\n" + "\n".join(body) + "\n")
    cap = read_capture(p)
    check(cap, light)
    assert "first data row" in cap.read.time_base


@pytest.mark.parametrize("style", ["equals-quoted", "comma-plain", "colon-unit-in-key"])
def test_metadata_block_states_the_time_base(tmp_path, light, gate, style):
    n = np.arange(light.size)
    if style == "equals-quoted":
        meta = ('"Instrument" = "invented bench logger, model nil"\n'
                '"Sampling frequency" = "200 kHz"\n"Channels" = "2"\n')
        table = "Sample;Gate drive;PD\n" + rows(n, gate, light, sep=";")
    elif style == "comma-plain":
        meta = f"Record Length,{light.size},Points\nSample Interval,{DT:.4e}\nTrigger,none\n"
        table = "Pt,Gate drive,PD\n" + rows(n, gate, light)
    else:
        meta = "# invented recorder export\n# Sample interval [us]: 5\n# operator: nobody\n"
        table = "n\tgate drive\tphotodiode\n" + rows(n, gate, light, sep="\t")
    p = tmp_path / f"meta_{style}.txt"
    p.write_text(meta + table)
    cap = read_capture(p)  # the light chosen because its name says so
    check(cap, light)
    assert cap.read.channel_choice == "its name or unit says light"
    assert cap.read.rows_skipped == meta.count("\n") + 1


def test_time_per_division_with_point_count(tmp_path, light):
    p = tmp_path / "per_div.csv"
    per_div = light.size * DT / 10
    p.write_text(f"Time/div: {per_div * 1e3:.6g} ms\nPoints: {light.size}\nDivisions: 10\n"
                 + rows(light))
    cap = read_capture(p)
    check(cap, light)  # analytic: rate = points / (10 div x time/div)
    assert not cap.warnings
    # without the division count, 10 is assumed and said
    q = tmp_path / "per_div_nodiv.csv"
    q.write_text(f"Time/div: {per_div * 1e3:.6g} ms\nPoints: {light.size}\n" + rows(light))
    cap = read_capture(q)
    assert cap.sample_rate_hz == pytest.approx(FS)
    assert any("10 assumed" in w for w in cap.warnings)


def test_metadata_in_side_columns_of_the_first_rows(tmp_path, light):
    """Key, value, unit in three side columns of the first rows, empty below; the table to
    the right of them without a header; the time column's unit from the stated interval."""
    t = -0.0123 + np.arange(light.size) * DT
    side = [("Record Length", f"{light.size}", "Points"), ("Sample Interval", f"{DT:.6e}", "s"),
            ("Trigger Point", "2460", "Samples"), ("Source", "CH1", ""), ("Units", "V", "")]
    p = tmp_path / "side.csv"
    p.write_text("".join(f"{','.join(side[i]) if i < len(side) else ',,'},{a:.9e},{b:.7g},\n"
                         for i, (a, b) in enumerate(zip(t, light))))
    cap = read_capture(p)
    check(cap, light)
    assert "3 side column(s)" in cap.read.layout and "Sample Interval" in cap.read.time_base


def test_trailing_separators_and_empty_trailing_cells_decimal_comma(tmp_path, light):
    t = np.arange(light.size) * DT
    p = tmp_path / "trailing.csv"
    text = "t (s);light;;\n" + "".join(
        f"{a:.9g};{b:.7g}; ;\n".replace(".", ",") for a, b in zip(t, light))
    p.write_text(text)
    check(read_capture(p), light)


def test_repeated_column_names(tmp_path, light, gate):
    t = np.arange(light.size) * DT
    p = tmp_path / "repeated.csv"
    p.write_text("Time (s),Voltage,Voltage\n" + rows(t, gate, light, fmt="{:.9g}"))
    with pytest.raises(InputError, match=r"'Voltage' is repeated \(columns 2, 3\).*--column 3"):
        read_capture(p, ReadOptions(column="Voltage"))
    cap = read_capture(p, ReadOptions(column=3))
    check(cap, light)
    assert cap.read.column == "Voltage (column 3)"


def test_headerless_time_and_channels(tmp_path, light, gate):
    t = np.arange(light.size) * DT
    p = tmp_path / "bare.txt"
    p.write_text(rows(t, gate, light, sep=" ", fmt="{:.9g}"))
    cap = read_capture(p)
    # two unnamed channels: the first is measured, and the warning says so
    assert cap.read.column == "column 2"
    assert any("2 columns could be the light" in w and "measured 'column 2'" in w
               for w in cap.warnings)
    check(read_capture(p, ReadOptions(column=3)), light)


def test_headerless_values_only(tmp_path, light):
    p = tmp_path / "values.txt"
    p.write_text(rows(light))
    with pytest.raises(InputError, match="give --sample-rate"):
        read_capture(p)
    cap = read_capture(p, ReadOptions(sample_rate_hz=FS))
    check(cap, light)
    assert cap.read.time_base.startswith("given")


def test_headerless_index_is_not_seconds(tmp_path, light):
    n = np.arange(light.size)
    p = tmp_path / "index_only.csv"
    p.write_text(rows(n, light))
    with pytest.raises(InputError, match=r"counts samples \(0, 1, 2, \.\.\.\), it is not time"):
        read_capture(p)
    check(read_capture(p, ReadOptions(sample_rate_hz=FS)), light)


def test_light_chosen_by_unit(tmp_path, light, gate):
    t = np.arange(light.size) * DT
    p = tmp_path / "lux.csv"
    p.write_text("Time,CH1,CH2\ns,V,lx\n" + rows(t, gate, light, fmt="{:.9g}"))
    cap = read_capture(p)
    check(cap, light)
    assert cap.read.unit == "lx" and cap.read.channel_choice == "its name or unit says light"


def test_light_chosen_when_the_others_are_named_as_drive(tmp_path, light, gate):
    t = np.arange(light.size) * DT
    p = tmp_path / "drive_named.csv"
    p.write_text("Time (s),Gate drive (V),CH2 (V)\n" + rows(t, gate, light, fmt="{:.9g}"))
    cap = read_capture(p)
    check(cap, light)
    assert "named as drive" in cap.read.channel_choice


def test_require_column_refuses_an_ambiguous_table(tmp_path, light, gate):
    t = np.arange(light.size) * DT
    p = tmp_path / "two.csv"
    p.write_text("Time,CH1,CH2\ns,V,V\n" + rows(t, gate, light, fmt="{:.9g}"))
    with pytest.raises(InputError, match=r"2 columns could be the light \('CH1', 'CH2'\) and "
                                         r"none is named"):
        read_capture(p, ReadOptions(require_column=True))


def test_unitless_time_in_milliseconds_is_refused_with_the_hint(tmp_path, light):
    t = np.arange(light.size) * DT * 1e3  # ms, but the header does not say so
    p = tmp_path / "ms_no_unit.csv"
    p.write_text("time,light\n" + rows(t, light, fmt="{:.9g}"))
    with pytest.raises(InputError, match=r"read as seconds it gives a sample rate of 200 Hz.*"
                                         r"if it is in ms the rate is 200000 Hz: give "
                                         r"--time-unit ms"):
        read_capture(p)
    check(read_capture(p, ReadOptions(time_unit="ms")), light)


def test_unitless_whole_number_time_is_an_index(tmp_path, light):
    p = tmp_path / "whole.csv"
    p.write_text("Time,Light\n" + rows(np.arange(light.size), light))
    with pytest.raises(InputError, match="counts samples"):
        read_capture(p)


def test_unitless_time_unit_inferred_from_the_stated_rate(tmp_path, light):
    t = np.arange(light.size) * DT * 1e6  # microseconds, no unit in the header
    p = tmp_path / "us_rate.csv"
    p.write_text("Sample rate: 200 kS/s\ntime,light\n" + rows(t, light, fmt="{:.9g}"))
    cap = read_capture(p)
    check(cap, light)
    assert "in us" in cap.read.time_base


def test_stated_rate_and_interval_that_disagree_are_refused(tmp_path, light):
    p = tmp_path / "disagree.csv"
    p.write_text("Sample rate = 200000\nSample interval = 1e-5\nlight\n" + rows(light))
    with pytest.raises(InputError, match="disagree"):
        read_capture(p)


def test_streamed_index_increment_table_equals_in_memory(tmp_path, light, gate):
    n = np.arange(light.size)
    p = tmp_path / "index_stream.csv"
    p.write_text(f"X,CH1,CH2,Start,Increment,\nSequence,Volt,Volt,0,{DT:.6e},\n"
                 + rows(n, gate, light, end=","))
    a = read_capture(p, ReadOptions(column="CH2", stream=False))
    b = read_capture(p, ReadOptions(column="CH2", stream=True))
    assert b.meta.get("streamed")
    assert b.sample_rate_hz == pytest.approx(a.sample_rate_hz, rel=1e-12)
    np.testing.assert_array_equal(np.asarray(b.samples[:]), a.samples)
    assert b.read.time_base == a.read.time_base


# ---------------------------------------------------------------- the command line


@pytest.fixture()
def unitless_ms(tmp_path, light):
    p = tmp_path / "scope_ms.csv"
    p.write_text("time,light\n" + rows(np.arange(light.size) * DT * 1e3, light, fmt="{:.9g}"))
    return p


def test_cli_unitless_implausible_time_base_is_one_line_and_exit_1(unitless_ms, capsys):
    assert main(["measure", str(unitless_ms)]) == 1
    err = capsys.readouterr().err.strip().splitlines()
    assert len(err) == 1 and "--time-unit ms" in err[0] and "Traceback" not in err[0]


def test_cli_index_without_time_base_is_one_line_and_exit_1(tmp_path, light, capsys):
    p = tmp_path / "idx.csv"
    p.write_text("X,CH1\nSequence,Volt\n" + rows(np.arange(light.size), light))
    assert main(["measure", str(p), "--json"]) == 1
    cap = capsys.readouterr()
    assert cap.out == ""
    assert len(cap.err.strip().splitlines()) == 1 and "--sample-rate" in cap.err


def test_cli_echo_in_terminal_json_and_workbook(tmp_path, light, gate, capsys):
    from openpyxl import load_workbook

    n = np.arange(light.size)
    p = tmp_path / "echo.csv"
    p.write_text(f"X,Gate,PD,Start,Increment\nSequence,V,V,0,{DT:.6e}\n" + rows(n, gate, light))
    out = tmp_path / "echo.xlsx"
    assert main(["measure", str(p), "--json", "--xlsx", str(out)]) == 0
    c = capsys.readouterr()
    rec = json.loads(c.out)[0]
    read = rec["read"]
    assert read["column"] == "PD" and read["unit"] == "V" and read["rows_skipped"] == 2
    assert read["sample_rate_hz"] == pytest.approx(FS) and read["samples"] == light.size
    assert "Increment" in read["time_base"]
    assert rec["percent_flicker"] == pytest.approx(PF, rel=REL_TOL)
    assert "read: echo.csv:" in c.err and "'PD'" in c.err
    wb = load_workbook(out)
    cells = [r for r in wb["Inputs and settings"].iter_rows(values_only=True)
             if r[0] == "read: echo.csv"]
    assert cells and "Increment" in cells[0][1] and "200000 Hz" in cells[0][1]


def test_cli_peek_reads_without_measuring(tmp_path, light, gate, capsys):
    p = tmp_path / "peek.csv"
    p.write_text("Time,CH1,CH2\ns,V,V\n" + rows(np.arange(light.size) * DT, gate, light,
                                                  fmt="{:.9g}"))
    assert main(["measure", str(p), "--peek"]) == 0
    out = capsys.readouterr().out
    assert "percent flicker" not in out.lower()
    assert "channels: CH1, CH2" in out and "could be the light" in out
    assert "time base: column 'Time' in s (units row)" in out
    assert "rows skipped: 2" in out and f"samples: {light.size}" in out
    assert "first rows" in out and "4.93" in out  # CH1's first value, as read


def test_report_requires_the_column_when_ambiguous(tmp_path, light, gate, capsys):
    t = np.arange(light.size) * DT
    p = tmp_path / "amb.csv"
    p.write_text("Time,CH1,CH2\ns,V,V\n" + rows(t, gate, light, fmt="{:.9g}"))
    proj = tmp_path / "p.toml"
    proj.write_text('[product]\nname = "invented test lamp"\n[[capture]]\nfile = "amb.csv"\n'
                    'level = 100\n')
    out = tmp_path / "r.xlsx"
    assert main(["report", str(proj), "-o", str(out), "-q"]) == 1
    err = capsys.readouterr().err
    assert "none is named" in err and "project file" in err
    assert not out.exists()
    proj.write_text(proj.read_text() + 'column = "CH2"\n')
    assert main(["report", str(proj), "-o", str(out), "--json"]) == 0
    c = capsys.readouterr()
    rec = json.loads(c.out)["records"][0]
    assert rec["read"]["column"] == "CH2"
    assert rec["percent_flicker"] == pytest.approx(PF, rel=REL_TOL)
    assert "read: amb.csv:" in c.err  # the terminal note
    from openpyxl import load_workbook

    ins = load_workbook(out)["Inputs"]
    # the Inputs sheet is turned: fields down column A, one capture per column from B
    row = {r[0]: r[1] for r in ins.iter_rows(min_row=1, values_only=True) if r[0]}
    assert row["Column measured"] == "CH2" and row["Unit"] == "V"
    assert row["Time base from"] == "column 'Time' in s (units row)"
    assert row["Lines skipped"] == 2 and "names + units rows" in row["Layout read"]
    assert row["Sample rate [Hz]"] == pytest.approx(FS)


def test_npy_sample_count_or_slow_column_1_is_refused(tmp_path, light):
    """A 2-D .npy holds time in seconds in column 1 by convention; no unit is stated."""
    p = tmp_path / "idx.npy"
    np.save(p, np.column_stack([np.arange(light.size), light]))
    with pytest.raises(InputError, match="counts samples"):
        read_capture(p)
    q = tmp_path / "ms.npy"
    np.save(q, np.column_stack([np.arange(light.size) * DT * 1e3, light]))
    with pytest.raises(InputError, match=r"gives a sample rate of 200 Hz"):
        read_capture(q)
    r = tmp_path / "s.npy"
    np.save(r, np.column_stack([np.arange(light.size) * DT, light]))
    check(read_capture(r), light)
    assert read_capture(r).read.time_base == "column 1 (seconds)"


@pytest.mark.parametrize("stamp", ["date-and-clock", "iso"])
def test_logger_date_time_column_is_refused_with_what_to_do(tmp_path, capsys, stamp):
    # Second review: a tab-separated logger file with a date-time column was refused as
    # "no numeric table found", which does not say what is wrong or how to fix it.
    lines = ["Date\tTime\tCh1 (V)" if stamp != "iso" else "DateTime\tCh1 (V)"]
    for i in range(40):
        us = i * 20  # 50 kHz
        clock = f"10:00:00.{us:06d}"
        lines.append(f"2026-11-20\t{clock}\t{1 + 0.3 * np.sin(i):.5f}" if stamp != "iso"
                     else f"2026-11-20T{clock}\t{1 + 0.3 * np.sin(i):.5f}")
    p = tmp_path / "logger.txt"
    p.write_text("\n".join(lines) + "\n")
    with pytest.raises(InputError, match="date or clock time") as exc:
        read_capture(p)
    assert "--sample-rate" in str(exc.value) and "logger.txt" in str(exc.value)
    assert main(["measure", str(p), "-q"]) == 1
    err = capsys.readouterr().err
    assert len(err.strip().splitlines()) == 1 and "Traceback" not in err


@pytest.mark.parametrize("codec", ["utf-16", "utf-16-le"])
def test_utf16_table_is_named_as_such(tmp_path, codec):
    # Second review: a UTF-16 table (with or without byte-order mark) was called "a binary
    # file ... use .wav or .npy", which sends the user the wrong way.
    p = tmp_path / "unicode.txt"
    p.write_bytes(("time\tlight\n" + "".join(f"{i / 5e4:.6f}\t{1 + 0.3 * np.sin(i):.5f}\n"
                                             for i in range(50))).encode(codec))
    with pytest.raises(InputError, match="UTF-16.*save it as UTF-8"):
        read_capture(p)


def test_unitless_ms_column_that_passes_as_slow_seconds_is_warned(tmp_path):
    # Second review: 2 MHz sampling with time in ms and no unit read as a 100 s capture at
    # 2 kHz; the 1234.56 Hz light was reported as 1.23 Hz with exit 0 and no word about the
    # unit. Analytic: 1 + 0.3 sin(2 pi 1234.56 t) has percent flicker 30 % at 1234.56 Hz.
    fs, f = 2e6, 1234.56
    t = np.arange(20000) / fs
    light = 1 + 0.3 * np.sin(2 * np.pi * f * t)
    p = tmp_path / "fast_ms.csv"
    p.write_text("time,light\n" + "".join(f"{a * 1e3:.7f},{v:.6f}\n" for a, v in zip(t, light)))
    cap = read_capture(p)
    assert cap.sample_rate_hz == pytest.approx(2000.0, rel=1e-6)  # read as seconds, as before
    assert any("no unit" in w and "--time-unit ms" in w and "2e+06 Hz" in w
               for w in cap.warnings), cap.warnings
    ok = read_capture(p, ReadOptions(time_unit="ms"))
    assert ok.sample_rate_hz == pytest.approx(fs, rel=1e-6)
    assert not any("no unit" in w for w in ok.warnings)
    sec = read_capture(p, ReadOptions(time_unit="s"))  # saying "seconds" silences it
    assert not any("no unit" in w for w in sec.warnings)


def test_index_column_beside_a_time_column_is_not_a_channel(tmp_path):
    # Second review: "Index,Time (s),CH1" measured the index column as the light (100 %
    # flicker, no frequency) with exit 0. Analytic: 1 + 0.3 sin(2 pi 1234.56 t) has percent
    # flicker 30 % at 1234.56 Hz.
    fs, f = 50000.0, 1234.56
    t = np.arange(5000) / fs
    light = 1 + 0.3 * np.sin(2 * np.pi * f * t)
    p = tmp_path / "idx_time.csv"
    p.write_text("Index,Time (s),CH1\n" + "".join(f"{i},{a:.8e},{v:.6f}\n"
                                                  for i, (a, v) in enumerate(zip(t, light))))
    cap = read_capture(p)
    assert cap.read.column == "CH1" and cap.sample_rate_hz == pytest.approx(fs, rel=1e-6)
    a = assess(cap)
    assert a.percent_flicker == pytest.approx(30.0, abs=0.1)
    assert a.frequency_hz == pytest.approx(f, rel=1e-3)
    assert read_capture(p, ReadOptions(column="Index")).read.column == "Index"  # still namable


def test_time_unit_option_against_the_files_own_unit_is_warned(tmp_path):
    # Second review: --time-unit ms on a file whose units row says "Second" rescaled the time
    # 1000-fold without a word (exit 0); a project-wide time_unit does the same to every capture.
    t = np.arange(2000) / 48000.0
    p = tmp_path / "units.csv"
    p.write_text("Time,PD\nSecond,Volt\n" + "".join(f"{a:.9e},{1 + 0.3 * np.sin(900 * a):.6f}\n"
                                                    for a in t))
    cap = read_capture(p, ReadOptions(time_unit="ms"))
    assert any("Second" in w and "--time-unit" in w for w in cap.warnings), cap.warnings
    same = read_capture(p, ReadOptions(time_unit="s"))
    assert not any("--time-unit" in w for w in same.warnings)


@pytest.mark.parametrize("unit,scale", [("mSec", 1e3), ("msec", 1e3), ("usec", 1e6),
                                        ("Milliseconds", 1e3), ("microsecond", 1e6)])
def test_spelt_out_time_units_on_the_units_row(tmp_path, unit, scale):
    # Second review: a units row with "mSec" under "Time" was refused as "no time column";
    # analytic: 1 + 0.3 sin(2 pi 237.3 t) sampled at 48 kHz, percent flicker 30 %.
    fs = 48000.0
    t = np.arange(4800) / fs
    p = tmp_path / "u.csv"
    p.write_text(f"Time,PD\n{unit},V\n" + "".join(
        f"{a * scale:.9g},{1 + 0.3 * np.sin(2 * np.pi * 237.3 * a):.6f}\n" for a in t))
    cap = read_capture(p)
    assert cap.sample_rate_hz == pytest.approx(fs, rel=1e-6)
    assert assess(cap).percent_flicker == pytest.approx(30.0, abs=0.1)


def test_peek_with_an_output_is_refused_not_silently_ignored(tmp_path, capsys):
    # common practice, no source: an option that would write nothing is refused, not ignored
    from flickerkit.cli import main

    p = tmp_path / "c.csv"
    p.write_text("time (s),light\n" + "".join(f"{i / 1000},{1 + (i % 2)}\n" for i in range(50)))
    out = tmp_path / "o.xlsx"
    assert main(["measure", str(p), "--peek", "--xlsx", str(out)]) != 0
    err = capsys.readouterr().err
    assert "--peek" in err and "--xlsx" in err and len(err.strip().splitlines()) == 1
    assert not out.exists()
