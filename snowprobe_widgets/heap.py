"""glibc's heap settings: let a process keep freed memory for its next update.

A simulation or a picture update allocates mid-sized numpy arrays (a few hundred kB to a
few MB) and frees them again. Under glibc's own rules many of them land on fresh pages
each time (an array above the mmap threshold is mapped and unmapped; freed memory at the
top of the heap beyond the trim threshold goes back to the system), and every 4 kB page
then costs a page fault on first touch: measured on the design dashboard's person move,
3,700 faults and a third of the CPU of the objects' simulation
(tests/benchmarks/bench_dashboard.py). Raising both thresholds keeps that memory with the
process: the resident size stays near the largest update's peak instead.
"""

from __future__ import annotations

import ctypes
import functools
from typing import Any

#: glibc's mallopt parameters (malloc.h).
M_TRIM_THRESHOLD, M_MMAP_THRESHOLD = -1, -3

#: glibc's fixed default mmap threshold, bytes (its dynamic rule may raise it later).
DEFAULT_MMAP_THRESHOLD_BYTES: int = 128 * 2**10


@functools.lru_cache(maxsize=1)
def glibc() -> Any:
    """The C library when it is glibc (has ``mallopt`` and ``malloc_trim``), else None."""
    try:
        libc = ctypes.CDLL("libc.so.6")
    except OSError:
        return None
    return libc if hasattr(libc, "mallopt") and hasattr(libc, "malloc_trim") else None


def keep_freed_memory(mmap_threshold_bytes: int, trim_threshold_bytes: int) -> bool:
    """Serve arrays below ``mmap_threshold_bytes`` from the heap and keep up to
    ``trim_threshold_bytes`` of freed heap with the process (whole process, until changed).

    Returns False, changing nothing, where the C library is not glibc.
    """
    libc = glibc()
    if libc is None:
        return False
    libc.mallopt(M_MMAP_THRESHOLD, int(mmap_threshold_bytes))
    libc.mallopt(M_TRIM_THRESHOLD, int(trim_threshold_bytes))
    return True


__all__ = ["DEFAULT_MMAP_THRESHOLD_BYTES", "M_MMAP_THRESHOLD", "M_TRIM_THRESHOLD", "glibc",
           "keep_freed_memory"]
