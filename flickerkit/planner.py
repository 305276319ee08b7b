"""Frequency and timer planning for a dimming drive.

Given a drive description and perception targets, find the lowest PWM
frequency at which every dimming level in a range meets them, then the timer
settings that give it with the resolution needed, and -- when no setting meets
both -- the ways out with their cost (faster clock or high-resolution timer,
hybrid dimming, dithering with its own low-frequency flicker computed).

One path: each level's light comes from :mod:`flickerkit.drive`; its figures
come from the shared criteria code -- :func:`flickerkit.ieee1789.classify` on
the model's percent flicker at its fundamental, and
:func:`flickerkit.svm.svm_from_components` on the model's exact Fourier series.
Tests show these agree with :func:`flickerkit.assess.assess` of the sampled
light.
"""

from __future__ import annotations

import functools
import math
import re
from dataclasses import dataclass, replace
from typing import Sequence

import numpy as np

from . import ieee1789, metrics
from .drive import Drive, DitheredPwm, LightModel
from .errors import SettingsError
from .levels import percent
from .timers import Timer, TimerSetting, clock_needed, minimum_duty
from .validate import MAX_DITHER_BITS

#: Frequency range searched by default [Hz].
DEFAULT_RANGE_HZ = (10.0, 50_000.0)
#: Points of the coarse log-spaced frequency grid.
GRID_POINTS = 160
#: Relative precision of the lowest frequency after bisection.
FREQUENCY_RTOL = 1e-4
#: Highest Fourier component the SVM sum uses [Hz] (CIE TN 006:2016; from
#: memory, not read in the standard; see :data:`flickerkit.svm.DEFAULT_F_MAX_HZ`).
SVM_F_MAX_HZ = 2000.0

#: Default frequency tolerance of the PWM clock, as a fraction [unitless]: a
#: microcontroller's internal RC oscillator is typically trimmed to about +-1 % at
#: room temperature and drifts to about +-2 % over temperature and supply; a quartz
#: crystal holds about +-0.01 % (common practice, no source). A plan is only as
#: good as the oscillator it runs on; give the real figure with ``tolerance``.
DEFAULT_TOLERANCE = 0.02
#: Largest tolerance accepted [unitless].
MAX_TOLERANCE = 0.25
#: A target's abrupt change is reported when it lies within this fraction of the
#: recommended frequency, or within twice the tolerance if that is wider
#: (project choice).
NEARBY_FRACTION = 0.05
#: Interior points (besides the ends and the abrupt points) at which a tolerance
#: band is checked.
BAND_POINTS = 5
#: Relative step either side of an abrupt point at which it is checked.
_EDGE_STEP = 1e-9

TARGET_HELP = ("ieee1789-low-risk, ieee1789-noel, svm<=VALUE (e.g. svm<=0.4); "
               "several separated by commas")


@dataclass(frozen=True)
class Target:
    """A perception target.

    Attributes
    ----------
    kind : str
        ``"ieee1789-low-risk"``, ``"ieee1789-noel"`` or ``"svm"``.
    limit : float or None
        Largest SVM allowed (``"svm"`` only) [unitless].
    """

    kind: str
    limit: float | None = None

    @property
    def name(self) -> str:
        """Return the target as ``--target`` spells it (``svm<=0.4``, ``ieee1789-noel``)."""
        return f"svm<={self.limit:g}" if self.kind == "svm" else self.kind


def parse_targets(text: str) -> tuple[Target, ...]:
    """Parse ``"ieee1789-low-risk,svm<=0.4"`` into targets.

    Raises
    ------
    SettingsError
        On an unknown target or an SVM limit that is not positive.
    """
    out = []
    for part in (p.strip().lower() for p in str(text).split(",")):
        if not part:
            continue
        if part in ("ieee1789-low-risk", "low-risk"):
            out.append(Target("ieee1789-low-risk"))
        elif part in ("ieee1789-noel", "noel", "ieee1789-no-observable-effect"):
            out.append(Target("ieee1789-noel"))
        else:
            m = re.fullmatch(r"svm\s*<=?\s*([0-9.eE+-]+)", part)
            if not m:
                raise SettingsError(f"unknown target {part!r}; use {TARGET_HELP}")
            try:
                v = float(m.group(1))
            except ValueError:
                raise SettingsError(f"SVM limit {m.group(1)!r} is not a number") from None
            if not (v > 0 and math.isfinite(v)):
                raise SettingsError(f"SVM limit must be positive, got {v:g}")
            out.append(Target("svm", v))
    if not out:
        raise SettingsError(f"no target given; use {TARGET_HELP}")
    return tuple(out)


@dataclass(frozen=True)
class LevelFigures:
    """Perception figures of one level's modelled light.

    Attributes
    ----------
    level : float
        Dimming level [unitless, 0-1].
    relative_light : float
        Mean light relative to full output [unitless].
    frequency_hz : float or None
        Fundamental of the light [Hz].
    percent_flicker : float
        Modulation depth of the modelled light [percent].
    ieee1789 : Ieee1789Result or None
        Placement at the fundamental (None for steady light).
    svm : float
        Stroboscopic visibility measure from the Fourier series [unitless].
    """

    level: float
    relative_light: float
    frequency_hz: float | None
    percent_flicker: float
    ieee1789: ieee1789.Ieee1789Result | None
    svm: float

    def meets(self, target: Target) -> bool:
        """Tell whether the level meets a target."""
        if target.kind == "svm":
            assert target.limit is not None  # parse_targets gives every SVM target a limit
            return self.svm <= target.limit * (1 + 1e-12)
        r = self.ieee1789.region if self.ieee1789 else "no-observable-effect"
        if target.kind == "ieee1789-noel":
            return r == "no-observable-effect"
        return r in ("no-observable-effect", "low-risk")


def svm_of_series(fs) -> float:
    """Return the SVM [unitless] of a model's Fourier series (shared SVM sum, default threshold)."""
    from . import svm

    if fs.frequencies_hz.size == 0:
        return 0.0
    return float(svm.svm_from_components(fs.frequencies_hz, fs.amplitudes,
                                         f_max_hz=SVM_F_MAX_HZ))


