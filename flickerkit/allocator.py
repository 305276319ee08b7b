"""Freed memory kept in the process for reuse: large arrays without fresh pages each time.

A measurement builds a few arrays of tens of megabytes one after another (the capture, its
transform, the amplitudes). glibc's malloc maps each one afresh and unmaps it when freed, so
every one of them pays the kernel's page faults (and, where transparent huge pages are on,
its compaction): 0.1-0.4 s of system time for a 1e7-sample capture on the project's machine,
measured here. Served from the heap and kept there when freed, the next array reuses touched
pages. Only the command-line process asks for this (a library should not change its host's
allocator); other C libraries and platforms are left as they are.
"""

from __future__ import annotations

#: glibc mallopt parameters (malloc.h).
_M_TRIM_THRESHOLD = -1
_M_MMAP_MAX = -4
#: Free memory at the top of the heap returned to the system only beyond this [bytes].
_TRIM_THRESHOLD_BYTES = 2**31 - 1


def keep_freed_memory() -> bool:
    """Ask glibc's malloc to serve large blocks from the heap and keep freed ones for reuse.

    Returns
    -------
    bool
        True when the settings were applied (Linux with glibc); False elsewhere, where
        nothing changes.

    Notes
    -----
    ``mallopt(M_MMAP_MAX, 0)`` (no separate mapping per large block) and
    ``mallopt(M_TRIM_THRESHOLD, 2**31 - 1)``. Resident memory then stays at the
    process's peak until it exits, which the command-line process does.

    References
    ----------
    The GNU C Library Reference Manual, section "Malloc Tunable Parameters".
    """
    import ctypes
    import sys

    if not sys.platform.startswith("linux"):
        return False
    try:
        libc = ctypes.CDLL("libc.so.6")
        mallopt = libc.mallopt
    except (OSError, AttributeError):
        return False
    mallopt.argtypes = [ctypes.c_int, ctypes.c_int]
    mallopt.restype = ctypes.c_int
    return bool(mallopt(_M_MMAP_MAX, 0)) and bool(mallopt(_M_TRIM_THRESHOLD,
                                                              _TRIM_THRESHOLD_BYTES))
