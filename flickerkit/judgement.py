"""Verdicts summed up by what their documents are: regulation, recommended practice, guidance, user.

A product judged against a regulation and against a recommended practice has
two answers, not one: a fail against IEEE 1789's no-observable-effect line is
not a fail against the law. This module sums the per-capture verdicts of
:mod:`flickerkit.criteria` per criterion (worst status, worst level, margin,
the component or band that decided it, levels the criterion needs that no
capture gives) and per kind of document (:data:`flickerkit.criteria.KINDS`),
and words what limits the product as an engineering suggestion.

It computes no figure of its own; it reads verdicts.
"""

from __future__ import annotations

import math
from dataclasses import dataclass
from typing import Any, Sequence

from . import cautions
from .criteria import KINDS, LEVEL_TOLERANCE, Criterion, Verdict

#: Order of badness, worst first.
_SEVERITY = ("fail", "insufficient data", "pass", "not applicable")

#: Headings of the kinds, for reports.
KIND_TITLES = {"regulation": "Regulations", "recommended practice": "Recommended practices",
               "guidance": "Guidance and screening values", "user": "The user's own criteria"}

_LEAD = {"regulation": "Regulation", "recommended practice": "Recommended practice",
         "guidance": "Guidance", "user": "Your own criterion"}

def decided_by(verdict: Verdict) -> str:
    """Name the component or band that decided a verdict ('' when not known).

    The one :func:`flickerkit.criteria.judge` named from the assessment
    (:attr:`Verdict.decided_by`: the SVM's strongest component, the JA10.6
    band, the fundamental below 90 Hz, Pst LM's weighting); otherwise, for a
    pass or fail, the verdict's reason (which names the IEEE 1789 mode and
    frequency, or the modulation that decided it).
    """
    if verdict.decided_by:
        return verdict.decided_by
    if verdict.status not in ("pass", "fail"):
        return ""
    return verdict.reason


@dataclass(frozen=True)
class CriterionOutcome:
    """One criterion over every capture of a product.

    Attributes
    ----------
    criterion : Criterion
    status : str
        Worst status over its verdicts; ``insufficient data`` when a level it
        requires has no capture (and nothing fails).
    worst : Verdict or None
        The verdict that decided the status: the fail with the most negative
        margin, else the pass with the smallest margin, else the first
        insufficient one.
    decided_by : str
        Component or band that decided ``worst`` (see :func:`decided_by`).
    missing_levels : tuple of float
        Levels the criterion requires that no capture was taken at [percent].
    counts : dict
        Number of verdicts per status.
    verdicts : tuple of Verdict
        The verdicts summed up.
    """

    criterion: Criterion
    status: str
    worst: Verdict | None
    decided_by: str
    missing_levels: tuple[float, ...]
    counts: dict[str, int]
    verdicts: tuple[Verdict, ...] = ()

    def to_dict(self) -> dict[str, Any]:
        """Return the JSON object of the outcome (the worst verdict's figures flattened)."""
        w = self.worst
        return {"criterion": self.criterion.id, "kind": self.criterion.kind,
                "status": self.status,
                "worst_label": None if w is None else w.label,
                "worst_level": None if w is None else w.level,
                "measured": None if w is None else w.measured,
                "limit": None if w is None else w.limit,
                "margin": None if w is None else w.margin,
                "decided_by": self.decided_by,
                "missing_levels": list(self.missing_levels),
                "verification_tolerance": self.criterion.verification_tolerance,
                "counts": dict(self.counts)}


@dataclass(frozen=True)
class GroupOutcome:
    """The criteria of one kind of document, and their overall status."""

    kind: str
    status: str
    criteria: tuple[CriterionOutcome, ...]

    @property
    def title(self) -> str:
        """Return the heading of the kind of document, for reports."""
        return KIND_TITLES.get(self.kind, self.kind)

    def to_dict(self) -> dict[str, Any]:
        """Return the JSON object of the group (its criteria's outcomes as a list)."""
        return {"kind": self.kind, "status": self.status,
                "criteria": [c.to_dict() for c in self.criteria]}


def worst_status(statuses: Sequence[str]) -> str:
    """Return the worst of some statuses (``not applicable`` when there are none)."""
    present = set(statuses)
    for s in _SEVERITY:
        if s in present:
            return s
    return "not applicable"


def missing_levels(criterion: Criterion, levels: Sequence[float | None]) -> tuple[float, ...]:
    """Return the levels ``criterion`` requires that none of ``levels`` matches [percent]."""
    if criterion.levels is None:
        return ()
    have = [lv for lv in levels if isinstance(lv, (int, float))]
    return tuple(need for need in criterion.levels
                 if not any(abs(need - lv) <= LEVEL_TOLERANCE for lv in have))


def _margin_key(v: Verdict) -> float:
    m = v.margin
    return math.inf if m is None or not math.isfinite(m) else float(m)


def outcome(criterion: Criterion, verdicts: Sequence[Verdict],
            levels: Sequence[float | None]) -> CriterionOutcome:
    """Sum up one criterion's verdicts (those with its id) over the captures.

    ``levels`` are the captures' dimming levels [percent]; a level the
    criterion requires that none of them matches turns a pass (or a criterion
    with no verdict) into ``insufficient data``.
    """
    mine = [v for v in verdicts if v.criterion == criterion.id]
    counts = {s: sum(v.status == s for v in mine) for s in _SEVERITY}
    missing = missing_levels(criterion, levels)
    status = worst_status([v.status for v in mine])
    if missing and status in ("pass", "not applicable"):
        status = "insufficient data"
    worst = None
    for s in ("fail", "pass"):
        cands = [v for v in mine if v.status == s]
        if cands:
            worst = min(cands, key=_margin_key)
            break
    if worst is None:
        worst = next((v for v in mine if v.status == "insufficient data"), None)
    by = "" if worst is None else decided_by(worst)
    return CriterionOutcome(criterion, status, worst, by, missing, counts, tuple(mine))


