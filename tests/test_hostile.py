"""Hostile inputs: every reader either answers or raises a project error with a message.

Property-based (hypothesis) with bounded example counts so the suite stays fast.
"""

import io
import struct

import numpy as np
import pytest
from hypothesis import HealthCheck, given, settings
from hypothesis import strategies as st

from flickerkit.assess import assess
from flickerkit.errors import FlickerkitError
from flickerkit.readers import ReadOptions, read_capture

FUZZ = settings(max_examples=60, deadline=None,
                suppress_health_check=[HealthCheck.function_scoped_fixture,
                                       HealthCheck.too_slow])


OUTCOMES = ("ok", "error")


def outcome(path, options=None):
    """Read and assess; return 'ok' or the project error. Anything else fails the test."""
    try:
        cap = read_capture(path, options)
    except FlickerkitError as exc:
        assert str(exc).strip(), "an error must say what is wrong"
        assert "\n" not in str(exc).strip()
        return "error"
    try:
        a = assess(cap)
    except FlickerkitError as exc:
        assert str(exc).strip()
        return "error"
    d = a.to_dict()
    assert set(d) >= {"frequency_hz", "percent_flicker", "flicker_index", "warnings"}
    return "ok"


@FUZZ
@given(data=st.binary(max_size=2000), suffix=st.sampled_from([".csv", ".txt", ".wav", ".npy"]))
def test_random_bytes(tmp_path_factory, data, suffix):
    p = tmp_path_factory.mktemp("b") / f"x{suffix}"
    p.write_bytes(data)
    assert outcome(p, ReadOptions(sample_rate_hz=1000.0) if suffix == ".npy" else None) in OUTCOMES


numbers = st.one_of(
    st.floats(allow_nan=True, allow_infinity=True, width=64),
    st.floats(min_value=-1e300, max_value=1e300),
    st.floats(min_value=-1e-300, max_value=1e-300),
    st.integers(min_value=-10**20, max_value=10**20),
)
cells = st.one_of(numbers.map(repr), numbers.map(lambda v: f"{v}"), st.just(""),
                  st.text(alphabet="aé€µ ,;\t\"'-+.eE0123456789", max_size=6))


@FUZZ
@given(
    header=st.one_of(st.none(), st.lists(st.text(min_size=0, max_size=8), min_size=1, max_size=4)),
    rows=st.lists(st.lists(cells, min_size=1, max_size=4), min_size=0, max_size=40),
    sep=st.sampled_from([",", ";", "\t", " ", ", "]),
    newline=st.sampled_from(["\n", "\r\n", "\r"]),
    bom=st.booleans(),
    comments=st.lists(st.text(max_size=20), max_size=3),
)
def test_random_tables(tmp_path_factory, header, rows, sep, newline, bom, comments):
    lines = [f"# {c}" for c in comments]
    if header is not None:
        lines.append(sep.join(header))
    lines += [sep.join(r) for r in rows]
    text = newline.join(lines) + newline
    p = tmp_path_factory.mktemp("t") / "table.csv"
    p.write_bytes((b"\xef\xbb\xbf" if bom else b"") + text.encode("utf-8", "surrogatepass"))
    assert outcome(p) in OUTCOMES
    assert outcome(p, ReadOptions(sample_rate_hz=1000.0, fill_gaps=True, resample=True)) in OUTCOMES


@FUZZ
@given(
    t=st.lists(st.floats(min_value=-1e6, max_value=1e6), min_size=2, max_size=60),
    x=st.lists(st.floats(min_value=-1e6, max_value=1e6), min_size=60, max_size=60),
)
def test_duplicated_and_decreasing_timestamps(tmp_path_factory, t, x):
    p = tmp_path_factory.mktemp("d") / "times.csv"
    p.write_text("time,light\n" + "\n".join(f"{a!r},{b!r}" for a, b in zip(t, x)) + "\n")
    assert outcome(p) in OUTCOMES
    assert outcome(p, ReadOptions(resample=True)) in OUTCOMES


def _wav_bytes(n):
    from scipy.io import wavfile

    buf = io.BytesIO()
    wavfile.write(buf, 8000, (np.sin(np.arange(n) / 3) * 1000).astype(np.int16))
    return buf.getvalue()


