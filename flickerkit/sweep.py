"""Dimming sweep: a drive's light at each level, assessed like a measured capture.

Each level's light is sampled from the drive model (:mod:`flickerkit.drive`)
and goes through :func:`flickerkit.assess.assess`, so a level's record has the
same keys as ``measure``'s, plus ``level``, ``relative_light`` and the
model's own figures.

One truth for modelled and measured light (:func:`model_record`): a sampled
capture of a budget that keeps 200 levels fast smears fast edges (first-order
edges of tens of microseconds lose several points of percent flicker) and
folds PWM harmonics into the SVM band. The headline percent flicker, flicker
index and SVM of a modelled level are therefore the model's own figures (exact
extremes, flicker index by quadrature, SVM from the exact Fourier series,
through the shared SVM sum), and the IEEE 1789 fundamental reading is placed
on them through the shared :func:`flickerkit.ieee1789.classify` at the light's
true repetition frequency. They are what ``measure`` gives for a faithful
(finely sampled) capture of the same light; the sampled capture's own figures
are kept under ``capture_figures``.
"""

from __future__ import annotations

import math
from dataclasses import dataclass
from typing import TYPE_CHECKING, Any, Sequence

from .criteria import REGISTRY
from .drive import Drive
from .errors import InputError
from .keypath import figure
from .levels import percent

if TYPE_CHECKING:  # pragma: no cover - types only
    from .assess import Assessment

#: Sample budget per level in a sweep (keeps 200 levels fast; the narrowest
#: pulse still spans a few samples down to about 0.1 % duty).
SWEEP_MAX_SAMPLES = 2**15



def _eu_limits() -> tuple[tuple[str, str, str, float], ...]:
    """Return the EU 2019/2020 limits a sweep checks, read from :data:`criteria.REGISTRY`.

    One row per step of each criterion's schedule: (name, title, metric, limit).
    The limits have one home, the registry; the names (``svm<=0.9``) are the
    JSON keys of :attr:`SweepResult.first_failing`.
    """
    rows = []
    for cid, metric, label in (("eu-2019-2020-svm", "svm", "SVM"),
                               ("eu-2019-2020-pst", "pst_lm", "Pst LM")):
        crit = REGISTRY[cid]
        several = len(crit.schedule) > 1
        for start, limit in crit.schedule:
            when = (f" as amended, from {start.day} {start:%b %Y}" if several and start
                    else "")
            title = f"{label} at most {limit:.1f} (EU 2019/2020{when})"
            rows.append((f"{metric}<={limit:g}", title, metric, float(limit)))
    return tuple(rows)


_EU_LIMITS = _eu_limits()
#: EU limit per sweep name: name -> (metric key in the record, limit).
_LIMIT_OF = {name: (metric, limit) for name, _, metric, limit in _EU_LIMITS}

#: Criteria whose first failing level a sweep reports: (name, title). The IEEE
#: 1789 rows are read from the fundamental's region; the EU limits come from
#: :data:`flickerkit.criteria.REGISTRY`.
CRITERIA = (
    ("ieee1789-low-risk", "IEEE 1789 low-risk (fundamental mode)"),
    ("ieee1789-noel", "IEEE 1789 no observable effect (fundamental mode)"),
    *((name, title) for name, title, _, _ in _EU_LIMITS),
)


#: What ``figures_source`` says in a modelled record.
FIGURES_SOURCE = ("drive model (exact extremes, flicker index by quadrature, SVM from the exact "
                  "Fourier series); capture_figures: the sampled capture through assess")


