"""One small validator for side-file tables and the limits of user-given counts.

The side files are the project, drive, criteria and calibration files; the counts are
every count a user can ask for.

A table is checked against a mapping of key -> :class:`Spec`: an unknown key (a misspelt
``metirc``), a wrong type (``rate = "fast"``, ``time_unit = 3``, a date given as an integer, a
boolean given as ``"no"``) or a value out of its documented range gives one line naming the
file, the table and the key. Nothing here knows a file format; readers call it.
"""

from __future__ import annotations

import datetime as _dt
import difflib
import math
from dataclasses import dataclass
from typing import Any, Mapping

from .errors import SettingsError

# ---------------------------------------------------------------------------- limits
#: Largest count of levels a drive sweep assesses (each level is a full assessment, a few ms).
MAX_LEVELS = 1_000
#: Largest count of levels a plan checks (each level is checked at every candidate frequency).
MAX_PLAN_LEVELS = 200
#: Largest timer count per PWM period (a 32-bit counter).
MAX_COUNTS = 2 ** 32
#: Most sigma-delta dither bits modelled (a pattern repeats every 2**bits PWM periods; the
#: model samples the whole pattern, so 12 bits is 4,096 periods).
MAX_DITHER_BITS = 12
#: Most harmonics reported.
MAX_HARMONICS = 1_000
#: Largest channel count of a multi-channel drive.
MAX_CHANNELS = 64
#: Largest brightness-table length (a 16-bit counter has 65,536 values).
MAX_STEPS = 65_536
#: Highest sample rate accepted [Hz] (10 GS/s; oscilloscopes sample below it).
MAX_SAMPLE_RATE_HZ = 1e10
#: Highest modulation or PWM frequency accepted [Hz] (100 MHz).
MAX_FREQUENCY_HZ = 1e8
#: Largest side file (project, drive, criteria, calibration, curve) read [bytes].
MAX_SIDE_FILE_BYTES = 16 << 20


@dataclass(frozen=True)
class Spec:
    """What one key may hold.

    Attributes
    ----------
    kind : str
        ``number``, ``integer``, ``string``, ``bool``, ``date``, ``numbers``
        (list of numbers), ``strings`` (list of strings), ``table``,
        ``number|string``, ``integer|string``, or ``any``.
    low, high : float, optional
        Range of a number (or of each number of a list), inclusive unless
        ``open_low`` / ``open_high``.
    choices : tuple of str, optional
        Allowed strings.
    """

    kind: str
    low: float | None = None
    high: float | None = None
    open_low: bool = False
    open_high: bool = False
    choices: tuple[str, ...] | None = None

    def words(self) -> str:
        """Say the range in words, e.g. ``1 to 32`` or ``above 0 and at most 1e+08``."""
        if self.low is not None and self.high is not None and not (self.open_low
                                                                    or self.open_high):
            return f"{self.low:g} to {self.high:g}"
        parts = []
        if self.low is not None:
            parts.append(f"above {self.low:g}" if self.open_low else f"at least {self.low:g}")
        if self.high is not None:
            parts.append(f"below {self.high:g}" if self.open_high else f"at most {self.high:g}")
        return " and ".join(parts) or "a number"

    def describe(self) -> str:
        """Write the range in interval notation, e.g. ``(0, 1e+08]``."""
        if self.choices:
            return "one of " + ", ".join(self.choices)
        lo = "-inf" if self.low is None else f"{self.low:g}"
        hi = "inf" if self.high is None else f"{self.high:g}"
        return f"{'(' if self.open_low or self.low is None else '['}{lo}, {hi}" \
               f"{')' if self.open_high or self.high is None else ']'}"


def _is_number(v: Any) -> bool:
    return isinstance(v, (int, float)) and not isinstance(v, bool)


def _where(source: str, table: str | None, key: str) -> str:
    """Return ``file [table]: key``, the start of every message."""
    return f"{source}{f' [{table}]' if table else ''}: {key}"


