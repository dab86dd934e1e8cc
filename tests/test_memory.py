"""The command line's process tuning (``wallrun.cli.tune_collector``, ``tune_process``):
it takes and may be repeated; the library never tunes its host process, and nothing
reaches into the C allocator."""

import ast
import sys
from pathlib import Path


from wallrun import cli


def test_collector_tuning_takes_and_repeats():
    import gc
    before = gc.get_threshold()
    try:
        assert cli.tune_collector() == cli.GC_THRESHOLDS == gc.get_threshold()
        cli.tune_process()
        assert gc.get_threshold() == cli.GC_THRESHOLDS
        assert gc.isenabled()  # the collector still runs, less often
    finally:
        gc.set_threshold(*before)


def test_no_process_tuning_in_the_library():
    """Only the command line touches the collector or processes: no module of the
    package but cli.py imports multiprocessing or gc, and none (cli.py included)
    reaches into C libraries through ctypes."""
    root = Path(cli.__file__).parent
    found = []
    for path in sorted(root.rglob("*.py")):
        banned = ("ctypes",) if path.name == "cli.py" else ("ctypes", "multiprocessing", "gc")
        for node in ast.walk(ast.parse(path.read_text(encoding="utf-8"))):
            names = []
            if isinstance(node, ast.Import):
                names = [a.name for a in node.names]
            elif isinstance(node, ast.ImportFrom) and node.module:
                names = [node.module]
            found += [(path.name, n) for n in names if n.split(".")[0] in banned]
    assert found == []


def test_result_frozen_keeps_the_objects_out_of_collection_within_it_only():
    import gc
    assert gc.get_freeze_count() == 0
    kept = [[] for _ in range(1000)]
    with cli.result_frozen():
        assert gc.get_freeze_count() >= len(kept)  # the objects existing on entering
        assert gc.isenabled()
    assert gc.get_freeze_count() == 0


def _env(name: str):
    import os
    return os.environ.get(name)


def test_workers_have_the_environment_of_when_the_pool_is_made(monkeypatch):
    # a fork server outlives the pools of a process: a worker forked from it takes the
    # caller's environment as it is when its pool is made (ReportLab dates the drawings'
    # PDF by SOURCE_DATE_EPOCH, which a test sets between two runs in one process)
    first = cli.worker_pool(2)
    try:
        assert first.submit(_env, "WALLRUN_TEST_MARK").result() is None
    finally:
        first.shutdown()
    monkeypatch.setenv("WALLRUN_TEST_MARK", "set after the fork server started")
    second = cli.worker_pool(2)
    try:
        assert second.submit(_env, "WALLRUN_TEST_MARK").result() == \
            "set after the fork server started"
    finally:
        second.shutdown()


def _registered_fonts() -> set:
    from reportlab.pdfbase import pdfmetrics

    return set(pdfmetrics.getRegisteredFontNames())


def _loaded(name: str) -> bool:
    """Whether ``name`` is imported in the process running this (a pool's worker)."""
    return name in sys.modules


def _loaded_all(names) -> list[bool]:
    return [_loaded(n) for n in names]


def test_worker_pool_imports_the_drawing_writers_behind_its_first_task():
    # the command line's pool starts its worker at once, which imports the search
    # (cli.start_worker) before any task; it queues the drawing writers' imports behind
    # the first task it is handed (one worker: tasks run in the order given), so a
    # worker idle after its part of the search is ready to write the drawings
    pool = cli.worker_pool(2)
    try:
        assert isinstance(pool, cli.WorkerPool)
        # the first task: the search imported, the drawing writers not yet
        assert pool.submit(_loaded_all, ("wallrun.pipeline", "ezdxf")).result() == [True,
                                                                                  False]
        assert pool.submit(_loaded, "ezdxf").result() is True
        assert pool.submit(_loaded, "wallrun.outputs.sheets_pdf").result() is True
        # and the drawings' fonts are loaded there: ReportLab has both registered
        assert pool.submit(_registered_fonts).result() >= {"wallrun-DejaVuSans",
                                                           "wallrun-DejaVuSansMono"}
    finally:
        pool.shutdown()
    assert cli.worker_pool(1) is None


def test_load_writers_loads_the_writers_and_their_libraries():
    # what the command line loads while its workers search (a fresh interpreter: this
    # one has imported most of it already)
    import subprocess

    code = ("import sys; from wallrun.outputs.write import load_writers; load_writers(); "
            "names = ['wallrun.outputs.workbook', 'wallrun.outputs.report', "
            "'wallrun.outputs.ifc', 'matplotlib.figure', 'matplotlib.backends.backend_agg', "
            "'ifcopenshell.api.root', 'xlsxwriter', 'jinja2']; "
            "print([n for n in names if n not in sys.modules])")
    out = subprocess.run([sys.executable, "-c", code], capture_output=True, text=True,
                         check=True).stdout
    assert out.strip() == "[]"
