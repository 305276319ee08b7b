"""Brightness tables on a PWM counter: quantisation, step visibility, calibration.

A table is built in three moves:

1. a dimming curve gives the relative light each step should have
   (:func:`flickerkit.curves.curve_levels`);
2. the light is turned into a counter value (compare count) for a counter of
   ``TOP`` (full scale, 100 % duty) -- through light proportional to duty, or
   through a product's measured count -> light transfer
   (:func:`fit_transfer`), so that the *light* follows the curve;
3. each step is judged: its realised light, CIE 1976 L*, the step from the
   previous level in L* and as a Weber ratio, and whether that step is above a
   visibility threshold.

Duty is ``count / TOP`` throughout (a convention chosen here: full scale
``2^n - 1`` is 100 %). Timers whose duty is ``CMP / (TOP + 1)``
differ by one count at the top.
"""

from __future__ import annotations

from dataclasses import dataclass, field
from pathlib import Path
from typing import Any, Sequence

import numpy as np

from .curves import first_not_rising, whole_number
from .errors import InputError, SettingsError

#: Default visibility threshold for one step [Delta L*]: the CIE 1976 "just
#: noticeable difference" Delta E*ab = 2.3 of Mahy et al. (1994), as recorded in
#: colour-science's ``colour.difference.JND_CIE1976`` (as read there). It was
#: measured on object colours seen side by side; an abrupt step of a whole
#: luminaire during a fade is easier to see, so a stricter figure (the folk
#: Delta L* = 1, called unempirical in Delta E glossaries) may suit a design review.
DEFAULT_VISIBLE_STEP = 2.3

#: Largest difference between a drive model's mean light and the table's light column that
#: passes without a warning [Delta L*] (a twentieth of the 2.3 JND; our choice, no source).
DRIVE_LIGHT_TOLERANCE = 0.1

#: Where the default visibility threshold comes from (reported with the table).
VISIBLE_STEP_SOURCE = (
    "Delta E*ab = 2.3, Mahy et al. 1994 (colour-science JND_CIE1976); "
    "measured side by side on object colours, abrupt steps in a fade are easier to see")

#: Rounding rules of :func:`quantise`.
ROUNDINGS = ("distinct", "nearest")

#: Largest dip in measured light, as a fraction of the largest light, that a
#: calibration treats as measurement noise (and smooths away by isotonic
#: regression) rather than rejecting the file. Common practice, no source.
CALIBRATION_NOISE_FRACTION = 0.02

#: Counters up to this TOP get their calibrated light evaluated at every count.
_DENSE_TOP = 1 << 22

#: Widest counter handled (uint32_t in the C header).
MAX_TOP = 2**32 - 1


# --------------------------------------------------------------------------- counter


@dataclass(frozen=True)
class Counter:
    """A PWM counter: full scale and the lowest count the driver turns on.

    Attributes
    ----------
    top : int
        Count for 100 % duty [counts].
    bits : int or None
        Resolution when ``top = 2^bits - 1`` [bits].
    min_count : int
        Smallest non-zero count the driver can use; counts 1 .. min_count-1
        are not used [counts].
    """

    top: int
    bits: int | None = None
    min_count: int = 0

    @property
    def lowest_lit(self) -> int:
        """Smallest non-zero count a step may take [counts]."""
        return max(1, self.min_count)

    @property
    def levels(self) -> int:
        """Distinct counts a step may take, off included."""
        return 1 + self.top - self.lowest_lit + 1

    def describe(self) -> str:
        """Describe the counter in one line: ``"12-bit (TOP 4095), minimum on-count 3"``."""
        head = f"{self.bits}-bit (TOP {self.top})" if self.bits else f"TOP {self.top}"
        return head + (f", minimum on-count {self.min_count}" if self.min_count > 1 else "")


def make_counter(bits: int | None = None, top: int | None = None, min_count: int = 0) -> Counter:
    """Validate a counter given by bits or by TOP.

    Parameters
    ----------
    bits : int, optional
        Resolution; full scale ``2^bits - 1`` [bits]. 1 to 32.
    top : int, optional
        Explicit full-scale count [counts]; 1 to 2^32 - 1.
    min_count : int
        Smallest non-zero count the driver makes; 0 or 1 for none [counts].

    Raises
    ------
    SettingsError
        If both or neither of ``bits`` and ``top`` are given, or a value is out
        of range.
    """
    if (bits is None) == (top is None):
        raise SettingsError("give the counter as bits or as TOP, not both or neither")
    b: int | None
    if bits is not None:
        b = whole_number(bits, "bits")
        if not 1 <= b <= 32:
            raise SettingsError(f"bits must be 1 to 32, got {b}")
        t = (1 << b) - 1
    else:
        t = whole_number(top, "TOP")
        if not 1 <= t <= MAX_TOP:
            raise SettingsError(f"TOP must be 1 to {MAX_TOP}, got {t}")
        b = t.bit_length() if t == (1 << t.bit_length()) - 1 else None
    m = whole_number(min_count, "minimum on-count")
    if m < 0 or m > t:
        raise SettingsError(f"minimum on-count must be 0 to TOP ({t}), got {m}")
    return Counter(top=t, bits=b, min_count=m)


