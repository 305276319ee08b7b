"""Video cameras and modulated light: rolling-shutter banding and beat flicker.

Each sensor row integrates the light over the exposure time ``T_exp``; row i
starts ``i t_line`` after row 0. Its signal is therefore the running mean of
the light over a window ``T_exp``, sampled along the rows:

* **bands per frame** ``= f T_readout`` (``T_readout = rows t_line``); rows per
  band ``= 1 / (f t_line)``, aliased to ``1 / |f t_line - round(f t_line)|``
  when ``f t_line > 0.5``;
* **band contrast**: Michelson contrast ``(S_max - S_min) / (S_max + S_min)``
  of the running mean S over one period of the light; it vanishes when the
  exposure holds a whole number of periods;
* **beat**: frames start every ``1 / fps``; bands (or, with a global shutter,
  whole-frame brightness) move at ``fps dist(f / fps, nearest integer)``
  band periods per second and stand still when f is a multiple of fps.

S is computed from the drive model's exact integral, so edges, off-levels
and ripple are included; for ideal PWM of duty D it equals the closed form
``(S_max - S_min) = min(r, 1 - r, D, 1 - D) / (f T_exp)`` with
``f T_exp = n + r``.

References
----------
No published method: the closed form above and its check table are derived
here (computed here; no source for the closed form).
"""

from __future__ import annotations

import math
from dataclasses import dataclass
from fractions import Fraction
from typing import Sequence

import numpy as np

from .drive import LightModel
from .errors import SettingsError
from .light import Light
from .metrics import percent_flicker_of_extremes

#: Running-mean evaluation points per fundamental period added to the
#: breakpoints (exact for piecewise-constant light without them).
_GRID = 2048


@dataclass(frozen=True)
class Camera:
    """A video camera's timing.

    Parameters
    ----------
    frame_rate_hz : float
        Frames per second [Hz].
    exposure_s : float
        Exposure (integration) time of each row [s].
    readout_s : float, optional
        Time from the first to the last row starting [s]; default one frame
        period (``1 / frame_rate_hz``), the slowest a rolling shutter reads.
    rows : int
        Sensor rows read in ``readout_s``.
    """

    frame_rate_hz: float
    exposure_s: float
    readout_s: float | None = None
    rows: int = 1080

    def __post_init__(self) -> None:
        if not (math.isfinite(self.frame_rate_hz) and self.frame_rate_hz > 0):
            raise SettingsError(f"frame rate must be positive, got {self.frame_rate_hz:g} fps")
        if not (math.isfinite(self.exposure_s) and self.exposure_s > 0):
            raise SettingsError(f"exposure must be positive, got {self.exposure_s:g} s")
        if self.exposure_s > 1.0 / self.frame_rate_hz * (1 + 1e-9):
            raise SettingsError(f"exposure {self.exposure_s:g} s is longer than the frame period "
                                f"at {self.frame_rate_hz:g} fps")
        if self.readout_s is not None and not (self.readout_s > 0):
            raise SettingsError(f"readout time must be positive, got {self.readout_s:g} s")
        if self.readout_s is not None and self.readout_s > 1.0 / self.frame_rate_hz * (1 + 1e-9):
            # a rolling shutter reads every row once per frame
            raise SettingsError(f"readout time {self.readout_s * 1e3:g} ms is longer than the "
                                f"frame period {1e3 / self.frame_rate_hz:.4g} ms at "
                                f"{self.frame_rate_hz:g} fps")
        if int(self.rows) != self.rows or self.rows < 1:
            raise SettingsError(f"rows must be a positive whole number, got {self.rows!r}")

    @property
    def readout(self) -> float:
        """Readout time [s]."""
        return self.readout_s if self.readout_s is not None else 1.0 / self.frame_rate_hz

    @property
    def line_s(self) -> float:
        """Row-to-row start delay [s]."""
        return self.readout / self.rows


@dataclass(frozen=True)
class Banding:
    """Banding and beat of one camera setting under one light.

    Attributes
    ----------
    frame_rate_hz, exposure_s : float
        The camera [Hz], [s].
    light_frequency_hz : float or None
        Repetition frequency of the light [Hz].
    beat_hz : float
        Rate at which bands roll (band periods per second), or at which frame
        brightness beats with a global shutter [Hz]; 0 = standing.
    bands_per_frame : float
        Light periods across the frame readout [unitless].
    rows_per_band : float
        Rows per band period, after aliasing against the row rate [rows].
    contrast : float
        Michelson contrast of the rows' signal [unitless, 0-1].
    depth : float
        (S_max - S_min) / mean, peak-to-peak depth relative to the mean
        [unitless].
    """

    frame_rate_hz: float
    exposure_s: float
    light_frequency_hz: float | None
    beat_hz: float
    bands_per_frame: float
    rows_per_band: float
    contrast: float
    depth: float

    def to_dict(self) -> dict:
        """Return the JSON object; contrast and depth in percent."""
        return {"frame_rate_hz": self.frame_rate_hz, "exposure_s": self.exposure_s,
                "light_frequency_hz": self.light_frequency_hz, "beat_hz": self.beat_hz,
                "bands_per_frame": self.bands_per_frame, "rows_per_band": self.rows_per_band,
                "band_contrast_percent": 100.0 * self.contrast,
                "band_depth_percent": 100.0 * self.depth}


