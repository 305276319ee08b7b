"""Which column of a text table is the light.

Named, numbered, the only one, or the one whose name or unit says light;
several candidates and none named warn (or refuse).
"""

from __future__ import annotations

import re
from typing import TYPE_CHECKING, Callable

from ..errors import InputError
from .units import bare

if TYPE_CHECKING:
    from .options import ReadOptions
    from .table_time import TimeBase


#: Names and units that say a column holds light (common practice, no source).
_LIGHT = re.compile(r"light|lux|\blx\b|photo|\bpd\d*\b|diode|lumin|illum|irrad|optic|licht"
                    r"|lumi[eè]re|\bluz\b|bright|\bcd\b|w/m|\blm\b|nits|detector|sensor",
                    re.I)
#: Names and units that say a column is not the light (drive, current, mains, trigger...).
_NOT_LIGHT = re.compile(r"gate|drive|driver|pwm|current|\bamps?\b|mains|supply|\bline\b|trig"
                        r"|sync|\bref|control|ctrl|\bvin\b|\bvcc\b|\bvdd\b|\bdim\b|enable",
                        re.I)
_NOT_LIGHT_UNITS = {"a", "ma", "ua", "µa", "amp", "amps", "ampere"}


def choose_signal(names: list[str], units: list[str | None], channels: list[int],
                  tcol: int | None, tb: TimeBase | None, options: ReadOptions,
                  label: Callable[[int], str], warns: list[str], name: str) -> tuple[int, str]:
    """Choose the 0-based column to measure, and say why.

    Parameters
    ----------
    names, units : list
        Every data column's name and unit (None where not given).
    channels : list of int
        Columns that hold signals (not time, index or time-base values).
    tcol : int or None
        The time-like column.
    tb : TimeBase or None
        The time base (None when a sample rate is given).
    options : ReadOptions
        The column asked for, the quantity, and whether the choice is required.
    label : callable
        Name of a column for messages.
    warns : list of str
        Receives the warning when the first of several candidates is taken.
    name : str
        The file, for messages.
    """
    k = len(names)
    if options.column is not None:
        col = options.column
        if isinstance(col, str) and col.strip().isdigit():
            col = int(col)
        if isinstance(col, int) and not isinstance(col, bool):
            if not 1 <= col <= k:
                raise InputError(f"column {col} does not exist: the table has {k} column(s) "
                                 f"({', '.join(label(c) for c in range(k))})", source=name)
            sig = col - 1
        else:
            want = str(col).strip().lower()
            matches = [i for i, h in enumerate(names) if h.strip().lower() == want]
            if not matches:
                matches = [i for i, h in enumerate(names)
                           if re.sub(r"\s*[\(\[\{][^\)\]\}]*[\)\]\}]\s*$", "", h).strip().lower()
                           == want]
            if not matches:
                raise InputError(f"unknown column {col!r}; the columns are: "
                                 f"{', '.join(label(c) for c in range(k))}", source=name)
            if len(matches) > 1:
                nums = ", ".join(str(i + 1) for i in matches)
                raise InputError(f"column name {col!r} is repeated (columns {nums}): choose "
                                 f"one by number, e.g. --column {matches[-1] + 1}", source=name)
            sig = matches[0]
        if sig == tcol and tb is not None:
            raise InputError(f"column {label(sig)!r} is the time column; choose a signal "
                             f"column", source=name)
        return sig, f"named ({options.column!r})"
    if not channels:
        raise InputError("the table has a time column but no signal column", source=name)
    if len(channels) == 1:
        return channels[0], "the only signal column"
    what = "the light" if options.quantity == "light" else f"the {options.quantity}"
    pool = channels
    if options.quantity == "light":  # names and units that say light, or say not light
        text = {c: f"{names[c]} {units[c] or ''}" for c in channels}
        not_light = {c for c in channels if _NOT_LIGHT.search(text[c])
                     or bare(units[c] or "") in _NOT_LIGHT_UNITS}
        light = [c for c in channels if _LIGHT.search(text[c]) and c not in not_light]
        if len(light) == 1:
            return light[0], "its name or unit says light"
        pool = light or [c for c in channels if c not in not_light]
        if len(pool) == 1:
            others = ", ".join(label(c) for c in channels if c != pool[0])
            return pool[0], f"the other columns ({others}) are named as drive, current or mains"
        pool = pool or channels
    shown = ", ".join(repr(label(c)) for c in pool)
    if options.require_column:
        raise InputError(f"{len(pool)} columns could be {what} ({shown}) and none is named: "
                         f"choose one with column = \"NAME\" or a number in the project "
                         f"file (for a folder of captures, report --column NAME)",
                         source=name)
    warns.append(f"{len(pool)} columns could be {what} ({shown}); measured "
                 f"{label(pool[0])!r}, the first: name it with --column to be sure")
    return pool[0], f"the first of {len(pool)} that could be {what}"


