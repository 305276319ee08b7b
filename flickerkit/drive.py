"""Drive models: the light a dimming drive makes at one operating point, and dimming schemes.

A drive model describes the light of one LED drive at one operating point
(pulse-width modulation at a duty, constant current at a level, several
channels, dithered PWM). Each model is a small frozen dataclass whose
:meth:`~LightModel.light` is a :class:`~flickerkit.light.Light` (built once), with

* :meth:`~LightModel.capture`: a sampled light waveform as a
  :class:`~flickerkit.capture.Capture`, each sample the exact average of the
  light over its sample interval, over a whole number of periods; this is what
  goes through :func:`flickerkit.assess.assess` like a measured capture;
* :meth:`~LightModel.fourier_series`: its Fourier series in closed form from the
  same waveform, so the two agree.

Every model reduces to one or more trains of constant, linear or exponential
segments (:mod:`flickerkit.waveform`) times an optional line ripple
(:class:`~flickerkit.light.Ripple`). :class:`Drive` is a dimming scheme (PWM,
analogue, hybrid; channels, timer counts, dithering): :meth:`Drive.at` turns a
dimming level into a model. A drive file (TOML) becomes a :class:`Drive` in
:mod:`flickerkit.drivefile`.

Levels (duty, off-level, on-level, dimming level) are fractions 0-1 inside;
percent appears only in names that say so (``percent``).
"""

from __future__ import annotations

import math
import numbers
from dataclasses import dataclass, replace

import numpy as np

from .capture import Capture
from .errors import SettingsError
from .light import DEFAULT_MAX_SAMPLES, FourierSeries, Light, Ripple
from .validate import MAX_DITHER_BITS, check_fraction, check_positive
from .waveform import FREQ_RTOL, Train, pulse_train

#: Edge models of a PWM pulse.
EDGE_KINDS = ("ideal", "first-order", "linear")

#: What the driver does with a light pulse shorter than its minimum on-time.
MIN_ON_MODES = ("clamp", "skip")

#: Dimming methods of :class:`Drive`.
METHODS = ("pwm", "analogue", "hybrid")


@dataclass(frozen=True)
class Edges:
    """How the light follows the drive command at each edge.

    Parameters
    ----------
    kind : str
        ``"ideal"`` (instant), ``"first-order"`` (exponential approach with
        time constants ``rise_s`` and ``fall_s``) or ``"linear"`` (slew-limited:
        a full swing from off-level to on-level takes ``rise_s``, and back
        ``fall_s``; a short pulse makes a triangle).
    rise_s : float
        Rise time constant or full-swing rise time [s].
    fall_s : float
        Fall time constant or full-swing fall time [s].
    """

    kind: str = "ideal"
    rise_s: float = 0.0
    fall_s: float = 0.0

    def __post_init__(self) -> None:
        if self.kind not in EDGE_KINDS:
            raise SettingsError(f"unknown edge kind {self.kind!r}; choose one of "
                                f"{', '.join(EDGE_KINDS)}")
        check_positive(self.rise_s, "rise time [s]", allow_zero=True)
        check_positive(self.fall_s, "fall time [s]", allow_zero=True)

    def describe(self) -> str:
        """Describe the edges in a few words (rise and fall in us)."""
        if self.kind == "ideal" or (self.rise_s == 0 and self.fall_s == 0):
            return "ideal edges"
        return (f"{self.kind} edges rise {self.rise_s * 1e6:g} us, "
                f"fall {self.fall_s * 1e6:g} us")


IDEAL = Edges()


