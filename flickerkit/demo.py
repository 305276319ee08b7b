"""The invented demonstration scenario.

INVENTED DATA. The product, its maker and every capture below are made up for
this demo; they describe no real product. "Fenlight Works" and its "Ardent 12"
downlight do not exist.

The invented downlight has a hybrid driver: constant-current (analogue)
dimming with a little 100 Hz ripple from its single-stage power-factor stage
down to 25 % light, and 1.2 kHz PWM below that. The captures are what an
invented bench would have recorded with a photodiode amplifier and an
oscilloscope: a dark offset, white noise, a detector bandwidth of a few tens
of kilohertz, and each file in a different layout that bench instruments use.
"""

from __future__ import annotations

from dataclasses import dataclass
from pathlib import Path

import numpy as np

PRODUCT = {
    "name": "Ardent 12 downlight (invented)",
    "maker": "Fenlight Works (invented)",
    "model": "AR12-830-H (invented)",
    "description": "INVENTED demo product: 12 W LED downlight, hybrid driver, analogue "
                   "dimming with 100 Hz ripple down to 25 %, 1.2 kHz PWM below",
}

#: Dark offset of the invented photodiode amplifier [V].
DARK_V = 0.012
#: Full-light photodiode signal above the dark offset [V].
FULL_SCALE_V = 2.0
#: Noise of the invented amplifier [V rms].
NOISE_V = 0.002


@dataclass(frozen=True)
class DemoCapture:
    """One invented capture: its level, waveform recipe, file layout, rate and length."""

    level_percent: float
    filename: str
    layout: str
    description: str
    sample_rate_hz: float = 50_000.0
    duration_s: float = 1.0


CAPTURES = (
    # full output is recorded for 70 s so that Pst LM has its 60 s observation
    DemoCapture(100.0, "ardent12_level100.wav", "wav-float32",
                "analogue, 100 Hz ripple 7 % peak-to-peak", 25_000.0, 70.0),
    DemoCapture(50.0, "ardent12_level050.csv", "csv-ms",
                "analogue, 100 Hz ripple 9 % peak-to-peak"),
    DemoCapture(20.0, "ardent12_level020.csv", "semicolon-decimal-comma-us",
                "1.2 kHz PWM, duty 80 % of the 25 % current"),
    DemoCapture(10.0, "ardent12_level010.txt", "tab-no-header",
                "1.2 kHz PWM, duty 40 % of the 25 % current"),
    DemoCapture(2.0, "ardent12_level002.npy", "npy-time-signal",
                "1.2 kHz PWM, duty 8 % of the 25 % current"),
)

PWM_HZ = 1200.0
CROSSOVER = 0.25
RISE_TAU_S = 4e-6


def _light(level: float, t: np.ndarray, sample_rate_hz: float) -> np.ndarray:
    """Invented light waveform at a dimming level (fraction), before the detector."""
    if level >= CROSSOVER:
        ripple_pp = 0.07 if level > 0.75 else 0.09
        wave = 1 + 0.5 * ripple_pp * np.sin(2 * np.pi * 100.0 * t + 0.3)
        return level * wave
    duty = level / CROSSOVER
    # interval-averaged PWM with first-order rise and fall on a fine grid
    fine = 16
    tf = (t[:, None] + np.arange(fine) / (fine * sample_rate_hz)).ravel()
    phase = np.mod(tf * PWM_HZ + 0.137, 1.0) / PWM_HZ
    on = duty / PWM_HZ
    y = np.where(phase < on, 1 - np.exp(-phase / RISE_TAU_S),
                 (1 - np.exp(-on / RISE_TAU_S)) * np.exp(-(phase - on) / RISE_TAU_S))
    return CROSSOVER * y.reshape(-1, fine).mean(axis=1)


def write_captures(folder: Path, seed: int = 2026) -> list[Path]:
    """Write the invented captures into ``folder``; return their paths."""
    from scipy.io import wavfile

    rng = np.random.default_rng(seed)
    paths = []
    for cap in CAPTURES:
        n = int(cap.sample_rate_hz * cap.duration_s)
        t = np.arange(n) / cap.sample_rate_hz
        light = _light(cap.level_percent / 100.0, t, cap.sample_rate_hz)
        volts = DARK_V + FULL_SCALE_V * light + NOISE_V * rng.standard_normal(n)
        path = folder / cap.filename
        head = (f"# INVENTED demo capture - not a real product or measurement\n"
                f"# product: {PRODUCT['name']}\n# dimming level: {cap.level_percent:g} %\n"
                f"# recipe: {cap.description}\n")
        if cap.layout == "csv-ms":
            body = "\n".join(f"{a:.5f},{b:.5f}" for a, b in zip(t * 1e3, volts))
            path.write_text(head + "time (ms),photodiode (V)\n" + body + "\n", encoding="utf-8")
        elif cap.layout == "semicolon-decimal-comma-us":
            body = "\n".join(f"{a:.2f};{b:.5f}".replace(".", ",") for a, b in zip(t * 1e6, volts))
            path.write_text(head + "Zeit [µs];Licht [V]\n" + body + "\n", encoding="utf-8")
        elif cap.layout == "tab-no-header":
            body = "\n".join(f"{a:.7f}\t{b:.5f}" for a, b in zip(t, volts))
            path.write_text(body + "\n", encoding="utf-8")
        elif cap.layout == "wav-float32":
            wavfile.write(path, int(cap.sample_rate_hz), volts.astype(np.float32))
        elif cap.layout == "npy-time-signal":
            np.save(path, np.column_stack([t, volts]))
        paths.append(path)
    # a dark capture for the dark level
    dark = DARK_V + NOISE_V * rng.standard_normal(5000)
    dark_path = folder / "ardent12_dark.csv"
    dark_path.write_text("# INVENTED dark capture (light off)\nphotodiode (V)\n"
                         + "\n".join(f"{v:.5f}" for v in dark) + "\n", encoding="utf-8")
    paths.append(dark_path)
    return paths


#: The demo's project file (also in examples/ardent12_project.toml, kept equal by a test).
PROJECT_TOML = """\
# INVENTED demo project: the product, its maker and the captures are made up.
[product]
name = "Ardent 12 downlight (invented)"
maker = "Fenlight Works (invented)"
model = "AR12-830-H (invented)"
description = "INVENTED demo product: 12 W LED downlight, hybrid driver, analogue dimming \
with 100 Hz ripple down to 25 %, 1.2 kHz PWM below"

[setup]
detector = "silicon photodiode with transimpedance amplifier (invented bench)"
bandwidth_hz = 20000
distance_m = 0.5
ambient = "dark room, 23 C"
operator = "demo"
judged_on = 2026-11-20

[read]
dark = "ardent12_dark.csv"

[[capture]]
level = 100
file = "ardent12_level100.wav"

[[capture]]
level = 50
file = "ardent12_level050.csv"

[[capture]]
level = 20
file = "ardent12_level020.csv"

[[capture]]
level = 10
file = "ardent12_level010.txt"

[[capture]]
level = 2
file = "ardent12_level002.npy"

[criteria]
apply = ["ieee1789-low-risk", "ieee1789-noel", "eu-2019-2020-svm", "eu-2019-2020-pst",
         "ca-title24-ja8", "seizure-screen-below-90hz"]

[steps]
steps = 64
curve = "cie1976"
bits = 12
pwm_frequency_hz = 1200
"""


def write_project(folder: Path) -> Path:
    """Write the invented captures and the project file; return the project's path."""
    write_captures(folder)
    path = folder / "ardent12_project.toml"
    path.write_text(PROJECT_TOML, encoding="utf-8")
    return path
