"""How to read a capture (:class:`ReadOptions`), and its one builder.

The command line and a project file's ``[read]`` table share the builder.
Standard library only.
"""

from __future__ import annotations

from dataclasses import dataclass
from pathlib import Path
from typing import Any


#: Captures longer than this are read block by block [samples] (2**25: 256 MiB as float64).
STREAM_ABOVE_SAMPLES = 2**25
#: Text tables larger than this are converted in chunks and read block by block [bytes].
STREAM_ABOVE_TEXT_BYTES = 1 << 30
#: The reading settings the command line and a project file's ``[read]`` and ``[[capture]]``
#: tables share, by their keyword (and project key) names in :func:`build_read_options`.
SHARED_SETTINGS = ("column", "sample_rate_hz", "time_unit", "dark", "resample", "fill_gaps")


@dataclass(frozen=True)
class ReadOptions:
    """How to read a capture.

    Attributes
    ----------
    column : str or int or None
        Signal column: a header name or a 1-based column number (for WAV
        files the channel number, for 2-D ``.npy`` the column number).
        Default: the first column that is not time.
    sample_rate_hz : float or None
        Sample rate [Hz]; needed when the file has no time column and no
        sample rate of its own. Given together with a time column, it wins.
    time_unit : str or None
        Unit of the time column (s, ms, us, µs, ns), overriding the header.
    dark : float or str or None
        Dark level to subtract: a number in the signal's unit, or the path
        of a dark capture whose mean is used.
    resample : bool
        Resample non-uniform or unordered time onto a uniform grid instead of
        refusing the file.
    fill_gaps : bool
        Fill blank or NaN cells by linear interpolation instead of refusing.
    quantity : str
        ``"light"`` or ``"voltage"``.
    raw_dtype : str or None
        Sample format of a raw binary file (``.raw``, ``.bin``): ``float32``,
        ``float64``, ``int16``, ``int32``, ``uint16``..., little-endian.
    channels : int
        Interleaved channels in a raw binary file.
    stream : bool or None
        Read the capture block by block instead of into memory. ``None``
        (default) streams when the capture holds more than
        :data:`STREAM_ABOVE_SAMPLES` samples (text: more than
        :data:`STREAM_ABOVE_TEXT_BYTES` bytes).
    require_column : bool
        Refuse a text table in which several columns could be the light and
        none is named (``report`` sets it), instead of measuring the first
        with a warning.
    """

    column: str | int | None = None
    sample_rate_hz: float | None = None
    time_unit: str | None = None
    dark: float | str | None = None
    resample: bool = False
    fill_gaps: bool = False
    quantity: str = "light"
    raw_dtype: str | None = None
    channels: int = 1
    stream: bool | None = None
    require_column: bool = False


def dark_option(dark: float | str | None, base: Path | None = None) -> float | str | None:
    """Turn a dark-level setting into what the reader takes: a number, or a dark capture's path.

    Parameters
    ----------
    dark : float or str or None
        A number [signal unit], a text that reads as one, or a path.
    base : pathlib.Path, optional
        Folder a relative path is taken from (a project file's folder);
        default: as given (the working folder).

    Returns
    -------
    float or str or None
    """
    if not isinstance(dark, str):
        return dark
    try:
        return float(dark)
    except ValueError:
        return str(base / dark) if base is not None else dark


def build_read_options(*, column: str | int | None = None, sample_rate_hz: float | None = None,
                       time_unit: str | None = None, dark: float | str | None = None,
                       resample: bool = False, fill_gaps: bool = False,
                       base: Path | None = None, **more: Any) -> ReadOptions:
    """ReadOptions from the settings the CLI and a project file share (one builder for both).

    A project's ``[read]`` table, its keys being :data:`SHARED_SETTINGS`,
    builds with ``build_read_options(**table, base=folder)``.

    Parameters
    ----------
    column, sample_rate_hz, time_unit, resample, fill_gaps
        As in :class:`ReadOptions` (sample rate in [Hz]).
    dark : float or str or None
        See :func:`dark_option`.
    base : pathlib.Path, optional
        Folder a relative dark-capture path is taken from.
    **more
        Other :class:`ReadOptions` fields (``quantity``, ``raw_dtype``,
        ``channels``, ``stream``, ``require_column``).

    Returns
    -------
    ReadOptions
    """
    return ReadOptions(column=column, sample_rate_hz=sample_rate_hz, time_unit=time_unit,
                       dark=dark_option(dark, base), resample=bool(resample),
                       fill_gaps=bool(fill_gaps), **more)


def streams(n: int, options: ReadOptions) -> bool:
    """Tell whether a binary capture of ``n`` samples is read block by block (see ``stream``)."""
    return bool(options.stream) or (options.stream is None and n > STREAM_ABOVE_SAMPLES)