# --------------------------------------------------------------------------- transfer


@dataclass(frozen=True, eq=False)
class Transfer:
    """A product's count -> light transfer, fitted monotonically to measurements.

    Attributes
    ----------
    counts : numpy.ndarray
        Measured counts, strictly increasing; a point (0, 0) is added when the
        measurement does not start at 0 [counts].
    light : numpy.ndarray
        Measured light at those counts [any linear unit].
    fitted : numpy.ndarray
        Isotonic (non-decreasing) fit of ``light`` [same unit].
    top : int
        Full-scale count; the light there is 1 [counts].
    source : str
        Where the measurement came from.
    added_zero : bool
        Whether (0, 0) was added.
    """

    counts: np.ndarray
    light: np.ndarray
    fitted: np.ndarray
    top: int
    source: str = ""
    added_zero: bool = False
    _interp: Any = field(default=None, repr=False)

    def relative_light(self, counts: np.ndarray | float) -> np.ndarray:
        """Light at counts relative to the light at full scale [unitless]."""
        c = np.clip(np.asarray(counts, dtype=np.float64), self.counts[0], self.counts[-1])
        y = self._interp(c) / self.fitted[-1]
        return np.clip(y, 0.0, 1.0)

    @property
    def dead_zone_count(self) -> int:
        """Highest count whose fitted light is still zero (0 if none) [counts]."""
        dark = np.flatnonzero(self.fitted <= 0)
        return int(self.counts[dark[-1]]) if dark.size else 0


def isotonic(values: np.ndarray) -> np.ndarray:
    """Least-squares non-decreasing fit (pool adjacent violators), equal weights.

    Parameters
    ----------
    values : array_like
        1-D data [any unit].

    Returns
    -------
    numpy.ndarray
        The non-decreasing sequence closest to ``values`` in squared error.

    References
    ----------
    Barlow, R. E., Bartholomew, D. J., Bremner, J. M. and Brunk, H. D. (1972),
    Statistical Inference under Order Restrictions, Wiley (pool adjacent
    violators algorithm).
    """
    y = np.asarray(values, dtype=np.float64)
    means: list[float] = []
    sizes: list[int] = []
    for v in y.tolist():
        means.append(v)
        sizes.append(1)
        while len(means) > 1 and means[-2] > means[-1]:
            m2, n2 = means.pop(), sizes.pop()
            m1, n1 = means.pop(), sizes.pop()
            means.append((m1 * n1 + m2 * n2) / (n1 + n2))
            sizes.append(n1 + n2)
    return np.repeat(np.asarray(means), np.asarray(sizes))


