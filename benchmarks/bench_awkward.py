"""Speed at awkward fundamentals (issue 13): run by hand, prints its figures. Not part of the tests.

    python benchmarks/bench_awkward.py            # every figure (writes ~1 GB to a temp dir)
    python benchmarks/bench_awkward.py --quick    # a few minutes less: smaller, fewer cases
    python benchmarks/bench_awkward.py --measure-only   # figure 1 only (about 2 minutes)
    python benchmarks/bench_awkward.py --batch-only     # figure 4 only (about 10 s)

Light: invented PWM at 30 % duty with 5 % of 100 Hz ripple and noise at about 40 dB SNR, at
1234.56 Hz and at 20 seeded random fundamentals between 50 Hz and 20 kHz (log-uniform), where
the period is not a round number of samples. Every time is the wall time of a fresh process,
measured beside a bare numpy process in the same run, so the ratios carry the machine's load
(printed at the start and the end; the figures are only comparable at low load). The CPU time
of each process (user + system, with its workers) is printed beside: on a busy machine the
wall time is mostly waiting for a CPU.

Figures and goals:
  1. `measure` of a 1e7-sample .npy at each fundamental / a bare `python -c` that loads the
     same .npy and takes numpy.fft.rfft of it: median <= 3x, worst <= 4x; peak memory (VmHWM);
  2. a 2e8-sample float32 raw capture streamed: >= 20 M samples/s, peak memory < 1 GB;
  3. a 20,000-sample .npy `measure` / `python -c "import numpy"`: <= 2.5x (median of runs);
  4. `measure -j 2` of 1,000 captures of 20,000 samples: >= 200 captures/s.
"""

from __future__ import annotations

import argparse
import os
import resource
import statistics
import subprocess
import sys
import tempfile
import time

import numpy as np

ROOT = os.path.join(os.path.dirname(os.path.abspath(__file__)), "..")
ENV = {**os.environ, "PYTHONPATH": ROOT}
#: The measuring process runs the command line as a user's does (main() reads sys.argv) and
#: reports its own peak resident memory (VmHWM) on stderr.
_MEASURE = ("import sys; from flickerkit.cli import main; rc = main(); "
            "hwm = [l for l in open('/proc/self/status') if l.startswith('VmHWM')][0]; "
            "print('peak_kib', hwm.split()[1], file=sys.stderr); raise SystemExit(rc)")
_BARE_FFT = "import sys, numpy as np; np.fft.rfft(np.load(sys.argv[1]))"


def fundamentals(count: int) -> list[float]:
    rng = np.random.default_rng(13)
    return [1234.56] + [float(f) for f in np.exp(rng.uniform(np.log(50), np.log(20_000), count))]


def light(a: int, b: int, fs: float, f: float, rng) -> np.ndarray:
    t = np.arange(a, b) / fs
    x = (np.mod(t * f + 0.1, 1.0) < 0.3) * (1 + 0.05 * np.sin(2 * np.pi * 100.0 * t)) + 0.02
    return x + 0.003 * rng.standard_normal(t.size)


def run(args: list[str]) -> tuple[float, float | None]:
    """Wall time of a fresh Python process, and its peak memory [MiB] when it reports it.

    The process's CPU time (its own and its workers', user + system) goes to ``CPU[-1]``.
    """
    before = resource.getrusage(resource.RUSAGE_CHILDREN)
    t0 = time.perf_counter()
    r = subprocess.run([sys.executable, *args], capture_output=True, env=ENV, cwd=ROOT)
    wall = time.perf_counter() - t0
    after = resource.getrusage(resource.RUSAGE_CHILDREN)
    CPU.append(after.ru_utime + after.ru_stime - before.ru_utime - before.ru_stime)
    if r.returncode != 0:
        raise SystemExit(f"failed: {' '.join(args[:4])}...\n{r.stderr.decode()[-2000:]}")
    err = r.stderr.decode()
    peak = float(err.split("peak_kib")[1].split()[0]) / 1024 if "peak_kib" in err else None
    return wall, peak


#: CPU seconds of each process run, in order (on a loaded machine wall time is mostly waiting).
CPU: list[float] = []


def load() -> str:
    one, five, fifteen = os.getloadavg()
    return f"load average {one:.2f} / {five:.2f} / {fifteen:.2f} on {os.cpu_count()} CPUs"


