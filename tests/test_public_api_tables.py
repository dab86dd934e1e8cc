"""The tables, workbook, report and writer modules use their libraries' public names
only: no private name (``_x``) of openpyxl, xlsxwriter, jinja2, matplotlib or markupsafe,
no private module of theirs, no monkeypatching of them, and no ``exec`` or ``eval``
(read with ``ast``; the checker is shown to catch each case first)."""

from __future__ import annotations

import ast
from pathlib import Path

import pytest

ROOT = Path(__file__).resolve().parents[1] / "wallrun" / "outputs"
#: The modules of wallrun/outputs this check covers (the drawings have their own).
MODULES = sorted([ROOT / "tables.py", ROOT / "workbook.py", ROOT / "write.py",
                  ROOT / "stamp.py", *(ROOT / "report").glob("*.py")])
LIBRARIES = ("openpyxl", "xlsxwriter", "jinja2", "matplotlib", "markupsafe")


def _private(name: str) -> bool:
    return name.startswith("_") and not (name.startswith("__") and name.endswith("__"))


def problems(source: str) -> list[str]:
    """Each use of a library's private name, private module, a monkeypatch of a library
    object, or exec/eval/compile in ``source``."""
    tree = ast.parse(source)
    bound: set[str] = set()  # local names bound to a library or to a name from one
    out = []
    for node in ast.walk(tree):
        if isinstance(node, ast.Import):
            for a in node.names:
                root = a.name.split(".")[0]
                if root in LIBRARIES:
                    bound.add((a.asname or a.name).split(".")[0])
                    out += [f"private module {a.name}" for part in a.name.split(".")
                            if _private(part)]
        elif isinstance(node, ast.ImportFrom) and node.module:
            if node.module.split(".")[0] in LIBRARIES:
                out += [f"private module {node.module}" for part in node.module.split(".")
                        if _private(part)]
                for a in node.names:
                    if _private(a.name):
                        out.append(f"private name {node.module}.{a.name}")
                    bound.add(a.asname or a.name)
    # names and attributes that hold an object made by a library (env = Environment())
    changed = True
    while changed:
        changed = False
        for node in ast.walk(tree):
            if isinstance(node, (ast.Assign, ast.AnnAssign)) and node.value is not None and \
                    _rooted(node.value, bound):
                for t in (node.targets if isinstance(node, ast.Assign) else [node.target]):
                    for el in (t.elts if isinstance(t, ast.Tuple) else [t]):
                        key = ast.unparse(el)
                        if key not in bound:
                            bound.add(key)
                            changed = True
    for node in ast.walk(tree):
        if isinstance(node, ast.Call) and isinstance(node.func, ast.Name) and \
                node.func.id in ("exec", "eval", "compile"):
            out.append(f"{node.func.id}()")
        if isinstance(node, ast.Attribute) and _private(node.attr) and (
                _rooted(node, bound) or not _own(node.value)):
            # a private name of a library object; or of any object but the module's own
            # instance (self, cls): a parameter may hold a library's object
            out.append(f"private attribute .{node.attr}")
        targets = []
        if isinstance(node, (ast.Assign, ast.AugAssign, ast.AnnAssign)):
            targets = node.targets if isinstance(node, ast.Assign) else [node.target]
            targets = [t.value for t in targets if isinstance(t, ast.Attribute)]
        elif isinstance(node, ast.Call) and isinstance(node.func, ast.Name) and \
                node.func.id in ("setattr", "delattr") and node.args:
            targets = [node.args[0]]
        out += [f"patches {ast.unparse(t)}" for t in targets if _rooted(t, bound)]
    return out


def _own(node: ast.AST) -> bool:
    """``self`` or ``cls`` (the module's own instance or class)."""
    return isinstance(node, ast.Name) and node.id in ("self", "cls")


def _rooted(node: ast.AST, bound: set[str]) -> bool:
    """Whether an expression is, or is reached from, a name or attribute bound to a
    library or to an object one made (``plt.x.y``, ``self.wb.add_format()``)."""
    while True:
        if ast.unparse(node) in bound:
            return True
        if isinstance(node, ast.Call):
            node = node.func
        elif isinstance(node, (ast.Attribute, ast.Subscript)):
            node = node.value
        else:
            return False


@pytest.mark.parametrize("snippet, found", [
    ("import matplotlib\nmatplotlib._api.check()", "private attribute ._api"),
    ("from matplotlib.legend import Legend\nLegend._find_best_position(1)",
     "private attribute ._find_best_position"),
    ("from openpyxl.cell.cell import ILLEGAL_CHARACTERS_RE\nfrom openpyxl.writer import _x",
     "private name openpyxl.writer._x"),
    ("import matplotlib._path", "private module matplotlib._path"),
    ("from matplotlib.axes import Axes\nAxes.vlines = None", "patches Axes"),
    ("import xlsxwriter\nsetattr(xlsxwriter.Workbook, 'close', None)",
     "patches xlsxwriter.Workbook"),
    ("exec('1')", "exec()"),
    ("def place(leg, renderer):\n    return leg._legend_box.get_bbox(renderer)",
     "private attribute ._legend_box"),
    ("import jinja2\nenv = jinja2.Environment()\nenv._x", "private attribute ._x"),
    ("import xlsxwriter\nclass B:\n    def __init__(self):\n"
     "        self.wb = xlsxwriter.Workbook('x')\n        self.wb._write()",
     "private attribute ._write"),
    ("from matplotlib.figure import Figure\nfig = Figure()\nfig.canvas.draw = None",
     "patches fig.canvas"),
])
def test_the_checker_catches(snippet, found):
    assert found in problems(snippet)


def test_the_checker_passes_public_use():
    assert problems("import jinja2\nfrom matplotlib.figure import Figure\n"
                    "env = jinja2.Environment(autoescape=True)\nfig = Figure()\n"
                    "fig.savefig('x.png')\nclass A:\n    def _mine(self): pass\n"
                    "    def run(self): return self._mine()\nimport xlsxwriter\nclass B:\n    def __init__(self):\n"
                    "        self.wb = xlsxwriter.Workbook('x')\n"
                    "        self.bold = self.wb.add_format({})") == []


@pytest.mark.parametrize("path", MODULES, ids=lambda p: str(p.relative_to(ROOT)))
def test_public_names_only(path):
    assert problems(path.read_text(encoding="utf-8")) == []


def test_the_modules_are_found():
    names = {str(p.relative_to(ROOT)) for p in MODULES}
    assert {"tables.py", "workbook.py", "write.py", "report/render.py", "report/calc.py",
            "report/figures.py"} <= names