def fit_transfer(
    counts: Sequence[float] | np.ndarray,
    light: Sequence[float] | np.ndarray,
    *,
    top: int,
    source: str = "",
    noise_fraction: float = CALIBRATION_NOISE_FRACTION,
) -> Transfer:
    """Fit a product's count -> light transfer monotonically (isotonic + PCHIP).

    Parameters
    ----------
    counts : array_like
        Counter values at which light was measured, strictly increasing,
        covering full scale ``top`` [counts].
    light : array_like
        Measured mean light at each count, dark level removed [any linear unit].
    top : int
        Full-scale count of the counter [counts].
    source : str, optional
        File name for messages.
    noise_fraction : float
        Largest fall in light between neighbouring points, as a fraction of
        the largest light, accepted as measurement noise [unitless].

    Returns
    -------
    Transfer

    Raises
    ------
    InputError
        Fewer than 2 points, counts not strictly increasing or outside
        0..top, the measurement not reaching ``top``, light that falls as the
        count rises by more than the noise allowance, or no light at all.

    Notes
    -----
    Small dips are removed by isotonic regression; the fitted points are then
    joined by the PCHIP interpolant, which is monotone where its data are, so
    flat stretches such as a dead zone stay flat. Light is taken as 0 at
    count 0 when the measurement does not include it.

    References
    ----------
    Fritsch, F. N. and Carlson, R. E. (1980), Monotone piecewise cubic
    interpolation, SIAM J. Numer. Anal. 17(2):238-246, doi:10.1137/0717021.
    """
    from scipy.interpolate import PchipInterpolator

    where = source or "calibration"
    c = np.asarray(counts, dtype=np.float64).ravel()
    y = np.asarray(light, dtype=np.float64).ravel()
    if c.size != y.size:
        raise InputError("counts and light differ in length", source=where)
    if c.size < 2:
        raise InputError(f"a calibration needs at least 2 measured points, got {c.size}",
                         source=where)
    if not (np.isfinite(c).all() and np.isfinite(y).all()):
        raise InputError("counts and light must be finite numbers", source=where)
    i = first_not_rising(c)
    if i is not None:
        raise InputError(
            f"counts are not strictly increasing: {c[i + 1]:g} follows {c[i]:g} "
            f"(point {i + 2}); sort the file and merge repeated counts", source=where)
    if c[0] < 0 or c[-1] > top:
        raise InputError(f"counts must lie in 0..TOP ({top}), got {c[0]:g} .. {c[-1]:g}",
                         source=where)
    if c[-1] != top:
        raise InputError(
            f"the measurement stops at count {c[-1]:g}; measure at full scale ({top}) too, "
            "the table's light is relative to it", source=where)
    peak = float(np.max(y))
    if peak <= 0:
        raise InputError("no light was measured at any count", source=where)
    running = np.maximum.accumulate(y)
    fall = running[:-1] - y[1:]
    worst = int(np.argmax(fall))
    if fall[worst] > noise_fraction * peak:
        raise InputError(
            f"light is not monotonic in count: it falls from {running[worst]:g} "
            f"to {y[worst + 1]:g} at count {c[worst + 1]:g}, more than the "
            f"{100 * noise_fraction:g} % of full light allowed as noise", source=where)
    added = False
    if c[0] > 0:
        c = np.concatenate(([0.0], c))
        y = np.concatenate(([0.0], y))
        added = True
    fitted = np.maximum(isotonic(y), 0.0)
    if fitted[-1] <= 0:
        raise InputError("no light at full scale after the monotone fit", source=where)
    interp = PchipInterpolator(c, fitted, extrapolate=False)
    return Transfer(counts=c, light=y, fitted=fitted, top=int(top), source=source,
                    added_zero=added, _interp=interp)


def read_transfer_csv(path: str | Path, *, top: int) -> Transfer:
    """Read ``count,light`` rows (header and ``#`` comments allowed) and fit them.

    Parameters
    ----------
    path : str or Path
        CSV file of counter value and measured mean light [counts, any linear unit].
    top : int
        Full-scale count [counts].
    """
    from .curves import read_two_columns

    c, y = read_two_columns(path, "calibration file")
    return fit_transfer(c, y, top=top, source=str(path))


def transfer_from_captures(
    counts: Sequence[int], captures: Sequence[Any], *, top: int, source: str = "captures"
) -> Transfer:
    """Fit the transfer from light captures taken at known counts.

    Parameters
    ----------
    counts : sequence of int
        Counter value of each capture [counts].
    captures : sequence of Capture
        One light capture per count; its mean is the measured light (dark
        level already removed) [any linear unit].
    top : int
        Full-scale count [counts].
    """
    if len(counts) != len(captures):
        raise InputError("one capture is needed per count", source=source)
    order = np.argsort(np.asarray(counts, dtype=np.float64), kind="stable")
    c = np.asarray(counts, dtype=np.float64)[order]
    y = np.asarray([float(np.mean(captures[i].samples)) for i in order])
    return fit_transfer(c, y, top=top, source=source)


# --------------------------------------------------------------------------- quantise


def ideal_counts(target_light: np.ndarray, counter: Counter,
                 transfer: Transfer | None = None) -> np.ndarray:
    """Fractional count at which each target light is reached [counts].

    With a transfer, the smallest count whose fitted light reaches the target
    (so a dead zone is skipped); otherwise ``light * TOP``.
    """
    y = np.asarray(target_light, dtype=np.float64)
    if transfer is None:
        return y * counter.top
    grid, light = _transfer_grid(transfer, counter)
    i = np.searchsorted(light, y, side="left")
    i = np.clip(i, 1, grid.size - 1)
    y0, y1 = light[i - 1], light[i]
    with np.errstate(invalid="ignore", divide="ignore"):
        frac = np.where(y1 > y0, (y - y0) / (y1 - y0), 1.0)
    c = grid[i - 1] + np.clip(frac, 0.0, 1.0) * (grid[i] - grid[i - 1])
    return np.where(y <= 0, 0.0, c)


def _transfer_grid(transfer: Transfer, counter: Counter) -> tuple[np.ndarray, np.ndarray]:
    if counter.top <= _DENSE_TOP:
        grid = np.arange(counter.top + 1, dtype=np.float64)
    else:
        grid = np.unique(np.concatenate((np.linspace(0, counter.top, _DENSE_TOP + 1),
                                         transfer.counts)))
    return grid, np.maximum.accumulate(transfer.relative_light(grid))


