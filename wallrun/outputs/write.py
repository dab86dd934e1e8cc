"""Writing the output folder atomically.

Everything is written into a temporary folder beside the target and moved into place
only when complete, so a failed or killed run leaves the previous output untouched.
The inputs are only ever read.
"""

from __future__ import annotations

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


def write_all(result: DesignResult, folder: Path) -> list[str]:
    """Write every output file into ``folder`` (which exists and is empty)."""
    from wallrun.outputs import tables
    for name, render in tables.TABLES.items():
        _write_text(folder / name, render(result))
    from wallrun.outputs import workbook
    workbook.write_workbook(result, folder / "schedule.xlsx")
    from wallrun.outputs import dxf_elevation, dxf_plan, dxf_sections
    dxf_elevation.write_elevation(result, folder / "elevation.dxf")
    dxf_sections.write_sections(result, folder / "sections.dxf")
    dxf_plan.write_plan(result, folder / "plan.dxf")
    from wallrun.outputs import previews
    previews.write_previews(folder)
    from wallrun.outputs import report
    report.write_report(result, folder / "report.html")
    return sorted(p.name for p in folder.iterdir())


def write_outputs(result: DesignResult, out_dir) -> list[str]:
    """Write the output folder atomically; returns the file names written."""
    out = Path(out_dir).resolve()
    out.parent.mkdir(parents=True, exist_ok=True)
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
        if old is not None:
            shutil.rmtree(old, ignore_errors=True)
        return names
    except BaseException:
        shutil.rmtree(tmp, ignore_errors=True)
        raise
