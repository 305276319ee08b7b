"""Speed of the measurement path (issue 2): run by hand, prints its figures.

The light is at 1234.56 Hz, whose period is not a round number of samples (at 1 kHz it is,
which flattered the FFT); bench_awkward.py has the goals of issue 13 over many fundamentals.

    python benchmarks/bench_measure.py [--rows 10000000]

Writes a two-column CSV of N rows (1 MS/s, 1234.56 Hz PWM at 30 % with 100 Hz ripple and
noise) to a temporary folder, then times: reading it, assess() on it, one numpy rfft
of the same length, and `flickerkit --help` start-up.
"""

from __future__ import annotations

import argparse
import os
import subprocess
import sys
import tempfile
import time

import numpy as np

sys.path.insert(0, os.path.join(os.path.dirname(__file__), ".."))


def main() -> None:
    ap = argparse.ArgumentParser()
    ap.add_argument("--rows", type=int, default=10_000_000)
    args = ap.parse_args()
    n = args.rows
    fs = 1e6
    rng = np.random.default_rng(0)
    t = np.arange(n) / fs
    x = (np.mod(t * 1234.56 + 0.1, 1.0) < 0.3) * (1 + 0.05 * np.sin(2 * np.pi * 100 * t))
    x = x + 0.01 * rng.standard_normal(n) + 0.02
    with tempfile.TemporaryDirectory() as d:
        path = os.path.join(d, "big.csv")
        t0 = time.perf_counter()
        import pandas as pd

        pd.DataFrame({"time_s": t, "light": x}).to_csv(path, index=False, float_format="%.8e")
        print(f"wrote {n:,} rows in {time.perf_counter() - t0:.1f} s (setup, not timed)")

        from flickerkit.assess import assess
        from flickerkit.readers import read_capture

        t0 = time.perf_counter()
        cap = read_capture(path)
        t_read = time.perf_counter() - t0
        t0 = time.perf_counter()
        a = assess(cap)
        t_assess = time.perf_counter() - t0
        t0 = time.perf_counter()
        np.fft.rfft(cap.samples)
        t_fft = time.perf_counter() - t0
        print(f"read CSV:        {t_read:.2f} s  ({n / t_read / 1e6:.1f} M rows/s)")
        print(f"assess:          {t_assess:.2f} s  (f = {a.frequency_hz:.4f} Hz, "
              f"PF = {a.percent_flicker:.2f} %, FI = {a.flicker_index:.4f})")
        print(f"read + assess:   {t_read + t_assess:.2f} s  (goal < 3 s)")
        print(f"numpy rfft:      {t_fft:.2f} s  -> assess / rfft = {t_assess / t_fft:.1f}x")
    runs = []
    for _ in range(5):
        t0 = time.perf_counter()
        subprocess.run([sys.executable, "-m", "flickerkit", "--help"], check=True,
                       capture_output=True)
        runs.append(time.perf_counter() - t0)
    print(f"flickerkit --help: best {min(runs) * 1e3:.0f} ms of 5 (goal < 300 ms)")


if __name__ == "__main__":
    main()
