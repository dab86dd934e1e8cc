"""A second process for the many-panel search's checks (the second core).

The checks of one candidate never depend on another candidate, so a batch can be cut
in two, one half checked here and the other by a forked copy of this process at the
same time, and the two answers joined: the same numbers as checking the whole batch
in one process (``tests/test_workers.py`` compares them). The halves travel through
an anonymous shared memory map made before the fork, so a call costs a copy of its
arrays, not their pickling.

Use::

    with workers.twin():
        ...  # calls of split(...) inside use the copy when it helps

The copy is forked when the block is entered, so it runs the code as it is then,
and it ends with the block. Where ``fork`` is not offered or only one core is
available, ``twin()`` does nothing and ``split`` computes everything in this process.
"""

from __future__ import annotations

import contextlib
import mmap
import multiprocessing as mp
import os
import traceback

import numpy as np

#: Size of the shared map, bytes; a half that does not fit is pickled instead.
CAPACITY_BYTES = 32 * 1024 * 1024
#: Batches smaller than this many candidates are not split (a call costs about a
#: millisecond of copying and waking the other process).
SPLIT_FROM = 4000

_current: "Twin | None" = None


def _cores() -> int:
    try:
        return len(os.sched_getaffinity(0))
    except AttributeError:  # not on Linux
        return os.cpu_count() or 1


def _pack(buf, arrays: dict) -> list | None:
    """Copy ``arrays`` into ``buf`` one after another; their layout, or None when they
    do not fit."""
    layout, off = [], 0
    for name, a in arrays.items():
        a = np.ascontiguousarray(a)
        if off + a.nbytes > len(buf):
            return None
        np.frombuffer(buf, dtype=np.uint8, count=a.nbytes, offset=off)[:] = a.view(np.uint8).ravel()
        layout.append((name, off, a.dtype.str, a.shape))
        off += -(-a.nbytes // 64) * 64  # 64-byte aligned
    return layout


def _unpack(buf, layout) -> dict:
    """Copies of the arrays of ``layout`` out of ``buf``."""
    out = {}
    for name, off, dt, shape in layout:
        dtype = np.dtype(dt)
        count = int(np.prod(shape, dtype=np.int64))
        out[name] = np.frombuffer(buf, dtype=dtype, count=count, offset=off).reshape(shape).copy()
    return out


def _serve(conn, buf) -> None:
    """The copy's loop: (fn, layout or arrays, params) in, fn's dict of arrays out."""
    while True:
        try:
            msg = conn.recv()
        except EOFError:
            return
        if msg is None:
            return
        kind, fn, payload, params = msg
        try:
            arrays = _unpack(buf, payload) if kind == "shm" else payload
            result = fn(arrays, *params)
            layout = _pack(buf, result)
            conn.send(("shm", layout) if layout is not None else ("pickle", result))
        except BaseException as exc:  # noqa: BLE001 - handed back to the caller
            try:
                conn.send(("error", exc))
            except Exception:  # noqa: BLE001 - an exception that does not pickle
                conn.send(("error", RuntimeError(traceback.format_exc())))


class Twin:
    """A forked copy of this process answering one call at a time."""

    def __init__(self, capacity: int = CAPACITY_BYTES):
        self._buf = mmap.mmap(-1, capacity)  # anonymous and shared: seen by the child
        ctx = mp.get_context("fork")
        self._conn, child = ctx.Pipe()
        self._proc = ctx.Process(target=_serve, args=(child, self._buf), daemon=True)
        self._proc.start()
        child.close()

    def submit(self, fn, arrays: dict, params: tuple) -> None:
        """Start ``fn(arrays, *params)`` in the copy (fn: a module-level function
        returning a dict of arrays)."""
        layout = _pack(self._buf, arrays)
        if layout is None:
            self._conn.send(("pickle", fn, arrays, params))
        else:
            self._conn.send(("shm", fn, layout, params))

    def collect(self) -> dict:
        """The answer of the call submitted last (its exception raised here)."""
        try:
            kind, payload = self._conn.recv()
        except EOFError:
            raise RuntimeError("the second checking process ended without an answer") from None
        if kind == "error":
            raise payload
        return _unpack(self._buf, payload) if kind == "shm" else payload

    def close(self) -> None:
        try:
            self._conn.send(None)
        except (BrokenPipeError, OSError):
            pass
        self._proc.join(timeout=5)
        if self._proc.is_alive():
            self._proc.terminate()
            self._proc.join()
        self._conn.close()
        self._buf.close()


@contextlib.contextmanager
def twin():
    """A copy of this process for :func:`split` for the duration of the block (nested
    blocks share the outer one's copy)."""
    global _current
    if _current is not None or _cores() < 2 or "fork" not in mp.get_all_start_methods():
        yield _current
        return
    t = Twin()
    _current = t
    try:
        yield t
    finally:
        _current = None
        t.close()


def current() -> "Twin | None":
    """The copy of the enclosing :func:`twin` block, or None."""
    return _current


def split(fn, arrays: dict, params: tuple, cut: int) -> dict:
    """``fn(arrays, *params)`` with the rows ``[:cut]`` of every array done by the copy
    and the rows ``[cut:]`` here at the same time, the answers' rows joined in order.

    fn must treat rows independently (a row's answer depends on that row only, and
    every array it returns has one row per input row). Without a copy, or for a
    batch under ``SPLIT_FROM`` rows, fn runs once on the whole batch.
    """
    n = len(next(iter(arrays.values())))
    t = _current
    if t is None or n < SPLIT_FROM or not 0 < cut < n:
        return fn(arrays, *params)
    t.submit(fn, {k: v[:cut] for k, v in arrays.items()}, params)
    try:
        mine = fn({k: v[cut:] for k, v in arrays.items()}, *params)
    finally:
        theirs = t.collect()
    return {k: np.concatenate([theirs[k], mine[k]]) for k in mine}