@FUZZ
@given(cut=st.integers(min_value=0, max_value=200), n=st.integers(min_value=1, max_value=60))
def test_truncated_wav(tmp_path_factory, cut, n):
    p = tmp_path_factory.mktemp("w") / "cut.wav"
    p.write_bytes(_wav_bytes(n)[:cut])
    assert outcome(p) in OUTCOMES


@FUZZ
@given(cut=st.integers(min_value=0, max_value=200))
def test_truncated_npy(tmp_path_factory, cut):
    buf = io.BytesIO()
    np.save(buf, np.linspace(0, 1, 20))
    p = tmp_path_factory.mktemp("n") / "cut.npy"
    p.write_bytes(buf.getvalue()[:cut])
    assert outcome(p, ReadOptions(sample_rate_hz=1000.0)) in OUTCOMES


def test_npy_declaring_a_billion_rows_with_ten(tmp_path):
    """A header that promises 1e9 float64 values (8 GB) over 80 bytes is refused, not allocated."""
    header = "{'descr': '<f8', 'fortran_order': False, 'shape': (1000000000,), }"
    header = header.ljust(118) + "\n"
    p = tmp_path / "liar.npy"
    p.write_bytes(b"\x93NUMPY\x01\x00" + struct.pack("<H", len(header)) + header.encode()
                  + np.arange(10, dtype="<f8").tobytes())
    with pytest.raises(FlickerkitError, match="npy"):
        read_capture(p, ReadOptions(sample_rate_hz=1000.0))


def test_wav_declaring_huge_data_with_ten_samples(tmp_path):
    raw = bytearray(_wav_bytes(10))
    i = raw.find(b"data")
    raw[i + 4 : i + 8] = struct.pack("<I", 2_000_000_000)
    p = tmp_path / "liar.wav"
    p.write_bytes(bytes(raw))
    assert outcome(p) in ("ok", "error")


# ---------------------------------------------------------------- output side

import subprocess  # noqa: E402
import sys  # noqa: E402


@pytest.fixture
def small_capture(tmp_path):
    p = tmp_path / "c.csv"
    p.write_text("light\n" + "\n".join(f"{1 + 0.2 * np.sin(i / 5):.5f}" for i in range(2000)))
    return p


def test_stdout_to_a_full_disk(small_capture):
    with open("/dev/full", "w") as full:
        r = subprocess.run([sys.executable, "-m", "flickerkit", "measure", str(small_capture),
                            "-r", "1000", "--json", "-q"], stdout=full, stderr=subprocess.PIPE,
                           text=True)
    assert r.returncode == 1
    assert "No space left on device" in r.stderr
    assert "Traceback" not in r.stderr and "Exception ignored" not in r.stderr


def test_workbook_never_replaces_a_device(small_capture, capsys):
    from flickerkit.cli import main

    assert main(["measure", str(small_capture), "-r", "1000", "-q", "--xlsx", "/dev/full",
                 "--force"]) == 1
    assert "not a regular file" in capsys.readouterr().err


def test_disk_full_while_saving_leaves_nothing(small_capture, tmp_path, monkeypatch, capsys):
    import errno

    import openpyxl

    from flickerkit.cli import main

    def full(self, filename):
        with open(filename, "wb") as fh:
            fh.write(b"PK\x03\x04 partial")
        raise OSError(errno.ENOSPC, "No space left on device")

    monkeypatch.setattr(openpyxl.Workbook, "save", full)
    out = tmp_path / "out.xlsx"
    assert main(["measure", str(small_capture), "-r", "1000", "-q", "--xlsx", str(out)]) == 1
    assert "No space left on device" in capsys.readouterr().err
    assert not out.exists() and not list(tmp_path.glob(".*part"))


# ---------------------------------------------------------------- side files (issue 12)

from flickerkit.validate import MAX_SIDE_FILE_BYTES  # noqa: E402

#: Per-example time bound: a side file is small, and a device or FIFO is refused before a
#: byte is read, so each example ends well within it (or the reader hangs or reads forever).
SIDE_FUZZ = settings(max_examples=40, deadline=3000,
                     suppress_health_check=[HealthCheck.function_scoped_fixture,
                                            HealthCheck.too_slow])


