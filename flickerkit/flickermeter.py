"""Short-term flicker severity: the IEC 61000-4-15 flickermeter chain, for light and voltage.

One chain serves both signals:

====  ==========================================================  ===============
 #    block                                                       signal
====  ==========================================================  ===============
 0    squaring demodulator ``u**2``                               voltage only
 -    decimation to a working rate of 2-4 kHz, unity DC gain      both
 1    normalisation to the slowly tracked mean (tau = 60 s)        both
 3a   1st-order high-pass, 0.05 Hz                                both
 3b   6th-order Butterworth low-pass, 35 Hz (50 Hz systems)       both
      or 42 Hz (60 Hz systems)
 3c   weighting filter F(s) (lamp-eye-brain response)             both
 4    squaring, 1st-order smoothing tau = 0.3 s, scaling          both
      -> instantaneous flicker sensation Pinst
 5    statistics: smoothed percentiles, Pst                       both
====  ==========================================================  ===============

The filters are designed as analogue prototypes and mapped section by section
to digital second-order sections with a bilinear transform pre-warped at each
section's characteristic frequency, after an FIR decimation whose DC gain is
exactly 1 (scipy's default IIR ``decimate`` is about 1.1 % low). At a 2 kHz
working rate the digital magnitude response follows the analogue one within
0.1 % from 0.05 to 30 Hz and within 0.7 % to 45 Hz (tested).

The constants of blocks 3c-4 are a :class:`Calibration`. The voltage ones
(230 V and 120 V lamps) are the IEC 61000-4-15:2010 values from memory, not
read in the standard, cross-checked here against the standard's verification
tables (also from memory); the tests reproduce those tables. The light calibration
of IEC TR 61547-1 (Pst LM) was **not available**: the default light calibration
is provisional (see :data:`LIGHT_PROVISIONAL_230V`), and a laboratory holding
the standard can load its own with :func:`load_calibration`. Every result names
the calibration that produced it.

:class:`Flickermeter` holds the filter states, so a capture larger than memory
can be fed in chunks (:meth:`Flickermeter.process`); Pinst is kept at a
reduced rate (200-400 Hz) for the statistics. :func:`pst` is the one-shot form.

References
----------
IEC 61000-4-15:2010+A1:2012, "Testing and measurement techniques --
Flickermeter -- Functional and design specifications" (blocks, weighting
filter, statistics; constants from memory, not read in the standard, cross-checked
here against its verification tables, also from memory).
IEC TR 61547-1:2020, "Equipment for general lighting purposes -- EMC immunity
requirements -- Part 1: An objective light flickermeter and voltage fluctuation
immunity test method" (light flickermeter; its constants not used here).
"""

from __future__ import annotations

import math
import warnings
from dataclasses import asdict, dataclass, fields, replace
from pathlib import Path
from typing import Any

import numpy as np

from .errors import CaptureWarning, FlickerkitWarning, InputError, SettingsError

#: Signals the chain accepts.
SIGNALS = ("light", "voltage")

#: The working rate after decimation lies in [WORKING_RATE_MIN_HZ, 2 x that) [Hz].
WORKING_RATE_MIN_HZ = 2000.0

#: Lowest input sample rate accepted [Hz]: the 42 Hz low-pass and, for
#: voltage, the double-mains ripple (120 Hz) must sit well below Nyquist.
MIN_SAMPLE_RATE_HZ = 1000.0

#: Time constant of the tracked mean the input is normalised to [s]
#: (IEC 61000-4-15 input adaptor, about 1 min; from memory, not read in the standard).
MEAN_TRACKING_S = 60.0

#: Length of the start used to seed the tracked mean [s].
MEAN_SEED_S = 20.0

#: Start of Pinst discarded before the statistics [s]. The chain starts in its
#: steady state for the mean level; the remaining transients (the 0.05 Hz
#: high-pass seen through the weighting filter, the 0.3 s smoother) are below
#: 0.1 % of Pst after 5 s (checked in the tests against a 30 s settling).
SETTLING_S = 5.0

#: Shortest observation (after settling) that gives a Pst at all [s]. Chosen
#: here, no source: below it the 0.1 % percentile rests on a handful of samples.
MIN_OBSERVATION_S = 10.0

#: Pinst is kept for the statistics at a rate in [STATS_RATE_MIN_HZ, 2 x that) [Hz].
STATS_RATE_MIN_HZ = 200.0

#: Samples per processing block inside :meth:`Flickermeter.process` (bounds memory).
BLOCK_SAMPLES = 1 << 20

#: Anti-aliasing FIR: stop-band attenuation [dB] and the protected band [Hz]
#: (passband and the band that aliases into it).
_FIR_ATTENUATION_DB = 100.0
_FIR_GUARD_HZ = 100.0

#: Percentiles (percent of time exceeded) entering the Pst formula.
_PERCENT_POINTS = (0.1, 0.7, 1.0, 1.5, 2.2, 3.0, 4.0, 6.0, 8.0, 10.0, 13.0, 17.0,
                   30.0, 50.0, 80.0)


# ---------------------------------------------------------------------------
# calibrations


#: Upper ends of the calibration constants (see Calibration.__post_init__).
_CALIBRATION_MAX = {**{f: 1000.0 for f in ("lambda_hz", "f1_hz", "f2_hz", "f3_hz", "f4_hz",
                                           "lowpass_hz", "reference_frequency_hz",
                                           "highpass_hz")},
                    "observation_s": 86_400.0, "smoothing_s": 60.0, "k": 1e6}


