"""Time bases of captures: is a time column increasing and uniform, and at what rate.

Shared by the text-table reader (:mod:`.table_read`) and the 2-D ``.npy``
reader (:mod:`.npy`).
"""

from __future__ import annotations

import numpy as np

from ..errors import InputError

#: A sample this far (in sample intervals) from a uniform grid makes the time non-uniform.
UNIFORM_TOLERANCE = 0.5

#: Sample rates outside this range come from a wrong time unit or a broken file [Hz].
SAMPLE_RATE_RANGE_HZ = (1e-6, 1e12)


def check_rate(fs: float, name: str) -> float:
    """Return ``fs`` [Hz] if in :data:`SAMPLE_RATE_RANGE_HZ`; else refuse it (wrong time unit)."""
    lo, hi = SAMPLE_RATE_RANGE_HZ
    if not np.isfinite(fs) or not lo <= fs <= hi:
        raise InputError(f"the time column gives a sample rate of {fs:.3g} Hz, outside "
                         f"{lo:g} to {hi:g} Hz: check the time unit (--time-unit)", source=name)
    return float(fs)


def uniform(t: np.ndarray, x: np.ndarray, resample: bool, name: str,
             skip: int) -> tuple[np.ndarray, float, list[str]]:
    """Check that time is increasing and uniform; resample on request."""
    with np.errstate(all="ignore"):
        return _uniform_checked(t, x, resample, name, skip)


def _worst_deviation(t: np.ndarray, fs: float, block: int = 1 << 20) -> tuple[int, float]:
    """Return where and how far ``t`` departs most from a uniform grid [sample intervals].

    Worked in blocks so a long time column needs no full-length temporaries.
    """
    t0 = t[0]
    worst, worst_dev = 0, -1.0
    for a in range(0, t.size, block):
        seg = t[a : a + block]
        dev = np.abs(seg - (t0 + np.arange(a, a + seg.size) / fs)) * fs
        i = int(np.argmax(dev))
        if dev[i] > worst_dev:
            worst, worst_dev = a + i, float(dev[i])
    return worst, worst_dev


def _uniform_checked(t, x, resample, name, skip):
    notes: list[str] = []
    dt = np.diff(t)
    if dt.size == 0:
        raise InputError("a capture needs at least 2 rows", source=name)
    bad = np.flatnonzero(dt <= 0)
    span = t[-1] - t[0]
    if bad.size == 0 and span > 0:
        fs = check_rate((t.size - 1) / span, name)
        worst, worst_dev = _worst_deviation(t, fs)
        if worst_dev <= UNIFORM_TOLERANCE:
            return x, float(fs), notes
        if not resample:
            raise InputError(
                f"time steps are not uniform: the sample here is {worst_dev:.3g} sample "
                f"intervals off a uniform grid at {fs:.6g} Hz (gaps or jitter); use "
                f"--resample to interpolate onto a uniform grid", source=name,
                line=skip + worst + 1)
    elif not resample:
        i = int(bad[0]) + 1
        what = "repeats" if dt[bad[0]] == 0 else "goes backwards"
        raise InputError(f"time {what} here ({t[i - 1]:.9g} then {t[i]:.9g} s); use --resample "
                         f"to sort and interpolate onto a uniform grid", source=name,
                         line=skip + i + 1)
    order = np.argsort(t, kind="stable")
    ts, xs = t[order], x[order]
    uniq, inv = np.unique(ts, return_inverse=True)
    if uniq.size < 2:
        raise InputError("all time stamps are equal", source=name)
    xm = np.bincount(inv, weights=xs) / np.bincount(inv)
    fs = check_rate((uniq.size - 1) / (uniq[-1] - uniq[0]), name)
    grid = uniq[0] + np.arange(uniq.size) / fs
    out = np.interp(grid, uniq, xm)
    notes.append(f"time was not uniform or not increasing: {t.size} rows sorted, "
                 f"{t.size - uniq.size} duplicate time(s) averaged, resampled linearly to "
                 f"{fs:.6g} Hz")
    return out, float(fs), notes


def uniform_blocks(t, name: str, skip: int, block: int = 1 << 22) -> float:
    """Check, block by block, that a long time column is increasing and uniform."""
    n = t.shape[0]
    t0 = float(t[0:1][0])
    t1 = float(t[n - 1 : n][0])
    with np.errstate(all="ignore"):
        fs = check_rate((n - 1) / (t1 - t0), name) if t1 > t0 else None
    if fs is None:
        raise InputError("time does not increase from the first row to the last", source=name)
    prev = None
    for a in range(0, n, block):
        b = np.asarray(t[a : a + block], dtype=np.float64)
        seq = b if prev is None else np.concatenate([[prev], b])
        dt = np.diff(seq)
        bad = np.flatnonzero(~(dt > 0))
        if bad.size:
            i = a + int(bad[0]) + (0 if prev is None else -1) + 1
            raise InputError("time repeats or goes backwards here; --resample needs the "
                             "capture in memory", source=name, line=skip + i + 1)
        dev = np.abs(b - (t0 + np.arange(a, a + b.size) / fs)) * fs
        worst = int(np.argmax(dev))
        if dev[worst] > UNIFORM_TOLERANCE:
            raise InputError(f"time steps are not uniform: the sample here is {dev[worst]:.3g} "
                             f"sample intervals off a uniform grid at {fs:.6g} Hz",
                             source=name, line=skip + a + worst + 1)
        prev = float(b[-1])
    return float(fs)
