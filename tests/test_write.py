"""Atomic writing of the output folder, in one process; two threads at once."""

from __future__ import annotations

import os
import re
import threading
from dataclasses import replace
from pathlib import Path

import pytest

from sample_result import sample_result
from wallrun.outputs import report, write
from wallrun.settings import Project

EXPECTED = {"bar_schedule.csv", "cost.csv", "design.json", "elevation.dxf", "elevation.png",
            "joints.csv", "panels.csv", "quantities.csv", "report.html", "schedule.xlsx",
            "sections.csv", "sections.dxf", "sections.pdf", "sheets.pdf", "profiles.csv",
            "model.ifc"}

#: What differs between two writes of the same result by the clock or by chance alone:
#: the DXF header's dates (Julian day numbers) and GUIDs, ezdxf's stamp, the PDF's dates,
#: the IFC file's time stamp and its GlobalIds (random, IFC's 22-character base 64).
VOLATILE = {".dxf": [re.compile(rb"(?m)^\s*\d{7}\.\d+\s*$"),
                     re.compile(rb"(?m)^\{[0-9A-F-]{36}\}\s*$"),
                     re.compile(rb"@ \d{4}-\d\d-\d\dT[0-9:.+]+")],
            ".pdf": [re.compile(rb"/(Creation|Mod)Date \(D:\d+Z?\)")],
            ".ifc": [re.compile(rb"\d{4}-\d\d-\d\dT\d\d:\d\d:\d\d[+-]\d\d:\d\d"),
                     re.compile(rb"'[0-9A-Za-z_$]{22}'")]}




#: A list of entity references of an IFC file (``(#4,#5,#3)``): ifcopenshell writes
#: the members of an IFC SET (the units of an IfcUnitAssignment) in an order that can
#: change from one process state to another; the test compares them as sets.
IFC_REFS = re.compile(rb"\((#\d+(?:,#\d+)+)\)")


def stable(name: str, data: bytes) -> bytes:
    for pattern in VOLATILE.get(Path(name).suffix, ()):
        data = pattern.sub(b"", data)
    if name.endswith(".ifc"):
        data = IFC_REFS.sub(lambda m: b"(" + b",".join(sorted(m.group(1).split(b","))) + b")",
                            data)
    return data


def first_difference(a: bytes, b: bytes):
    """The first line that differs between two files' texts (for the failure message)."""
    for k, (x, y) in enumerate(zip(a.split(b"\n"), b.split(b"\n"))):
        if x != y:
            return k, x[:160], y[:160]
    return len(a), len(b)


def results():
    """Two different invented results (tests/sample_result.py)."""
    a = sample_result()
    b = sample_result(with_plan=False, water_level_m=None)
    b = replace(b, site=replace(b.site, project=Project("Second sample wall", "WR-TEST-2")))
    return a, b


def files(folder):
    return {p.name: stable(p.name, p.read_bytes()) for p in sorted(folder.iterdir())}


def test_two_threads_write_the_same_files_as_one_after_the_other(tmp_path):
    a, b = results()
    write.write_outputs(a, tmp_path / "seq-a")
    write.write_outputs(b, tmp_path / "seq-b")
    errors = []

    def run(result, out):
        try:
            write.write_outputs(result, out)
        except BaseException as exc:  # reported below
            errors.append(exc)

    threads = [threading.Thread(target=run, args=(a, tmp_path / "par-a")),
               threading.Thread(target=run, args=(b, tmp_path / "par-b"))]
    for t in threads:
        t.start()
    for t in threads:
        t.join()
    assert errors == []
    for name in ("a", "b"):
        seq, par = files(tmp_path / f"seq-{name}"), files(tmp_path / f"par-{name}")
        assert set(seq) == set(par)
        assert set(seq) >= EXPECTED
        differ = [n for n in seq if seq[n] != par[n]]
        assert differ == [], (name, [first_difference(seq[n], par[n]) for n in differ])
    # and the two results really differ
    assert files(tmp_path / "seq-a")["design.json"] != files(tmp_path / "seq-b")["design.json"]


def test_a_failing_writer_fails_the_write_and_leaves_nothing(tmp_path, monkeypatch):
    def broken(result, path, *args, **kwargs):
        raise OSError("disk full (simulated)")

    monkeypatch.setattr(report, "write_report", broken)
    with pytest.raises(OSError, match="disk full"):
        write.write_outputs(sample_result(), tmp_path / "out")
    assert list(tmp_path.iterdir()) == []


@pytest.mark.parametrize("failing", ["drawings", "report"])
def test_with_an_executor_the_same_files_and_a_failure_leaves_nothing(tmp_path, monkeypatch,
                                                                     failing):
    # an executor the caller owns writes the drawings meanwhile: the same files as one
    # process; an error on either side fails the write, after the worker has finished,
    # and nothing is left
    from concurrent.futures import ThreadPoolExecutor

    from wallrun.outputs import dxf
    r = sample_result()
    write.write_outputs(r, tmp_path / "one")
    with ThreadPoolExecutor(1) as pool:
        write.write_outputs(r, tmp_path / "two", executor=pool)
    one, two = files(tmp_path / "one"), files(tmp_path / "two")
    assert set(one) == set(two) >= EXPECTED
    assert [n for n in one if one[n] != two[n]] == []

    def broken(*args, **kwargs):
        raise OSError("disk full (simulated)")

    monkeypatch.setattr(dxf if failing == "drawings" else report,
                        "write_drawings" if failing == "drawings" else "write_report", broken)
    with ThreadPoolExecutor(1) as pool, pytest.raises(OSError, match="disk full"):
        write.write_outputs(r, tmp_path / "three", executor=pool)
    assert sorted(p.name for p in tmp_path.iterdir()) == ["one", "two"]


@pytest.fixture
def quick(monkeypatch):
    """write_all replaced by one small file: for the tests of the folder handling."""
    def one_file(result, folder, executor=None):
        (folder / "panels.csv").write_text(result.site.project.name)
        return ["panels.csv"]

    monkeypatch.setattr(write, "write_all", one_file)


def test_previous_output_survives_a_failed_write(tmp_path, monkeypatch, quick):
    r = sample_result()
    write.write_outputs(r, tmp_path / "out")
    before = (tmp_path / "out" / "panels.csv").read_bytes()

    def broken(result, folder, executor=None):
        raise ValueError("renderer fault (simulated)")

    monkeypatch.setattr(write, "write_all", broken)
    with pytest.raises(ValueError):
        write.write_outputs(r, tmp_path / "out")
    assert (tmp_path / "out" / "panels.csv").read_bytes() == before
    assert sorted(p.name for p in tmp_path.iterdir()) == ["out"]


def test_the_folder_takes_the_umask(tmp_path, quick):
    old = os.umask(0o027)
    try:
        write.write_outputs(sample_result(), tmp_path / "out")
    finally:
        os.umask(old)
    assert (tmp_path / "out").stat().st_mode & 0o777 == 0o750


def test_a_killed_swap_is_recovered(tmp_path, quick):
    r = sample_result()
    write.write_outputs(r, tmp_path / "out")
    # a run killed between moving the old output aside and moving the new one in
    os.replace(tmp_path / "out", tmp_path / ".out.old-dead")
    os.mkdir(tmp_path / ".out.tmp-dead")
    write.recover(tmp_path / "out")
    assert (tmp_path / "out" / "panels.csv").exists()
    write.write_outputs(r, tmp_path / "out")
    assert sorted(p.name for p in tmp_path.iterdir()) == ["out"]
