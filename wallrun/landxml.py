"""Reading a LandXML 1.2 file into the profiles along the wall line (reading only).

What is read (element names of the LandXML 1.2 schema, namespace-aware with lxml):

- ``Units/Metric`` (``linearUnit`` meter, millimeter, centimeter or kilometer; every
  length and level is converted to m). ``Units/Imperial`` is refused.
- ``CoordinateSystem`` (``epsgCode`` or ``name``): the grid of the coordinates, kept
  for the model's georeference.
- ``Surfaces/Surface/Definition`` (``surfType="TIN"``): ``Pnts/P`` with an ``id`` and
  the text "northing easting elevation" (the order LandXML gives point coordinates in),
  ``Faces/F`` with the text of three point ids (faces with ``i="1"``, invisible, are
  left out; faces of zero plan area add nothing and are left out).
- ``Alignments/Alignment`` (``name``, ``staStart``) with ``CoordGeom``: ``Line``
  (``Start``, ``End``), ``Curve`` (``rot``, ``Start``, ``Center``, ``End``) and ``Spiral``
  (``rot``, ``length``, ``radiusStart``, ``radiusEnd`` with ``INF`` for a straight end,
  ``spiType`` clothoid, ``Start``, ``PI``, ``End``); points as "northing easting" text
  or a ``pntRef`` to a ``CgPoints/CgPoint``. Stations run from ``staStart`` along the
  elements (``StaEquation`` is refused). The geometry is :mod:`wallrun.alignment`.
- ``Alignment/Profile/ProfAlign`` (``name``): ``PVI``, ``ParaCurve`` (``length``) and
  ``CircCurve`` (``radius``, or ``length`` of arc) with the text "station elevation".

The wall line is the alignment at ``offset_m``. It is sampled (:func:`wall_line`) at
every element end, on curves at a spacing whose chords depart from it by at most
:data:`CHORD_TOLERANCE_M`, every ``station_step_m`` when given, and at every point
where it crosses a triangle edge of a surface read; each surface's level there is the
plane of its triangle (:class:`wallrun.tin.Tin`), so levels are exact along the
sampled line and linear between its breakpoints. Plan positions (x east, y north)
come with every point.

Readings (also in ``docs/basis-readings.md``): the range designed is the
alignment's, clipped to the ProfAlign's stations when the finished level is a
profile, and the surfaces must cover the wall line over all of it (no silent
clipping); a Spiral's start direction is Start to PI, else the end direction of the
element before it; a Spiral's End, a Curve's ``length`` and the joins between elements
must agree with the computed geometry within :data:`CLOSURE_TOLERANCE_M`; a ProfAlign
of parabolic curves is returned exactly as alignment points, one with a circular
curve sampled within :data:`CHORD_TOLERANCE_M`.

Every problem found is raised together as :class:`wallrun.errors.InputError`, each
naming the file, the line and the element.
"""

from __future__ import annotations

import math
from dataclasses import dataclass
from pathlib import Path

import numpy as np
from lxml import etree

from wallrun.alignment import Element, HorizontalAlignment, VerticalCurve, VerticalProfile
from wallrun.errors import InputError
from wallrun.settings import AlignmentPoint, ProfileData, ProfileFiles
from wallrun.tin import Tin

#: Namespaces read: LandXML 1.2 and the earlier versions whose elements read here are
#: the same.
NAMESPACES = ("http://www.landxml.org/schema/LandXML-1.2",
              "http://www.landxml.org/schema/LandXML-1.1",
              "http://www.landxml.org/schema/LandXML-1.0")
#: Metric linear units and their size in m.
LINEAR_UNITS = {"meter": 1.0, "millimeter": 0.001, "centimeter": 0.01, "kilometer": 1000.0}
#: The sampled wall line departs from the true offset curve by at most this, m (levels
#: are linear along the chords; a 1 in 1 ground slope then errs by at most 0.5 mm).
CHORD_TOLERANCE_M = 0.0005
#: Largest gap between the end of an element as computed and the start of the next, or
#: its own End point, m; more is refused as a broken alignment.
CLOSURE_TOLERANCE_M = 0.05


@dataclass(frozen=True)
class LandXMLProfiles:
    """What a LandXML source gives the site: the ground profile, the finished level (a
    sampled profile, or the PVIs of a parabolic ProfAlign), the coordinate reference
    system's name ("" when the file names none) and warnings."""

    ground: ProfileData
    finished: ProfileData | None
    alignment: tuple[AlignmentPoint, ...] | None
    crs: str = ""
    warnings: tuple[str, ...] = ()


