"""Figures by name: the one way a criterion's ``metric`` names a figure of an assessment.

A criterion (built-in or from a user's criteria file) names the figure it
compares by a name such as ``"svm"``, ``"ieee1789.modulation_percent"`` or
``"filtered_percent_flicker.200"`` (a cut-off in Hz). :data:`FIGURES` maps
each name onto a typed field of :class:`flickerkit.assess.Assessment`;
:func:`figure` reads it. The names are the key paths of the same figures in
the assessment's JSON object (``Assessment.to_dict()``), so a user who reads
``measure --json`` can name them; a name that is not in :data:`FIGURES` is an
error (:class:`UnknownKey`), raised when the criterion is made, so a misspelt
``metric`` never reads as "no value".

:func:`figure_or_none` is for the export edge only: a cell of a record's JSON
object by dotted key path (fixed workbook columns over records of several
kinds, where a missing key is a blank cell).
"""

from __future__ import annotations

import math
from typing import TYPE_CHECKING, Any, Callable, Mapping

from .errors import SettingsError

if TYPE_CHECKING:  # pragma: no cover - types only
    from .assess import Assessment


class UnknownKey(SettingsError):
    """A name that is not a figure (or a key path that names no key of a record)."""


def _attr(*names: str) -> Callable[[Assessment], float | None]:
    """Return a getter of ``a.<n1>.<n2>...``; it gives ``None`` where a part is not computed."""
    def get(a: Assessment) -> float | None:
        cur: Any = a
        for n in names:
            if cur is None:
                return None
            cur = getattr(cur, n)
        return cur

    return get


#: Figure names a criterion may compare -> getter on an Assessment (value in the unit its
#: name or the JSON key documents; ``None`` or nan when not computed). The IEEE 1789 lines
#: (``ieee1789.low_risk``, ``ieee1789.noel``) and ``below_90hz_modulation`` are judged by
#: their own rules in :func:`flickerkit.criteria.judge` (:data:`RULES`).
FIGURES: dict[str, Callable[[Assessment], float | None]] = {
    "percent_flicker": _attr("percent_flicker"),
    "flicker_index": _attr("flicker_index"),
    "percent_flicker_raw": _attr("percent_flicker_raw"),
    "flicker_index_raw": _attr("flicker_index_raw"),
    "percent_flicker_averaged": _attr("percent_flicker_averaged"),
    "noise_limit_percent": _attr("noise_limit_percent"),
    "frequency_hz": _attr("frequency_hz"),
    "sample_rate_hz": _attr("sample_rate_hz"),
    "duration_s": _attr("duration_s"),
    "periods": _attr("periods"),
    "samples_per_period": _attr("samples_per_period"),
    "svm": _attr("svm", "value"),
    "pst_lm": _attr("pst_lm", "pst"),
    "per_period.percent_flicker_median": _attr("per_period", "percent_flicker_median"),
    "per_period.percent_flicker_worst": _attr("per_period", "percent_flicker_worst"),
    "per_period.flicker_index_median": _attr("per_period", "flicker_index_median"),
    "per_period.flicker_index_worst": _attr("per_period", "flicker_index_worst"),
    "noise.percent_flicker_floor": _attr("noise_percent_flicker"),
    **{f"ieee1789.{k}": _attr("ieee1789", k)
       for k in ("frequency_hz", "modulation_percent", "low_risk_limit_percent",
                 "noel_limit_percent", "low_risk_margin_percent", "noel_margin_percent")},
    "below_90hz.modulation_percent": _attr("below_90hz", "modulation_percent"),
    "below_90hz.frequency_hz": _attr("below_90hz", "frequency_hz"),
}

#: Metric names with a rule of their own in :func:`flickerkit.criteria.judge`.
RULES = ("ieee1789.low_risk", "ieee1789.noel", "below_90hz_modulation")

#: The cut-off family: ``filtered_percent_flicker.<cut-off in Hz>``.
FILTERED = "filtered_percent_flicker"


def _cutoff(name: str) -> float | None:
    head, _, tail = name.partition(".")
    if head != FILTERED or not tail:
        return None
    try:
        f = float(tail)
    except ValueError:
        return None
    return f if math.isfinite(f) and f > 0 else None


def check_name(name: str) -> str:
    """Return ``name`` if it names a figure a criterion can compare, else raise :class:`UnknownKey`.

    Raises
    ------
    UnknownKey
        Naming the name, the closest known name and the names there are.

    Examples
    --------
    >>> check_name("filtered_percent_flicker.200")
    'filtered_percent_flicker.200'
    >>> check_name("percent_flikcer")  # doctest: +ELLIPSIS
    Traceback (most recent call last):
    ...
    flickerkit.keypath.UnknownKey: no figure 'percent_flikcer'; did you mean 'percent_flicker'? ...
    """
    if name in FIGURES or name in RULES or _cutoff(name) is not None:
        return name
    import difflib

    known = [*FIGURES, *RULES, f"{FILTERED}.CUTOFF_HZ"]
    near = difflib.get_close_matches(name, known, n=1)
    hint = f"; did you mean {near[0]!r}?" if near else ""
    raise UnknownKey(f"no figure {name!r}{hint} (a criterion compares one of: "
                     f"{', '.join(known)})")


def figure(a: Assessment, name: str) -> float | None:
    """Return the figure ``name`` of an assessment.

    Parameters
    ----------
    a : flickerkit.assess.Assessment
        The assessment.
    name : str
        A name in :data:`FIGURES`, or ``filtered_percent_flicker.<cut-off in Hz>``.

    Returns
    -------
    float or None
        The value in its documented unit; ``None`` when it was not computed
        (no SVM, no Pst LM, a cut-off the assessment did not compute), nan as
        the assessment holds it.

    Raises
    ------
    UnknownKey
        When ``name`` is not a figure (:func:`check_name`), or names a rule of
        its own (:data:`RULES`).
    """
    get = FIGURES.get(name)
    if get is not None:
        v = get(a)
        return None if v is None else float(v)
    cut = _cutoff(name)
    if cut is None:
        check_name(name)  # raises for an unknown name
        raise UnknownKey(f"{name!r} is judged by its own rule, not read as one figure")
    if a.filtered is None:
        return None
    for c, v in zip(a.filtered.cutoffs_hz, a.filtered.percent_flicker):
        if math.isclose(c, cut):
            return float(v)
    return None  # that cut-off was not computed


def figure_or_none(record: Mapping[str, Any], path: str) -> Any:
    """Return the cell of a record's JSON object at a dotted key path, or ``None``.

    For the export edge only (fixed workbook columns over the JSON objects of
    records of several kinds: a voltage capture has no ``svm``, a blank cell).
    A number part matches a cut-off key by value (``filtered_percent_flicker.200``).

    Examples
    --------
    >>> figure_or_none({"svm": 0.4, "f": {"200": 1.5}}, "f.200"), figure_or_none({}, "svm")
    (1.5, None)
    """
    cur: Any = record
    for part in path.split("."):
        if not isinstance(cur, Mapping):
            return None
        if part in cur:
            cur = cur[part]
            continue
        match = [v for k, v in cur.items() if _same_number(k, part)]
        if not match:
            return None
        cur = match[0]
    return cur


def _same_number(a: Any, b: str) -> bool:
    try:
        return math.isclose(float(a), float(b))
    except (TypeError, ValueError):
        return False


__all__ = ["FIGURES", "RULES", "UnknownKey", "check_name", "figure", "figure_or_none"]