def realised_light(counts: np.ndarray, counter: Counter,
                   transfer: Transfer | None = None) -> np.ndarray:
    """Relative light produced at counts: duty, or the fitted transfer [unitless]."""
    c = np.asarray(counts, dtype=np.float64)
    if transfer is None:
        return c / counter.top
    return transfer.relative_light(c)


def quantise(
    target_light: np.ndarray,
    counter: Counter,
    *,
    transfer: Transfer | None = None,
    rounding: str = "distinct",
) -> np.ndarray:
    """Counter values for target light levels.

    Parameters
    ----------
    target_light : array_like
        Non-decreasing relative light of each step, 0 to 1 [unitless].
    counter : Counter
        The counter (full scale and minimum on-count).
    transfer : Transfer, optional
        Measured count -> light transfer; default light proportional to duty.
    rounding : {"distinct", "nearest"}
        ``"nearest"``: each step takes the usable count whose light is
        nearest its target. ``"distinct"`` (default): each step takes the
        usable count just below or just above its ideal (fractional) count,
        chosen over the whole table so that as few steps as possible repeat
        the count of the step before; among equally distinct choices, the one
        with the least squared light error. Steps then repeat a count only
        where the counter has no count between their neighbours (the ideal
        counts of three steps lie within one count).

    Returns
    -------
    numpy.ndarray
        int64 counts, non-decreasing, 0 or ``min_count`` .. TOP [counts].

    Notes
    -----
    Usable counts are 0 and ``max(1, min_count)`` .. TOP. The "distinct"
    choice is a dynamic programme over the two candidates of every step
    (least number of repeated counts, then least sum of squared light error).
    """
    if rounding not in ROUNDINGS:
        raise SettingsError(f"unknown rounding {rounding!r}; choose one of: {', '.join(ROUNDINGS)}")
    y = np.asarray(target_light, dtype=np.float64)
    c = ideal_counts(y, counter, transfer)
    lo, hi = _candidates(c, counter)
    e_lo = (realised_light(lo, counter, transfer) - y) ** 2
    e_hi = (realised_light(hi, counter, transfer) - y) ** 2
    nearest = np.where(e_hi < e_lo, hi, lo)
    nearest = np.where(y > 0, nearest, 0)
    if rounding == "nearest" or nearest.size < 2 or np.all(np.diff(nearest) > 0):
        return np.maximum.accumulate(nearest)
    return _distinct(lo, hi, e_lo, e_hi)


def _candidates(c: np.ndarray, counter: Counter) -> tuple[np.ndarray, np.ndarray]:
    lit = counter.lowest_lit
    lo = np.floor(c + 1e-9)
    hi = np.ceil(c - 1e-9)
    lo = np.clip(lo, 0, counter.top).astype(np.int64)
    hi = np.clip(hi, 0, counter.top).astype(np.int64)
    lo = np.where((lo > 0) & (lo < lit), 0, lo)
    hi = np.where((hi > 0) & (hi < lit), lit, hi)
    hi = np.where(c <= 0, 0, hi)
    return lo, np.maximum(hi, lo)


def _distinct(lo: np.ndarray, hi: np.ndarray, e_lo: np.ndarray, e_hi: np.ndarray) -> np.ndarray:
    """Dynamic programme: fewest repeated counts, then least squared error."""
    n = lo.size
    lo_l, hi_l = lo.tolist(), hi.tolist()
    el, eh = e_lo.tolist(), e_hi.tolist()
    inf = (n + 1, float("inf"))
    back = bytearray(2 * n)  # back[2k + j]: choice at k-1 leading to choice j at k
    cost = [(0, el[0]), (0, eh[0]) if hi_l[0] != lo_l[0] else inf]
    for k in range(1, n):
        vals = (lo_l[k], hi_l[k])
        errs = (el[k], eh[k])
        prev_vals = (lo_l[k - 1], hi_l[k - 1])
        new = []
        for j in (0, 1):
            if j == 1 and vals[1] == vals[0]:
                new.append(inf)
                continue
            v = vals[j]
            best, arg = inf, 0
            for i in (0, 1):
                ci = cost[i]
                if ci[0] > n or prev_vals[i] > v:
                    continue
                cand = (ci[0] + (prev_vals[i] == v), ci[1] + errs[j])
                if cand < best:
                    best, arg = cand, i
            back[2 * k + j] = arg
            new.append(best)
        cost = new
    j = 0 if cost[0] <= cost[1] else 1
    out = np.empty(n, dtype=np.int64)
    for k in range(n - 1, -1, -1):
        out[k] = hi_l[k] if j else lo_l[k]
        j = back[2 * k + j]
    return out


# --------------------------------------------------------------------------- table


