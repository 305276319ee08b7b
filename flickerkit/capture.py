"""The one value every analysis starts from: a uniformly sampled signal.

Measured captures (from :mod:`flickerkit.readers`) and modelled light (from the
drive models) meet here, so that everything after this point -- period finding,
spectrum, metrics, verdicts, exports -- is shared.
"""

from __future__ import annotations

from dataclasses import dataclass, field
from typing import Any, Mapping

import numpy as np

from .errors import InputError

#: Quantities a capture can hold.
QUANTITIES = ("light", "voltage")


@dataclass(frozen=True)
class ReadRecord:
    """What a reader read: the echo every measurement carries.

    Attributes
    ----------
    layout : str
        The file layout detected (format, separator, header rows, metadata...).
    column : str
        The column (channel) measured.
    unit : str or None
        Its unit, where the file states one.
    time_base : str
        Where the time base came from (a time column and its unit, a sample
        index times a stated interval, a stated rate, the WAV header, given).
    sample_rate_hz : float
        The sample rate [Hz].
    samples : int
        Samples read.
    rows_skipped : int or None
        Lines before the first data row of a text table (metadata, header,
        units row, comments); None for binary files.
    channel_choice : str or None
        Why this column was measured (named, the only one, its name says light...).
    channels : tuple of str
        The signal columns the file holds.
    """

    layout: str
    column: str
    unit: str | None
    time_base: str
    sample_rate_hz: float
    samples: int
    rows_skipped: int | None = None
    channel_choice: str | None = None
    channels: tuple[str, ...] = ()

    def to_dict(self) -> dict[str, Any]:
        """Return the JSON ``read`` object."""
        return {"layout": self.layout, "column": self.column, "unit": self.unit,
                "time_base": self.time_base, "sample_rate_hz": self.sample_rate_hz,
                "samples": self.samples, "rows_skipped": self.rows_skipped,
                "channel_choice": self.channel_choice, "channels": list(self.channels)}


def describe_read(read: Mapping[str, Any]) -> str:
    """Say in one line what was read, from a :class:`ReadRecord` or its ``to_dict()``."""
    d = read.to_dict() if isinstance(read, ReadRecord) else dict(read)
    unit = f" [{d['unit']}]" if d.get("unit") else ""
    why = f" ({d['channel_choice']})" if d.get("channel_choice") else ""
    skipped = (f", {d['rows_skipped']} line(s) before the data skipped"
               if d.get("rows_skipped") is not None else "")
    return (f"{d['layout']}; measured {d['column']!r}{unit}{why}; time base: "
            f"{d['time_base']}; {d['sample_rate_hz']:.6g} Hz, {d['samples']} samples{skipped}")


@dataclass(frozen=True, eq=False)
class Capture:
    """A uniformly sampled signal with its sample rate and provenance.

    Build one with :func:`make_capture`, which validates the samples once; the
    computation functions trust a ``Capture``.

    Attributes
    ----------
    samples : numpy.ndarray
        1-D float64 array of the signal, linear in the quantity (light in any
        linear unit, e.g. photodiode volts after dark subtraction; or voltage)
        [arbitrary linear unit].
    sample_rate_hz : float
        Sample rate [Hz].
    label : str
        Short human name (file name, "level 30 %", ...).
    source : str
        Where the samples came from: a file path, or a drive-model description.
    quantity : str
        ``"light"`` or ``"voltage"``.
    notes : tuple of str
        Provenance that later reports must carry (gaps filled, resampling,
        dark level applied, ...).
    warnings : tuple of str
        Doubts the reader found (clipping at the recorder's rail, ...);
        :func:`flickerkit.assess.assess` adds them to its own.
    meta : Mapping
        Free provenance fields (column, dark level, file size, ...).
    read : ReadRecord or None
        What a reader read (None for modelled light).
    """

    samples: np.ndarray
    sample_rate_hz: float
    label: str = ""
    source: str = ""
    quantity: str = "light"
    notes: tuple[str, ...] = ()
    warnings: tuple[str, ...] = ()
    meta: Mapping[str, Any] = field(default_factory=dict)
    read: ReadRecord | None = None

    @property
    def n_samples(self) -> int:
        """Number of samples."""
        return int(self.samples.shape[0])

    @property
    def duration_s(self) -> float:
        """Length of the capture, ``n_samples / sample_rate_hz`` [s]."""
        return self.n_samples / self.sample_rate_hz