@dataclass(frozen=True)
class CaptureFigures:
    """The sampled capture's own figures, beside a model's exact ones.

    Attributes
    ----------
    percent_flicker : float
        Percent flicker of the sampled capture [%].
    flicker_index : float
        Flicker index of the sampled capture [unitless].
    svm : float or None
        SVM of the sampled capture [unitless].
    sample_rate_hz : float
        Sample rate of the capture [Hz].
    n_samples : int
        Samples in the capture.
    """

    percent_flicker: float
    flicker_index: float
    svm: float | None
    sample_rate_hz: float
    n_samples: int

    def to_dict(self) -> dict[str, Any]:
        """Return the JSON object of the figures (``capture_figures`` in a record)."""
        return {k: (float(v) if isinstance(v, float) else v) for k, v in
                (("percent_flicker", self.percent_flicker),
                 ("flicker_index", self.flicker_index), ("svm", self.svm),
                 ("sample_rate_hz", self.sample_rate_hz), ("n_samples", self.n_samples))}


@dataclass(frozen=True)
class ModelledLight:
    """A model's light assessed: the assessment with the model's exact figures at its head.

    Attributes
    ----------
    assessment : flickerkit.assess.Assessment
        ``assess`` of the sampled light, in which ``percent_flicker``,
        ``flicker_index``, ``svm``, the harmonics and the IEEE 1789 readings
        are the model's exact figures (see :func:`model_assessment`).
    capture_figures : CaptureFigures
        The sampled capture's own figures.
    figures_source : str
        Where the figures come from, as the JSON says it.
    """

    assessment: Assessment
    capture_figures: CaptureFigures
    figures_source: str = FIGURES_SOURCE

    def to_dict(self) -> dict[str, Any]:
        """Return the assessment's JSON object plus ``capture_figures`` and ``figures_source``."""
        rec = self.assessment.to_dict()
        rec["capture_figures"] = self.capture_figures.to_dict()
        rec["figures_source"] = self.figures_source
        return rec


def model_assessment(model, *, max_samples: int = SWEEP_MAX_SAMPLES, label: str = "",
                     settings=None) -> ModelledLight:
    """Assess a model's light, with the model's exact figures at the head of the assessment.

    Parameters
    ----------
    model : flickerkit.drive.LightModel
        The light at one level.
    max_samples : int
        Sample budget of the capture that goes through ``assess``.
    label : str
        Label of the capture.
    settings : flickerkit.assess.AssessSettings, optional
        Assessment settings (SVM threshold and band are taken from them).

    Returns
    -------
    ModelledLight
        The assessment of the sampled light, in which ``percent_flicker``,
        ``flicker_index``, ``svm`` and the IEEE 1789 fundamental reading are
        the model's exact figures; the sampled capture's own ones are in
        ``capture_figures``. Raises InputError when the level makes no light
        (as ``assess`` does).

    Notes
    -----
    Exact figures: percent flicker from the light's extremes
    (:meth:`flickerkit.drive.Light.modulation_percent`), flicker index by
    quadrature (:meth:`flickerkit.drive.Light.flicker_index`), SVM from the
    Fourier series up to the SVM band's upper end
    (:func:`flickerkit.svm.svm_result_from_components`). Tests compare them
    with ``measure`` of a capture sampled at megahertz rates.
    """
    from dataclasses import replace

    from . import ieee1789, svm
    from .assess import AssessSettings, assess

    settings = settings or AssessSettings()
    cap = model.capture(max_samples=max_samples, label=label)
    a = assess(cap, settings)
    light = model.light()
    pf = light.modulation_percent()
    fi = light.flicker_index()
    f0 = light.dominant_hz
    fs = light.fourier_series(svm.DEFAULT_F_MAX_HZ)
    sv = svm.svm_result_from_components(
        fs.frequencies_hz, fs.amplitudes, threshold=settings.svm_threshold,
        f_min_hz=settings.svm_f_min_hz,
        method="model series",
        method_note="components from the drive model's exact Fourier series")
    captured = CaptureFigures(a.percent_flicker, a.flicker_index,
                              a.svm.value if a.svm else None, a.sample_rate_hz, a.n_samples)
    fund = ieee1789.classify(f0, pf) if f0 else a.ieee1789_fundamental
    harm, per_h = _exact_harmonics(light, f0, settings.harmonics,
                                   0.5 / a.sample_rate_hz)
    if harm:
        a = replace(a, harmonics=harm, ieee1789_per_harmonic=per_h)
    # the headline is the worst of the standard's reading (on the exact figure) and the
    # model's other modulation (PWM or ripple) at its own frequency, from the model itself:
    # the sampled capture's components would carry the sampling's aliases
    from .planner import with_unrelated_modulation

    reading = (a.ieee1789_per_harmonic if settings.ieee1789_mode == "per-harmonic"
               and a.ieee1789_per_harmonic else fund)
    head = (with_unrelated_modulation(light, f0, reading) if (reading is not None and f0)
            else reading)
    warns = tuple(w + ("; the headline percent flicker, flicker index, SVM and harmonics "
                       "are the model's exact figures, capture_figures those of the capture")
                  if w.startswith("sample rate limited by the sample budget")
                  else w + ("; this concerns the capture's SVM (capture_figures): the "
                            "headline SVM is the model's exact series")
                  if "of the SVM sum lies between the harmonics" in w else w
                  for w in a.warnings)
    a = replace(a, percent_flicker=pf, flicker_index=fi, ieee1789_fundamental=fund, svm=sv,
                ieee1789_headline=head, warnings=warns)
    return ModelledLight(a, captured)


