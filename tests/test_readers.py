"""Each capture layout, and each bad input, through the readers."""

import os

import numpy as np
import pytest
from scipy.io import wavfile

from flickerkit.assess import assess
from flickerkit.errors import InputError
from flickerkit.readers import ReadOptions, read_capture

from .synth import pwm

FS = 20_000.0
#: analytic: PWM D = 0.3, off-level b = 0.2 -> PF = 100(1-b)/(1+b), FI = D(1-D)(1-b)/(b+D(1-b))
D, B = 0.3, 0.2
PF = 100 * (1 - B) / (1 + B)
FI = D * (1 - D) * (1 - B) / (B + D * (1 - B))
REL_TOL = 0.01  # the acceptance: within 1 %


@pytest.fixture(scope="module")
def wave():
    return pwm(123.4, D, B, FS, 0.5013)


def t_of(x):
    return np.arange(x.size) / FS


def write_layout(path, layout, x):
    t = t_of(x)
    if layout == "csv-metadata-ms":
        rows = "\n".join(f"{a:.6f},{b:.7f}" for a, b in zip(t * 1e3, x))
        path.write_text("# exported by an invented logger\nOperator: A. N. Other\n"
                        "Time (ms),Light (V),Spare\n" +
                        "\n".join(r + ",0" for r in rows.split("\n")) + "\n")
    elif layout == "semicolon-decimal-comma-us":
        rows = "\n".join(f"{a:.3f};{b:.7f}".replace(".", ",") for a, b in zip(t * 1e6, x))
        path.write_text("Zeit [µs];Licht\n" + rows + "\n", encoding="utf-8")
    elif layout == "tab-ns-crlf-bom":
        rows = "\r\n".join(f"{a:.0f}\t{b:.7f}" for a, b in zip(t * 1e9, x))
        path.write_bytes(("\ufefftime_ns\tsignal\r\n" + rows + "\r\n").encode("utf-8"))
    elif layout == "space-no-header":
        path.write_text("\n".join(f"{a:.8f} {b:.7f}" for a, b in zip(t, x)) + "\n")
    elif layout == "single-column":
        path.write_text("light\n" + "\n".join(f"{b:.7f}" for b in x) + "\n")
    elif layout == "metadata-rate":
        path.write_text("Sampling rate: 20 kHz\n" + "\n".join(f"{b:.7f}" for b in x) + "\n")
    elif layout == "wav":
        wavfile.write(path, int(FS), x.astype(np.float32))
    elif layout == "npy-1d":
        np.save(path, x)
    elif layout == "npy-2d":
        np.save(path, np.column_stack([t, x]))


LAYOUTS = {
    "csv-metadata-ms": ("c.csv", {}),
    "semicolon-decimal-comma-us": ("s.csv", {}),
    "tab-ns-crlf-bom": ("t.tsv", {}),
    "space-no-header": ("w.txt", {}),
    "single-column": ("one.csv", {"sample_rate_hz": FS}),
    "metadata-rate": ("m.txt", {}),
    "wav": ("a.wav", {}),
    "npy-1d": ("a.npy", {"sample_rate_hz": FS}),
    "npy-2d": ("b.npy", {}),
}


@pytest.mark.parametrize("layout", list(LAYOUTS))
def test_each_layout_gives_the_analytic_values(tmp_path, wave, layout):
    name, opts = LAYOUTS[layout]
    path = tmp_path / name
    write_layout(path, layout, wave)
    before = path.read_bytes()
    cap = read_capture(path, ReadOptions(**opts))
    assert cap.sample_rate_hz == pytest.approx(FS, rel=1e-6)
    a = assess(cap)
    assert a.frequency_hz == pytest.approx(123.4, rel=5e-4)
    assert a.percent_flicker == pytest.approx(PF, rel=REL_TOL)
    assert a.flicker_index == pytest.approx(FI, rel=REL_TOL)
    assert path.read_bytes() == before  # the input is never modified


def test_column_choice_and_dark_level(tmp_path, wave):
    path = tmp_path / "two.csv"
    t = t_of(wave)
    path.write_text("t (s),dark,lit\n" + "\n".join(
        f"{a:.8f},0.5,{b + 0.5:.7f}" for a, b in zip(t, wave)) + "\n")
    cap = read_capture(path, ReadOptions(column="lit", dark=0.5))
    assert assess(cap).percent_flicker == pytest.approx(PF, rel=REL_TOL)
    cap = read_capture(path, ReadOptions(column=3, dark=0.5))
    assert assess(cap).flicker_index == pytest.approx(FI, rel=REL_TOL)
    dark = tmp_path / "dark.csv"
    dark.write_text("v\n" + "0.5\n" * 100)
    cap = read_capture(path, ReadOptions(column="lit", dark=str(dark)))
    assert cap.meta["dark_level"] == pytest.approx(0.5)
    with pytest.raises(InputError, match="unknown column 'nope'"):
        read_capture(path, ReadOptions(column="nope"))
    with pytest.raises(InputError, match="column 9 does not exist"):
        read_capture(path, ReadOptions(column=9))


