"""Dimming curves: how relative light should rise along a table of brightness steps.

A curve maps a *perceptual coordinate* v (the quantity meant to rise in equal
steps) to relative light Y (0 = off, 1 = full output) and back. A table of N
steps is made by spacing v evenly between the coordinates of its minimum and
maximum light levels (:func:`curve_levels`). The curves live in a small
registry, :data:`CURVES`, behind one function with ``method=``; every curve is
also usable on its own.

============  ==============================================  ==================
method        law (v -> Y)                                    default range
============  ==============================================  ==================
``cie1976``   CIE 1976 lightness L* (closed form), v = L*      0 .. 100 %
``gamma``     power law Y = v ** gamma                        0 .. 100 %
``iec62386``  logarithmic, log10(Y) = v (IEC 62386-102)       0.1 .. 100 %
``linear``    Y = v                                           0 .. 100 %
``user``      monotone PCHIP through points from a CSV        the points' range
============  ==============================================  ==================

Which of these looks even to people depends on the viewing conditions (no
published source found tests them on dimmed LEDs); the curve is a choice, not a
settled fact.
"""

from __future__ import annotations

import warnings
from dataclasses import dataclass, field
from pathlib import Path
from typing import Callable

import numpy as np

from .errors import InputError, SettingsError

#: IEC 62386-102 arc power levels: 1 (0.1 %) to 254 (100 %); 0 is off.
IEC62386_LEVELS = 254

#: Default exponent of the power-law curve (display-like gamma; common practice,
#: no source).
DEFAULT_GAMMA = 2.2

#: CIE 15:2004 constants of L*: epsilon = (6/29)^3 and kappa = (29/3)^3 (exact rationals).
_CIE_EPSILON = 216.0 / 24389.0
_CIE_KAPPA = 24389.0 / 27.0

_COLOUR_WARNING = r'"Matplotlib" related API features are not available'


def _colour():
    """Import colour-science lazily and without its side effects on this process.

    The warning filter goes in before the first import (not inside
    ``warnings.catch_warnings``, which would also undo colour's own filter);
    numpy's print options, which colour sets globally, are put back.
    """
    import sys

    if "colour" not in sys.modules:
        warnings.filterwarnings("ignore", message=_COLOUR_WARNING, module=r"colour\.")
        options = np.get_printoptions()
        import colour  # noqa: F401

        np.set_printoptions(**options)
    return sys.modules["colour"]


# --------------------------------------------------------------------------- CIE 1976


def lightness(relative_light: np.ndarray | float) -> np.ndarray:
    """CIE 1976 lightness L* of relative light (closed form).

    Parameters
    ----------
    relative_light : array_like
        Light relative to full output, Y / Y_n, 0 to 1 [unitless].

    Returns
    -------
    numpy.ndarray
        L*, 0 to 100 [unitless].

    Notes
    -----
    ``L* = 116 (Y/Yn)^(1/3) - 16`` above Y/Yn = 216/24389, else
    ``L* = (24389/27) Y/Yn``, with the exact rational constants of CIE 15:2004.
    The closed form spares the 0.8 s import of colour-science, whose
    ``colour.lightness(100 Y, method="CIE 1976")`` the tests compare it with.

    References
    ----------
    CIE 15:2004 Colorimetry, CIE 1976 L*a*b* (also ISO/CIE 11664-4).
    colour-science 0.4.7, ``colour.lightness`` (the cross-check).

    Examples
    --------
    >>> round(float(lightness(0.184)), 4)
    49.9777
    """
    y = np.asarray(relative_light, dtype=np.float64)
    return np.where(y > _CIE_EPSILON, 116.0 * np.cbrt(y) - 16.0, _CIE_KAPPA * y)