@dataclass(frozen=True)
class Calibration:
    """Constants of the flickermeter's weighting, scaling and observation.

    Attributes
    ----------
    name : str
        Name printed and exported beside every result.
    signal : str
        ``"voltage"`` (squaring demodulator first) or ``"light"`` (relative
        light level, no demodulator).
    k : float
        Gain K of the weighting filter [unitless].
    lambda_hz : float
        Damping lambda / (2 pi) of the weighting filter [Hz].
    f1_hz, f2_hz, f3_hz, f4_hz : float
        omega_1..omega_4 / (2 pi) of the weighting filter [Hz].
    lowpass_hz : float
        Butterworth low-pass cut-off [Hz]: 35 for 50 Hz systems, 42 for 60 Hz.
    reference_frequency_hz : float
        Frequency of the sinusoidal reference fluctuation [Hz].
    reference_modulation : float
        Peak-to-peak relative change of the input (Delta V / V for voltage,
        Delta L / L for light) at ``reference_frequency_hz`` that gives
        Pinst,max = 1 [unitless, fraction].
    observation_s : float
        The method's observation time for one Pst [s].
    status : str
        Where the constants stand (``"recalled, cross-checked"``,
        ``"provisional"``, ``"laboratory"``, ...).
    origin : str
        Where the constants come from, in one or two sentences.
    highpass_hz : float
        First-order high-pass cut-off [Hz].
    lowpass_order : int
        Butterworth low-pass order.
    smoothing_s : float
        Time constant of the first-order smoother after squaring [s].

    Notes
    -----
    Weighting filter::

        F(s) = K w1 s / (s^2 + 2 lambda s + w1^2)
               * (1 + s/w2) / ((1 + s/w3)(1 + s/w4))

    References
    ----------
    IEC 61000-4-15:2010, weighting filter and scaling (from memory, not read
    in the standard; cross-checked here against its verification tables, also
    from memory).
    """

    name: str
    signal: str
    k: float
    lambda_hz: float
    f1_hz: float
    f2_hz: float
    f3_hz: float
    f4_hz: float
    lowpass_hz: float
    reference_frequency_hz: float
    reference_modulation: float
    observation_s: float
    status: str
    origin: str
    highpass_hz: float = 0.05
    lowpass_order: int = 6
    smoothing_s: float = 0.3

    def __post_init__(self) -> None:
        # ranges: every constant above 0; filter frequencies at most 1 kHz (the chain runs at
        # 2-4 kHz after decimation, so a corner above its Nyquist frequency cannot be
        # realised), observation at most one day, smoothing at most 60 s, k at most 1e6
        where = f"flickermeter calibration {self.name!r}"
        if not isinstance(self.name, str) or not self.name.strip():
            raise SettingsError("flickermeter calibration needs a non-empty name")
        if self.signal not in SIGNALS:
            raise SettingsError(f"{where}: signal must be one of {SIGNALS}, got {self.signal!r}")
        for f in ("k", "lambda_hz", "f1_hz", "f2_hz", "f3_hz", "f4_hz", "lowpass_hz",
                  "reference_frequency_hz", "reference_modulation", "observation_s",
                  "highpass_hz", "smoothing_s"):
            v = getattr(self, f)
            if isinstance(v, bool) or not isinstance(v, (int, float)) \
                    or not math.isfinite(v) or v <= 0:
                raise SettingsError(f"{where}: {f} must be a positive number, got {v!r}")
            high = _CALIBRATION_MAX.get(f)
            if high is not None and v > high:
                raise SettingsError(f"{where}: {f} must be at most {high:g}, got {v:g}")
        if isinstance(self.lowpass_order, bool) or not isinstance(self.lowpass_order, int) \
                or not 1 <= self.lowpass_order <= 12:
            raise SettingsError(f"{where}: lowpass_order must be an integer 1..12, "
                                f"got {self.lowpass_order!r}")
        if self.reference_modulation >= 1:
            raise SettingsError(f"{where}: reference_modulation is a fraction below 1 "
                                f"(the TOML key reference_modulation_percent is in percent)")

    @property
    def demodulator_gain(self) -> float:
        """Gain of block 0 on a small relative fluctuation: 2 for ``u**2``, 1 for light."""
        return 2.0 if self.signal == "voltage" else 1.0

    def to_toml(self) -> str:
        """The calibration as a TOML document :func:`load_calibration` reads back."""
        lines = ["# flickerkit flickermeter calibration",
                 "# reference_modulation_percent: peak-to-peak change [%] at "
                 "reference_frequency_hz giving Pinst,max = 1"]
        for f in fields(self):
            v = getattr(self, f.name)
            key = f.name
            if key == "reference_modulation":
                key, v = "reference_modulation_percent", 100.0 * v
            if isinstance(v, str):
                lines.append(f"{key} = {_toml_string(v)}")
            else:
                lines.append(f"{key} = {v!r}")
        return "\n".join(lines) + "\n"


def _toml_string(s: str) -> str:
    return '"' + s.replace("\\", "\\\\").replace('"', '\\"').replace("\n", "\\n") + '"'


_IEC_ORIGIN = ("IEC 61000-4-15:2010 weighting-filter constants, recalled from the standard "
               "and not read in it, but they reproduce the standard's recalled verification "
               "tables within 0.2 %")

