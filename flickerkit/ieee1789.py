"""IEEE Std 1789-2015 recommended-practice boundaries for modulation and frequency.

Boundaries (Recommended Practices 1 and 2 of clause 8) -- *from memory, not
read in the standard*; they are internally consistent (computed here: each line
reaches 100 % modulation exactly at its upper breakpoint):

=======================  ===============  ========================  =============
region                   below 90 Hz      90 Hz <= f <= upper        above upper
=======================  ===============  ========================  =============
low risk (RP1)           Mod% < 0.025 f   Mod% < 0.08 f  (1250 Hz)   no restriction
no observable effect     Mod% < 0.01 f    Mod% < 0.0333 f (3000 Hz)  no restriction
=======================  ===============  ========================  =============

Edge semantics chosen here (documented, tested): the comparison is strict
(``<``); f = 90 Hz belongs to the upper segment; at exactly 1250 Hz (3000 Hz)
the line applies, above it there is no restriction. A measured frequency
within its uncertainty of a break (``edge_tolerance_hz``) is taken as lying
on it, so every capture of the same light lands on the same side.

Composite light (:func:`judge_modulation`): besides the standard's reading
(overall Mod% at the fundamental), each modulation not locked to the
fundamental is judged at its own frequency, and so is the band-limited
modulation depth of each segment of the lines that holds one; the headline is
the worst, and says what decided it.

IEEE 1789 states its practices for a waveform's flicker frequency and its
overall modulation. The "fundamental" mode does exactly that. The
"per-harmonic" mode, an addition of this project and labelled so, tests each
Fourier component k at its own frequency with ``Mod%_k = 100 C_k`` and
reports the worst.
"""

from __future__ import annotations

from dataclasses import dataclass

import numpy as np

#: Regions, best first.
REGIONS = ("no-observable-effect", "low-risk", "above-low-risk")

#: Breakpoints and slopes [Hz], [percent per Hz] (IEEE Std 1789-2015 clause 8;
#: from memory, not read in the standard).
LOW_FREQUENCY_BREAK_HZ = 90.0
LOW_RISK_SLOPES = (0.025, 0.08)
LOW_RISK_EXEMPT_ABOVE_HZ = 1250.0
NOEL_SLOPES = (0.01, 0.0333)
NOEL_EXEMPT_ABOVE_HZ = 3000.0
#: Frequencies where a line changes (slope or exemption) [Hz].
BREAKS_HZ = (LOW_FREQUENCY_BREAK_HZ, LOW_RISK_EXEMPT_ABOVE_HZ, NOEL_EXEMPT_ABOVE_HZ)
#: Segments of the lines as bands for band-limited depths: (low, high, label) [Hz];
#: the low segment excludes 90 Hz, the others include their upper break.
SEGMENTS_HZ = ((0.0, LOW_FREQUENCY_BREAK_HZ, "below 90 Hz"),
               (LOW_FREQUENCY_BREAK_HZ, LOW_RISK_EXEMPT_ABOVE_HZ, "90-1250 Hz"),
               (LOW_RISK_EXEMPT_ABOVE_HZ, NOEL_EXEMPT_ABOVE_HZ, "1250-3000 Hz"))


def snap_to_break(f_hz: float, tolerance_hz: float) -> tuple[float, str]:
    """Snap a frequency within ``tolerance_hz`` of a break onto the break.

    Parameters
    ----------
    f_hz, tolerance_hz : float
        Frequency and its uncertainty [Hz].

    Returns
    -------
    frequency_hz : float
        The break, or ``f_hz`` unchanged [Hz].
    note : str
        Empty, or which break it sits on.
    """
    for b in BREAKS_HZ:
        if tolerance_hz > 0 and abs(f_hz - b) <= tolerance_hz and f_hz != b:
            return b, f"{f_hz:.6g} Hz is on the {b:g} Hz break within its uncertainty"
        if f_hz == b:
            return b, f"on the {b:g} Hz break"
    return f_hz, ""


def _limit(f_hz, slopes, exempt_above_hz) -> np.ndarray | float:
    if isinstance(f_hz, (float, int)):  # one point: the same rule without numpy's overhead
        f1 = float(f_hz)
        if not f1 > 0:
            return 0.0
        if f1 > exempt_above_hz:
            return float("inf")
        return (slopes[0] if f1 < LOW_FREQUENCY_BREAK_HZ else slopes[1]) * f1
    f = np.asarray(f_hz, dtype=np.float64)
    lim = np.where(f < LOW_FREQUENCY_BREAK_HZ, slopes[0] * f, slopes[1] * f)
    lim = np.where(f > exempt_above_hz, np.inf, lim)
    lim = np.where(f > 0, lim, 0.0)
    return float(lim) if lim.ndim == 0 else lim


