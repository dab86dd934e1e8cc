"""Determinism (issue 10 item 4): two runs of the same site give byte-identical CSV and
JSON files, for each demo site.

The two runs are separate processes with different hash seeds (set and dict order of
strings differ between them), different working folders and differently named output
folders, started together so the six runs share the two cores.
"""

from __future__ import annotations

import os
import shutil
import subprocess
import sys
from pathlib import Path

import pytest

ROOT = Path(__file__).parent.parent
DEMOS = ["access-road-fill", "hillside-cut", "platform-edge"]


@pytest.fixture(scope="module")
def runs(tmp_path_factory):
    tmp = tmp_path_factory.mktemp("determinism")
    procs = {}
    for name in DEMOS:
        for k, seed in ((1, "1"), (2, "4242")):
            work = tmp / f"{name}-{k}"
            site = work / "site"
            shutil.copytree(ROOT / "sites" / name, site)
            out = work / f"result-{k}"
            env = dict(os.environ, PYTHONHASHSEED=seed)
            procs[(name, k)] = (subprocess.Popen(
                [sys.executable, "-m", "wallrun", "design", str(site), "--out", str(out),
                 "--quiet"], cwd=work, env=env, stdout=subprocess.DEVNULL,
                stderr=subprocess.PIPE), out)
    done = {}
    for key, (p, out) in procs.items():
        _, err = p.communicate(timeout=600)
        done[key] = (p.returncode, err.decode(), out)
    return done


def data(out: Path) -> dict[str, bytes]:
    return {p.name: p.read_bytes() for p in sorted(out.iterdir())
            if p.suffix in (".csv", ".json")}


@pytest.mark.parametrize("name", DEMOS)
def test_two_runs_byte_identical(runs, name):
    (rc1, err1, out1), (rc2, err2, out2) = runs[(name, 1)], runs[(name, 2)]
    assert rc1 == rc2 and rc1 in (0, 3), (err1, err2)
    a, b = data(out1), data(out2)
    assert {"panels.csv", "joints.csv", "sections.csv", "bar_schedule.csv", "quantities.csv",
            "cost.csv", "design.json"} <= set(a)
    assert sorted(a) == sorted(b)
    assert sorted(p.name for p in out1.iterdir()) == sorted(p.name for p in out2.iterdir())
    differ = [n for n in a if a[n] != b[n]]
    assert not differ, f"{name}: {differ} differ between two runs"
    # nothing of the run's own place (folders, seed) leaks into the data files
    for n, blob in a.items():
        assert b"result-1" not in blob and str(out1.parent).encode() not in blob, n


def test_jobs_2_same_files_as_jobs_1(tmp_path, monkeypatch):
    # --jobs 2 hands the bespoke searches to a process pool (forkserver or spawn): every
    # demand's design depends on that demand only, so the files are the same byte for
    # byte (the pool is used from the first batch here: PARALLEL_FROM lowered to 1); a
    # worker of the pool writes the drawings: the same file names, and the previews,
    # report, workbook and model the same bytes (their dates fixed by SOURCE_DATE_EPOCH,
    # the model's GlobalIds from the project and element; a DXF carries its own
    # creation time and GUIDs)
    from wallrun import pipeline
    from wallrun.cli import main
    monkeypatch.setattr(pipeline, "PARALLEL_FROM", 1)
    monkeypatch.setenv("SOURCE_DATE_EPOCH", "1700000000")
    site = tmp_path / "site"
    shutil.copytree(ROOT / "sites" / "hillside-cut", site)
    outs = []
    for jobs in (1, 2):
        out = tmp_path / f"out{jobs}"
        assert main(["design", str(site), "--out", str(out), "--quiet", "--jobs", str(jobs)]) in (0, 3)
        outs.append(out)
    a, b = data(outs[0]), data(outs[1])
    assert a and a == b
    assert sorted(p.name for p in outs[0].iterdir()) == sorted(p.name for p in outs[1].iterdir())
    for name in ("sheets.pdf", "sections.pdf", "elevation.png", "report.html", "schedule.xlsx",
                 "model.ifc"):
        assert (outs[0] / name).read_bytes() == (outs[1] / name).read_bytes(), name