def with_unrelated_modulation(light, f0: float, res):
    """Judge the other modulation of a light beside its IEEE 1789 reading; keep the worse.

    The other modulation (PWM or ripple) is judged at its own frequency when
    it is not a harmonic of ``f0``, as ``assess`` judges a capture.

    Parameters
    ----------
    light : flickerkit.drive.Light
        The modelled light.
    f0 : float
        Frequency the reading was taken at: the light's strongest modulation [Hz].
    res : flickerkit.ieee1789.Ieee1789Result
        The standard's reading (fundamental or per-harmonic mode).

    Returns
    -------
    flickerkit.ieee1789.Ieee1789Result
        ``res``, or the other modulation's reading when that is worse
        (:func:`flickerkit.ieee1789.judge_modulation`).
    """
    fb, amp_b = light.base_frequency_hz, light.base_amplitude
    fr = light.ripple.frequency_hz if light.ripple and light.ripple.percent > 0 else None
    other = [(f, a) for f, a in ((fb, amp_b), (fr, light.ripple_amplitude))
             if f is not None and f != f0 and a > 0]
    comps = []
    for f, a in other:
        ratio = f / f0
        if round(ratio) == 0 or abs(ratio - round(ratio)) > 1e-9 * ratio:
            comps.append((f, a, 0.0))
    return ieee1789.judge_modulation(res, comps, []) if comps else res


def figures(model: LightModel, level: float = float("nan"), *, need_svm: bool = True
            ) -> LevelFigures:
    """Compute the perception figures of a model (closed-form path).

    Parameters
    ----------
    model : LightModel
        The light at one level.
    level : float
        Dimming level it stands for [unitless].
    need_svm : bool
        Compute the SVM (skip it when no target needs it).
    """
    light = model.light()
    f0 = light.dominant_hz
    fs = light.fourier_series(SVM_F_MAX_HZ if need_svm else 0.0)
    pf = light.modulation_percent()
    res = with_unrelated_modulation(light, f0, ieee1789.classify(f0, pf)) if f0 else None
    sv = svm_of_series(fs) if need_svm else float("nan")
    return LevelFigures(level, fs.mean, f0, pf, res, sv)


def default_levels(min_level: float, count: int = 25) -> np.ndarray:
    """Return levels from ``min_level`` to 1, log-spaced, with 0.5 added [unitless]."""
    if not (0 < min_level <= 1):
        raise SettingsError(f"smallest level must be in (0, 1], got {min_level:g}")
    lv = np.geomspace(min_level, 1.0, max(count, 2))
    return np.unique(np.concatenate([lv, [0.5]]))


def _check_at(drive: Drive, f: float, levels: Sequence[float], targets: Sequence[Target]
              ) -> tuple[bool, float | None, str | None]:
    """Tell whether all levels meet all targets at f [Hz]; else the first failing level, target."""
    need_svm = any(t.kind == "svm" for t in targets)
    d = drive.with_frequency(f)
    for lv in levels:  # lowest level first: usually the worst
        fig = figures(d.at(lv), lv, need_svm=need_svm)
        for t in targets:
            if not fig.meets(t):
                return False, float(lv), t.name
    return True, None, None


def check_tolerance(tolerance: float) -> float:
    """Return a valid frequency tolerance (fraction, 0 to :data:`MAX_TOLERANCE`); else raise."""
    try:
        t = float(tolerance)
    except (TypeError, ValueError):
        raise SettingsError(f"frequency tolerance must be a number, got {tolerance!r}") from None
    if not (math.isfinite(t) and 0.0 <= t <= MAX_TOLERANCE):
        raise SettingsError(f"frequency tolerance must be 0 to {MAX_TOLERANCE * 100:g} %, got "
                            f"{t * 100:g} %")
    return t


@dataclass(frozen=True)
class AbruptPoint:
    """A PWM frequency at which a target's figure may jump.

    Attributes
    ----------
    frequency_hz : float
        The PWM frequency [Hz].
    target : str
        ``svm`` or ``ieee1789``.
    cause : str
        What reaches which band end or break there.
    """

    frequency_hz: float
    target: str
    cause: str

    def to_dict(self) -> dict:
        """Return the JSON object of the abrupt point."""
        return {"frequency_hz": self.frequency_hz, "target": self.target, "cause": self.cause}


@dataclass(frozen=True)
class AbruptChange(AbruptPoint):
    """An abrupt point near the recommended frequency, with the worst level's figure around it.

    Attributes
    ----------
    figure_below, figure_at, figure_above : float or str
        The worst level's SVM [unitless] (or IEEE 1789 region) just below, at
        and just above ``frequency_hz``.
    inside_band : bool
        Whether the recommended tolerance band contains it.
    offset_percent : float
        Its offset from the recommended frequency [%].
    """

    figure_below: float | str = ""
    figure_at: float | str = ""
    figure_above: float | str = ""
    inside_band: bool = False
    offset_percent: float = 0.0

    def to_dict(self) -> dict:
        """Return the JSON object of the abrupt change, with the figures around it."""
        return {**super().to_dict(), "figure_below": self.figure_below,
                "figure_at": self.figure_at, "figure_above": self.figure_above,
                "inside_band": self.inside_band, "offset_percent": self.offset_percent}


