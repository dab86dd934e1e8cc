"""DXF drawings of a design: conventions, the developed elevation, the cross-sections,
the plan and the paper-space sheets, written through ezdxf's public API."""

#: The checks of a panel the drawings read: the overall-stability entries, whose
#: critical circles the sections draw (:func:`wallrun.outputs.dxf.sections.slip_arc`).
DRAWN_CHECKS = frozenset({"overall"})


def drawing_view(result):
    """``result`` as the drawings read it: each panel's check listing cut to the
    entries of :data:`DRAWN_CHECKS` (nothing else of a listing is drawn; sections,
    levels, bars, types and governing values are read from elsewhere in the result).
    What is sent to a worker process that writes the drawings: at 10 km 3 MB to pickle
    instead of 17 MB, 0.06 s to unpickle instead of 0.6 s. The drawings of the view and
    of the whole result are the same (a test holds them to it)."""
    from dataclasses import replace

    return replace(result, panels=tuple(replace(pr, checks=pr.checks.named(DRAWN_CHECKS))
                                        for pr in result.panels))


def load_fonts() -> None:
    """Load the drawings' fonts (DejaVu Sans and DejaVu Sans Mono, the fonts of
    wallrun's text styles) into the caches the libraries keep for their process:
    ezdxf's font files (text widths, and the drawing add-on's text placement),
    ReportLab's font registry (``sheets.pdf``) and matplotlib's font cache
    (``elevation.png``). Nothing of wallrun keeps them and no output depends on it: the
    first drawing of a process otherwise loads them on its way, about 0.15 s; the
    command line's workers call this while they would wait for the design."""
    from ezdxf.fonts import fonts
    from matplotlib import font_manager

    from wallrun.outputs.dxf.conventions import Lettering
    from wallrun.outputs.sheets_pdf import Fonts

    Lettering()
    pdf_fonts = Fonts()
    pdf_fonts.get(None)
    pdf_fonts.get(fonts.get_font_face("DejaVuSansMono.ttf"))
    font_manager.get_font(font_manager.findfont(font_manager.FontProperties(
        family="DejaVu Sans")))


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