def _side_readers():
    from flickerkit.criteria import load_user_criteria
    from flickerkit.curves import read_two_columns
    from flickerkit.drivefile import drive_from_mapping
    from flickerkit.flickermeter import load_calibration
    from flickerkit.project import load_project
    from flickerkit.readers.sidefile import load_toml
    from flickerkit.steps import read_transfer_csv
    from flickerkit.validate import check_drive

    def drive(p):
        data = load_toml(p, "drive file")
        check_drive(data, source=str(p))
        return drive_from_mapping(data, source=str(p))

    return {"project": load_project, "criteria": load_user_criteria,
            "calibration": load_calibration, "curve": read_two_columns,
            "transfer": lambda p: read_transfer_csv(p, top=1023), "drive": drive}


SIDE_KINDS = sorted(_side_readers())


def side_outcome(kind, path):
    """Read a side file; 'ok' or 'error' (one line). Anything else fails the test."""
    try:
        _side_readers()[kind](path)
    except FlickerkitError as exc:
        text = str(exc).strip()
        assert text and "\n" not in text, repr(text)
        return "error"
    return "ok"


@SIDE_FUZZ
@given(kind=st.sampled_from(SIDE_KINDS), data=st.binary(max_size=1500))
def test_side_files_random_bytes(tmp_path_factory, kind, data):
    p = tmp_path_factory.mktemp("side") / ("f.csv" if kind in ("curve", "transfer")
                                           else "f.toml")
    p.write_bytes(data)
    assert side_outcome(kind, p) in OUTCOMES


_TOML_SNIPPETS = [
    '[product]\nname = "{t}"\n[[capture]]\nlevel = 100\nfile = "{t}.csv"\n',
    '[[criterion]]\nid = "{t}"\nmetric = "svm"\nlimit = 1\ntitle = "{t}"\n',
    'method = "pwm"\nfrequency_hz = 1234.5\n# {t}\n',
    "count,light\n0,0\n# {t}\n512,0.4\n1023,1\n",
    "0,0\n0.5,0.2\n1,1\n# {t}\n",
]


@SIDE_FUZZ
@given(kind=st.sampled_from(SIDE_KINDS), snippet=st.sampled_from(_TOML_SNIPPETS),
       text=st.text(max_size=30),
       encoding=st.sampled_from(["utf-8", "utf-8-sig", "utf-16", "utf-16-le", "utf-16-be",
                                 "utf-32", "latin-1", "cp1252"]))
def test_side_files_in_every_encoding(tmp_path_factory, kind, snippet, text, encoding):
    body = snippet.replace("{t}", text.replace('"', "").replace("\\", ""))
    try:
        raw = body.encode(encoding)
    except UnicodeEncodeError:
        raw = body.encode("utf-8", "surrogatepass")
    p = tmp_path_factory.mktemp("enc") / ("f.csv" if kind in ("curve", "transfer")
                                          else "f.toml")
    p.write_bytes(raw)
    got = side_outcome(kind, p)
    assert got in OUTCOMES
    if encoding in ("utf-16", "utf-32", "utf-8-sig") and got == "error":
        # a byte-order mark is always understood: any refusal is about the content
        try:
            _side_readers()[kind](p)
        except FlickerkitError as exc:
            assert "UTF" not in str(exc) and "NUL" not in str(exc), str(exc)


@pytest.mark.parametrize("kind", SIDE_KINDS)
@pytest.mark.parametrize("special", ["/dev/zero", "/dev/urandom", "/dev/null", "fifo", "dir",
                                     "sparse"])
def test_side_files_special(tmp_path, kind, special):
    import os
    import threading

    if special == "fifo":
        special = tmp_path / "pipe"
        os.mkfifo(special)
    elif special == "dir":
        special = tmp_path / "folder.toml"
        special.mkdir()
    elif special == "sparse":
        special = tmp_path / "huge.toml"
        with open(special, "wb") as fh:
            fh.truncate(MAX_SIDE_FILE_BYTES + 1)
    if kind == "project" and str(special).endswith("folder.toml"):
        pytest.skip("a folder is a valid project (every capture in it)")
    box = {}
    t = threading.Thread(target=lambda: box.setdefault("r", side_outcome(kind, special)),
                         daemon=True)
    t.start()
    t.join(20)
    assert not t.is_alive(), f"{kind} reader hangs on {special}"
    assert box["r"] == "error"
