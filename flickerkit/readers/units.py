"""The words text tables use for time, sample indices and units.

Time units and their scale, the names of time and sample-index columns, and
the tokens a units row holds; shared by the sniffer, the time base and the
channel choice.
"""

from __future__ import annotations

import re


#: Time units recognised in headers and options [s].
TIME_UNITS = {"s": 1.0, "sec": 1.0, "second": 1.0, "seconds": 1.0, "ms": 1e-3,
              "us": 1e-6, "µs": 1e-6, "μs": 1e-6, "ns": 1e-9, "ps": 1e-12,
              "msec": 1e-3, "millisecond": 1e-3, "milliseconds": 1e-3,
              "usec": 1e-6, "microsecond": 1e-6, "microseconds": 1e-6,
              "nsec": 1e-9, "nanosecond": 1e-9, "nanoseconds": 1e-9}
#: Time units offered for a time column (``--time-unit``, a project's ``time_unit``).
OPTION_TIME_UNITS = ("s", "ms", "us", "µs", "ns")
TIME_NAMES = re.compile(r"^\s*(t|time|zeit|temps|tiempo|tempo|sec|second|seconds|x|s|ms|us|µs"
                         r"|μs|ns)(?![a-z])", re.I)
_UNIT_IN_NAME = re.compile(r"[\(\[\{/_ ]\s*(ns|us|µs|μs|ms|s|sec)\s*[\)\]\}]?\s*$", re.I)
INDEX_NAMES = re.compile(r"^\s*(index|idx|no\.?|nr\.?|#|n|num|number|samples?|sample[ _-]*"
                          r"(no\.?|nr\.?|number|index|#)|points?|pt|pts|seq|sequence|count"
                          r"|record|x)\s*$", re.I)
#: Units-row tokens that mark a sample index rather than time.
INDEX_UNITS = {"sequence", "seq", "samples", "sample", "points", "point", "pts", "pt", "#",
                "index", "idx", "n", "count", "counts", "no", "no."}
#: Tokens a units row holds (lower case, brackets removed).
UNIT_TOKENS = set(TIME_UNITS) | INDEX_UNITS | {
    "v", "mv", "uv", "µv", "kv", "volt", "volts", "a", "ma", "ua", "µa", "amp", "amps",
    "ampere", "w", "mw", "lx", "lux", "klx", "cd", "cd/m2", "cd/m²", "w/m2", "w/m²", "%",
    "a.u.", "au", "arb", "arb.", "(a.u.)", "db", "dbm", "hz", "div", "units", "unit",
    "v/v", "1", "-", "vrms", "lm", "nits"}


def bare(token: str) -> str:
    """A unit token without brackets, in lower case."""
    return token.strip().strip("()[]{}").strip().lower()


def unit_of(name: str) -> float | None:
    """Seconds per unit of a time unit written in a column name [s], or None."""
    m = _UNIT_IN_NAME.search(name)
    if m:
        return TIME_UNITS[m.group(1).lower() if m.group(1) not in ("µs", "μs") else m.group(1)]
    low = name.strip().lower()
    for unit in ("ns", "us", "µs", "μs", "ms"):
        if low.endswith(unit):
            return TIME_UNITS[unit]
    if low in TIME_UNITS:
        return TIME_UNITS[low]
    return None


