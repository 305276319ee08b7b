"""PWM timer arithmetic: counter modes, prescalers, TOP, resolution and duty limits.

A general counter/compare timer clocked at f_clk, divided by a prescaler N:

* **edge-aligned** (single slope, 0..TOP then reload):
  ``f_pwm = f_clk / (N (TOP + 1))``, duty = CMP / (TOP + 1): TOP + 1 counts
  per period;
* **centre-aligned** (dual slope, 0..TOP..0):
  ``f_pwm = f_clk / (2 N TOP)``; one compare step moves each edge by a tick,
  so duty = CMP / TOP: TOP counts per period.

Resolution is log2 of the counts per period; the smallest duty step is one
count. Vendors differ at the edges (the 100 % state, the CMP/(TOP+1)
off-by-one, minimum pulses of high-resolution modes), so this module takes
them as parameters and states its convention.

References
----------
Timer relations of general counter/compare timers as microcontroller timer
manuals give them (the edge-aligned relation as read in a timer datasheet
quoted second-hand; the centre-aligned relation from memory).
"""

from __future__ import annotations

import math
from dataclasses import dataclass

import numpy as np

from .errors import SettingsError

#: Counter modes.
MODES = ("edge", "centre")


def _mode(mode: str) -> str:
    m = {"edge": "edge", "edge-aligned": "edge", "centre": "centre", "center": "centre",
         "centre-aligned": "centre", "center-aligned": "centre"}.get(str(mode))
    if m is None:
        raise SettingsError(f"unknown counter mode {mode!r}; choose edge or centre")
    return m


def pwm_frequency(clock_hz: float, prescaler: int, top: int | np.ndarray,
                  mode: str = "edge") -> float | np.ndarray:
    """PWM frequency of a timer setting.

    Parameters
    ----------
    clock_hz : float
        Timer input clock [Hz].
    prescaler : int
        Divide ratio N (not the register value) [unitless].
    top : int or array
        Counter TOP value [counts].
    mode : str
        ``"edge"`` or ``"centre"``.

    Returns
    -------
    float or numpy.ndarray
        ``f_clk / (N (TOP + 1))`` (edge) or ``f_clk / (2 N TOP)`` (centre) [Hz].

    Examples
    --------
    >>> pwm_frequency(16e6, 1, 255)
    62500.0
    >>> pwm_frequency(16e6, 1, 256, "centre")
    31250.0
    """
    m = _mode(mode)
    t = np.asarray(top, dtype=np.float64)
    f = clock_hz / (prescaler * (t + 1.0)) if m == "edge" else clock_hz / (2.0 * prescaler * t)
    return float(f) if np.ndim(f) == 0 else f


def counts_per_period(top: int, mode: str = "edge") -> int:
    """Duty counts in one PWM period: TOP + 1 (edge) or TOP (centre) [counts]."""
    return int(top) + 1 if _mode(mode) == "edge" else int(top)


def bits_available(clock_hz: float, frequency_hz: float, mode: str = "edge") -> float:
    """Resolution a timer can give at a PWM frequency with prescaler 1 [bits].

    ``log2(f_clk / f)`` edge-aligned, ``log2(f_clk / (2 f))`` centre-aligned.
    """
    if frequency_hz <= 0:
        raise SettingsError(f"PWM frequency must be positive, got {frequency_hz:g} Hz")
    div = 1.0 if _mode(mode) == "edge" else 2.0
    return math.log2(clock_hz / (div * frequency_hz))


def counts_needed(min_level: float, max_relative_step: float) -> int:
    """Return the counts per period at which one count at ``min_level`` is at most that step.

    Parameters
    ----------
    min_level : float
        Smallest dimming level that must still be set finely [unitless, 0-1].
    max_relative_step : float
        Largest allowed step there, relative to the level (a Weber fraction)
        [unitless].

    Returns
    -------
    int
        ``ceil(1 / (w Y_min))`` [counts] (computed here).
    """
    if not (0 < min_level <= 1):
        raise SettingsError(f"smallest level must be in (0, 1], got {min_level:g}")
    if not (0 < max_relative_step):
        raise SettingsError(f"largest relative step must be positive, got {max_relative_step:g}")
    return int(math.ceil(1.0 / (max_relative_step * min_level) - 1e-9))


def clock_needed(counts: int, frequency_hz: float, mode: str = "edge") -> float:
    """Timer clock for ``counts`` per period at ``frequency_hz``, prescaler 1 [Hz]."""
    return counts * frequency_hz * (1.0 if _mode(mode) == "edge" else 2.0)


def minimum_duty(frequency_hz: float, *, turn_on_delay_s: float = 0.0, rise_s: float = 0.0,
                 min_on_time_s: float = 0.0) -> float:
    """Return the smallest commanded duty that makes a full light pulse.

    ``D_min = (t_D + max(t_rise, t_min_on)) f``: the pulse must outlast the
    turn-on delay plus the rise (or the driver's minimum on-time) [unitless].

    References
    ----------
    Driver application-note definition D_min = (t_D + t_SU) f_PWM, contrast
    ratio 1/D_min, as driver application notes commonly define it (as read
    in a secondary Q&A, no standard).
    """
    return (turn_on_delay_s + max(rise_s, min_on_time_s)) * frequency_hz


def maximum_duty(frequency_hz: float, *, fall_s: float = 0.0) -> float:
    """Return the largest duty before the fall eats the off-time: ``(T - t_fall) / T``."""
    return max(0.0, 1.0 - fall_s * frequency_hz)


