"""Memory management for speed: the C allocator's thresholds, and pauses of Python's
cyclic garbage collector.

The vectorised checks create many arrays of tens of thousands of floats (hundreds of
kilobytes each) and free them at once. glibc's malloc serves blocks above its mmap
threshold (128 kB at first) with fresh ``mmap`` pages and returns them to the kernel
on free, so every such temporary pays page faults and zeroing by the kernel; on the
search this was a third of the run time. Raising the mmap threshold and the trim
threshold keeps those blocks in the heap for reuse. This changes no result, only where
freed memory waits; the heap may stay up to ``TRIM_BYTES`` larger than needed.

``tune_allocator`` is called once by the command line and the benchmark (not on
import: a library should not change its host's allocator unasked). Elsewhere than
glibc it does nothing.

``collector_paused`` holds the cyclic garbage collector while output is built: the
drawings, previews and report make hundreds of thousands of small long-lived objects,
and each batch of them starts a collection that walks every live object, the whole
design result and drawing included (on a long job a quarter of the time of writing
sections.dxf, half of rendering elevation.png, about 0.12 s of the report).
"""

from __future__ import annotations

import contextlib
import ctypes
import ctypes.util
import gc
import sys

#: Blocks up to this size come from the heap, not mmap (glibc's ceiling on 64-bit).
MMAP_THRESHOLD_BYTES = 32 * 1024 * 1024
#: Free memory at the top of the heap kept before it is given back to the kernel.
TRIM_BYTES = 512 * 1024 * 1024
#: Extra heap grown at a time.
TOP_PAD_BYTES = 64 * 1024 * 1024

_M_TRIM_THRESHOLD, _M_TOP_PAD, _M_MMAP_THRESHOLD = -1, -2, -3  # glibc <malloc.h>
_done = False


def tune_allocator() -> bool:
    """Set glibc's mallopt thresholds (once per process); True where they took."""
    global _done
    if _done:
        return True
    if not sys.platform.startswith("linux"):
        return False
    try:
        libc = ctypes.CDLL(ctypes.util.find_library("c") or "libc.so.6")
        mallopt = libc.mallopt
    except (OSError, AttributeError):  # not glibc (musl has no mallopt)
        return False
    mallopt.argtypes = [ctypes.c_int, ctypes.c_int]
    ok = (mallopt(_M_MMAP_THRESHOLD, MMAP_THRESHOLD_BYTES) == 1
          and mallopt(_M_TRIM_THRESHOLD, TRIM_BYTES) == 1
          and mallopt(_M_TOP_PAD, TOP_PAD_BYTES) == 1)
    _done = ok
    return ok


@contextlib.contextmanager
def collector_paused():
    """Pause Python's cyclic garbage collector for the block, then let it run again (if
    it ran before). Nothing is lost: the objects are collected once it runs."""
    was = gc.isenabled()
    gc.disable()
    try:
        yield
    finally:
        if was:
            gc.enable()
