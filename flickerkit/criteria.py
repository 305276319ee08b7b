"""Published flicker criteria as data, and verdicts against them.

Each :class:`Criterion` names its source document and clause, where it
applies, when it takes effect and how sure we are of its figures. Verdicts
read the typed :class:`flickerkit.assess.Assessment` (the same for measured
and modelled light) plus the dimming level; a criterion's ``metric`` names its
figure (:data:`flickerkit.keypath.FIGURES`), checked when the criterion is made.

A verdict is ``pass``, ``fail``, ``not applicable`` (with why) or
``insufficient data`` -- never ``pass`` when the capture does not meet the
method's requirements (too short, sample rate too low, no value) or when its
content above half the sample rate may have folded down (the assessment's
``acquisition.folding_suspected``, from the detector bandwidth).

Confidence levels:

* ``sourced``: the limit was read in the legal or normative text (or a quote
  of it); ``read_in`` names the text that was read;
* ``secondary``: reported consistently by secondary sources, primary row not
  read;
* ``recalled``: from memory, not verified in the document -- treat as a
  screening value until checked.

These verdicts are an engineering assessment, not a certification; the
applicable standards, local codes and an accredited laboratory decide.
"""

from __future__ import annotations

import datetime as _dt
import functools
import math
import operator
from dataclasses import dataclass
from pathlib import Path
from typing import TYPE_CHECKING, Any, Callable, Mapping, Sequence

from .errors import SettingsError
from .keypath import UnknownKey, check_name, figure

if TYPE_CHECKING:  # pragma: no cover - types only
    from .assess import Assessment
    from .svm import SvmResult

STATUSES = ("pass", "fail", "not applicable", "insufficient data")
CONFIDENCES = ("sourced", "secondary", "recalled")
#: What a criterion's document is, in the order reports show the groups.
KINDS = ("regulation", "recommended practice", "guidance", "user")

#: Tolerance when matching a capture's dimming level to a criterion's levels [percentage points].
LEVEL_TOLERANCE = 0.5

_COMPARE: dict[str, Callable[[float, float], bool]] = {
    "<": operator.lt, "<=": operator.le, ">": operator.gt, ">=": operator.ge,
}


@dataclass(frozen=True)
class Criterion:
    """One limit from a document.

    Attributes
    ----------
    id : str
        Stable identifier (``eu-2019-2020-svm``).
    title : str
        Short human title.
    source : str
        Document, edition and clause or table.
    applies_to : str
        Scope (products, applications) as the document states it.
    metric : str
        Figure name (:data:`flickerkit.keypath.FIGURES`: ``svm``, ``pst_lm``,
        ``percent_flicker``, ``filtered_percent_flicker.200``, ...), or
        ``ieee1789.low_risk`` / ``ieee1789.noel`` for the IEEE lines and
        ``below_90hz_modulation`` (:data:`flickerkit.keypath.RULES`); an
        unknown name is refused.
    comparison : str
        ``<``, ``<=``, ``>``, ``>=``: how the measured value must relate to the limit.
    schedule : tuple of (datetime.date or None, float)
        Limits by the date they take effect, earliest first; ``None`` for
        "no date". The limit in force on the assessment date is used.
    levels : tuple of float or None
        Dimming levels it applies at [percent of full output]; ``None`` for
        every level.
    confidence : str
        One of :data:`CONFIDENCES`.
    exemptions : str
        Exemptions as stated.
    requires : tuple of str
        Data requirements (``periodic``, ``ja10-sampling``) whose failure gives
        ``insufficient data``.
    unit : str
        Unit of the measured value and limit, for reports.
    note : str
        Anything a reader of the verdict must know.
    kind : str
        What the document is, one of :data:`KINDS`: ``regulation`` (law),
        ``recommended practice`` (a standard's recommendation), ``guidance``
        (screening values from papers or guides) or ``user`` (the user's own).
        Verdicts are summarised per kind, never mixed into one line.
    read_in : str
        The text the limit was read in (edition, consolidated version), when
        ``confidence`` is ``sourced``.
    verification_tolerance : float, optional
        Tolerance the document allows authorities when they verify a declared
        value [criterion unit]; shown beside margins as context, never added
        to the limit.
    tolerance_note : str
        Where the tolerance comes from and what it applies to.
    """

    id: str
    title: str
    source: str
    applies_to: str
    metric: str
    comparison: str
    schedule: tuple[tuple[_dt.date | None, float], ...]
    levels: tuple[float, ...] | None = None
    confidence: str = "sourced"
    exemptions: str = ""
    requires: tuple[str, ...] = ()
    unit: str = ""
    note: str = ""
    kind: str = "user"
    read_in: str = ""
    verification_tolerance: float | None = None
    tolerance_note: str = ""

    def __post_init__(self) -> None:
        if self.comparison not in _COMPARE:
            raise SettingsError(f"criterion {self.id}: comparison must be one of "
                                f"{', '.join(_COMPARE)}, got {self.comparison!r}")
        if self.confidence not in CONFIDENCES:
            raise SettingsError(f"criterion {self.id}: confidence must be one of "
                                f"{', '.join(CONFIDENCES)}")
        if not self.schedule:
            raise SettingsError(f"criterion {self.id}: no limit given")
        if self.kind not in KINDS:
            raise SettingsError(f"criterion {self.id}: kind must be one of {', '.join(KINDS)}, "
                                f"got {self.kind!r}")
        try:
            check_name(self.metric)
        except UnknownKey as exc:
            raise SettingsError(f"criterion {self.id!r}: metric: {exc}") from None

    @property
    def effective_from(self) -> _dt.date | None:
        """Return the date the first limit takes effect (``None``: in force from the start)."""
        return self.schedule[0][0]

    def limit_on(self, date: _dt.date) -> float | None:
        """Return the limit in force on ``date`` in :attr:`unit`; ``None`` before the first date."""
        current = None
        for start, limit in self.schedule:
            if start is None or start <= date:
                current = limit
        return current


