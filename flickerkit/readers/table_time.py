"""The time base of a text table, never guessed.

From (in this order) a time column with its unit (option, header, units
row); a sample-index column with a stated start and increment, rate,
interval, or time per division and point count; a stated rate alone. A
column of consecutive whole numbers without a time unit is a sample index,
never seconds.
"""

from __future__ import annotations

import re
from dataclasses import dataclass
from typing import TYPE_CHECKING

import numpy as np

from ..errors import InputError
from .table_sniff import bracket_unit, to_float
from .units import INDEX_NAMES, INDEX_UNITS, TIME_NAMES, TIME_UNITS, bare, unit_of

if TYPE_CHECKING:
    from .options import ReadOptions


#: A time column without a unit is read as seconds only if that gives at least this rate
#: [Hz] (common practice, no source: light-flicker captures are sampled at kHz rates or
#: faster, since mains ripple at 100/120 Hz and its harmonics must be resolved).
MIN_UNITLESS_RATE_HZ = 1000.0
#: Rates that make sense for a light capture, used to suggest a time unit [Hz].
PLAUSIBLE_RATE_HZ = (1000.0, 1e10)
#: Below this rate [Hz] a time column without a unit that passes as seconds is warned about:
#: as ms it would be 1-10 MHz, a common scope rate (common practice, no source).
SLOW_UNITLESS_RATE_HZ = 10000.0
#: Two statements of one sample rate agree within this fraction.
RATE_AGREEMENT = 0.01
#: Horizontal divisions assumed when a file gives time per division but no count
#: (common practice, no source: most bench scopes show 10).
DEFAULT_DIVISIONS = 10

# metadata and time-base column keys (matched on the key with spaces/underscores as one)
_KEY_RATE = re.compile(r"(sampl\w*|acq\w*|scan|record\w*|digiti\w*)[ _-]*(rate|freq\w*|speed)"
                       r"|^fs$|^rate$|^sa/s$|^s/s$", re.I)
_KEY_INTERVAL = re.compile(r"sampl\w*[ _-]*(interval|period|time|step|spacing)|x[ _-]*incr\w*"
                           r"|^incr\w*$|^increment|^(delta|d)[ _-]?t$|^dt\b|time[ _-]*(step"
                           r"|interval|incr\w*|resolution|per[ _-]*(point|sample))|^interval$"
                           r"|horiz\w*[ _-]*(interval|incr\w*)|^xinc", re.I)
_KEY_START = re.compile(r"^(start|origin|t0|x0|xorg|xorigin)$|x[ _-]*(origin|start|zero|offset)"
                        r"|time[ _-]*(origin|offset|start|zero|of[ _-]*first)|start[ _-]*time"
                        r"|horiz\w*[ _-]*(offset|origin|position)|trigger[ _-]*(time|offset)",
                        re.I)
_KEY_PER_DIV = re.compile(r"time[ _-]*/[ _-]*div|time[ _-]*per[ _-]*div\w*|horiz\w*[ _-]*scale"
                          r"|^time[ _-]*base$|^timebase$|sec\w*[ _-]*/[ _-]*div|^s/div$", re.I)
_KEY_POINTS = re.compile(r"record[ _-]*length|^points$|point[ _-]*count|number[ _-]*of[ _-]*"
                         r"(points|samples)|memory[ _-]*(depth|length)|^samples$|^length$"
                         r"|data[ _-]*points|^n[ _-]*points$|^npts$", re.I)
_KEY_DIVISIONS = re.compile(r"^(horizontal[ _-]*)?divisions$|div\w*[ _-]*(count|number)"
                            r"|number[ _-]*of[ _-]*(horizontal[ _-]*)?div", re.I)
_RATE_UNITS = {"hz": 1.0, "s/s": 1.0, "sa/s": 1.0, "sps": 1.0, "samples/s": 1.0}
_PREFIX = {"k": 1e3, "m": 1e6, "g": 1e9}
_NUMBER = re.compile(r"^\s*([-+]?(?:\d+\.?\d*|\.\d+)(?:[eE][-+]?\d+)?)\s*(.*)$")