def check_value(value: Any, spec: Spec, *, source: str, table: str | None, key: str) -> Any:
    """Check one value against ``spec``; return it (dates parsed, integers as int).

    Raises
    ------
    SettingsError
        ``"<file> [<table>] <key>: must be ..., got ..."``.
    """
    w = _where(source, table, key)
    kinds = spec.kind.split("|")
    if spec.kind == "any":
        return value
    if "bool" in kinds and isinstance(value, bool):
        return value
    if "date" in kinds:
        if isinstance(value, _dt.datetime):
            return value.date()
        if isinstance(value, _dt.date):
            return value
        if isinstance(value, str):
            try:
                return _dt.date.fromisoformat(value)
            except ValueError:
                pass
        raise SettingsError(f"{w} must be a date (YYYY-MM-DD), got {value!r}")
    if "integer" in kinds and _is_number(value) and float(value).is_integer():
        if isinstance(value, float) and not math.isfinite(value):
            pass
        else:
            _range(float(value), spec, w)
            return int(value)
    if "number" in kinds and _is_number(value):
        if not math.isfinite(float(value)):
            raise SettingsError(f"{w} must be a finite number, got {value!r}")
        _range(float(value), spec, w)
        return value
    if "string" in kinds and isinstance(value, str):
        if spec.choices and value not in spec.choices:
            close = difflib.get_close_matches(value, spec.choices, n=1)
            hint = f" (did you mean {close[0]!r}?)" if close else ""
            raise SettingsError(f"{w} must be {spec.describe()}, got {value!r}{hint}")
        return value
    if spec.kind in ("numbers", "strings"):
        if not isinstance(value, list):
            raise SettingsError(f"{w} must be a list of {spec.kind}, got {value!r}")
        one = Spec("number" if spec.kind == "numbers" else "string", spec.low, spec.high,
                   spec.open_low, spec.open_high, spec.choices)
        return [check_value(v, one, source=source, table=table, key=f"{key}[{i}]")
                for i, v in enumerate(value)]
    if spec.kind == "table":
        if isinstance(value, Mapping):
            return value
        raise SettingsError(f"{w} must be a table")
    names = {"number": "a number", "integer": "a whole number", "string": "a string",
             "bool": "true or false (without quotes)", "table": "a table"}
    want = spec.describe() if spec.choices else " or ".join(names.get(k, k) for k in kinds)
    raise SettingsError(f"{w} must be {want}, got {value!r}")


def _out_of_range(v: float, spec: Spec) -> bool:
    lo_bad = spec.low is not None and (v < spec.low or (spec.open_low and v == spec.low))
    hi_bad = spec.high is not None and (v > spec.high or (spec.open_high and v == spec.high))
    return lo_bad or hi_bad


def _range(v: float, spec: Spec, w: str) -> None:
    if _out_of_range(v, spec):
        raise SettingsError(f"{w} must be {spec.words()}, got {v:g}")


def check_table(table: Mapping[str, Any], specs: Mapping[str, Spec], *, source: str,
                name: str | None = None, required: tuple[str, ...] = ()) -> dict[str, Any]:
    """Check every key of ``table``; return a copy with checked values.

    Parameters
    ----------
    table : mapping
        A parsed TOML table.
    specs : mapping of str to Spec
        The keys it may hold.
    source : str
        File name, for messages.
    name : str, optional
        Table name, for messages (``product``, ``[criterion] 2``...).
    required : tuple of str
        Keys that must be present.

    Raises
    ------
    SettingsError
        On the first unknown key, missing key, wrong type or out-of-range value.
    """
    if not isinstance(table, Mapping):
        raise SettingsError(f"{source}{f' [{name}]' if name else ''}: must be a table")
    for key in table:
        if key not in specs:
            close = difflib.get_close_matches(str(key), list(specs), n=1)
            hint = f"; did you mean {close[0]!r}?" if close else ""
            where = f"{source}{f' [{name}]' if name else ''}"
            raise SettingsError(f"{where}: unknown key {key!r}{hint} "
                                f"(known: {', '.join(sorted(specs))})")
    for key in required:
        if key not in table:
            raise SettingsError(f"{source}{f' [{name}]' if name else ''}: needs {key!r}")
    return {k: check_value(v, specs[k], source=source, table=name, key=k)
            for k, v in table.items()}


def check_count(value: int, limit: int, what: str, *, low: int = 1) -> int:
    """Refuse a count outside ``[low, limit]`` at once, naming the limit."""
    if value < low:
        raise SettingsError(f"{what} must be at least {low}, got {value}")
    if value > limit:
        raise SettingsError(f"{what} {value} is above the limit of {limit}")
    return value


def check_number(value: Any, what: str, *, low: float | None = None,
                 high: float | None = None, open_low: bool = False,
                 open_high: bool = False) -> float | None:
    """Refuse an option value that is not a finite number within its range (None passes).

    :func:`require_number` for options that may be left out.

    Examples
    --------
    >>> check_number(None, "--fps") is None
    True
    >>> check_number(0.0, "--exposure", low=0, high=100, open_low=True)
    Traceback (most recent call last):
    ...
    flickerkit.errors.SettingsError: --exposure must be above 0 and at most 100, got 0
    """
    if value is None:
        return None
    return require_number(value, what, low=low, high=high, open_low=open_low,
                          open_high=open_high)