@dataclass(frozen=True, eq=False)
class StepTable:
    """A quantised brightness table and how well it keeps its promise.

    Per-step arrays all have shape ``(n_steps,)``; step 0 has no previous
    level, so its step values are NaN (``delta_lightness``, ``weber``).

    Attributes
    ----------
    curve : str
        Curve name (``cie1976``, ``gamma``, ...).
    curve_description : str
        One line describing the curve.
    curve_params : dict
        Curve parameters (``gamma``...).
    min_level, max_level : float
        Light range of the lit steps, fraction of full output [unitless].
    off_step : bool
        Whether step 0 is an extra off step.
    counter : Counter
        The PWM counter.
    rounding : str
        Rounding rule (see :func:`quantise`).
    target_light : numpy.ndarray
        Unquantised light each step should have [unitless].
    counts : numpy.ndarray
        Counter value of each step [counts].
    duty : numpy.ndarray
        ``count / TOP`` [unitless].
    relative_light : numpy.ndarray
        Light produced, relative to full output [unitless].
    lightness : numpy.ndarray
        CIE 1976 L* of ``relative_light`` [unitless, 0..100].
    target_lightness : numpy.ndarray
        L* of ``target_light`` [unitless].
    delta_lightness : numpy.ndarray
        L* step from the previous step [unitless].
    weber : numpy.ndarray
        ``(Y_k - Y_{k-1}) / Y_{k-1}`` [unitless]; inf after an off step, 0
        where the light does not change.
    visible : numpy.ndarray
        bool, ``delta_lightness > visible_step``.
    visible_step : float
        Threshold [Delta L*].
    visible_step_source : str
        Where the threshold comes from.
    transfer : Transfer or None
        Measured transfer the table was built on.
    uncalibrated_counts, uncalibrated_light : numpy.ndarray or None
        With a transfer: the counts of the table built on duty alone, and the
        light those counts give on the measured product [counts, unitless].
    flicker : StepFlicker or None
        Per-step temporal light modulation (with a PWM frequency).
    """

    curve: str
    curve_description: str
    curve_params: dict
    min_level: float
    max_level: float
    off_step: bool
    counter: Counter
    rounding: str
    target_light: np.ndarray
    counts: np.ndarray
    duty: np.ndarray
    relative_light: np.ndarray
    lightness: np.ndarray
    target_lightness: np.ndarray
    delta_lightness: np.ndarray
    weber: np.ndarray
    visible: np.ndarray
    visible_step: float
    visible_step_source: str
    bits_needed: int
    transfer: Transfer | None = None
    uncalibrated_counts: np.ndarray | None = None
    uncalibrated_light: np.ndarray | None = None
    flicker: Any = None

    @property
    def n_steps(self) -> int:
        """Number of steps."""
        return int(self.counts.size)

    # ------------------------------------------------------------------ summary
    def summary(self) -> dict:
        """Where the table fails, as plain values (JSON-ready)."""
        n = self.n_steps
        c = self.counts
        t = self.target_light
        rep = np.flatnonzero(np.diff(c) == 0) + 1
        collapsed = [int(k) for k in rep if t[k] > t[k - 1]]
        not_rising = np.flatnonzero(np.diff(c) <= 0)
        monotonic_from = int(not_rising[-1] + 1) if not_rising.size else 0
        dark = np.flatnonzero((t > 0) & (self.relative_light <= 0))
        lit = np.flatnonzero(self.relative_light > 0)
        dl = self.delta_lightness[1:]
        if dl.size and np.isfinite(dl).any():
            j = int(np.nanargmax(dl)) + 1
            largest = {"step": j, "delta_lightness": _num(self.delta_lightness[j]),
                       "weber": _num(self.weber[j]),
                       "from_count": int(c[j - 1]), "to_count": int(c[j])}
        else:
            largest = None
        err = np.abs(self.lightness - self.target_lightness)
        e = int(np.argmax(err))
        out: dict[str, Any] = {
            "steps": n,
            "distinct_counts": int(np.unique(c).size),
            "steps_lost": int(n - np.unique(c).size),
            "collapsed_steps": collapsed,
            "monotonic_from_step": monotonic_from,
            "lit_steps_dark": [int(k) for k in dark],
            "lowest_lit": None if not lit.size else {
                "step": int(lit[0]), "count": int(c[lit[0]]), "duty": _num(self.duty[lit[0]]),
                "relative_light": _num(self.relative_light[lit[0]]),
                "lightness": _num(self.lightness[lit[0]])},
            "largest_jump": largest,
            "max_lightness_error": {"step": e, "value": _num(err[e])},
            "visible_steps": [int(k) for k in np.flatnonzero(self.visible)],
            "visible_step": self.visible_step,
            "visible_step_source": self.visible_step_source,
            "bits_needed": self.bits_needed,
            "curve": {"method": self.curve, "description": self.curve_description,
                      "params": dict(self.curve_params), "min_level": self.min_level,
                      "max_level": self.max_level, "off_step": self.off_step},
            "counter": {"top": self.counter.top, "bits": self.counter.bits,
                        "min_count": self.counter.min_count},
            "rounding": self.rounding,
            "duty_convention": "duty = count / TOP",
        }
        if self.transfer is not None:
            out["calibration"] = self._calibration_summary()
        if self.flicker is not None:
            out["flicker"] = self.flicker.summary()
            check = self._drive_light_summary()
            if check is not None:
                out["drive_light"] = check
        return out

    def _drive_light_summary(self) -> dict | None:
        """Compare the drive model's mean light with the table's light column (drive path)."""
        ml = getattr(self.flicker, "model_light", None)
        if ml is None:
            return None
        m = np.asarray(ml, dtype=np.float64)
        diff = np.abs(lightness_of(m) - self.lightness)
        k = int(np.nanargmax(diff)) if np.isfinite(diff).any() else 0
        dark = [int(i) for i in np.flatnonzero((self.relative_light > 0) & ~(m > 0))]
        big = bool(diff[k] > DRIVE_LIGHT_TOLERANCE) or bool(dark)
        out: dict[str, Any] = {
            "largest_lightness_difference": _num(diff[k]), "step": k,
            "model_light": _num(m[k]), "table_light": _num(self.relative_light[k]),
            "model_dark_steps": dark, "tolerance": DRIVE_LIGHT_TOLERANCE,
        }
        if big and self.transfer is not None:
            out["warning"] = (
                f"the drive model's mean light differs from the calibration by up to "
                f"{diff[k]:.3g} L* (step {k}: {100 * m[k]:.4g} % modelled, "
                f"{100 * self.relative_light[k]:.4g} % measured): the flicker columns "
                f"describe a drive other than the one measured; check the drive description")
        elif big:
            out["warning"] = (
                f"the light, L*, dL* and visible columns assume light = count / TOP, but the "
                f"drive model gives up to {diff[k]:.3g} L* different light (step {k}: "
                f"{100 * m[k]:.4g} % modelled, {100 * self.relative_light[k]:.4g} % in the "
                f"table; off-level, edges, delay or minimum on-time)"
                + (f"; lit steps dark in the model: {', '.join(map(str, dark[:12]))}"
                   if dark else "")
                + "; the table is not even on this drive: measure its light at a few counts "
                  "and build on it with --calibration")
        return out

    def _calibration_summary(self) -> dict:
        tr = self.transfer
        assert tr is not None and self.uncalibrated_counts is not None
        assert self.uncalibrated_light is not None
        shift = self.counts - self.uncalibrated_counts
        un_l = lightness_of(self.uncalibrated_light)
        un_d = np.diff(un_l)
        ca_d = np.diff(self.lightness)
        return {
            "source": tr.source,
            "points": int(tr.counts.size - tr.added_zero),
            "added_zero_point": tr.added_zero,
            "dead_zone_to_count": tr.dead_zone_count,
            "largest_count_shift": int(np.max(np.abs(shift))) if shift.size else 0,
            "uncalibrated_largest_jump": _num(np.max(un_d)) if un_d.size else None,
            "calibrated_largest_jump": _num(np.max(ca_d)) if ca_d.size else None,
            "uncalibrated_dark_steps": int(np.sum((self.target_light > 0)
                                                  & (self.uncalibrated_light <= 0))),
            "uncalibrated_lightness_error": _num(np.max(np.abs(un_l - self.target_lightness))),
        }

    # ------------------------------------------------------------------ rows
    def rows(self) -> list[dict]:
        """Return one dict per step (JSON-ready; inf and NaN become None)."""
        cols: dict[str, np.ndarray] = {
            "step": np.arange(self.n_steps),
            "count": self.counts,
            "duty": self.duty,
            "target_light": self.target_light,
            "relative_light": self.relative_light,
            "lightness": self.lightness,
            "delta_lightness": self.delta_lightness,
            "weber": self.weber,
            "visible": self.visible,
        }
        if self.uncalibrated_counts is not None and self.uncalibrated_light is not None:
            cols["uncalibrated_count"] = self.uncalibrated_counts
            cols["uncalibrated_light"] = self.uncalibrated_light
        if self.flicker is not None:
            cols.update(self.flicker.columns())
        names = list(cols)
        values = [_column_values(cols[k]) for k in names]
        return [dict(zip(names, row)) for row in zip(*values)]

    def to_dict(self) -> dict:
        """Return ``{"steps": [...], "summary": {...}}``, ready for ``json.dumps``."""
        return {"steps": self.rows(), "summary": self.summary()}


