"""WAV captures, read with ``scipy.io.wavfile``.

Memory-mapped above 64 MiB; integer PCM scaled to full scale 1.
"""

from __future__ import annotations

import struct
from pathlib import Path

import numpy as np

from ..errors import InputError
from ..metrics import clipped_at_rail
from .channels import channel_of, unnamed_choice
from .filesignal import FileSignal, file_signal
from .options import ReadOptions, streams
from .result import RATE_GIVEN, FormatRead, binary_read


#: 24-bit WAV samples cannot be memory-mapped; up to this size they are read into memory.
_WAV24_IN_MEMORY_BYTES = 1 << 30


def read_wav(p: Path, options: ReadOptions) -> FormatRead:
    """Read a WAV capture (header doubts become warnings; integer PCM scaled to full scale 1)."""
    import warnings as _warnings

    from scipy.io import wavfile

    name = str(p)

    with _warnings.catch_warnings(record=True) as caught:
        _warnings.simplefilter("always")
        try:
            mmap = p.stat().st_size >= 64 << 20 or bool(options.stream)
            try:
                rate, data = wavfile.read(name, mmap=mmap)
            except ValueError as exc:  # 24-bit samples cannot be memory-mapped
                if not (mmap and "container size" in str(exc)):
                    raise
                if p.stat().st_size > _WAV24_IN_MEMORY_BYTES:
                    raise InputError(f"a 24-bit WAV file above {_WAV24_IN_MEMORY_BYTES >> 20} "
                                     f"MiB cannot be read block by block; convert it to 16- "
                                     f"or 32-bit PCM", source=name) from None
                rate, data = wavfile.read(name, mmap=False)
        except ZeroDivisionError:  # a header declaring 0 channels
            raise InputError("not a readable WAV file (the header declares 0 channels or a "
                             "block align of 0)", source=name) from None
        except (ValueError, EOFError, OSError, IndexError, TypeError, struct.error) as exc:
            raise InputError(f"not a readable WAV file ({exc})", source=name) from None
    header_doubts = [f"WAV file: {w.message}" for w in caught]
    if data.size == 0:
        raise InputError("WAV file holds no samples", source=name)
    zero, scale, pcm_note = _pcm_level(data.dtype)
    sig, ch = channel_of(data, options, name, "WAV file")
    warns: list[str] = header_doubts + unnamed_choice(
        data.shape[1] if data.ndim == 2 else 1, options, name, "WAV file")
    lazy = streams(int(data.shape[0]), options) and isinstance(data, np.memmap)
    if np.issubdtype(sig.dtype, np.integer):
        info = np.iinfo(sig.dtype)
        at_rail = 0
        for a in range(0, sig.shape[0], 1 << 22):
            b = np.asarray(sig[a : a + (1 << 22)])
            at_rail += int(np.count_nonzero((b == info.max) | (b == info.min)))
        if clipped_at_rail(int(sig.size), at_rail):
            warns.append(f"clipping: {at_rail} sample(s) sit at the recorder's full scale "
                         f"({info.min}/{info.max}); percent flicker is underestimated")
    fs = float(options.sample_rate_hz) if options.sample_rate_hz else float(rate)
    notes = [f"sample rate {fs:g} Hz from the WAV header" if not options.sample_rate_hz
             else f"sample rate {fs:g} Hz given (WAV header says {rate} Hz)"]
    if pcm_note:
        notes.append(pcm_note)
    time_base = RATE_GIVEN if options.sample_rate_hz is not None else "the WAV header"
    samples: np.ndarray | FileSignal
    if lazy:
        samples = file_signal(data, p, ch - 1, zero=zero, scale=scale)
    else:
        samples = np.asarray(sig, dtype=np.float64)
        if zero or scale != 1.0:
            samples = (samples - zero) * scale
    return binary_read(samples, fs, notes, warns, fmt="WAV", column=f"channel {ch}",
                       time_base=time_base)


def _pcm_level(dtype: np.dtype) -> tuple[float, float, str]:
    """Zero and step of integer PCM samples as scipy returns them, to full scale (±1).

    Unsigned 8-bit PCM stores zero as 128 (WAVE format: 8-bit samples are
    unsigned, wider ones two's complement); scipy returns 24-bit samples
    left-justified in int32, so every signed width divides by 2**(bits - 1).
    Float samples are kept as stored.
    """
    if not np.issubdtype(dtype, np.integer):
        return 0.0, 1.0, ""
    bits = 8 * np.dtype(dtype).itemsize
    if np.issubdtype(dtype, np.unsignedinteger):
        zero = float(2 ** (bits - 1))
        how = f"unsigned {bits}-bit PCM: {zero:g} is zero"
    else:
        zero = 0.0
        how = f"{bits}-bit PCM"
    return zero, 2.0 ** -(bits - 1), (f"{how}; samples scaled to full scale = 1 (a --dark "
                                      f"level is in that unit)")


