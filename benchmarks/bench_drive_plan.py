"""Speed of the dimming sweep and the frequency planner (run by hand; prints figures).

Targets (issue 4): a 200-level sweep with all metrics for one drive under 2 s; a planner run
over 10 Hz - 50 kHz under 5 s.
"""

import importlib.util
import sys
import time
from pathlib import Path

sys.path.insert(0, str(Path(__file__).resolve().parent.parent))  # this tree's package

from flickerkit.drive import Drive, Edges
from flickerkit.planner import default_levels, lowest_frequency, parse_targets, plan
from flickerkit.sweep import sweep
from flickerkit.timers import Timer


def timed(label, fn):
    t = time.perf_counter()
    out = fn()
    print(f"{label}: {time.perf_counter() - t:.2f} s")
    return out


def main():
    import numpy as np

    levels = np.geomspace(1.0, 0.001, 200)
    drive = Drive(frequency_hz=2000.0, edges=Edges("linear", 1e-6, 1e-6))
    timed("sweep, 200 levels 100 %..0.1 %, PWM 2 kHz linear edges (sample + assess + SVM)",
          lambda: sweep(drive, levels))
    targets = "ieee1789-noel,svm<=0.4" if importlib.util.find_spec("flickerkit.svm") else \
        "ieee1789-noel"
    timed(f"planner lowest frequency, {targets}, 10 Hz..50 kHz, 26 levels",
          lambda: lowest_frequency(Drive(), parse_targets(targets), default_levels(0.001)))
    timed("planner full run with a 48 MHz timer and options",
          lambda: plan(Drive(), parse_targets(targets), timer=Timer(48e6, (1, 2, 4, 8))))


if __name__ == "__main__":
    main()