@dataclass(frozen=True)
class TimeBase:
    """Where a table's time comes from.

    Attributes
    ----------
    column : int or None
        0-based column whose values, times ``scale``, are time in seconds
        (a time column or a sample-index column); None when the rate is fixed.
    scale : float
        Seconds per unit of that column [s].
    sample_rate_hz : float or None
        Fixed sample rate when no column carries time [Hz].
    per_div_s : float or None
        Time per division when only that and the rows give the rate [s].
    divisions : int
        Horizontal divisions for ``per_div_s``.
    points : int or None
        Stated point count for ``per_div_s`` (else the rows read).
    source : str
        What the echo says about it.
    unitless : bool
        A time column without a unit, read as seconds: checked for plausibility.
    """

    column: int | None
    scale: float = 1.0
    sample_rate_hz: float | None = None
    per_div_s: float | None = None
    divisions: int = DEFAULT_DIVISIONS
    points: int | None = None
    source: str = ""
    unitless: bool = False


def _quantity(value: str, dec: str) -> tuple[float, str] | None:
    """A number and the unit written after it (lower case, '' when none)."""
    v = value.strip()
    if dec == ",":
        v = re.sub(r"(?<=\d),(?=\d)", ".", v, count=1)
    m = _NUMBER.match(v)
    if not m:
        return None
    try:
        x = float(m.group(1))
    except ValueError:
        return None
    rest = m.group(2).strip(" ,;\t")
    unit = rest.split()[0].lower() if rest else ""
    return x, unit


def _time_scale(unit: str) -> float | None:
    if unit == "":
        return 1.0
    return TIME_UNITS.get(unit.replace("sec", "s") if unit.endswith("sec") and unit != "sec"
                          else unit)


def _rate_scale(unit: str) -> float | None:
    if unit in _RATE_UNITS:
        return _RATE_UNITS[unit]
    if unit and unit[0] in _PREFIX and unit[1:] in _RATE_UNITS:
        return _PREFIX[unit[0]]
    return None


@dataclass(frozen=True)
class Stated:
    """One time-base fact the file states: its value [SI], key, where, and whether unitless."""

    value: float
    key: str
    where: str
    unitless: bool


def stated_facts(items: list[tuple[str, str, str]], dec: str) -> dict[str, Stated]:
    """Time-base facts the file states: rate [Hz], interval, start, per_div [s], points, divisions.

    ``items`` are ``(key, value, where)``; the first statement of each fact wins.
    """
    out: dict[str, Stated] = {}
    for key, value, where in items:
        q = _quantity(value, dec)
        if q is None:
            continue
        v, unit = q
        unit = unit or bare(bracket_unit(key) or "")
        kk = re.sub(r"[\(\[\{].*$", "", key).strip()
        kk = re.sub(r"\s+", " ", kk.replace("_", " "))
        fact, x = None, None
        if _KEY_PER_DIV.search(kk):
            s = _time_scale(unit)
            fact, x = ("per_div", v * s) if s else (None, None)
        elif _KEY_DIVISIONS.search(kk):
            fact, x = "divisions", v
        elif _KEY_RATE.search(kk):
            r, s = _rate_scale(unit), _time_scale(unit)
            if unit and r:
                fact, x = "rate", v * r
            elif unit and s:
                fact, x = "interval", v * s
            elif not unit:
                fact, x = "rate", v
        elif _KEY_INTERVAL.search(kk):
            r, s = _rate_scale(unit), _time_scale(unit)
            if s:
                fact, x = "interval", v * s
            elif r:
                fact, x = "rate", v * r
        elif _KEY_START.search(kk):
            s = _time_scale(unit)
            fact, x = ("start", v * s) if s else (None, None)
        elif _KEY_POINTS.search(kk):
            fact, x = "points", v
        if fact is None or x is None or fact in out or not np.isfinite(x):
            continue
        if fact in ("rate", "interval", "per_div", "points", "divisions") and x <= 0:
            continue
        out[fact] = Stated(float(x), key, where, unitless=not unit)
    return out


