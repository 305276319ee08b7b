"""flickerkit: temporal light modulation analysis for dimmable LED lighting.

The package is layered (see DEVELOPERS.md): pure computation on numpy arrays at
the core (periodicity, spectrum, metrics, ieee1789, ...), one assessment that
runs them for a :class:`~flickerkit.capture.Capture`, and readers, exports and the
command line at the edges.

The public Python interface is importable from the package itself; each name is
loaded on first use, so ``import flickerkit`` stays cheap (no numpy or scipy
until a name needs them):

==========================  ============================================================
Captures                    :class:`Capture`, :func:`make_capture`, :func:`read_capture`,
                            :class:`ReadOptions`
Measuring                   :func:`assess_light`, :class:`Assessment`,
                            :class:`AssessSettings`, :func:`assess_voltage`,
                            :func:`percent_flicker`,
                            :func:`flicker_index`, :func:`fundamental_frequency`,
                            :func:`svm_from_components`, :func:`pst_lm`
Judging                     :func:`judge`, :data:`CRITERIA`
Drive models                :class:`Drive`, :class:`Pwm`
Brightness tables           :func:`build_table`, :class:`StepTable`, :func:`get_curve`
Errors and warnings         :class:`FlickerkitError`, :class:`InputError`,
                            :class:`SettingsError`, :class:`CaptureWarning`
==========================  ============================================================

``assess_light`` is :func:`flickerkit.assess.assess` (the package name
``flickerkit.assess`` is its module); ``CRITERIA`` is
:data:`flickerkit.criteria.REGISTRY`. The modules themselves (``flickerkit.drive``,
``flickerkit.steps``, ...) are loaded on first use as well.

Examples
--------
>>> import numpy as np
>>> import flickerkit as fk
>>> fs = 20_000.0  # sample rate [Hz]
>>> t = np.arange(int(0.5 * fs)) / fs
>>> light = 1.0 + 0.2 * np.sin(2 * np.pi * 123.4 * t)  # invented: 20 % modulation at 123.4 Hz
>>> a = fk.assess_light(fk.make_capture(light, fs))
>>> round(a.frequency_hz, 1), round(a.percent_flicker, 2)
(123.4, 20.0)
"""

from __future__ import annotations

from importlib import import_module
from typing import TYPE_CHECKING, Any

__version__ = "0.1.0"

#: Public name -> the module (relative to the package) that defines it.
_API: dict[str, str] = {
    "Capture": "capture",
    "make_capture": "capture",
    "read_capture": "readers",
    "ReadOptions": "readers",
    "Assessment": "assess",
    "AssessSettings": "assess",
    "assess_voltage": "assess",
    "percent_flicker": "metrics",
    "flicker_index": "metrics",
    "fundamental_frequency": "periodicity",
    "svm_from_components": "svm",
    "pst_lm": "flickermeter",
    "judge": "criteria",
    "Drive": "drive",
    "Pwm": "drive",
    "build_table": "steps",
    "StepTable": "steps",
    "get_curve": "curves",
    "FlickerkitError": "errors",
    "InputError": "errors",
    "SettingsError": "errors",
    "CaptureWarning": "errors",
}
#: Public names bound to another name in their module.
_RENAMED: dict[str, tuple[str, str]] = {
    "assess_light": ("assess", "assess"),  # flickerkit.assess is the module
    "CRITERIA": ("criteria", "REGISTRY"),
}

__all__ = [
    "__version__",
    # captures
    "Capture", "make_capture", "read_capture", "ReadOptions",
    # measuring
    "assess_light", "Assessment", "AssessSettings", "assess_voltage", "percent_flicker",
    "flicker_index", "fundamental_frequency", "svm_from_components", "pst_lm",
    # judging
    "judge", "CRITERIA",
    # drive models
    "Drive", "Pwm",
    # brightness tables
    "build_table", "StepTable", "get_curve",
    # errors and warnings
    "FlickerkitError", "InputError", "SettingsError", "CaptureWarning",
]


def __getattr__(name: str) -> Any:
    """Load a public name on first use (PEP 562); ``import flickerkit`` stays cheap."""
    if name in _API:
        module, attr = _API[name], name
    elif name in _RENAMED:
        module, attr = _RENAMED[name]
    elif not name.startswith("_") and _is_module(name):
        return import_module(f".{name}", __name__)  # the import binds it here too
    else:
        raise AttributeError(f"module 'flickerkit' has no attribute {name!r}")
    value = getattr(import_module(f".{module}", __name__), attr)
    globals()[name] = value  # later look-ups skip this function
    return value


def _is_module(name: str) -> bool:
    from pathlib import Path

    here = Path(__file__).parent
    return (here / f"{name}.py").is_file() or (here / name / "__init__.py").is_file()


def __dir__() -> list[str]:
    return sorted(set(globals()) | set(__all__))


if TYPE_CHECKING:  # type checkers and IDEs see the names without the lazy look-up
    from .assess import Assessment, AssessSettings, assess_voltage
    from .assess import assess as assess_light
    from .capture import Capture, make_capture
    from .criteria import REGISTRY as CRITERIA
    from .criteria import judge
    from .curves import get_curve
    from .drive import Drive, Pwm
    from .errors import CaptureWarning, FlickerkitError, InputError, SettingsError
    from .flickermeter import pst_lm
    from .metrics import flicker_index, percent_flicker
    from .periodicity import fundamental_frequency
    from .readers import ReadOptions, read_capture
    from .steps import StepTable, build_table
    from .svm import svm_from_components