def running_mean_extremes(light: Light, window_s: float) -> tuple[float, float, float]:
    """Return the smallest and largest running mean of the light over a window, and the mean.

    Parameters
    ----------
    light : Light
        Modelled light.
    window_s : float
        Window (exposure) length [s].

    Returns
    -------
    (s_min, s_max, mean) : tuple of float
        [relative light].

    Notes
    -----
    ``S(t) = (F(t + W) - F(t)) / W`` with F the exact integral of the light.
    For piecewise-constant light S is piecewise linear in t with corners where
    t or t + W meets a light edge, so its extremes are among those times; a
    grid of points per period is added for other shapes.
    """
    f0 = light.fundamental_hz or light.base_frequency_hz
    T = 1.0 / f0 if f0 else window_s
    pts = [np.linspace(0.0, T, _GRID, endpoint=False)]
    reps = max(1, int(round(T * (light.base_frequency_hz or f0 or 1.0))))
    Tb = light.trains[0].period_s
    for tr in light.trains:
        b = (tr.breakpoints()[None, :] + (np.arange(reps) * Tb)[:, None]).ravel()
        pts += [b, b - window_s]
    t = np.mod(np.concatenate(pts), T)
    s = light.integral(t, t + window_s) / window_s
    return float(s.min()), float(s.max()), float(light.mean)


def beat_frequency(light_frequency_hz: float, frame_rate_hz: float) -> float:
    """Rate at which bands roll or frame brightness beats [Hz].

    ``fps * |f/fps - round(f/fps)|``: the light frequency folded against the
    frame rate. 1 kHz at 30 fps gives 10 Hz (bands move 10 band periods per
    second).
    """
    x = light_frequency_hz / frame_rate_hz
    return frame_rate_hz * abs(x - round(x))


def banding(model: LightModel | Light, camera: Camera) -> Banding:
    """Banding and beat of modelled light on a camera.

    Parameters
    ----------
    model : LightModel or Light
        A drive model at one level (or its light).
    camera : Camera
        The camera setting.

    Returns
    -------
    Banding
    """
    light = model.light() if isinstance(model, LightModel) else model
    f = light.fundamental_hz
    smin, smax, mean = running_mean_extremes(light, camera.exposure_s)
    if smax - smin <= 1e-12 * max(smax, 1e-300):
        smin = smax
    # Michelson contrast is percent flicker as a fraction; a dark frame has no banding: 0.0
    pf = percent_flicker_of_extremes(smax, smin)
    contrast = 0.0 if math.isnan(pf) else pf / 100.0
    depth = (smax - smin) / mean if mean > 0 else 0.0
    if f is None:
        return Banding(camera.frame_rate_hz, camera.exposure_s, None, 0.0, 0.0, math.inf,
                       contrast, depth)
    ft = f * camera.line_s
    alias = abs(ft - round(ft)) if ft > 0.5 else ft
    rows_per_band = 1.0 / alias if alias > 0 else math.inf
    return Banding(camera.frame_rate_hz, camera.exposure_s, f,
                   beat_frequency(f, camera.frame_rate_hz), f * camera.readout, rows_per_band,
                   contrast, depth)


#: Most frequencies sampled across one frequency's clock-tolerance band.
BAND_POINTS = 17


def _rational(x: float) -> Fraction:
    return Fraction(x).limit_denominator(1001)


def _lcm(values: Sequence[Fraction]) -> Fraction:
    num, den = 1, 0
    for v in values:
        num = math.lcm(num, v.numerator)
        den = math.gcd(den, v.denominator)
    return Fraction(num, den or 1)


@dataclass(frozen=True)
class Suggestion:
    """A PWM frequency and how the cameras see it.

    Attributes
    ----------
    frequency_hz : float
        PWM frequency [Hz].
    worst_contrast : float
        Largest band contrast over the cameras [unitless].
    standing : bool
        Bands stand still (f a multiple of every frame rate).
    reason : str
        Why it is suggested.
    """

    frequency_hz: float
    worst_contrast: float
    standing: bool
    reason: str

    def to_dict(self) -> dict:
        """Return the JSON object; the worst band contrast in percent."""
        return {"frequency_hz": self.frequency_hz,
                "worst_band_contrast_percent": 100.0 * self.worst_contrast,
                "standing": self.standing, "reason": self.reason}


