"""Speed of brightness tables (issue 5): run by hand, prints its figures.

    python benchmarks/bench_steps.py [--steps 65536] [--bits 16] [--repeat 5]

Target: a 65,536-step CIE 1976 L* table on a 16-bit counter with per-step flicker
(percent flicker, flicker index, IEEE 1789 region, SVM) under 1 s. The figures are
taken in-process after the imports (colour-science's import, about 1 s, is timed
apart), best of --repeat runs, at PWM frequencies of 100 Hz (20 harmonics below
2 kHz), 1 kHz and 25 kHz; then the C header, JSON rows and the whole command in a
fresh process.
"""

from __future__ import annotations

import argparse
import os
import subprocess
import sys
import tempfile
import time

sys.path.insert(0, os.path.join(os.path.dirname(__file__), ".."))


def best(fn, repeat: int) -> float:
    times = []
    for _ in range(repeat):
        t0 = time.perf_counter()
        fn()
        times.append(time.perf_counter() - t0)
    return min(times)


def main() -> None:
    ap = argparse.ArgumentParser()
    ap.add_argument("--steps", type=int, default=65_536)
    ap.add_argument("--bits", type=int, default=16)
    ap.add_argument("--repeat", type=int, default=5)
    args = ap.parse_args()

    t0 = time.perf_counter()
    from flickerkit import curves

    curves._colour()
    from flickerkit import assess, ieee1789, stepflicker, steps, svm  # noqa: F401
    from flickerkit.export.cheader import table_header

    print(f"imports (colour-science, scipy, flickerkit): {time.perf_counter() - t0:.2f} s")
    n, b = args.steps, args.bits
    t = best(lambda: steps.build_table(n, bits=b), args.repeat)
    print(f"{n:,}-step L* table, {b}-bit, no flicker: {t * 1e3:.0f} ms")
    for f in (100.0, 1000.0, 25_000.0):
        t = best(lambda f=f: steps.build_table(n, bits=b, pwm_frequency_hz=f), args.repeat)
        verdict = "under 1 s" if t < 1.0 else "OVER 1 s"
        print(f"{n:,}-step L* table, {b}-bit, per-step flicker at {f:g} Hz: "
              f"{t * 1e3:.0f} ms ({verdict})")
    table = steps.build_table(n, bits=b, pwm_frequency_hz=1000.0)
    t = best(lambda: table.summary(), args.repeat)
    print(f"summary: {t * 1e3:.0f} ms")
    t = best(lambda: table.to_dict(), args.repeat)
    print(f"JSON-ready rows and summary: {t * 1e3:.0f} ms")
    t = best(lambda: table_header(table), args.repeat)
    print(f"C header text: {t * 1e3:.0f} ms")
    with tempfile.TemporaryDirectory() as d:
        out = os.path.join(d, "t.h")
        cmd = [sys.executable, "-m", "flickerkit", "steps", "-n", str(n), "--bits", str(b),
               "--pwm-frequency", "1000", "--format", "c", "-o", out, "-q"]
        env = dict(os.environ, PYTHONPATH=os.path.join(os.path.dirname(__file__), ".."))
        t0 = time.perf_counter()
        subprocess.run(cmd, check=True, env=env)
        print(f"whole command in a fresh process (imports included), C header to a file: "
              f"{time.perf_counter() - t0:.2f} s")


if __name__ == "__main__":
    main()