def model_record(model, *, max_samples: int = SWEEP_MAX_SAMPLES, label: str = "",
                 settings=None) -> dict[str, Any]:
    """Return :func:`model_assessment` as its JSON object (for callers that print or tabulate)."""
    return model_assessment(model, max_samples=max_samples, label=label,
                            settings=settings).to_dict()


def _exact_harmonics(light, f0: float | None, count: int, t0_s: float):
    """Return the first ``count`` harmonics of ``f0`` [Hz] from the model's exact Fourier series.

    Phases are taken at ``t0_s`` [s], the centre of the capture's first sample
    (its samples are interval averages), as ``measure`` reports them.

    Returns ``(harmonics, per_harmonic_reading)``, or ``((), None)`` when the
    light is steady. The sampled capture's own harmonics fold the upper ones
    (a PWM edge is not band-limited), so the record carries these.
    """
    import numpy as np

    from . import ieee1789
    from .assess import Harmonic

    if not f0:
        return (), None
    ser = light.fourier_series(f0 * (count + 0.5))
    order = np.arange(1, count + 1)
    amp = np.zeros(count)
    phase = np.zeros(count)
    if ser.frequencies_hz.size:
        k = np.rint(ser.frequencies_hz / f0).astype(np.int64)
        on = (k >= 1) & (k <= count) & (np.abs(ser.frequencies_hz - k * f0) <= 1e-6 * k * f0)
        amp[k[on] - 1] = ser.amplitudes[on]
        phase[k[on] - 1] = ser.phases_rad[on]
    phase = np.angle(np.exp(1j * (phase + 2 * np.pi * order * f0 * t0_s)))
    harm = tuple(Harmonic(int(n), float(n * f0), float(c), float(np.degrees(p)) if c else 0.0)
                 for n, c, p in zip(order, amp, phase))
    return harm, ieee1789.classify_components(order * f0, amp)


def _fails(row: LevelRow, name: str) -> bool | None:
    """Tell whether a level fails a sweep criterion; None when its figure is not known there."""
    a = row.assessment
    if a is None:
        return None
    region = a.ieee1789.region if a.ieee1789 is not None else None
    if name == "ieee1789-low-risk":
        return None if region is None else region == "above-low-risk"
    if name == "ieee1789-noel":
        return None if region is None else region != "no-observable-effect"
    if name not in _LIMIT_OF:
        return None
    metric, limit = _LIMIT_OF[name]
    v = figure(a, metric)
    if v is None or not math.isfinite(v):
        return None
    # the SVM's 1e-12 keeps a model exactly on its limit a pass (rounding of the series sum)
    return v > limit * (1 + 1e-12) if metric == "svm" else v > limit