def extra_items(names: list[str] | None, units: list[str] | None, first_row: list[str],
                k: int) -> list[tuple[str, str, str]]:
    """Time-base values in the columns after the data, as ``(key, value, where)``.

    A name with its value on the units row or in the first data row, or
    key/value pairs on the names or units row.
    """
    items: list[tuple[str, str, str]] = []
    if names:
        for j in range(k, len(names)):
            key = names[j]
            if not key or to_float(key, ".") is not None:
                continue
            if units and j < len(units) and units[j]:
                items.append((key, units[j], "units row"))
            elif j < len(first_row) and first_row[j]:
                items.append((key, first_row[j], "first data row"))
            elif j + 1 < len(names) and names[j + 1]:
                items.append((key, names[j + 1], "names row"))
    if units:
        for j in range(k, len(units) - 1):
            if units[j] and to_float(units[j], ".") is None and units[j + 1]:
                items.append((units[j], units[j + 1], "units row"))
    return items


def int_sequence(v: np.ndarray, consecutive: bool = False) -> bool:
    """Strictly increasing whole numbers (a sample count); ``consecutive``: in steps of 1."""
    v = v[np.isfinite(v)]
    if v.size < 2 or not np.all(v == np.round(v)):
        return False
    d = np.diff(v)
    return bool(np.all(d == 1)) if consecutive else bool(np.all(d > 0))


def option_unit(options: ReadOptions) -> float | None:
    """Seconds per unit of the ``time_unit`` option [s], or None when not given."""
    if not options.time_unit:
        return None
    unit = TIME_UNITS.get(options.time_unit.strip().lower())
    if unit is None:
        raise InputError(f"unknown time unit {options.time_unit!r}; use one of "
                         f"{', '.join(sorted(set(TIME_UNITS)))}", source="--time-unit")
    return unit


def _unit_name(scale: float) -> str:
    return {1.0: "s", 1e-3: "ms", 1e-6: "us", 1e-9: "ns", 1e-12: "ps"}.get(scale, f"{scale:g} s")


def find_time(names: list[str], units: list[str | None], header: bool, head: np.ndarray,
              k: int) -> tuple[int | None, str | None]:
    """The time-like column and what it is: ``"time"`` or ``"index"`` (by name, unit, values)."""
    if k < 2:
        return None, None
    if not header:
        col = head[:, 0]
        if head.shape[0] >= 3 and np.all(np.diff(col) > 0):
            return 0, "index" if int_sequence(col, consecutive=True) else "time"
        return None, None
    for c in range(k):
        u = bare(units[c] or "")
        if TIME_NAMES.match(names[c]) or u in TIME_UNITS:
            if u in TIME_UNITS or unit_of(names[c]) is not None:
                return c, "time"
            if u in INDEX_UNITS:
                return (c, "index") if int_sequence(head[:, c]) else (None, None)
            return c, "index" if int_sequence(head[:, c], consecutive=True) else "time"
    for c in range(k):
        u = bare(units[c] or "")
        if (INDEX_NAMES.match(names[c]) or u in INDEX_UNITS) and int_sequence(head[:, c]):
            return c, "index"
    return None, None


def steps_of(head: np.ndarray, c: int) -> float | None:
    """Median positive step of column ``c`` in the head rows [column unit], or None."""
    d = np.diff(head[:, c])
    d = d[np.isfinite(d) & (d > 0)]
    return float(np.median(d)) if d.size else None


