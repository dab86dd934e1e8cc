"""Building LandXML 1.2 files for the tests with lxml (the element names of the schema).

Points are given as (x east, y north, z); the file writes them "northing easting
elevation", the order LandXML specifies.
"""

from __future__ import annotations

from lxml import etree

NS = "http://www.landxml.org/schema/LandXML-1.2"


def E(tag, attrib=None, text=None, *children):
    el = etree.Element(f"{{{NS}}}{tag}", {k: str(v) for k, v in (attrib or {}).items()},
                       nsmap={None: NS})
    if text is not None:
        el.text = text
    for c in children:
        el.append(c)
    return el


def ne(x: float, y: float) -> str:
    """The text of a 2-D point: "northing easting"."""
    return f"{float(y)!r} {float(x)!r}"


def grid_surface(name, xs, ys, z_of, drop=()):
    """A TIN over the grid xs x ys, two triangles a cell, level z_of(x, y); point ids
    from 1; ``drop`` lists cells (i, j) left out (a hole)."""
    pnts = E("Pnts")
    ids = {}
    k = 0
    for j, y in enumerate(ys):
        for i, x in enumerate(xs):
            k += 1
            ids[i, j] = k
            pnts.append(E("P", {"id": k}, f"{float(y)!r} {float(x)!r} {float(z_of(x, y))!r}"))
    faces = E("Faces")
    for j in range(len(ys) - 1):
        for i in range(len(xs) - 1):
            if (i, j) in drop:
                continue
            a, b, c, d = ids[i, j], ids[i + 1, j], ids[i + 1, j + 1], ids[i, j + 1]
            faces.append(E("F", None, f"{a} {b} {c}"))
            faces.append(E("F", None, f"{a} {c} {d}"))
    return E("Surface", {"name": name}, None,
             E("Definition", {"surfType": "TIN"}, None, pnts, faces))


def line(p0, p1):
    return E("Line", None, None, E("Start", None, ne(*p0)), E("End", None, ne(*p1)))


def curve(p0, centre, p1, rot, length=None):
    a = {"rot": rot}
    if length is not None:
        a["length"] = length
    return E("Curve", a, None, E("Start", None, ne(*p0)), E("Center", None, ne(*centre)),
             E("End", None, ne(*p1)))


def spiral(p0, pi, p1, length, r_start, r_end, rot):
    return E("Spiral", {"length": length, "radiusStart": r_start, "radiusEnd": r_end,
                        "rot": rot, "spiType": "clothoid"}, None,
             E("Start", None, ne(*p0)), E("PI", None, ne(*pi)), E("End", None, ne(*p1)))


def prof_align(name, items):
    """items: ("PVI", sta, z) or ("ParaCurve", sta, z, length) or ("CircCurve", sta, z,
    radius)."""
    pa = E("ProfAlign", {"name": name})
    for it in items:
        if it[0] == "PVI":
            pa.append(E("PVI", None, f"{float(it[1])!r} {float(it[2])!r}"))
        elif it[0] == "ParaCurve":
            pa.append(E("ParaCurve", {"length": it[3]}, f"{float(it[1])!r} {float(it[2])!r}"))
        else:
            pa.append(E("CircCurve", {"radius": it[3]}, f"{float(it[1])!r} {float(it[2])!r}"))
    return pa


def alignment(name, elements, sta_start=0.0, profiles=()):
    al = E("Alignment", {"name": name, "staStart": sta_start}, None,
           E("CoordGeom", None, None, *elements))
    if profiles:
        al.append(E("Profile", {"name": name + " profiles"}, None, *profiles))
    return al


def document(surfaces=(), alignments=(), linear_unit="meter", imperial=False, crs=None):
    root = E("LandXML", {"version": "1.2", "date": "2026-01-01", "time": "00:00:00"})
    units = E("Units")
    if imperial:
        units.append(E("Imperial", {"linearUnit": "USSurveyFoot", "areaUnit": "squareFoot",
                                    "volumeUnit": "cubicFeet"}))
    else:
        units.append(E("Metric", {"linearUnit": linear_unit, "areaUnit": "squareMeter",
                                  "volumeUnit": "cubicMeter"}))
    root.append(units)
    if crs is not None:
        root.append(E("CoordinateSystem", {"epsgCode": crs}))
    if surfaces:
        root.append(E("Surfaces", None, None, *surfaces))
    if alignments:
        root.append(E("Alignments", None, None, *alignments))
    return root


def write(root, path) -> None:
    etree.ElementTree(root).write(str(path), xml_declaration=True, encoding="UTF-8",
                                  pretty_print=True)
