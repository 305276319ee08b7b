"""Dimming levels: one name, ``level``, a fraction of full output inside; percent at the edges.

Computation (drive models, sweeps, plans, brightness tables) takes and keeps a
dimming level as a fraction 0-1. Files, options, terminal text, workbooks and
JSON give it in percent; :func:`percent` and :func:`fraction` are the one
conversion. A project's, a criterion's and a verdict's levels are percent as
the project or criteria file states them (they never pass through computation).
"""

from __future__ import annotations

import math

#: A converted level this close to a whole 1e-9 % is that value: the float round trip
#: percent -> fraction -> percent leaves at most a few ulps (7 % comes back 7.000000000000001).
_SNAP_ULPS = 4


def percent(level: float | None) -> float | None:
    """Turn a dimming level from a fraction of full output [0-1] into percent [%] for the edges.

    Undoes the last-bit error of a percent that was turned into a fraction
    (:func:`fraction`), so a level given as 7 % is shown as 7 %.

    Examples
    --------
    >>> percent(fraction(7.0)), percent(0.5), percent(None)
    (7.0, 50.0, None)
    """
    if level is None:
        return None
    v = 100.0 * float(level)
    if not math.isfinite(v):
        return v
    r = round(v, 9)
    return r if abs(v - r) <= _SNAP_ULPS * math.ulp(v) else v


def fraction(level_percent: float) -> float:
    """Turn a dimming level given at the edges in percent [%] into a fraction of full output."""
    return float(level_percent) / 100.0


__all__ = ["fraction", "percent"]
