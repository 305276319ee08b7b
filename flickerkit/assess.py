"""One assessment of a capture: every figure computed once, for every report.

``assess`` runs period finding, the modulation spectrum, the metrics and the
IEEE 1789 placement for a :class:`~flickerkit.capture.Capture` -- measured or
modelled -- and returns a frozen :class:`Assessment` that the terminal table,
JSON, workbook and criteria all read. Warnings raised on the way (the
project's :class:`~flickerkit.errors.FlickerkitWarning`) are collected into the
result, so they reach every report.
"""

from __future__ import annotations

import warnings
from dataclasses import dataclass, field
from typing import Any

import numpy as np

from . import flickermeter, ieee1789, metrics, modulation, reduce, svm
from .capture import Capture
from .errors import CaptureWarning, FlickerkitWarning, InputError, SettingsError
from .filtered import FilteredFlicker, filtered_percent_flicker
from .flickermeter import Calibration, PstResult
from .modulation import Acquisition, LowFrequencyModulation, ModulationAnalysis
from .periodicity import SEGMENT_SAMPLES, Periodicity, fundamental_frequency, known_fundamental
from .spectrum import (SINGLE_FFT_MAX_SAMPLES, WINDOW_SAMPLES, Spectrum, averaged_spectrum,
                       modulation_spectrum)
from .svm import SvmResult

#: Largest sample magnitude accepted; beyond it sums and squares lose meaning (project choice).
MAX_MAGNITUDE = 1e100
#: Fewest samples an assessment accepts (less holds no usable modulation; project choice).
MIN_SAMPLES = 16
#: Fewest whole periods for stable figures (common practice, no source).
MIN_PERIODS = 2
#: Fewest samples per period for time-domain percent flicker and flicker
#: index (chosen here; computed here: duty quantisation errors below this).
MIN_SAMPLES_PER_PERIOD = 10
#: A percent flicker below this many times the noise floor is called noise-limited.
NOISE_MARGIN = 3.0
#: When the noise alone would add more than this fraction of the raw (min/max) percent
#: flicker, the headline figures are taken from the period-averaged waveform (project
#: choice: below it, noise moves the raw figure by less than 1 %).
NOISE_HEADLINE_SHARE = 0.01
#: The period-averaged waveform stands in for the raw figures only when the raw percent
#: flicker exceeds it by no more than this many times what noise can add over the whole
#: capture; a larger gap is modulation the average lost (an envelope or ripple not locked
#: to the period, or a period estimate that smears the fold). Chosen here, no source.
AVERAGE_LOSS_FACTOR = 1.5
#: Slowest modulation a measured capture must be able to show [Hz]: a component needs
#: ``modulation.MIN_CYCLES`` cycles in the capture to be told from drift, so a capture shorter
#: than their ratio (1 s) hides slower flicker and cannot pass the lines below 90 Hz. 3 Hz is
#: the low end of the range the caution names (light modulated at roughly 3-70 Hz can trigger
#: seizures); common practice, no source.
SLOWEST_JUDGED_HZ = 3.0
#: Filtered percent flicker (JA10.6) uses at most this many samples, or 1 s if that is
#: more (JA10.5 asks for at least 1 s of data); five inverse FFTs of a whole long
#: capture would cost more than the rest of the assessment.
FILTERED_MAX_SAMPLES = 2**20
#: A windowed SVM (no whole period found) needs this many lowest-band periods [unitless]:
#: at 80 Hz, 10 periods = 0.125 s, giving bins 8 Hz apart. Chosen here, no source.
SVM_MIN_WINDOWED_PERIODS = 10
#: Mains frequencies that choose the lamp constants when ``lamp="auto"`` [Hz].
_MAINS_BANDS = {"230V": (45.0, 55.0), "120V": (55.0, 65.0)}


@dataclass(frozen=True)
class AssessSettings:
    """Choices that change an assessment.

    Attributes
    ----------
    ieee1789_mode : str
        Which IEEE 1789 mode gives the headline region: ``"fundamental"``
        (overall percent flicker at the fundamental) or ``"per-harmonic"``.
    harmonics : int
        How many harmonics to report.
    svm_threshold : str
        SVM threshold model, a key of :data:`flickerkit.svm.THRESHOLDS`.
    svm_f_min_hz : float
        Lowest component frequency in the SVM sum [Hz].
    pst_calibration : str, Calibration or None
        Flickermeter calibration: a built-in name or a loaded
        :class:`~flickerkit.flickermeter.Calibration`. None: the default for
        the signal (light: the provisional Pst LM calibration; voltage: the
        IEC 61000-4-15 lamp chosen by ``lamp``).
    pst_observation_s : float or None
        Observation time of one Pst [s]; None: the calibration's.
    lamp : str
        Voltage captures only: ``"230V"``, ``"120V"`` or ``"auto"`` (by the
        mains frequency: 45-55 Hz -> 230V, 55-65 Hz -> 120V).
    detector_bandwidth_hz : float or None
        Bandwidth of the detector and its amplifier [Hz], if known. Above half
        the sample rate, content beyond it may have folded down (aliasing);
        at or below it, no component can be an alias. None: unknown.
    """

    ieee1789_mode: str = "fundamental"
    harmonics: int = 20
    svm_threshold: str = "power"
    svm_f_min_hz: float = svm.DEFAULT_F_MIN_HZ
    pst_calibration: str | Calibration | None = None
    pst_observation_s: float | None = None
    lamp: str = "auto"
    detector_bandwidth_hz: float | None = None

    def __post_init__(self) -> None:
        bw = self.detector_bandwidth_hz
        if bw is not None and not (np.isfinite(bw) and bw > 0):
            raise SettingsError(f"detector bandwidth must be a positive number of Hz, got {bw:g}")
        if self.ieee1789_mode not in ("fundamental", "per-harmonic"):
            raise ValueError(f"ieee1789_mode must be 'fundamental' or 'per-harmonic', "
                             f"got {self.ieee1789_mode!r}")
        if self.harmonics < 1:
            raise ValueError("harmonics must be at least 1")
        svm.get_threshold(self.svm_threshold)
        if not (np.isfinite(self.svm_f_min_hz) and 0 <= self.svm_f_min_hz < svm.DEFAULT_F_MAX_HZ):
            raise SettingsError(f"SVM lower frequency must be 0 to {svm.DEFAULT_F_MAX_HZ:g} Hz, "
                                f"got {self.svm_f_min_hz:g}")
        if self.pst_calibration is not None:
            flickermeter.get_calibration(self.pst_calibration)
        obs = self.pst_observation_s
        if obs is not None and not (np.isfinite(obs) and obs >= flickermeter.MIN_OBSERVATION_S):
            raise SettingsError(f"Pst observation time must be at least "
                                f"{flickermeter.MIN_OBSERVATION_S:g} s, got {obs:g} s")
        if self.lamp not in ("auto", *flickermeter.LAMPS):
            raise SettingsError(f"lamp must be auto, {', '.join(flickermeter.LAMPS)}; "
                                f"got {self.lamp!r}")

    def light_calibration(self) -> Calibration:
        """The calibration Pst LM uses."""
        cal = flickermeter.get_calibration(
            self.pst_calibration if self.pst_calibration is not None
            else flickermeter.DEFAULT_LIGHT_CALIBRATION)
        if cal.signal != "light":
            raise SettingsError(f"Pst calibration {cal.name!r} is for {cal.signal} captures, "
                                f"not light")
        return cal


