"""What a format reader hands the dispatcher: a :class:`FormatRead`.

One typed value, not a tuple of samples, rate, notes, warnings and a dict.
"""

from __future__ import annotations

from dataclasses import dataclass, field
from typing import Any

import numpy as np

from ..capture import ReadRecord
from .filesignal import FileSignal

#: The time base of a capture read at the sample rate option's rate.
RATE_GIVEN = "given (sample rate option)"


@dataclass(frozen=True)
class FormatRead:
    """A capture as one format's reader read it, before the dark level.

    Attributes
    ----------
    samples : numpy.ndarray or FileSignal
        The signal [input unit]: in memory, or a file read in slices (streamed).
    sample_rate_hz : float
        Sample rate [Hz].
    notes, warnings : list of str
        Provenance, and doubts that every report carries.
    layout : str
        The file layout detected (format, separator, header rows, metadata...).
    column : str
        The column (channel) measured.
    time_base : str
        Where the time base came from.
    meta : dict
        The reader's own entries of :attr:`Capture.meta` (the JSON edge), in
        the order they are written.
    unit : str or None
        The column's unit, where the file states one.
    rows_skipped : int or None
        Lines before the first data row of a text table; None for binary files.
    channel_choice : str or None
        Why this column was measured.
    channels : tuple of str
        The signal columns the file holds (text tables).
    """

    samples: np.ndarray | FileSignal
    sample_rate_hz: float
    notes: list[str]
    warnings: list[str]
    layout: str
    column: str
    time_base: str
    meta: dict[str, Any] = field(default_factory=dict)
    unit: str | None = None
    rows_skipped: int | None = None
    channel_choice: str | None = None
    channels: tuple[str, ...] = ()

    def record(self) -> ReadRecord:
        """The echo of what was read (:class:`~flickerkit.capture.ReadRecord`)."""
        return ReadRecord(layout=self.layout, column=self.column, unit=self.unit,
                          time_base=self.time_base, sample_rate_hz=float(self.sample_rate_hz),
                          samples=int(self.samples.shape[0]), rows_skipped=self.rows_skipped,
                          channel_choice=self.channel_choice, channels=self.channels)


def binary_read(samples: np.ndarray | FileSignal, sample_rate_hz: float, notes: list[str],
                warnings: list[str], *, fmt: str, column: str, time_base: str) -> FormatRead:
    """A :class:`FormatRead` of a binary file: its format is its layout.

    Parameters
    ----------
    samples, notes, warnings
        As in :class:`FormatRead`.
    sample_rate_hz : float
        Sample rate [Hz].
    fmt : str
        The format (``"WAV"``, ``"NumPy .npy"``, ``"raw float32"``).
    column : str
        The channel or column read (``"channel 2"``).
    time_base : str
        Where the sample rate came from.
    """
    return FormatRead(samples, float(sample_rate_hz), notes, warnings, layout=fmt,
                      column=column, time_base=time_base,
                      meta={"format": fmt, "column": column})
