"""``model.ifc``: the wall as an IFC4 model, written with ifcopenshell.

Content: an ``IfcProject`` (the project's name; the caution and the list of what is not
checked in its description and in the property set ``Wallrun_Cautions``) and an
``IfcSite`` holding, per panel, an ``IfcWall`` (the stem) and an ``IfcFooting`` (base
and key, ``STRIP_FOOTING``), concrete of the site's strength class, each with

- a ``Body`` made of ``IfcExtrudedAreaSolid``: the panel's cross-section (design-basis
  section 2) extruded along the wall line; a sloped wall top is an
  ``IfcBooleanClippingResult`` of the stem with a half space through the top line;
- the property set ``Wallrun_PanelDesign``: panel, run, side, section type and
  dimensions, chainages, length along the wall line, levels, utilizations, governing
  check, status and reason;
- ``IfcElementQuantity``: ``Qto_WallBaseQuantities`` / ``Qto_FootingBaseQuantities``
  (length, width, height, volumes, side or cross-section area, from the take-off) and
  ``Wallrun_PanelQuantities`` (formwork, waterproofing, blinding areas).

Placement (model coordinates, m): with plan positions, x east and y north less a round
origin (``IfcMapConversion`` to an ``IfcProjectedCRS`` named by the survey, or "site
grid (unnamed)" for CSV coordinates); without them, x is the chainage along a straight
wall line and y = 0. Levels are the design levels. Each element's placement is the
panel's start point on the wall line at its founding level, its x axis along the wall.

Readings (also in ``docs/basis-readings.md``):

- The wall line is the front face of the stem; the toe lies in front of it, the heel
  behind. The retained side: on a LandXML site with a non-zero offset, towards the
  alignment for a fill wall (the road is the fill) and away from it for a cut wall
  (the hillside beyond the road is the cut); otherwise, not known from two profiles,
  on the left of increasing chainage (stated in the model).
- A panel follows a curved wall line as straight pieces between points on it, each
  departing from it by at most :data:`MODEL_CHORD_M`; each piece is an extrusion of
  the cross-section along its chord (the pieces meet on the wall line).
- Movement joints are gaps of :data:`JOINT_GAP_M` (a movement joint's filler width,
  common practice), half taken from each panel beside a joint; the quantities are
  the take-off's, measured through the joints, so a modelled volume is less than the
  scheduled one by gap / length (0.17 % for a 6 m panel between two joints).
"""

from __future__ import annotations

import math
import uuid

import numpy as np

from wallrun.outputs.tables import STRUCTURAL_CHECKS

#: The gap between neighbouring panels at a movement joint, m.
JOINT_GAP_M = 0.010
#: A straight piece of a panel departs from the curved wall line by at most this, m.
MODEL_CHORD_M = 0.010
PSET = "Wallrun_PanelDesign"
QTO_OWN = "Wallrun_PanelQuantities"
_GUID_NS = uuid.UUID("5b0f6f0e-8a53-4c55-9c1e-3f0f6f2a4d71")  # wallrun's own namespace


def retained_left(site, side: str) -> bool:
    """True when the retained side (the heel) lies on the left of increasing chainage.

    On a LandXML site with ``offset_m`` != 0 a fill wall retains towards the alignment
    and a cut wall away from it; otherwise the left is taken (the two profiles do not
    say which side the ground is retained on)."""
    pf = getattr(site, "profile_files", None)
    if pf is not None and pf.landxml and pf.offset_m != 0:
        toward = side == "fill"
        return toward == (pf.offset_m > 0)  # the alignment is on the left of a + offset
    return True


def stem_outline(toe: float, tb: float, t0: float, t1: float, hs: float, hd: float):
    """Stem cross-section (p, z) from the front face of the stem (p = 0, towards the
    retained side) and the underside of the base (z = 0), m: front face vertical, back
    face tapering from t0 at the top of the base (z = tb) to t1 at z = tb + hs, vertical
    above it, top at z = tb + hd (cut within the taper when hd < hs)."""
    if hd <= hs:
        t = t0 - (t0 - t1) * hd / hs
        pts = [(0.0, tb), (t0, tb), (t, tb + hd), (0.0, tb + hd)]
    else:
        pts = [(0.0, tb), (t0, tb), (t1, tb + hs), (t1, tb + hd), (0.0, tb + hd)]
    return _clean(pts)