@dataclass(frozen=True)
class Harmonic:
    """One Fourier component of the modulation.

    Attributes
    ----------
    order : int
        1 for the fundamental.
    frequency_hz : float
        [Hz].
    amplitude : float
        Amplitude relative to the mean, C_k [unitless].
    phase_deg : float
        Phase, cosine convention, relative to the first sample [degree].
    """

    order: int
    frequency_hz: float
    amplitude: float
    phase_deg: float


@dataclass(frozen=True)
class Assessment:
    """Every figure of one capture. Read by all reports; never recomputed there.

    Light levels (mean, minimum, maximum) are in the capture's own unit.

    ``percent_flicker`` and ``flicker_index`` are the headline figures: the raw
    min/max and area figures (``percent_flicker_raw``, ``flicker_index_raw``)
    unless noise would add more than :data:`NOISE_HEADLINE_SHARE` of them, then
    the period-averaged waveform's (``headline_estimate`` says which, and
    ``noise_limit_percent`` how far noise may still raise it [percentage
    points]). ``modulation`` lists every component; ``below_90hz`` is the
    light low-passed below 90 Hz; ``ieee1789_headline`` the worst IEEE 1789
    reading (see :func:`flickerkit.ieee1789.judge_modulation`);
    ``edge_notes`` the figures with a component on an edge; ``acquisition``
    the aliasing check.
    """

    label: str
    source: str
    quantity: str
    sample_rate_hz: float
    n_samples: int
    duration_s: float
    mean: float
    minimum: float
    maximum: float
    periodicity: Periodicity
    frequency_hz: float | None
    periods: int
    samples_per_period: float | None
    percent_flicker: float
    flicker_index: float
    percent_flicker_averaged: float | None
    per_period: metrics.PeriodStats
    noise_rms: float
    noise_percent_flicker: float
    spectrum: Spectrum = field(repr=False)
    harmonics: tuple[Harmonic, ...]
    ieee1789_fundamental: ieee1789.Ieee1789Result | None
    ieee1789_per_harmonic: ieee1789.Ieee1789Result | None
    warnings: tuple[str, ...]
    notes: tuple[str, ...]
    settings: AssessSettings
    meta: dict[str, Any] = field(default_factory=dict)
    svm: SvmResult | None = None
    pst_lm: PstResult | None = None
    pst_lm_calibration: str = ""
    filtered: FilteredFlicker | None = None
    modulation: ModulationAnalysis | None = None
    below_90hz: LowFrequencyModulation | None = None
    ieee1789_headline: ieee1789.Ieee1789Result | None = None
    edge_notes: tuple[str, ...] = ()
    acquisition: Acquisition | None = None
    percent_flicker_raw: float | None = None
    flicker_index_raw: float | None = None
    headline_estimate: str = "raw"
    noise_limit_percent: float = 0.0

    @property
    def ieee1789(self) -> ieee1789.Ieee1789Result | None:
        """The headline IEEE 1789 result: the reading in the mode the settings chose, or
        a worse one from a modulation not locked to the fundamental (see ``decided_by``)."""
        if self.ieee1789_headline is not None:
            return self.ieee1789_headline
        if self.settings.ieee1789_mode == "per-harmonic" and self.ieee1789_per_harmonic:
            return self.ieee1789_per_harmonic
        return self.ieee1789_fundamental

    def to_dict(self) -> dict[str, Any]:
        """The public JSON object of this assessment (keys are a stable interface)."""
        def ieee(r: ieee1789.Ieee1789Result | None) -> dict[str, Any] | None:
            if r is None:
                return None
            return {
                "region": r.region,
                "mode": r.mode,
                "frequency_hz": num(r.frequency_hz),
                "modulation_percent": num(r.modulation_percent),
                "low_risk_limit_percent": num(r.low_risk_limit_percent),
                "noel_limit_percent": num(r.noel_limit_percent),
                "low_risk_margin_percent": num(r.low_risk_margin_percent),
                "noel_margin_percent": num(r.noel_margin_percent),
                "harmonic": r.harmonic,
                "decided_by": r.decided_by,
                "edge": r.edge,
            }

        head = ieee(self.ieee1789)
        if head is not None:
            head["fundamental"] = ieee(self.ieee1789_fundamental)
            head["per_harmonic"] = ieee(self.ieee1789_per_harmonic)
        return {
            "label": self.label,
            "source": self.source,
            "quantity": self.quantity,
            "sample_rate_hz": num(self.sample_rate_hz),
            "n_samples": self.n_samples,
            "duration_s": num(self.duration_s),
            "mean": num(self.mean),
            "min": num(self.minimum),
            "max": num(self.maximum),
            "frequency_hz": num(self.frequency_hz),
            "periods": self.periods,
            "samples_per_period": num(self.samples_per_period),
            "percent_flicker": num(self.percent_flicker),
            "flicker_index": num(self.flicker_index),
            "percent_flicker_averaged": num(self.percent_flicker_averaged),
            "percent_flicker_raw": num(self.percent_flicker_raw),
            "flicker_index_raw": num(self.flicker_index_raw),
            "headline_estimate": self.headline_estimate,
            "noise_limit_percent": num(self.noise_limit_percent),
            "per_period": {
                "count": self.per_period.count,
                "percent_flicker_median": num(self.per_period.percent_flicker_median),
                "percent_flicker_worst": num(self.per_period.percent_flicker_worst),
                "flicker_index_median": num(self.per_period.flicker_index_median),
                "flicker_index_worst": num(self.per_period.flicker_index_worst),
            },
            "noise": {
                "rms_relative": num(self.noise_rms / self.mean) if self.mean > 0 else None,
                "percent_flicker_floor": num(self.noise_percent_flicker),
                "spectrum_floor": num(self.spectrum.noise_floor()),
            },
            "ieee1789": head,
            "harmonics": [
                {"order": h.order, "frequency_hz": num(h.frequency_hz),
                 "amplitude": num(h.amplitude), "phase_deg": num(h.phase_deg)}
                for h in self.harmonics
            ],
            "spectrum_window": self.spectrum.window,
            "input": {k: self.meta[k] for k in ("file", "format", "column", "dark_level",
                                                 "file_size_bytes") if k in self.meta},
            "read": self.meta.get("read"),
            "svm": num(self.svm.value) if self.svm else None,
            "svm_detail": _svm_detail(self.svm),
            "pst_lm": num(self.pst_lm.pst) if self.pst_lm else None,
            "pst_lm_calibration": self.pst_lm_calibration,
            "pst_lm_detail": _pst_detail(self.pst_lm),
            "filtered_percent_flicker": (
                {k: num(v) for k, v in self.filtered.as_mapping().items()}
                if self.filtered else None),
            "modulation": self.modulation.to_dict() if self.modulation else None,
            "below_90hz": self.below_90hz.to_dict() if self.below_90hz else None,
            "edge_notes": list(self.edge_notes),
            "acquisition": self.acquisition.to_dict() if self.acquisition else None,
            "warnings": list(self.warnings),
            "notes": list(self.notes),
        }


