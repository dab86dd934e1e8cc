"""Writing the output folder atomically.

Everything is written into a temporary folder beside the target and moved into place
only when complete, so a failed or killed run leaves the previous output untouched.
The inputs are only ever read. By default this process writes every file, one after
the other; a caller that owns a process pool (the command line's ``--jobs``) may pass
it as ``executor``, and the drawings (the slowest writer, with ``elevation.png``) are
then written by one of its workers, from what they read of the result
(``dxf.drawing_view``), while this process writes the rest: the same files either way,
each writer rendering the result alone. At 10 km the two shares take about 3.3 and
3.0 s once their libraries are loaded (the drawings about 2.9 s and the quick
look 0.4 s; ``model.ifc`` 1.5 s and the tables, workbook and report 1.4 s); the
command line loads them beforehand (:func:`load_writers` here, the drawings' in its
workers). No state is kept between calls, so two threads may
write two results at once (into two different folders).
"""

from __future__ import annotations

import os
import secrets
import shutil
from concurrent.futures import wait
from pathlib import Path

from wallrun.errors import InputError
from wallrun.results import DesignResult


def check_writable(out_dir) -> None:
    """Refuse, before any design work, an output folder that cannot be written."""
    out = Path(out_dir)
    if out.exists() and not out.is_dir():
        raise InputError(f"--out {out}: exists and is not a folder")
    probe = out.parent
    while not probe.exists():
        probe = probe.parent
    if not probe.is_dir() or not os.access(probe, os.W_OK | os.X_OK):
        raise InputError(f"--out {out}: cannot write in {probe}")
    if out.exists() and not os.access(out, os.W_OK | os.X_OK):
        raise InputError(f"--out {out}: folder is not writable")


def _write_text(path: Path, text: str) -> None:
    with open(path, "w", encoding="utf-8", newline="") as f:
        f.write(text)


def load_writers() -> None:
    """Import the writers :func:`write_all` runs in this process beside a worker (all
    but the drawings) and what their libraries load on first use: matplotlib (the
    report's long section, drawn by its Agg back end) and ifcopenshell with the api
    modules the model's frame is made with. Nothing of wallrun keeps them and no output
    depends on it; the first write of a process otherwise pays for them (about 0.5 s).
    The command line calls it while its workers finish their parts of the search."""
    import matplotlib.backends.backend_agg  # noqa: F401  (savefig's PNG)

    from wallrun.outputs import ifc, profiles_csv, report, tables, workbook  # noqa: F401


def write_all(result: DesignResult, folder: Path, executor=None) -> list[str]:
    """Write every output file of ``result`` into ``folder`` (which exists and is
    empty); returns the names written. Each writer renders ``result`` only and writes
    files of its own; ``executor`` (a ``concurrent.futures`` executor the caller owns,
    or None) writes the drawings meanwhile."""
    from wallrun.outputs import ifc, profiles_csv, report, tables, workbook
    from wallrun.outputs.dxf import drawing_view, write_drawings
    folder = Path(folder)
    # with a worker: the drawings and their quick look there (sent what they read of
    # the result), the rest here
    drawings = (None if executor is None
                else executor.submit(write_drawings, drawing_view(result), folder))
    try:
        for name, render in tables.TABLES.items():
            _write_text(folder / name, render(result))
        workbook.write_workbook(result, folder / "schedule.xlsx")
        if drawings is None:
            write_drawings(result, folder)
        report.write_report(result, folder / "report.html")
        profiles_csv.write_profiles_csv(result, folder / "profiles.csv")
        ifc.write_ifc(result, folder / "model.ifc")
    except BaseException:
        if drawings is not None:  # let the worker finish before the folder is removed
            wait([drawings])
        raise
    if drawings is not None:
        drawings.result()  # the worker's error, if any, is raised here
    return sorted(p.name for p in folder.iterdir())


def _leftovers(out: Path, kind: str) -> list[Path]:
    """Temporary siblings of ``out`` left by a run that was killed (``tmp`` or ``old``)."""
    return sorted(p for p in out.parent.glob(f".{out.name}.{kind}-*") if p.is_dir())


def _sibling(out: Path, kind: str) -> Path:
    """A new unused name ``.NAME.kind-XXXX`` beside ``out``."""
    while True:
        p = out.parent / f".{out.name}.{kind}-{secrets.token_hex(6)}"
        if not os.path.lexists(p):
            return p


def recover(out: Path) -> None:
    """Undo a swap that was killed half way: when ``out`` is missing and the previous
    output survives as ``.NAME.old-*``, put it back (the newest one)."""
    if out.exists():
        return
    olds = _leftovers(out, "old")
    if olds:
        newest = max(olds, key=lambda p: p.stat().st_mtime)
        os.replace(newest, out)


def write_outputs(result: DesignResult, out_dir, executor=None) -> list[str]:
    """Write the output folder atomically; returns the file names written.
    ``executor``: see :func:`write_all` (None: this process writes every file).

    The files go into ``.NAME.tmp-*`` beside the target (made with the permissions the
    process's umask gives an ordinary folder); the previous output is moved to
    ``.NAME.old-*``, the new one into place, and the old one removed. Leftovers of
    killed runs into the same target are recovered or removed (two writes into the
    same folder at the same time are not supported; into two folders they are).
    """
    out = Path(out_dir).resolve()
    out.parent.mkdir(parents=True, exist_ok=True)
    recover(out)
    while True:
        tmp = _sibling(out, "tmp")
        try:
            os.mkdir(tmp, 0o777)  # the umask applies, as to any new folder
            break
        except FileExistsError:
            continue
    try:
        names = write_all(result, tmp, executor)
        old = None
        if out.exists():
            old = _sibling(out, "old")
            os.replace(out, old)
        os.replace(tmp, out)
    except BaseException:
        shutil.rmtree(tmp, ignore_errors=True)
        raise
    for p in _leftovers(out, "old") + _leftovers(out, "tmp"):
        shutil.rmtree(p, ignore_errors=True)
    return names
