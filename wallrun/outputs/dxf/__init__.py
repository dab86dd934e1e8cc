"""DXF drawings of a design: conventions, the developed elevation, the cross-sections,
the plan and the paper-space sheets, written through ezdxf's public API."""


def write_drawings(result, folder, quick_look: bool = True) -> list[str]:
    """Write every drawing of ``result`` into ``folder``: ``elevation.dxf``,
    ``sections.dxf``, and with plan coordinates ``plan.dxf`` and ``setting_out.csv``;
    then ``sheets.pdf`` (every sheet of the drawings), ``sections.pdf`` (the section
    sheets) and, with ``quick_look``, ``elevation.png`` (a quick look, drawn from the
    result alone). Returns the file names written."""
    from pathlib import Path

    from wallrun.outputs import previews
    from wallrun.outputs.dxf import elevation, plan, sections

    folder = Path(folder)
    docs = [elevation.write_elevation(result, folder / "elevation.dxf"),
            sections.write_sections(result, folder / "sections.dxf")]
    names = ["elevation.dxf", "sections.dxf"]
    plan_doc = plan.write_plan(result, folder / "plan.dxf")
    if plan_doc is not None:
        docs.append(plan_doc)
        with open(folder / "setting_out.csv", "w", encoding="utf-8", newline="") as f:
            f.write(plan.setting_out_csv(result))
        names += ["plan.dxf", "setting_out.csv"]
    return names + previews.write_previews(result, docs, folder, quick_look)