class LightModel:
    """Shared methods of the drive models (each defines ``light()``)."""

    def light(self) -> Light:
        """Return the model's light waveform, built once and kept (models are frozen)."""
        lt = self.__dict__.get("_light")
        if lt is None:
            lt = self._build_light()
            object.__setattr__(self, "_light", lt)
        return lt

    def _build_light(self) -> Light:  # pragma: no cover - defined by each model
        raise NotImplementedError

    @property
    def fundamental_hz(self) -> float | None:
        """Repetition frequency of the light [Hz] (None when steady)."""
        return self.light().fundamental_hz

    @property
    def mean(self) -> float:
        """Mean light [relative to the full on-level]."""
        return self.light().mean

    def fourier_series(self, f_max_hz: float = 2000.0) -> FourierSeries:
        """Fourier series up to ``f_max_hz`` [Hz]; see :meth:`Light.fourier_series`."""
        return self.light().fourier_series(f_max_hz)

    def modulation_percent(self) -> float:
        """Return the percent flicker of the modelled light [percent]."""
        return self.light().modulation_percent()

    def capture(self, sample_rate_hz: float | None = None, duration_s: float | None = None,
                *, max_samples: int = DEFAULT_MAX_SAMPLES, label: str = "") -> Capture:
        """Sample the light; see :meth:`Light.capture`."""
        return self.light().capture(sample_rate_hz, duration_s, max_samples=max_samples,
                                    label=label)


def _check_pwm_timing(frequency_hz: float, edges: Edges, delay_s: float, min_on_s: float,
                      mode: str) -> None:
    f = check_positive(frequency_hz, "PWM frequency [Hz]")
    T = 1.0 / f
    for name, v in (("rise time", edges.rise_s), ("fall time", edges.fall_s)):
        if v >= T:
            raise SettingsError(f"{name} {v * 1e6:g} us is not shorter than the PWM period "
                                f"{T * 1e6:g} us at {f:g} Hz")
    check_positive(delay_s, "turn-on delay [s]", allow_zero=True)
    check_positive(min_on_s, "minimum on-time [s]", allow_zero=True)
    if delay_s >= T:
        raise SettingsError(f"turn-on delay {delay_s * 1e6:g} us is not shorter than the PWM "
                            f"period {T * 1e6:g} us")
    if min_on_s >= T:
        raise SettingsError(f"minimum on-time {min_on_s * 1e6:g} us is not shorter than the "
                            f"PWM period {T * 1e6:g} us")
    if mode not in MIN_ON_MODES:
        raise SettingsError(f"unknown minimum on-time mode {mode!r}; choose one of "
                            f"{', '.join(MIN_ON_MODES)}")


def _check_levels(on_level: float, off_level: float) -> None:
    check_positive(on_level, "on-level")
    check_positive(off_level, "off-level", allow_zero=True)
    if off_level >= on_level:
        raise SettingsError(f"off-level {off_level:g} must be below the on-level {on_level:g}")


def _is_whole(v: object) -> bool:
    """Return whether ``v`` is a whole number (an int, or a float with no fraction)."""
    return isinstance(v, numbers.Real) and math.isfinite(v) and float(v).is_integer()


def _check_counts(counts: int) -> None:
    if not _is_whole(counts) or counts < 1:
        raise SettingsError(f"counts per period must be a positive whole number, got {counts!r}")


def _check_dither_bits(bits: int) -> None:
    if not _is_whole(bits) or not (0 <= bits <= MAX_DITHER_BITS):
        raise SettingsError(
            f"dither bits must be a whole number from 0 to {MAX_DITHER_BITS}, got {bits!r}")


def _check_pwm_model(m: Pwm | DitheredPwm) -> None:
    """Check the settings every PWM model shares: duty, levels, timing."""
    check_fraction(m.duty, "duty")
    _check_levels(m.on_level, m.off_level)
    _check_pwm_timing(m.frequency_hz, m.edges, m.turn_on_delay_s, m.min_on_time_s,
                      m.min_on_mode)


def _pwm_train(m: Pwm | DitheredPwm, widths_s: np.ndarray, shift_s: float) -> Train:
    """Build the train of a PWM model's gate widths per frame [s], delayed by ``shift_s`` [s]."""
    e = m.edges
    return pulse_train(1.0 / m.frequency_hz, widths_s, m.off_level, m.on_level,
                       edge_kind=e.kind, rise_s=e.rise_s, fall_s=e.fall_s,
                       delay_s=m.turn_on_delay_s, min_on_s=m.min_on_time_s,
                       min_on_mode=m.min_on_mode, shift_s=shift_s)