def test_resample_on_request(tmp_path, wave):
    t = t_of(wave)
    jitter = t + np.random.default_rng(0).uniform(-0.9, 0.9, t.size) / FS
    jitter.sort()
    path = tmp_path / "j.csv"
    path.write_text("time,light\n" + "\n".join(f"{a:.9f},{b:.7f}" for a, b in zip(jitter, wave)))
    with pytest.raises(InputError, match="not uniform"):
        read_capture(path)
    cap = read_capture(path, ReadOptions(resample=True))
    assert any("resampled" in n for n in cap.notes)


def write(tmp_path, name, text):
    p = tmp_path / name
    p.write_text(text)
    return p


BAD = [
    ("missing", None, "no such file"),
    ("empty.csv", "", "file is empty"),
    ("words.csv", "hello\nworld\n", "no numeric table"),
    ("cell.csv", "time,light\n0,1\n0.1,abc\n0.2,3\n0.3,4\n", r"line 3, column light: cell 'abc'"),
    ("blank.csv", "time,light\n0,1\n0.1,\n0.2,3\n0.3,4\n0.4,5\n", r"line 3, column light: 1 blank"),
    ("back.csv", "time,light\n0,1\n0.2,2\n0.1,3\n0.3,4\n", r"line 4: time goes backwards"),
    ("dup.csv", "time,light\n0,1\n0.1,2\n0.1,3\n0.3,4\n", r"line 4: time repeats"),
    ("gap.csv", "time,light\n0,1\n0.1,2\n0.2,3\n0.9,4\n1.0,5\n", r"not uniform"),
    ("norate.csv", "light\n1\n2\n3\n4\n", "give --sample-rate"),
    ("inf.csv", "time,light\n0,1\n0.1,inf\n0.2,3\n0.3,4\n", "infinite"),
]


@pytest.mark.parametrize("name,text,message", BAD, ids=[b[0] for b in BAD])
def test_bad_text_inputs(tmp_path, name, text, message):
    path = tmp_path / name if text is None else write(tmp_path, name, text)
    with pytest.raises(InputError, match=message):
        read_capture(path)


def test_fill_gaps_interpolates(tmp_path):
    p = write(tmp_path, "blank.csv", "time (s),light\n0,1\n0.1,\n0.2,3\n0.3,4\n0.4,5\n")
    cap = read_capture(p, ReadOptions(fill_gaps=True))
    assert cap.samples[1] == pytest.approx(2.0)  # analytic: linear interpolation of 1 and 3


def test_truncated_binary_files(tmp_path):
    w = tmp_path / "cut.wav"
    wavfile.write(w, 1000, np.zeros(100, dtype=np.int16))
    w.write_bytes(w.read_bytes()[:30])
    with pytest.raises(InputError, match="not a readable WAV"):
        read_capture(w)
    n = tmp_path / "cut.npy"
    np.save(n, np.zeros(100))
    n.write_bytes(n.read_bytes()[:60])
    with pytest.raises(InputError, match=r"\.npy"):
        read_capture(n, ReadOptions(sample_rate_hz=1000))
    with pytest.raises(InputError, match="give --sample-rate"):
        np.save(tmp_path / "ok.npy", np.ones(10))
        read_capture(tmp_path / "ok.npy")


def test_wav_rail_clipping_is_reported(tmp_path):
    x = np.round(np.clip(1.6 * np.sin(np.linspace(0, 200 * np.pi, 20_000)), -1, 1) * 32767)
    w = tmp_path / "clip.wav"
    wavfile.write(w, 20_000, x.astype(np.int16))
    cap = read_capture(w, ReadOptions(dark=-40000.0))
    assert any("clipping" in m for m in cap.warnings)
    assert any("clipping" in m for m in assess(cap).warnings)


def test_dark_and_negative_capture_rejected(tmp_path):
    p = write(tmp_path, "zero.csv", "time (s),light\n" + "".join(f"{i/10},0\n" for i in range(20)))
    from flickerkit.assess import assess as run

    with pytest.raises(InputError, match="dark"):
        run(read_capture(p))
    with pytest.raises(InputError, match="mean light is not positive"):
        run(read_capture(p, ReadOptions(dark=1.0)))


@pytest.mark.skipif(os.geteuid() == 0, reason="root can read files without permission")
def test_unreadable_file(tmp_path):
    p = write(tmp_path, "secret.csv", "1\n2\n")
    p.chmod(0)
    with pytest.raises(InputError, match="permission"):
        read_capture(p)