@dataclass(frozen=True)
class Verdict:
    """A capture (at a level) judged against one criterion.

    Attributes
    ----------
    criterion : str
        Criterion id.
    label : str
        Capture label.
    level : float or None
        Dimming level [percent].
    status : str
        One of :data:`STATUSES`.
    measured : float or None
        The figure judged [criterion unit].
    limit : float or None
        The limit in force [criterion unit].
    margin : float or None
        How far inside the limit (positive) or outside (negative) [criterion unit].
    reason : str
        Why, for ``not applicable`` and ``insufficient data``; otherwise how.
    threshold_form : str
        SVM criteria only: non-empty when the other threshold form
        (:data:`flickerkit.svm.OTHER_FORM`) gives the other verdict; it says
        which form gives what (the reason ends with the same sentence).
    decided_by : str
        The component or band of the assessment that decided a pass or fail
        ('' when the assessment names none; the reason says how). Reports show
        it (:func:`flickerkit.judgement.decided_by`); not in :meth:`to_dict`.
    """

    criterion: str
    label: str
    level: float | None
    status: str
    measured: float | None
    limit: float | None
    margin: float | None
    reason: str = ""
    threshold_form: str = ""
    decided_by: str = ""

    @property
    def depends_on_threshold_form(self) -> bool:
        """Tell whether the SVM threshold form decides this verdict."""
        return bool(self.threshold_form)

    def to_dict(self) -> dict[str, Any]:
        """Return the JSON object of the verdict (``threshold_form`` None if it did not decide)."""
        return {"criterion": self.criterion, "label": self.label, "level": self.level,
                "status": self.status, "measured": self.measured, "limit": self.limit,
                "margin": self.margin, "reason": self.reason,
                "depends_on_threshold_form": self.depends_on_threshold_form,
                "threshold_form": self.threshold_form or None}


def _d(y: int, m: int, d: int) -> _dt.date:
    return _dt.date(y, m, d)


_EU_TEXT = ("Regulation (EU) 2019/2020 as amended by Regulation (EU) 2021/341, consolidated "
            "text of 1 September 2021 (EUR-Lex, ELI http://data.europa.eu/eli/reg/2019/2020/oj)")
_EU_SOURCE = ("Regulation (EU) 2019/2020, Annex II, Table 4, as amended by Regulation (EU) "
              "2021/341 (consolidated text of 1 September 2021)")
_EU_SCOPE = ("LED and OLED mains light sources (Regulation (EU) 2019/2020, Annex II, Table 4), "
             "at full load")
_EU_SVM_EXEMPT = ("light sources intended for use in outdoor applications, industrial "
                  "applications or other applications where lighting standards allow a CRI < 80 "
                  "(Annex II, Table 4, SVM row only)")