class _Bad(Exception):
    """One problem that stops reading the element it is found in."""


class _Reader:
    def __init__(self, label: str, root, ns: str):
        self.label = label
        self.root = root
        self.ns = ns
        self.scale = 1.0
        self.problems: list[str] = []
        self.warnings: list[str] = []
        self._cg: dict[str, str] | None = None

    # --- messages and small readers ----------------------------------------------------
    def q(self, name: str) -> str:
        return f"{{{self.ns}}}{name}"

    def at(self, el) -> str:
        line = getattr(el, "sourceline", None)
        return f"{self.label}:{line}" if line else self.label

    def bad(self, el, what: str, msg: str) -> _Bad:
        return _Bad(f"{self.at(el)}: {what}: {msg}")

    def numbers(self, el, what: str, n: int | tuple[int, ...], names: str) -> list[float]:
        """The whitespace-separated numbers of ``el``'s text (n of them, or any count in
        a tuple), finite, scaled to m."""
        parts = (el.text or "").split()
        counts = n if isinstance(n, tuple) else (n,)
        if len(parts) not in counts:
            raise self.bad(el, what, f"expected {names}, got {len(parts)} value"
                           f"{'' if len(parts) == 1 else 's'} '{(el.text or '').strip()}'")
        out = []
        for p in parts:
            try:
                v = float(p)
            except ValueError:
                raise self.bad(el, what, f"'{p}' is not a number") from None
            if not math.isfinite(v):
                raise self.bad(el, what, f"'{p}' is not a finite number")
            out.append(v * self.scale)
        return out

    def attr(self, el, what: str, name: str, required: bool = True, inf: bool = False,
             scale: bool = True) -> float | None:
        raw = el.get(name)
        if raw is None:
            if required:
                raise self.bad(el, what, f"attribute {name} is missing")
            return None
        try:
            v = float(raw)
        except ValueError:
            raise self.bad(el, what, f"{name}=\"{raw}\" is not a number") from None
        if math.isnan(v) or (math.isinf(v) and not inf):
            raise self.bad(el, what, f"{name}=\"{raw}\" is not a finite number")
        return v * self.scale if scale and math.isfinite(v) else v

    def point(self, el, what: str) -> tuple[float, float]:
        """(x east, y north) of a point element: its text "northing easting
        [elevation]" or its pntRef to a CgPoint."""
        ref = el.get("pntRef")
        if ref is not None and not (el.text or "").strip():
            if self._cg is None:
                self._cg = {p.get("name"): p for p in self.root.iter(self.q("CgPoint"))
                            if p.get("name") is not None}
            target = self._cg.get(ref)
            if target is None:
                raise self.bad(el, what, f"pntRef=\"{ref}\" names no CgPoint of the file")
            el = target
        n, e, *_ = self.numbers(el, what, (2, 3), "'northing easting' or "
                                                  "'northing easting elevation'")
        return e, n

    # --- units and coordinate system ---------------------------------------------------
    def units(self) -> None:
        u = self.root.find(self.q("Units"))
        if u is None:
            raise _Bad(f"{self.label}: no <Units> element: the units of the file are "
                       "unknown; wallrun reads metric LandXML (Units/Metric)")
        metric, imperial = u.find(self.q("Metric")), u.find(self.q("Imperial"))
        if metric is None:
            if imperial is not None:
                raise self.bad(imperial, "Units/Imperial",
                               f"imperial units (linearUnit=\"{imperial.get('linearUnit', '')}\")"
                               ": wallrun reads metric LandXML only; export the file in metres")
            raise self.bad(u, "Units", "no Metric element: wallrun reads metric LandXML only")
        lin = metric.get("linearUnit", "meter")
        if lin not in LINEAR_UNITS:
            raise self.bad(metric, "Units/Metric", f"linearUnit=\"{lin}\" is not one of "
                           + ", ".join(LINEAR_UNITS))
        elev = metric.get("elevationUnit")
        if elev is not None and elev not in ("meter", "kilometer"):
            raise self.bad(metric, "Units/Metric",
                           f"elevationUnit=\"{elev}\": wallrun reads metric levels only")
        self.scale = LINEAR_UNITS[lin]

    def crs(self) -> str:
        c = self.root.find(self.q("CoordinateSystem"))
        if c is None:
            return ""
        epsg = (c.get("epsgCode") or "").strip()
        if epsg:
            return epsg if epsg.upper().startswith("EPSG") else f"EPSG:{epsg}"
        return (c.get("name") or c.get("desc") or "").strip()

    # --- surfaces ----------------------------------------------------------------------
    def surface(self, name: str, key: str) -> Tin:
        found = [s for s in self.root.iter(self.q("Surface")) if s.get("name") == name]
        if not found:
            names = [s.get("name") or "(unnamed)" for s in self.root.iter(self.q("Surface"))]
            raise _Bad(f"{self.label}: no Surface named '{name}' ([profiles] {key}); the file "
                       + (f"has Surface {', '.join(repr(n) for n in names)}" if names
                          else "has no Surface"))
        s = found[0]
        what = f"Surface '{name}'"
        d = s.find(self.q("Definition"))
        if d is None:
            raise self.bad(s, what, "no Definition element")
        if d.get("surfType", "TIN").upper() != "TIN":
            raise self.bad(d, f"{what} Definition", f"surfType=\"{d.get('surfType')}\": "
                           "wallrun reads triangulated (TIN) surfaces only")
        pnts = d.find(self.q("Pnts"))
        faces = d.find(self.q("Faces"))
        if pnts is None or faces is None:
            raise self.bad(d, f"{what} Definition", "needs both Pnts and Faces")
        ids: dict[str, int] = {}
        xyz = []
        errors = []
        for p in pnts.iter(self.q("P")):
            pid = (p.get("id") or "").strip()
            if not pid:
                errors.append(f"{self.at(p)}: {what} P: attribute id is missing")
                continue
            if pid in ids:
                errors.append(f"{self.at(p)}: {what} P id={pid}: the id repeats an earlier P")
                continue
            try:
                n, e, z = self.numbers(p, f"{what} P id={pid}", 3,
                                       "'northing easting elevation'")
            except _Bad as b:
                errors.append(str(b))
                continue
            ids[pid] = len(xyz)
            xyz.append((e, n, z))
        tris = []
        for f in faces.iter(self.q("F")):
            if (f.get("i") or "0").strip() == "1":
                continue  # an invisible face: outside the surface
            parts = (f.text or "").split()
            if len(parts) != 3:
                errors.append(f"{self.at(f)}: {what} F: expected three point ids, got "
                              f"'{(f.text or '').strip()}'")
                continue
            missing = [x for x in parts if x not in ids]
            if missing:
                errors.append(f"{self.at(f)}: {what} F: point id"
                              f"{'s' if len(missing) > 1 else ''} {', '.join(missing)} "
                              "not among the Pnts of the surface")
                continue
            tris.append([ids[x] for x in parts])
        if errors:
            self.problems.extend(errors[:20])
            if len(errors) > 20:
                self.problems.append(f"{self.label}: {what}: {len(errors) - 20} more problems")
            raise _Bad("")
        if not tris:
            raise self.bad(faces, what, "no faces: the surface holds no triangle")
        a = np.asarray(xyz, dtype=float)
        t = np.asarray(tris, dtype=int)
        x, y = a[:, 0], a[:, 1]
        area2 = ((x[t[:, 1]] - x[t[:, 0]]) * (y[t[:, 2]] - y[t[:, 0]])
                 - (x[t[:, 2]] - x[t[:, 0]]) * (y[t[:, 1]] - y[t[:, 0]]))
        t = t[np.abs(area2) > 1e-9]
        if not len(t):
            raise self.bad(faces, what, "every face has zero plan area")
        return Tin(x=x, y=y, z=a[:, 2], triangles=t)

    # --- alignments --------------------------------------------------------------------
    def alignment_element(self, name: str):
        found = [a for a in self.root.iter(self.q("Alignment")) if a.get("name") == name]
        if not found:
            names = [a.get("name") or "(unnamed)" for a in self.root.iter(self.q("Alignment"))]
            raise _Bad(f"{self.label}: no Alignment named '{name}' ([profiles] alignment); "
                       "the file " + (f"has Alignment {', '.join(repr(n) for n in names)}"
                                      if names else "has no Alignment"))
        return found[0]

    def horizontal(self, al) -> HorizontalAlignment:
        name = al.get("name")
        what = f"Alignment '{name}'"
        sta0 = self.attr(al, what, "staStart")
        eq = al.find(self.q("StaEquation"))
        if eq is not None:
            raise self.bad(eq, what, "station equations (StaEquation) are not read: the "
                           "stations must run continuously along the alignment")
        cg = al.find(self.q("CoordGeom"))
        if cg is None:
            raise self.bad(al, what, "no CoordGeom element")
        elements: list[Element] = []
        prev_end = None
        for k, el in enumerate(cg, 1):
            if not isinstance(el.tag, str):
                continue
            tag = etree.QName(el).localname
            ewhat = f"{what} {tag} #{k}"
            if tag == "Line":
                e = self.line(el, ewhat)
            elif tag == "Curve":
                e = self.curve(el, ewhat)
            elif tag == "Spiral":
                e = self.spiral(el, ewhat, prev_end)
            else:
                raise self.bad(el, ewhat, "not read: wallrun reads Line, Curve and Spiral")
            if prev_end is not None:
                gap = math.hypot(e.x0 - prev_end[0], e.y0 - prev_end[1])
                if gap > CLOSURE_TOLERANCE_M:
                    raise self.bad(el, ewhat, f"starts {gap:.3f} m from the end of the "
                                   f"element before it; the alignment must be continuous")
            elements.append(e)
            prev_end = e.end()
        if not elements:
            raise self.bad(cg, what, "CoordGeom holds no Line, Curve or Spiral")
        h = HorizontalAlignment(elements=tuple(elements), sta_start=sta0, name=name)
        given = self.attr(al, what, "length", required=False)
        if given is not None and abs(given - (h.sta_end - sta0)) > CLOSURE_TOLERANCE_M:
            self.warnings.append(f"{self.at(al)}: {what}: length=\"{al.get('length')}\" "
                                 f"differs from the length of its elements "
                                 f"({h.sta_end - sta0:.3f} m); the elements are used")
        return h

    def line(self, el, what: str) -> Element:
        xs, ys = self.child_point(el, "Start", what)
        xe, ye = self.child_point(el, "End", what)
        L = math.hypot(xe - xs, ye - ys)
        if L <= 0:
            raise self.bad(el, what, "Start and End are the same point")
        return Element(xs, ys, math.atan2(ye - ys, xe - xs), L, name=what)

    def rot(self, el, what: str) -> float:
        r = el.get("rot")
        if r not in ("cw", "ccw"):
            raise self.bad(el, what, f"rot=\"{r or ''}\": must be \"cw\" or \"ccw\"")
        return 1.0 if r == "ccw" else -1.0

    def curve(self, el, what: str) -> Element:
        sign = self.rot(el, what)
        xs, ys = self.child_point(el, "Start", what)
        xc, yc = self.child_point(el, "Center", what)
        xe, ye = self.child_point(el, "End", what)
        rx, ry = xs - xc, ys - yc
        ex, ey = xe - xc, ye - yc
        R = math.hypot(rx, ry)
        if R <= 0:
            raise self.bad(el, what, "Start and Center are the same point")
        if abs(math.hypot(ex, ey) - R) > CLOSURE_TOLERANCE_M:
            raise self.bad(el, what, f"End is {math.hypot(ex, ey):.3f} m from the Center, "
                           f"Start {R:.3f} m: not one circle")
        a = math.atan2(rx * ey - ry * ex, rx * ex + ry * ey)
        sweep = (sign * a) % (2.0 * math.pi)
        if sweep <= 1e-12:
            raise self.bad(el, what, "Start and End are the same point")
        L = R * sweep
        given = self.attr(el, what, "length", required=False)
        if given is not None and abs(given - L) > CLOSURE_TOLERANCE_M:
            raise self.bad(el, what, f"length=\"{el.get('length')}\" but the arc from "
                           f"Start to End ({el.get('rot')}) is {L:.3f} m long")
        h0 = math.atan2(sign * rx, -sign * ry)  # the tangent: the radius turned by 90 deg
        return Element(xs, ys, h0, L, sign / R, sign / R, name=what)

    def spiral(self, el, what: str, prev_end) -> Element:
        sign = self.rot(el, what)
        kind = el.get("spiType", "clothoid")
        if kind != "clothoid":
            raise self.bad(el, what, f"spiType=\"{kind}\": wallrun reads clothoids only")
        L = self.attr(el, what, "length")
        if L <= 0:
            raise self.bad(el, what, f"length=\"{el.get('length')}\" must be > 0")
        k = []
        for name in ("radiusStart", "radiusEnd"):
            r = self.attr(el, what, name, inf=True)
            if r <= 0:
                raise self.bad(el, what, f"{name}=\"{el.get(name)}\" must be > 0 (INF "
                               "for a straight end)")
            k.append(0.0 if math.isinf(r) else sign / r)
        xs, ys = self.child_point(el, "Start", what)
        pi = el.find(self.q("PI"))
        if pi is not None:
            xp, yp = self.point(pi, what + " PI")
            if math.hypot(xp - xs, yp - ys) <= 0:
                raise self.bad(el, what, "PI and Start are the same point")
            h0 = math.atan2(yp - ys, xp - xs)
        elif prev_end is not None:
            h0 = prev_end[2]
        else:
            raise self.bad(el, what, "the first element of the alignment needs a PI to "
                           "give its start direction")
        e = Element(xs, ys, h0, L, k[0], k[1], name=what)
        end = el.find(self.q("End"))
        if end is not None:
            xe, ye = self.point(end, what + " End")
            x1, y1, _ = e.end()
            d = math.hypot(x1 - xe, y1 - ye)
            if d > CLOSURE_TOLERANCE_M:
                raise self.bad(el, what, f"the clothoid from Start with this length and "
                               f"radii ends {d:.3f} m from its End point")
        return e

    def child_point(self, el, tag: str, what: str) -> tuple[float, float]:
        c = el.find(self.q(tag))
        if c is None:
            raise self.bad(el, what, f"no {tag} element")
        return self.point(c, f"{what} {tag}")

    # --- vertical profile --------------------------------------------------------------
    def profile(self, al, name: str) -> VerticalProfile:
        what = f"ProfAlign '{name}'"
        profs = [p for p in al.iter(self.q("ProfAlign"))]
        found = [p for p in profs if p.get("name") == name]
        if not found:
            names = [p.get("name") or "(unnamed)" for p in profs]
            raise _Bad(f"{self.at(al)}: Alignment '{al.get('name')}': no ProfAlign named "
                       f"'{name}' ([profiles] finished_profile); the alignment "
                       + (f"has ProfAlign {', '.join(repr(n) for n in names)}" if names
                          else "has no ProfAlign"))
        pa = found[0]
        sta, lev, curves, els = [], [], [], []
        for el in pa:
            if not isinstance(el.tag, str):
                continue
            tag = etree.QName(el).localname
            ewhat = f"{what} {tag}"
            if tag not in ("PVI", "ParaCurve", "CircCurve"):
                raise self.bad(el, ewhat, "not read: wallrun reads PVI, ParaCurve and "
                               "CircCurve")
            s, z = self.numbers(el, ewhat, 2, "'station elevation'")
            curve = None
            if tag == "ParaCurve":
                L = self.attr(el, ewhat, "length")
                if L <= 0:
                    raise self.bad(el, ewhat, f"length=\"{el.get('length')}\" must be > 0")
                curve = VerticalCurve(s, z, "parabola", length=L)
            elif tag == "CircCurve":
                R = self.attr(el, ewhat, "radius", required=False)
                L = self.attr(el, ewhat, "length", required=False)
                if (R is None or R <= 0) and (L is None or L <= 0):
                    raise self.bad(el, ewhat, "needs radius (or length) > 0")
                curve = VerticalCurve(s, z, "circle", length=L or 0.0, radius=R or 0.0)
            sta.append(s)
            lev.append(z)
            curves.append(curve)
            els.append((el, ewhat))
        if len(sta) < 2:
            raise self.bad(pa, what, f"needs at least two points, found {len(sta)}")
        for i in range(1, len(sta)):
            if sta[i] <= sta[i - 1]:
                raise self.bad(els[i][0], els[i][1], f"station {sta[i]:g} is not greater "
                               f"than the previous point's {sta[i - 1]:g}")
        for i in (0, len(sta) - 1):
            if curves[i] is not None:
                raise self.bad(els[i][0], els[i][1], "the first and last points of a "
                               "ProfAlign carry no curve")
        g = np.diff(lev) / np.diff(sta)
        for i, c in enumerate(curves):
            if c is not None and c.kind == "circle" and c.radius <= 0:
                turn = abs(math.atan(g[i]) - math.atan(g[i - 1]))
                if turn <= 0:
                    raise self.bad(els[i][0], els[i][1], "no change of grade: no curve")
                curves[i] = VerticalCurve(c.sta, c.level, "circle", length=c.length,
                                          radius=c.length / turn)
        vp = VerticalProfile(np.asarray(sta), np.asarray(lev), tuple(curves))
        prev = sta[0]
        for i, c in enumerate(curves):
            if c is None:
                continue
            a, b = vp.curve_ends(i)
            if a < prev - 1e-9:
                raise self.bad(els[i][0], els[i][1], f"the curve starts at station {a:.3f}, "
                               f"before the end of the previous curve or point ({prev:.3f})")
            if b > sta[i + 1] + 1e-9:
                raise self.bad(els[i][0], els[i][1], f"the curve ends at station {b:.3f}, "
                               f"beyond the next point ({sta[i + 1]:.3f})")
            prev = b
        return vp


