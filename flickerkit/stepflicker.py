"""Temporal light modulation of every step of a brightness table.

Two paths, which agree where both apply (tested):

* **ideal PWM, vectorised** (default): the light of a step is a rectangular
  pulse train of the step's effective duty at the PWM frequency, as in
  :class:`flickerkit.drive.Pwm` with ideal edges. Its exact Fourier series,
  percent flicker and flicker index are closed forms, evaluated for all steps
  at once (65,536 steps in milliseconds);
* **drive description**: a :class:`flickerkit.drive.Drive` (edges, off-level,
  delays, ripple, hybrid...) turns each distinct count into a light model,
  whose sampled light goes through :func:`flickerkit.assess.assess`, like a
  measured capture. Exact for any drive, but about a hundredth of a second
  per distinct count.

The IEEE 1789 region comes from :mod:`flickerkit.ieee1789` and SVM from
:func:`flickerkit.svm.svm_from_components` (on the exact series) in both paths.
"""

from __future__ import annotations

from dataclasses import dataclass
from typing import Any

import numpy as np

from . import cautions
from .errors import SettingsError

#: Highest component frequency kept in the per-step Fourier series [Hz]
#: (the stroboscopic range that CIE TN 006:2016 SVM covers ends at 2 kHz; from
#: memory, not read in the standard; see :data:`flickerkit.svm.DEFAULT_F_MAX_HZ`).
DEFAULT_F_MAX_HZ = 2000.0

#: Region a table is asked to stay in, by default.
DEFAULT_TARGET_REGION = "low-risk"


def pwm_series(duty: np.ndarray, frequency_hz: float,
               f_max_hz: float = DEFAULT_F_MAX_HZ) -> tuple[np.ndarray, np.ndarray]:
    """Exact Fourier series of ideal PWM light for many duties at once.

    Parameters
    ----------
    duty : array_like
        Effective on-fraction of each step, 0 to 1 [unitless], shape (n,).
    frequency_hz : float
        PWM frequency [Hz].
    f_max_hz : float
        Highest harmonic frequency returned [Hz].

    Returns
    -------
    frequencies_hz : numpy.ndarray
        Harmonic frequencies ``k f``, k = 1 .. floor(f_max / f), shape (K,) [Hz].
    amplitudes : numpy.ndarray
        ``C_k`` relative to the mean, shape (n, K) [unitless]; 0 for duty 0 and 1.

    Notes
    -----
    For an on/off train of duty D the two-sided coefficients are
    ``c_k = D exp(-i pi k D) sinc(k D)`` (numpy's normalised sinc), so the
    single-sided amplitude relative to the mean ``c_0 = D`` is
    ``C_k = 2 |sinc(k D)| = 2 |sin(pi k D)| / (pi k D)``. This is the series
    :meth:`flickerkit.drive.Pwm.fourier_series` computes for ideal edges.

    References
    ----------
    CIE TN 006:2016, Fourier components relative to the DC level (as read in a
    secondary summary, not in the note itself); the series itself is analytic.
    """
    f = float(frequency_hz)
    if not np.isfinite(f) or f <= 0:
        raise SettingsError(
            f"PWM frequency must be a positive number of hertz, got {frequency_hz!r}")
    d = np.asarray(duty, dtype=np.float64)
    k = np.arange(1, int(np.floor(f_max_hz / f * (1 + 1e-12))) + 1, dtype=np.float64)
    amps = 2.0 * np.abs(np.sinc(d[:, None] * k[None, :]))
    amps[(d <= 0) | (d >= 1)] = 0.0
    return k * f, amps