def footing_outline(toe: float, B: float, tb: float, dk: float, wk: float):
    """Base and key cross-section (p, z) from the front face of the stem and the
    underside of the base, m: the base from p = -toe to B - toe, 0 <= z <= tb; the key
    below it from p = 0 to wk, down to z = -dk."""
    pts = [(-toe, 0.0)]
    if dk > 0 and wk > 0:
        pts += [(0.0, 0.0), (0.0, -dk), (wk, -dk), (wk, 0.0)]
    pts += [(B - toe, 0.0), (B - toe, tb), (-toe, tb)]
    return _clean(pts)


def _clean(pts):
    out = []
    for p in pts:
        if not out or abs(p[0] - out[-1][0]) > 1e-9 or abs(p[1] - out[-1][1]) > 1e-9:
            out.append((float(p[0]), float(p[1])))
    if len(out) > 1 and abs(out[0][0] - out[-1][0]) <= 1e-9 and abs(out[0][1] - out[-1][1]) <= 1e-9:
        out.pop()
    return out


class _Line:
    """The wall line in model coordinates: position at a length s along it."""

    def __init__(self, profiles):
        self.p = profiles
        self.plan = getattr(profiles, "plan_s", None) is not None
        if self.plan:
            self.ox = math.floor(float(np.min(profiles.plan_x)) / 100.0) * 100.0
            self.oy = math.floor(float(np.min(profiles.plan_y)) / 100.0) * 100.0
        else:
            self.ox = self.oy = 0.0

    def xy(self, s) -> np.ndarray:
        """(n, 2) model positions at lengths s along the wall line from ch_start."""
        s = np.atleast_1d(np.asarray(s, dtype=float))
        if not self.plan:
            return np.column_stack([self.p.ch_start + s, np.zeros_like(s)])
        x, y = self.p.xy_at(self.p.chainage_at(s))
        return np.column_stack([np.asarray(x) - self.ox, np.asarray(y) - self.oy])

    def pieces(self, a: float, b: float) -> np.ndarray:
        """Lengths a = s_0 < ... < s_n = b whose chords depart from the line by at most
        ``MODEL_CHORD_M`` (pieces halved until they do; at most 256)."""
        n = 1
        while True:
            s = np.linspace(a, b, n + 1)
            if not self.plan or n >= 256:
                return s
            worst = 0.0
            for s0, s1 in zip(s[:-1], s[1:]):
                q = self.xy(np.linspace(s0, s1, 17))
                d = q[-1] - q[0]
                c = math.hypot(*d)
                if c > 0:
                    off = np.abs((q[:, 0] - q[0, 0]) * d[1] - (q[:, 1] - q[0, 1]) * d[0]) / c
                    worst = max(worst, float(off.max()))
            if worst <= MODEL_CHORD_M:
                return s
            n *= 2