def group(criteria: Sequence[Criterion], verdicts: Sequence[Verdict],
          levels: Sequence[float | None]) -> tuple[GroupOutcome, ...]:
    """Sum up the verdicts per kind of document, in :data:`KINDS` order.

    Kinds with no criterion are left out; ``levels`` are the captures'
    dimming levels [percent].
    """
    out = []
    for kind in KINDS:
        mine = tuple(outcome(c, verdicts, levels) for c in criteria if c.kind == kind)
        if mine:
            out.append(GroupOutcome(kind, worst_status([o.status for o in mine]), mine))
    return tuple(out)


def verdicts_of(o: CriterionOutcome) -> tuple[Verdict, ...]:
    """Return the verdicts an outcome sums up."""
    return o.verdicts


#: Twice the 50 Hz and 60 Hz line frequencies [Hz] (common practice, no source), and how
#: near a deciding frequency must be to count as line ripple [relative].
_LINE_RIPPLE_HZ = (100.0, 120.0)
_LINE_RIPPLE_RTOL = 0.01


def _on_line_ripple(reason: str) -> bool:
    """Tell whether a verdict's reason names a frequency at twice a line frequency."""
    import re

    for m in re.finditer(r"at ([0-9]+(?:\.[0-9]+)?) Hz", reason or ""):
        f = float(m.group(1))
        if any(abs(f - r) <= _LINE_RIPPLE_RTOL * r for r in _LINE_RIPPLE_HZ):
            return True
    return False


def _plan_target(c: Criterion, limit: float | None) -> str | None:
    if c.metric == "ieee1789.low_risk":
        return "ieee1789-low-risk"
    if c.metric == "ieee1789.noel":
        return "ieee1789-noel"
    if c.metric == "svm" and limit is not None:
        return f"svm<={limit:g}"
    return None


def _num(x: float | None, spec: str = ".3g") -> str:
    return "–" if x is None or not math.isfinite(x) else format(x, spec)


def limiting_text(groups: Sequence[GroupOutcome]) -> str:
    """Write a short plain-language paragraph on what limits the product and what would change it.

    Worded as an engineering suggestion; it carries the caution that the
    applicable standards, local codes and an accredited laboratory decide.
    """
    parts: list[str] = []
    targets: list[str] = []
    ripple = False
    for g in groups:
        for o in g.criteria:
            c, w = o.criterion, o.worst
            if o.status == "fail" and w is not None:
                at = sorted({v.level for v in verdicts_of(o) if v.status == "fail"
                             and v.level is not None}, reverse=True)
                n = o.counts.get("fail", 0)
                lv = (f"at {', '.join(f'{x:g}' for x in at)} %" if at
                      else f"in {n} capture{'s' if n != 1 else ''}")
                where = "" if w.level is None else f" at {w.level:g} %"
                by = f", decided by {o.decided_by}" if o.decided_by else ""
                parts.append(f"{_LEAD.get(g.kind, g.kind)} {c.title} fails {lv}; "
                             f"worst{where}: {_num(w.measured, '.4g')} against a limit of "
                             f"{_num(w.limit, '.4g')} {c.unit}".rstrip()
                             + f" (margin {_num(w.margin, '+.3g')}{by}).")
                t = _plan_target(c, w.limit)
                if t and t not in targets:
                    targets.append(t)
                ripple = ripple or any(_on_line_ripple(v.reason) for v in verdicts_of(o)
                                       if v.status == "fail")
                if c.metric == "pst_lm":
                    parts.append("Pst LM responds to modulation below about 80 Hz: look for "
                                 "mains ripple, beating between converters, or slow dither.")
            elif o.missing_levels:
                lv = " and ".join(f"{x:g} %" for x in o.missing_levels)
                parts.append(f"{c.title} needs a capture at {lv}, which the project lacks: "
                             f"measure it before the criterion can pass.")
    summary = "; ".join(f"{g.title.lower()} {g.status}" for g in groups)
    summary = (summary[:1].upper() + summary[1:] + ".") if summary else ""
    if not parts:
        head = (summary + " No criterion judged here fails and none lacks a required level; "
                "the smallest margins are in the table above.").strip()
    else:
        head = (summary + " " + " ".join(parts)).strip()
    if ripple:
        head += (" Engineering suggestion: modulation at twice the line frequency decides at "
                 "least one failure; a higher PWM frequency does not touch it, less line "
                 "ripple in the LED current (more output filtering or a ripple-cancelling "
                 "stage) would.")
    if targets:
        head += ((" Also: " if ripple else " Engineering suggestion: ")
                 + "a higher PWM frequency, or a dimming method with "
                 "less modulation at the failing levels (analogue or hybrid dimming there), "
                 "would change this; \"flickerkit plan --target " + ",".join(targets)
                 + "\" with the product's drive finds the lowest PWM frequency that meets it, "
                 "and the product must then be measured again.")
    return f"{head} {cautions.NOT_CERTIFICATION}"


__all__ = ["CriterionOutcome", "GroupOutcome", "KIND_TITLES", "decided_by", "group",
           "limiting_text", "missing_levels", "outcome", "worst_status"]