_EU_TOLERANCE = ("Regulation (EU) 2019/2020, Annex IV, Table 6: in market-surveillance "
                 "verification the arithmetic mean of 10 units may exceed the declared value by "
                 "no more than 0,1. A tolerance for authorities verifying a declaration, not a "
                 "loosening of the limit.")
_GB_SOURCE = "GB/T 50034-2024, Standard for lighting design of buildings, clause 4.4"

#: The built-in criteria, by id.
REGISTRY: dict[str, Criterion] = {c.id: c for c in (
    Criterion(
        id="ieee1789-low-risk",
        title="IEEE 1789-2015 low-risk region (Recommended Practice 1)",
        source="IEEE Std 1789-2015, clause 8, Recommended Practice 1",
        applies_to="LED lighting, every dimming level (recommended practice, not a regulation)",
        # the limit depends on the modulation frequency: taken from the assessment
        metric="ieee1789.low_risk", comparison="<", schedule=((_d(2015, 6, 5), math.nan),),
        confidence="recalled", requires=("periodic",), unit="%", kind="recommended practice",
        note="Mod% below 0.025 f (f < 90 Hz) or 0.08 f (90-1250 Hz), no restriction above "
             "1250 Hz; lines recalled from IEEE Std 1789-2015, not read in the standard. The "
             "limit depends on the modulation frequency; the verdict uses the headline IEEE "
             "1789 mode.",
    ),
    Criterion(
        id="ieee1789-noel",
        title="IEEE 1789-2015 no observable effect level (Recommended Practice 2)",
        source="IEEE Std 1789-2015, clause 8, Recommended Practice 2",
        applies_to="LED lighting, every dimming level (recommended practice, not a regulation)",
        metric="ieee1789.noel", comparison="<", schedule=((_d(2015, 6, 5), math.nan),),
        confidence="recalled", requires=("periodic",), unit="%", kind="recommended practice",
        note="Mod% below 0.01 f (f < 90 Hz) or 0.0333 f (90-3000 Hz), no restriction above "
             "3000 Hz; recalled from IEEE Std 1789-2015, not read in the standard.",
    ),
    Criterion(
        id="eu-2019-2020-svm",
        title="EU ecodesign: stroboscopic visibility measure at full load",
        source=_EU_SOURCE,
        applies_to=_EU_SCOPE, metric="svm", comparison="<=",
        schedule=((_d(2021, 9, 1), 0.9), (_d(2024, 9, 1), 0.4)), levels=(100.0,),
        confidence="sourced", exemptions=_EU_SVM_EXEMPT, unit="", kind="regulation",
        read_in=_EU_TEXT, verification_tolerance=0.1, tolerance_note=_EU_TOLERANCE,
        note="\"SVM <= 0,9 at full-load\" from 1 September 2021 and \"SVM <= 0,4 at "
             "full-load\" from 1 September 2024, read in the consolidated text. The SVM "
             "threshold function used by flickerkit is the power form of Perz et al., JOSA A "
             "35(2) 309 (2018); which form IEC TR 63158:2018 makes normative was not read.",
    ),
    Criterion(
        id="eu-2019-2020-pst",
        title="EU ecodesign: short-term flicker severity Pst LM at full load",
        source=_EU_SOURCE,
        applies_to=_EU_SCOPE, metric="pst_lm", comparison="<=",
        schedule=((_d(2021, 9, 1), 1.0),), levels=(100.0,), confidence="sourced",
        unit="", requires=("pst-duration",), kind="regulation",
        read_in=_EU_TEXT, verification_tolerance=0.1, tolerance_note=_EU_TOLERANCE,
        note="\"Pst LM <= 1,0 at full-load\" from 1 September 2021, read in the consolidated "
             "text; this row has no exemption. flickerkit's Pst LM calibration is provisional "
             "until the IEC TR 61547-1 constants are supplied.",
    ),
    Criterion(
        id="ca-title24-ja8",
        title="California Title 24 JA8 reduced flicker operation",
        source="California Energy Commission, 2022 Reference Appendices, JA8 (reduced flicker "
               "operation) with the JA10 test method (JA10.5, JA10.6)",
        applies_to="light sources with their specified control, California Title 24 JA8",
        metric="filtered_percent_flicker.200", comparison="<", schedule=((None, 30.0),),
        levels=(100.0, 20.0), confidence="sourced", requires=("ja10-sampling",), unit="%",
        kind="regulation", read_in="JA10.5 and JA10.6 read in the 2022 Reference Appendices",
        note="Percent amplitude modulation below 30 % for frequencies below 200 Hz (JA10.6 "
             "filtered at 200 Hz). JA8-2022 names full light output; JA10 measures 100 % and "
             "20 % (and the minimum claimed level), and flickerkit requires both 100 % and 20 % "
             "captures: a missing level leaves the criterion without a pass. Whether older "
             "editions required 20 % was not verified.",
    ),
    Criterion(
        id="gbt50034-pst",
        title="China GB/T 50034-2024: Pst LM of light sources and luminaires",
        source=_GB_SOURCE,
        applies_to="light sources and luminaires in the lighting design of buildings (China); "
                   "GB/T is a recommended national standard, binding where a contract or code "
                   "invokes it",
        metric="pst_lm", comparison="<=", schedule=((None, 1.0),), confidence="sourced",
        requires=("pst-duration",), unit="", kind="recommended practice",
        read_in="GB/T 50034-2024, clause 4.4",
        note="Pst LM <= 1. The clause states no dimming level in the text read: flickerkit "
             "applies it at every level given. flickerkit's Pst LM calibration is provisional "
             "until the IEC TR 61547-1 constants are supplied.",
    ),
    Criterion(
        id="gbt50034-svm",
        title="China GB/T 50034-2024: SVM where people work or stay for long periods",
        source=_GB_SOURCE,
        applies_to="places where people work or stay for long periods (lighting design of "
                   "buildings, China); places where children study for long periods follow "
                   "GB 55016 instead",
        metric="svm", comparison="<=", schedule=((None, 1.3),), confidence="sourced",
        unit="", kind="recommended practice", read_in="GB/T 50034-2024, clause 4.4",
        note="SVM <= 1.3. The clause states no dimming level in the text read: flickerkit "
             "applies it at every level given. The SVM threshold function is the power form "
             "of Perz et al., JOSA A 35(2) 309 (2018).",
    ),
    Criterion(
        id="seizure-screen-below-90hz",
        title="Seizure-risk screen: modulation below 90 Hz at most 5 %",
        source="Lehman and Wilkins, IEEE Power Electronics Magazine (2014), reprinted in the "
               "IEEE 1789 compendium (2018), p. 57",
        applies_to="any light source; flicker at frequencies below 90 Hz",
        metric="below_90hz_modulation", comparison="<=", schedule=((None, 5.0),),
        confidence="sourced", requires=("periodic",), unit="%", kind="guidance",
        note="Guidance: all flicker below 90 Hz should satisfy Mod% <= 5 %. Applied to the "
             "modulation depth of the light low-passed below 90 Hz (every component below "
             "90 Hz, whatever carrier rides above); not applicable only when nothing below "
             "90 Hz stands above the noise.",
    ),
    Criterion(
        id="nema77-guidance-svm",
        title="NEMA 77 guidance value for SVM (recalled)",
        source="NEMA 77 (2017; 2023 edition), guidance for limited-motion indoor applications",
        applies_to="indoor applications with limited motion (offices)",
        metric="svm", comparison="<=", schedule=((None, 1.6),), confidence="recalled",
        kind="guidance",
        note="The figure 1.6 is recalled from NEMA 77, not read in it: a screening value only.",
    ),
    Criterion(
        id="nema77-guidance-pst",
        title="NEMA 77 guidance value for Pst LM (recalled)",
        source="NEMA 77 (2017; 2023 edition)",
        applies_to="indoor applications with limited motion (offices)",
        metric="pst_lm", comparison="<=", schedule=((None, 1.0),), confidence="recalled",
        requires=("pst-duration",), kind="guidance",
        note="The figure 1.0 is recalled from NEMA 77, not read in it: a screening value only.",
    ),
)}