def _num(x: Any) -> float | None:
    v = float(x)
    return v if np.isfinite(v) else None


def _column_values(a: np.ndarray) -> list:
    a = np.asarray(a)
    if a.dtype == bool:
        return [bool(v) for v in a.tolist()]
    if np.issubdtype(a.dtype, np.integer):
        return [int(v) for v in a.tolist()]
    if a.dtype == object or a.dtype.kind in "US":
        return [None if v is None or v == "" else str(v) for v in a.tolist()]
    return [v if v == v and v not in (float("inf"), float("-inf")) else None
            for v in a.astype(np.float64).tolist()]


def lightness_of(relative_light: np.ndarray) -> np.ndarray:
    """CIE 1976 L* of relative light (closed form, see curves.lightness) [unitless, 0..100]."""
    from .curves import lightness

    return lightness(np.clip(np.asarray(relative_light, dtype=np.float64), 0.0, 1.0))


def step_changes(light: np.ndarray, light_star: np.ndarray) -> tuple[np.ndarray, np.ndarray]:
    """L* step and Weber ratio to the previous step (NaN for step 0).

    Parameters
    ----------
    light : numpy.ndarray
        Relative light per step [unitless].
    light_star : numpy.ndarray
        L* per step [unitless].

    Returns
    -------
    delta_lightness, weber : numpy.ndarray
        ``L*_k - L*_{k-1}``; ``(Y_k - Y_{k-1}) / Y_{k-1}`` (inf from an off
        step, 0 where the light does not change) [unitless].
    """
    y = np.asarray(light, dtype=np.float64)
    d = np.full(y.shape, np.nan)
    w = np.full(y.shape, np.nan)
    d[1:] = np.diff(light_star)
    prev, cur = y[:-1], y[1:]
    with np.errstate(divide="ignore", invalid="ignore"):
        r = (cur - prev) / prev
    r = np.where(cur == prev, 0.0, r)
    r = np.where((prev <= 0) & (cur > prev), np.inf, r)
    w[1:] = r
    return d, w


