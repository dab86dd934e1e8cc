"""A second corpus of malformed site folders (tests/battery), unseen by the site reader's
own tests: every one is refused with exit 2 by ``check`` and by ``design``, with a
message naming the file and line or key, no traceback, nothing written, the folder
untouched. Plus: BOM and CRLF files are read like plain ones, and a fuzz of the
profile reader never escapes as anything but an InputError naming the file.
"""

from __future__ import annotations

from pathlib import Path

import pytest
from hypothesis import HealthCheck, given, settings
from hypothesis import strategies as st

from wallrun.cli import main
from wallrun.errors import InputError
from wallrun.site import load_site

BATTERY = Path(__file__).parent / "battery"
CASES = sorted(p for p in BATTERY.iterdir() if p.is_dir())
FILES = ("site.toml", "ground.csv", "finished.csv", "sections.csv", "rates.csv")


def snapshot(folder: Path) -> dict:
    """Every file below ``folder`` (symlinks as their target text): bytes and mtime."""
    out = {}
    for p in sorted(folder.rglob("*")):
        if p.is_symlink():
            out[str(p.relative_to(folder))] = ("link", str(p.readlink()))
        elif p.is_file():
            out[str(p.relative_to(folder))] = (p.stat().st_mtime_ns, p.read_bytes())
    return out


def expected(case: Path) -> list[str]:
    return [ln for ln in (case / "EXPECT").read_text(encoding="utf-8").splitlines()
            if ln and not ln.startswith("#")]


def test_battery_is_large_and_new():
    assert len(CASES) >= 25
    # kinds the first corpus lacks: no folder name shared with tests/malformed
    first = {p.name for p in (Path(__file__).parent / "malformed").iterdir()}
    assert not first & {p.name for p in CASES}


@pytest.mark.parametrize("case", CASES, ids=[p.name for p in CASES])
def test_battery_case(case, tmp_path, capsys):
    before = snapshot(case)
    want = expected(case)
    assert want, case
    assert main(["check", str(case)]) == 2
    err = capsys.readouterr().err
    for e in want:
        assert e in err, (e, err)
    assert "Traceback" not in err and "internal error" not in err
    # every problem line names a file of the site folder (with a line or a key)
    for line in err.splitlines()[:-1]:
        assert any(line.startswith(f) or f in line.split(":")[0] for f in FILES), line
    assert err.splitlines()[-1].endswith("nothing written")

    out = tmp_path / "out"
    assert main(["design", str(case), "--out", str(out), "--quiet"]) == 2
    err2 = capsys.readouterr().err
    for e in want:
        assert e in err2, (e, err2)
    assert "Traceback" not in err2 and "internal error" not in err2
    assert not out.exists() and not (case / "out").exists()
    assert not list(tmp_path.glob(".out.tmp-*"))
    assert snapshot(case) == before


# --- line endings and byte-order marks are read, not refused ---------------------------

TOML = """[project]
name = "Line ending case"

[profiles]
ground = "ground.csv"
finished = "finished.csv"

[wall]
min_retained_height_m = 0.4
"""
GROUND = "# invented survey\nchainage_m,level_m\n0,31.00\n9,30.80\n21,30.65\n35,31.10\n"
FINISHED = "chainage_m,level_m\n0,31.20\n14,32.30\n35,31.30\n"


def _site(tmp_path: Path, name: str, encode, toml_too: bool = True) -> Path:
    d = tmp_path / name
    d.mkdir()
    (d / "site.toml").write_bytes(encode(TOML) if toml_too else TOML.encode("utf-8"))
    for fn, text in (("ground.csv", GROUND), ("finished.csv", FINISHED)):
        (d / fn).write_bytes(encode(text))
    return d


@pytest.mark.parametrize("how", ["bom", "crlf", "bom+crlf", "cr"])
def test_bom_and_line_endings_read_like_plain(tmp_path, how):
    plain = load_site(_site(tmp_path, "plain", lambda t: t.encode("utf-8")))
    enc = {
        "bom": lambda t: ("\ufeff" + t).encode("utf-8"),
        "crlf": lambda t: t.replace("\n", "\r\n").encode("utf-8"),
        "bom+crlf": lambda t: ("\ufeff" + t.replace("\n", "\r\n")).encode("utf-8"),
        "cr": lambda t: t.replace("\n", "\r").encode("utf-8"),
    }[how]
    # TOML allows LF and CRLF only: CR-only line ends are tried on the CSV files
    other = load_site(_site(tmp_path, how, enc, toml_too=how != "cr"))
    assert (other.ground.chainage_m == plain.ground.chainage_m).all()
    assert (other.ground.level_m == plain.ground.level_m).all()
    assert (other.finished.level_m == plain.finished.level_m).all()
    assert other.ground.lines == plain.ground.lines == (3, 4, 5, 6)
    assert other.wall == plain.wall and other.project == plain.project


# --- fuzz: arbitrary profile text is read or refused, never a crash --------------------

_cell = st.one_of(st.floats(allow_nan=True, allow_infinity=True).map(repr),
                  st.integers(-10**6, 10**6).map(str),
                  st.text(alphabet=",;\t \"#x.e-+0123456789\r\u00e9\ufeff", max_size=8))


@settings(max_examples=40, deadline=None, suppress_health_check=[HealthCheck.function_scoped_fixture])
@given(header=st.sampled_from(["chainage_m,level_m", "chainage_m,level_m,x_m,y_m", "level_m,chainage_m",
                               "chainage_m;level_m", "", "chainage_m,level_m,level_m"]),
       rows=st.lists(st.lists(_cell, min_size=0, max_size=4), max_size=6),
       raw=st.binary(max_size=12))
def test_fuzz_profile_reader(tmp_path_factory, header, rows, raw):
    d = tmp_path_factory.mktemp("fuzz")
    (d / "site.toml").write_text(TOML, encoding="utf-8")
    (d / "finished.csv").write_text(FINISHED, encoding="utf-8")
    text = header + "\n" + "\n".join(",".join(r) for r in rows) + "\n"
    (d / "ground.csv").write_bytes(text.encode("utf-8") + raw)
    try:
        site = load_site(d)
    except InputError as e:
        assert e.problems
        for m in e.problems:
            assert "ground.csv" in m or "finished.csv" in m, m
        return
    # accepted: a proper profile
    ch = site.ground.chainage_m
    assert len(ch) >= 2 and (ch[1:] > ch[:-1]).all()
    assert all(abs(v) < float("inf") for v in site.ground.level_m)
