"""Dimming sweep: a drive's light at each level, assessed like a measured capture.

Each level's light is sampled from the drive model (:mod:`flickerkit.drive`)
and goes through :func:`flickerkit.assess.assess`, so a level's record has the
same keys as ``measure``'s, plus ``level``, ``relative_light`` and the
model's own figures. Where the assessment does not give SVM, it comes from the
model's exact Fourier series through the shared SVM sum.
"""

from __future__ import annotations

from dataclasses import dataclass
from typing import Any, Sequence

from .drive import Drive
from .errors import InputError

#: Sample budget per level in a sweep (keeps 200 levels fast; the narrowest
#: pulse still spans a few samples down to about 0.1 % duty).
SWEEP_MAX_SAMPLES = 2**15

#: Criteria whose first failing level a sweep reports: name -> (key, test).
CRITERIA = (
    ("ieee1789-low-risk", "IEEE 1789 low-risk (fundamental mode)"),
    ("ieee1789-noel", "IEEE 1789 no observable effect (fundamental mode)"),
    ("svm<=0.9", "SVM at most 0.9 (EU 2019/2020 as amended, from 1 Sep 2021)"),
    ("svm<=0.4", "SVM at most 0.4 (EU 2019/2020 as amended, from 1 Sep 2024)"),
    ("pst_lm<=1", "Pst LM at most 1.0 (EU 2019/2020)"),
)


def _svm_from_model(model) -> float:
    from .planner import svm_of_series

    return svm_of_series(model.fourier_series(2000.0))


def _fails(rec: dict[str, Any], name: str) -> bool | None:
    ieee = rec.get("ieee1789") or {}
    region = ieee.get("region")
    if name == "ieee1789-low-risk":
        return None if region is None else region == "above-low-risk"
    if name == "ieee1789-noel":
        return None if region is None else region != "no-observable-effect"
    if name.startswith("svm"):
        v = rec.get("svm")
        if isinstance(v, dict):
            v = v.get("value")
        return None if v is None else v > float(name.split("<=")[1]) * (1 + 1e-12)
    if name.startswith("pst_lm"):
        v = rec.get("pst_lm")
        if isinstance(v, dict):
            v = v.get("value")
        return None if v is None else v > 1.0
    return None


@dataclass(frozen=True)
class SweepResult:
    """Records per level and the first failing level of each criterion.

    Attributes
    ----------
    drive : str
        Description of the drive.
    records : tuple of dict
        One per level, in the order given: ``Assessment.to_dict()`` plus
        ``level``, ``relative_light``, ``model_percent_flicker`` and ``svm``.
    first_failing : dict
        Criterion name -> first level (scanning from the highest level down)
        that fails it, or None when no level fails it.
    not_assessed : tuple of str
        Criteria that no level gives the figure for (e.g. Pst LM, which needs
        more light than a sweep models): their None in ``first_failing``
        means "not known", not "every level passes".
    """

    drive: str
    records: tuple[dict[str, Any], ...]
    first_failing: dict[str, float | None]
    not_assessed: tuple[str, ...] = ()

    def to_dict(self) -> dict[str, Any]:
        return {"drive": self.drive, "levels": list(self.records),
                "first_failing_level": self.first_failing,
                "not_assessed": list(self.not_assessed)}


def sweep(drive: Drive, levels: Sequence[float], *, max_samples: int = SWEEP_MAX_SAMPLES,
          progress=None) -> SweepResult:
    """Assess a drive at each level.

    Parameters
    ----------
    drive : Drive
        The dimming scheme.
    levels : sequence of float
        Dimming levels [unitless, 0-1].
    max_samples : int
        Sample budget of each level's capture.
    progress : callable, optional
        Wraps the level iterable (e.g. a progress bar).

    Returns
    -------
    SweepResult
    """
    from .assess import assess

    records = []
    it = progress(levels) if progress else levels
    for lv in it:
        lv = float(lv)
        model = drive.at(lv)
        cap = model.capture(max_samples=max_samples, label=f"level {lv * 100:.4g} %")
        try:
            rec = assess(cap).to_dict()
        except InputError as exc:  # no light at this level (a skipped pulse)
            rec = {"label": cap.label, "percent_flicker": None, "flicker_index": None,
                   "frequency_hz": None, "ieee1789": None, "mean": 0.0,
                   "warnings": [f"no light at this level ({exc.message})"], "harmonics": []}
        rec = {"level": lv, "relative_light": model.mean, **rec}
        rec["model_percent_flicker"] = model.modulation_percent()
        rec["model"] = model.light().description
        if "svm" not in rec:
            rec["svm"] = _svm_from_model(model) if model.mean > 0 else None
            rec["svm_source"] = "Fourier series of the drive model"
        records.append(rec)
    order = sorted(range(len(records)), key=lambda i: -records[i]["level"])
    first: dict[str, float | None] = {}
    unknown = []
    for name, _ in CRITERIA:
        first[name] = None
        outcomes = [_fails(records[i], name) for i in order]
        if all(o is None for o in outcomes):
            unknown.append(name)
        for i, failed in zip(order, outcomes):
            if failed:
                first[name] = records[i]["level"]
                break
    return SweepResult(drive.describe(), tuple(records), first, tuple(unknown))


__all__ = ["CRITERIA", "SWEEP_MAX_SAMPLES", "SweepResult", "sweep"]