@dataclass(frozen=True)
class Pwm(LightModel):
    """Pulse-width-modulated light.

    Parameters
    ----------
    frequency_hz : float
        PWM frequency [Hz].
    duty : float
        Commanded on-fraction of the period (gate) [unitless, 0-1].
    on_level : float
        Light while on [relative to full output].
    off_level : float
        Light while off (leakage or a floor current) [relative to full output].
    edges : Edges
        Rise and fall of the light.
    turn_on_delay_s : float
        Delay from the gate's rising edge to the start of the light pulse [s].
    min_on_time_s : float
        Shortest light pulse the driver makes [s].
    min_on_mode : str
        ``"clamp"``: a shorter pulse is stretched to the minimum; ``"skip"``:
        it is not made.
    phase_deg : float
        Delay of the whole waveform as a phase of the PWM period [degree].
    ripple : Ripple, optional
        Line ripple multiplying the light.

    Examples
    --------
    >>> fs = Pwm(1000.0, 0.5).fourier_series(3000.0)
    >>> [round(float(c), 6) for c in fs.amplitudes]
    [1.27324, 0.424413]
    """

    frequency_hz: float
    duty: float
    on_level: float = 1.0
    off_level: float = 0.0
    edges: Edges = IDEAL
    turn_on_delay_s: float = 0.0
    min_on_time_s: float = 0.0
    min_on_mode: str = "clamp"
    phase_deg: float = 0.0
    ripple: Ripple | None = None

    def __post_init__(self) -> None:
        _check_pwm_model(self)

    @property
    def period_s(self) -> float:
        """PWM period [s]."""
        return 1.0 / self.frequency_hz

    def describe(self) -> str:
        """Describe the PWM model: frequency, duty, off-level, edges and ripple."""
        s = f"PWM {self.frequency_hz:g} Hz duty {self.duty * 100:.6g} %"
        if self.off_level:
            s += f", off-level {self.off_level:g}"
        if self.edges.kind != "ideal":
            s += ", " + self.edges.describe()
        if self.ripple:
            s += f", {self.ripple.percent:g} % {self.ripple.shape} ripple"
        return s

    def _train(self) -> Train:
        T = self.period_s
        return _pwm_train(self, np.array([self.duty * T]), self.phase_deg / 360.0 * T)

    def _build_light(self) -> Light:
        return Light((self._train(),), self.ripple, self.describe())


@dataclass(frozen=True)
class ConstantCurrent(LightModel):
    """Constant-current (analogue) dimming: steady light with optional ripple.

    Parameters
    ----------
    level : float
        Light [relative to full output].
    ripple : Ripple, optional
        Residual ripple at twice the line frequency.
    """

    level: float
    ripple: Ripple | None = None

    def __post_init__(self) -> None:
        check_positive(self.level, "analogue level")

    def describe(self) -> str:
        """Describe the analogue model: level and ripple."""
        s = f"analogue {self.level * 100:.6g} %"
        if self.ripple:
            s += f", {self.ripple.percent:g} % {self.ripple.shape} ripple"
        return s

    def _build_light(self) -> Light:
        period = 1.0 / self.ripple.frequency_hz if self.ripple else 0.01
        return Light((Train.constant(self.level, period),), self.ripple, self.describe())


