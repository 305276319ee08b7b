"""Mains voltage captures read block by block give the same Pst as in memory (issue 15).

The capture is an invented one: a 49.87 Hz mains of 230 V RMS with a sinusoidal
fluctuation at 8.8 Hz, sampled at an awkward 4321 Hz.
"""

from __future__ import annotations

import json

import numpy as np
import pytest

from flickerkit import readers
from flickerkit.cli import main

from .test_streaming import compare

FS = 4321.0
MAINS_HZ = 49.87
#: IEC 61000-4-15:2010 sinusoidal test point for the 230 V lamp: a relative voltage change
#: dV/V of 0.250 % at 8.8 Hz gives Pinst,max = 1.00 (as in tests/test_measure_svm_pst.py).
DV = 0.00250
#: Pinst,max = 1.00 within 2 % (the tolerance of tests/test_measure_svm_pst.py).
PINST_TOL = 0.02


@pytest.fixture(scope="module")
def mains() -> np.ndarray:
    t = np.arange(int(20 * FS)) / FS
    u = (1 + DV / 2 * np.sin(2 * np.pi * 8.8 * t)) * 325.27 * np.sin(2 * np.pi * MAINS_HZ * t + 0.4)
    return u.astype(np.float32)


def _measure(capsys, *argv: str) -> dict:
    assert main(["measure", *argv, "--signal", "voltage", "--json", "-q",
                 "--pst-observation", "15"]) == 0
    (r,) = json.loads(capsys.readouterr().out)
    return r


def _check(streamed: dict, in_memory: dict) -> None:
    assert streamed["quantity"] == "voltage" and streamed["lamp"] == "230V"
    assert streamed["frequency_hz"] == pytest.approx(MAINS_HZ, rel=1e-4)
    # analytic: RMS of a sine of peak 325.27 V is 325.27 / sqrt(2) = 230.0 V (the slow
    # modulation adds a factor sqrt(1 + (DV/2)^2 / 2), below 1e-6)
    assert streamed["rms"] == pytest.approx(325.27 / np.sqrt(2), rel=1e-4)
    assert streamed["pst_detail"]["pinst_max"] == pytest.approx(1.0, rel=PINST_TOL)
    a = {k: v for k, v in streamed.items() if k not in ("notes", "warnings")}
    b = {k: v for k, v in in_memory.items() if k not in ("notes", "warnings")}
    compare(a, b)


def test_raw_voltage_streams(tmp_path, capsys, mains):
    # the command: measure mains.raw --raw-dtype float32 -r 4000 --signal voltage --stream
    path = tmp_path / "mains.raw"
    mains.tofile(path)
    common = (str(path), "--raw-dtype", "float32", "-r", str(FS))
    _check(_measure(capsys, *common, "--stream"), _measure(capsys, *common))


def test_long_voltage_streams_without_the_option(tmp_path, capsys, mains, monkeypatch):
    # above readers.STREAM_ABOVE_SAMPLES (2**25) a capture is streamed on its own; the bound is
    # lowered here so that the test stays small
    path = tmp_path / "mains.npy"
    np.save(path, mains)
    in_memory = _measure(capsys, str(path), "-r", str(FS))
    monkeypatch.setattr("flickerkit.readers.options.STREAM_ABOVE_SAMPLES", 10_000)
    capture = readers.read_capture(path, readers.ReadOptions(sample_rate_hz=FS))
    assert isinstance(capture.samples, readers.FileSignal)  # the path under test
    _check(_measure(capsys, str(path), "-r", str(FS)), in_memory)


def test_streamed_voltage_with_a_bad_sample_gives_one_line(tmp_path, capsys, mains):
    bad = mains.copy()
    bad[50_000] = np.nan
    path = tmp_path / "mains.raw"
    bad.tofile(path)
    code = main(["measure", str(path), "--raw-dtype", "float32", "-r", str(FS), "--signal",
                 "voltage", "--stream", "-q"])
    err = capsys.readouterr().err.strip()
    assert code == 1 and len(err.splitlines()) == 1 and "Traceback" not in err
    assert "sample 50000 is not a finite number" in err