#: Criteria applied when none are named.
DEFAULT_CRITERIA = ("ieee1789-low-risk", "ieee1789-noel", "eu-2019-2020-svm",
                    "eu-2019-2020-pst", "ca-title24-ja8", "seizure-screen-below-90hz")


def get(ids: Sequence[str] | None = None,
        extra: Mapping[str, Criterion] | None = None) -> list[Criterion]:
    """Return the criteria named by ``ids``, looked up built-in first, then in ``extra``.

    With no ``ids``, the criteria of :data:`DEFAULT_CRITERIA`.

    Raises
    ------
    SettingsError
        For an unknown id, listing the known ones.
    """
    clash = sorted(set(REGISTRY) & set(extra or {}))
    if clash:
        raise SettingsError(f"criterion id {clash[0]!r} is built in and cannot be redefined; "
                            f"use your own id")
    known = {**REGISTRY, **(extra or {})}
    out = []
    for i in ids or DEFAULT_CRITERIA:
        if i not in known:
            raise SettingsError(f"unknown criterion {i!r}; known: {', '.join(sorted(known))}")
        out.append(known[i])
    return out


def _insufficient(a: Assessment, requires: Sequence[str]) -> str | None:
    """Say why the assessment cannot be judged under ``requires``, or return None."""
    from .assess import MIN_PERIODS, MIN_SAMPLES_PER_PERIOD

    if "periodic" in requires and _finite(a.frequency_hz) is not None:
        if (a.periods or 0) < MIN_PERIODS:
            return f"fewer than {MIN_PERIODS} whole periods of the modulation"
        spp = _finite(a.samples_per_period)
        if spp is not None and spp < MIN_SAMPLES_PER_PERIOD:
            return f"fewer than {MIN_SAMPLES_PER_PERIOD} samples per period"
    if "pst-duration" in requires and a.pst_lm is not None and a.pst_lm.short:
        return (f"Pst LM over {a.pst_lm.observation_s:.3g} s, shorter than the "
                f"method's {a.pst_lm.method_observation_s:.3g} s observation")
    if "ja10-sampling" in requires:
        fs = _finite(a.sample_rate_hz) or 0.0
        dur = _finite(a.duration_s) or 0.0
        if fs < 20_000.0 * (1 - 1e-9):
            return f"sample rate {fs:g} Hz is below JA10.5's 20 kHz (sample interval <= 50 us)"
        if dur < 1.0 - 1e-9:
            return f"capture of {dur:.3g} s is shorter than JA10.5's 1 s"
    return None