def test_two_threads_design_and_write_as_one_after_the_other(tmp_path):
    # library calls keep no state between calls and fork nothing: two sites designed and
    # written in two threads at once give the files of one after the other
    import threading

    import wallrun
    sites = [wallrun.load_site(ROOT / "sites" / n) for n in ("hillside-cut", "platform-edge")]
    seq = []
    for k, s in enumerate(sites):
        wallrun.write_outputs(wallrun.design(s), tmp_path / f"seq{k}")
        seq.append(data(tmp_path / f"seq{k}"))

    def run(k, s):
        wallrun.write_outputs(wallrun.design(s), tmp_path / f"par{k}")

    ts = [threading.Thread(target=run, args=(k, s)) for k, s in enumerate(sites)]
    for t in ts:
        t.start()
    for t in ts:
        t.join()
    for k in range(2):
        assert data(tmp_path / f"par{k}") == seq[k]


def test_height_ranges_cut_the_batch_into_contiguous_parts_of_equal_work():
    """``--jobs N`` hands N ranges of retained height to the workers: every demand in
    exactly one part, the parts contiguous in height, their weights (``search_work`` of
    the heights) within one demand's weight of an equal share (invented heights)."""
    import numpy as np

    from wallrun.pipeline import height_ranges, search_work

    rng = np.random.default_rng(7)
    h = list(np.round(rng.uniform(0.5, 7.0, 301), 3))
    w = [search_work(x) for x in h]
    for parts in (1, 2, 3, 8):
        got = height_ranges(h, parts)
        assert 1 <= len(got) <= parts
        assert sorted(k for p in got for k in p) == list(range(len(h)))
        for a, b in zip(got[:-1], got[1:]):
            assert max(h[k] for k in a) <= min(h[k] for k in b)
        share = sum(w) / parts
        for p in got[:-1]:
            assert abs(sum(w[k] for k in p) - share) <= max(w) + 1e-9
        # the first part (this process's) may take more: first / (first + parts - 1)
        got = height_ranges(h, parts, first=1.5)
        assert sorted(k for p in got for k in p) == list(range(len(h)))
        if parts > 1:
            first = sum(w[k] for k in got[0])
            assert abs(first - 1.5 * sum(w) / (parts + 0.5)) <= max(w) + 1e-9


def test_solver_and_callers_work_run_while_the_workers_search(monkeypatch):
    """With an executor, a rationalised design loads the integer program's solver and
    then runs the caller's ``meanwhile`` once each, after this process's part of the
    parallel search and before the workers' parts are collected; the result is the
    same as without an executor, where ``meanwhile`` is not called (hillside-cut demo,
    the pool used from the first batch)."""
    from concurrent.futures import ThreadPoolExecutor

    from wallrun import pipeline
    from wallrun.site import load_site
    from wallrun.sizing import rationalise

    site = load_site(ROOT / "sites" / "hillside-cut")
    assert site.design.sections == "rationalised"
    events = []
    plain = pipeline.design(site, meanwhile=lambda: events.append("caller"))
    assert events == []
    monkeypatch.setattr(pipeline, "PARALLEL_FROM", 1)
    part = pipeline._bespoke_part
    monkeypatch.setattr(pipeline, "_bespoke_part",
                        lambda *a: events.append("part") or part(*a))
    monkeypatch.setattr(rationalise, "load_solver", lambda: events.append("solver"))
    class Collected:  # a future that notes when its result is collected
        def __init__(self, f):
            self.f = f

        def result(self):
            events.append("collected")
            return self.f.result()

        def cancel(self):
            return self.f.cancel()

    with ThreadPoolExecutor(1) as pool:
        orig = pool.submit
        pool.submit = lambda fn, *a: Collected(orig(fn, *a))
        got = pipeline.design(site, executor=pool,
                              meanwhile=lambda: events.append("caller"))
    assert events.count("solver") == 1 and events.count("caller") == 1
    k = events.index("solver")
    assert "part" in events[:k] and "collected" not in events[:k]
    assert events[k + 1] == "caller"
    strip = lambda r: [(p.panel, p.section, p.section_type, p.cost) for p in r.panels]  # noqa: E731
    assert strip(got) == strip(plain)