@dataclass(frozen=True)
class MultiChannel(LightModel):
    """Several PWM channels or strings whose light adds.

    Parameters
    ----------
    channels : tuple of Pwm
        Channels at one PWM frequency, each with its own duty, levels, edges
        and ``phase_deg``; give ripple here, not on the channels.
    ripple : Ripple, optional
        Ripple of the common supply, multiplying the sum.
    """

    channels: tuple[Pwm, ...]
    ripple: Ripple | None = None

    def __post_init__(self) -> None:
        if not self.channels:
            raise SettingsError("a multi-channel drive needs at least one channel")
        f = self.channels[0].frequency_hz
        for i, ch in enumerate(self.channels):
            if abs(ch.frequency_hz - f) > FREQ_RTOL * f:
                raise SettingsError(f"channel {i + 1} runs at {ch.frequency_hz:g} Hz, channel 1 "
                                    f"at {f:g} Hz; channels must share one PWM frequency")
            if ch.ripple is not None:
                raise SettingsError("give ripple on the multi-channel drive, not on a channel")

    def describe(self) -> str:
        """Describe the channels: frequency, duty, phases and ripple."""
        ph = ", ".join(f"{c.phase_deg:g}" for c in self.channels)
        s = (f"{len(self.channels)} channels PWM {self.channels[0].frequency_hz:g} Hz duty "
             f"{self.channels[0].duty * 100:.6g} %, phases {ph} deg")
        if self.ripple:
            s += f", {self.ripple.percent:g} % {self.ripple.shape} ripple"
        return s

    def _build_light(self) -> Light:
        return Light(tuple(c._train() for c in self.channels), self.ripple, self.describe())


def sigma_delta_counts(target_counts: float, extra_bits: int) -> np.ndarray:
    """Return the per-frame counts of first-order sigma-delta dithering over one pattern.

    Parameters
    ----------
    target_counts : float
        Wanted mean count per PWM period [counts]; quantised to 1 / 2^m.
    extra_bits : int
        m, the dither bits: the pattern spans at most 2^m PWM periods.

    Returns
    -------
    numpy.ndarray
        Integer counts of the frames of one repetition of the pattern
        (length 2^m / gcd(p, 2^m) for fraction p / 2^m; 1 without a fraction).

    Notes
    -----
    The accumulator starts at 0 and adds p each frame; a frame carries N + 1
    counts when it overflows 2^m: ``n_j = N + floor((j+1) p / P) - floor(j p / P)``
    with P = 2^m.

    Examples
    --------
    >>> sigma_delta_counts(1 + 1 / 4, 2).tolist()
    [1, 1, 1, 2]
    """
    P = 1 << int(extra_bits)
    q = int(round(target_counts * P))
    N, p = divmod(q, P)
    if p == 0:
        return np.array([N], dtype=np.int64)
    g = math.gcd(p, P)
    frames = P // g
    j = np.arange(frames, dtype=np.int64)
    return N + ((j + 1) * p) // P - (j * p) // P


@dataclass(frozen=True)
class DitheredPwm(LightModel):
    """PWM whose count is dithered across periods by first-order sigma-delta.

    Parameters
    ----------
    frequency_hz : float
        PWM frequency [Hz].
    duty : float
        Wanted mean duty [unitless, 0-1].
    counts_per_period : int
        Timer counts in one PWM period (TOP + 1 edge-aligned, TOP
        centre-aligned); one count is the smallest duty step [counts].
    extra_bits : int
        m dither bits: the duty resolves to 1 / (counts 2^m).
    on_level, off_level, edges, turn_on_delay_s, min_on_time_s, min_on_mode, ripple
        As for :class:`Pwm`.

    Notes
    -----
    For a mean count N + 1/P the light carries components at f_pwm / P and its
    harmonics, of amplitude about (2/P) / (N + 1/P) relative to the mean
    (computed here, by simulation); their depth is largest at the dimmest
    levels.
    """

    frequency_hz: float
    duty: float
    counts_per_period: int
    extra_bits: int
    on_level: float = 1.0
    off_level: float = 0.0
    edges: Edges = IDEAL
    turn_on_delay_s: float = 0.0
    min_on_time_s: float = 0.0
    min_on_mode: str = "clamp"
    ripple: Ripple | None = None

    def __post_init__(self) -> None:
        _check_pwm_model(self)
        _check_counts(self.counts_per_period)
        _check_dither_bits(self.extra_bits)

    def frame_counts(self) -> np.ndarray:
        """Return the counts of each PWM period over one pattern repetition [counts]."""
        return sigma_delta_counts(self.duty * self.counts_per_period, self.extra_bits)

    def describe(self) -> str:
        """Describe the dithered model: frequency, duty, counts and dither bits."""
        return (f"PWM {self.frequency_hz:g} Hz duty {self.duty * 100:.6g} % on "
                f"{self.counts_per_period} counts with {self.extra_bits}-bit sigma-delta dither")

    def _build_light(self) -> Light:
        T = 1.0 / self.frequency_hz
        widths = self.frame_counts() / self.counts_per_period * T
        return Light((_pwm_train(self, widths, 0.0),), self.ripple, self.describe())


