"""The dark level to subtract: a number, or the mean of a dark capture."""

from __future__ import annotations

import os

import numpy as np

from ..errors import InputError
from .options import ReadOptions


def _dark_number(value: float) -> tuple[float, str]:
    from ..assess import MAX_MAGNITUDE

    if not np.isfinite(value):
        raise InputError(f"dark level {value!r} is not a finite number", source="--dark")
    if abs(value) > MAX_MAGNITUDE:
        raise InputError(f"dark level {value:.6g} is beyond any plausible signal "
                         f"(|x| <= {MAX_MAGNITUDE:g})", source="--dark")
    return float(value), f"dark level {float(value):.6g} subtracted"


def dark_level(dark: float | str, options: ReadOptions,
               capture: str | None = None) -> tuple[float, str]:
    """The level to subtract and the note saying so.

    Parameters
    ----------
    dark : float or str
        A number [signal unit], a text that reads as one, or the path of a
        dark capture whose mean is the level.
    options : ReadOptions
        The capture's options; a dark capture is read with its column, rate,
        time unit, gap filling and resampling (or, if its column is not there,
        without the column).
    capture : str, optional
        The capture's path: a dark capture that is the capture itself is refused.
    """
    from .dispatch import read_capture  # the dispatcher imports this module

    if isinstance(dark, (int, float)):
        return _dark_number(float(dark))
    try:
        value = float(dark)
    except ValueError:
        pass
    else:
        return _dark_number(value)
    if capture is not None:
        try:
            if os.path.samefile(dark, capture):
                raise InputError(f"the dark capture {dark} is the capture itself: give the "
                                 f"capture taken with the light off", source="--dark")
        except OSError:
            pass  # a missing dark file is reported when it is read
    sub = ReadOptions(column=options.column, sample_rate_hz=options.sample_rate_hz or 1.0,
                      time_unit=options.time_unit, fill_gaps=options.fill_gaps,
                      resample=options.resample)
    try:
        cap = read_capture(dark, sub)
    except InputError as exc:
        if options.column is None or "column" not in str(exc):
            raise
        # the dark capture need not have the signal's column layout
        cap = read_capture(dark, ReadOptions(sample_rate_hz=sub.sample_rate_hz,
                                             fill_gaps=options.fill_gaps,
                                             resample=options.resample))
    level = float(np.mean(cap.samples))
    return level, f"dark level {level:.6g} subtracted (mean of {dark})"

