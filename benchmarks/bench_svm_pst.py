"""Speed of SVM and Pst LM on a 10-minute capture at 20 kS/s (12 M samples).

Target (issue 3): SVM and Pst LM together in under 3 s on the project machine,
with memory bounded by a few copies of the capture.

The capture is an invented test signal: rectified-mains ripple at 100 Hz with
a 0.3 % slow modulation at 7 Hz and a little noise. Run from the repository
root::

    python3 benchmarks/bench_svm_pst.py [--repeat 3] [--seconds 600] [--rate 20000]

It prints the best time of each step over the repeats and the peak memory the
computation added (tracemalloc, numpy allocations included).
"""

from __future__ import annotations

import argparse
import sys
import time
import tracemalloc
import warnings
from pathlib import Path

import numpy as np

sys.path.insert(0, str(Path(__file__).resolve().parents[1]))

from flickerkit.errors import FlickerkitWarning  # noqa: E402
from flickerkit.flickermeter import pst_lm  # noqa: E402
from flickerkit.periodicity import fundamental_frequency  # noqa: E402
from flickerkit.spectrum import modulation_spectrum  # noqa: E402
from flickerkit.svm import svm_of_spectrum  # noqa: E402


def make_capture(seconds: float, rate: float) -> np.ndarray:
    n = int(seconds * rate)
    t = np.arange(n) / rate
    x = 0.6 + 0.4 * np.abs(np.sin(2 * np.pi * 50.0 * t + 0.2))
    x *= 1.0 + 0.003 * np.sin(2 * np.pi * 7.0 * t)
    x += np.random.default_rng(1).normal(0.0, 0.002, n)
    return x


def main() -> int:
    ap = argparse.ArgumentParser(description=__doc__.splitlines()[0])
    ap.add_argument("--repeat", type=int, default=3)
    ap.add_argument("--seconds", type=float, default=600.0)
    ap.add_argument("--rate", type=float, default=20_000.0)
    args = ap.parse_args()
    x = make_capture(args.seconds, args.rate)
    fs = args.rate
    print(f"capture: {x.size:,} samples, {args.seconds:g} s at {fs:g} S/s, "
          f"{x.nbytes / 2**20:.0f} MiB")
    best = {"svm": np.inf, "pst_lm": np.inf, "total": np.inf}
    warnings.simplefilter("ignore", FlickerkitWarning)
    for _ in range(args.repeat):
        t0 = time.perf_counter()
        period = fundamental_frequency(x, fs)
        spec = modulation_spectrum(x, fs, period)
        svm = svm_of_spectrum(spec)
        t1 = time.perf_counter()
        pst = pst_lm(x, fs)
        t2 = time.perf_counter()
        best["svm"] = min(best["svm"], t1 - t0)
        best["pst_lm"] = min(best["pst_lm"], t2 - t1)
        best["total"] = min(best["total"], t2 - t0)
    tracemalloc.start()
    period = fundamental_frequency(x, fs)
    svm_of_spectrum(modulation_spectrum(x, fs, period))
    _, peak_svm = tracemalloc.get_traced_memory()
    tracemalloc.reset_peak()
    pst_lm(x, fs)
    _, peak_pst = tracemalloc.get_traced_memory()
    tracemalloc.stop()
    print(f"SVM    = {svm.value:.4f} ({svm.method}), best of {args.repeat}: {best['svm']:.3f} s, "
          f"peak extra memory {peak_svm / x.nbytes:.1f} x capture")
    print(f"Pst LM = {pst.pst:.4f} ({pst.calibration}), best of {args.repeat}: "
          f"{best['pst_lm']:.3f} s, peak extra memory {peak_pst / x.nbytes:.2f} x capture")
    print(f"total (SVM + Pst LM), best: {best['total']:.3f} s  (target < 3 s)")
    return 0


if __name__ == "__main__":
    raise SystemExit(main())
