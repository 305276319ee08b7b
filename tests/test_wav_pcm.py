"""Every PCM width of a WAV file decodes to the same light level (offset and scale).

The same light (mean 0.5 of full scale, 30 % sine modulation at 123.4 Hz) is written as
unsigned 8-bit, 16-, 24- and 32-bit signed and 32-bit float PCM; each must read the 16-bit
file's percent flicker and mean. Issue 12: unsigned 8-bit read 10.2 % (the 128 offset kept).
"""

import struct

import numpy as np
import pytest
from scipy.io import wavfile

from flickerkit.assess import assess
from flickerkit.readers import ReadOptions, read_capture

FS = 8000
F = 123.4
M = 0.30  # analytic: percent flicker of 1 + m sin is 100 m
T = np.arange(2 * FS) / FS
V = 0.5 * (1 + M * np.sin(2 * np.pi * F * T))  # fraction of full scale


def _pcm24(path, x):
    """A 24-bit PCM WAV written by hand (RIFF/WAVE, format 1, little-endian)."""
    ints = np.round(x * (2 ** 23 - 1)).astype("<i4")
    data = b"".join(int(v).to_bytes(3, "little", signed=True) for v in ints)
    fmt = struct.pack("<HHIIHH", 1, 1, FS, FS * 3, 3, 24)
    body = b"WAVE" + b"fmt " + struct.pack("<I", len(fmt)) + fmt + b"data" + \
        struct.pack("<I", len(data)) + data
    path.write_bytes(b"RIFF" + struct.pack("<I", len(body)) + body)


def _write(path, width):
    if width == "u8":
        wavfile.write(path, FS, np.round(128 + V * 127).astype(np.uint8))
    elif width == "i16":
        wavfile.write(path, FS, np.round(V * 32767).astype(np.int16))
    elif width == "i24":
        _pcm24(path, V)
    elif width == "i32":
        wavfile.write(path, FS, np.round(V * (2 ** 31 - 1)).astype(np.int32))
    else:
        wavfile.write(path, FS, V.astype(np.float32))
    return path


# quantisation: one step of an 8-bit sample is 1/128 of full scale; max and min may each be
# off by half a step, so percent flicker by 100 * (1/128) / (2 * 0.5) ~ 0.8 % points
# (analytic bound); 16 bits and wider: 1/32768 -> 0.003 % points
TOL_PP = {"u8": 100 / 128, "i16": 0.01, "i24": 0.01, "i32": 0.01, "f32": 0.01}
# the mean over 246.8 periods is 0.5 to within 0.5 * m / (2 pi 246.8) ~ 1e-4 (analytic: the
# part period's sine area), plus the quantisation
TOL_MEAN = {"u8": 1 / 128, "i16": 2e-4, "i24": 2e-4, "i32": 2e-4, "f32": 2e-4}


@pytest.mark.parametrize("stream", [False, True])
@pytest.mark.parametrize("width", ["u8", "i16", "i24", "i32", "f32"])
def test_each_pcm_width_reads_the_same_light(tmp_path, width, stream):
    ref = assess(read_capture(_write(tmp_path / "ref.wav", "i16")))
    cap = read_capture(_write(tmp_path / f"{width}.wav", width), ReadOptions(stream=stream))
    a = assess(cap)
    assert a.percent_flicker == pytest.approx(100 * M, abs=TOL_PP[width])
    assert a.percent_flicker == pytest.approx(ref.percent_flicker, abs=TOL_PP[width])
    assert float(np.mean(cap.samples[0:cap.samples.shape[0]])) == pytest.approx(
        0.5, abs=TOL_MEAN[width])
    if width != "f32":
        assert any("PCM" in n for n in cap.notes)


def test_dark_level_on_unsigned_8_bit_is_in_full_scale_units(tmp_path):
    cap = read_capture(_write(tmp_path / "u8.wav", "u8"), ReadOptions(dark=0.1))
    assert float(np.mean(cap.samples)) == pytest.approx(0.4, abs=1 / 128)


@pytest.mark.parametrize("offset,what", [(22, "channels"), (32, "block align")])
def test_header_with_zero_channels_or_block_align_is_one_line(tmp_path, offset, what):
    from flickerkit.errors import InputError

    p = _write(tmp_path / "h.wav", "i16")
    raw = bytearray(p.read_bytes())
    raw[offset:offset + 2] = b"\0\0"
    p.write_bytes(bytes(raw))
    with pytest.raises(InputError, match="not a readable WAV") as e:
        read_capture(p)
    assert "\n" not in str(e.value)
