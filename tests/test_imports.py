"""Imports only for what is used: which heavy libraries a command loads (subprocess + sys.modules).

The figures themselves are checked elsewhere; here the point is that a `.npy` or raw capture
needs neither pandas nor scipy, a WAV only scipy.io, and `steps` no colour-science (CIE L* is
the closed form, cross-checked against colour-science in test_curves.py).
"""

import json
import subprocess
import sys
from pathlib import Path

import numpy as np
import pytest

from .synth import pwm

ROOT = Path(__file__).resolve().parent.parent
HEAVY = ("pandas", "scipy", "scipy.signal", "scipy.stats", "scipy.optimize", "scipy.fft",
         "scipy.io", "colour", "openpyxl", "matplotlib")

_RUN = """
import io, json, sys, contextlib
sys.path.insert(0, {root!r})
from flickerkit.cli import main
with contextlib.redirect_stdout(io.StringIO()) as out, contextlib.redirect_stderr(io.StringIO()):
    rc = main({argv!r})
heavy = sorted(m for m in {heavy!r} if m in sys.modules)
print(json.dumps({{"rc": rc, "heavy": heavy, "out": out.getvalue()}}))
"""


def _loaded(argv: list[str]) -> tuple[list[str], str]:
    code = _RUN.format(root=str(ROOT), argv=argv, heavy=HEAVY)
    done = subprocess.run([sys.executable, "-c", code], capture_output=True, text=True,
                          check=True, cwd=ROOT)
    result = json.loads(done.stdout.strip().splitlines()[-1])
    assert result["rc"] == 0, result
    return result["heavy"], result["out"]


@pytest.fixture(scope="module")
def light():
    # 20,000 samples of 1234.56 Hz PWM at 30 % duty, 100 kS/s (invented test light)
    return pwm(1234.56, 0.3, 0.0, 100_000.0, 0.2)


def test_npy_measure_needs_neither_pandas_nor_scipy(tmp_path, light):
    path = tmp_path / "short.npy"
    np.save(path, light)
    heavy, out = _loaded(["measure", str(path), "-r", "100000", "--json", "-q"])
    assert heavy == []
    # and it measured: analytic, PWM between 0 and 1 is 100 % percent flicker at 1234.56 Hz
    record = json.loads(out)[0]
    assert record["frequency_hz"] == pytest.approx(1234.56, rel=5e-4)
    assert record["percent_flicker"] == pytest.approx(100.0, rel=1e-3)


def test_raw_and_wav_measure_do_not_import_pandas(tmp_path, light):
    raw = tmp_path / "short.raw"
    light.astype(np.float32).tofile(raw)
    heavy, _ = _loaded(["measure", str(raw), "-r", "100000", "--raw-dtype", "float32",
                        "--json", "-q"])
    assert heavy == []
    from scipy.io import wavfile

    wav = tmp_path / "short.wav"
    wavfile.write(wav, 100_000, light.astype(np.float32))
    heavy, _ = _loaded(["measure", str(wav), "--json", "-q"])
    assert heavy == ["scipy", "scipy.io"]  # the WAV reader is scipy.io.wavfile


def test_steps_does_not_import_colour_science():
    heavy, out = _loaded(["steps", "--bits", "10", "-n", "16", "--pwm-frequency", "1234.56",
                          "--format", "json"])
    assert "colour" not in heavy and "pandas" not in heavy
    assert json.loads(out)  # a table came out