class _Model:
    def __init__(self, result):
        import ifcopenshell
        import ifcopenshell.api.aggregate
        import ifcopenshell.api.context
        import ifcopenshell.api.geometry
        import ifcopenshell.api.georeference
        import ifcopenshell.api.material
        import ifcopenshell.api.project
        import ifcopenshell.api.pset
        import ifcopenshell.api.root
        import ifcopenshell.api.spatial
        import ifcopenshell.api.unit
        import ifcopenshell.guid
        self.ifc = ifcopenshell
        self.api = ifcopenshell.api
        self.result = result
        self.f = ifcopenshell.api.project.create_file(version="IFC4")
        self.key = result.site.project.name + "/" + result.site.project.reference

    def guid(self, what: str) -> str:
        """A GlobalId that stays the same for the same project and element."""
        return self.ifc.guid.compress(uuid.uuid5(_GUID_NS, self.key + "/" + what).hex)

    def entity(self, ifc_class: str, name: str, what: str, **kw):
        e = self.api.root.create_entity(self.f, ifc_class=ifc_class, name=name, **kw)
        e.GlobalId = self.guid(what)
        return e

    # geometry items
    def point(self, v):
        return self.f.createIfcCartesianPoint(tuple(float(c) for c in v))

    def direction(self, v):
        return self.f.createIfcDirection(tuple(float(c) for c in v))

    def axes(self, origin, z, x):
        return self.f.createIfcAxis2Placement3D(self.point(origin), self.direction(z),
                                                self.direction(x))

    def extrusion(self, outline, origin, along, across, depth):
        """The closed outline (p, z) swept ``depth`` along the unit vector ``along`` from
        ``origin``, p running along ``across`` (horizontal unit vectors, element
        coordinates; the profile's y is up)."""
        pts = [self.f.createIfcCartesianPoint((p, z)) for p, z in outline]
        curve = self.f.createIfcPolyline(pts + [pts[0]])
        prof = self.f.createIfcArbitraryClosedProfileDef("AREA", None, curve)
        pos = self.axes(origin, (along[0], along[1], 0.0), (across[0], across[1], 0.0))
        return self.f.createIfcExtrudedAreaSolid(prof, pos, self.direction((0.0, 0.0, 1.0)),
                                                 float(depth))

    def clip_above(self, solid, point, normal):
        """``solid`` less the half space above the plane through ``point`` with the
        upward ``normal`` (the sloped top of a stem)."""
        n = np.asarray(normal, dtype=float)
        n = n / np.linalg.norm(n)
        ref = np.cross(n, (0.0, 0.0, 1.0))
        if np.linalg.norm(ref) < 1e-12:
            ref = np.array([1.0, 0.0, 0.0])
        plane = self.f.createIfcPlane(self.axes(point, n, ref / np.linalg.norm(ref)))
        half = self.f.createIfcHalfSpaceSolid(plane, False)  # material below the plane
        return self.f.createIfcBooleanClippingResult("DIFFERENCE", solid, half)


def write_ifc(result, path) -> None:
    """Write ``model.ifc`` of ``result`` (a ``DesignResult``) to ``path``."""
    from wallrun.cautions import CAUTION, not_checked

    m = _Model(result)
    f, api = m.f, m.api
    site_s = result.site
    proj = m.entity("IfcProject", site_s.project.name, "project")
    proj.LongName = site_s.project.reference or None
    proj.Description = CAUTION
    api.unit.assign_unit(f, length={"is_metric": True, "raw": "METERS"},
                         area={"is_metric": True, "raw": "SQUARE_METERS"},
                         volume={"is_metric": True, "raw": "CUBIC_METERS"})
    model = api.context.add_context(f, context_type="Model")
    body = api.context.add_context(f, context_type="Model", context_identifier="Body",
                                   target_view="MODEL_VIEW", parent=model)
    line = _Line(result.profiles)
    site = m.entity("IfcSite", site_s.project.name, "site")
    api.aggregate.assign_object(f, products=[site], relating_object=proj)
    api.geometry.edit_object_placement(f, product=site)
    if line.plan:
        crs = site_s.crs or "site grid (unnamed)"
        api.georeference.add_georeferencing(f, ifc_class="IfcMapConversion", name=crs)
        api.georeference.edit_georeferencing(
            f, coordinate_operation={"Eastings": line.ox, "Northings": line.oy,
                                     "OrthogonalHeight": 0.0, "XAxisAbscissa": 1.0,
                                     "XAxisOrdinate": 0.0, "Scale": 1.0},
            projected_crs={"Name": crs, "Description": "the grid of the survey's x (east) "
                           "and y (north) coordinates; levels are the design levels"})
        where = (f"Model x, y: the survey grid ({crs}) less ({line.ox:g}, {line.oy:g}) m "
                 "(IfcMapConversion)")
    else:
        where = "Model x: the chainage along a straight wall line (no plan positions given)"
    sides = {r.side for r in result.runs}
    side_rule = "; ".join(
        f"{s} runs retain on the {'left' if retained_left(site_s, s) else 'right'} of "
        "increasing chainage" for s in sorted(sides))
    if not (site_s.profile_files.landxml and site_s.profile_files.offset_m != 0):
        side_rule += " (assumed: the profiles do not say on which side the ground is retained)"
    cautions = api.pset.add_pset(f, product=proj, name="Wallrun_Cautions")
    api.pset.edit_pset(f, pset=cautions, properties={
        "Caution": f.createIfcText(CAUTION),
        "NotChecked": f.createIfcText("; ".join(not_checked(site_s))),
        "Placement": f.createIfcText(where),
        "RetainedSide": f.createIfcText(side_rule or "no wall"),
        "JointGap": f.createIfcPositiveLengthMeasure(JOINT_GAP_M)})

    concrete = api.material.add_material(f, name=f"Concrete {site_s.concrete.strength_class}",
                                         category="concrete")
    starts = {j.right for j in result.joints}
    ends = {j.left for j in result.joints}
    products = []
    for pr in result.panels:
        products.extend(_panel(m, body, line, pr, pr.panel.panel in starts,
                               pr.panel.panel in ends))
    if products:
        api.spatial.assign_container(f, products=products, relating_structure=site)
        api.material.assign_material(f, products=products, type="IfcMaterial",
                                     material=concrete)
    f.write(str(path))