#: IEC 61000-4-15 voltage flickermeter, 230 V / 60 W reference lamp, 50 Hz systems.
IEC_230V = Calibration(
    name="iec61000-4-15-230v", signal="voltage",
    k=1.74802, lambda_hz=4.05981, f1_hz=9.15494, f2_hz=2.27979, f3_hz=1.22535, f4_hz=21.9,
    lowpass_hz=35.0, reference_frequency_hz=8.8, reference_modulation=0.00250,
    observation_s=600.0, status="recalled, cross-checked", origin=_IEC_ORIGIN,
)

#: IEC 61000-4-15 voltage flickermeter, 120 V / 60 W reference lamp, 60 Hz systems.
IEC_120V = Calibration(
    name="iec61000-4-15-120v", signal="voltage",
    k=1.6357, lambda_hz=4.167375, f1_hz=9.077169, f2_hz=2.939902, f3_hz=1.394468,
    f4_hz=17.31512, lowpass_hz=42.0, reference_frequency_hz=8.8,
    reference_modulation=0.00321, observation_s=600.0,
    status="recalled, cross-checked", origin=_IEC_ORIGIN,
)

_PROVISIONAL_ORIGIN = (
    "PROVISIONAL, not IEC TR 61547-1: the voltage flickermeter's blocks 3-5 ({lamp} lamp "
    "constants) applied to the relative light level in place of the demodulated (squared) "
    "voltage, so a {ref} % peak-to-peak light modulation at 8.8 Hz gives Pinst,max = 1; "
    "observation 60 s as commonly stated for light sources (unverified). The light-domain "
    "weighting and scaling of IEC TR 61547-1 were not available; Pst LM on this scale may "
    "differ from a calibrated meter's. Load a laboratory calibration for compliance work.")

#: Default light calibration (Pst LM), provisional, 50 Hz systems.
LIGHT_PROVISIONAL_230V = replace(
    IEC_230V, name="light-provisional-230v", signal="light",
    reference_modulation=2 * IEC_230V.reference_modulation, observation_s=60.0,
    status="provisional",
    origin=_PROVISIONAL_ORIGIN.format(lamp="230 V", ref="0.500"),
)

#: Light calibration (Pst LM) on the 120 V constants, provisional, 60 Hz systems.
LIGHT_PROVISIONAL_120V = replace(
    IEC_120V, name="light-provisional-120v", signal="light",
    reference_modulation=2 * IEC_120V.reference_modulation, observation_s=60.0,
    status="provisional",
    origin=_PROVISIONAL_ORIGIN.format(lamp="120 V", ref="0.642"),
)

#: Built-in calibrations by name.
CALIBRATIONS: dict[str, Calibration] = {
    c.name: c for c in (LIGHT_PROVISIONAL_230V, LIGHT_PROVISIONAL_120V, IEC_230V, IEC_120V)
}

#: Name of the default light (Pst LM) calibration.
DEFAULT_LIGHT_CALIBRATION = LIGHT_PROVISIONAL_230V.name

#: Voltage calibrations by lamp.
LAMPS = {"230V": IEC_230V.name, "120V": IEC_120V.name}


def get_calibration(calibration: str | Calibration) -> Calibration:
    """Look up a built-in calibration by name (or pass one through).

    Raises
    ------
    SettingsError
        If the name is unknown; the message lists the built-in names.
    """
    if isinstance(calibration, Calibration):
        return calibration
    try:
        return CALIBRATIONS[calibration]
    except (KeyError, TypeError):
        raise SettingsError(
            f"unknown flickermeter calibration {calibration!r}; built-in ones are "
            f"{', '.join(CALIBRATIONS)} (or give a TOML file)") from None


def calibration_from_mapping(data: dict[str, Any], *, source: str = "") -> Calibration:
    """Build a :class:`Calibration` from a mapping with the TOML keys.

    Parameters
    ----------
    data : dict
        Keys as written by :meth:`Calibration.to_toml`
        (``reference_modulation_percent`` in percent). Optional keys:
        ``highpass_hz``, ``lowpass_order``, ``smoothing_s``.
    source : str, optional
        File name for messages.

    Raises
    ------
    SettingsError
        Unknown or missing keys, or impossible values; the message names them.
    """
    where = f"{source}: " if source else ""
    known = {f.name for f in fields(Calibration)} - {"reference_modulation"}
    known.add("reference_modulation_percent")
    optional = {"highpass_hz", "lowpass_order", "smoothing_s"}
    unknown = sorted(set(data) - known)
    if unknown:
        raise SettingsError(f"{where}unknown calibration key(s) {', '.join(unknown)}; "
                            f"known keys are {', '.join(sorted(known))}")
    missing = sorted(known - optional - set(data))
    if missing:
        raise SettingsError(f"{where}calibration lacks key(s) {', '.join(missing)}")
    from .validate import Spec, check_table

    # types with the shared validator (file and key named); ranges in Calibration itself
    specs = {k: Spec("number") for k in known}
    specs.update({k: Spec("string") for k in ("name", "signal", "status", "origin")})
    specs["lowpass_order"] = Spec("integer")
    check_table(data, specs, source=source or "calibration")
    kwargs = dict(data)
    pct = kwargs.pop("reference_modulation_percent")
    if isinstance(pct, bool) or not isinstance(pct, (int, float)):
        raise SettingsError(f"{where}reference_modulation_percent must be a number, got {pct!r}")
    kwargs["reference_modulation"] = float(pct) / 100.0
    for key in ("name", "signal", "status", "origin"):
        if not isinstance(kwargs[key], str):
            raise SettingsError(f"{where}{key} must be a string, got {kwargs[key]!r}")
    try:
        return Calibration(**kwargs)
    except SettingsError as exc:
        raise SettingsError(f"{where}{exc}") from None