def luminance(lightness_value: np.ndarray | float) -> np.ndarray:
    """Relative light of a CIE 1976 lightness L* (closed form).

    Parameters
    ----------
    lightness_value : array_like
        L*, 0 to 100 [unitless].

    Returns
    -------
    numpy.ndarray
        Y / Y_n, 0 to 1 [unitless].

    Notes
    -----
    ``Y/Yn = ((L* + 16)/116)^3`` above L* = 8, else ``L* 27/24389``.
    The tests compare it with ``colour.luminance(L*, method="CIE 1976") / 100``.

    References
    ----------
    CIE 15:2004 Colorimetry, CIE 1976 L*a*b*. colour-science 0.4.7,
    ``colour.luminance`` (the cross-check).

    Examples
    --------
    >>> round(float(luminance(50.0)), 6)
    0.184187
    """
    L = np.asarray(lightness_value, dtype=np.float64)
    return np.where(L > 8.0, ((L + 16.0) / 116.0) ** 3, L / _CIE_KAPPA)


# --------------------------------------------------------------------------- IEC 62386


def iec62386_level_light(level: np.ndarray | int) -> np.ndarray:
    """Relative light of IEC 62386-102 arc power levels on the logarithmic curve.

    Parameters
    ----------
    level : array_like of int
        Arc power level, 1 to 254 (0 is off and gives 0) [unitless].

    Returns
    -------
    numpy.ndarray
        Light relative to full output, 0.001 to 1 [unitless].

    Notes
    -----
    ``X(n) = 10^((n - 1)/(253/3) - 1)`` percent: three decades in 253 equal
    logarithmic steps of 10^(3/253) = +2.768 %.

    References
    ----------
    IEC 62386-102, standard dimming curve (formula as read in public code and
    published level tables, which agree; the standard's text was not read).

    Examples
    --------
    >>> float(iec62386_level_light(254))
    1.0
    """
    n = np.asarray(level)
    if np.any((n < 0) | (n > IEC62386_LEVELS)):
        raise SettingsError(f"IEC 62386-102 arc power levels run 0 (off) to {IEC62386_LEVELS}")
    n = n.astype(np.float64)
    x = 10.0 ** ((n - 1.0) / (253.0 / 3.0) - 1.0) / 100.0
    return np.where(n == 0, 0.0, x)


# --------------------------------------------------------------------------- registry


@dataclass(frozen=True)
class Curve:
    """A dimming law: perceptual coordinate v <-> relative light Y.

    Attributes
    ----------
    name : str
        Registry name.
    to_light : callable
        v -> Y [unitless].
    to_coordinate : callable
        Y -> v, the inverse [unitless].
    default_min : float
        Lowest light of the default range [unitless, fraction of full output].
    description : str
        One line for reports and the C header.
    lowest_light : float
        Smallest light the curve can reach (0 unless logarithmic or from
        points) [unitless].
    highest_light : float
        Largest light the curve can reach [unitless].
    """

    name: str
    to_light: Callable[[np.ndarray], np.ndarray]
    to_coordinate: Callable[[np.ndarray], np.ndarray]
    default_min: float = 0.0
    description: str = ""
    lowest_light: float = 0.0
    highest_light: float = 1.0
    params: dict = field(default_factory=dict)


def cie1976_curve() -> Curve:
    """Return the curve of steps even in CIE 1976 lightness L* (v = L*, 0 to 100)."""
    return Curve("cie1976", luminance, lightness, 0.0, "CIE 1976 lightness L* (even steps in L*)")


def gamma_curve(gamma: float = DEFAULT_GAMMA) -> Curve:
    """Power law Y = v ** gamma (v from 0 to 1).

    Parameters
    ----------
    gamma : float
        Exponent, > 0 [unitless]. 2.2 is display-like, 2 the lighting
        "square law", 3 the inverse of a cube-root brightness law (Stevens'
        exponent 0.33, from memory; common practice, no source).
    """
    g = float(gamma)
    if not np.isfinite(g) or g <= 0:
        raise SettingsError(f"gamma must be a positive number, got {gamma!r}")
    return Curve(
        "gamma",
        lambda v: np.power(np.asarray(v, dtype=np.float64), g),
        lambda y: np.power(np.asarray(y, dtype=np.float64), 1.0 / g),
        0.0,
        f"power law, light = v^{g:g}",
        params={"gamma": g},
    )


