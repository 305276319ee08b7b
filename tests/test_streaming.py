"""Streaming equals in memory: every format read block by block gives the same figures."""

import math

import numpy as np
import pytest
from scipy.io import wavfile

from flickerkit.assess import assess
from flickerkit.readers import FileSignal, ReadOptions, read_capture

from .synth import pwm

FS = 20_000.0
#: The issue's bound for streamed against in-memory results (relative).
REL = 1e-9


@pytest.fixture(scope="module")
def wave():
    # 20 s (Pst LM needs 15 s), PWM at 1.2 kHz with a slow 3 Hz envelope and noise
    rng = np.random.default_rng(4)
    n = int(20 * FS)
    t = np.arange(n) / FS
    x = pwm(1234.0, 0.3, 0.1, FS, 20.0) * (1 + 0.02 * np.sin(2 * np.pi * 3 * t))
    return x + 0.002 * rng.standard_normal(n) + 0.3


def compare(a, b, path=""):
    """Every number in two JSON objects agrees within REL (strings and lists exactly)."""
    if isinstance(a, dict):
        assert set(a) == set(b), path
        for k in a:
            compare(a[k], b[k], f"{path}.{k}")
    elif isinstance(a, list):
        assert len(a) == len(b), path
        for i, (x, y) in enumerate(zip(a, b)):
            compare(x, y, f"{path}[{i}]")
    elif isinstance(a, float) and isinstance(b, float):
        assert math.isclose(a, b, rel_tol=REL, abs_tol=1e-12), f"{path}: {a} != {b}"
    else:
        assert a == b, f"{path}: {a!r} != {b!r}"


def strip(d):
    d = dict(d)
    d["warnings"] = [w for w in d["warnings"]]
    d.pop("input", None)
    d.pop("notes", None)
    return d


@pytest.mark.parametrize("fmt", ["npy1", "npy2", "wav", "raw", "csv"])
def test_streamed_equals_in_memory(tmp_path, wave, fmt):
    t = np.arange(wave.size) / FS
    opts = {}
    if fmt == "npy1":
        path = tmp_path / "a.npy"
        np.save(path, wave)
        opts = {"sample_rate_hz": FS}
    elif fmt == "npy2":
        path = tmp_path / "b.npy"
        np.save(path, np.column_stack([t, wave]))
    elif fmt == "wav":
        path = tmp_path / "c.wav"
        wavfile.write(path, int(FS), wave.astype(np.float32))
    elif fmt == "raw":
        path = tmp_path / "d.raw"
        np.column_stack([wave, -wave]).astype("<f4").tofile(path)
        opts = {"sample_rate_hz": FS, "raw_dtype": "float32", "channels": 2, "column": 1}
    else:
        path = tmp_path / "e.csv"
        path.write_text("time (s),light\n" + "\n".join(
            f"{a:.8f},{b:.9f}" for a, b in zip(t, wave)) + "\n")
    mem = read_capture(path, ReadOptions(stream=False, dark=0.05, **opts))
    lazy = read_capture(path, ReadOptions(stream=True, dark=0.05, **opts))
    assert isinstance(lazy.samples, FileSignal) and isinstance(mem.samples, np.ndarray)
    a = assess(mem).to_dict()
    b = assess(lazy, block=100_003).to_dict()  # odd block size: periods cross block edges
    compare(strip(a), strip(b))
    assert a["pst_lm"] is not None and a["svm"] is not None


def test_long_capture_uses_averaged_windows(monkeypatch, wave):
    """Above the single-transform length the spectrum averages whole-period windows."""
    from flickerkit import assess as assess_mod
    from flickerkit.capture import make_capture

    cap = make_capture(wave, FS)
    full = assess(cap).to_dict()
    monkeypatch.setattr(assess_mod, "SINGLE_FFT_MAX_SAMPLES", 50_000)
    avg = assess(cap).to_dict()
    assert avg["spectrum_window"] == "rectangular, averaged"
    assert any("average of whole-period windows" in w for w in avg["warnings"])
    # the time-domain figures do not depend on the spectrum at all
    assert avg["percent_flicker"] == full["percent_flicker"]
    assert avg["flicker_index"] == full["flicker_index"]
    # components of a stationary periodic signal: the same within 1 % (noise adds a little)
    assert avg["harmonics"][0]["amplitude"] == pytest.approx(full["harmonics"][0]["amplitude"],
                                                             rel=0.01)
    assert avg["svm"] == pytest.approx(full["svm"], rel=0.01)


def test_raw_needs_format_and_rate(tmp_path):
    from flickerkit.errors import InputError

    p = tmp_path / "x.raw"
    np.zeros(100, "<f4").tofile(p)
    with pytest.raises(InputError, match="--raw-dtype"):
        read_capture(p, ReadOptions(sample_rate_hz=1000.0))
    with pytest.raises(InputError, match="--sample-rate"):
        read_capture(p, ReadOptions(raw_dtype="float32"))


def test_raw_channel_count_checked_and_remainder_warned(tmp_path):
    from flickerkit.errors import InputError

    p = tmp_path / "x.raw"
    np.zeros(100, "<f4").tofile(p)  # 400 bytes: not a whole number of 3-channel float32 frames
    with pytest.raises(InputError, match="--raw-channels: must be at least 1"):
        read_capture(p, ReadOptions(sample_rate_hz=1000.0, raw_dtype="float32", channels=0))
    cap = read_capture(p, ReadOptions(sample_rate_hz=1000.0, raw_dtype="float32", channels=3))
    # analytic: 400 bytes = 33 frames of 12 bytes + 4 bytes
    assert cap.samples.size == 33
    assert any("4 trailing byte(s)" in w for w in cap.warnings)