def _svm_detail(r: SvmResult | None) -> dict[str, Any] | None:
    if r is None:
        return None
    d = r.to_dict()
    d.pop("warnings")  # they are in the assessment's warnings
    d.pop("value")  # it is "svm"
    return d


def _pst_detail(r: PstResult | None) -> dict[str, Any] | None:
    if r is None:
        return None
    d = r.to_dict()
    d.pop("warnings")
    d.pop("pst")
    return d


def _check_arguments(capture: Any, settings: Any, name: str) -> None:
    """Refuse, in one line, arguments that are not a Capture and AssessSettings."""
    if not isinstance(capture, Capture):
        raise TypeError(f"{name}() takes a Capture, got {type(capture).__name__}; build one "
                        f"with flickerkit.make_capture(samples, sample_rate_hz)")
    if settings is not None and not isinstance(settings, AssessSettings):
        raise TypeError(f"{name}() takes AssessSettings as its second argument, got "
                        f"{type(settings).__name__} (the sample rate belongs to the Capture: "
                        f"flickerkit.make_capture(samples, sample_rate_hz))")


def assess(capture: Capture, settings: AssessSettings | None = None, *,
           block: int = reduce.BLOCK) -> Assessment:
    """Compute every figure of a light capture.

    Parameters
    ----------
    capture : Capture
        Validated light signal, dark level already removed.
    settings : AssessSettings, optional
        Defaults to ``AssessSettings()``.
    block : int, optional
        Samples read at a time [samples]. Every figure is computed block by
        block, so a capture larger than memory (a memory-mapped file or a
        :class:`~flickerkit.readers.FileSignal`) is assessed in bounded
        memory; the block size changes only the order of floating-point
        summation.

    Returns
    -------
    Assessment

    Raises
    ------
    InputError
        If the capture is dark (all zero), holds a non-finite sample, or its
        mean light is not positive.
    TypeError
        If ``capture`` is not a :class:`~flickerkit.capture.Capture` (a bare
        array: wrap it with :func:`~flickerkit.capture.make_capture`) or
        ``settings`` is not an :class:`AssessSettings`.

    Notes
    -----
    Passes over the data: one for totals (feeding the flickermeter), one for
    per-period extremes and sums, one for the areas above the means, one for
    the counts at the maximum. Period finding, the noise estimate and JA10.6
    filtering read only the start of the capture. Spans of whole periods up to
    :data:`~flickerkit.spectrum.SINGLE_FFT_MAX_SAMPLES` are transformed in one
    piece; longer ones use averaged whole-period windows.
    """
    _check_arguments(capture, settings, "assess")
    settings = settings or AssessSettings()
    where = capture.source or capture.label or None
    if capture.n_samples < MIN_SAMPLES:
        raise InputError(f"capture holds {capture.n_samples} samples; at least {MIN_SAMPLES} "
                         f"are needed", source=where)
    with warnings.catch_warnings(record=True) as caught:
        warnings.simplefilter("always", FlickerkitWarning)
        result = _assess(capture, settings, block)
    found = list(capture.warnings)
    found += [str(w.message) for w in caught if issubclass(w.category, FlickerkitWarning)]
    return _with_warnings(result, found)


def num(v: float | None) -> float | None:
    """A finite float for JSON, else None."""
    return None if v is None or not np.isfinite(v) else float(v)


def _with_warnings(a: Assessment, more: list[str]) -> Assessment:
    from dataclasses import replace

    merged = tuple(dict.fromkeys([*a.warnings, *more]))
    return replace(a, warnings=merged)