def iec62386_curve() -> Curve:
    """Logarithmic curve: equal ratios of light per step (v = log10 Y).

    With the default range 0.1 % to 100 % and 254 lit steps this is the
    IEC 62386-102 standard dimming curve (see :func:`iec62386_level_light`).
    """
    return Curve(
        "iec62386",
        lambda v: np.power(10.0, np.asarray(v, dtype=np.float64)),
        lambda y: np.log10(np.asarray(y, dtype=np.float64)),
        10.0**-3,
        "logarithmic (IEC 62386-102 type), equal light ratio per step",
        lowest_light=0.0,
    )


def linear_curve() -> Curve:
    """Light proportional to the step (v = Y)."""
    ident = lambda v: np.asarray(v, dtype=np.float64)  # noqa: E731
    return Curve("linear", ident, ident, 0.0, "linear, light = v")


def user_curve(inputs: np.ndarray, outputs: np.ndarray, *, source: str = "") -> Curve:
    """Make a curve through (input, output) points, interpolated monotonically (PCHIP).

    Parameters
    ----------
    inputs : array_like
        Perceptual coordinate of each point, strictly increasing [any unit].
    outputs : array_like
        Relative light at each point, strictly increasing, largest 1 or any
        scale (the points are divided by their largest output) [unitless].
    source : str, optional
        Where the points came from, for messages.

    Returns
    -------
    Curve

    Notes
    -----
    The PCHIP interpolant (Fritsch and Carlson) is monotone wherever the data
    are, so the table cannot fold back between points. The inverse is found by
    interpolating a dense sampling of the forward curve.

    References
    ----------
    Fritsch, F. N. and Carlson, R. E. (1980), Monotone piecewise cubic
    interpolation, SIAM J. Numer. Anal. 17(2):238-246, doi:10.1137/0717021.
    """
    from scipy.interpolate import PchipInterpolator

    x = np.asarray(inputs, dtype=np.float64).ravel()
    y = np.asarray(outputs, dtype=np.float64).ravel()
    where = source or "user curve"
    if x.size != y.size:
        raise InputError("inputs and outputs differ in length", source=where)
    if x.size < 2:
        raise InputError(f"a curve needs at least 2 points, got {x.size}", source=where)
    if not (np.isfinite(x).all() and np.isfinite(y).all()):
        raise InputError("points must be finite numbers", source=where)
    _require_increasing(x, "input", where)
    _require_increasing(y, "output", where)
    if y[0] < 0:
        raise InputError(f"output {y[0]:g} is negative; light cannot be", source=where)
    y = y / y[-1]
    forward = PchipInterpolator(x, y, extrapolate=False)
    grid = np.linspace(x[0], x[-1], 8193)
    grid = np.union1d(grid, x)
    light_grid = np.maximum.accumulate(forward(grid))

    def to_light(v):
        return forward(np.clip(np.asarray(v, dtype=np.float64), x[0], x[-1]))

    def to_coordinate(light):
        return np.interp(np.asarray(light, dtype=np.float64), light_grid, grid)

    return Curve("user", to_light, to_coordinate, float(y[0]),
                 f"user points from {source}" if source else "user points",
                 lowest_light=float(y[0]), highest_light=1.0,
                 params={"points": int(x.size)})


def first_not_rising(v: np.ndarray) -> int | None:
    """Return the index ``i`` of the first point the next one does not rise above, or None.

    The one strictly-increasing check of user points (curves, calibrations).

    Parameters
    ----------
    v : numpy.ndarray
        1-D values in file order [any unit].

    Returns
    -------
    int or None
        ``i`` with ``v[i + 1] <= v[i]`` (0-based), None when ``v`` strictly increases.

    Examples
    --------
    >>> first_not_rising(np.array([0.0, 0.5, 0.5, 1.0])), first_not_rising(np.array([1.0, 2.0]))
    (1, None)
    """
    bad = np.flatnonzero(np.diff(v) <= 0)
    return int(bad[0]) if bad.size else None


