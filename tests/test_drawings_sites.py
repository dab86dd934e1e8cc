"""The drawings of the demo sites, read back with ezdxf.

Each demo site is designed once (module fixture); its drawings are written with
``wallrun.outputs.dxf.write_drawings`` and every DXF is read back with
``ezdxf.readfile`` and audited.
"""

from __future__ import annotations

from pathlib import Path

import ezdxf
import pytest

import wallrun
from wallrun.outputs.dxf import write_drawings
from wallrun.outputs.dxf.sections import BLOCK_PREFIX

SITES = Path(__file__).resolve().parent.parent / "sites"
NAMES = sorted(p.name for p in SITES.iterdir() if (p / "site.toml").exists())


@pytest.fixture(scope="module", params=NAMES)
def drawn(request, tmp_path_factory):
    result = wallrun.design(wallrun.load_site(SITES / request.param))
    out = tmp_path_factory.mktemp(request.param)
    names = write_drawings(result, out)
    return result, out, names


def test_every_dxf_reads_back_and_audits_clean(drawn):
    result, out, names = drawn
    dxfs = [n for n in names if n.endswith(".dxf")]
    assert {"elevation.dxf", "sections.dxf"} <= set(dxfs)
    if getattr(result.profiles, "plan_line", None) is not None:
        assert "plan.dxf" in dxfs
    for n in dxfs:
        doc = ezdxf.readfile(str(out / n))
        auditor = doc.audit()
        assert not auditor.has_errors, (n, [e.message for e in auditor.errors])


def test_sections_hold_every_type_and_use_blocks(drawn):
    result, out, _ = drawn
    doc = ezdxf.readfile(str(out / "sections.dxf"))
    msp = doc.modelspace()
    placed = [e.dxf.name for e in msp.query("INSERT")]
    want = [BLOCK_PREFIX + st.section_type for st in result.section_types
            if st.section_type in {pr.section_type for pr in result.panels}]
    assert sorted(placed) == sorted(want)
    # what repeats is inserted: level marks and bar dots, in every section block
    for name in want:
        blk = doc.blocks.get(name)
        inserts = blk.query("INSERT")
        assert len([e for e in inserts if e.dxf.name == "WALLRUN-LEVEL-MARK"]) >= 3
        assert len([e for e in inserts if e.dxf.name.startswith("WALLRUN-BAR-DOT-")]) >= 2
