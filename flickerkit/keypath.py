"""A figure of a result record by its key path: the one way to look a figure up.

A key path names a figure in the JSON object of an assessment
(:meth:`flickerkit.assess.Assessment.to_dict`), a drive-sweep row or a
report record: ``"svm"``, ``"ieee1789.low_risk_limit_percent"``,
``"filtered_percent_flicker.200"`` (a number part matches a cut-off key by
value). Criteria (``metric``) and workbook columns use the same paths.

A path that names no key is an error (:class:`UnknownKey`): a misspelt
``metric`` in a criteria file must not read as "no value". A figure the
record holds as ``None`` (not computed), a part below such a figure, and a
cut-off that was not computed are ``None``.
"""

from __future__ import annotations

import math
from typing import Any, Mapping

from .errors import SettingsError


class UnknownKey(SettingsError):
    """A key path names no key of the record."""


def _same_number(a: Any, b: str) -> bool:
    try:
        return math.isclose(float(a), float(b))
    except (TypeError, ValueError):
        return False


def figure(record: Mapping[str, Any], path: str) -> Any:
    """The value at a dotted key path of a record.

    Parameters
    ----------
    record : Mapping
        A result record (nested mappings of plain values).
    path : str
        Dotted key path, e.g. ``"ieee1789.region"``.

    Returns
    -------
    Any
        The value; ``None`` when the figure, or a figure it lies under, was not
        computed (held as ``None``), or when a number part names a cut-off
        the record did not compute.

    Raises
    ------
    UnknownKey
        When a part of the path is not a key of the record (naming the
        path, the part and the keys there are).

    Examples
    --------
    >>> figure({"svm": 0.4, "f": {"200": 1.5}}, "f.200"), figure({"f": None}, "f.200")
    (1.5, None)
    >>> figure({"svm": 0.4}, "svn")  # doctest: +ELLIPSIS
    Traceback (most recent call last):
    ...
    flickerkit.keypath.UnknownKey: no figure 'svn': 'svn' is not a key at the top; did you ...
    """
    cur: Any = record
    walked: list[str] = []
    for part in path.split("."):
        if cur is None:
            return None  # the enclosing figure was not computed
        if not isinstance(cur, Mapping):
            raise UnknownKey(f"no figure {path!r}: {'.'.join(walked)!r} holds a value, "
                             f"not keys ({part!r})")
        if part in cur:
            cur = cur[part]
        elif part.isdigit():
            # filtered_percent_flicker.200 -> a {cut-off: value} mapping keyed by number
            match = [v for k, v in cur.items() if _same_number(k, part)]
            if not match:
                return None  # that cut-off was not computed
            cur = match[0]
        else:
            where = f"under {'.'.join(walked)!r}" if walked else "at the top"
            import difflib

            keys = sorted(str(k) for k in cur)
            near = difflib.get_close_matches(part, keys, n=1)
            hint = f"; did you mean {near[0]!r}?" if near else ""
            raise UnknownKey(f"no figure {path!r}: {part!r} is not a key {where}{hint} "
                             f"(keys there: {', '.join(keys) or 'none'})")
        walked.append(part)
    return cur


def figure_or_none(record: Mapping[str, Any], path: str) -> Any:
    """:func:`figure`, with ``None`` for a path the record does not hold.

    For tables whose columns are fixed in code over records of several kinds
    (a voltage capture has no ``svm``): a blank cell, not an error.
    """
    try:
        return figure(record, path)
    except UnknownKey:
        return None


__all__ = ["UnknownKey", "figure", "figure_or_none"]