def bits_for(ideal: np.ndarray, top: int) -> int:
    """Bits at which every step is at least one count above the one before.

    Parameters
    ----------
    ideal : numpy.ndarray
        Fractional ideal count of each step on a counter of ``top`` [counts].
    top : int
        That counter's full scale [counts].

    Returns
    -------
    int
        Smallest n with ``2^n - 1 >= top / min(spacing)``, the spacing taken
        between neighbouring steps whose targets differ (and from off to the
        lowest lit step). With that resolution, nearest rounding is strictly
        increasing. Steps that share a target are not counted. Any minimum
        on-count is left out. 0 if no two steps differ.
    """
    c = np.concatenate(([0.0], np.asarray(ideal, dtype=np.float64)))
    d = np.diff(c)
    d = d[d > 1e-12 * max(1, top)]
    if not d.size:
        return 0
    need = top / float(np.min(d))
    return int(np.ceil(np.log2(need + 1) - 1e-12))


def build_table_percent(n_steps: int, curve: str = "cie1976", *,
                        min_percent: float | None = None, max_percent: float = 100.0,
                        visible_step: float | None = None, **kwargs: Any) -> StepTable:
    """:func:`build_table` with the levels in percent, as the CLI and project files give them.

    The one builder of table arguments for ``steps`` and the ``[steps]`` table
    of a project.

    Parameters
    ----------
    n_steps, curve
        As in :func:`build_table`.
    min_percent : float, optional
        Light of the lowest lit step [percent of full output]; default the curve's own.
    max_percent : float
        Light of the top step [percent of full output].
    visible_step : float, optional
        Visibility threshold of a step [CIE L* units]; default
        :data:`DEFAULT_VISIBLE_STEP`.
    **kwargs
        The other keyword arguments of :func:`build_table`.

    Returns
    -------
    StepTable
    """
    return build_table(
        n_steps, curve,
        min_level=None if min_percent is None else float(min_percent) / 100.0,
        max_level=float(max_percent) / 100.0,
        visible_step=DEFAULT_VISIBLE_STEP if visible_step is None else float(visible_step),
        **kwargs)


