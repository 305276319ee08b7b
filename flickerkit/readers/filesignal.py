"""Samples in a binary file, read in slices (never memory-mapped): the long capture's signal."""

from __future__ import annotations

from pathlib import Path

import numpy as np

from ..errors import InputError


class FileSignal:
    """Samples stored in a binary file, read in slices as float64 (never memory-mapped).

    Reading with ``seek`` and ``numpy.fromfile`` keeps the process's resident
    memory at the size of the slices read, whatever the file's length.

    Parameters
    ----------
    path : str
        The file.
    dtype : numpy.dtype
        Stored sample format.
    offset : int
        Byte offset of the first sample.
    n : int
        Samples (frames) in the file.
    channels, channel : int
        Interleaved channels, and the 0-based one to read.
    dark : float
        Subtracted from every sample [input unit].
    zero, scale : float
        Stored value of zero and the unit of one stored step: a sample is
        ``(stored - zero) * scale - dark`` (PCM: 128 and 1/128 for unsigned
        8-bit; default 0 and 1).
    """

    def __init__(self, path: str, dtype, offset: int, n: int, *, channels: int = 1,
                 channel: int = 0, dark: float = 0.0, zero: float = 0.0,
                 scale: float = 1.0) -> None:
        self.path = str(path)
        self.stored = np.dtype(dtype)
        self.offset = int(offset)
        self.channels = int(channels)
        self.channel = int(channel)
        self.dark = float(dark)
        self.zero = float(zero)
        self.scale = float(scale)
        self.shape = (int(n),)
        self.dtype = np.dtype(np.float64)
        self.ndim = 1
        # a view made by with_dark keeps the signal whose temporary file it reads alive
        self._owner: FileSignal | None = None

    def __len__(self) -> int:
        return self.shape[0]

    def with_dark(self, dark: float) -> "FileSignal":
        out = FileSignal(self.path, self.stored, self.offset, self.shape[0],
                         channels=self.channels, channel=self.channel, dark=self.dark + dark,
                         zero=self.zero, scale=self.scale)
        out._owner = self  # keeps a temporary file alive as long as any view of it
        return out

    def __getitem__(self, key: slice) -> np.ndarray:
        if not isinstance(key, slice):
            raise TypeError("a FileSignal is read in slices")
        a, b, step = key.indices(self.shape[0])
        if step != 1:
            raise TypeError("a FileSignal is read in contiguous slices")
        if b <= a:
            return np.zeros(0)
        frame = self.stored.itemsize * self.channels
        with open(self.path, "rb") as fh:
            fh.seek(self.offset + a * frame)
            raw = np.fromfile(fh, dtype=self.stored, count=(b - a) * self.channels)
        if raw.size < (b - a) * self.channels:
            raise InputError(f"file ends early: expected {(b - a) * self.channels} values at "
                             f"sample {a}, found {raw.size}", source=self.path)
        out = raw.reshape(-1, self.channels)[:, self.channel].astype(np.float64)
        if self.zero:
            out -= self.zero
        if self.scale != 1.0:
            out *= self.scale
        if self.dark:
            out -= self.dark
        return out

    def __array__(self, dtype=None, copy=None):
        a = self[:]
        return a.astype(dtype) if dtype is not None else a


def file_signal(arr: np.ndarray, path: Path, column: int, *, zero: float = 0.0,
                scale: float = 1.0) -> FileSignal:
    """A FileSignal over one column of a memory-mapped 1-D or 2-D C-ordered array.

    Parameters
    ----------
    arr : numpy.memmap
        The file's array.
    path : pathlib.Path
        The file.
    column : int
        0-based column (channel) to read.
    zero, scale : float
        As in :class:`FileSignal` (PCM levels).
    """
    if not isinstance(arr, np.memmap) or (arr.ndim == 2 and not arr.flags.c_contiguous):
        raise InputError("cannot stream this file's layout (Fortran-ordered); save it C-ordered",
                         source=str(path))
    channels = 1 if arr.ndim == 1 else arr.shape[1]
    return FileSignal(str(path), arr.dtype, arr.offset, arr.shape[0], channels=channels,
                      channel=column, zero=zero, scale=scale)