def abrupt_points(drive: Drive, targets: Sequence[Target], f_lo: float, f_hi: float
                  ) -> list[AbruptPoint]:
    """Find the PWM frequencies in [f_lo, f_hi] [Hz] at which a target's figure jumps.

    Parameters
    ----------
    drive : Drive
        The dimming scheme.
    targets : sequence of Target
    f_lo, f_hi : float
        PWM frequencies searched [Hz].

    Returns
    -------
    list of AbruptPoint
        Sorted by frequency.

    Notes
    -----
    SVM sums the components from 80 Hz to 2 kHz, both ends included
    (:data:`flickerkit.svm.DEFAULT_F_MIN_HZ`, :data:`~flickerkit.svm.DEFAULT_F_MAX_HZ`):
    it jumps where a line of the light crosses an end. The lines sit at
    ``(k / P) f + n f_r`` (P the dither pattern's PWM periods, at most 2^m;
    f_r the ripple frequency, n over its harmonics), so the jumps lie at
    ``f = (F - n f_r) P / k`` for F = 80 or 2000 Hz. IEEE 1789's low-risk line
    steps from 2.5 % to 8 % per 100 Hz at 90 Hz and ends at 1250 Hz, the
    no-observable-effect line ends at 3000 Hz (IEEE 1789-2015 clause 8): the
    fundamental reading may jump where the light's repetition frequency (``c f``
    for c evenly phased channels) crosses one of them (:func:`abrupt_changes`
    keeps those where it does). At most 400 points are kept.
    """
    from . import svm

    out: list[AbruptPoint] = []
    if any(t.kind == "svm" for t in targets):
        P = 2 ** int(drive.dither_bits) if drive.dither_bits else 1
        rip = drive.ripple if drive.ripple is not None and drive.ripple.percent > 0 else None
        fr = rip.frequency_hz if rip else 0.0
        nmax = (24 if rip.shape == "rectified" else 1) if rip else 0
        for F, end in ((svm.DEFAULT_F_MAX_HZ, "upper"), (svm.DEFAULT_F_MIN_HZ, "lower")):
            for n in range(-nmax, nmax + 1):
                top = (F - n * fr) * P
                if top <= 0:
                    continue
                k_lo = max(1, math.ceil(top / f_hi - 1e-12))
                k_hi = math.floor(top / f_lo + 1e-12)
                for k in range(k_lo, min(k_hi, k_lo + 400) + 1):
                    what = (f"harmonic {k}" if P == 1 else f"line {k}/{P}") + " of the PWM"
                    if n:
                        what += f" {'+' if n > 0 else '-'} {abs(n)} x the ripple frequency"
                    out.append(AbruptPoint(top / k, "svm", f"{what} reaches the {F:g} Hz "
                                                           f"{end} end of SVM's band"))
    if any(t.kind.startswith("ieee1789") for t in targets):
        mult = drive.channels if drive.channels > 1 else 1
        breaks = ((ieee1789.LOW_FREQUENCY_BREAK_HZ, "IEEE 1789's low-risk line steps"),
                  (ieee1789.LOW_RISK_EXEMPT_ABOVE_HZ, "IEEE 1789's low-risk line ends"),
                  (ieee1789.NOEL_EXEMPT_ABOVE_HZ, "IEEE 1789's no-observable-effect line "
                                                  "ends (99.9 % just below)"))
        for c in sorted({1, mult}):
            for fb, what in breaks:
                f = fb / c
                if f_lo <= f <= f_hi:
                    out.append(AbruptPoint(f, "ieee1789",
                                           f"the light's repetition frequency reaches "
                                           f"{fb:g} Hz, where {what}"))
    out.sort(key=lambda d: d.frequency_hz)
    return out[:400]


def band_frequencies(drive: Drive, targets: Sequence[Target], f_hz: float, tolerance: float
                     ) -> np.ndarray:
    """Return the frequencies that stand for the band ``f (1 +- tolerance)`` [Hz].

    Its ends, :data:`BAND_POINTS` log-spaced points between them, and each
    abrupt point inside (:func:`abrupt_points`) with its neighbours a relative
    1e-9 either side: between abrupt points the figures change smoothly, so
    the worst of the band is found among these.
    """
    lo, hi = f_hz * (1.0 - tolerance), f_hz * (1.0 + tolerance)
    if tolerance == 0:
        return np.array([f_hz])
    pts = [np.geomspace(lo, hi, BAND_POINTS + 2)]
    for a in abrupt_points(drive, targets, lo, hi):
        c = a.frequency_hz
        pts.append(np.array([c * (1 - _EDGE_STEP), c, c * (1 + _EDGE_STEP)]))
    f = np.unique(np.concatenate(pts))
    return f[(f >= lo) & (f <= hi)]


def check_band(drive: Drive, f_hz: float, tolerance: float, levels: Sequence[float],
               targets: Sequence[Target]) -> tuple[bool, float | None, float | None, str | None]:
    """Check that every frequency of ``f (1 +- tolerance)`` meets the targets at every level.

    Returns
    -------
    (passed, failing frequency [Hz], failing level, failing target)
        The lowest failing frequency of the band, or Nones when it passes.
    """
    for f in band_frequencies(drive, targets, f_hz, tolerance):
        if not _valid_frequency(drive, float(f)):
            return False, float(f), None, "drive timing"
        ok, lv, tn = _check_at(drive, float(f), levels, targets)
        if not ok:
            return False, float(f), lv, tn
    return True, None, None, None


def band_meets(drive: Drive, f_hz: float, tolerance: float, levels: Sequence[float],
               targets: Sequence[Target]) -> dict[str, bool]:
    """Tell, per target, whether it is met at every level over ``f (1 +- tolerance)``.

    Each frequency and level is modelled once for all targets (see
    :func:`band_frequencies` for the frequencies checked).
    """
    ok = {t.name: True for t in targets}
    need_svm = any(t.kind == "svm" for t in targets)
    for f in band_frequencies(drive, targets, f_hz, tolerance):
        if not _valid_frequency(drive, float(f)):
            return {t.name: False for t in targets}
        d = drive.with_frequency(float(f))
        for lv in levels:
            fig = figures(d.at(lv), lv, need_svm=need_svm)
            for t in targets:
                if ok[t.name] and not fig.meets(t):
                    ok[t.name] = False
        if not any(ok.values()):
            break
    return ok


def recommend(drive: Drive, targets: Sequence[Target], levels: Sequence[float],
              lowest_hz: float, tolerance: float, f_max_hz: float
              ) -> tuple[float | None, list[str]]:
    """Find the lowest frequency from ``lowest_hz`` up whose tolerance band meets the targets.

    Parameters
    ----------
    lowest_hz : float
        Lowest frequency above which the targets hold (from :func:`lowest_frequency`) [Hz].
    tolerance : float
        Frequency tolerance of the clock [unitless fraction].
    f_max_hz : float
        Highest frequency searched [Hz].

    Returns
    -------
    (frequency [Hz] or None, notes)
        Starts at ``lowest_hz / (1 - tolerance)`` (the band's lower end at the
        lowest passing frequency) and moves up past any failing point found in
        the band.
    """
    notes: list[str] = []
    f = lowest_hz / (1.0 - tolerance) * (1 + 1e-9) if tolerance else lowest_hz
    for _ in range(50):
        if f * (1.0 + tolerance) > f_max_hz * (1 + 1e-12) and f > f_max_hz:
            return None, notes
        ok, f_bad, lv, tn = check_band(drive, f, tolerance, levels, targets)
        if ok:
            return f, notes
        notes.append(f"{f:.6g} Hz: at {f_bad:.6g} Hz within its band"
                     + (f" level {lv * 100:.3g} % fails {tn}" if lv is not None else
                        " the drive's timing fails"))
        assert f_bad is not None  # check_band names the failing frequency
        f = f_bad / (1.0 - tolerance) * (1 + 1e-6)
    return None, notes


