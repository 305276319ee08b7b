"""The public Python interface: names, laziness, and the README's "Python" example (issue 15)."""

from __future__ import annotations

import contextlib
import inspect
import io
import math
import re
import subprocess
import sys
from pathlib import Path

import numpy as np
import pytest

import flickerkit as fk

ROOT = Path(__file__).resolve().parent.parent


def test_every_public_name_loads_and_is_documented():
    assert len(fk.__all__) == len(set(fk.__all__))
    assert set(fk.__all__) == {"__version__", *fk._API, *fk._RENAMED}  # one list, kept whole
    for name in fk.__all__:
        value = getattr(fk, name)
        if name == "__version__" or isinstance(value, dict):
            continue
        doc = inspect.getdoc(value) or ""
        assert len(doc) > 40, f"flickerkit.{name} has no docstring"
        if inspect.isfunction(value):
            assert "Parameters" in doc and "Returns" in doc, f"flickerkit.{name}: numpy style"
    assert set(fk.__all__) <= set(dir(fk))


def test_public_names_are_the_module_objects():
    from flickerkit import assess, criteria, drive, steps

    assert fk.assess_light is assess.assess  # flickerkit.assess is the module
    assert fk.CRITERIA is criteria.REGISTRY
    assert fk.Drive is drive.Drive and fk.build_table is steps.build_table
    assert inspect.ismodule(fk.assess) and inspect.ismodule(fk.timers)  # modules load lazily too


def test_unknown_name_is_an_attribute_error():
    with pytest.raises(AttributeError, match="no attribute 'asses'"):
        fk.asses  # noqa: B018
    with pytest.raises(AttributeError):
        fk.data  # noqa: B018  (a folder of package data, not a module)


def test_import_is_light():
    # the lazy names must not pull numpy (or anything heavy) into `import flickerkit`
    code = ("import sys, flickerkit; heavy = [m for m in ('numpy', 'scipy', 'pandas', 'openpyxl',"
            " 'colour') if m in sys.modules]; print(heavy, flickerkit.__version__)")
    out = subprocess.run([sys.executable, "-c", code], cwd=ROOT, capture_output=True, text=True,
                         check=True).stdout
    assert out.startswith("[] ")


def test_py_typed_ships_with_the_package():
    assert (ROOT / "flickerkit" / "py.typed").is_file()
    text = (ROOT / "pyproject.toml").read_text()
    assert re.search(r'\[tool\.setuptools\.package-data\]\s*flickerkit = \[[^\]]*"py\.typed"',
                     text)


def _readme_python() -> tuple[str, str]:
    readme = (ROOT / "README.md").read_text(encoding="utf-8")
    m = re.search(r"^## Python\n(.*?)^## ", readme, re.S | re.M)
    assert m, "README.md has no 'Python' section"
    code = re.search(r"```python\n(.*?)```", m.group(1), re.S)
    shown = re.search(r"```text\n(.*?)```", m.group(1), re.S)
    assert code and shown
    return code.group(1), shown.group(1)


def test_readme_python_example_runs_and_prints_what_it_says():
    code, shown = _readme_python()
    out = io.StringIO()
    namespace: dict = {"__name__": "readme_example"}
    with contextlib.redirect_stdout(out):
        exec(compile(code, "README.md (Python)", "exec"), namespace)  # noqa: S102
    assert out.getvalue() == shown

    # and what it prints is right, against closed forms
    measured, modelled, table = namespace["measured"], namespace["modelled"], namespace["table"]
    # analytic: 1 + m sin gives percent flicker 100 m and flicker index m / pi (here m = 0.08);
    # 162 samples a period miss the peak by at most 1 - cos(pi / 162) = 2e-4 of it
    assert measured.percent_flicker == pytest.approx(8.0, rel=1e-3)
    assert measured.flicker_index == pytest.approx(0.08 / math.pi, rel=1e-3)
    assert measured.frequency_hz == pytest.approx(119.7, rel=1e-4)
    # analytic: PWM between 1 and b = 0.03 gives 100 (1 - b) / (1 + b) percent flicker
    assert modelled.percent_flicker == pytest.approx(100 * 0.97 / 1.03, rel=1e-6)
    # analytic PWM Fourier series, duty D: C_k = 2 (1 - b) |sin(pi k D)| / (pi k mean)
    d, b, f = 0.20, 0.03, 1234.56
    k = np.arange(1, 10)
    c = 2 * (1 - b) * np.abs(np.sin(np.pi * k * d)) / (np.pi * k * (d + (1 - d) * b))
    assert modelled.svm.value == pytest.approx(fk.svm_from_components(k * f, c), rel=0.01)
    # the table: 12-bit counter (TOP 4095); the lowest lit step at 0.1 % of full output
    assert table.counts[-1] == 4095 and table.counts[0] == round(0.001 * 4095)
    assert np.all(np.diff(table.counts) > 0)


def test_assess_refuses_a_bare_array_in_one_line():
    # a bare numpy array and a sample rate where a Capture and settings belong: a TypeError
    # that says how to build the Capture (it was an AttributeError from deep inside)
    x = 1.0 + 0.5 * np.sin(2 * np.pi * 123.4 * np.arange(20_000) / 20_000.0)
    with pytest.raises(TypeError, match="make_capture"):
        fk.assess_light(x, 20_000.0)
    cap = fk.make_capture(x, 20_000.0)
    with pytest.raises(TypeError, match="AssessSettings"):
        fk.assess_light(cap, 20_000.0)
    with pytest.raises(TypeError, match="make_capture"):
        fk.assess_voltage(x)
    assert fk.assess_light(cap).percent_flicker == pytest.approx(50.0, abs=0.5)  # analytic: m = 0.5