def low_risk_limit_percent(f_hz):
    """Return the largest modulation [percent] that is low-risk at a frequency (IEEE 1789 RP1).

    Parameters
    ----------
    f_hz : float or array_like
        Modulation frequency [Hz].

    Returns
    -------
    float or numpy.ndarray
        Limit of Mod% (strict: the modulation must be below it) [percent];
        ``inf`` above 1250 Hz, 0 at or below 0 Hz.

    References
    ----------
    IEEE Std 1789-2015, clause 8, Recommended Practice 1 (from memory, not
    read in the standard).

    Examples
    --------
    >>> low_risk_limit_percent(100.0)
    8.0
    """
    return _limit(f_hz, LOW_RISK_SLOPES, LOW_RISK_EXEMPT_ABOVE_HZ)


def noel_limit_percent(f_hz):
    """Return the largest modulation [percent] with no observable effect (IEEE 1789 RP2).

    Parameters
    ----------
    f_hz : float or array_like
        Modulation frequency [Hz].

    Returns
    -------
    float or numpy.ndarray
        Limit of Mod% [percent]; ``inf`` above 3000 Hz.

    References
    ----------
    IEEE Std 1789-2015, clause 8, Recommended Practice 2 (from memory, not
    read in the standard).
    """
    return _limit(f_hz, NOEL_SLOPES, NOEL_EXEMPT_ABOVE_HZ)


def region_of(f_hz, modulation_percent) -> np.ndarray | str:
    """Return the IEEE 1789 region of (frequency, modulation) points.

    Parameters
    ----------
    f_hz : float or array_like
        Modulation frequency [Hz].
    modulation_percent : float or array_like
        Modulation depth (percent flicker) [percent].

    Returns
    -------
    str or numpy.ndarray of str
        One of :data:`REGIONS` per point.
    """
    if isinstance(f_hz, (float, int)) and isinstance(modulation_percent, (float, int)):
        m1 = float(modulation_percent)  # one point (a measured capture judges dozens)
        return (REGIONS[0] if m1 < noel_limit_percent(f_hz) else
                REGIONS[1] if m1 < low_risk_limit_percent(f_hz) else REGIONS[2])
    f = np.asarray(f_hz, dtype=np.float64)
    m = np.asarray(modulation_percent, dtype=np.float64)
    out = np.where(m < noel_limit_percent(f), REGIONS[0],
                   np.where(m < low_risk_limit_percent(f), REGIONS[1], REGIONS[2]))
    return str(out) if out.ndim == 0 else out


@dataclass(frozen=True)
class Ieee1789Result:
    """A capture's place against the IEEE 1789 boundaries.

    Attributes
    ----------
    region : str
        ``"no-observable-effect"``, ``"low-risk"`` or ``"above-low-risk"``.
    frequency_hz : float
        Frequency the verdict was taken at [Hz].
    modulation_percent : float
        Modulation judged [percent].
    low_risk_limit_percent, noel_limit_percent : float
        Limits at that frequency (``inf`` where exempt) [percent].
    low_risk_margin_percent, noel_margin_percent : float
        Limit minus modulation; positive is inside [percentage points].
    mode : str
        ``"fundamental"`` or ``"per-harmonic"``.
    harmonic : int or None
        In per-harmonic mode, the order of the component that decided.
    decided_by : str
        What decided the region: ``"fundamental"``, ``"harmonic k"``, a
        component (``"component 20 Hz"``) or a band (``"band below 90 Hz"``).
    edge : str
        Non-empty when the frequency judged sits on a break of the lines.
    """

    region: str
    frequency_hz: float
    modulation_percent: float
    low_risk_limit_percent: float
    noel_limit_percent: float
    low_risk_margin_percent: float
    noel_margin_percent: float
    mode: str = "fundamental"
    harmonic: int | None = None
    decided_by: str = ""
    edge: str = ""


def classify(frequency_hz: float, modulation_percent: float, *, mode: str = "fundamental",
             harmonic: int | None = None, edge_tolerance_hz: float = 0.0,
             decided_by: str = "") -> Ieee1789Result:
    """Place one (frequency, modulation) point against the IEEE 1789 lines.

    Parameters
    ----------
    frequency_hz : float
        Fundamental modulation frequency [Hz].
    modulation_percent : float
        Percent flicker (overall Mod%) [percent].
    mode, harmonic, decided_by
        Recorded in the result (see :class:`Ieee1789Result`).
    edge_tolerance_hz : float, optional
        Uncertainty of a measured frequency [Hz]: within it of a break the
        frequency is judged on the break (see the module notes). 0 for exact
        (modelled) frequencies.

    Returns
    -------
    Ieee1789Result

    References
    ----------
    IEEE Std 1789-2015, clause 8, Recommended Practices 1 and 2.

    Examples
    --------
    >>> classify(100.0, 7.9).region
    'low-risk'
    >>> classify(100.0, 8.1).region
    'above-low-risk'
    """
    f_judged, edge = snap_to_break(float(frequency_hz), float(edge_tolerance_hz))
    lr = low_risk_limit_percent(f_judged)
    noel = noel_limit_percent(f_judged)
    return Ieee1789Result(
        region=str(region_of(f_judged, float(modulation_percent))),  # one point: a str
        frequency_hz=float(frequency_hz),
        modulation_percent=float(modulation_percent),
        low_risk_limit_percent=float(lr),
        noel_limit_percent=float(noel),
        low_risk_margin_percent=float(lr - modulation_percent),
        noel_margin_percent=float(noel - modulation_percent),
        mode=mode,
        harmonic=harmonic,
        decided_by=decided_by or (mode if harmonic is None else f"harmonic {harmonic}"),
        edge=edge,
    )


