"""Type-check the package; fail when mypy finds more errors than the recorded baseline.

The baseline (``.ci/mypy-baseline``, one number) may only shrink: when a change fixes
errors, lower it to the count this script prints. mypy's own settings are in
pyproject.toml ([tool.mypy]); run ``python .ci/mypy_check.py`` from anywhere.
"""

from __future__ import annotations

import subprocess
import sys
from pathlib import Path

ROOT = Path(__file__).resolve().parent.parent
BASELINE = ROOT / ".ci" / "mypy-baseline"


def main() -> int:
    allowed = int(BASELINE.read_text().split()[0])
    run = subprocess.run([sys.executable, "-m", "mypy"], cwd=ROOT, capture_output=True,
                         text=True)
    if run.returncode not in (0, 1):  # 2: mypy itself failed (bad settings, crash)
        sys.stdout.write(run.stdout + run.stderr)
        print("mypy-check: mypy did not run to the end")
        return 2
    errors = [line for line in run.stdout.splitlines() if ": error:" in line]
    if len(errors) > allowed:
        print("\n".join(errors))
        print(f"mypy-check: {len(errors)} errors, more than the {allowed} of "
              f"{BASELINE.relative_to(ROOT)}: fix the new ones (listed above)")
        return 1
    if len(errors) < allowed:
        print(f"mypy-check: {len(errors)} errors, fewer than the {allowed} allowed: "
              f"lower {BASELINE.relative_to(ROOT)} to {len(errors)}")
    else:
        print(f"mypy-check: {len(errors)} errors, as recorded")
    return 0


if __name__ == "__main__":
    raise SystemExit(main())
