"""Reading captures: text tables, WAV, NumPy and raw binary files into a :class:`Capture`.

Text tables are read as bench instruments and data loggers write them:

* any number of comment or metadata lines before the table (``# ...``,
  ``key: value``, ``key,value``); a metadata line naming a sample rate
  (``sample rate: 20000``) or sample interval (``sample interval, 5e-5``) is
  used when the table has no time column;
* comma, semicolon, tab or space separated; decimal comma where the separator
  is not a comma;
* an optional header row; a time column recognised by its name (``t``,
  ``time``, ``zeit``, ``temps``, ``tiempo``, ``sec``...) or, without a header,
  by strictly increasing values in the first of several columns; the time
  unit from the header (``time (ms)``, ``t[us]``, ``time_ns``, ``µs``), seconds
  when none is given;
* one or more signal columns, chosen by name or 1-based number.

WAV files are read with ``scipy.io.wavfile`` (memory-mapped); ``.npy`` files
with ``numpy.load(mmap_mode="r")``: a 1-D array is a signal (give the sample
rate), a 2-D array holds columns, the first being time in seconds unless a
sample rate is given. Raw binary files (``.raw``, ``.bin``) need their sample
format and rate. pandas is imported only to parse a text table.

Modules, one concept each: :mod:`.options` (:class:`ReadOptions` and its one
builder), :mod:`.kinds` (file kinds by suffix), :mod:`.dispatch` (file kind
to reader), :mod:`.result` (the :class:`FormatRead` every reader returns),
:mod:`.wav`, :mod:`.npy`, :mod:`.raw`, :mod:`.channels` (a binary file's
channel), :mod:`.filesignal` (long captures read in slices), :mod:`.dark`;
text tables in :mod:`.table_layout` (the :class:`TableLayout`),
:mod:`.table_sniff`, :mod:`.table_time`, :mod:`.table_channel`,
:mod:`.table_read`, :mod:`.units`, :mod:`.linebounds`, :mod:`.streamfolder`;
:mod:`.timebase` (uniform time) and :mod:`.sidefile` (project, drive,
criteria and other small side files). Public names load on first use, so
:mod:`.options` and :mod:`.kinds` cost no numpy.
"""

from __future__ import annotations

from typing import TYPE_CHECKING, Any

#: Public names and the module each lives in; loaded on first use, so that
#: ``flickerkit.readers.options`` (and a project file) can be imported without numpy.
_HOMES = {"read_capture": "dispatch", "RAW_SUFFIXES": "kinds", "CAPTURE_SUFFIXES": "kinds",
          "FileSignal": "filesignal", "MAX_LINE_BYTES": "linebounds",
          "STREAM_ABOVE_SAMPLES": "options", "STREAM_ABOVE_TEXT_BYTES": "options",
          "ReadOptions": "options", "SHARED_SETTINGS": "options",
          "build_read_options": "options", "dark_option": "options", "FormatRead": "result",
          "STREAM_FOLDER_PREFIX": "streamfolder", "TableLayout": "table_layout",
          "table_layout": "table_layout", "TimeBase": "table_time", "TIME_UNITS": "units"}

if TYPE_CHECKING:
    from .dispatch import read_capture
    from .filesignal import FileSignal
    from .kinds import CAPTURE_SUFFIXES, RAW_SUFFIXES
    from .linebounds import MAX_LINE_BYTES
    from .options import (SHARED_SETTINGS, STREAM_ABOVE_SAMPLES, STREAM_ABOVE_TEXT_BYTES,
                          ReadOptions, build_read_options, dark_option)
    from .result import FormatRead
    from .streamfolder import STREAM_FOLDER_PREFIX
    from .table_layout import TableLayout, table_layout
    from .table_time import TimeBase
    from .units import TIME_UNITS

__all__ = ["CAPTURE_SUFFIXES", "FileSignal", "FormatRead", "MAX_LINE_BYTES", "RAW_SUFFIXES",
           "ReadOptions", "SHARED_SETTINGS", "STREAM_ABOVE_SAMPLES", "STREAM_ABOVE_TEXT_BYTES",
           "STREAM_FOLDER_PREFIX", "TIME_UNITS", "TableLayout", "TimeBase",
           "build_read_options", "dark_option", "read_capture", "table_layout"]


def __getattr__(name: str) -> Any:
    """Load a public name from its module on first use."""
    home = _HOMES.get(name)
    if home is None:
        raise AttributeError(f"module {__name__!r} has no attribute {name!r}")
    import importlib

    value = getattr(importlib.import_module(f"{__name__}.{home}"), name)
    globals()[name] = value
    return value


def __dir__() -> list[str]:
    return sorted([*globals(), *_HOMES])