def _finite(v: float | None) -> float | None:
    """Return ``v`` as a float when it is a finite number, else None (as the JSON holds it)."""
    return None if v is None or not math.isfinite(v) else float(v)


#: Percent flicker below this is taken as steady light whatever the noise (numerical
#: residue of modelled steady light is about 1e-10 %) [%].
STEADY_PERCENT_FLICKER = 1e-6


def _no_period_reason(a: Assessment) -> tuple[str, str]:
    """Return the verdict status and reason when the assessment found no fundamental frequency.

    Steady light (percent flicker within the noise) is ``not applicable``; light
    that clearly modulates but shows no whole period (a capture shorter than
    about two periods, or aperiodic modulation) is ``insufficient data``, never
    treated as steady.
    """
    from .assess import NOISE_MARGIN

    pf = _finite(a.percent_flicker)
    floor = _finite(a.noise_percent_flicker) or 0.0
    if pf is not None and pf > max(NOISE_MARGIN * floor, STEADY_PERCENT_FLICKER):
        return ("insufficient data",
                f"the light modulates ({pf:.3g} % percent flicker, above the noise) but no "
                f"period was found: the capture may be shorter than two periods, or the "
                f"modulation is not periodic")
    return "not applicable", "no periodic modulation found (steady light within the noise)"