def abrupt_changes(drive: Drive, targets: Sequence[Target], levels: Sequence[float],
                   f_hz: float, tolerance: float) -> list[AbruptChange]:
    """Find the abrupt changes of the targets near ``f_hz``, with the figures either side.

    "Near" is within :data:`NEARBY_FRACTION` of ``f_hz`` or twice the
    tolerance, whichever is wider. Each entry gives the PWM frequency, the
    cause, the worst level's figure just below and at/above it (SVM value, or
    IEEE 1789 region) and whether the recommended band contains it.
    """
    w = max(NEARBY_FRACTION, 2 * tolerance)
    out = []
    seen = set()
    for a in abrupt_points(drive, targets, f_hz * (1 - w), f_hz * (1 + w)):
        c = a.frequency_hz
        key = (a.target, round(c, 9))
        if key in seen or not _valid_frequency(drive, c * (1 - 1e-6)):
            continue
        seen.add(key)
        sides: dict[str, float | str] = {}
        for side, f in (("below", c * (1 - 1e-6)), ("at", c), ("above", c * (1 + 1e-6))):
            d = drive.with_frequency(f)
            figs = [figures(d.at(lv), lv, need_svm=a.target == "svm") for lv in levels]
            if a.target == "svm":
                sides[side] = max(fg.svm for fg in figs)
            else:
                ranks = [ieee1789.REGIONS.index(fg.ieee1789.region) if fg.ieee1789 else 0
                         for fg in figs]
                sides[side] = ieee1789.REGIONS[max(ranks)]
        if sides["below"] == sides["above"] == sides["at"]:
            continue
        out.append(AbruptChange(a.frequency_hz, a.target, a.cause, sides["below"], sides["at"],
                                sides["above"],
                                f_hz * (1 - tolerance) <= c <= f_hz * (1 + tolerance),
                                100.0 * (c / f_hz - 1.0)))
    return out


def _valid_frequency(drive: Drive, f: float) -> bool:
    try:
        drive.with_frequency(f)
        return True
    except SettingsError:
        return False


@dataclass(frozen=True)
class FrequencyResult:
    """Lowest frequency meeting targets.

    Attributes
    ----------
    targets : tuple of Target
    frequency_hz : float or None
        Lowest frequency found, None when none in the range meets them [Hz].
    holds_above : bool
        Every grid frequency above it meets the targets too (true by
        construction: the search returns the frequency above the last failing
        grid point).
    passing_below_hz : tuple of float
        Grid frequencies below a failing one that pass anyway [Hz]; SVM ignores
        components below its lower band limit, so very low frequencies can
        "pass" an SVM target while flickering visibly (direct flicker, judged
        by Pst LM, not by this planner).
    limiting_level : float or None
        Level that failed just below the found frequency [unitless].
    limiting_target : str or None
        Target that failed there.
    """

    targets: tuple[Target, ...]
    frequency_hz: float | None
    holds_above: bool
    passing_below_hz: tuple[float, ...]
    limiting_level: float | None
    limiting_target: str | None

    def to_dict(self) -> dict:
        """Return the JSON object of the result; the limiting level in percent."""
        lv = percent(self.limiting_level)
        return {"targets": [t.name for t in self.targets], "frequency_hz": self.frequency_hz,
                "holds_at_all_higher_frequencies_checked": self.holds_above,
                "isolated_passing_below_hz": list(self.passing_below_hz),
                "limiting_level": lv, "limiting_target": self.limiting_target}


def lowest_frequency(
    drive: Drive,
    targets: Sequence[Target],
    levels: Sequence[float],
    *,
    range_hz: tuple[float, float] = DEFAULT_RANGE_HZ,
    grid_points: int = GRID_POINTS,
) -> FrequencyResult:
    """Find the lowest PWM frequency at which every level meets every target.

    Parameters
    ----------
    drive : Drive
        The dimming scheme (its own frequency is ignored).
    targets : sequence of Target
    levels : sequence of float
        Dimming levels that must all pass [unitless].
    range_hz : (float, float)
        Frequencies searched [Hz].
    grid_points : int
        Points of the log-spaced grid. The answer is the lowest frequency
        above the last failing grid point (refined by bisection), so every
        grid frequency above it passes.

    Returns
    -------
    FrequencyResult
    """
    lo, hi = range_hz
    if not (0 < lo < hi):
        raise SettingsError(f"frequency range must satisfy 0 < low < high, got {lo:g}..{hi:g} Hz")
    levels = sorted(float(x) for x in levels)
    grid = [f for f in np.geomspace(lo, hi, grid_points) if _valid_frequency(drive, float(f))]
    if not grid:
        raise SettingsError("no frequency in the range suits the drive's rise, fall and "
                            "delay times (each must be shorter than the period)")
    ok, info = [], []
    for f in grid:
        passed, lv, tn = _check_at(drive, float(f), levels, targets)
        ok.append(passed)
        info.append((lv, tn))
    failing_idx = [i for i, p in enumerate(ok) if not p]
    if not failing_idx:
        return FrequencyResult(tuple(targets), float(grid[0]), True, (), None, None)
    last = failing_idx[-1]
    if last == len(grid) - 1:
        return FrequencyResult(tuple(targets), None, False, (), *info[last])
    # the answer is where the targets hold for good: above the last failing grid point
    f_lo, f_hi, fail_info = float(grid[last]), float(grid[last + 1]), info[last]
    while f_hi - f_lo > FREQUENCY_RTOL * f_hi:
        mid = math.sqrt(f_lo * f_hi)
        passed, lv, tn = _check_at(drive, mid, levels, targets)
        if passed:
            f_hi = mid
        else:
            f_lo, fail_info = mid, (lv, tn)
    below = tuple(float(grid[i]) for i in range(last) if ok[i])
    return FrequencyResult(tuple(targets), f_hi, True, below, *fail_info)