def load_calibration(path: str | Path) -> Calibration:
    """Read a flickermeter calibration from a TOML file.

    Parameters
    ----------
    path : str or pathlib.Path
        TOML file with the keys of :meth:`Calibration.to_toml` at top level.

    Returns
    -------
    Calibration

    Raises
    ------
    SettingsError
        If the file cannot be read or parsed, or its contents are not a valid
        calibration.

    Examples
    --------
    Write the default as a template, edit it, load it back::

        Path("lab.toml").write_text(LIGHT_PROVISIONAL_230V.to_toml())
        cal = load_calibration("lab.toml")
    """
    from .readers.sidefile import load_toml

    p = Path(path)
    data = load_toml(p, "calibration file")
    return calibration_from_mapping(data, source=str(p))


# ---------------------------------------------------------------------------
# filter design


def _butterworth_sections(order: int, wc: float) -> list[tuple[np.ndarray, np.ndarray]]:
    """Analogue Butterworth low-pass as 1st/2nd-order sections (b, a) in s."""
    from scipy.signal import buttap

    _, poles, _ = buttap(order)
    sections = []
    for p in poles[poles.imag > 1e-12]:
        p = p * wc
        sections.append((np.array([0.0, 0.0, abs(p) ** 2]),
                         np.array([1.0, -2.0 * p.real, abs(p) ** 2])))
    if order % 2:
        sections.append((np.array([0.0, wc]), np.array([1.0, wc])))
    return sections


@dataclass(frozen=True)
class _Section:
    b: np.ndarray  # analogue numerator in s, highest power first
    a: np.ndarray  # analogue denominator
    warp_rad_s: float  # frequency kept exact by the bilinear transform [rad/s]


def analogue_sections(calibration: Calibration) -> list[_Section]:
    """Analogue prototype of blocks 3a-3c as sections (high-pass, low-pass, weighting).

    Parameters
    ----------
    calibration : Calibration

    Returns
    -------
    list of sections with attributes ``b``, ``a`` (polynomials in s [rad/s],
    highest power first) and ``warp_rad_s``.
    """
    c = calibration
    two_pi = 2.0 * np.pi
    wh = two_pi * c.highpass_hz
    wc = two_pi * c.lowpass_hz
    lam = two_pi * c.lambda_hz
    w1, w2, w3, w4 = (two_pi * f for f in (c.f1_hz, c.f2_hz, c.f3_hz, c.f4_hz))
    out = [_Section(np.array([1.0, 0.0]), np.array([1.0, wh]), wh)]
    out += [_Section(b, a, wc) for b, a in _butterworth_sections(c.lowpass_order, wc)]
    out.append(_Section(np.array([c.k * w1, 0.0]), np.array([1.0, 2.0 * lam, w1 * w1]), w1))
    out.append(_Section(np.array([1.0 / w2, 1.0]),
                        np.array([1.0 / (w3 * w4), 1.0 / w3 + 1.0 / w4, 1.0]), w4))
    return out


def analogue_response(calibration: Calibration, frequency_hz: np.ndarray | float) -> np.ndarray:
    """Complex response of the analogue blocks 3a-3c (high-pass, low-pass, F(s)).

    Parameters
    ----------
    calibration : Calibration
    frequency_hz : array_like
        Frequencies [Hz].

    Returns
    -------
    numpy.ndarray
        H(j 2 pi f) [unitless].
    """
    s = 2j * np.pi * np.asarray(frequency_hz, dtype=np.float64)
    h = np.ones_like(s)
    for sec in analogue_sections(calibration):
        h = h * np.polyval(sec.b, s) / np.polyval(sec.a, s)
    return h


def _bilinear_sos(sections: list[_Section], fs: float) -> np.ndarray:
    """Map analogue sections to digital SOS rows, pre-warped per section."""
    from scipy.signal import bilinear

    rows = []
    for sec in sections:
        w0 = sec.warp_rad_s
        fs_eff = w0 / (2.0 * np.tan(w0 / (2.0 * fs)))
        bz, az = bilinear(sec.b, sec.a, fs=fs_eff)
        bz = np.pad(bz, (3 - bz.size, 0)) if bz.size < 3 else bz
        az = np.pad(az, (3 - az.size, 0)) if az.size < 3 else az
        # a first-order section comes back as [0, a0, a1]: shift to [a0, a1, 0]
        if az[0] == 0:
            bz, az = np.roll(bz, -1), np.roll(az, -1)
        rows.append(np.concatenate((bz / az[0], az / az[0])))
    return np.asarray(rows)


def digital_chain(calibration: Calibration, working_rate_hz: float) -> np.ndarray:
    """Digital second-order sections of blocks 3a-3c at the working rate.

    Parameters
    ----------
    calibration : Calibration
    working_rate_hz : float
        Sample rate the chain runs at [Hz].

    Returns
    -------
    numpy.ndarray
        SOS array, shape (n_sections, 6), for :func:`scipy.signal.sosfilt`.
    """
    return _bilinear_sos(analogue_sections(calibration), working_rate_hz)


