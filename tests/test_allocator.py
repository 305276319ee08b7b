"""The command-line process keeps freed memory for reuse (flickerkit.allocator)."""

from __future__ import annotations

import json
import os
import platform
import subprocess
import sys
from pathlib import Path

import numpy as np

from flickerkit.cli import main

ROOT = Path(__file__).resolve().parents[1]


def _python(code: str, *args: str) -> subprocess.CompletedProcess:
    env = {**os.environ, "PYTHONPATH": str(ROOT)}
    return subprocess.run([sys.executable, "-c", code, *args], capture_output=True, text=True,
                          env=env, cwd=ROOT, timeout=120)


def test_applies_on_glibc_only():
    # glibc's mallopt returns 1 on success (GNU C Library manual, "Malloc Tunable Parameters")
    r = _python("from flickerkit.allocator import keep_freed_memory; "
                "print(keep_freed_memory())")
    assert r.returncode == 0, r.stderr
    glibc = sys.platform.startswith("linux") and platform.libc_ver()[0] == "glibc"
    assert r.stdout.strip() == str(glibc)


def test_the_command_line_process_gives_the_same_figures(tmp_path, capsys):
    # invented light: 1234.56 Hz PWM, 30 % duty, 2 % off-level, noise, 50 kS/s, 2 s;
    # the allocator changes where arrays live, never a figure: the process that tunes it
    # (main() on its own command line) and an in-process call (not tuned) agree exactly
    rng = np.random.default_rng(11)
    t = np.arange(100_000) / 50_000.0
    x = np.where(np.mod(t * 1234.56, 1.0) < 0.3, 1.0, 0.02) + 0.002 * rng.standard_normal(t.size)
    path = tmp_path / "light.npy"
    np.save(path, x)
    args = ["measure", str(path), "-r", "50000", "--json", "-q"]
    r = _python("from flickerkit.cli import main; raise SystemExit(main())", *args)
    assert r.returncode == 0, r.stderr
    assert main(args) == 0
    assert json.loads(r.stdout) == json.loads(capsys.readouterr().out)