def judge(assessment: Assessment | None, criterion: Criterion, *, level: float | None = None,
          date: _dt.date | None = None, label: str | None = None) -> Verdict:
    """Judge one assessment against one criterion.

    Parameters
    ----------
    assessment : flickerkit.assess.Assessment or None
        The assessment of a capture, measured or modelled (a drive level's
        :attr:`flickerkit.sweep.LevelRow.assessment`). ``None`` for a level
        that makes no light (a drive that skips its pulse): the criteria of the
        light's modulation are then ``not applicable``, the others
        ``insufficient data``.
    criterion : Criterion
    level : float, optional
        Dimming level of the capture [percent]; needed for level-bound criteria.
    date : datetime.date, optional
        Date the product is judged at (placing on the market); default today.
    label : str, optional
        Label of the verdict; default the assessment's.

    Returns
    -------
    Verdict
        With ``decided_by``, the component or band that decided a pass or fail
        when the assessment names one.

    Examples
    --------
    >>> import numpy as np, flickerkit as fk
    >>> t = np.arange(20_000) / 20_000.0      # 1 s at 20 kHz [s]
    >>> a = fk.assess_light(fk.make_capture(1 + 0.05 * np.sin(2 * np.pi * 123.4 * t), 20_000.0))
    >>> v = judge(a, REGISTRY["ieee1789-low-risk"])
    >>> v.status, round(v.measured, 2), round(v.limit, 2)
    ('pass', 5.0, 9.87)
    """
    date = date or _dt.date.today()
    if label is None:
        label = "" if assessment is None else str(assessment.label)
    # the fields every verdict of this call shares
    verdict = functools.partial(Verdict, criterion=criterion.id, label=label, level=level)
    if criterion.levels is not None:
        if level is None:
            return verdict(status="not applicable", measured=None, limit=None, margin=None,
                           reason=f"applies at {_levels(criterion.levels)}; the capture's "
                                  f"dimming level is not given")
        if not any(abs(level - lv) <= LEVEL_TOLERANCE for lv in criterion.levels):
            return verdict(status="not applicable", measured=None, limit=None, margin=None,
                           reason=f"applies at {_levels(criterion.levels)} only")
    limit = criterion.limit_on(date)
    if limit is None:  # so the first limit has a start date, after ``date``
        start = criterion.effective_from
        since = f" (from {start.isoformat()})" if start is not None else ""
        return verdict(status="not applicable", measured=None, limit=None, margin=None,
                       reason=f"not in force on {date.isoformat()}{since}")
    if assessment is None:
        if criterion.metric in _RULES:  # the IEEE lines' limits depend on a frequency
            return verdict(status="not applicable", measured=None,
                           limit=limit if criterion.metric == "below_90hz_modulation" else None,
                           margin=None, reason="no light at this level: no modulation to judge")
        return verdict(status="insufficient data", measured=None, limit=limit, margin=None,
                       reason=f"no {criterion.metric} value: no light at this level")
    a = assessment
    why = _insufficient(a, criterion.requires)
    if not why and a.acquisition is not None and a.acquisition.folding_suspected:
        why = f"content above half the sample rate may have folded down: {a.acquisition.reason}"
    if why:
        return verdict(status="insufficient data", measured=None, limit=None, margin=None,
                       reason=why)

    if criterion.metric in ("ieee1789.low_risk", "ieee1789.noel"):
        return _judge_ieee(a, criterion, verdict)
    if criterion.metric == "below_90hz_modulation":
        low = a.below_90hz
        f = _finite(a.frequency_hz)
        if f is None and not (low and _finite(low.modulation_percent) is not None):
            status, reason = _no_period_reason(a)
            return verdict(status=status, measured=None, limit=limit, margin=None,
                           reason=reason)
        if low is not None:
            # the light low-passed below 90 Hz, whatever carrier rides above it
            low_pf = _finite(low.modulation_percent)
            if low_pf is None:
                return verdict(status="not applicable", measured=None, limit=limit,
                               margin=None,
                               reason="nothing below 90 Hz stands above the noise")
            ok = low_pf <= limit
            return verdict(status="pass" if ok else "fail", measured=low_pf,
                           limit=limit, margin=limit - low_pf,
                           reason=f"modulation depth below 90 Hz (low-passed, strongest "
                                  f"component {low.frequency_hz:.4g} Hz) <= {limit:g} %",
                           decided_by=_decided_by(a, criterion.metric))
        assert f is not None  # an assessment without a period has a low-passed figure
        if f >= 90.0:
            return verdict(status="not applicable", measured=None, limit=limit, margin=None,
                           reason="no modulation below 90 Hz")
        measured = _finite(a.percent_flicker)
    else:
        measured = _finite(figure(a, criterion.metric))
    if measured is None:
        return verdict(status="insufficient data", measured=None, limit=limit, margin=None,
                       reason=f"no {criterion.metric} value (capture too short or the "
                              f"method's requirements not met; see the capture's warnings)")
    ok = _COMPARE[criterion.comparison](measured, limit)
    margin = limit - measured if criterion.comparison in ("<", "<=") else measured - limit
    unit = f" {criterion.unit}" if criterion.unit else ""
    how = f"{criterion.metric} {criterion.comparison} {limit:g}{unit}"
    form = ""
    if criterion.metric == "pst_lm" and a.pst_lm is not None \
            and a.pst_lm.calibration_status == "provisional":
        how += f" (provisional calibration {a.pst_lm.calibration})"
    if criterion.metric == "svm" and a.svm is not None:
        if a.svm.threshold_status not in (None, "sourced"):
            how += f" (threshold model {a.svm.threshold}: {a.svm.threshold_status})"
        form = _threshold_form(criterion, a.svm, ok, limit)
    if form:
        how += f"; {form}"
    return verdict(status="pass" if ok else "fail", measured=measured, limit=limit,
                   margin=margin, reason=how, threshold_form=form,
                   decided_by=_decided_by(a, criterion.metric))