def _read_root(path: Path, label: str):
    parser = etree.XMLParser(resolve_entities=False, no_network=True, huge_tree=True,
                             remove_comments=True, remove_pis=True)
    try:
        tree = etree.parse(str(path), parser)
    except etree.XMLSyntaxError as e:
        raise InputError(f"{label}:{e.lineno}: not well-formed XML: {e.msg}") from None
    except OSError as e:
        raise InputError(f"{label}: cannot be read ({e.strerror or e})") from None
    root = tree.getroot()
    qn = etree.QName(root)
    if qn.localname != "LandXML" or qn.namespace not in NAMESPACES:
        raise InputError(f"{label}:{root.sourceline}: the root element is <{root.tag}>; "
                         f"expected <LandXML> in the namespace {NAMESPACES[0]}")
    return root, qn.namespace


def wall_line(h: HorizontalAlignment, offset: float, lo: float, hi: float,
              step: float) -> np.ndarray:
    """Stations at which the wall line is sampled before the edge crossings are added:
    every element end and the chord-tolerance spacing on curves
    (:meth:`HorizontalAlignment.sample_stations`) and every multiple of ``step`` (m)
    when step > 0, within [lo, hi]."""
    parts = [h.sample_stations(offset, CHORD_TOLERANCE_M, lo, hi)]
    if step > 0:
        k0, k1 = math.ceil(lo / step - 1e-9), math.floor(hi / step + 1e-9)
        parts.append(np.arange(k0, k1 + 1) * step)
    s = np.concatenate(parts)
    s = np.unique(s[(s >= lo) & (s <= hi)])
    return _merge_close(s)