@dataclass(frozen=True)
class Resolution:
    """What resolution the dimming needs.

    Either ``bits`` (counts >= 2^bits) or ``min_level`` with ``max_step``
    (one count at the smallest level is at most that relative step).

    Attributes
    ----------
    bits : float or None
        [bits].
    min_level : float
        Smallest level that must be made [unitless].
    max_step : float or None
        Largest relative step allowed at ``min_level`` [unitless].
    """

    bits: float | None = None
    min_level: float = 0.001
    max_step: float | None = None

    def __post_init__(self) -> None:
        if self.bits is not None and not (1 <= self.bits <= 32):
            raise SettingsError(f"resolution must be 1 to 32 bits, got {self.bits:g}")
        if not (0 < self.min_level <= 1):
            raise SettingsError(f"smallest level must be in (0, 1], got {self.min_level:g}")
        if self.max_step is not None and not (self.max_step > 0):
            raise SettingsError(f"largest relative step must be positive, got {self.max_step:g}")

    @property
    def light_step(self) -> float:
        """Return the largest light step allowed at the bottom [fraction of full output]."""
        steps = []
        if self.bits is not None:
            steps.append(2.0 ** -self.bits)
        if self.max_step is not None:
            steps.append(self.max_step * self.min_level)
        return min(steps) if steps else math.inf

    @property
    def counts(self) -> int:
        """Return the counts per period needed with plain PWM [counts]."""
        s = self.light_step
        return 1 if math.isinf(s) else int(math.ceil(1.0 / s - 1e-9))

    def describe(self) -> str:
        """Say in words what resolution is needed (``none`` when nothing is asked)."""
        parts = []
        if self.bits is not None:
            parts.append(f"{self.bits:g} bits")
        if self.max_step is not None:
            parts.append(f"steps of at most {self.max_step * 100:g} % at level "
                         f"{self.min_level * 100:g} %")
        return " and ".join(parts) or "none"


@dataclass(frozen=True)
class SettingCheck:
    """A timer setting checked against the targets and the resolution.

    Attributes
    ----------
    setting : flickerkit.timers.TimerSetting
    minimum_duty : float
        Shortest light pulse the drive makes at the setting's frequency, as a
        duty [unitless].
    minimum_count : int
        Counts of that pulse.
    reaches_smallest_level : bool
        Whether the smallest level is above it (over the tolerance band).
    meets : tuple of str
        Targets met over the setting's tolerance band, and ``resolution``.
    meets_all : bool
        Every target and the resolution.
    """

    setting: TimerSetting
    minimum_duty: float
    minimum_count: int
    reaches_smallest_level: bool
    meets: tuple[str, ...]
    meets_all: bool

    def to_dict(self) -> dict:
        """Return the JSON object of the check: the setting's keys and the checks."""
        return {**self.setting.to_dict(), "minimum_duty": self.minimum_duty,
                "minimum_count": self.minimum_count,
                "reaches_smallest_level": self.reaches_smallest_level,
                "meets": list(self.meets), "meets_all": self.meets_all}


def _setting_record(s: TimerSetting, drive: Drive, res: Resolution,
                    targets: Sequence[Target], levels: Sequence[float],
                    tolerance: float = 0.0) -> SettingCheck:
    rise = drive.edges.rise_s if drive.edges.kind != "ideal" else 0.0
    dmin = minimum_duty(s.frequency_hz, turn_on_delay_s=drive.turn_on_delay_s, rise_s=rise,
                        min_on_time_s=drive.min_on_time_s)
    # a target is met when it is met over the setting's whole tolerance band
    met = [t.name for t in targets if band_meets(drive, s.frequency_hz, tolerance, levels,
                                                 targets)[t.name]]
    resolution_ok = s.counts >= res.counts
    pwm_bottom = res.min_level / (drive.crossover if drive.method == "hybrid" else 1.0)
    # a fast clock shortens the period: the fixed shortest pulse is a larger duty there
    reaches_bottom = dmin * (1.0 + tolerance) <= pwm_bottom
    if resolution_ok and reaches_bottom:
        met.append("resolution")
    return SettingCheck(s, dmin, int(math.ceil(dmin * s.counts - 1e-9)), reaches_bottom,
                        tuple(met), len(met) == len(targets) + 1)


@dataclass(frozen=True)
class ClockOption:
    """Way out: a faster timer clock, or a high-resolution timer.

    Attributes
    ----------
    clock_hz : float
        Timer clock needed (edge-aligned, prescaler 1) [Hz].
    high_resolution_step_s : float
        Edge step a high-resolution timer needs instead [s].
    cost : str
        The option in words.
    """

    clock_hz: float
    high_resolution_step_s: float
    cost: str
    option: str = "faster clock or high-resolution timer"

    def to_dict(self) -> dict:
        """Return the JSON object of the clock option."""
        return {"option": self.option, "clock_hz": self.clock_hz,
                "high_resolution_step_s": self.high_resolution_step_s, "cost": self.cost}


@dataclass(frozen=True)
class HybridOption:
    """Way out: analogue dimming above a crossover level, PWM below.

    Attributes
    ----------
    possible : bool
        False when the crossover would lie below the smallest level.
    cost : str
        The option in words.
    crossover : float or None
        Crossover level [fraction 0-1; ``crossover_level`` in percent in the JSON].
    frequency_hz : float or None
        PWM frequency below the crossover [Hz].
    counts_per_period : int or None
        Counts per PWM period.
    meets : tuple of str
        Targets met at every level.
    """

    possible: bool
    cost: str
    crossover: float | None = None
    frequency_hz: float | None = None
    counts_per_period: int | None = None
    meets: tuple[str, ...] = ()
    option: str = "hybrid dimming"

    def to_dict(self) -> dict:
        """Return the JSON object of the option; the crossover level in percent."""
        if not self.possible:
            return {"option": self.option, "possible": False, "cost": self.cost}
        return {"option": self.option, "possible": True,
                "crossover_level": percent(self.crossover),
                "frequency_hz": self.frequency_hz, "counts_per_period": self.counts_per_period,
                "meets": list(self.meets), "cost": self.cost}