def measure_1e7(d: str, freqs: list[float], n: int) -> None:
    ratios, peaks, walls, cpu_ratios = [], [], [], []
    for i, f in enumerate(freqs):
        path = os.path.join(d, "capture.npy")
        np.save(path, light(0, n, 1e6, f, np.random.default_rng(i)))
        bare, _ = run(["-c", _BARE_FFT, path])
        cpu_bare = CPU[-1]
        wall, peak = run(["-c", _MEASURE, "measure", path, "-r", "1e6", "--json", "-q"])
        cpu = CPU[-1]
        bare = (bare + run(["-c", _BARE_FFT, path])[0]) / 2  # either side of the measure
        cpu_bare = (cpu_bare + CPU[-1]) / 2
        ratios.append(wall / bare)
        cpu_ratios.append(cpu / cpu_bare)
        peaks.append(peak)
        walls.append(wall)
        print(f"   {f:9.3f} Hz: measure {wall:5.2f} s, bare numpy {bare:5.2f} s, "
              f"ratio {wall / bare:4.2f}x (CPU time {cpu_ratios[-1]:4.2f}x), peak {peak:5.0f} MiB",
              flush=True)
    worst = int(np.argmax(ratios))
    print(f"1. measure of {n:,} samples at {len(freqs)} fundamentals / bare numpy load+rfft: "
          f"median {statistics.median(ratios):.2f}x (goal <= 3), worst {ratios[worst]:.2f}x at "
          f"{freqs[worst]:.3f} Hz (goal <= 4); peak memory median "
          f"{statistics.median(peaks):.0f} MiB, worst {max(peaks):.0f} MiB; CPU-time ratio "
          f"median {statistics.median(cpu_ratios):.2f}x, worst {max(cpu_ratios):.2f}x")


def stream(d: str, freqs: list[float], n: int) -> None:
    for i, f in enumerate(freqs):
        path = os.path.join(d, "long.raw")
        rng = np.random.default_rng(100 + i)
        with open(path, "wb") as fh:
            for a in range(0, n, 8_000_000):
                light(a, min(n, a + 8_000_000), 1e6, f, rng).astype("<f4").tofile(fh)
        wall, peak = run(["-c", _MEASURE, "measure", path, "--raw-dtype", "float32", "-r",
                          "1e6", "--json", "-q"])
        os.remove(path)
        print(f"2. {n:,} float32 samples of {f:.3f} Hz streamed: {wall:.1f} s (with start-up) "
              f"= {n / wall / 1e6:.1f} M samples/s (goal >= 20); peak {peak:.0f} MiB "
              f"(goal < 1024); CPU {CPU[-1]:.1f} s = {n / CPU[-1] / 1e6:.1f} M samples per "
              f"CPU-second", flush=True)


def small(d: str, repeats: int) -> None:
    path = os.path.join(d, "short.npy")
    np.save(path, light(0, 20_000, 100_000.0, 1234.56, np.random.default_rng(5)))
    ratios = []
    for _ in range(repeats):
        bare, _ = run(["-c", "import numpy"])
        wall, _ = run(["-m", "flickerkit", "measure", path, "-r", "100000", "--json", "-q"])
        ratios.append(wall / bare)
    print(f"3. 20,000-sample .npy measure / python -c 'import numpy': median "
          f"{statistics.median(ratios):.2f}x, best {min(ratios):.2f}x of {repeats} "
          f"(goal <= 2.5)", flush=True)


def batch(d: str, count: int) -> None:
    rng = np.random.default_rng(3)
    folder = os.path.join(d, "batch")
    os.makedirs(folder)
    paths = []
    for i in range(count):
        p = os.path.join(folder, f"c{i:04d}.npy")
        f = float(np.exp(rng.uniform(np.log(50), np.log(5_000))))
        np.save(p, light(0, 20_000, 20_000.0, f, rng))
        paths.append(p)
    wall, _ = run(["-m", "flickerkit", "measure", *paths, "-r", "20000", "-j", "2", "--json",
                   "-q"])
    print(f"4. measure -j 2 of {count:,} captures of 20,000 samples: {wall:.1f} s (with "
          f"start-up) = {count / wall:.0f} captures/s (goal >= 200); CPU {CPU[-1]:.1f} s "
          f"(parent and workers) = {count / CPU[-1]:.0f} captures per CPU-second", flush=True)


def main() -> None:
    ap = argparse.ArgumentParser(description=__doc__,
                                 formatter_class=argparse.RawDescriptionHelpFormatter)
    ap.add_argument("--quick", action="store_true",
                    help="1e6 samples at 5 fundamentals, 2e7 streamed, 100 captures")
    ap.add_argument("--skip-stream", action="store_true", help="skip figure 2")
    ap.add_argument("--measure-only", action="store_true", help="figure 1 only")
    ap.add_argument("--batch-only", action="store_true", help="figure 4 only")
    args = ap.parse_args()
    print(f"start: {load()}", flush=True)
    if os.environ.get("PYTHONDONTWRITEBYTECODE"):
        print("note: PYTHONDONTWRITEBYTECODE is set, so every measuring process compiles "
              "flickerkit's modules (about 0.1 s; an installed package has them compiled)",
              flush=True)
    quick = args.quick
    freqs = fundamentals(4 if quick else 20)
    with tempfile.TemporaryDirectory() as d:
        if args.batch_only:
            batch(d, 100 if quick else 1000)
            print(f"end: {load()}")
            return
        measure_1e7(d, freqs, 1_000_000 if quick else 10_000_000)
        if args.measure_only:
            print(f"end: {load()}")
            return
        if not args.skip_stream:
            stream(d, freqs[:1] if quick else freqs[:3], 20_000_000 if quick else 200_000_000)
        small(d, 5 if quick else 9)
        batch(d, 100 if quick else 1000)
    print(f"end: {load()}")


if __name__ == "__main__":
    main()
