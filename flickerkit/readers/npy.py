"""NumPy ``.npy`` captures.

A 1-D signal (give the sample rate), or 2-D columns with time in seconds first.
"""

from __future__ import annotations

from pathlib import Path

import numpy as np

from ..errors import InputError
from .channels import channel_of, unnamed_choice
from .filesignal import FileSignal, file_signal
from .options import ReadOptions, streams
from .result import RATE_GIVEN, FormatRead, binary_read
from .table_time import MIN_UNITLESS_RATE_HZ
from .timebase import uniform, uniform_blocks


def _npy_time_checked(data, fs: float, name: str) -> float:
    """The rate from column 1 of a 2-D ``.npy``, refused if it cannot be seconds.

    Column 1 is seconds by convention, with no unit stated: a sample count
    (0, 1, 2, ...) or a rate too slow for light is refused, as for a text table.
    """
    head = np.asarray(data[:50, 0], dtype=np.float64)
    if head.size >= 2 and np.all(np.diff(head) == 1) and np.all(head == np.round(head)):
        raise InputError("column 1 counts samples (0, 1, 2, ...), it is not time in seconds: "
                         "give --sample-rate HZ", source=name)
    if fs < MIN_UNITLESS_RATE_HZ:
        raise InputError(f"column 1, read as seconds, gives a sample rate of {fs:.6g} Hz, too "
                         f"slow for light flicker (at least {MIN_UNITLESS_RATE_HZ:g} Hz "
                         f"expected): save time in seconds or give --sample-rate HZ",
                         source=name)
    return fs


def read_npy(p: Path, options: ReadOptions) -> FormatRead:
    """Read a ``.npy`` capture: a 1-D signal, or 2-D columns (time in seconds first)."""
    name = str(p)
    try:
        data = np.load(p, mmap_mode="r", allow_pickle=False)
    except (ValueError, EOFError, OSError) as exc:
        raise InputError(f"not a readable .npy file ({exc})", source=name) from None
    if data.dtype.names:
        raise InputError("structured .npy arrays are not supported; save plain columns",
                         source=name)
    if not (np.issubdtype(data.dtype, np.number) and not np.iscomplexobj(data)):
        raise InputError(f".npy holds {data.dtype}, not real numbers", source=name)
    if data.ndim not in (1, 2) or data.size == 0:
        raise InputError(f".npy array must be 1-D or 2-D and non-empty, got shape {data.shape}",
                         source=name)
    notes: list[str] = []
    lazy = streams(int(data.shape[0]), options)
    time_base = RATE_GIVEN if options.sample_rate_hz is not None else "column 1 (seconds)"

    def done(samples: np.ndarray | FileSignal, fs: float, col: int, notes: list[str],
             choice: list[str]) -> FormatRead:
        return binary_read(samples, fs, notes, choice, fmt="NumPy .npy", column=f"column {col}",
                           time_base=time_base)

    if data.ndim == 1 or options.sample_rate_hz:
        if not options.sample_rate_hz:
            raise InputError("a 1-D .npy holds no time: give --sample-rate HZ", source=name)
        sig, col = channel_of(data, options, name, ".npy array")
        choice = unnamed_choice(data.shape[1] if data.ndim == 2 else 1, options, name,
                                ".npy array")
        fs = float(options.sample_rate_hz)
        if lazy:
            return done(file_signal(data, p, col - 1), fs, col, notes, choice)
        x = np.asarray(sig)
    else:
        if data.shape[1] < 2:
            raise InputError("a 2-D .npy needs a time column and a signal column, or "
                             "--sample-rate", source=name)
        opts = options if options.column is not None else ReadOptions(column=2)
        sig, col = channel_of(data, opts, name, ".npy array")
        choice = unnamed_choice(data.shape[1] - 1, options, name, ".npy array")
        if col == 1:
            raise InputError("column 1 of a 2-D .npy is time; choose a signal column",
                             source=name)
        if lazy:
            if options.resample:
                raise InputError("--resample needs the capture in memory; it is too long to "
                                 "stream with resampling", source=name)
            fs = _npy_time_checked(data, uniform_blocks(file_signal(data, p, 0), name, 0),
                                   name)
            return done(file_signal(data, p, col - 1), fs, col, notes, choice)
        t = np.asarray(data[:, 0], dtype=np.float64)
        x, fs, notes = uniform(t, np.asarray(sig, dtype=np.float64), options.resample, name, 0)
        fs = _npy_time_checked(data, fs, name)
    if x.dtype != np.float64:
        x = x.astype(np.float64)
    if not np.all(np.isfinite(x)):
        i = int(np.flatnonzero(~np.isfinite(x))[0])
        raise InputError(f"sample {i} is not a finite number", source=name)
    return done(x, fs, col, notes, choice)