@dataclass(frozen=True)
class DitherOption:
    """Way out: dithering the PWM count over a pattern of periods, with its own flicker.

    Attributes
    ----------
    possible : bool
        False above 12 dither bits (not modelled).
    extra_bits : int
        Dither bits needed.
    cost : str
        The option in words.
    pattern_frequency_hz : float or None
        Repetition frequency of the pattern [Hz].
    counts_at_bottom : float or None
        Mean counts of the worst pattern near the smallest level.
    lowest_component_hz : float or None
        Lowest Fourier component of its light [Hz].
    largest_subharmonic_percent : float or None
        Largest component below the PWM frequency [% of the mean].
    analytic_subharmonic_percent : float or None
        Its closed form, ``100 (2 / P) / (N + 1 / P)`` [%].
    frame_average_modulation_percent : float or None
        Percent flicker of the per-period means over the pattern [%].
    svm : float or None
        SVM of the worst pattern, when an SVM target is set [unitless].
    ieee1789_region_fundamental, ieee1789_region_per_harmonic : str or None
        IEEE 1789 regions of the worst pattern.
    meets : tuple of str
        Targets met.
    """

    possible: bool
    extra_bits: int
    cost: str
    pattern_frequency_hz: float | None = None
    counts_at_bottom: float | None = None
    lowest_component_hz: float | None = None
    largest_subharmonic_percent: float | None = None
    analytic_subharmonic_percent: float | None = None
    frame_average_modulation_percent: float | None = None
    svm: float | None = None
    ieee1789_region_fundamental: str | None = None
    ieee1789_region_per_harmonic: str | None = None
    meets: tuple[str, ...] = ()
    option: str = "dithering"

    def to_dict(self) -> dict:
        """Return the JSON object of the dithering option (only ``cost`` if not possible)."""
        if not self.possible:
            return {"option": self.option, "extra_bits": self.extra_bits, "possible": False,
                    "cost": self.cost}
        return {
            "option": self.option, "possible": True, "extra_bits": self.extra_bits,
            "pattern_frequency_hz": self.pattern_frequency_hz,
            "counts_at_bottom": self.counts_at_bottom,
            "lowest_component_hz": self.lowest_component_hz,
            "largest_subharmonic_percent": self.largest_subharmonic_percent,
            "analytic_subharmonic_percent": self.analytic_subharmonic_percent,
            "frame_average_modulation_percent": self.frame_average_modulation_percent,
            "svm": self.svm,
            "ieee1789_region_fundamental": self.ieee1789_region_fundamental,
            "ieee1789_region_per_harmonic": self.ieee1789_region_per_harmonic,
            "meets": list(self.meets), "cost": self.cost,
        }


#: A way out of an infeasible plan.
Option = ClockOption | HybridOption | DitherOption


def _dither_cost(drive: Drive, s: TimerSetting, res: Resolution, targets: Sequence[Target]
                 ) -> DitherOption:
    """Cost the dithering option: bits needed and the dither's own flicker at the setting."""
    m = max(1, math.ceil(math.log2(res.counts / s.counts) - 1e-12))
    if m > MAX_DITHER_BITS:
        return DitherOption(False, m, f"{m} dither bits would be needed (more than "
                                      f"{MAX_DITHER_BITS} are not modelled); the pattern would "
                                      f"repeat at {s.frequency_hz / 2 ** m:.3g} Hz")
    f = s.frequency_hz
    P = 2 ** m
    N = max(1, int(math.floor(res.min_level * s.counts)))
    # the worst pattern near the bottom: N + 1/P counts (one extra count every P periods)
    model = DitheredPwm(f, (N + 1.0 / P) / s.counts, s.counts, m, edges=drive.edges,
                        turn_on_delay_s=drive.turn_on_delay_s,
                        min_on_time_s=drive.min_on_time_s, min_on_mode=drive.min_on_mode,
                        ripple=drive.ripple)
    light = model.light()
    fs = light.fourier_series(min(f, SVM_F_MAX_HZ * 4))
    lowest = float(fs.frequencies_hz[0]) if fs.frequencies_hz.size else None
    sub = fs.frequencies_hz < f * (1 - 1e-9)
    amp = float(fs.amplitudes[sub].max()) if sub.any() else 0.0
    per_h = (ieee1789.classify_components(fs.frequencies_hz[sub], fs.amplitudes[sub])
             if sub.any() else None)
    frame_means = light.interval_means(np.arange(P + 1) / f)
    frame_mod = metrics.percent_flicker_of_extremes(float(frame_means.max()),
                                                    float(frame_means.min()))
    need_svm = any(t.kind == "svm" for t in targets)
    fig = figures(model, N / s.counts, need_svm=need_svm)
    met = tuple(t.name for t in targets if fig.meets(t))
    return DitherOption(
        True, m,
        (f"{m} dither bits on {s.counts} counts at {f:.6g} Hz: the light repeats at "
         f"{f / P:.4g} Hz with sub-harmonics up to {100 * amp:.3g} % of the mean at "
         f"{N + 1 / P:.4g} counts (the dimmest levels); SVM {fig.svm:.3g}"
         if need_svm else
         f"{m} dither bits: the light repeats at {f / P:.4g} Hz with sub-harmonics up "
         f"to {100 * amp:.3g} % of the mean at the dimmest levels"),
        pattern_frequency_hz=f / P, counts_at_bottom=N + 1.0 / P,
        lowest_component_hz=lowest, largest_subharmonic_percent=100.0 * amp,
        analytic_subharmonic_percent=100.0 * (2.0 / P) / (N + 1.0 / P),
        frame_average_modulation_percent=frame_mod,
        svm=fig.svm if need_svm else None,
        ieee1789_region_fundamental=fig.ieee1789.region if fig.ieee1789 else None,
        ieee1789_region_per_harmonic=per_h.region if per_h else None,
        meets=met)


