"""Scale and speed figures (issue 7): run by hand, prints each figure. Not part of the tests.

The light is at 1234.56 Hz, whose period is not a round number of samples (at 1 kHz it is,
which flattered the FFT); bench_awkward.py has the goals of issue 13 over many fundamentals.

    python benchmarks/bench_scale.py                 # every figure (writes ~2.4 GB to a temp dir)
    python benchmarks/bench_scale.py --skip-big      # without the 600 M-sample streaming case

Figures and goals:
  1. all metrics of `measure` on 1e7 samples in memory / one numpy.fft.rfft of the same length
     (goal <= 4x);
  2. CSV ingest of a two-column file (goal >= 8 M rows/s);
  3. 600 M samples (10 min at 1 MS/s, float32 raw) streamed: peak resident memory of the
     measuring process (goal < 1 GB) and throughput (goal >= 20 M samples/s);
  4. `flickerkit --help` start-up (goal < 0.3 s);
  5. a batch of 1,000 short captures on 2 workers: captures per second.
"""

from __future__ import annotations

import argparse
import os
import subprocess
import sys
import tempfile
import time

import numpy as np

ROOT = os.path.join(os.path.dirname(os.path.abspath(__file__)), "..")
sys.path.insert(0, ROOT)
ENV = {**os.environ, "PYTHONPATH": ROOT}


def signal(a: int, b: int, fs: float, rng) -> np.ndarray:
    t = np.arange(a, b) / fs
    x = (np.mod(t * 1234.56 + 0.1, 1.0) < 0.3) * (1 + 0.05 * np.sin(2 * np.pi * 100 * t))
    return x + 0.01 * rng.standard_normal(t.size) + 0.02


def in_memory() -> None:
    from flickerkit.assess import assess
    from flickerkit.capture import make_capture

    x = signal(0, 10_000_000, 1e6, np.random.default_rng(0))
    cap = make_capture(x, 1e6)
    assess(cap)  # warm imports and caches
    ta, tf = [], []
    for _ in range(3):
        t0 = time.perf_counter()
        assess(cap)
        ta.append(time.perf_counter() - t0)
        t0 = time.perf_counter()
        np.fft.rfft(x)
        tf.append(time.perf_counter() - t0)
    print(f"1. assess of 1e7 samples: best {min(ta):.2f} s; numpy rfft best {min(tf):.3f} s; "
          f"ratio {min(ta) / min(tf):.1f}x (goal <= 4x)")


def csv_ingest(d: str) -> None:
    import pandas as pd

    from flickerkit.readers import read_capture

    n = 10_000_000
    path = os.path.join(d, "two.csv")
    x = signal(0, n, 1e6, np.random.default_rng(1))
    pd.DataFrame({"time_s": np.arange(n) / 1e6, "light": x}).to_csv(
        path, index=False, float_format="%.8e")
    runs = []
    for _ in range(2):
        t0 = time.perf_counter()
        read_capture(path)
        runs.append(time.perf_counter() - t0)
    print(f"2. CSV ingest, 2 columns, {n:,} rows: best {min(runs):.2f} s = "
          f"{n / min(runs) / 1e6:.1f} M rows/s (goal >= 8)")


def big_stream(d: str) -> None:
    n, fs = 600_000_000, 1e6
    path = os.path.join(d, "ten_minutes.raw")
    rng = np.random.default_rng(2)
    with open(path, "wb") as fh:
        for a in range(0, n, 8_000_000):
            signal(a, min(n, a + 8_000_000), fs, rng).astype("<f4").tofile(fh)
    # the measuring process reports its own peak: VmHWM of its address space (ru_maxrss would
    # carry the forking parent's pages over the exec)
    code = ("import sys; from flickerkit.cli import main; rc = main(sys.argv[1:]); "
            "hwm = [l for l in open('/proc/self/status') if l.startswith('VmHWM')][0]; "
            "print('peak_kib', hwm.split()[1], file=sys.stderr); raise SystemExit(rc)")
    t0 = time.perf_counter()
    r = subprocess.run([sys.executable, "-c", code, "measure", path, "--raw-dtype", "float32",
                        "-r", str(fs), "--json", "-q"], capture_output=True, env=ENV)
    wall = time.perf_counter() - t0
    assert r.returncode == 0, r.stderr.decode()
    peak = int(r.stderr.decode().split("peak_kib")[1].split()[0]) / 1024
    print(f"3. 600 M samples streamed from float32 raw: {wall:.1f} s (with start-up) = "
          f"{n / wall / 1e6:.1f} M samples/s (goal >= 20); peak resident {peak:.0f} MiB "
          f"(goal < 1 GB)")


def startup() -> None:
    runs = []
    for _ in range(7):
        t0 = time.perf_counter()
        subprocess.run([sys.executable, "-m", "flickerkit", "--help"], check=True,
                       capture_output=True, env=ENV)
        runs.append(time.perf_counter() - t0)
    print(f"4. flickerkit --help: best {min(runs) * 1e3:.0f} ms, median "
          f"{sorted(runs)[3] * 1e3:.0f} ms (goal < 300 ms)")


def batch(d: str) -> None:
    from flickerkit.assess import AssessSettings
    from flickerkit.batch import measure_many
    from flickerkit.readers import ReadOptions

    rng = np.random.default_rng(3)
    paths = []
    for i in range(1000):
        p = os.path.join(d, f"c{i:04d}.npy")
        np.save(p, signal(0, 20_000, 20_000.0, rng) * (1 + 0.001 * i))
        paths.append(p)
    t0 = time.perf_counter()
    out = measure_many(paths, ReadOptions(sample_rate_hz=20_000.0), AssessSettings(), workers=2)
    wall = time.perf_counter() - t0
    assert all(o.record for o in out)
    print(f"5. batch of 1,000 captures of 20,000 samples on 2 workers: {wall:.1f} s = "
          f"{1000 / wall:.0f} captures/s")


def main() -> None:
    ap = argparse.ArgumentParser(description=__doc__,
                                 formatter_class=argparse.RawDescriptionHelpFormatter)
    ap.add_argument("--skip-big", action="store_true", help="skip the 600 M-sample case")
    args = ap.parse_args()
    with tempfile.TemporaryDirectory() as d:
        in_memory()
        csv_ingest(d)
        if not args.skip_big:
            big_stream(d)
        startup()
        batch(d)


if __name__ == "__main__":
    main()