def build_table(
    n_steps: int,
    curve: str = "cie1976",
    *,
    min_level: float | None = None,
    max_level: float = 1.0,
    off_step: bool = False,
    bits: int | None = None,
    top: int | None = None,
    min_count: int = 0,
    rounding: str = "distinct",
    transfer: Transfer | None = None,
    visible_step: float = DEFAULT_VISIBLE_STEP,
    curve_params: dict | None = None,
    pwm_frequency_hz: float | None = None,
    drive: Any = None,
    target_region: str = "low-risk",
) -> StepTable:
    """Build a brightness table for a PWM counter and judge it.

    Parameters
    ----------
    n_steps : int
        Steps in the table, off step included (>= 2; at most the counts the
        counter can take).
    curve : str
        Curve name, see :data:`flickerkit.curves.CURVES`.
    min_level : float, optional
        Light of the lowest lit step, fraction of full output [unitless];
        default the curve's own.
    max_level : float
        Light of the top step, fraction of full output [unitless].
    off_step : bool
        Add an off step (count 0) below the range.
    bits, top : int, optional
        Counter resolution [bits] or full-scale count [counts]; one of them.
    min_count : int
        Smallest non-zero count the driver turns on [counts].
    rounding : {"distinct", "nearest"}
        See :func:`quantise`.
    transfer : Transfer, optional
        Measured count -> light transfer of the product; the table is then
        built so that the measured light follows the curve.
    visible_step : float
        Threshold above which a step is flagged visible [Delta L*]; default
        :data:`DEFAULT_VISIBLE_STEP`.
    curve_params : dict, optional
        Curve parameters (``{"gamma": 2.2}``, user points...).
    pwm_frequency_hz : float, optional
        PWM frequency; adds per-step flicker of ideal PWM (vectorised exact
        Fourier series, :func:`flickerkit.stepflicker.step_flicker`) [Hz].
        With a calibration the effective duty of a step is its relative light
        (the product's losses taken as lost pulse width).
    drive : flickerkit.drive.Drive, optional
        Drive description; adds per-step flicker of its modelled light through
        :func:`flickerkit.assess.assess` (slower; one model per distinct count).
    target_region : str
        IEEE 1789 region the table should stay in: ``"low-risk"`` (default)
        or ``"no-observable-effect"``.

    Returns
    -------
    StepTable

    Raises
    ------
    SettingsError
        Bad step count, range, counter or threshold.

    References
    ----------
    CIE 15:2004, CIE 1976 L*; IEC 62386-102 (logarithmic curve); see
    :mod:`flickerkit.curves`.
    """
    from .curves import Curve, curve_levels, get_curve

    counter = make_counter(bits=bits, top=top, min_count=min_count)
    n = whole_number(n_steps, "step count")
    if n < 2:
        raise SettingsError(f"step count must be at least 2, got {n}")
    if n > counter.levels:
        raise SettingsError(
            f"{n} steps do not fit a {counter.describe()}: it holds at most "
            f"{counter.levels} distinct counts")
    thr = float(visible_step)
    if not np.isfinite(thr) or thr <= 0:
        raise SettingsError(f"visible step threshold must be a positive L* difference, got "
                            f"{visible_step!r}")
    if transfer is not None and transfer.top != counter.top:
        raise SettingsError(f"the calibration was fitted for TOP {transfer.top}, "
                            f"the counter has TOP {counter.top}")
    params = dict(curve_params or {})
    cv: Curve = get_curve(curve, **params)
    target = curve_levels(n, cv, min_level=min_level, max_level=max_level, off_step=off_step)
    counts = quantise(target, counter, transfer=transfer, rounding=rounding)
    light = realised_light(counts, counter, transfer)
    both = lightness_of(np.concatenate((light, target)))
    L, L_target = both[:n], both[n:]
    d, w = step_changes(light, L)
    visible = np.nan_to_num(d, nan=0.0) > thr
    un_counts = un_light = None
    if transfer is not None:
        un_counts = quantise(target, counter, rounding=rounding)
        un_light = realised_light(un_counts, counter, transfer)
    ideal = ideal_counts(target, counter, transfer)
    lo = min_level if min_level is not None else cv.default_min
    flicker = None
    if drive is not None:
        from .stepflicker import step_flicker_from_drive

        if pwm_frequency_hz is not None and float(pwm_frequency_hz) != drive.frequency_hz:
            raise SettingsError(f"PWM frequency {pwm_frequency_hz:g} Hz differs from the drive "
                                f"description's {drive.frequency_hz:g} Hz")
        flicker = step_flicker_from_drive(counts / counter.top, drive,
                                          target_region=target_region)
    elif pwm_frequency_hz is not None:
        from .stepflicker import step_flicker

        flicker = step_flicker(light, pwm_frequency_hz, target_region=target_region)
    return StepTable(
        curve=cv.name, curve_description=cv.description,
        curve_params={k: v for k, v in cv.params.items()},
        min_level=float(lo), max_level=float(max_level), off_step=bool(off_step),
        counter=counter, rounding=rounding, target_light=target, counts=counts,
        duty=counts / counter.top, relative_light=light, lightness=L,
        target_lightness=L_target, delta_lightness=d, weber=w, visible=visible,
        visible_step=thr,
        visible_step_source=(VISIBLE_STEP_SOURCE if thr == DEFAULT_VISIBLE_STEP
                             else "set by the user"),
        bits_needed=bits_for(ideal * 1.0, counter.top),
        transfer=transfer, uncalibrated_counts=un_counts, uncalibrated_light=un_light,
        flicker=flicker,
    )
