"""No module of the wallrun package reaches into another library's private parts.

A static scan (``ast``) of every module under ``wallrun/`` for:

- ``from x import _name`` and imports of private modules (``x._y``) of a library;
- attribute access ``obj._name`` (or ``obj._name = ...``) where ``_name`` is not a name
  wallrun itself defines (a function, class, attribute or field of the package) and
  ``obj`` is not ``self`` / ``cls``: such a name can only belong to another library;
- ``.__dict__`` of anything but ``self`` (reading or writing another object's
  attributes behind its interface);
- ``exec(`` and ``eval(`` (code generated at run time);
- subclasses of a library class overriding one of that class's private methods.

Dunder names (``__init__``) are public protocol and allowed. The scan cannot know the
type of an object: a private name that wallrun also defines somewhere is taken as
wallrun's own, and ``.__dict__`` findings on wallrun's own dataclasses are listed in
:data:`REVIEWED`.
"""

from __future__ import annotations

import ast
from pathlib import Path

import pytest

PACKAGE = Path(__file__).resolve().parent.parent / "wallrun"
MODULES = sorted(PACKAGE.rglob("*.py"))

#: Files that still fail the scan on this branch, each owned by another change in
#: progress (the workbook, report and tables rewrite of the outputs issue, branch
#: ``report``). Their findings are expected failures until that change lands; every
#: other module must pass.
KNOWN: dict[str, str] = {}

#: Findings reviewed as wallrun's own objects, by module and source text: the
#: ``.__dict__`` of wallrun's frozen result dataclasses (``CheckEntry``,
#: ``SizedDesign``), which the scan cannot tell from another library's object.
REVIEWED: dict[str, set[str]] = {
    "wallrun/results.py": {"e.__dict__"},
    "wallrun/sizing.py": {"sd.__dict__", "d.__dict__"},
}


def _private(name: str) -> bool:
    return name.startswith("_") and not (name.startswith("__") and name.endswith("__"))


def _own_names() -> set[str]:
    """Every private name the package defines: functions, classes, module and class
    attributes, instance attributes set on self, dataclass fields."""
    names: set[str] = set()
    for path in MODULES:
        for node in ast.walk(ast.parse(path.read_text(encoding="utf-8"))):
            if isinstance(node, (ast.FunctionDef, ast.AsyncFunctionDef, ast.ClassDef)):
                names.add(node.name)
            elif isinstance(node, ast.Name) and isinstance(node.ctx, ast.Store):
                names.add(node.id)
            elif isinstance(node, ast.AnnAssign) and isinstance(node.target, ast.Name):
                names.add(node.target.id)
            elif (isinstance(node, ast.Attribute) and isinstance(node.ctx, ast.Store)
                  and isinstance(node.value, ast.Name) and node.value.id in ("self", "cls")):
                names.add(node.attr)
            elif isinstance(node, ast.arg):
                names.add(node.arg)
    return {n for n in names if _private(n)}


OWN = _own_names()


def _rel(p: Path) -> str:
    try:
        return p.relative_to(PACKAGE.parent).as_posix()
    except ValueError:
        return p.name


def _is_wallrun(module: str | None, level: int) -> bool:
    return level > 0 or (module or "").split(".")[0] == "wallrun"


def _library_attr(module: str, name: str, attr: str) -> bool:
    """Whether the library class ``module.name`` (or a base of it) defines ``attr``."""
    import importlib

    try:
        cls = getattr(importlib.import_module(module), name)
    except (ImportError, AttributeError):
        return True  # cannot tell: count it
    return any(attr in vars(k) for k in getattr(cls, "__mro__", ()))


def findings(path: Path) -> list[str]:
    """What the scan finds in one module, as ``line: message``."""
    tree = ast.parse(path.read_text(encoding="utf-8"))
    out = []
    reviewed = REVIEWED.get(_rel(path), set())
    foreign_bases: dict[str, tuple[str, str]] = {}  # alias -> (module, name)
    for node in ast.walk(tree):
        if isinstance(node, ast.ImportFrom) and not _is_wallrun(node.module, node.level):
            mod = node.module or ""
            if any(_private(p) for p in mod.split(".")):
                out.append(f"{node.lineno}: import from a private module {mod}")
            for a in node.names:
                if _private(a.name):
                    out.append(f"{node.lineno}: from {mod} import {a.name}")
                foreign_bases[a.asname or a.name] = (mod, a.name)
        elif isinstance(node, ast.Import):
            for a in node.names:
                if a.name.split(".")[0] != "wallrun" and any(
                        _private(p) for p in a.name.split(".")):
                    out.append(f"{node.lineno}: import of a private module {a.name}")
        elif isinstance(node, ast.Attribute):
            base = node.value
            is_self = isinstance(base, ast.Name) and base.id in ("self", "cls")
            if node.attr == "__dict__" and not is_self:
                if ast.unparse(node) in reviewed:
                    continue
                out.append(f"{node.lineno}: .__dict__ of another object")
            elif _private(node.attr) and not is_self and node.attr not in OWN:
                out.append(f"{node.lineno}: private attribute .{node.attr}")
        elif isinstance(node, ast.Call) and isinstance(node.func, ast.Name) and \
                node.func.id in ("exec", "eval"):
            out.append(f"{node.lineno}: {node.func.id}(")
    # private methods overridden in subclasses of library classes
    for node in ast.walk(tree):
        if isinstance(node, ast.ClassDef):
            bases = {b.id if isinstance(b, ast.Name) else getattr(b, "attr", "")
                     for b in node.bases}
            for b in sorted(bases & set(foreign_bases)):
                for item in node.body:
                    if (isinstance(item, ast.FunctionDef) and _private(item.name)
                            and _library_attr(*foreign_bases[b], item.name)):
                        out.append(f"{item.lineno}: overrides private {item.name} of {b}")
    return out


@pytest.mark.parametrize("path", MODULES, ids=_rel)
def test_no_private_names_of_other_libraries(path, request):
    if _rel(path) in KNOWN:
        request.applymarker(pytest.mark.xfail(reason=KNOWN[_rel(path)], strict=False))
    found = findings(path)
    assert not found, f"{_rel(path)}:\n" + "\n".join(found)


def test_the_scan_finds_what_it_looks_for(tmp_path):
    """The scan itself: each kind of finding on a small invented module."""
    src = '''
import ezdxf
from ezdxf.lldxf.tagwriter import _private_helper
from matplotlib._path import convert
from ezdxf.addons.drawing.matplotlib import MatplotlibBackend


def f(e, table, ax):
    v = e.dxf.__dict__
    h = table._entitydb_head_of_table
    ax._update_patch_limits = None
    exec("x = 1")
    return v, h


class B(MatplotlibBackend):
    def _get_z(self):
        return 0
'''
    p = tmp_path / "m.py"
    p.write_text(src)
    got = "\n".join(findings(p))
    for want in ("import _private_helper", "private module matplotlib._path", "__dict__",
                 "private attribute ._entitydb_head_of_table",
                 "private attribute ._update_patch_limits",
                 "exec(", "overrides private _get_z"):
        assert want in got, want