def _require_increasing(v: np.ndarray, name: str, where: str) -> None:
    i = first_not_rising(v)
    if i is not None:
        raise InputError(
            f"{name} is not strictly increasing: point {i + 2} ({v[i + 1]:g}) does not rise "
            f"above point {i + 1} ({v[i]:g})", source=where)


def read_curve_csv(path: str | Path) -> Curve:
    """Read a user curve from a CSV of ``input,output`` rows.

    A header line is allowed; ``#`` starts a comment.

    Parameters
    ----------
    path : str or Path
        CSV file: perceptual coordinate, relative light [any unit, unitless].
    """
    inputs, outputs = read_two_columns(path, "curve file")
    return user_curve(inputs, outputs, source=str(path))


def read_two_columns(path: str | Path, what: str = "two-column file"
                     ) -> tuple[np.ndarray, np.ndarray]:
    """Read the two numeric columns of a small table with the capture reader.

    The table is read by :func:`flickerkit.readers.read_capture`, so it takes
    what a capture table takes: a header, ``#`` comments, comma, semicolon,
    tab or space separators and decimal commas (``100;0,12``).

    Parameters
    ----------
    path : str or Path
        Text table (``.csv``, ``.txt``, ...) of exactly two columns [any unit].
    what : str
        What the file is (``"calibration file"``), for messages.

    Returns
    -------
    first, second : numpy.ndarray
        The two columns, in file order.

    Raises
    ------
    InputError
        If the file cannot be read, a cell is not a number, it holds fewer
        than two rows, or it has other than two columns.
    """
    import tempfile

    from .readers import ReadOptions, read_capture
    from .readers.sidefile import decode, read_bytes

    # The side-file checks first (device, FIFO, size bound, encoding), so that a bad file is
    # named as the side file it is; a UTF-16/32 table (byte-order mark) is read as UTF-8.
    # Trailing '#' comment lines (after the last row) are dropped; line numbers stay true.
    data = read_bytes(path, what)
    text = decode(data, str(path), what)
    lines = text.splitlines()
    while lines and (not lines[-1].strip() or lines[-1].lstrip().startswith("#")):
        lines.pop()
    trimmed = "\n".join(lines) + "\n"
    with tempfile.TemporaryDirectory(prefix="flickerkit-sidefile-") as tmp:
        src = Path(path)
        if trimmed.encode("utf-8") != data:
            src = Path(tmp) / Path(path).name
            src.write_text(trimmed, encoding="utf-8")

        def column(k: int) -> np.ndarray:
            # a sample rate is given only so that no column is taken for time
            try:
                cap = read_capture(src, ReadOptions(column=k, sample_rate_hz=1.0))
            except InputError as exc:
                exc.source = str(path)
                raise
            return np.asarray(cap.samples[:], dtype=np.float64)

        second = column(2)  # read first: a bad cell in either column is then located
        first = column(1)
        try:
            column(3)
        except InputError:
            return first, second
    raise InputError(f"the {what} has more than two columns; it must hold exactly two",
                     source=str(path))


#: Registry of named curves: name -> factory (keyword parameters of the curve).
CURVES: dict[str, Callable[..., Curve]] = {
    "cie1976": cie1976_curve,
    "gamma": gamma_curve,
    "iec62386": iec62386_curve,
    "linear": linear_curve,
    "user": user_curve,
}


def get_curve(method: str = "cie1976", **params) -> Curve:
    """Return a curve from the registry.

    Parameters
    ----------
    method : str
        One of :data:`CURVES`: ``cie1976``, ``gamma``, ``iec62386``,
        ``linear``, ``user``.
    **params
        Parameters of that curve (``gamma=`` for ``gamma``; ``inputs=``,
        ``outputs=`` for ``user``). Unknown parameters raise.

    Returns
    -------
    Curve

    Raises
    ------
    SettingsError
        (a ValueError) If the method is unknown (the message lists the valid
        names), or a parameter does not belong to it.
    """
    try:
        factory = CURVES[method]
    except KeyError:
        raise SettingsError(
            f"unknown curve {method!r}; choose one of: {', '.join(CURVES)}") from None
    try:
        return factory(**params)
    except TypeError as exc:
        raise SettingsError(f"curve {method!r}: {exc}") from None


