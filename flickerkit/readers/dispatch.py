"""The dispatcher: a capture file, checked, to the reader of its kind.

The reader's account becomes a :class:`Capture` (with the dark level subtracted).
"""

from __future__ import annotations

import os
import stat
from pathlib import Path

import numpy as np

from ..capture import Capture, make_capture, make_lazy_capture
from ..errors import InputError
from ..fileio import note_input
from .dark import dark_level
from .filesignal import FileSignal
from .kinds import RAW_SUFFIXES
from .linebounds import first_line_bounded, lines_bounded
from .npy import read_npy
from .options import STREAM_ABOVE_TEXT_BYTES, ReadOptions
from .raw import read_raw
from .result import FormatRead
from .table_read import read_table, stream_table
from .wav import read_wav


def read_capture(path: str | os.PathLike[str], options: ReadOptions | None = None) -> Capture:
    """Read a capture file and apply the dark level.

    Parameters
    ----------
    path : str or path-like
        ``.wav``, ``.npy``, ``.raw``/``.bin`` (give ``raw_dtype``), or a text
        table (``.csv``, ``.txt``, ``.tsv``, ``.dat`` or any other suffix).
    options : ReadOptions, optional

    Returns
    -------
    Capture

    Raises
    ------
    InputError
        With the file, and the line or column where it applies.
    """
    options = options or ReadOptions()
    p = Path(path)
    name = str(path)
    note_input(p)
    try:
        st = os.stat(p)
    except FileNotFoundError:
        raise InputError("no such file", source=name) from None
    except OSError as exc:
        raise InputError(f"cannot read the capture ({exc.strerror or exc})", source=name) \
            from None
    if stat.S_ISDIR(st.st_mode):
        raise InputError("is a folder, not a capture file", source=name)
    if not stat.S_ISREG(st.st_mode):
        kind = "a FIFO (named pipe)" if stat.S_ISFIFO(st.st_mode) else "a device or socket"
        raise InputError(f"cannot read the capture: it is {kind}, not a regular file",
                         source=name)
    if not os.access(p, os.R_OK):
        raise InputError("cannot read the capture (permission denied)", source=name)
    size = st.st_size
    if size == 0:
        raise InputError("file is empty", source=name)
    suffix = p.suffix.lower()
    got: FormatRead
    if suffix in RAW_SUFFIXES:
        got = read_raw(p, options)
    elif suffix == ".wav":
        got = read_wav(p, options)
    elif suffix == ".npy":
        got = read_npy(p, options)
    elif options.stream or (options.stream is None and size > STREAM_ABOVE_TEXT_BYTES):
        first_line_bounded(p, size)
        got = stream_table(p, options)
    else:
        first_line_bounded(p, size)
        lines_bounded(p, size)
        got = read_table(p, options)
    read = got.record()
    meta = {"file": name, "file_size_bytes": size, **got.meta, "read": read.to_dict()}
    samples, notes = got.samples, got.notes
    if options.dark is not None:
        dark, dark_note = dark_level(options.dark, options, name)
        if isinstance(samples, FileSignal):
            samples = samples.with_dark(dark)
        else:
            samples = np.asarray(samples, dtype=np.float64) - dark
        notes = [*notes, dark_note]
        meta["dark_level"] = dark
    fs, warns = got.sample_rate_hz, got.warnings
    if isinstance(samples, FileSignal):
        meta["streamed"] = True
        return make_lazy_capture(samples, fs, label=p.name, source=name,
                                 quantity=options.quantity, notes=notes, warnings=warns,
                                 meta=meta, read=read)
    return make_capture(samples, fs, label=p.name, source=name, quantity=options.quantity,
                        notes=notes, warnings=warns, meta=meta, read=read)