@dataclass(frozen=True, eq=False)
class StepFlicker:
    """Per-step temporal light modulation of a table.

    Per-step arrays have shape ``(n_steps,)``; steps with no light have NaN
    figures and an empty region.

    Attributes
    ----------
    pwm_frequency_hz : float
        PWM frequency [Hz].
    model : str
        How the light of a step was modelled.
    percent_flicker : numpy.ndarray
        Modulation depth ``100 (max - min) / (max + min)`` [percent].
    flicker_index : numpy.ndarray
        Area above the mean over total area [unitless].
    ieee1789_region : numpy.ndarray of str
        IEEE 1789 region at the fundamental (percent flicker at the PWM
        frequency); ``""`` for dark steps.
    fundamental_amplitude : numpy.ndarray
        C_1, the fundamental's amplitude relative to the mean [unitless].
    svm : numpy.ndarray
        Stroboscopic visibility measure of the step's light [unitless].
    svm_threshold : str
        Threshold model of the SVM (see :data:`flickerkit.svm.THRESHOLDS`).
    target_region : str
        Region the table should stay in (that region or a better one).
    model_light : numpy.ndarray or None
        Drive path only: each step's modelled mean light relative to the
        drive's light at full level [unitless]; it differs from ``count / TOP``
        where the drive has an off-level, edges, delays or a minimum on-time.
    """

    pwm_frequency_hz: float
    model: str
    percent_flicker: np.ndarray
    flicker_index: np.ndarray
    ieee1789_region: np.ndarray
    fundamental_amplitude: np.ndarray
    svm: np.ndarray
    svm_threshold: str = "power"
    target_region: str = DEFAULT_TARGET_REGION
    model_light: np.ndarray | None = None

    def outside(self) -> np.ndarray:
        """Mark each step that is lit and worse than the target region (bool per step)."""
        from .ieee1789 import REGIONS

        worst_ok = REGIONS.index(self.target_region)
        rank = np.array([REGIONS.index(r) if r else -1 for r in self.ieee1789_region.tolist()])
        return rank > worst_ok

    def columns(self) -> dict[str, np.ndarray]:
        """Return the per-step columns for the table rows."""
        region = np.array([r if r else None for r in self.ieee1789_region.tolist()], dtype=object)
        cols = {"percent_flicker": self.percent_flicker, "flicker_index": self.flicker_index,
                "ieee1789_region": region, "svm": self.svm}
        if self.model_light is not None:
            cols["model_light"] = self.model_light
        return cols

    def summary(self) -> dict[str, Any]:
        """Where the table leaves its target region (JSON-ready)."""
        from .ieee1789 import low_risk_limit_percent, noel_limit_percent

        out = self.outside()
        idx = np.flatnonzero(out)
        inside_from = int(idx[-1] + 1) if idx.size else 0
        lit = np.isfinite(self.percent_flicker)
        worst = (int(np.nanargmax(np.where(lit, self.percent_flicker, -1.0)))
                 if lit.any() else None)
        worst_svm = (int(np.nanargmax(np.where(lit, self.svm, -1.0))) if lit.any() else None)
        return {
            "pwm_frequency_hz": self.pwm_frequency_hz,
            "model": self.model,
            "target_region": self.target_region,
            "first_step_outside": int(idx[0]) if idx.size else None,
            "steps_outside": int(idx.size),
            "inside_from_step": inside_from,
            "worst_step": worst,
            "worst_percent_flicker": (None if worst is None
                                      else float(self.percent_flicker[worst])),
            "worst_svm_step": worst_svm,
            "worst_svm": None if worst_svm is None else float(self.svm[worst_svm]),
            "svm_threshold": self.svm_threshold,
            "low_risk_limit_percent": _finite(low_risk_limit_percent(self.pwm_frequency_hz)),
            "noel_limit_percent": _finite(noel_limit_percent(self.pwm_frequency_hz)),
            "caution": cautions.CAUTION,
        }

    def summary_lines(self) -> list[str]:
        """Lines for the terminal."""
        s = self.summary()
        lines = [f"flicker per step: {s['model']}"]
        if s["first_step_outside"] is None:
            lines.append(f"every lit step is within IEEE 1789 {s['target_region']} or better")
        else:
            lines.append(
                f"first step outside IEEE 1789 {s['target_region']}: {s['first_step_outside']}"
                f" ({s['steps_outside']} steps outside; inside from step "
                f"{s['inside_from_step']})")
        if s["worst_svm_step"] is not None:
            lines.append(f"largest SVM: {s['worst_svm']:.3g} at step {s['worst_svm_step']} "
                         f"({s['svm_threshold']} threshold model)")
        return lines


def _finite(v: float) -> float | None:
    v = float(v)
    return v if np.isfinite(v) else None


def _check_target(target_region: str) -> str:
    from .ieee1789 import REGIONS

    if target_region not in REGIONS[:2]:
        raise SettingsError(f"target region must be one of {', '.join(REGIONS[:2])}, got "
                            f"{target_region!r}")
    return target_region


def step_flicker(
    duty: np.ndarray,
    pwm_frequency_hz: float,
    *,
    target_region: str = DEFAULT_TARGET_REGION,
    f_max_hz: float = DEFAULT_F_MAX_HZ,
    svm_threshold: str = "power",
) -> StepFlicker:
    """Flicker figures of ideal PWM at each step's effective duty, vectorised.

    Parameters
    ----------
    duty : array_like
        Effective on-fraction of each step (light / full light for a pulse of
        constant height) [unitless, 0-1].
    pwm_frequency_hz : float
        PWM frequency [Hz].
    target_region : str
        ``"low-risk"`` (default) or ``"no-observable-effect"``.
    f_max_hz : float
        Highest harmonic kept in the series [Hz].
    svm_threshold : str
        SVM threshold model (:data:`flickerkit.svm.THRESHOLDS`).

    Returns
    -------
    StepFlicker

    Notes
    -----
    For on/off light of duty D (0 < D < 1): percent flicker 100 %, flicker
    index ``(1 - D) D / D = 1 - D`` (area above the mean over the total area);
    at D = 1 the light is steady (0, 0); at D = 0 there is no light (NaN).
    C_1 and SVM (:func:`flickerkit.svm.svm_from_components`, one call over
    all steps) from :func:`pwm_series`.

    References
    ----------
    IES Lighting Handbook definitions of percent flicker and flicker index
    (as read in the IES online definitions, not the handbook itself);
    IEEE Std 1789-2015 clause 8 (boundaries from memory, not read in the
    standard, see :mod:`flickerkit.ieee1789`).
    """
    from .ieee1789 import region_of
    from .svm import svm_from_components

    target = _check_target(target_region)
    d = np.clip(np.asarray(duty, dtype=np.float64), 0.0, 1.0)
    f = float(pwm_frequency_hz)
    freqs, amps = pwm_series(d, f, max(f_max_hz, f))
    lit = d > 0
    pf = np.where(lit, np.where(d < 1, 100.0, 0.0), np.nan)
    fi = np.where(lit, 1.0 - d, np.nan)
    region = np.where(lit, region_of(np.full(d.shape, f), np.nan_to_num(pf)), "")
    if freqs.size:
        svm = np.asarray(svm_from_components(freqs, amps, threshold=svm_threshold),
                         dtype=np.float64).reshape(d.shape)
    else:
        svm = np.zeros(d.shape)
    svm = np.where(lit, svm, np.nan)
    c1 = amps[:, 0] if freqs.size else np.zeros(d.shape)
    return StepFlicker(pwm_frequency_hz=f, model=f"ideal PWM at {f:g} Hz, exact Fourier series",
                       percent_flicker=pf, flicker_index=fi, ieee1789_region=region,
                       fundamental_amplitude=c1, svm=svm, svm_threshold=svm_threshold,
                       target_region=target)