def _panel(m, body, line, pr, joint_at_start: bool, joint_at_end: bool):
    """The IfcWall and IfcFooting of one panel result."""
    f, api = m.f, m.api
    pn, sec = pr.panel, pr.section
    prof = line.p
    s0 = float(prof.developed(pn.ch_start_m))
    L = float(pn.length_m)
    a = s0 + (JOINT_GAP_M / 2 if joint_at_start else 0.0)
    b = s0 + L - (JOINT_GAP_M / 2 if joint_at_end else 0.0)
    left = retained_left(m.result.site, pn.side)
    tb, B = sec.base_thickness_m, sec.base_width_m
    z_b = pn.founding_m + tb
    hs = pn.retained_top_m - z_b
    z_top = max(pn.wall_top_start_m, pn.wall_top_end_m)
    stem = stem_outline(sec.toe_m, tb, sec.stem_base_m, sec.stem_top_m, hs, z_top - z_b)
    dk, wk = max(sec.key_depth_m, 0.0), max(sec.key_width_m, 0.0)
    footing = footing_outline(sec.toe_m, B, tb, dk, wk)

    cuts = line.pieces(a, b)
    pts = line.xy(cuts)
    # the element's frame: at the panel's start on the wall line, x along its first piece
    o = pts[0]
    d0 = pts[1] - pts[0]
    ex = d0 / np.hypot(*d0)
    rot = np.array([[ex[0], -ex[1]], [ex[1], ex[0]]])  # element -> model (plan)

    def local(v):
        return rot.T @ (np.asarray(v, dtype=float) - o)

    def zw(s):  # wall top at a length s along the panel (linear, design-basis 1)
        return pn.wall_top_start_m + (pn.wall_top_end_m - pn.wall_top_start_m) * (s - s0) / L

    stem_items, foot_items = [], []
    for k in range(len(cuts) - 1):
        A, Bp = local(pts[k]), local(pts[k + 1])
        d = Bp - A
        c = float(np.hypot(*d))
        u = d / c
        nl = np.array([-u[1], u[0]])
        start, along, across = (A, u, nl) if left else (Bp, -u, -nl)
        stem_items.append((start, along, across, c, zw(cuts[k]), zw(cuts[k + 1]), A, Bp, u))
        foot_items.append(m.extrusion(footing, (start[0], start[1], 0.0), along, across, c))
    solids = []
    for start, along, across, c, za, zb_, A, Bp, u in stem_items:
        solid = m.extrusion(stem, (start[0], start[1], 0.0), along, across, c)
        if abs(za - zb_) > 1e-9:
            slope = (zb_ - za) / c
            solid = m.clip_above(solid, (A[0], A[1], za - pn.founding_m),
                                 (-slope * u[0], -slope * u[1], 1.0))
        solids.append(solid)

    matrix = np.eye(4)
    matrix[:2, :2] = rot
    matrix[:2, 3] = o
    matrix[2, 3] = pn.founding_m
    out = []
    q = pr.quantities
    for ifc_class, items, what, kw in (
            ("IfcWall", solids, "stem", {"predefined_type": "USERDEFINED"}),
            ("IfcFooting", foot_items, "footing", {"predefined_type": "STRIP_FOOTING"})):
        e = m.entity(ifc_class, f"{pn.panel} {what}", f"{pn.panel}/{what}", **kw)
        if ifc_class == "IfcWall":
            e.ObjectType = "retaining wall stem"
        e.Description = (f"{pn.panel} ({pr.section_type}), run {pn.run}, {pn.side}, "
                         f"ch {pn.ch_start_m:.3f} to {pn.ch_end_m:.3f}")
        api.geometry.edit_object_placement(f, product=e, matrix=matrix)
        kind = "Clipping" if any(i.is_a("IfcBooleanClippingResult") for i in items) else "SweptSolid"
        rep = f.createIfcShapeRepresentation(body, "Body", kind, items)
        api.geometry.assign_representation(f, product=e, representation=rep)
        _design_pset(m, e, pr, left)
        if ifc_class == "IfcWall":
            y0, y1 = pn.wall_top_start_m - z_b, pn.wall_top_end_m - z_b
            _qto(m, e, "Qto_WallBaseQuantities", {
                "Length": L, "Width": sec.stem_base_m, "Height": z_top - z_b,
                "GrossSideArea": 0.5 * (y0 + y1) * L, "NetSideArea": 0.5 * (y0 + y1) * L,
                "GrossVolume": q.get("concrete_stem"), "NetVolume": q.get("concrete_stem")})
            _qto(m, e, QTO_OWN, {"FormworkArea": q.get("formwork_stem"),
                                 "WaterproofingArea": q.get("waterproofing")})
        else:
            v = q.get("concrete_base", 0.0) + q.get("concrete_key", 0.0)
            _qto(m, e, "Qto_FootingBaseQuantities", {
                "Length": L, "Width": B, "Height": tb, "CrossSectionArea": B * tb + dk * wk,
                "GrossVolume": v, "NetVolume": v})
            _qto(m, e, QTO_OWN, {"FormworkArea": q.get("formwork_base"),
                                 "BlindingArea": q.get("blinding")})
        out.append(e)
    return out