@dataclass(frozen=True)
class Timer:
    """A counter/compare timer.

    Parameters
    ----------
    clock_hz : float
        Input clock [Hz].
    prescalers : tuple of int
        Divide ratios N the timer offers [unitless].
    max_top : int
        Largest TOP the counter holds (65535 for 16 bits) [counts].
    modes : tuple of str
        Counter modes offered (``"edge"``, ``"centre"``).
    """

    clock_hz: float
    prescalers: tuple[int, ...] = (1,)
    max_top: int = 65535
    modes: tuple[str, ...] = MODES

    def __post_init__(self) -> None:
        try:
            clk = float(self.clock_hz)
        except (TypeError, ValueError):
            raise SettingsError(f"timer clock must be a number of hertz, got "
                                f"{self.clock_hz!r}") from None
        if not math.isfinite(clk) or clk <= 0:
            raise SettingsError(f"timer clock must be positive, got {clk:g} Hz")
        if not self.prescalers:
            raise SettingsError("the timer needs at least one prescaler")
        for n in self.prescalers:
            if int(n) != n or n < 1:
                raise SettingsError(f"prescaler {n!r} is not a positive whole divide ratio")
        if int(self.max_top) != self.max_top or self.max_top < 2:
            raise SettingsError(f"largest TOP must be a whole number of at least 2, got "
                                f"{self.max_top!r}")
        object.__setattr__(self, "modes", tuple(_mode(m) for m in self.modes))

    def check_prescaler(self, prescaler: int) -> int:
        """Return ``prescaler`` if the timer has it, else raise SettingsError."""
        if prescaler not in self.prescalers:
            raise SettingsError(f"the timer has no prescaler {prescaler}; it has "
                                f"{', '.join(str(p) for p in self.prescalers)}")
        return int(prescaler)

    def settings_at_least(self, frequency_hz: float, *, prescalers: tuple[int, ...] | None = None
                          ) -> list["TimerSetting"]:
        """For each mode and prescaler, the finest setting at or above a frequency.

        Parameters
        ----------
        frequency_hz : float
            Lowest acceptable PWM frequency [Hz].
        prescalers : tuple of int, optional
            Restrict to these (each must be one of the timer's).

        Returns
        -------
        list of TimerSetting
            The largest TOP (most counts) whose frequency is at least
            ``frequency_hz``, capped at ``max_top``; modes and prescalers that
            cannot reach the frequency with TOP >= 2 are left out. Sorted by
            counts per period, most first.
        """
        if frequency_hz <= 0:
            raise SettingsError(f"PWM frequency must be positive, got {frequency_hz:g} Hz")
        pres = self.prescalers if prescalers is None else tuple(
            self.check_prescaler(p) for p in prescalers)
        out = []
        for mode in self.modes:
            for n in pres:
                if mode == "edge":
                    top = math.floor(self.clock_hz / (n * frequency_hz) * (1 + 1e-12)) - 1
                else:
                    top = math.floor(self.clock_hz / (2 * n * frequency_hz) * (1 + 1e-12))
                top = min(top, self.max_top)
                if top < 2:
                    continue
                out.append(TimerSetting(self.clock_hz, mode, int(n), int(top)))
        # one setting per (mode, counts): a larger prescaler with the same counts adds nothing
        seen, unique = set(), []
        for s in sorted(out, key=lambda s: (-s.counts, -s.frequency_hz, s.prescaler)):
            key = (s.mode, s.counts, round(s.frequency_hz, 9))
            if key not in seen:
                seen.add(key)
                unique.append(s)
        return unique


@dataclass(frozen=True)
class TimerSetting:
    """One timer setting: mode, prescaler and TOP.

    Attributes
    ----------
    clock_hz : float
        Timer clock [Hz].
    mode : str
        ``"edge"`` or ``"centre"``.
    prescaler : int
        Divide ratio N.
    top : int
        TOP [counts].
    """

    clock_hz: float
    mode: str
    prescaler: int
    top: int

    @property
    def frequency_hz(self) -> float:
        """PWM frequency [Hz]."""
        return float(pwm_frequency(self.clock_hz, self.prescaler, self.top, self.mode))

    @property
    def counts(self) -> int:
        """Duty counts per period [counts]."""
        return counts_per_period(self.top, self.mode)

    @property
    def bits(self) -> float:
        """Resolution, log2(counts per period) [bits]."""
        return math.log2(self.counts)

    @property
    def duty_step(self) -> float:
        """Smallest duty step, one count [unitless]."""
        return 1.0 / self.counts

    @property
    def tick_s(self) -> float:
        """One counter tick, N / f_clk [s]."""
        return self.prescaler / self.clock_hz

    def minimum_count(self, *, turn_on_delay_s: float = 0.0, rise_s: float = 0.0,
                      min_on_time_s: float = 0.0) -> int:
        """Return the smallest compare value giving a full light pulse [counts]."""
        d = minimum_duty(self.frequency_hz, turn_on_delay_s=turn_on_delay_s, rise_s=rise_s,
                         min_on_time_s=min_on_time_s)
        return max(1, int(math.ceil(d * self.counts - 1e-9)))

    def to_dict(self) -> dict:
        """Return the JSON object; frequency in Hz, tick in seconds."""
        return {"mode": self.mode, "prescaler": self.prescaler, "top": self.top,
                "frequency_hz": self.frequency_hz, "counts_per_period": self.counts,
                "bits": self.bits, "duty_step": self.duty_step, "tick_s": self.tick_s}


__all__ = ["MODES", "Timer", "TimerSetting", "bits_available", "clock_needed",
           "counts_needed", "counts_per_period", "maximum_duty", "minimum_duty",
           "pwm_frequency"]