def _smoother_sos(tau_s: float, fs: float) -> np.ndarray:
    return _bilinear_sos([_Section(np.array([1.0]), np.array([tau_s, 1.0]), 1.0 / tau_s)], fs)


def pinst_scale(calibration: Calibration) -> float:
    """Scaling of block 4 so the reference sinusoid gives Pinst,max = 1.

    Returns
    -------
    float
        Factor S applied after the smoother [unitless].

    Notes
    -----
    A sinusoidal input fluctuation of peak relative amplitude a at frequency
    f reaches block 4 as ``g a |H(j 2 pi f)| sin`` (g = 2 for the squaring
    demodulator, 1 for light). Squared and smoothed by ``1 / (1 + s tau)`` its
    steady-state maximum is
    ``(g a |H|)^2 / 2 * (1 + 1 / sqrt(1 + (4 pi f tau)^2))``; S is the inverse
    of that at the reference point, from the analogue response.
    """
    c = calibration
    f = c.reference_frequency_hz
    a = c.reference_modulation / 2.0
    h = float(abs(analogue_response(c, f)))
    peak = (c.demodulator_gain * a * h) ** 2 / 2.0 * (
        1.0 + 1.0 / math.sqrt(1.0 + (4.0 * math.pi * f * c.smoothing_s) ** 2))
    return 1.0 / peak


