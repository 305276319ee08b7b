"""Print the lowest declared version of every dependency (and of the test extra) as pins.

CI installs these in a second environment and runs the suite there, so the floors in
pyproject.toml are tested, not only stated. Only ``>=`` bounds are read; a dependency
without one is printed as it stands.
"""

from __future__ import annotations

import re
import tomllib
from pathlib import Path

project = tomllib.loads((Path(__file__).resolve().parent.parent / "pyproject.toml")
                        .read_text(encoding="utf-8"))["project"]
for req in [*project["dependencies"], *project["optional-dependencies"]["test"]]:
    print(re.sub(r">=\s*([^,;\s]+)", r"==\1", req))