def _qto(m, e, name, values) -> None:
    vals = {k: float(v) for k, v in values.items() if v is not None and math.isfinite(v)}
    if vals:
        qto = m.api.pset.add_qto(m.f, product=e, name=name)
        m.api.pset.edit_qto(m.f, qto=qto, properties=vals)


def _design_pset(m, e, pr, left: bool) -> None:
    f = m.f
    pn, sec = pr.panel, pr.section

    def length(v):
        return f.createIfcLengthMeasure(float(v))

    def ratio(v):
        return f.createIfcRatioMeasure(float(v)) if math.isfinite(v) else None

    props = {
        "Panel": f.createIfcLabel(pn.panel), "Run": f.createIfcInteger(int(pn.run)),
        "Side": f.createIfcLabel(pn.side),
        "RetainedSide": f.createIfcLabel("left" if left else "right"),
        "SectionType": f.createIfcLabel(pr.section_type),
        "ChainageStart": length(pn.ch_start_m), "ChainageEnd": length(pn.ch_end_m),
        "LengthAlongWallLine": length(pn.length_m),
        "RetainedTop": length(pn.retained_top_m), "FrontMin": length(pn.front_min_m),
        "Founding": length(pn.founding_m), "WallTopStart": length(pn.wall_top_start_m),
        "WallTopEnd": length(pn.wall_top_end_m),
        "RetainedHeight": length(pn.retained_height_m),
        "TotalHeight": length(pn.total_height_m),
        "StemTop": length(sec.stem_top_m), "StemBase": length(sec.stem_base_m),
        "BaseWidth": length(sec.base_width_m), "Toe": length(sec.toe_m),
        "Heel": length(sec.heel_m), "BaseThickness": length(sec.base_thickness_m),
        "KeyDepth": length(sec.key_depth_m), "KeyWidth": length(sec.key_width_m),
        "UtilOverturning": ratio(pr.util("overturning")),
        "UtilSliding": ratio(pr.util("sliding")),
        "UtilBearing": ratio(pr.util("bearing")),
        "UtilStructural": ratio(pr.util(*STRUCTURAL_CHECKS)),
        "Governing": f.createIfcLabel(pr.governing or "none"),
        "Status": f.createIfcLabel(pr.status),
        "Reason": f.createIfcText(pr.reason) if pr.reason else None,
        "ConcreteOfPanel": f.createIfcVolumeMeasure(float(pr.concrete_m3)),
        "SteelOfPanel": f.createIfcMassMeasure(float(pr.steel_kg)),
    }
    pset = m.api.pset.add_pset(f, product=e, name=PSET)
    m.api.pset.edit_pset(f, pset=pset, properties={k: v for k, v in props.items()
                                                   if v is not None})