def step_flicker_from_drive(
    duty: np.ndarray,
    drive: Any,
    *,
    target_region: str = DEFAULT_TARGET_REGION,
    svm_threshold: str = "power",
    model_capture_samples: int = 2**15,
) -> StepFlicker:
    """Flicker figures of each step through a drive description and :func:`assess`.

    Parameters
    ----------
    duty : array_like
        Commanded level of each step, ``count / TOP`` [unitless, 0-1].
    drive : flickerkit.drive.Drive
        How a level becomes light (edges, off-level, delays, ripple...).
    target_region : str
        ``"low-risk"`` (default) or ``"no-observable-effect"``.
    svm_threshold : str
        SVM threshold model (:data:`flickerkit.svm.THRESHOLDS`).
    model_capture_samples : int
        Sample budget of each level's capture through ``assess`` [samples].

    Returns
    -------
    StepFlicker

    Notes
    -----
    A level at which the drive makes no light (a pulse shorter than the
    turn-on delay, a skipped pulse) is dark: no figures, ``model_light`` 0.
    Each distinct non-zero level is modelled once: ``drive.at(level)``, its
    sampled light (exact interval averages over whole periods) through
    :func:`flickerkit.assess.assess`, with the model's exact percent flicker,
    flicker index and IEEE 1789 fundamental reading at the light's true
    repetition frequency (:func:`flickerkit.sweep.model_record`, the same
    figures ``drive`` reports). The fundamental amplitude and SVM come from
    the model's exact Fourier series.
    """
    from .ieee1789 import region_of
    from .svm import svm_from_components
    from .sweep import model_record

    target = _check_target(target_region)
    d = np.asarray(duty, dtype=np.float64)
    pf = np.full(d.shape, np.nan)
    fi = np.full(d.shape, np.nan)
    c1 = np.full(d.shape, np.nan)
    svm = np.full(d.shape, np.nan)
    region = np.full(d.shape, "", dtype=object)
    full = float(drive.at(1.0).mean)
    # count 0: the drive's floor, the off-level (at the crossover current when hybrid)
    floor = {"pwm": float(drive.off_level), "hybrid": float(drive.off_level * drive.crossover)
             }.get(drive.method, 0.0)
    mean = np.full(d.shape, floor / full if full > 0 else np.nan)
    levels, inverse = np.unique(d, return_inverse=True)
    for j, lv in enumerate(levels.tolist()):
        if lv <= 0:
            continue
        model = drive.at(lv)
        sel = inverse == j
        mean[sel] = float(model.mean) / full if full > 0 else np.nan
        if not model.mean > 0:
            continue  # the drive makes no light at this count (delay, skipped pulse): dark
        rec = model_record(model, max_samples=model_capture_samples)
        pf[sel] = rec["percent_flicker"]
        fi[sel] = rec["flicker_index"]
        head = rec.get("ieee1789")
        region[sel] = (head["region"] if head is not None
                       else region_of(drive.frequency_hz, rec["percent_flicker"]))
        fs = model.fourier_series(max(DEFAULT_F_MAX_HZ, drive.frequency_hz))
        c1[sel] = float(fs.amplitudes[0]) if fs.amplitudes.size else 0.0
        svm[sel] = (svm_from_components(fs.frequencies_hz, fs.amplitudes,
                                        threshold=svm_threshold)
                    if fs.amplitudes.size else 0.0)
    return StepFlicker(pwm_frequency_hz=float(drive.frequency_hz),
                       model=f"drive model through assess ({drive.method}, "
                             f"{drive.frequency_hz:g} Hz)",
                       percent_flicker=pf, flicker_index=fi,
                       ieee1789_region=region.astype(str), fundamental_amplitude=c1,
                       svm=svm, svm_threshold=svm_threshold, target_region=target,
                       model_light=mean)
