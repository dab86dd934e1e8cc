"""The command line's allocator tuning (``wallrun.cli.tune_allocator``): it takes on glibc
Linux and may be repeated; the library never tunes its host process."""

import ast
import sys
from pathlib import Path

import pytest

from wallrun import cli


@pytest.mark.skipif(not sys.platform.startswith("linux"), reason="glibc mallopt only")
def test_tuning_takes_and_repeats():
    assert cli.tune_allocator() is True
    assert cli.tune_allocator() is True


def test_no_process_tuning_in_the_library():
    """Only the command line touches the allocator, the collector or processes: no
    module of the package but cli.py imports ctypes, multiprocessing or gc."""
    root = Path(cli.__file__).parent
    found = []
    for path in sorted(root.rglob("*.py")):
        if path.name == "cli.py":
            continue
        for node in ast.walk(ast.parse(path.read_text(encoding="utf-8"))):
            names = []
            if isinstance(node, ast.Import):
                names = [a.name for a in node.names]
            elif isinstance(node, ast.ImportFrom) and node.module:
                names = [node.module]
            found += [(path.name, n) for n in names
                      if n.split(".")[0] in ("ctypes", "multiprocessing", "gc")]
    assert found == []