_RULES = ("ieee1789.low_risk", "ieee1789.noel", "below_90hz_modulation")


def _judge_ieee(a: Assessment, criterion: Criterion, verdict: Callable[..., Verdict]) -> Verdict:
    """Judge an IEEE 1789 line: the headline reading's region, limit and what decided it."""
    ieee = a.ieee1789
    if _finite(a.frequency_hz) is None or ieee is None:
        status, reason = _no_period_reason(a)
        return verdict(status=status, measured=None, limit=None, margin=None, reason=reason)
    which = "low_risk" if criterion.metric.endswith("low_risk") else "noel"
    measured = _finite(ieee.modulation_percent)
    limit = _finite(ieee.low_risk_limit_percent if which == "low_risk"
                    else ieee.noel_limit_percent)
    ok = ieee.region in (("low-risk", "no-observable-effect") if which == "low_risk"
                         else ("no-observable-effect",))
    margin = None if limit is None or measured is None else limit - measured
    decided = ieee.decided_by or ieee.mode
    std = a.ieee1789_per_harmonic if ieee.mode == "per-harmonic" else a.ieee1789_fundamental
    std_f = None if std is None else _finite(std.frequency_hz)
    if decided.startswith(("component", "band")) and std is not None and std_f:
        # another modulation decided: name it, and the standard's reading beside it
        how = (f"decided by {decided}; the standard's reading ({ieee.mode} mode at "
               f"{std_f:.5g} Hz) is {std.region}")
    else:
        how = (f"{ieee.mode} mode at {ieee.frequency_hz:.5g} Hz"
               + (f", decided by {decided}" if decided not in (ieee.mode, "") else ""))
    how = (how
           + (f"; {ieee.edge}" if ieee.edge else "")
           + ("" if limit is not None else "; exempt above the upper frequency"))
    return verdict(status="pass" if ok else "fail", measured=measured, limit=limit,
                   margin=margin, reason=how)


def _decided_by(a: Assessment, metric: str) -> str:
    """Name the component or band of the assessment that decides a verdict on ``metric``.

    '' when the assessment names none; the verdict's reason then says how it
    was decided.
    """
    if metric == "svm" and a.svm is not None:
        comps = [c for c in a.svm.components if _finite(c.share) is not None]
        if comps:
            top = max(comps, key=lambda c: c.share)
            return (f"component at {top.frequency_hz:.5g} Hz "
                    f"({100 * top.share:.3g} % of the SVM sum)")
    if metric.startswith("filtered_percent_flicker."):
        return f"band below {metric.split('.', 1)[1]} Hz (JA10.6 filter)"
    if metric == "below_90hz_modulation" and _finite(a.frequency_hz) is not None:
        return f"fundamental at {a.frequency_hz:.5g} Hz"
    if metric == "pst_lm":
        return "weighted flicker of all components (Pst LM)"
    return ""


def _threshold_form(criterion: Criterion, result: SvmResult, ok: bool, limit: float) -> str:
    """Write a sentence for an SVM verdict that the other threshold form flips (else '')."""
    other = _finite(result.other_value)
    name = result.other_threshold
    if other is None or not name:
        return ""
    if _COMPARE[criterion.comparison](other, limit) == ok:
        return ""
    return (f"depends on the threshold form: the {result.threshold} form gives "
            f"{'pass' if ok else 'fail'}, the {name} form SVM {other:.3g} "
            f"({'fail' if ok else 'pass'})")


def judge_all(assessments: Sequence[Assessment | None], criteria: Sequence[Criterion], *,
              levels: Sequence[float | None] | None = None,
              date: _dt.date | None = None,
              labels: Sequence[str | None] | None = None) -> list[Verdict]:
    """Judge every assessment against every criterion (assessment-major order).

    ``levels`` [percent] and ``labels`` (default: the assessments' own) go with
    the assessments, one each.
    """
    n = len(assessments)
    levels = list(levels) if levels is not None else [None] * n
    labels = list(labels) if labels is not None else [None] * n
    return [judge(a, c, level=lv, date=date, label=lb)
            for a, lv, lb in zip(assessments, levels, labels) for c in criteria]