def test_first_of_several_binary_channels_is_said_or_required(tmp_path):
    # Second review: a stereo WAV (gate drive on channel 1, light on 2) and a 2-D .npy with
    # two signal columns were measured on the first channel without a word; text tables warn.
    import wave

    fs = 48000
    t = np.arange(4800) / fs
    light = 1 + 0.3 * np.sin(2 * np.pi * 237.3 * t)   # analytic: percent flicker 30 %
    gate = (np.sin(2 * np.pi * 237.3 * t) > 0) * 0.9
    pcm = (np.stack([gate, light / 1.5], 1) * 32767).astype("<i2")
    wav = tmp_path / "st.wav"
    with wave.open(str(wav), "wb") as w:
        w.setnchannels(2)
        w.setsampwidth(2)
        w.setframerate(fs)
        w.writeframes(pcm.tobytes())
    npy = tmp_path / "m.npy"
    np.save(npy, np.stack([t, gate, light], 1))
    for p in (wav, npy):
        cap = read_capture(p)
        assert any("2 channels" in w and "--column" in w for w in cap.warnings), cap.warnings
        named = read_capture(p, ReadOptions(column=2 if p is wav else 3))
        assert not any("channels" in w for w in named.warnings)
        assert assess(named).percent_flicker == pytest.approx(30.0, abs=0.2)
        with pytest.raises(InputError, match="none is named"):
            read_capture(p, ReadOptions(require_column=True))


def test_one_read_options_builder_for_cli_and_project(tmp_path):
    """common practice, no source: a dark level is a number or a dark capture's path; the CLI
    takes a path from the working folder, a project file from its own folder."""
    import argparse

    from flickerkit.cli.measure import add_read_options, read_options
    from flickerkit.readers import build_read_options, dark_option
    from flickerkit.report import _read_options

    p = argparse.ArgumentParser()
    add_read_options(p)
    cli = read_options(p.parse_args(["--dark", "0.0123", "-r", "1234.56"]))
    proj = _read_options({"dark": "0.0123", "sample_rate_hz": 1234.56}, tmp_path)
    assert cli.dark == proj.dark == 0.0123 and cli.sample_rate_hz == proj.sample_rate_hz
    assert proj.require_column and not cli.require_column
    assert dark_option("dark.csv") == "dark.csv"
    assert dark_option("dark.csv", tmp_path) == str(tmp_path / "dark.csv")
    assert build_read_options(dark=0.5).dark == 0.5


def test_project_read_keys_are_the_builders_settings(tmp_path):
    """common practice, no source: a [read] table and the command line set the same things,
    under one list of names (readers.options.SHARED_SETTINGS)."""
    import inspect

    from flickerkit import project
    from flickerkit.readers import SHARED_SETTINGS, build_read_options

    keywords = {k for k, v in inspect.signature(build_read_options).parameters.items()
                if v.kind is inspect.Parameter.KEYWORD_ONLY} - {"base"}
    assert keywords == set(SHARED_SETTINGS) == project._READ_KEYS
    table = {"column": "CH2", "sample_rate_hz": 1234.56, "time_unit": "ms",
             "dark": "dark.csv", "resample": True, "fill_gaps": True}
    opts = build_read_options(**table, base=tmp_path)
    assert (opts.column, opts.sample_rate_hz, opts.time_unit, opts.resample, opts.fill_gaps) \
        == ("CH2", 1234.56, "ms", True, True)
    assert opts.dark == str(tmp_path / "dark.csv")


def test_every_reader_gives_a_typed_account(tmp_path, wave):
    """Each format's reader returns a FormatRead whose record is the capture's read echo
    (analytic: the samples written are the samples read)."""
    from flickerkit.readers import FormatRead
    from flickerkit.readers.npy import read_npy
    from flickerkit.readers.raw import read_raw
    from flickerkit.readers.table_read import read_table
    from flickerkit.readers.wav import read_wav

    np.save(tmp_path / "a.npy", wave)
    wave.astype(np.float32).tofile(tmp_path / "a.raw")
    wavfile.write(tmp_path / "a.wav", int(FS), wave.astype(np.float32))
    (tmp_path / "a.csv").write_text("time (ms),light (V)\n" + "".join(
        f"{1e3 * t:.6f},{v:.6f}\n" for t, v in zip(t_of(wave), wave)))
    cases = [(read_npy, "a.npy", ReadOptions(sample_rate_hz=FS)),
             (read_raw, "a.raw", ReadOptions(sample_rate_hz=FS, raw_dtype="float32")),
             (read_wav, "a.wav", ReadOptions()), (read_table, "a.csv", ReadOptions())]
    for reader, name, opts in cases:
        got = reader(tmp_path / name, opts)
        assert isinstance(got, FormatRead)
        assert np.allclose(np.asarray(got.samples), wave, atol=1e-6)
        assert got.sample_rate_hz == pytest.approx(FS, rel=1e-9)
        assert got.record() == read_capture(tmp_path / name, opts).read
    assert got.rows_skipped == 1 and got.unit == "V" and got.column == "light (V)"


def test_reading_options_load_no_numpy():
    """A project file's reading settings (readers.options, readers.kinds) are standard library
    only: `import flickerkit.project` stays light (subprocess + sys.modules)."""
    import subprocess
    import sys

    code = ("import sys, flickerkit.project, flickerkit.readers.options; "
            "print(sorted(m for m in ('numpy', 'pandas', 'scipy', 'flickerkit.readers.dispatch')"
            " if m in sys.modules))")
    out = subprocess.run([sys.executable, "-c", code], capture_output=True, text=True,
                         check=True, cwd=os.path.dirname(os.path.dirname(__file__)))
    assert out.stdout.strip() == "[]"