def curve_levels(
    n_steps: int,
    method: str | Curve = "cie1976",
    *,
    min_level: float | None = None,
    max_level: float = 1.0,
    off_step: bool = False,
    **params,
) -> np.ndarray:
    """Relative light of each step of a table even in a curve's coordinate.

    Parameters
    ----------
    n_steps : int
        Number of steps in the table, including the off step if any (>= 2).
    method : str or Curve
        Curve name (see :func:`get_curve`) or a :class:`Curve`.
    min_level : float, optional
        Light of the lowest lit step, a fraction of full output [unitless];
        default the curve's own (0, or 0.001 for ``iec62386``).
    max_level : float
        Light of the top step, fraction of full output [unitless].
    off_step : bool
        Put an extra "off" step (light 0) below the range, so step 0 is off
        and steps 1 .. n_steps-1 run from ``min_level`` to ``max_level``.
    **params
        Curve parameters (``gamma=``...).

    Returns
    -------
    numpy.ndarray
        Shape (n_steps,), non-decreasing, relative light [unitless].

    Raises
    ------
    SettingsError
        If ``n_steps < 2`` (3 with an off step), ``min_level >= max_level``,
        the range leaves 0..1 or what the curve can reach.

    Examples
    --------
    Steps 1..254 of an off + 254-step log table are the IEC 62386-102 levels:

    >>> y = curve_levels(255, "iec62386", off_step=True)
    >>> round(float(y[85]) * 100, 4)
    0.9909
    """
    curve = method if isinstance(method, Curve) else get_curve(method, **params)
    n = whole_number(n_steps, "step count")
    lit = n - 1 if off_step else n
    if lit < 2:
        raise SettingsError(
            f"step count must be at least {3 if off_step else 2}"
            f"{' with an off step' if off_step else ''}, got {n}")
    lo = curve.default_min if min_level is None else float(min_level)
    hi = float(max_level)
    if not (np.isfinite(lo) and np.isfinite(hi)):
        raise SettingsError("minimum and maximum levels must be finite")
    if lo >= hi:
        raise SettingsError(
            f"minimum level {100 * lo:g} % must be below the maximum level {100 * hi:g} %")
    if lo < 0 or hi > 1:
        raise SettingsError(f"levels must lie in 0..100 %, got {100 * lo:g} .. {100 * hi:g} %")
    if curve.name == "iec62386" and lo <= 0:
        raise SettingsError("the logarithmic curve needs a minimum level above 0 %")
    if lo < curve.lowest_light * (1 - 1e-12) or hi > curve.highest_light * (1 + 1e-12):
        raise SettingsError(
            f"range {100 * lo:g} .. {100 * hi:g} % leaves the curve's range "
            f"{100 * curve.lowest_light:g} .. {100 * curve.highest_light:g} %")
    v_lo, v_hi = (float(v) for v in curve.to_coordinate(np.array([lo, hi])))
    v = np.linspace(v_lo, v_hi, lit)
    y = np.asarray(curve.to_light(v), dtype=np.float64)
    y[0], y[-1] = lo, hi  # exact endpoints, whatever the round trip did
    y = np.clip(np.maximum.accumulate(y), lo, hi)
    if off_step:
        y = np.concatenate(([0.0], y))
    return y


def whole_number(value, name: str) -> int:
    """Return ``value`` as an int; raise SettingsError naming ``name`` if it is not whole."""
    try:
        n = int(value)
    except (TypeError, ValueError):
        raise SettingsError(f"{name} must be a whole number, got {value!r}") from None
    if n != value:
        raise SettingsError(f"{name} must be a whole number, got {value!r}")
    return n