# --------------------------------------------------------------------------- dimming scheme
@dataclass(frozen=True)
class Drive:
    """A dimming scheme: how a dimming level becomes light.

    Parameters
    ----------
    method : str
        ``"pwm"``: duty = level; ``"analogue"``: constant current = level;
        ``"hybrid"``: analogue down to ``crossover``, then PWM at the
        crossover current with duty = level / crossover.
    frequency_hz : float
        PWM frequency [Hz].
    edges, off_level, turn_on_delay_s, min_on_time_s, min_on_mode
        As for :class:`Pwm` (off-level relative to full output).
    ripple : Ripple, optional
        Line ripple on the light (on-level and off-level alike).
    crossover : float
        Hybrid crossover level [unitless, 0-1].
    channels : int
        Channels or strings driven together; each carries 1/channels of the
        output, at duty = level.
    phase_offsets_deg : tuple of float
        Phase of each channel [degree]; default evenly spread over 360.
    counts_per_period : int, optional
        Timer counts per PWM period; the duty is rounded to whole counts
        (or dithered with ``dither_bits``). None: any duty.
    dither_bits : int
        First-order sigma-delta dither bits across PWM periods (needs
        ``counts_per_period``).
    """

    method: str = "pwm"
    frequency_hz: float = 1000.0
    edges: Edges = IDEAL
    off_level: float = 0.0
    turn_on_delay_s: float = 0.0
    min_on_time_s: float = 0.0
    min_on_mode: str = "clamp"
    ripple: Ripple | None = None
    crossover: float = 0.1
    channels: int = 1
    phase_offsets_deg: tuple[float, ...] = ()
    counts_per_period: int | None = None
    dither_bits: int = 0

    def __post_init__(self) -> None:
        if self.method not in METHODS:
            raise SettingsError(f"unknown dimming method {self.method!r}; choose one of "
                                f"{', '.join(METHODS)}")
        if self.method != "analogue":
            _check_pwm_timing(self.frequency_hz, self.edges, self.turn_on_delay_s,
                              self.min_on_time_s, self.min_on_mode)
        check_fraction(self.off_level, "off-level")
        if self.off_level >= 1.0:
            raise SettingsError("off-level must be below 1 (the full output)")
        c = check_fraction(self.crossover, "crossover")
        if self.method == "hybrid" and not (0 < c < 1):
            raise SettingsError(f"hybrid crossover must lie between 0 and 1, got {c:g}")
        if not _is_whole(self.channels) or self.channels < 1:
            raise SettingsError(f"channels must be a positive whole number, got "
                                f"{self.channels!r}")
        if self.phase_offsets_deg and len(self.phase_offsets_deg) != self.channels:
            raise SettingsError(f"{len(self.phase_offsets_deg)} phase offsets given for "
                                f"{self.channels} channels")
        if self.counts_per_period is not None:
            _check_counts(self.counts_per_period)
        if self.dither_bits and self.counts_per_period is None:
            raise SettingsError("dithering needs the timer counts per period "
                                "(counts_per_period)")
        _check_dither_bits(self.dither_bits)
        if self.channels > 1 and self.dither_bits:
            raise SettingsError("dithering of several channels is not modelled; use one channel")

    @property
    def phases_deg(self) -> tuple[float, ...]:
        """Channel phases [degree]."""
        if self.phase_offsets_deg:
            return tuple(float(p) for p in self.phase_offsets_deg)
        return tuple(360.0 * i / self.channels for i in range(self.channels))

    def with_frequency(self, frequency_hz: float) -> "Drive":
        """Return the same scheme at another PWM frequency [Hz]."""
        return replace(self, frequency_hz=frequency_hz)

    def describe(self, *, frequency: bool = True) -> str:
        """Name the drive in one line; ``frequency=False`` when a plan chooses it."""
        parts = [self.method]
        if self.method != "analogue":
            parts.append(f"{self.frequency_hz:g} Hz" if frequency else "frequency from the plan")
        if self.method == "hybrid":
            parts.append(f"crossover {self.crossover * 100:g} %")
        if self.edges.kind != "ideal":
            parts.append(self.edges.describe())
        if self.off_level:
            parts.append(f"off-level {self.off_level:g}")
        if self.turn_on_delay_s:
            parts.append(f"turn-on delay {self.turn_on_delay_s * 1e6:g} us")
        if self.min_on_time_s:
            parts.append(f"min on-time {self.min_on_time_s * 1e6:g} us ({self.min_on_mode})")
        if self.channels > 1:
            phases = ", ".join(f"{p:g}" for p in self.phases_deg)
            parts.append(f"{self.channels} channels at {phases} deg")
        if self.counts_per_period:
            parts.append(f"{self.counts_per_period} counts/period")
        if self.dither_bits:
            parts.append(f"{self.dither_bits}-bit dither")
        if self.ripple:
            parts.append(f"{self.ripple.percent:g} % {self.ripple.shape} ripple at "
                         f"{self.ripple.frequency_hz:g} Hz")
        return ", ".join(parts)

    def _pwm(self, duty: float, on_level: float) -> LightModel:
        off = self.off_level * on_level if self.method == "hybrid" else self.off_level
        off = min(off, on_level * 0.999999)
        edges, delay_s = self.edges, self.turn_on_delay_s
        min_on_s, min_on_mode = self.min_on_time_s, self.min_on_mode
        if self.dither_bits:
            assert self.counts_per_period is not None  # __post_init__ refuses dither without
            return DitheredPwm(self.frequency_hz, duty, int(self.counts_per_period),
                               int(self.dither_bits), on_level=on_level, off_level=off,
                               ripple=self.ripple, edges=edges, turn_on_delay_s=delay_s,
                               min_on_time_s=min_on_s, min_on_mode=min_on_mode)
        if self.counts_per_period:
            duty = round(duty * self.counts_per_period) / self.counts_per_period
        if self.channels == 1:
            return Pwm(self.frequency_hz, duty, on_level=on_level, off_level=off,
                       ripple=self.ripple, edges=edges, turn_on_delay_s=delay_s,
                       min_on_time_s=min_on_s, min_on_mode=min_on_mode)
        n = self.channels
        chans = tuple(Pwm(self.frequency_hz, duty, on_level=on_level / n, off_level=off / n,
                          phase_deg=p, edges=edges, turn_on_delay_s=delay_s,
                          min_on_time_s=min_on_s, min_on_mode=min_on_mode)
                      for p in self.phases_deg)
        return MultiChannel(chans, ripple=self.ripple)

    def at(self, level: float) -> LightModel:
        """Return the light model at a dimming level.

        Parameters
        ----------
        level : float
            Dimming level, the command (duty for PWM, current for analogue)
            [unitless, 0-1, above 0].
        """
        lv = check_fraction(level, "dimming level")
        if lv <= 0:
            raise SettingsError("dimming level must be above 0")
        if self.method == "analogue" or (self.method == "hybrid" and lv >= self.crossover):
            return ConstantCurrent(lv, self.ripple)
        if self.method == "hybrid":
            return self._pwm(lv / self.crossover, self.crossover)
        return self._pwm(lv, 1.0)


__all__ = [
    "ConstantCurrent", "DitheredPwm", "Drive", "Edges", "LightModel", "MultiChannel", "Pwm",
    "Ripple", "sigma_delta_counts", "EDGE_KINDS", "METHODS", "MIN_ON_MODES",
]
