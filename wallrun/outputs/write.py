"""Writing the output folder atomically.

Everything is written into a temporary folder beside the target and moved into place
only when complete, so a failed or killed run leaves the previous output untouched.
The inputs are only ever read.
"""

from __future__ import annotations

import gc
import os
import shutil
import tempfile
from pathlib import Path

from wallrun.errors import InputError
from wallrun.results import DesignResult


def check_writable(out_dir) -> None:
    """Refuse, before any design work, an output folder that cannot be written."""
    out = Path(out_dir)
    if out.exists() and not out.is_dir():
        raise InputError(f"--out {out}: exists and is not a folder")
    parent = out.parent if not out.exists() else out.parent
    probe = parent
    while not probe.exists():
        probe = probe.parent
    if not probe.is_dir() or not os.access(probe, os.W_OK | os.X_OK):
        raise InputError(f"--out {out}: cannot write in {probe}")
    if out.exists() and not os.access(out, os.W_OK | os.X_OK):
        raise InputError(f"--out {out}: folder is not writable")


def _write_text(path: Path, text: str) -> None:
    with open(path, "w", encoding="utf-8", newline="") as f:
        f.write(text)


def _write_sections_and_preview(result: DesignResult, folder: Path) -> None:
    from wallrun.outputs.dxf import write_drawings
    write_drawings(result, folder)


def _write_the_rest(result: DesignResult, folder: Path) -> None:
    from wallrun.outputs import ifc, profiles_csv, report, tables, workbook
    for name, render in tables.TABLES.items():
        _write_text(folder / name, render(result))
    workbook.write_workbook(result, folder / "schedule.xlsx")
    report.write_report(result, folder / "report.html")
    profiles_csv.write_profiles_csv(result, folder / "profiles.csv")
    ifc.write_ifc(result, folder / "model.ifc")


def _child(result, folder, conn) -> None:
    gc.disable()  # this process ends after the two files; nothing to collect meanwhile
    try:
        _write_sections_and_preview(result, folder)
        conn.send("")
    except BaseException as exc:  # reported by the parent
        conn.send(f"{type(exc).__name__}: {exc}")
    finally:
        conn.close()


#: Above this many section types the cross-section drawings (the largest writer) are
#: written by a second process while this one writes the rest; the files are the same.
PARALLEL_FROM_TYPES = 12


def write_all(result: DesignResult, folder: Path) -> list[str]:
    """Write every output file into ``folder`` (which exists and is empty).

    The writers are independent renderings of ``result``. For a large job (more than
    ``PARALLEL_FROM_TYPES`` section types, on a platform with ``fork``) the section
    drawings and their preview are written by a forked child process at the same time;
    a failure there fails the whole write.
    """
    import multiprocessing as mp

    from wallrun.memory import collector_paused
    with collector_paused():  # the writers make many long-lived objects
        return _write_all(result, folder, mp)


def _write_all(result: DesignResult, folder: Path, mp) -> list[str]:
    if len(result.section_types) > PARALLEL_FROM_TYPES and "fork" in mp.get_all_start_methods():
        ctx = mp.get_context("fork")
        recv, send = ctx.Pipe(duplex=False)
        child = ctx.Process(target=_child, args=(result, folder, send), daemon=True)
        child.start()
        send.close()
        try:
            _write_the_rest(result, folder)
        finally:
            try:
                message = recv.recv()
            except EOFError:
                message = "the writing process ended without an answer"
            child.join()
        if message or child.exitcode != 0:
            raise RuntimeError(f"writing sections.dxf failed: {message or child.exitcode}")
    else:
        _write_sections_and_preview(result, folder)
        _write_the_rest(result, folder)
    return sorted(p.name for p in folder.iterdir())


def _leftovers(out: Path, kind: str) -> list[Path]:
    """Temporary siblings of ``out`` left by a run that was killed (``tmp`` or ``old``)."""
    return sorted(p for p in out.parent.glob(f".{out.name}.{kind}-*") if p.is_dir())


def recover(out: Path) -> None:
    """Undo a swap that was killed half way: when ``out`` is missing and the previous
    output survives as ``.NAME.old-*``, put it back (the newest one)."""
    if out.exists():
        return
    olds = _leftovers(out, "old")
    if olds:
        newest = max(olds, key=lambda p: p.stat().st_mtime)
        os.replace(newest, out)


def write_outputs(result: DesignResult, out_dir) -> list[str]:
    """Write the output folder atomically; returns the file names written.

    The files go into ``.NAME.tmp-*`` beside the target; the previous output is moved
    to ``.NAME.old-*``, the new one into place, and the old one removed. Leftovers of
    killed runs are recovered or removed.
    """
    out = Path(out_dir).resolve()
    out.parent.mkdir(parents=True, exist_ok=True)
    recover(out)
    tmp = Path(tempfile.mkdtemp(prefix=f".{out.name}.tmp-", dir=out.parent))
    umask = os.umask(0)
    os.umask(umask)
    os.chmod(tmp, 0o777 & ~umask)  # mkdtemp makes 0700; the output is an ordinary folder
    try:
        names = write_all(result, tmp)
        old = None
        if out.exists():
            old = Path(tempfile.mkdtemp(prefix=f".{out.name}.old-", dir=out.parent))
            old.rmdir()
            os.replace(out, old)
        os.replace(tmp, out)
    except BaseException:
        shutil.rmtree(tmp, ignore_errors=True)
        raise
    for p in _leftovers(out, "old") + _leftovers(out, "tmp"):
        shutil.rmtree(p, ignore_errors=True)
    return names