def _badness(r: Ieee1789Result) -> tuple[int, float]:
    """Rank a result for sorting: worse region first, then smaller relative margin to NOEL."""
    rank = REGIONS.index(r.region)
    noel = r.noel_limit_percent
    rel = np.inf if not np.isfinite(noel) else (noel - r.modulation_percent) / (noel or 1.0)
    return (-rank, float(rel))


def judge_modulation(reading: Ieee1789Result,
                     components: list[tuple[float, float, float]],
                     bands: list[tuple[str, float, float, float]]) -> Ieee1789Result:
    """Return the worst of the standard's reading, unlocked components and band-limited depths.

    Parameters
    ----------
    reading : Ieee1789Result
        The standard's reading (fundamental mode) or the per-harmonic one.
    components : list of (frequency [Hz], amplitude C [unitless], uncertainty [Hz])
        Components not locked to the fundamental; each is judged with
        ``Mod% = 100 C`` at its own frequency.
    bands : list of (label, frequency [Hz], modulation [percent], uncertainty [Hz])
        Band-limited modulation depth of each segment of the lines that holds
        such a component, judged at the frequency of its strongest component.

    Returns
    -------
    Ieee1789Result
        The worst (region first, then relative margin to the NOEL line), with
        ``decided_by`` naming it; ``reading`` itself when nothing is worse.

    Notes
    -----
    A project extension for light with more than one modulation (IEEE 1789
    states its practices for a waveform's flicker frequency and modulation;
    it does not say how to read a waveform that carries two). Harmonics of the
    fundamental stay with the standard's reading.
    """
    best = reading
    for f, c, u in components:
        r = classify(f, 100.0 * c, mode=reading.mode, edge_tolerance_hz=u,
                     decided_by=f"component {f:.5g} Hz")
        if _badness(r) < _badness(best):
            best = r
    for label, f, m, u in bands:
        r = classify(f, m, mode=reading.mode, edge_tolerance_hz=u,
                     decided_by=f"band {label} (at {f:.5g} Hz)")
        if _badness(r) < _badness(best):
            best = r
    return best


def classify_components(frequencies_hz: np.ndarray, amplitudes: np.ndarray, *,
                        edge_tolerance_hz: np.ndarray | float = 0.0) -> Ieee1789Result:
    """Judge each Fourier component at its own frequency (the per-harmonic mode).

    Parameters
    ----------
    frequencies_hz : numpy.ndarray
        Component frequencies [Hz] (harmonics 1, 2, ... in order).
    amplitudes : numpy.ndarray
        Amplitudes relative to the mean, C_k [unitless]; ``Mod%_k = 100 C_k``.
    edge_tolerance_hz : float or numpy.ndarray, optional
        Frequency uncertainty of each component [Hz]: within it of a break a
        component is judged on the break (module notes); 0 for exact frequencies.

    Returns
    -------
    Ieee1789Result
        The component with the worst margin (to the NOEL line first, then the
        low-risk line), with ``mode="per-harmonic"``.

    Notes
    -----
    A project extension chosen here, not a reading of IEEE Std 1789-2015 (no
    per-harmonic rule in it is known here; from memory, low confidence). It is less strict than the
    fundamental mode for harmonic-rich waveforms: overall Mod% can exceed
    every single ``Mod%_k``.
    """
    f_in = np.asarray(frequencies_hz, dtype=np.float64)
    m = 100.0 * np.asarray(amplitudes, dtype=np.float64)
    if f_in.size == 0:
        raise ValueError("no components to judge")
    f = f_in.copy()
    tol = np.broadcast_to(np.asarray(edge_tolerance_hz, dtype=np.float64), f.shape)
    for b in BREAKS_HZ:
        f = np.where(np.abs(f - b) <= tol, b, f)
    lr = low_risk_limit_percent(f)
    noel = noel_limit_percent(f)
    rank = np.array([REGIONS.index(r) for r in np.atleast_1d(region_of(f, m))])
    with np.errstate(invalid="ignore"):
        # relative margin; exempt components (inf limit) never decide
        rel = np.where(np.isinf(noel), np.inf, (noel - m) / np.where(noel > 0, noel, 1))
    order = np.lexsort((rel, -rank))
    i = int(order[0])
    return Ieee1789Result(
        region=REGIONS[rank[i]],
        frequency_hz=float(f_in[i]),
        modulation_percent=float(m[i]),
        low_risk_limit_percent=float(lr[i]),
        noel_limit_percent=float(noel[i]),
        low_risk_margin_percent=float(lr[i] - m[i]),
        noel_margin_percent=float(noel[i] - m[i]),
        mode="per-harmonic",
        harmonic=i + 1,
        decided_by=f"harmonic {i + 1}",
        edge=(f"{f_in[i]:.6g} Hz is on the {f[i]:g} Hz break within its uncertainty"
              if f[i] != f_in[i] else ""),
    )