def time_column_base(c: int, label: str, unit_text: str | None, name: str, header: bool,
                     opt_unit: float | None, stated: dict[str, Stated], step: float | None,
                      notes: list[str], warns: list[str]) -> TimeBase:
    """A time column's scale, from the option, the header or units row, or the stated rate."""
    if opt_unit is not None:
        own_text = bare(unit_text or "")
        own = TIME_UNITS.get(own_text) if own_text else None
        if own is None and header:
            own = unit_of(name)
        if own is not None and own != opt_unit:
            warns.append(f"time column {label!r} states {_unit_name(own)} "
                         f"({(unit_text or name).strip()!r}) but --time-unit (or time_unit) "
                         f"says {_unit_name(opt_unit)}, which was used: every frequency is "
                         f"{own / opt_unit:g} times what the file's unit gives; drop the "
                         f"option if the file is right")
        return TimeBase(c, opt_unit, source=f"column {label!r} in {_unit_name(opt_unit)} "
                                            f"(--time-unit)")
    u = bare(unit_text or "")
    scale = TIME_UNITS.get(u) if u else None
    if scale is None and header:
        scale = unit_of(name)
    rate = _stated_rate(stated)
    if scale is not None:
        where = "units row" if unit_text and unit_text.strip() not in name else "header"
        if rate and step and abs(1 / (step * scale) - rate[0]) > RATE_AGREEMENT * rate[0]:
            warns.append(f"the file states a sample rate of {rate[0]:.6g} Hz ({rate[1]!r}) "
                         f"but time column {label!r} gives {1 / (step * scale):.6g} Hz; the "
                         f"time column was used")
        return TimeBase(c, scale, source=f"column {label!r} in {_unit_name(scale)} ({where})")
    if rate and step:
        for s in (1.0, 1e-3, 1e-6, 1e-9):
            if abs(1 / (step * s) - rate[0]) <= RATE_AGREEMENT * rate[0]:
                notes.append(f"time column {label!r} has no unit; {_unit_name(s)} fits the "
                             f"stated sample rate {rate[0]:.6g} Hz ({rate[1]!r})")
                return TimeBase(c, s, source=f"column {label!r} in {_unit_name(s)} (no unit; "
                                             f"inferred from {rate[1]!r})")
        warns.append(f"time column {label!r} has no unit and no unit fits the stated sample "
                     f"rate {rate[0]:.6g} Hz ({rate[1]!r}); read as seconds")
    notes.append(f"time column {label!r} has no unit; read as seconds")
    return TimeBase(c, 1.0, source=f"column {label!r} without a unit, read as seconds",
                    unitless=True)


def _stated_rate(stated: dict[str, Stated]) -> tuple[float, str] | None:
    if "interval" in stated:
        return 1.0 / stated["interval"].value, stated["interval"].key
    if "rate" in stated:
        return stated["rate"].value, stated["rate"].key
    return None


def stated_base(index_col: int | None, label: str | None, head: np.ndarray,
                stated: dict[str, Stated], name: str) -> TimeBase:
    """The time base a table without a time column states (interval, rate, time per division)."""
    iv, rt = stated.get("interval"), stated.get("rate")
    if iv and rt and abs(1 / iv.value - rt.value) > RATE_AGREEMENT * rt.value:
        raise InputError(f"the file states a sample interval of {iv.value:.6g} s ({iv.key!r}) "
                         f"and a sample rate of {rt.value:.6g} Hz ({rt.key!r}), which disagree: "
                         f"give --sample-rate HZ", source=name)
    what = f"sample index {label!r} × " if label is not None else ""
    if iv:
        return TimeBase(index_col, iv.value, sample_rate_hz=None if label else 1 / iv.value,
                        source=f"{what}interval {iv.value:.6g} s ({iv.where}: {iv.key!r})",
                        unitless=iv.unitless)
    if rt:
        return TimeBase(index_col, 1 / rt.value, sample_rate_hz=None if label else rt.value,
                        source=f"{what}rate {rt.value:.6g} Hz ({rt.where}: {rt.key!r})",
                        unitless=rt.unitless)
    pd_ = stated.get("per_div")
    if pd_:
        div = int(stated["divisions"].value) if "divisions" in stated else DEFAULT_DIVISIONS
        pts = int(stated["points"].value) if "points" in stated else None
        src = (f"{what}{pd_.value:.6g} s/div ({pd_.where}: {pd_.key!r}) × {div} divisions"
               + (f" / {pts} points ({stated['points'].key!r})" if pts else " / rows read"))
        return TimeBase(index_col, 1.0, per_div_s=pd_.value, divisions=div, points=pts,
                        source=src, unitless=pd_.unitless)
    if index_col is not None:
        v = head[:3, index_col]
        shown = ", ".join(f"{x:g}" for x in v)
        raise InputError(f"column {label!r} counts samples ({shown}, ...), it is not time, and "
                         f"the file states no sample interval or rate: give --sample-rate HZ "
                         f"(or --time-unit UNIT if the column is time)", source=name)
    raise InputError("no time column and no sample rate: give --sample-rate HZ", source=name)