def suggest_frequencies(
    model_at,
    cameras: Sequence[Camera],
    low_hz: float,
    high_hz: float,
    *,
    max_contrast: float = 0.01,
    count: int = 5,
    tolerance: float = 0.0,
) -> list[Suggestion]:
    """PWM frequencies in a range that avoid banding on the given cameras.

    Parameters
    ----------
    model_at : callable
        ``model_at(frequency_hz) -> LightModel``: the drive at the level of
        interest, at a PWM frequency.
    cameras : sequence of Camera
        Frame rates and exposures to satisfy together.
    low_hz, high_hz : float
        Frequency range [Hz].
    max_contrast : float
        Band contrast accepted [unitless].
    count : int
        Suggestions returned at most.
    tolerance : float
        Frequency tolerance of the PWM clock, a fraction [unitless]: each
        frequency is judged by its worst contrast over ``f (1 +- tolerance)``
        (sampled at up to :data:`BAND_POINTS` frequencies, ends included);
        0 judges the exact frequency. Bands then stand still only on an
        exact clock, so ``standing`` is False when ``tolerance > 0``.

    Returns
    -------
    list of Suggestion
        First the multiples of the least common multiple of all frame rates
        and of all 1/exposure (a whole number of periods in every exposure:
        no bands, and standing), then multiples of the frame rates' common
        multiple whose worst contrast is at most ``max_contrast``; failing
        both, the lowest-contrast frequencies of a log-spaced grid.
    """
    if not cameras:
        raise SettingsError("give at least one camera (frame rate and exposure)")
    if not (0 < low_hz < high_hz):
        raise SettingsError(f"frequency range must satisfy 0 < low < high, got "
                            f"{low_hz:g}..{high_hz:g} Hz")
    if not (0.0 <= max_contrast <= 1.0):
        raise SettingsError(f"accepted band contrast must be 0 to 100 %, got "
                            f"{max_contrast * 100:g} %")
    tol = float(tolerance)
    if not (0.0 <= tol < 0.5):
        raise SettingsError(f"frequency tolerance must be 0 to 50 %, got {tol * 100:g} %")
    fps = _lcm([_rational(c.frame_rate_hz) for c in cameras])
    full = _lcm([fps] + [_rational(1.0 / c.exposure_s) for c in cameras])
    longest = max(c.exposure_s for c in cameras)

    def worst(f: float) -> float:
        if tol == 0:
            m = model_at(f)
            return max(banding(m, c).contrast for c in cameras)
        # the contrast repeats each time the longest exposure gains one period: about four
        # points per such turn across the band, at least the ends and the centre
        turns = 2 * tol * f * longest
        n = int(min(BAND_POINTS, max(3, 2 * math.ceil(2 * turns) + 1)))
        return max(max(banding(model_at(g), c).contrast for c in cameras)
                   for g in f * (1.0 + tol * np.linspace(-1.0, 1.0, n)))

    out: list[Suggestion] = []
    seen: set[float] = set()
    for base, why in ((full, "a whole number of periods in every exposure and a multiple of "
                             "every frame rate"),
                      (fps, "a multiple of every frame rate (standing bands)")):
        b = float(base)
        k0 = max(1, math.ceil(low_hz / b - 1e-12))
        k1 = math.floor(high_hz / b + 1e-12)
        for k in range(k0, min(k1, k0 + 4 * count) + 1):
            f = k * b
            if f in seen:
                continue
            w = worst(f)
            if w <= max_contrast:
                seen.add(f)
                out.append(Suggestion(f, w, tol == 0, why + (
                    f"; worst over the +-{tol * 100:g} % clock band" if tol else "")))
            if len(out) >= count:
                return out
    if out:
        return out
    grid = np.geomspace(low_hz, high_hz, 200 if tol == 0 else 60)
    scored = sorted(((worst(float(f)), float(f)) for f in grid))
    return [Suggestion(f, w, tol == 0 and all(beat_frequency(f, c.frame_rate_hz) < 1e-9
                                              for c in cameras),
                       "lowest band contrast found on a frequency grid" + (
                           f"; worst over the +-{tol * 100:g} % clock band" if tol else ""))
            for w, f in scored[:count]]


__all__ = ["Banding", "Camera", "Suggestion", "banding", "beat_frequency",
           "running_mean_extremes", "suggest_frequencies"]