def _merge_close(s: np.ndarray, tol: float = 1e-9) -> np.ndarray:
    if s.size < 2:
        return s
    return s[np.concatenate([[True], np.diff(s) > tol])]


def _levels_along(tin: Tin, sta, base, bx, by):
    """Levels of ``tin`` at the stations ``sta`` of the wall line (positions linear
    between the ``base`` stations' points bx, by), and the first station where the line
    is off the surface (None when it never is): a breakpoint off it, or the breakpoint
    before a piece whose middle is off it (the piece crosses the surface's edge there:
    every edge crossing is a breakpoint)."""
    z = tin.level_at(np.interp(sta, base, bx), np.interp(sta, base, by))
    mid = 0.5 * (sta[:-1] + sta[1:])
    zm = tin.level_at(np.interp(mid, base, bx), np.interp(mid, base, by))
    off = [sta[k[0]] for k in (np.flatnonzero(np.isnan(z)), np.flatnonzero(np.isnan(zm)))
           if k.size]
    return z, (float(min(off)) if off else None)


def read_landxml(path, label: str, files: ProfileFiles) -> LandXMLProfiles:
    """Read the profiles along the wall line from the LandXML file ``path`` (``label``
    names it in messages) as ``files`` (the ``[profiles]`` settings) asks.

    Returns the ground as a :class:`ProfileData` with x, y at every breakpoint; the
    finished level as a ProfileData on the same breakpoints (a finished surface, or a
    ProfAlign with a circular curve, sampled within :data:`CHORD_TOLERANCE_M`) or as the
    PVIs of a ProfAlign of straight grades and parabolic curves (exact, with
    ``offset_m x finished_crossfall`` added to every level). Raises InputError.
    """
    root, ns = _read_root(Path(path), label)
    r = _Reader(label, root, ns)
    try:
        r.units()
    except _Bad as b:
        raise InputError(str(b)) from None
    crs = r.crs()
    ground = finished_tin = al = h = vp = None
    for key in ("ground_surface", "finished_surface"):
        name = getattr(files, key)
        if not name:
            continue
        try:
            tin = r.surface(name, key)
        except _Bad as b:
            if str(b):
                r.problems.append(str(b))
            continue
        if key == "ground_surface":
            ground = tin
        else:
            finished_tin = tin
    try:
        al = r.alignment_element(files.alignment)
        h = r.horizontal(al)
    except _Bad as b:
        r.problems.append(str(b))
    if al is not None and files.finished_profile:
        try:
            vp = r.profile(al, files.finished_profile)
        except _Bad as b:
            r.problems.append(str(b))
    if r.problems:
        raise InputError(r.problems)

    o = files.offset_m
    what = f"Alignment '{h.name}' at offset_m {o:g}"
    tight = h.tightest(o)
    if tight is not None and tight[0] <= 1e-6:
        raise InputError(f"{r.at(al)}: {what}: the wall line folds back on itself at station "
                         f"{tight[1]:.3f}: the offset reaches the centre of the curve there")
    lo, hi = h.sta_start, h.sta_end
    if vp is not None:
        lo, hi = max(lo, float(vp.sta[0])), min(hi, float(vp.sta[-1]))
        if not lo < hi:
            raise InputError(f"{r.at(al)}: {what}: ProfAlign '{files.finished_profile}' "
                             f"(stations {vp.sta[0]:.3f} to {vp.sta[-1]:.3f}) does not overlap "
                             f"the alignment (stations {h.sta_start:.3f} to {h.sta_end:.3f})")
    base = wall_line(h, o, lo, hi, files.station_step_m)
    bx, by = h.offset_xy(base, o)
    tins = [("ground_surface", ground)] + (
        [("finished_surface", finished_tin)] if finished_tin is not None else [])
    parts = [base]
    for _, tin in tins:
        i, t, _ = tin.crossings(bx, by)
        parts.append(base[i] + t * (base[i + 1] - base[i]))
    circles = vp is not None and any(c is not None and c.kind == "circle" for c in vp.curves)
    if circles:
        vs = vp.sample_stations(CHORD_TOLERANCE_M)
        parts.append(vs[(vs >= lo) & (vs <= hi)])
    sta = _merge_close(np.unique(np.concatenate(parts)))
    x, y = np.interp(sta, base, bx), np.interp(sta, base, by)
    levels = {}
    for key, tin in tins:
        z, leaves = _levels_along(tin, sta, base, bx, by)
        if leaves is not None:
            msg = (f"starts off the surface at station {leaves:.3f}" if np.isnan(z[0])
                   else f"leaves the surface at station {leaves:.3f}")
            raise InputError(f"{label}: Surface '{getattr(files, key)}' ([profiles] {key}): "
                             f"the wall line ({what}) {msg}; the surface must cover the wall "
                             f"line from station {lo:.3f} to {hi:.3f}")
        levels[key] = z
    src = f"{label} (Surface '{files.ground_surface}')"
    g = ProfileData(chainage_m=sta, level_m=levels["ground_surface"], x_m=x, y_m=y,
                    source=src)
    finished = None
    points = None
    if finished_tin is not None:
        finished = ProfileData(chainage_m=sta, level_m=levels["finished_surface"], x_m=x,
                               y_m=y, source=f"{label} (Surface '{files.finished_surface}')")
    else:
        shift = o * files.finished_crossfall
        fsrc = f"{label} (ProfAlign '{files.finished_profile}')"
        if circles:
            finished = ProfileData(chainage_m=sta, level_m=vp.level_at(sta) + shift, x_m=x,
                                   y_m=y, source=fsrc)
        else:
            points = tuple(AlignmentPoint(float(s), float(z) + shift,
                                          c.length if c is not None else 0.0)
                           for s, z, c in zip(vp.sta, vp.level, vp.curves))
    return LandXMLProfiles(ground=g, finished=finished, alignment=points, crs=crs,
                           warnings=tuple(r.warnings))


def read_alignment(path, label: str, name: str) -> HorizontalAlignment:
    """The horizontal alignment ``name`` of the LandXML file ``path`` (stations from its
    ``staStart``). Raises InputError naming the file and the element."""
    root, ns = _read_root(Path(path), label)
    r = _Reader(label, root, ns)
    try:
        r.units()
        return r.horizontal(r.alignment_element(name))
    except _Bad as b:
        raise InputError(str(b)) from None
