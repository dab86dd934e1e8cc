"""DXF drawings of a design: conventions, the developed elevation, the cross-sections,
the plan and the paper-space sheets, written through ezdxf's public API."""


def write_drawings(result, folder) -> list[str]:
    """Write every drawing of ``result`` into ``folder``: ``elevation.dxf``,
    ``sections.dxf``, ``plan.dxf`` (when the profiles carry plan coordinates) and the
    previews ``elevation.png`` and ``sections.pdf``; returns the file names written."""
    from pathlib import Path

    from wallrun.outputs import previews
    from wallrun.outputs.dxf import elevation, plan, sections

    folder = Path(folder)
    elevation.write_elevation(result, folder / "elevation.dxf")
    doc = sections.write_sections(result, folder / "sections.dxf")
    names = ["elevation.dxf", "sections.dxf"]
    if plan.write_plan(result, folder / "plan.dxf"):
        names.append("plan.dxf")
    return names + previews.write_previews(result, doc, folder)
