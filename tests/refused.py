"""The one check of a refused site folder, shared by the tests of the site readers."""

from __future__ import annotations

from pathlib import Path

from wallrun.cli import main


def snapshot(folder: Path) -> dict:
    return {str(p.relative_to(folder)): (p.stat().st_mtime_ns, p.read_bytes())
            for p in sorted(folder.rglob("*")) if p.is_file()}


def assert_refused(d: Path, out: Path, capsys, *fragments) -> str:
    """The site folder ``d`` fails `check` and `design` with exit 2, every fragment
    appears in the messages of both, no traceback, nothing is written to ``out`` and
    nothing in ``d`` changes. Returns the messages of `check`."""
    before = snapshot(d)
    assert main(["check", str(d)]) == 2
    err = capsys.readouterr().err
    for f in fragments:
        assert f in err, (f, err)
    assert "Traceback" not in err
    assert main(["design", str(d), "--out", str(out), "--quiet"]) == 2
    err2 = capsys.readouterr().err
    for f in fragments:
        assert f in err2
    assert not out.exists()
    assert snapshot(d) == before
    return err