def require_number(value: Any, what: str, *, low: float | None = None,
                   high: float | None = None, open_low: bool = False,
                   open_high: bool = False, not_number: str | None = None,
                   outside: str | None = None) -> float:
    """Refuse a value that is not a finite number within its range, at once.

    The one number check of options, model settings and side-file values read one by
    one; each caller keeps its own wording.

    Parameters
    ----------
    value : object
        The value; anything ``float()`` takes.
    what : str
        What it is (an option, a setting, a file and key), for the message.
    low, high : float, optional
        Range, inclusive unless ``open_low`` / ``open_high``.
    not_number, outside : str, optional
        The refusals as ``str.format`` templates of ``what``, ``value`` (as given) and
        ``v`` (as a float): when ``float()`` fails (default ``"{what} must be a number,
        got {value!r}"``), and when the value is outside the range or not finite.
        Without ``outside``, a value that is not finite gives ``"{what} must be a finite
        number, got {value!r}"`` and one out of range ``"{what} must be <the range in
        words>, got {v:g}"``.

    Returns
    -------
    float
        The value as a float.

    Raises
    ------
    SettingsError
        One line in the caller's wording.

    Examples
    --------
    >>> require_number(0.5, "duty", low=0, high=1)
    0.5
    >>> require_number(2, "duty", low=0, high=1, outside="{what} must be from 0 to 1, got {v:g}")
    Traceback (most recent call last):
    ...
    flickerkit.errors.SettingsError: duty must be from 0 to 1, got 2
    """
    try:
        v = float(value)
    except (TypeError, ValueError):
        raise SettingsError((not_number or "{what} must be a number, got {value!r}").format(
            what=what, value=value)) from None
    spec = Spec("number", low, high, open_low=open_low, open_high=open_high)
    if outside is not None:
        if not math.isfinite(v) or _out_of_range(v, spec):
            raise SettingsError(outside.format(what=what, value=value, v=v))
        return v
    if not math.isfinite(v):
        raise SettingsError(f"{what} must be a finite number, got {value!r}")
    _range(v, spec, what)
    return v


def check_positive(value: Any, what: str, *, allow_zero: bool = False) -> float:
    """Check a finite number above 0 (or at least 0 with ``allow_zero``), in the models' wording.

    Examples
    --------
    >>> check_positive(-1, "PWM frequency [Hz]")
    Traceback (most recent call last):
    ...
    flickerkit.errors.SettingsError: PWM frequency [Hz] must be a finite positive number, got -1
    """
    need = "zero or positive" if allow_zero else "positive"
    return require_number(value, what, low=0.0, open_low=not allow_zero,
                          not_number="{what} must be a number, got {value!r}",
                          outside="{what} must be a finite " + need + " number, got {v:g}")


def check_fraction(value: Any, what: str) -> float:
    """Check a number from 0 to 1 (a duty, a level), in the models' wording.

    Examples
    --------
    >>> check_fraction(1.5, "duty")
    Traceback (most recent call last):
    ...
    flickerkit.errors.SettingsError: duty must be from 0 to 1, got 1.5
    """
    return require_number(value, what, low=0.0, high=1.0,
                          not_number="{what} must be a number from 0 to 1, got {value!r}",
                          outside="{what} must be from 0 to 1, got {v:g}")


def drive_specs() -> dict[str, Spec]:
    """Ranges of the numbers of a drive description (file, project [drive] or options).

    Only the upper ends of the counts and frequencies that decide how much work a model
    takes are checked here; :func:`flickerkit.drivefile.drive_from_mapping` checks the lower
    ends and the physics (fractions, times) with its own messages.
    """
    return {
        "frequency_hz": Spec("number", None, MAX_FREQUENCY_HZ),
        "channels": Spec("integer", None, MAX_CHANNELS),
        "counts_per_period": Spec("integer", None, MAX_COUNTS),
        "dither_bits": Spec("integer", None, MAX_DITHER_BITS),
        "phase_offsets_deg": Spec("numbers", -3600, 3600),
    }


def check_drive(data: Mapping[str, Any], *, source: str, name: str | None = None) -> None:
    """Refuse at once a drive whose counts or frequency are absurd (see :func:`drive_specs`).

    Other keys are left to the drive model, which names them.
    """
    specs = drive_specs()
    for key, spec in specs.items():
        if key in data and data[key] is not None:
            if spec.kind == "numbers" and not isinstance(data[key], list):
                continue  # the model says what a phase list must be
            check_value(data[key], spec, source=source, table=name, key=key)
    ripple = data.get("ripple")
    if isinstance(ripple, Mapping) and ripple.get("line_frequency_hz") is not None:
        check_value(ripple["line_frequency_hz"], Spec("number", None, 1e4),
                    source=source, table="ripple" if name is None else f"{name}.ripple",
                    key="line_frequency_hz")
    levels = data.get("levels")
    if isinstance(levels, list) and len(levels) > MAX_LEVELS:
        raise SettingsError(f"{source}{f' [{name}]' if name else ''}: levels: {len(levels)} "
                            f"levels is above the limit of {MAX_LEVELS}")


__all__ = ["Spec", "drive_specs", "check_drive", "MAX_PLAN_LEVELS", "MAX_COUNTS",
           "MAX_DITHER_BITS", "MAX_HARMONICS", "check_value", "check_table", "check_count",
           "check_number", "require_number", "check_positive", "check_fraction", "MAX_LEVELS",
           "MAX_CHANNELS", "MAX_STEPS", "MAX_SAMPLE_RATE_HZ", "MAX_FREQUENCY_HZ",
           "MAX_SIDE_FILE_BYTES"]