def overall(verdicts: Sequence[Verdict]) -> str:
    """Return the overall status of some verdicts.

    ``fail`` if any fails, else ``insufficient data`` if any is, else
    ``pass`` (``not applicable`` when nothing applied).
    """
    statuses = {v.status for v in verdicts}
    for s in ("fail", "insufficient data", "pass"):
        if s in statuses:
            return s
    return "not applicable"


def _levels(levels: Sequence[float]) -> str:
    return " and ".join(f"{lv:g} %" for lv in levels)


def from_mapping(data: Mapping[str, Any], *, where: str = "") -> Criterion:
    """Build a user criterion from a TOML table.

    Keys: ``id``, ``metric``, ``limit``, ``comparison`` (default ``<=``), and
    optionally ``title``, ``source``, ``applies_to``, ``unit``, ``levels``
    (list of percent), ``effective_from`` (date), ``confidence`` (default
    ``recalled`` unless ``sourced``/``secondary`` is given), ``requires``,
    ``note``.
    """
    from .validate import check_table

    here = f"{where}: " if where else ""
    source, _, name = where.partition(" criterion ")
    data = check_table(data, _USER_KEYS, source=source or "criteria",
                       name=f"criterion {name}" if name else "criterion",
                       required=("id", "metric", "limit"))
    try:
        check_name(str(data["metric"]))
    except UnknownKey as exc:
        table = f"{source or 'criteria'} [{f'criterion {name}' if name else 'criterion'}]"
        raise SettingsError(f"{table}: criterion {data['id']!r}: metric: {exc}") from None
    if data["id"] in REGISTRY:
        raise SettingsError(f"{here}id {data['id']!r} is a built-in criterion, which a user "
                            f"file cannot redefine; use your own id")
    limit = float(data["limit"])
    start = data.get("effective_from")
    levels = data.get("levels")
    if levels is not None:
        levels = tuple(float(x) for x in levels)
    crit = Criterion(
        id=str(data["id"]), title=str(data.get("title", data["id"])),
        source=str(data.get("source", "user-supplied")),
        applies_to=str(data.get("applies_to", "as the user states")),
        metric=str(data["metric"]), comparison=str(data.get("comparison", "<=")),
        schedule=((start, limit),), levels=levels,
        confidence=str(data.get("confidence", "recalled")),
        requires=tuple(data.get("requires", ())), unit=str(data.get("unit", "")),
        note=str(data.get("note", "")), kind="user",
    )
    return crit


def _user_keys():
    from .validate import Spec

    text = Spec("string")
    return {
        "id": text, "metric": text, "limit": Spec("number"),
        "comparison": Spec("string", choices=tuple(_COMPARE)),
        "title": text, "source": text, "applies_to": text, "unit": text, "note": text,
        "levels": Spec("numbers", 0.0, 100.0, open_low=True),
        "effective_from": Spec("date"),
        "confidence": Spec("string", choices=CONFIDENCES),
        "requires": Spec("strings"),
    }


_USER_KEYS = _user_keys()


def load_user_criteria(path: str | Path) -> dict[str, Criterion]:
    """Load user criteria from a TOML file with ``[[criterion]]`` tables.

    Raises
    ------
    SettingsError
        If the file cannot be read, a table holds an unknown key, a wrong
        type or an out-of-range value, an id repeats, or an id is a built-in
        criterion's (a user file may add criteria, never redefine one).
    """
    from .readers.sidefile import load_toml
    from .validate import check_table, Spec

    p = Path(path)
    data = load_toml(p, "criteria file")
    check_table(data, {"criterion": Spec("any")}, source=str(p))
    tables = data.get("criterion", [])
    if not isinstance(tables, list):
        raise SettingsError(f"{p}: criteria are [[criterion]] tables")
    out = {}
    for i, table in enumerate(tables, start=1):
        c = from_mapping(table, where=f"{p} criterion {i}")
        if c.id in out:
            raise SettingsError(f"{p} criterion {i}: id {c.id!r} is defined twice")
        out[c.id] = c
    if not out:
        raise SettingsError(f"{p}: holds no [[criterion]] tables")
    return out


__all__ = ["Criterion", "Verdict", "REGISTRY", "DEFAULT_CRITERIA", "STATUSES", "KINDS", "get",
           "judge",
           "judge_all", "overall", "from_mapping", "load_user_criteria"]