def _checked_rate(sample_rate_hz: Any, where: str | None) -> float:
    try:
        rate = float(sample_rate_hz)
    except (TypeError, ValueError):
        raise InputError(f"sample rate {sample_rate_hz!r} is not a number", source=where) from None
    if not np.isfinite(rate) or rate <= 0:
        raise InputError(f"sample rate must be a positive number of hertz, got {rate:g}",
                         source=where)
    return rate


def _check_quantity(quantity: str, where: str | None) -> None:
    if quantity not in QUANTITIES:
        raise InputError(f"quantity must be one of {QUANTITIES}, got {quantity!r}", source=where)


def make_capture(
    samples: Any,
    sample_rate_hz: float,
    *,
    label: str = "",
    source: str = "",
    quantity: str = "light",
    notes: tuple[str, ...] | list[str] = (),
    warnings: tuple[str, ...] | list[str] = (),
    meta: Mapping[str, Any] | None = None,
    read: ReadRecord | None = None,
) -> Capture:
    """Validate samples and wrap them in a :class:`Capture`.

    Parameters
    ----------
    samples : array_like
        1-D signal [arbitrary linear unit]. Converted to float64 (a memory-mapped
        float64 array is kept as it is, not copied).
    sample_rate_hz : float
        Sample rate [Hz]; finite and positive.
    label, source, quantity, notes, warnings, meta
        See :class:`Capture`.

    Returns
    -------
    Capture

    Raises
    ------
    InputError
        If the samples are not 1-D, hold fewer than 2 values, are not finite,
        or the sample rate is not a positive finite number.
    """
    where = source or label or None
    x = np.asarray(samples)
    if x.dtype != np.float64:
        try:
            x = x.astype(np.float64)
        except (TypeError, ValueError) as exc:
            raise InputError(f"samples are not numeric ({exc})", source=where) from None
    if x.ndim != 1:
        raise InputError(f"samples must be 1-D, got shape {x.shape}", source=where)
    if x.shape[0] < 2:
        raise InputError(f"capture holds {x.shape[0]} sample(s); at least 2 are needed",
                         source=where)
    rate = _checked_rate(sample_rate_hz, where)
    if not np.isfinite(x).all():
        bad = int(np.flatnonzero(~np.isfinite(x))[0])
        raise InputError(f"sample {bad} is not a finite number ({x[bad]!r})", source=where)
    _check_quantity(quantity, where)
    return Capture(samples=x, sample_rate_hz=rate, label=label, source=source,
                   quantity=quantity, notes=tuple(notes), warnings=tuple(warnings),
                   meta=dict(meta or {}), read=read)


def make_lazy_capture(
    samples: Any,
    sample_rate_hz: float,
    *,
    label: str = "",
    source: str = "",
    quantity: str = "light",
    notes: tuple[str, ...] | list[str] = (),
    warnings: tuple[str, ...] | list[str] = (),
    meta: Mapping[str, Any] | None = None,
    read: ReadRecord | None = None,
) -> Capture:
    """Wrap samples that are read in slices (a file larger than memory) in a :class:`Capture`.

    Only the shape and the sample rate are checked here; finiteness is checked
    block by block when the capture is assessed.

    Parameters
    ----------
    samples : object with ``shape`` and slicing that returns float64 arrays
        E.g. :class:`flickerkit.readers.FileSignal` [input unit].
    sample_rate_hz : float
        Sample rate [Hz].
    """
    where = source or label or None
    shape = getattr(samples, "shape", None)
    if shape is None or len(shape) != 1:
        raise InputError("lazy samples must be 1-D", source=where)
    if shape[0] < 2:
        raise InputError(f"capture holds {shape[0]} sample(s); at least 2 are needed",
                         source=where)
    rate = _checked_rate(sample_rate_hz, where)
    _check_quantity(quantity, where)
    return Capture(samples=samples, sample_rate_hz=rate, label=label, source=source,
                   quantity=quantity, notes=tuple(notes), warnings=tuple(warnings),
                   meta=dict(meta or {}), read=read)