@dataclass(frozen=True)
class Plan:
    """A PWM frequency and timer plan for a drive (:func:`plan`).

    Attributes
    ----------
    drive : str
        Description of the drive, without its frequency (the plan sweeps it).
    targets : tuple of Target
    levels : tuple of float
        Levels that must pass [fraction 0-1; percent in :meth:`to_dict`].
    range_hz : (float, float)
        Frequencies searched [Hz].
    frequency : FrequencyResult
        Lowest frequency meeting every target on an exact clock.
    per_target : tuple of FrequencyResult
        The same per target.
    resolution : Resolution
    tolerance : float
        Clock tolerance [fraction; ``tolerance_percent`` in the JSON].
    recommended_frequency_hz : float or None
        Lowest frequency whose whole band ``f (1 +- tolerance)`` meets the
        targets [Hz]; None when none up to the range's top does.
    recommendation_notes : tuple of str
        Bands checked on the way and why they failed.
    abrupt_changes : tuple of AbruptChange
        Nearby frequencies where a target's figure jumps.
    timer : flickerkit.timers.Timer or None
    settings : tuple of SettingCheck
        Timer settings from the recommended frequency up.
    feasible : bool or None
        Whether a setting meets everything (None without a timer).
    options : tuple of ClockOption, HybridOption or DitherOption
        Ways out when none does.
    verdict : str or None
        The plan in one sentence (None without a timer and with a recommendation).
    warnings : tuple of str
        How the plan may be wrong for the product (several channels judged on
        their summed light).
    """

    drive: str
    targets: tuple[Target, ...]
    levels: tuple[float, ...]
    range_hz: tuple[float, float]
    frequency: FrequencyResult
    per_target: tuple[FrequencyResult, ...]
    resolution: Resolution
    tolerance: float
    recommended_frequency_hz: float | None
    recommendation_notes: tuple[str, ...]
    abrupt_changes: tuple[AbruptChange, ...]
    timer: Timer | None = None
    settings: tuple[SettingCheck, ...] = ()
    feasible: bool | None = None
    options: tuple[Option, ...] = ()
    verdict: str | None = None
    warnings: tuple[str, ...] = ()

    @property
    def lowest_frequency_hz(self) -> float | None:
        """Return the lowest frequency meeting every target on an exact clock [Hz]."""
        return self.frequency.frequency_hz

    @property
    def recommended_band_hz(self) -> tuple[float, float] | None:
        """Return the recommended frequency's tolerance band [Hz]."""
        f = self.recommended_frequency_hz
        return None if f is None else (f * (1 - self.tolerance), f * (1 + self.tolerance))

    def to_dict(self) -> dict:
        """Return the JSON object of the plan.

        Keys as the ``plan`` command documents them; levels, the tolerance and
        the crossover level are in percent.
        """
        t = self.timer
        band = self.recommended_band_hz
        out = {
            "drive": self.drive,
            "targets": [x.name for x in self.targets],
            "levels": [percent(float(x)) for x in self.levels],
            "range_hz": list(self.range_hz),
            "lowest_frequency_hz": self.lowest_frequency_hz,
            "frequency": self.frequency.to_dict(),
            "per_target": [r.to_dict() for r in self.per_target],
            "resolution": {"need": self.resolution.describe(),
                           "counts_needed": self.resolution.counts,
                           "light_step": self.resolution.light_step},
            "timer": None if t is None else {"clock_hz": t.clock_hz,
                                             "prescalers": list(t.prescalers),
                                             "max_top": t.max_top, "modes": list(t.modes)},
            "settings": [r.to_dict() for r in self.settings],
            "feasible": self.feasible,
            "options": [o.to_dict() for o in self.options],
            "tolerance_percent": 100.0 * self.tolerance,
            "recommended_frequency_hz": self.recommended_frequency_hz,
            "recommended_band_hz": None if band is None else list(band),
            "recommendation_notes": list(self.recommendation_notes),
            "abrupt_changes": [a.to_dict() for a in self.abrupt_changes],
        }
        if self.verdict is not None:
            out["verdict"] = self.verdict
        out["warnings"] = list(self.warnings)
        return out


def plan(
    drive: Drive,
    targets: Sequence[Target],
    *,
    levels: Sequence[float] | np.ndarray | None = None,
    range_hz: tuple[float, float] = DEFAULT_RANGE_HZ,
    timer: Timer | None = None,
    prescalers: tuple[int, ...] | None = None,
    resolution: Resolution | None = None,
    tolerance: float = DEFAULT_TOLERANCE,
) -> Plan:
    """Plan a PWM frequency and timer setting for a drive.

    Parameters
    ----------
    drive : Drive
        Dimming scheme (PWM or hybrid).
    targets : sequence of Target
        Perception targets, all to be met.
    levels : sequence of float, optional
        Levels that must pass; default :func:`default_levels` from the
        resolution's smallest level (0.1 %).
    range_hz : (float, float)
        Frequencies searched [Hz].
    timer : Timer, optional
        The timer; without one, only the frequency is planned.
    prescalers : tuple of int, optional
        Restrict the timer's prescalers (each must be one it has).
    resolution : Resolution, optional
        What the dimming needs; default none.
    tolerance : float
        Frequency tolerance of the PWM clock (oscillator and timer clock
        error), a fraction [unitless]; default :data:`DEFAULT_TOLERANCE`
        (2 %, an internal RC oscillator; common practice, no source).

    Returns
    -------
    Plan
        The plan (``to_dict()`` is the JSON; see the ``plan`` command's help
        for the keys). ``lowest_frequency_hz`` is the lowest frequency meeting the targets
        on an exact clock; ``recommended_frequency_hz`` the lowest whose whole
        band ``f (1 +- tolerance)`` meets them, and the timer settings start
        there; ``abrupt_changes`` lists nearby frequencies where a target's
        figure jumps (an SVM band end, IEEE 1789's 90 Hz step).

    Raises
    ------
    SettingsError
        If the drive is analogue, or no frequency in the range meets the
        targets.
    """
    if drive.method == "analogue":
        raise SettingsError("an analogue drive has no PWM frequency to plan; use pwm or hybrid")
    res = resolution or Resolution()
    tol = check_tolerance(tolerance)
    lv = [float(x) for x in
          np.asarray(levels if levels is not None else default_levels(res.min_level), float)]
    combined = lowest_frequency(drive, targets, lv, range_hz=range_hz)
    per_target = [lowest_frequency(drive, [t], lv, range_hz=range_hz) for t in targets] \
        if len(targets) > 1 else [combined]
    if combined.frequency_hz is None:
        worst = combined.limiting_level
        raise SettingsError(
            f"no PWM frequency from {range_hz[0]:g} Hz to {range_hz[1]:g} Hz meets "
            f"{', '.join(t.name for t in targets)} across the levels"
            + (f" (level {worst * 100:.3g} % fails {combined.limiting_target} even at "
               f"{range_hz[1]:g} Hz)" if worst is not None else ""))
    f_rec, rec_notes = recommend(drive, targets, lv, combined.frequency_hz, tol, range_hz[1])
    near = f_rec if f_rec is not None else combined.frequency_hz
    head = functools.partial(
        Plan, drive=drive.describe(frequency=False),  # the plan sweeps the frequency
        targets=tuple(targets), levels=tuple(lv), range_hz=(range_hz[0], range_hz[1]),
        frequency=combined, per_target=tuple(per_target), resolution=res, tolerance=tol,
        recommended_frequency_hz=f_rec, recommendation_notes=tuple(rec_notes),
        abrupt_changes=tuple(abrupt_changes(drive, targets, lv, near, tol)),
        warnings=tuple(_channel_warning(drive, targets, lv, f_rec)))
    if f_rec is None:
        return head(verdict=f"no frequency up to {range_hz[1]:g} Hz keeps its whole "
                            f"+-{100 * tol:g} % tolerance band within the targets")
    if timer is None:
        return head()
    f_req = f_rec
    settings = timer.settings_at_least(f_req, prescalers=prescalers)
    if not settings:
        return head(timer=timer, feasible=False, options=(_clock_option(res, f_req),),
                    verdict=f"the timer cannot reach {f_req:.6g} Hz with TOP >= 2; a faster "
                            f"clock is needed")
    recs = tuple(_setting_record(s, drive, res, targets, lv, tol) for s in settings)
    head = functools.partial(head, timer=timer, settings=recs,
                             feasible=any(r.meets_all for r in recs))
    best = settings[0]
    if any(r.meets_all for r in recs):
        return head(verdict="at least one timer setting meets the targets and the resolution")
    if best.counts >= res.counts and not recs[0].reaches_smallest_level:
        # the counter is fine grained enough; the drive's shortest pulse is the limit, which
        # a faster clock or dithering cannot shorten
        reach = [r for r in recs if r.reaches_smallest_level]
        verdict = (f"no timer setting at {f_req:.6g} Hz or above has both the resolution "
                   f"({res.describe()}) and a light pulse short enough for the smallest "
                   f"level {res.min_level * 100:g} %: the finest, {best.mode} prescaler "
                   f"{best.prescaler} TOP {best.top} at {best.frequency_hz:.6g} Hz, has the "
                   f"resolution, but the drive's shortest light pulse (turn-on delay, rise, "
                   f"minimum on-time) is {recs[0].minimum_duty * 100:.3g} % of its period")
        if reach:
            r0 = reach[0].setting
            verdict += (f"; the settings that make the smallest level lack the resolution "
                        f"(the finest of them, {r0.mode} prescaler {r0.prescaler} TOP "
                        f"{r0.top} at {r0.frequency_hz:.6g} Hz, has {r0.bits:.2f} bits)")
        else:
            verdict += "; no setting makes the smallest level"
        return head(verdict=verdict, options=(_hybrid_option(drive, best, res, targets, lv),))
    return head(
        verdict=f"no timer setting meets both the targets at {f_req:.6g} Hz and "
                f"the resolution ({res.describe()}): the finest gives {best.counts} "
                f"counts ({best.bits:.2f} bits), {res.counts} are needed",
        options=(_clock_option(res, f_req), _hybrid_option(drive, best, res, targets, lv),
                 _dither_cost(drive, best, res, targets)))