def _assess(capture: Capture, settings: AssessSettings, block: int) -> Assessment:
    x = capture.samples
    fs = capture.sample_rate_hz
    n = capture.n_samples
    where = capture.source or capture.label or None

    calibration = settings.light_calibration()
    meter = _pst_meter(capture, calibration)
    head = np.asarray(x[: max(SEGMENT_SAMPLES, metrics.NOISE_SAMPLES)], dtype=np.float64)
    if not np.isfinite(head).all():
        bad = int(np.flatnonzero(~np.isfinite(head))[0])
        raise InputError(f"sample {bad} is not a finite number", source=where)
    known = capture.meta.get("fundamental_hz")  # set by drive models, never by readers
    if known:
        period = known_fundamental(n, fs, float(known))
    else:
        period = fundamental_frequency(head, fs, mean=float(np.mean(head)), n_total=n)
    if period.frequency_hz is not None and period.period_samples is not None:  # found together
        bounds = metrics.period_bounds(period.periods, period.period_samples, n)
    else:
        bounds = np.array([0, n], dtype=np.int64)

    tot, sums = reduce.first_pass(x, bounds, block=block,
                                  feed=meter.process if meter is not None else None)
    if tot.first_bad is not None:
        raise InputError(f"sample {tot.first_bad} is not a finite number", source=where)
    hi, lo = tot.hi, tot.lo
    if max(abs(hi), abs(lo)) > MAX_MAGNITUDE:
        raise InputError(f"samples reach {max(abs(hi), abs(lo)):.3g}, beyond any plausible "
                         f"signal (|x| <= {MAX_MAGNITUDE:g}): check the file's scaling",
                         source=where)
    if hi == 0.0 and lo == 0.0:
        raise InputError("capture is dark: every sample is zero", source=where)
    if tot.total <= 0:
        raise InputError("mean light is not positive: check the dark level and the "
                         "detector's polarity", source=where)

    template = None
    if (period.period_samples is not None and period.period_samples >= 4
            and period.periods >= MIN_PERIODS):
        template, noise = metrics.periodic_average_and_noise(head, period.period_samples)
    else:
        noise = metrics.noise_rms(head)

    if period.frequency_hz is not None and period.period_samples is not None:
        spp = float(period.period_samples)
        if period.periods < MIN_PERIODS:
            warnings.warn(CaptureWarning(
                f"capture holds {period.periods} period of its {period.frequency_hz:.4g} Hz "
                f"modulation; at least {MIN_PERIODS} are needed for stable figures"))
        if spp < MIN_SAMPLES_PER_PERIOD:
            warnings.warn(CaptureWarning(
                f"sample rate {fs:.6g} Hz gives {spp:.3g} samples per period of the "
                f"{period.frequency_hz:.4g} Hz modulation; at least {MIN_SAMPLES_PER_PERIOD} "
                f"are needed, so percent flicker and flicker index may be off, and harmonics "
                f"above half the sample rate may fold down into components (and an IEEE 1789 "
                f"region) the light does not have"))
    else:
        spp = None
        warnings.warn(CaptureWarning(
            f"no periodic modulation found ({period.reason}); percent flicker and flicker "
            f"index are over the whole capture and the spectrum is Hann-windowed"))
    span_n = int(bounds[-1] - bounds[0])
    mean = sums.span_total / span_n
    above, span_above, at_max, at_next = reduce.second_pass(
        x, bounds, sums.total / sums.lengths, mean, hi, block=block, block_max=tot.block_max)
    per = metrics.stats_from_sums(sums.hi, sums.lo, sums.total, above)
    if period.frequency_hz is None:
        per = metrics.PeriodStats(1, per.percent_flicker_median, per.percent_flicker_worst,
                                  per.flicker_index_median, per.flicker_index_worst)
    pf = metrics.percent_flicker(np.array([sums.span_hi, sums.span_lo]))
    fi = span_above / sums.span_total if sums.span_total > 0 else float("nan")
    spec = _spectrum(x, fs, period, n)
    modul = modulation.analyse(spec, fs, template=template,
                               period_samples=period.period_samples,
                               detector_bandwidth_hz=settings.detector_bandwidth_hz)
    span_s = n / fs
    if "model" not in capture.meta and span_s < modulation.MIN_CYCLES / SLOWEST_JUDGED_HZ:
        warnings.warn(CaptureWarning(
            f"capture of {span_s:.3g} s cannot show modulation slower than "
            f"{modulation.MIN_CYCLES / span_s:.3g} Hz ({modulation.MIN_CYCLES:g} cycles): slow "
            f"flicker, the kind that can trigger seizures, goes unseen; IEEE 1789 and the "
            f"seizure screen cannot pass it (capture at least "
            f"{modulation.MIN_CYCLES / SLOWEST_JUDGED_HZ:g} s)"))
    sparse = sparse_component(modul, fs)
    if sparse is not None and (spp is None or spp >= MIN_SAMPLES_PER_PERIOD):
        warnings.warn(CaptureWarning(
            f"sample rate {fs:.6g} Hz gives {fs / sparse.frequency_hz:.3g} samples per period "
            f"of the strongest modulation, at {sparse.frequency_hz:.6g} Hz; at least "
            f"{MIN_SAMPLES_PER_PERIOD} are needed: its harmonics above half the sample rate "
            f"may fold down into components (and an IEEE 1789 region) the light does not have"))
    empty = empty_fundamental(modul, spec)
    if empty is not None:
        a1, f_strong, a_strong = empty
        warnings.warn(CaptureWarning(
            f"the period found, {modul.fundamental_hz:.6g} Hz, carries {100 * a1:.2g} % "
            f"modulation of its own against {100 * a_strong:.3g} % at {f_strong:.6g} Hz: it is "
            f"a common period of stronger modulations (or a slowly repeating pattern), and the "
            f"IEEE 1789 fundamental-mode reading puts the whole waveform's percent flicker at "
            f"{modul.fundamental_hz:.6g} Hz, which may be harsher than the light's own "
            f"components; another capture of the same light may find another common period "
            f"(see the per-harmonic reading and the components)"))
    if modul.noise_std_relative is not None and mean > 0:
        # the fold's residual also holds modulation not locked to the period (an envelope,
        # ripple under PWM); the spectrum's median bin holds only the white noise
        noise = min(noise, modul.noise_std_relative * mean)
    pf_avg = metrics.percent_flicker(template) if template is not None else None
    noise_pf = metrics.noise_percent_flicker(noise, mean, spp if spp else n)
    real_noise = noise > metrics.NUMERICAL_NOISE * abs(mean)
    pf_raw, fi_raw = pf, fi
    headline, noise_limit = "raw", 0.0
    if template is not None and real_noise and np.isfinite(noise_pf) \
            and noise_pf > NOISE_HEADLINE_SHARE * pf_raw:
        used = int(min(n, metrics.NOISE_SAMPLES) // float(period.period_samples or n))
        rob = metrics.robust_flicker(template, noise, used)
        noise_whole = metrics.noise_percent_flicker(noise, mean, n)
        lost = pf_raw - rob.percent_flicker
        if np.isfinite(rob.percent_flicker) and \
                lost > AVERAGE_LOSS_FACTOR * noise_whole + rob.noise_limit_percent:
            # the average lost real modulation: the raw figure stands, with its noise
            noise_limit = float(noise_whole)
            warnings.warn(CaptureWarning(
                f"the period-averaged waveform ({rob.percent_flicker:.3g} % percent flicker) "
                f"lies {lost:.3g} points below the raw figure, more than noise explains "
                f"(up to {noise_whole:.2g} %): the light holds modulation not locked to the "
                f"{period.frequency_hz:.6g} Hz period, or the period is off; the headline is "
                f"the raw min/max figure {pf_raw:.3g} %, which noise may raise by up to "
                f"{noise_whole:.2g} percentage points"))
        elif np.isfinite(rob.percent_flicker):
            pf, fi, headline, noise_limit = (rob.percent_flicker, rob.flicker_index, rob.method,
                                             rob.noise_limit_percent)
            warnings.warn(CaptureWarning(
                f"noise limits the raw figures (min/max percent flicker {pf_raw:.3g} %, flicker "
                f"index {fi_raw:.3g}; noise alone would read {noise_pf:.2g} %): the headline is "
                f"the {headline} waveform's, {pf:.3g} % and {fi:.3g}, which noise may still "
                f"raise by up to {noise_limit:.2g} percentage points"))
    if real_noise and np.isfinite(noise_pf) and pf_raw < NOISE_MARGIN * noise_pf:
        warnings.warn(CaptureWarning(
            f"percent flicker {pf_raw:.3g} % is within {NOISE_MARGIN:g}x of the noise floor "
            f"({noise_pf:.2g} %): it is noise-limited, not a measure of modulation"
            + (f"; the period-averaged waveform gives {pf_avg:.3g} %" if pf_avg is not None
               else "")))
    # noise alone reaches about -sigma sqrt(2 ln n) below a zero off-level
    noise_reach = (np.sqrt(2.0 * np.log(max(n, 2))) + 2.0) * noise
    if lo < 0 and lo < -max(noise_reach, 1e-9 * abs(hi)):
        warnings.warn(CaptureWarning(
            f"light goes negative (minimum {lo:.4g}, mean {mean:.4g}): the dark level may "
            f"be too high or the detector offset drifted; ratio metrics are biased"))
    elif pf_raw > 100.0:
        # noise around a zero off-level (after the dark level) dips below zero: a ratio of
        # (max - min) / (max + min) then exceeds its physical 100 %
        warnings.warn(CaptureWarning(
            f"percent flicker {pf_raw:.4g} % is above 100 % because the light dips below zero "
            f"(minimum {lo:.4g}, within the noise of a zero off-level)"
            + (f"; the period-averaged waveform gives {pf_avg:.4g} %" if pf_avg is not None
               else "")))
    # clipping needs noise that the rail removed: judged with the second-difference noise,
    # which a noise-free flat top (or edges between samples) does not have
    # (the counts first: the noise estimate is a pass over the head, needed only at a rail)
    if real_noise and metrics.rail_counts(n, at_max, at_next) \
            and metrics.clipping_from_counts(n, at_max, at_next, metrics.noise_rms(head)):
        warnings.warn(CaptureWarning(
            f"clipping suspected: {at_max / n:.1%} of samples sit exactly at "
            f"the maximum {hi:.6g} while the rest is noisy; the recorder's range may be too "
            f"small, which lowers percent flicker"))

    harmonics: list[Harmonic] = []
    bins = spec.harmonic_bins()
    shown = bins[: settings.harmonics]
    # whole arrays, then Python floats: the same values as one numpy scalar at a time
    for order, (f_h, a_h, deg) in enumerate(zip(
            spec.frequencies_at(shown).tolist(), spec.amplitudes[shown].tolist(),
            np.degrees(spec.phase_at(shown)).tolist()), start=1):
        harmonics.append(Harmonic(order, f_h, a_h, deg))

    cap = max(FILTERED_MAX_SAMPLES, int(np.ceil(fs)))
    filt = filtered_percent_flicker(np.asarray(x[:cap], dtype=np.float64), fs, period,
                                    max_samples=cap,
                                    bands_hz=tuple((lo, hi) for lo, hi, _ in
                                                   ieee1789.SEGMENTS_HZ),
                                    transform=((spec.n_samples, spec.coefficients)
                                               if spec.window == "rectangular"
                                               and spec.start == 0 else None))
    fund = per_h = head_ieee = None
    if period.frequency_hz is not None:
        fund = ieee1789.classify(period.frequency_hz, pf,
                                 edge_tolerance_hz=max(modul.fundamental_uncertainty_hz,
                                                       modulation.EDGE_RTOL
                                                       * period.frequency_hz))
        if bins.size:
            # harmonic h is at h f0 (its bin's frequency carries the span's rounding)
            orders = np.arange(1, bins.size + 1)
            u0 = max(modul.fundamental_uncertainty_hz,
                     modulation.EDGE_RTOL * period.frequency_hz)
            per_h = ieee1789.classify_components(
                period.frequency_hz * orders, spec.amplitudes[bins],
                edge_tolerance_hz=u0 * orders)
        reading = per_h if settings.ieee1789_mode == "per-harmonic" and per_h else fund
        head_ieee = _composite_ieee(reading, modul, filt)
    below = _below_90(modul, filt)
    edges = _edge_notes(modul, settings)
    acq = modulation.folding(modul, fs, settings.detector_bandwidth_hz)
    if acq.folding_suspected:
        warnings.warn(CaptureWarning(f"aliasing: {acq.reason}; verdicts on this capture are "
                                     f"insufficient data"))
    _warn_unjudged_aliases(modul, head_ieee)

    svm_result = _svm(spec, capture, settings)
    pst_result = None
    if meter is not None:
        try:
            pst_result = meter.result(settings.pst_observation_s)
        except InputError as exc:
            warnings.warn(CaptureWarning(f"no Pst LM: {exc}; pst_lm is null"))

    return Assessment(
        label=capture.label,
        source=capture.source,
        quantity=capture.quantity,
        sample_rate_hz=fs,
        n_samples=n,
        duration_s=capture.duration_s,
        mean=mean,
        minimum=lo,
        maximum=hi,
        periodicity=period,
        frequency_hz=period.frequency_hz,
        periods=period.periods,
        samples_per_period=spp,
        percent_flicker=pf,
        flicker_index=fi,
        percent_flicker_raw=pf_raw,
        flicker_index_raw=fi_raw,
        headline_estimate=headline,
        noise_limit_percent=noise_limit,
        percent_flicker_averaged=pf_avg,
        per_period=per,
        noise_rms=noise,
        noise_percent_flicker=noise_pf,
        spectrum=spec,
        harmonics=tuple(harmonics),
        ieee1789_fundamental=fund,
        ieee1789_per_harmonic=per_h,
        warnings=(),  # assess() adds the capture's and the caught warnings
        notes=capture.notes,
        settings=settings,
        meta=dict(capture.meta),
        svm=svm_result,
        pst_lm=pst_result,
        pst_lm_calibration=calibration.name,
        filtered=filt,
        modulation=modul,
        below_90hz=below,
        ieee1789_headline=head_ieee,
        edge_notes=edges,
        acquisition=acq,
    )


#: The fundamental of the period found counts as carrying no modulation of its own below
#: this fraction of the strongest component's amplitude. Chosen here, no source: a tenth
#: keeps two unequal PWM channels half a period apart (1 and 0.8: about 0.11) out.
EMPTY_FUNDAMENTAL_RATIO = 0.1


def empty_fundamental(modul: modulation.ModulationAnalysis, spec: Spectrum
                      ) -> tuple[float, float, float] | None:
    """Return the fundamental's amplitude and the strongest harmonic when the first is empty.

    A period found where the light has (almost) no modulation at its frequency is a common
    period of faster modulations (PWM at 3123.4 Hz under 1250 Hz ripple repeats, within a
    capture, at about 624.7 Hz), or a slowly repeating pattern (dither): real, but the
    fundamental-mode reading of IEEE 1789 then sets the whole percent flicker at a frequency
    the light hardly modulates at, and a slightly different capture may find another
    common period.

    Parameters
    ----------
    modul : ModulationAnalysis
        The capture's components (its fundamental).
    spec : Spectrum
        The capture's spectrum over whole periods (one span or averaged windows of P
        periods each): harmonic h is bin h P exactly.

    Returns
    -------
    (float, float, float) or None
        The fundamental's amplitude relative to the mean [unitless], the strongest
        harmonic's frequency [Hz] and amplitude [unitless], when the first is below
        :data:`EMPTY_FUNDAMENTAL_RATIO` of the last; else None.
    """
    f0 = modul.fundamental_hz
    if not f0 or spec.whole_periods < 1:  # no period: a Hann-windowed spectrum
        return None
    harm = spec.amplitudes[spec.whole_periods::spec.whole_periods]
    if harm.size < 2:
        return None
    k = int(np.argmax(harm))
    a1, f_strong, a_strong = float(harm[0]), (k + 1) * f0, float(harm[k])
    if k == 0 or a1 >= EMPTY_FUNDAMENTAL_RATIO * a_strong:
        return None
    return a1, f_strong, a_strong


def sparse_component(modul: modulation.ModulationAnalysis,
                     sample_rate_hz: float) -> modulation.Component | None:
    """The strongest judged component when it has too few samples per period, else None.

    The samples-per-period check on the period found misses light whose strongest
    modulation is faster than that period (PWM under ripple it is not locked to, or
    several channels): sampled at fewer than :data:`MIN_SAMPLES_PER_PERIOD` samples per
    period of it, its harmonics fold down as modulation that is not there.

    Parameters
    ----------
    modul : ModulationAnalysis
        The capture's components.
    sample_rate_hz : float
        [Hz].

    Returns
    -------
    Component or None
    """
    judged = [c for c in modul.judged() if c.frequency_hz > 0]
    if not judged:
        return None
    c = max(judged, key=lambda c: c.amplitude)
    return c if sample_rate_hz / c.frequency_hz < MIN_SAMPLES_PER_PERIOD else None


def _warn_unjudged_aliases(modul: modulation.ModulationAnalysis,
                           head: ieee1789.Ieee1789Result | None) -> None:
    """Warn when a possible alias, were it real, would change the IEEE 1789 region."""
    if head is None or head.region == ieee1789.REGIONS[-1]:
        return  # no region is worse than the worst
    worst = None
    # components come strongest first: the first alias that would worsen the region is the
    # largest such one (the first of equals), so the search ends there
    for c in modul.components:
        if c.kind != "possible alias":
            continue
        if worst is not None and c.amplitude <= worst.amplitude:
            break
        r = ieee1789.classify(c.frequency_hz, 100 * c.amplitude, edge_tolerance_hz=c.uncertainty_hz)
        if ieee1789.REGIONS.index(r.region) > ieee1789.REGIONS.index(head.region):
            worst = c if worst is None or c.amplitude > worst.amplitude else worst
    if worst is not None:
        warnings.warn(CaptureWarning(
            f"a component at {worst.frequency_hz:.5g} Hz ({100 * worst.amplitude:.2g} %) is "
            f"not judged: it is no larger than a harmonic above the Nyquist frequency could "
            f"fold down with ({100 * modul.alias_bound:.2g} %); were it real modulation the "
            f"IEEE 1789 region would be worse. Sample faster or band-limit the detector to tell"))


#: Components smaller than this are not named in edge notes (they cannot move a
#: figure by more than 0.1 %) [unitless]. Chosen here.
_EDGE_NOTE_MIN = 1e-3


def _composite_ieee(reading: ieee1789.Ieee1789Result, modul: modulation.ModulationAnalysis,
                    filt: FilteredFlicker) -> ieee1789.Ieee1789Result:
    """The reading, or worse: each unlocked component and band-limited depth at its frequency."""
    judged = modul.judged()
    unrelated = [c for c in judged if c.kind == "unrelated"]
    if not unrelated:
        return reading
    comps = [(c.frequency_hz, c.amplitude, c.uncertainty_hz) for c in unrelated]
    bands = []
    segs = ieee1789.SEGMENTS_HZ
    depth = {(lo, hi): pf for lo, hi, pf in filt.bands}
    where = [modulation.segment_of(c, segs) for c in judged]
    for i, (lo, hi, label) in enumerate(segs):
        inside = [c for c, s in zip(judged, where) if s == i]
        if not inside or inside[0].kind != "unrelated" or (lo, hi) not in depth:
            continue  # the strongest is a harmonic: the standard's reading covers it
        m = depth[(lo, hi)]
        if np.isfinite(m):
            bands.append((label, inside[0].frequency_hz, m, inside[0].uncertainty_hz))
    return ieee1789.judge_modulation(reading, comps, bands)


def _below_90(modul: modulation.ModulationAnalysis,
              filt: FilteredFlicker) -> modulation.LowFrequencyModulation:
    """Modulation depth below 90 Hz (low-passed), or None-valued when nothing is there."""
    segs = ieee1789.SEGMENTS_HZ
    low = [c for c in modul.judged() if modulation.segment_of(c, segs) == 0]
    if not low:
        return modulation.LowFrequencyModulation(None, None, 0)
    lo, hi, _ = segs[0]
    m = next((pf for a, b, pf in filt.bands if (a, b) == (lo, hi)), None)
    return modulation.LowFrequencyModulation(num(m), low[0].frequency_hz, len(low))


def _edge_notes(modul: modulation.ModulationAnalysis,
                settings: AssessSettings) -> tuple[str, ...]:
    """Which figures have a component on an edge (treated inclusively; see modulation.on_edge)."""
    from .filtered import JA10_CUTOFFS_HZ

    edges = [(settings.svm_f_min_hz, "the SVM band's lower end", "included"),
             (svm.DEFAULT_F_MAX_HZ, "the SVM band's upper end", "included")]
    edges += [(fc, f"the JA10.6 {fc:g} Hz cut-off", "kept") for fc in JA10_CUTOFFS_HZ]
    edges += [(ieee1789.LOW_FREQUENCY_BREAK_HZ, "the IEEE 1789 90 Hz break",
               "judged on the upper segment"),
              (ieee1789.LOW_RISK_EXEMPT_ABOVE_HZ, "the IEEE 1789 1250 Hz break",
               "the low-risk line applies"),
              (ieee1789.NOEL_EXEMPT_ABOVE_HZ, "the IEEE 1789 3000 Hz break",
               "the no-observable-effect line applies")]
    comps = [c for c in modul.judged() if c.amplitude >= _EDGE_NOTE_MIN]
    if not comps:
        return ()
    # modulation.on_edge for every component and edge at once (the same comparisons)
    e = np.array([x[0] for x in edges], dtype=np.float64)
    f = np.array([c.frequency_hz for c in comps])[:, None]
    u = np.array([c.uncertainty_hz for c in comps])[:, None]
    with np.errstate(invalid="ignore"):
        near = (np.abs(f - e) <= np.maximum(u, modulation.EDGE_RTOL * e)) & (e > 0)
    out = []
    for i, j in zip(*np.nonzero(near)):  # row by row: component order, then edge order
        c, (_, what, rule) = comps[i], edges[j]
        out.append(f"component {c.frequency_hz:.6g} Hz ({100 * c.amplitude:.3g} %) sits "
                   f"on {what} within its uncertainty (+-{c.uncertainty_hz:.2g} Hz): "
                   f"{rule}")
    return tuple(dict.fromkeys(out))


def _svm(spec: Spectrum, capture: Capture, settings: AssessSettings) -> SvmResult | None:
    """SVM of the spectrum, or None (with a warning) when the capture cannot give one."""
    if not spec.window.startswith("rectangular"):
        f_low = max(settings.svm_f_min_hz, 1.0)
        need = SVM_MIN_WINDOWED_PERIODS / f_low
        if capture.duration_s < need:
            warnings.warn(CaptureWarning(
                f"capture of {capture.duration_s:.3g} s without a whole period is too short "
                f"for SVM (a windowed spectrum needs at least {need:.3g} s); svm is null"))
            return None
    return svm.svm_of_spectrum(spec, threshold=settings.svm_threshold,
                               f_min_hz=settings.svm_f_min_hz)


def _spectrum(x, fs: float, period: Periodicity, n: int) -> Spectrum:
    """One transform of the whole-period span, or averaged windows for very long captures."""
    if n <= SINGLE_FFT_MAX_SAMPLES:
        return modulation_spectrum(np.asarray(x[:], dtype=np.float64), fs, period)
    if period.frequency_hz is not None:
        warnings.warn(CaptureWarning(
            f"capture of {n} samples: its spectrum (harmonics, SVM, per-harmonic IEEE 1789) "
            f"is the average of whole-period windows of about {WINDOW_SAMPLES} samples"))
        return averaged_spectrum(x, fs, period)
    warnings.warn(CaptureWarning(
        f"capture of {n} samples without a period: its spectrum is the Hann-windowed first "
        f"{SINGLE_FFT_MAX_SAMPLES} samples"))
    return modulation_spectrum(np.asarray(x[:SINGLE_FFT_MAX_SAMPLES], dtype=np.float64), fs,
                               period)


def _pst_meter(capture: Capture, calibration: Calibration):
    """A flickermeter to feed with the capture, or None (with a warning) when it cannot run."""
    need = flickermeter.SETTLING_S + flickermeter.MIN_OBSERVATION_S
    if capture.duration_s < need:
        warnings.warn(CaptureWarning(
            f"capture of {capture.duration_s:.3g} s is too short for Pst LM: it needs at least "
            f"{need:g} s ({flickermeter.SETTLING_S:g} s settling + "
            f"{flickermeter.MIN_OBSERVATION_S:g} s), and {calibration.observation_s:g} s of "
            f"observation for a full value; pst_lm is null"))
        return None
    if capture.sample_rate_hz < flickermeter.MIN_SAMPLE_RATE_HZ:
        warnings.warn(CaptureWarning(
            f"sample rate {capture.sample_rate_hz:g} Hz is below the "
            f"{flickermeter.MIN_SAMPLE_RATE_HZ:g} Hz the flickermeter needs; pst_lm is null"))
        return None
    try:
        return flickermeter.Flickermeter(capture.sample_rate_hz, calibration)
    except InputError as exc:
        warnings.warn(CaptureWarning(f"no Pst LM: {exc}; pst_lm is null"))
        return None


@dataclass(frozen=True)
class VoltageAssessment:
    """Short-term flicker severity of a mains voltage capture (IEC 61000-4-15).

    The input side of a light source's flicker-immunity test. Light metrics
    (percent flicker, IEEE 1789, SVM, Pst LM) do not apply to a voltage and are
    not computed.
    """

    label: str
    source: str
    quantity: str
    sample_rate_hz: float
    n_samples: int
    duration_s: float
    rms: float
    mains_frequency_hz: float | None
    lamp: str
    pst: PstResult | None
    pst_calibration: str
    warnings: tuple[str, ...]
    notes: tuple[str, ...]
    settings: AssessSettings
    meta: dict[str, Any] = field(default_factory=dict)

    def to_dict(self) -> dict[str, Any]:
        """The public JSON object of a voltage capture."""
        return {
            "label": self.label,
            "source": self.source,
            "quantity": self.quantity,
            "sample_rate_hz": num(self.sample_rate_hz),
            "n_samples": self.n_samples,
            "duration_s": num(self.duration_s),
            "rms": num(self.rms),
            "frequency_hz": num(self.mains_frequency_hz),
            "lamp": self.lamp,
            "pst": num(self.pst.pst) if self.pst else None,
            "pst_calibration": self.pst_calibration,
            "pst_detail": _pst_detail(self.pst),
            "read": self.meta.get("read"),
            "warnings": list(self.warnings),
            "notes": list(self.notes),
        }


def _voltage_calibration(settings: AssessSettings, mains_hz: float | None,
                         where: str | None) -> tuple[Calibration, str]:
    if settings.pst_calibration is not None:
        cal = flickermeter.get_calibration(settings.pst_calibration)
        if cal.signal != "voltage":
            raise SettingsError(f"Pst calibration {cal.name!r} is for {cal.signal} captures, "
                                f"not voltage")
        return cal, "calibration"
    lamp = settings.lamp
    if lamp == "auto":
        for name, (lo, hi) in _MAINS_BANDS.items():
            if mains_hz is not None and lo <= mains_hz < hi:
                lamp = name
                break
        else:
            found = "no mains frequency" if mains_hz is None else f"mains at {mains_hz:.4g} Hz"
            raise InputError(f"{found}: cannot choose the lamp constants; give the lamp "
                             f"(230V for 50 Hz systems, 120V for 60 Hz)", source=where)
    return flickermeter.get_calibration(flickermeter.LAMPS[lamp]), lamp


def assess_voltage(capture: Capture, settings: AssessSettings | None = None) -> VoltageAssessment:
    """Pst of a mains voltage capture with the IEC 61000-4-15 flickermeter.

    Parameters
    ----------
    capture : Capture
        Instantaneous mains voltage (``quantity == "voltage"``), sampled at
        1 kHz or more [V].
    settings : AssessSettings, optional
        ``lamp``, ``pst_calibration`` (a voltage calibration) and
        ``pst_observation_s`` apply.

    Returns
    -------
    VoltageAssessment
        ``pst`` is None, with a warning, when the capture is too short.

    References
    ----------
    IEC 61000-4-15:2010 (flickermeter; constants from memory, not read in the
    standard).
    """
    _check_arguments(capture, settings, "assess_voltage")
    settings = settings or AssessSettings()
    x = capture.samples  # an array or a streamed signal: read in slices only
    n = capture.n_samples
    where = capture.source or capture.label or None
    total = squares = 0.0
    for off, b in reduce.blocks(x):
        if not np.isfinite(b).all():
            bad = off + int(np.flatnonzero(~np.isfinite(b))[0])
            raise InputError(f"sample {bad} is not a finite number", source=where)
        total += float(np.sum(b))
        squares += float(np.dot(b, b))
    rms = float(np.sqrt(squares / n))
    if rms == 0.0:
        raise InputError("voltage capture is all zero", source=where)
    head = np.asarray(x[:SEGMENT_SAMPLES], dtype=np.float64)
    with warnings.catch_warnings(record=True) as caught:
        warnings.simplefilter("always", FlickerkitWarning)
        period = fundamental_frequency(head, capture.sample_rate_hz, mean=total / n, n_total=n)
        cal, lamp = _voltage_calibration(settings, period.frequency_hz, where)
        result = None
        need = flickermeter.SETTLING_S + flickermeter.MIN_OBSERVATION_S
        if capture.duration_s < need:
            warnings.warn(CaptureWarning(
                f"capture of {capture.duration_s:.3g} s is too short for Pst: it needs at least "
                f"{need:g} s, and {cal.observation_s:g} s of observation for a full value; "
                f"pst is null"))
        else:
            meter = flickermeter.Flickermeter(capture.sample_rate_hz, cal)
            for _, b in reduce.blocks(x):
                meter.process(b)
            result = meter.result(settings.pst_observation_s)
    found = list(capture.warnings)
    found += [str(w.message) for w in caught if issubclass(w.category, FlickerkitWarning)]
    return VoltageAssessment(
        label=capture.label, source=capture.source, quantity=capture.quantity,
        sample_rate_hz=capture.sample_rate_hz, n_samples=capture.n_samples,
        duration_s=capture.duration_s, rms=rms, mains_frequency_hz=period.frequency_hz,
        lamp=lamp, pst=result, pst_calibration=cal.name,
        warnings=tuple(dict.fromkeys(found)), notes=capture.notes, settings=settings,
        meta=dict(capture.meta))