@dataclass(frozen=True)
class LevelRow:
    """One level of a sweep.

    Attributes
    ----------
    level : float
        Dimming level [fraction 0-1; percent in :meth:`to_dict`].
    relative_light : float
        Mean light as a fraction of full output [unitless].
    label : str
        Label of the level's capture.
    light : ModelledLight or None
        The level's light assessed; None when the level makes no light.
    model_percent_flicker : float
        The model's own percent flicker of the level [%].
    model : str
        Description of the level's light model.
    no_light : str
        Why there is no light (when ``light`` is None).
    """

    level: float
    relative_light: float
    label: str
    light: ModelledLight | None
    model_percent_flicker: float
    model: str
    no_light: str = ""

    @property
    def assessment(self) -> Assessment | None:
        """Return the level's assessment (None when it makes no light)."""
        return None if self.light is None else self.light.assessment

    def to_dict(self) -> dict[str, Any]:
        """Return the JSON object of the level.

        The assessment's keys plus ``level`` [percent], ``relative_light``
        [fraction of full output], ``model_percent_flicker`` [percent] and
        ``model``.
        """
        if self.light is not None:
            rec = self.light.to_dict()
        else:
            rec = {"label": self.label, "percent_flicker": None, "flicker_index": None,
                   "frequency_hz": None, "ieee1789": None, "mean": 0.0, "svm": None,
                   "warnings": [self.no_light], "harmonics": []}
        return {"level": percent(self.level), "relative_light": self.relative_light, **rec,
                "model_percent_flicker": self.model_percent_flicker, "model": self.model}


@dataclass(frozen=True)
class SweepResult:
    """Rows per level and the first failing level of each criterion.

    Attributes
    ----------
    drive : str
        Description of the drive.
    rows : tuple of LevelRow
        One per level, in the order given.
    first_failing : dict
        Criterion name -> first level (scanning from the highest level down)
        that fails it, or None when no level fails it [fraction; percent in
        :meth:`to_dict`].
    not_assessed : tuple of str
        Criteria that no level gives the figure for (e.g. Pst LM, which needs
        more light than a sweep models): their None in ``first_failing``
        means "not known", not "every level passes".
    """

    drive: str
    rows: tuple[LevelRow, ...]
    first_failing: dict[str, float | None]
    not_assessed: tuple[str, ...] = ()

    def to_dict(self) -> dict[str, Any]:
        """Return the JSON object of the sweep.

        Dimming levels are in percent (``level``, ``first_failing_level``), as
        ``report`` gives them; ``relative_light`` stays a fraction of full
        output.
        """
        return {"drive": self.drive,
                "levels": [r.to_dict() for r in self.rows],
                "first_failing_level": {k: percent(v) for k, v in self.first_failing.items()},
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
    rows = []
    it = progress(levels) if progress else levels
    for lv in it:
        lv = float(lv)
        model = drive.at(lv)
        label = f"level {lv * 100:.4g} %"
        light, why = None, ""
        try:
            light = model_assessment(model, max_samples=max_samples, label=label)
        except InputError as exc:  # no light at this level (a skipped pulse)
            why = f"no light at this level ({exc.message})"
        rows.append(LevelRow(lv, model.mean, label, light, model.modulation_percent(),
                             model.light().description, why))
    order = sorted(range(len(rows)), key=lambda i: -rows[i].level)
    first: dict[str, float | None] = {}
    unknown = []
    for name, _ in CRITERIA:
        first[name] = None
        outcomes = [_fails(rows[i], name) for i in order]
        if all(o is None for o in outcomes):
            unknown.append(name)
        for i, failed in zip(order, outcomes):
            if failed:
                first[name] = rows[i].level
                break
    return SweepResult(drive.describe(), tuple(rows), first, tuple(unknown))


__all__ = ["CRITERIA", "SWEEP_MAX_SAMPLES", "CaptureFigures", "LevelRow", "ModelledLight",
           "SweepResult", "model_assessment", "model_record", "sweep"]
