"""Raw binary captures (``.raw``, ``.bin``): little-endian samples, interleaved channels."""

from __future__ import annotations

from pathlib import Path

import numpy as np

from ..errors import InputError
from .channels import column_number, unnamed_choice
from .filesignal import FileSignal
from .options import ReadOptions, streams
from .result import RATE_GIVEN, FormatRead, binary_read


#: Sample formats of raw binary files (little-endian).
_RAW_DTYPES = ("float32", "float64", "int8", "uint8", "int16", "uint16", "int32", "uint32")


def read_raw(p: Path, options: ReadOptions) -> FormatRead:
    """Read a raw binary capture (sample format, rate and channels given in ``options``)."""
    name = str(p)
    if not options.raw_dtype:
        raise InputError(f"a raw binary file needs its sample format: give --raw-dtype "
                         f"({', '.join(_RAW_DTYPES)})", source=name)
    if options.raw_dtype not in _RAW_DTYPES:
        raise InputError(f"unknown raw sample format {options.raw_dtype!r}; use one of "
                         f"{', '.join(_RAW_DTYPES)}", source="--raw-dtype")
    if not options.sample_rate_hz:
        raise InputError("a raw binary file holds no time: give --sample-rate HZ", source=name)
    ch = int(options.channels)
    if ch < 1:
        raise InputError(f"must be at least 1, got {ch}", source="--raw-channels")
    dtype = np.dtype(options.raw_dtype).newbyteorder("<")
    frame = dtype.itemsize * ch
    size = p.stat().st_size
    n = size // frame
    if n < 2:
        raise InputError(f"raw file holds {n} sample(s) of {options.raw_dtype} x {ch}",
                         source=name)
    col = column_number(options.column, ch, "raw file", name)
    notes = [f"raw {options.raw_dtype} little-endian, {ch} channel(s), sample rate "
             f"{float(options.sample_rate_hz):g} Hz given"]
    warns = unnamed_choice(ch, options, name, "raw file")
    if size % frame:
        # a whole file of samples divides evenly; a remainder suggests a header, a wrong
        # --raw-dtype or a wrong --raw-channels, any of which garbles every sample
        warns.append(f"{size % frame} trailing byte(s) ignored: the file is not a whole number "
                     f"of {options.raw_dtype} x {ch} samples; check --raw-dtype and "
                     f"--raw-channels")
    sig = FileSignal(name, dtype, 0, n, channels=ch, channel=col - 1)
    return binary_read(sig if streams(n, options) else sig[:], float(options.sample_rate_hz),
                       notes, warns, fmt=f"raw {options.raw_dtype}", column=f"channel {col}",
                       time_base=RATE_GIVEN)