def _channel_warning(drive: Drive, targets: Sequence[Target], levels: Sequence[float],
                     f_hz: float | None) -> list[str]:
    """Warn that phased channels are judged on their sum, with what one channel alone meets."""
    if drive.channels <= 1 or f_hz is None:
        return []
    one = replace(drive, channels=1, phase_offsets_deg=(), frequency_hz=f_hz)
    need_svm = any(t.kind == "svm" for t in targets)
    figs = [figures(one.at(lv), lv, need_svm=need_svm) for lv in levels]
    fails = [t.name for t in targets if not all(f.meets(t) for f in figs)]
    if not fails:
        return []
    return [f"the {drive.channels} channels are judged on their summed light; one channel "
            f"alone at {f_hz:.6g} Hz fails {', '.join(fails)}. This holds only where the "
            f"channels' light mixes before it reaches the eye and the scene (one optic, one "
            f"colour); for separate colours or spots plan with --channels 1"]


def _clock_option(res: Resolution, f_req: float) -> ClockOption:
    clk = clock_needed(res.counts, f_req, "edge")
    step = 1.0 / (res.counts * f_req)
    return ClockOption(clk, step,
                       f"a timer clock of at least {clk / 1e6:.4g} MHz (edge-aligned, prescaler "
                       f"1), or a high-resolution timer placing edges in steps of "
                       f"{step * 1e9:.3g} ns or finer (check its minimum pulse and period)")


def _hybrid_option(drive: Drive, s: TimerSetting, res: Resolution, targets: Sequence[Target],
                   levels: Sequence[float]) -> HybridOption:
    rise = drive.edges.rise_s if drive.edges.kind != "ideal" else 0.0
    dmin = minimum_duty(s.frequency_hz, turn_on_delay_s=drive.turn_on_delay_s, rise_s=rise,
                        min_on_time_s=drive.min_on_time_s)
    c = min(1.0, s.counts * res.light_step)
    if dmin > 0:
        c = min(c, res.min_level / dmin)
    if c <= res.min_level:
        return HybridOption(False, "the crossover would have to lie below the smallest level; "
                                   "hybrid dimming alone does not help")
    hyb = replace(drive, method="hybrid", crossover=c, frequency_hz=s.frequency_hz,
                  counts_per_period=None, dither_bits=0)
    need_svm = any(t.kind == "svm" for t in targets)
    figs = [figures(hyb.at(lv), lv, need_svm=need_svm) for lv in levels]
    met = tuple(t.name for t in targets if all(f.meets(t) for f in figs))
    return HybridOption(True, f"analogue (constant-current) dimming from 100 % down to "
                              f"{c * 100:.3g} %, PWM at {c * 100:.3g} % current below: needs a "
                              f"settable current reference over {1 / c:.3g}:1, and LED colour "
                              f"may shift with current",
                        crossover=c, frequency_hz=s.frequency_hz, counts_per_period=s.counts,
                        meets=met)


__all__ = ["DEFAULT_TOLERANCE", "AbruptChange", "AbruptPoint", "ClockOption", "DitherOption",
           "FrequencyResult", "HybridOption", "LevelFigures", "Option", "Plan", "Resolution",
           "SettingCheck", "Target",
           "abrupt_changes", "abrupt_points", "band_frequencies", "band_meets", "check_band",
           "check_tolerance", "default_levels", "figures", "lowest_frequency", "parse_targets",
           "plan", "recommend", "svm_of_series"]