def decimation_factor(sample_rate_hz: float) -> int:
    """Integer factor q taking the input rate to the working rate [2, 4) kHz (q >= 1)."""
    return max(1, int(sample_rate_hz // WORKING_RATE_MIN_HZ))


def decimation_filter(q: int, sample_rate_hz: float) -> np.ndarray:
    """FIR anti-aliasing filter for decimation by q, DC gain exactly 1.

    Parameters
    ----------
    q : int
        Decimation factor (>= 2).
    sample_rate_hz : float
        Input rate [Hz].

    Returns
    -------
    numpy.ndarray
        Taps, ``2 K q + 1`` of them (so the filter delay is a whole number of
        output samples), Kaiser window for 100 dB, cut-off at half the output
        rate; flat to 100 Hz and at least 100 dB down wherever a component
        would alias below 100 Hz.
    """
    from scipy.signal import firwin, kaiserord

    fw = sample_rate_hz / q
    nyq = sample_rate_hz / 2.0
    width = (fw - 2.0 * _FIR_GUARD_HZ) / nyq
    numtaps, beta = kaiserord(_FIR_ATTENUATION_DB, width)
    k = max(1, math.ceil((numtaps - 1) / (2 * q)))
    h = firwin(2 * k * q + 1, fw / 2.0, window=("kaiser", beta), fs=sample_rate_hz)
    return h / h.sum()


class _Decimator:
    """Polyphase FIR decimation by q with state carried between chunks.

    The filter starts in the steady state of the mean of the first ``len(h)``
    input samples; input is held back until that many have arrived, so the
    output does not depend on how the input is chunked.
    """

    def __init__(self, q: int, sample_rate_hz: float) -> None:
        self.q = q
        self.h = decimation_filter(q, sample_rate_hz) if q > 1 else np.ones(1)
        self.n_hist = self.h.size - 1
        self.lead = self.n_hist // q if q > 1 else 0  # whole output samples of delay
        self.hist: np.ndarray | None = None
        self.pending: list[np.ndarray] = []
        self.n_pending = 0
        self.pos = 0  # global index of the next input sample

    def process(self, x: np.ndarray, *, final: bool = False) -> np.ndarray:
        """Decimate the next samples; ``final`` releases input held back at the start."""
        if self.q == 1:
            self.pos += x.size
            return x
        if self.hist is None:
            if x.size:
                self.pending.append(x)
                self.n_pending += x.size
            if self.n_pending < self.h.size and not final:
                return np.zeros(0)
            if self.n_pending == 0:
                return np.zeros(0)
            x = np.concatenate(self.pending)
            self.pending, self.n_pending = [], 0
            self.hist = np.full(self.n_hist, float(np.mean(x[: self.h.size])))
        if x.size == 0:
            return np.zeros(0)
        from scipy.signal import upfirdn

        q, n = self.q, x.size
        g = self.pos
        buf = np.concatenate((self.hist, x))
        m0 = -(-g // q)
        m1 = (g + n - 1) // q
        out = np.zeros(0)
        if m1 >= m0:
            s = m0 * q - g
            y = upfirdn(self.h, buf[s:], 1, q)
            out = y[self.lead : self.lead + (m1 - m0 + 1)]
        self.hist = buf[-self.n_hist :].copy()
        self.pos += n
        return out


# ---------------------------------------------------------------------------
# the meter


@dataclass(frozen=True)
class PstResult:
    """Short-term flicker severity of a capture.

    Attributes
    ----------
    pst : float
        Pst (light: Pst LM) [unitless]: the largest over the complete
        observation windows, or over the shorter capture when ``short``.
    pst_windows : tuple of float
        Pst of each consecutive complete observation window (one value, over
        what there is, when ``short``).
    pinst_max : float
        Largest instantaneous flicker sensation after settling [unitless].
    percentiles : dict
        ``{"P0.1", "P1s", "P3s", "P10s", "P50s"}`` of the window giving ``pst``
        [unitless].
    signal : str
        ``"light"`` or ``"voltage"``.
    calibration : str
        Name of the calibration.
    calibration_status : str
        Its status (``"provisional"`` for the default light calibration).
    observation_s : float
        Length of the window giving ``pst`` [s].
    method_observation_s : float
        The calibration's observation time [s].
    settling_s : float
        Start discarded [s].
    working_rate_hz : float
        Rate the chain ran at [Hz].
    short : bool
        True when the capture is shorter than settling plus the method's
        observation time.
    warnings : tuple of str
        Doubts about the figure (also issued as warnings).
    """

    pst: float
    pst_windows: tuple[float, ...]
    pinst_max: float
    percentiles: dict
    signal: str
    calibration: str
    calibration_status: str
    observation_s: float
    method_observation_s: float
    settling_s: float
    working_rate_hz: float
    short: bool
    warnings: tuple[str, ...] = ()

    def to_dict(self) -> dict:
        """Plain-type dictionary for JSON output."""
        d = asdict(self)
        d["pst_windows"] = list(self.pst_windows)
        d["warnings"] = list(self.warnings)
        return d


def pst_from_pinst(pinst: np.ndarray) -> tuple[float, dict]:
    """Pst from samples of the instantaneous flicker sensation.

    Parameters
    ----------
    pinst : numpy.ndarray
        Pinst over the observation window, uniformly sampled [unitless].

    Returns
    -------
    pst : float
        Short-term flicker severity [unitless].
    percentiles : dict
        The smoothed percentiles P0.1, P1s, P3s, P10s, P50s [unitless].

    Notes
    -----
    P_x is the level exceeded x % of the time, here the exact
    ``(100 - x)``-th percentile of the stored samples (linear interpolation),
    which stands in for the standard's classifier of at least 64 classes.
    ``P1s = (P0.7 + P1 + P1.5)/3``, ``P3s = (P2.2 + P3 + P4)/3``,
    ``P10s = (P6 + P8 + P10 + P13 + P17)/5``, ``P50s = (P30 + P50 + P80)/3``,
    ``Pst = sqrt(0.0314 P0.1 + 0.0525 P1s + 0.0657 P3s + 0.28 P10s + 0.08 P50s)``.

    References
    ----------
    IEC 61000-4-15:2010, statistical evaluation (from memory, not read in the
    standard; cross-checked here against its verification tables, also from
    memory).
    """
    x = np.asarray(pinst, dtype=np.float64)
    if x.size == 0:
        raise InputError("no Pinst samples to evaluate")
    vals = np.percentile(x, [100.0 - p for p in _PERCENT_POINTS])
    p = dict(zip(_PERCENT_POINTS, vals))
    pc = {
        "P0.1": float(p[0.1]),
        "P1s": float((p[0.7] + p[1.0] + p[1.5]) / 3.0),
        "P3s": float((p[2.2] + p[3.0] + p[4.0]) / 3.0),
        "P10s": float((p[6.0] + p[8.0] + p[10.0] + p[13.0] + p[17.0]) / 5.0),
        "P50s": float((p[30.0] + p[50.0] + p[80.0]) / 3.0),
    }
    s = (0.0314 * pc["P0.1"] + 0.0525 * pc["P1s"] + 0.0657 * pc["P3s"]
         + 0.28 * pc["P10s"] + 0.08 * pc["P50s"])
    return float(math.sqrt(max(s, 0.0))), pc


class Flickermeter:
    """The flickermeter chain with its state, fed chunk by chunk.

    Parameters
    ----------
    sample_rate_hz : float
        Input sample rate [Hz]; at least :data:`MIN_SAMPLE_RATE_HZ`.
    calibration : str or Calibration, optional
        Built-in name (see :data:`CALIBRATIONS`) or a loaded calibration; its
        ``signal`` decides whether the squaring demodulator runs. Default: the
        provisional light calibration.
    settling_s : float, optional
        Start of Pinst discarded before the statistics [s].

    Examples
    --------
    >>> import numpy as np
    >>> fs = 4000.0
    >>> meter = Flickermeter(fs)
    >>> t = np.arange(int(20 * fs)) / fs
    >>> for chunk in np.array_split(1 + 0.0025 * np.sin(2 * np.pi * 8.8 * t), 7):
    ...     meter.process(chunk)
    >>> import warnings
    >>> with warnings.catch_warnings():
    ...     warnings.simplefilter("ignore")  # the doubts are kept in result.warnings
    ...     result = meter.result()
    >>> round(result.pinst_max, 2)   # 0.500 % p-p at 8.8 Hz: the reference
    1.0
    >>> for w in result.warnings:
    ...     print(w[:48])
    Pst over 15.0 s only, shorter than the 60 s obse
    Pst LM from the provisional calibration 'light-p
    """

    def __init__(
        self,
        sample_rate_hz: float,
        calibration: str | Calibration = DEFAULT_LIGHT_CALIBRATION,
        *,
        settling_s: float = SETTLING_S,
    ) -> None:
        from scipy.signal import sosfilt_zi

        fs = float(sample_rate_hz)
        if not math.isfinite(fs) or fs < MIN_SAMPLE_RATE_HZ:
            raise InputError(f"sample rate {fs:g} Hz is too low for the flickermeter; it needs "
                             f"at least {MIN_SAMPLE_RATE_HZ:g} Hz")
        if not math.isfinite(settling_s) or settling_s < 0:
            raise SettingsError(f"settling time must be >= 0 s, got {settling_s:g}")
        self.calibration = get_calibration(calibration)
        self.sample_rate_hz = fs
        self.settling_s = float(settling_s)
        q = decimation_factor(fs)
        self.working_rate_hz = fs / q
        self._decimator = _Decimator(q, fs)
        self._sos = digital_chain(self.calibration, self.working_rate_hz)
        self._zi = sosfilt_zi(self._sos)  # steady state for a unit input (the mean)
        self._smooth = _smoother_sos(self.calibration.smoothing_s, self.working_rate_hz)
        self._zs = np.zeros((1, 2))
        self._scale = pinst_scale(self.calibration)
        alpha = 1.0 - math.exp(-1.0 / (MEAN_TRACKING_S * self.working_rate_hz))
        self._mean_b = np.array([alpha])
        self._mean_a = np.array([1.0, alpha - 1.0])
        self._mean_zi: np.ndarray | None = None
        self._seed: list[np.ndarray] = []
        self._seed_n = 0
        self._seed_needed = max(1, int(round(MEAN_SEED_S * self.working_rate_hz)))
        self._stat_step = max(1, int(self.working_rate_hz // STATS_RATE_MIN_HZ))
        self.stats_rate_hz = self.working_rate_hz / self._stat_step
        self._stat_phase = 0  # working-rate samples since the last kept one, mod step
        self._pinst: list[np.ndarray] = []
        self.n_input = 0

    # -- feeding --------------------------------------------------------------

    def process(self, chunk: np.ndarray) -> None:
        """Feed the next samples of the capture.

        Parameters
        ----------
        chunk : numpy.ndarray
            1-D samples continuing the previous chunk [input unit: light in any
            linear unit, or volts].
        """
        x = np.asarray(chunk, dtype=np.float64).ravel()
        for start in range(0, x.size, BLOCK_SAMPLES):
            block = x[start : start + BLOCK_SAMPLES]
            if self.calibration.signal == "voltage":
                block = block * block
            self.n_input += block.size
            y = self._decimator.process(block)
            if y.size:
                self._feed_working(y)

    def _feed_working(self, y: np.ndarray) -> None:
        if self._mean_zi is None:
            self._seed.append(y)
            self._seed_n += y.size
            if self._seed_n < self._seed_needed:
                return
            self._start()
            return
        self._run(y)

    def _start(self) -> None:
        from scipy.signal import lfilter_zi

        seed = np.concatenate(self._seed)
        self._seed = []
        m0 = float(np.mean(seed[: self._seed_needed]))
        if not m0 > 0:
            what = "mean square voltage" if self.calibration.signal == "voltage" else \
                "mean light level"
            raise InputError(f"the {what} at the start of the capture is not positive "
                             f"({m0:g}); the flickermeter normalises to it")
        self._mean_zi = lfilter_zi(self._mean_b, self._mean_a) * m0
        self._run(seed)

    def _run(self, y: np.ndarray) -> None:
        from scipy.signal import lfilter, sosfilt

        mean, self._mean_zi = lfilter(self._mean_b, self._mean_a, y, zi=self._mean_zi)
        if np.any(mean <= 0):
            raise InputError("the tracked mean level of the capture fell to zero or below; "
                             "the flickermeter needs a positive signal (light after dark "
                             "subtraction, or a voltage)")
        r = y / mean
        w, self._zi = sosfilt(self._sos, r, zi=self._zi)
        p, self._zs = sosfilt(self._smooth, w * w, zi=self._zs)
        step = self._stat_step
        first = (-self._stat_phase) % step
        kept = p[first::step] * self._scale
        self._stat_phase = (self._stat_phase + p.size) % step
        self._pinst.append(kept)

    # -- reading --------------------------------------------------------------

    @property
    def pinst(self) -> np.ndarray:
        """Pinst so far, at :attr:`stats_rate_hz`, settling included [unitless].

        Reading it releases the few samples the chain holds back at the start
        (to seed its mean level); feeding more afterwards continues seamlessly.
        """
        if self._decimator.hist is None and self._decimator.n_pending:
            y = self._decimator.process(np.zeros(0), final=True)
            if y.size:
                self._feed_working(y)
        if self._mean_zi is None and self._seed:
            self._start()
        return np.concatenate(self._pinst) if self._pinst else np.zeros(0)

    @property
    def duration_s(self) -> float:
        """Length of the input fed so far [s]."""
        return self.n_input / self.sample_rate_hz

    def result(self, observation_s: float | None = None) -> PstResult:
        """Pst over what has been fed.

        Parameters
        ----------
        observation_s : float, optional
            Observation window for one Pst [s]; default the calibration's
            (60 s light, 600 s voltage).

        Returns
        -------
        PstResult

        Raises
        ------
        InputError
            If less than :data:`MIN_OBSERVATION_S` remains after settling.

        Warns
        -----
        CaptureWarning
            When the capture is shorter than settling plus the observation
            time (the value is kept and flagged ``short``).
        FlickerkitWarning
            When the calibration is provisional.
        """
        cal = self.calibration
        obs = float(cal.observation_s if observation_s is None else observation_s)
        if not math.isfinite(obs) or obs < MIN_OBSERVATION_S:
            raise SettingsError(f"observation time must be at least {MIN_OBSERVATION_S:g} s, "
                                f"got {obs:g} s")
        pinst = self.pinst
        fr = self.stats_rate_hz
        n_settle = int(math.ceil(self.settling_s * fr))
        avail = pinst[n_settle:]
        avail_s = avail.size / fr
        if avail_s < MIN_OBSERVATION_S * (1 - 1e-9):
            need = self.settling_s + MIN_OBSERVATION_S
            raise InputError(
                f"capture of {self.duration_s:.1f} s is too short for Pst: it needs at least "
                f"{need:g} s ({self.settling_s:g} s settling + {MIN_OBSERVATION_S:g} s); "
                f"the method's observation time is {cal.observation_s:g} s")
        n_obs = int(round(obs * fr))
        notes: list[tuple[type[Warning], str]] = []
        if avail.size >= n_obs:
            n_win = avail.size // n_obs
            wins = [pst_from_pinst(avail[i * n_obs : (i + 1) * n_obs]) for i in range(n_win)]
            short = False
            used_s = n_obs / fr
        else:
            wins = [pst_from_pinst(avail)]
            short = True
            used_s = avail_s
            notes.append((CaptureWarning,
                          f"Pst over {avail_s:.1f} s only, shorter than the {obs:g} s "
                          f"observation time (capture {self.duration_s:.1f} s, "
                          f"{self.settling_s:g} s settling discarded): short-capture value, "
                          f"indicative"))
        values = [w[0] for w in wins]
        best = int(np.argmax(values))
        if cal.status == "provisional":
            notes.append((FlickerkitWarning,
                          f"Pst {'LM ' if cal.signal == 'light' else ''}from the provisional "
                          f"calibration {cal.name!r}: not the IEC TR 61547-1 constants, "
                          f"indicative only"))
        for cat, msg in notes:
            warnings.warn(msg, cat, stacklevel=2)
        return PstResult(
            pst=values[best],
            pst_windows=tuple(values),
            pinst_max=float(avail.max()),
            percentiles=wins[best][1],
            signal=cal.signal,
            calibration=cal.name,
            calibration_status=cal.status,
            observation_s=float(used_s),
            method_observation_s=float(cal.observation_s),
            settling_s=self.settling_s,
            working_rate_hz=self.working_rate_hz,
            short=short,
            warnings=tuple(m for _, m in notes),
        )


def pst(
    samples: np.ndarray,
    sample_rate_hz: float,
    *,
    calibration: str | Calibration = DEFAULT_LIGHT_CALIBRATION,
    observation_s: float | None = None,
    settling_s: float = SETTLING_S,
) -> PstResult:
    """Short-term flicker severity of a capture, in one call.

    Parameters
    ----------
    samples : numpy.ndarray
        1-D capture: light in any linear unit (dark level removed), or the
        mains voltage itself for a voltage calibration [input unit].
    sample_rate_hz : float
        Sample rate [Hz].
    calibration : str or Calibration, optional
        See :class:`Flickermeter`.
    observation_s : float, optional
        Observation window [s]; default the calibration's.
    settling_s : float, optional
        Start discarded [s].

    Returns
    -------
    PstResult

    References
    ----------
    IEC 61000-4-15:2010 (chain and statistics); IEC TR 61547-1:2020 (light).
    """
    meter = Flickermeter(sample_rate_hz, calibration, settling_s=settling_s)
    meter.process(samples)
    return meter.result(observation_s)


def pst_lm(
    samples: np.ndarray,
    sample_rate_hz: float,
    *,
    calibration: str | Calibration = DEFAULT_LIGHT_CALIBRATION,
    observation_s: float | None = None,
) -> PstResult:
    """Pst LM of a light capture (light calibration; default provisional).

    Parameters
    ----------
    samples : numpy.ndarray
        Light level, linear, dark level removed [arbitrary linear unit].
    sample_rate_hz : float
        Sample rate [Hz].
    calibration : str or Calibration, optional
        A calibration with ``signal == "light"``.
    observation_s : float, optional
        Observation window [s]; default the calibration's (60 s).

    Returns
    -------
    PstResult

    References
    ----------
    IEC TR 61547-1:2020 (light flickermeter; see the calibration for the
    constants actually used).
    """
    cal = get_calibration(calibration)
    if cal.signal != "light":
        raise SettingsError(f"calibration {cal.name!r} is for {cal.signal}, not light")
    return pst(samples, sample_rate_hz, calibration=cal, observation_s=observation_s)


def pst_voltage(
    samples: np.ndarray,
    sample_rate_hz: float,
    *,
    lamp: str = "230V",
    observation_s: float | None = None,
) -> PstResult:
    """Pst of a mains voltage capture (IEC 61000-4-15 voltage flickermeter).

    Parameters
    ----------
    samples : numpy.ndarray
        Instantaneous mains voltage [V] (any scale; the chain normalises).
    sample_rate_hz : float
        Sample rate [Hz]; at least :data:`MIN_SAMPLE_RATE_HZ`.
    lamp : str, optional
        ``"230V"`` (50 Hz systems, 35 Hz low-pass) or ``"120V"`` (60 Hz, 42 Hz).
    observation_s : float, optional
        Observation window [s]; default 600 s.

    Returns
    -------
    PstResult

    References
    ----------
    IEC 61000-4-15:2010 (constants from memory, not read in the standard).
    """
    try:
        name = LAMPS[lamp]
    except KeyError:
        raise SettingsError(f"unknown lamp {lamp!r}; choose one of {', '.join(LAMPS)}") \
            from None
    return pst(samples, sample_rate_hz, calibration=name, observation_s=observation_s)
