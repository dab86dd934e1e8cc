"""``model.ifc``: the wall as an IFC4 model, written with ifcopenshell.

Content: an ``IfcProject`` (the project's name; the caution in its description and,
in the property set ``Wallrun_Cautions``, the caution, what is not checked, the
placement and the retained-side rule) and an ``IfcSite`` holding, per panel, an
``IfcWall`` (the stem) and an ``IfcFooting`` (base and key, ``STRIP_FOOTING``), of
concrete of the site's strength class, each with

- a ``Body`` made of ``IfcExtrudedAreaSolid``: the panel's cross-section (design-basis
  section 2) extruded along the wall line; a sloped wall top is an
  ``IfcBooleanClippingResult`` of the stem with a half space through the top line;
  elements with the same solids (the footings of equal panels of a type, the stems of
  panels of equal heights) share one ``IfcProductDefinitionShape``, each placed by its
  own ``ObjectPlacement`` (at 10 km, 2,500 elements have about 1,050 bodies);
- the property set ``Wallrun_PanelDesign`` (one for the panel's wall and footing):
  panel, run, side, section type, chainages, length along the wall line, levels,
  utilizations (to 3 decimals, as ``panels.csv``), governing check, status and reason;
- an ``IfcElementQuantity``: ``Qto_WallBaseQuantities`` (length, width, height, side
  areas, volumes) or ``Qto_FootingBaseQuantities`` (length, width, height,
  cross-section area, volumes), from the take-off; elements with equal quantities
  share one set, related to them all by one ``IfcRelDefinesByProperties``;
- its type: an ``IfcWallType`` and an ``IfcFootingType`` per section type, named like
  it, with the section's dimensions in the property set ``Wallrun_SectionType``.

Every GlobalId is a name-based UUID (RFC 4122 version 5) of the project and the
element, those of the relations an api call makes too, and the header's time stamp is
the outputs' time of issue (``stamp.issue_time``): with ``SOURCE_DATE_EPOCH`` set, the
same design gives the same file, byte for byte.

The project's frame (project, units, contexts, site, georeferencing, material) is made
through ``ifcopenshell.api``; the property sets and the per-panel entities through
``ifcopenshell.file.create_entity`` (an api call's checks and look-ups cost many times
the entity it makes, and a long wall has hundreds of panels; the api's property-set
calls load the IFC4 templates, about 0.1 s, to check names no template holds).

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

import itertools
import math
import uuid

import ifcopenshell
import ifcopenshell.api.aggregate
import ifcopenshell.api.context
import ifcopenshell.api.geometry
import ifcopenshell.api.georeference
import ifcopenshell.api.material
import ifcopenshell.api.project
import ifcopenshell.api.root
import ifcopenshell.api.unit
import ifcopenshell.guid
import numpy as np

from wallrun.outputs.stamp import issue_time
from wallrun.outputs.tables import STRUCTURAL_CHECKS, num
from wallrun.results import largest

#: The gap between neighbouring panels at a movement joint, m.
JOINT_GAP_M = 0.010
#: A straight piece of a panel departs from the curved wall line by at most this, m.
MODEL_CHORD_M = 0.010
PSET = "Wallrun_PanelDesign"
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
            for s0, s1 in itertools.pairwise(s):
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
    """The file being built: the project's frame through ``ifcopenshell.api``, the many
    per-panel entities through ``ifcopenshell.file.create_entity`` (the api's checks and
    look-ups per call cost more than the entity itself; hundreds of panels)."""

    def __init__(self, result):
        self.ifc = ifcopenshell
        self.api = ifcopenshell.api
        self.result = result
        self.f = ifcopenshell.api.project.create_file(version="IFC4")
        # the header: the file's own name and the outputs' time of issue (fixed by
        # SOURCE_DATE_EPOCH, as the report's and the workbook's dates)
        self.f.header.file_name.name = "model.ifc"
        self.f.header.file_name.time_stamp = issue_time().isoformat(timespec="seconds")
        self.key = result.site.project.name + "/" + result.site.project.reference
        self.shared: dict = {}  # equal items made once and referenced (this file only)
        self.measures: dict = {}  # quantity sets: (set, GlobalId name, elements)
        self.up = self.direction((0.0, 0.0, 1.0))

    def guid(self, what: str) -> str:
        """A GlobalId that stays the same for the same project and element."""
        return self.ifc.guid.compress(uuid.uuid5(_GUID_NS, self.key + "/" + what).hex)

    def entity(self, ifc_class: str, name: str, what: str, **kw):
        """A rooted entity made by the api (GlobalId from ``what``)."""
        return self.claim(self.api.root.create_entity(self.f, ifc_class=ifc_class, name=name,
                                                      **kw), what)

    def claim(self, entity, what: str):
        """``entity`` (made by an api call, which gives it a random GlobalId) with the
        GlobalId of ``what`` instead: the same design gives the same file."""
        entity.GlobalId = self.guid(what)
        return entity

    def create(self, ifc_class: str, what: str, **attributes):
        """A rooted entity (GlobalId from ``what``) with ``attributes``."""
        return self.f.create_entity(ifc_class, GlobalId=self.guid(what), **attributes)

    def once(self, key, make):
        """The item made by ``make()`` for ``key``, made once per file: equal directions,
        placements, profiles, properties and quantities are one instance referenced
        wherever they recur (IFC allows a property or quantity in many sets)."""
        item = self.shared.get(key)
        if item is None:
            item = self.shared[key] = make()
        return item

    # geometry items
    def direction(self, v):
        v = tuple(round(float(c), 12) + 0.0 for c in v)
        return self.once(("dir", v), lambda: self.f.createIfcDirection(v))

    def axes(self, origin, z, x):
        o = tuple(round(float(c), 9) + 0.0 for c in origin)
        return self.once(("axes", o, tuple(np.round(z, 12)), tuple(np.round(x, 12))),
                         lambda: self.f.createIfcAxis2Placement3D(
                             self.f.createIfcCartesianPoint(o), self.direction(z),
                             self.direction(x)))

    def profile(self, outline):
        """A closed profile through the points (p, z) of ``outline``."""
        pts = tuple((round(float(p), 9) + 0.0, round(float(z), 9) + 0.0) for p, z in outline)

        def make():
            f = self.f
            curve = f.create_entity("IfcIndexedPolyCurve",
                                    Points=f.createIfcCartesianPointList2D(pts),
                                    SelfIntersect=False)
            # the closing segment: the index list returns to the first point
            curve.Segments = [f.createIfcLineIndex(list(range(1, len(pts) + 1)) + [1])]
            return f.create_entity("IfcArbitraryClosedProfileDef", ProfileType="AREA",
                                   OuterCurve=curve)
        return self.once(("profile", pts), make)

    def extrusion(self, profile, origin, along, across, depth):
        """``profile`` (p, z) swept ``depth`` along the unit vector ``along`` from
        ``origin``, p running along ``across`` (horizontal unit vectors, element
        coordinates; the profile's y is up). Equal solids are one instance."""
        pos = self.axes(origin, (along[0], along[1], 0.0), (across[0], across[1], 0.0))
        depth = round(float(depth), 9) + 0.0
        return self.once(("solid", profile.id(), pos.id(), depth),
                         lambda: self.f.createIfcExtrudedAreaSolid(profile, pos, self.up,
                                                                   depth))

    def body(self, context, items):
        """The ``Body`` of an element made of ``items`` (solids in its own coordinates):
        an IfcProductDefinitionShape holding one IfcShapeRepresentation. Elements whose
        solids are the same instances share it (IFC4: a product definition shape may
        be the representation of many products, each placing it by its own
        ObjectPlacement; a shape representation belongs to one of them), as the
        footings of equal panels of a type do."""
        kind = "Clipping" if any(i.is_a("IfcBooleanClippingResult") for i in items) \
            else "SweptSolid"

        def make():
            rep = self.f.createIfcShapeRepresentation(context, "Body", kind, items)
            return self.f.create_entity("IfcProductDefinitionShape", Representations=[rep])
        return self.once(("body", context.id(), tuple(i.id() for i in items)), make)

    def clip_above(self, solid, point, normal):
        """``solid`` less the half space above the plane through ``point`` with the
        upward ``normal`` (the sloped top of a stem)."""
        n = np.asarray(normal, dtype=float)
        n = n / np.linalg.norm(n)
        ref = np.array([n[1], -n[0], 0.0])
        ref = ref / np.linalg.norm(ref) if np.linalg.norm(ref) > 1e-12 else np.array([1.0, 0, 0])
        plane = self.f.createIfcPlane(self.axes(point, n, ref))
        half = self.f.createIfcHalfSpaceSolid(plane, False)  # material below the plane
        return self.f.createIfcBooleanClippingResult("DIFFERENCE", solid, half)

    def measured(self, element, name: str, values: dict, what: str) -> None:
        """``element`` measured by the IfcElementQuantity ``name`` of ``values``
        (:meth:`quantities`): equal quantity sets are one instance, related to all
        their elements by one IfcRelDefinesByProperties (:meth:`relate_measured`; its
        GlobalId from ``what`` of the first element)."""
        key = (name, tuple((k, kind, None if v is None else float(v))
                           for k, (kind, v) in values.items()))
        got = self.measures.get(key)
        if got is None:
            eq = self.create("IfcElementQuantity", what, Name=name,
                             MethodOfMeasurement="wallrun take-off (net, along the wall line)",
                             Quantities=self.quantities(values))
            got = self.measures[key] = (eq, what, [])
        got[2].append(element)

    def relate_measured(self) -> None:
        """The IfcRelDefinesByProperties of each quantity set of :meth:`measured`."""
        for eq, what, elements in self.measures.values():
            self.create("IfcRelDefinesByProperties", what + "/rel", RelatedObjects=elements,
                        RelatingPropertyDefinition=eq)

    # Entities are made with the attributes they have by name: an attribute left out
    # stays unset ($), as one given None would, without the call that sets it.

    def properties(self, values: dict) -> list:
        """IfcPropertySingleValue of each (IFC type, value) that is not None."""
        f = self.f
        return [self.once(("prop", name, kind, v),
                          lambda n=name, k=kind, v=v: f.create_entity(
                              "IfcPropertySingleValue", Name=n,
                              NominalValue=f.create_entity(k, v)))
                for name, (kind, v) in values.items() if v is not None]

    def quantities(self, values: dict) -> list:
        """IfcQuantityLength/Area/Volume of each (kind, value), finite ones only (the
        value in its ``LengthValue``, ``AreaValue`` or ``VolumeValue``)."""
        f = self.f
        return [self.once(("qty", name, kind, float(v)),
                          lambda n=name, k=kind, v=v: f.create_entity(
                              f"IfcQuantity{k}", Name=n, **{f"{k}Value": float(v)}))
                for name, (kind, v) in values.items() if v is not None and math.isfinite(v)]


def write_ifc(result, path) -> None:
    """Write ``model.ifc`` of ``result`` (a ``DesignResult``) to ``path``."""
    from wallrun.cautions import CAUTION, not_checked

    m = _Model(result)
    f, api = m.f, m.api
    site_s = result.site
    proj = m.entity("IfcProject", site_s.project.name, "project")
    proj.LongName = site_s.project.reference or None
    proj.Description = CAUTION
    units = api.unit.assign_unit(f, length={"is_metric": True, "raw": "METERS"},
                                 area={"is_metric": True, "raw": "SQUARE_METERS"},
                                 volume={"is_metric": True, "raw": "CUBIC_METERS"})
    # the api gathers the units in a Python set, whose order follows where the instances
    # lie in memory: written in the order they were made, so that one design is one file
    units.Units = sorted(units.Units, key=lambda u: u.id())
    model = api.context.add_context(f, context_type="Model")
    body = api.context.add_context(f, context_type="Model", context_identifier="Body",
                                   target_view="MODEL_VIEW", parent=model)
    line = _Line(result.profiles)
    site = m.entity("IfcSite", site_s.project.name, "site")
    m.claim(api.aggregate.assign_object(f, products=[site], relating_object=proj),
            "site/aggregate")
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
    sides = sorted({r.side for r in result.runs})
    side_rule = "; ".join(
        f"{s} runs retain on the {'left' if retained_left(site_s, s) else 'right'} of "
        "increasing chainage" for s in sides)
    if not (site_s.profile_files.landxml and site_s.profile_files.offset_m != 0):
        side_rule += " (assumed: the profiles do not say on which side the ground is retained)"
    cautions = m.create("IfcPropertySet", "project/cautions", Name="Wallrun_Cautions",
                        HasProperties=m.properties({
                            "Caution": ("IfcText", CAUTION),
                            "NotChecked": ("IfcText", "; ".join(not_checked(site_s))),
                            "Placement": ("IfcText", where),
                            "RetainedSide": ("IfcText", side_rule or "no wall"),
                            "JointGap": ("IfcPositiveLengthMeasure", JOINT_GAP_M)}))
    m.create("IfcRelDefinesByProperties", "project/cautions/rel", RelatedObjects=[proj],
             RelatingPropertyDefinition=cautions)
    concrete = api.material.add_material(f, name=f"Concrete {site_s.concrete.strength_class}",
                                         category="concrete")

    types = _section_types(m, result)
    starts = {j.right for j in result.joints}
    ends = {j.left for j in result.joints}
    site_placement = site.ObjectPlacement
    products = []
    typed: dict[str, list] = {}
    for pr in result.panels:
        if pr.status != "ok":
            continue  # a panel that could not be designed has nothing to build
        wall, footing = _panel(m, body, line, site_placement, pr, pr.panel.panel in starts,
                               pr.panel.panel in ends)
        products += [wall, footing]
        typed.setdefault(pr.section_type, []).append((wall, footing))
    m.relate_measured()
    for name, pairs in typed.items():
        wt, ft = types[name]
        m.create("IfcRelDefinesByType", f"type/{name}/stem/rel",
                 RelatedObjects=[w for w, _ in pairs], RelatingType=wt)
        m.create("IfcRelDefinesByType", f"type/{name}/footing/rel",
                 RelatedObjects=[ft_ for _, ft_ in pairs], RelatingType=ft)
    if products:
        m.create("IfcRelContainedInSpatialStructure", "contained", RelatedElements=products,
                 RelatingStructure=site)
        m.create("IfcRelAssociatesMaterial", "material",
                 RelatedObjects=products + [t for pair in types.values() for t in pair],
                 RelatingMaterial=concrete)
    f.write(str(path))


def _section_types(m, result) -> dict:
    """An IfcWallType and an IfcFootingType per section type, with the section's
    dimensions in the property set ``Wallrun_SectionType``."""
    out = {}
    for st in result.section_types:
        s = st.section
        pset = m.create("IfcPropertySet", f"type/{st.section_type}/pset",
                        Name="Wallrun_SectionType", HasProperties=m.properties({
                            "SectionType": ("IfcLabel", st.section_type),
                            "StemTop": ("IfcPositiveLengthMeasure", float(s.stem_top_m)),
                            "StemBase": ("IfcPositiveLengthMeasure", float(s.stem_base_m)),
                            "BaseWidth": ("IfcPositiveLengthMeasure", float(s.base_width_m)),
                            "Toe": ("IfcLengthMeasure", float(s.toe_m)),
                            "Heel": ("IfcLengthMeasure", float(s.heel_m)),
                            "BaseThickness": ("IfcPositiveLengthMeasure",
                                              float(s.base_thickness_m)),
                            "KeyDepth": ("IfcLengthMeasure", float(s.key_depth_m)),
                            "KeyWidth": ("IfcLengthMeasure", float(s.key_width_m)),
                            "Governing": ("IfcLabel", st.governing or "none"),
                            "Utilization": ("IfcRatioMeasure", num(st.utilization))}))
        wt = m.create("IfcWallType", f"type/{st.section_type}/stem", Name=st.section_type,
                      Description="retaining wall stem", HasPropertySets=[pset],
                      ElementType="retaining wall stem", PredefinedType="USERDEFINED")
        ft = m.create("IfcFootingType", f"type/{st.section_type}/footing",
                      Name=st.section_type, Description="retaining wall base and key",
                      HasPropertySets=[pset], PredefinedType="STRIP_FOOTING")
        out[st.section_type] = (wt, ft)
    return out


def _panel(m, body, line, site_placement, pr, joint_at_start: bool, joint_at_end: bool):
    """The IfcWall and IfcFooting of one panel result."""
    f = m.f
    pn, sec = pr.panel, pr.section
    prof = line.p
    s0 = float(prof.developed(pn.ch_start_m))
    L = float(pn.length_m)
    a = s0 + (JOINT_GAP_M / 2 if joint_at_start else 0.0)
    b = s0 + L - (JOINT_GAP_M / 2 if joint_at_end else 0.0)
    left = retained_left(m.result.site, pn.side)
    tb, B = sec.base_thickness_m, sec.base_width_m
    z_b = pn.founding_m + tb
    z_top = max(pn.wall_top_start_m, pn.wall_top_end_m)
    dk, wk = max(sec.key_depth_m, 0.0), max(sec.key_width_m, 0.0)
    stem = m.profile(stem_outline(sec.toe_m, tb, sec.stem_base_m, sec.stem_top_m,
                                  pn.retained_top_m - z_b, z_top - z_b))
    footing = m.profile(footing_outline(sec.toe_m, B, tb, dk, wk))

    cuts = line.pieces(a, b)
    pts = line.xy(cuts)
    # the element's frame: at the start of its concrete on the wall line, at the
    # founding level, x along the first piece
    o = pts[0]
    d0 = pts[1] - pts[0]
    ex = d0 / np.hypot(*d0)
    rot = np.array([[ex[0], -ex[1]], [ex[1], ex[0]]])  # element -> model (plan)
    local = (pts - o) @ rot  # rows: rot.T @ (p - o)
    placement = f.createIfcLocalPlacement(
        site_placement, m.axes((o[0], o[1], pn.founding_m), (0.0, 0.0, 1.0),
                               (ex[0], ex[1], 0.0)))

    def zw(s):  # wall top at a length s along the panel (linear, design-basis 1)
        return pn.wall_top_start_m + (pn.wall_top_end_m - pn.wall_top_start_m) * (s - s0) / L

    stems, feet = [], []
    for k in range(len(cuts) - 1):
        A, Bp = local[k], local[k + 1]
        d = Bp - A
        c = float(np.hypot(*d))
        u = d / c
        nl = np.array([-u[1], u[0]])
        start, along, across = (A, u, nl) if left else (Bp, -u, -nl)
        origin = (start[0], start[1], 0.0)
        solid = m.extrusion(stem, origin, along, across, c)
        za, zb_ = zw(cuts[k]), zw(cuts[k + 1])
        if abs(za - zb_) > 1e-9:
            slope = (zb_ - za) / c
            solid = m.clip_above(solid, (A[0], A[1], za - pn.founding_m),
                                 (-slope * u[0], -slope * u[1], 1.0))
        stems.append(solid)
        feet.append(m.extrusion(footing, origin, along, across, c))

    q = pr.quantities
    y0, y1 = pn.wall_top_start_m - z_b, pn.wall_top_end_m - z_b
    v_foot = q.get("concrete_base", 0.0) + q.get("concrete_key", 0.0)
    desc = (f"{pn.panel} ({pr.section_type}), run {pn.run}, {pn.side}, "
            f"ch {pn.ch_start_m:.3f} to {pn.ch_end_m:.3f}")
    out = []
    for ifc_class, items, what, qto, values in (
            ("IfcWall", stems, "stem", "Qto_WallBaseQuantities", {
                "Length": ("Length", L), "Width": ("Length", sec.stem_base_m),
                "Height": ("Length", z_top - z_b),
                "GrossSideArea": ("Area", 0.5 * (y0 + y1) * L),
                "NetSideArea": ("Area", 0.5 * (y0 + y1) * L),
                "GrossVolume": ("Volume", q.get("concrete_stem")),
                "NetVolume": ("Volume", q.get("concrete_stem"))}),
            ("IfcFooting", feet, "footing", "Qto_FootingBaseQuantities", {
                "Length": ("Length", L), "Width": ("Length", B), "Height": ("Length", tb),
                "CrossSectionArea": ("Area", B * tb + dk * wk),
                "GrossVolume": ("Volume", v_foot), "NetVolume": ("Volume", v_foot)})):
        shape = m.body(body, items)
        e = m.create(ifc_class, f"{pn.panel}/{what}", Name=f"{pn.panel} {what}",
                     Description=desc, ObjectPlacement=placement, Representation=shape,
                     Tag=pn.panel, **({"ObjectType": "retaining wall stem",
                                      "PredefinedType": "USERDEFINED"}
                                     if ifc_class == "IfcWall"
                                     else {"PredefinedType": "STRIP_FOOTING"}))
        m.measured(e, qto, values, f"{pn.panel}/{what}/qto")
        out.append(e)
    _design_pset(m, out, pr)
    return out


def _design_pset(m, elements, pr) -> None:
    """The property set ``Wallrun_PanelDesign`` of a panel, shared by its wall and
    footing."""
    pn = pr.panel
    worst = pr.worst_by_check()

    def ratio(v):  # as panels.csv gives it (3 decimals): equal values are one property
        return ("IfcRatioMeasure", num(v))

    def length(v):
        return ("IfcLengthMeasure", float(v))

    props = m.properties({
        "Panel": ("IfcLabel", pn.panel), "Run": ("IfcInteger", int(pn.run)),
        "Side": ("IfcLabel", pn.side), "SectionType": ("IfcLabel", pr.section_type),
        "ChainageStart": length(pn.ch_start_m), "ChainageEnd": length(pn.ch_end_m),
        "LengthAlongWallLine": length(pn.length_m),
        "RetainedTop": length(pn.retained_top_m), "FrontMin": length(pn.front_min_m),
        "Founding": length(pn.founding_m), "WallTopStart": length(pn.wall_top_start_m),
        "WallTopEnd": length(pn.wall_top_end_m),
        "UtilOverturning": ratio(largest(worst, ("overturning",))),
        "UtilSliding": ratio(largest(worst, ("sliding",))),
        "UtilBearing": ratio(largest(worst, ("bearing",))),
        "UtilStructural": ratio(largest(worst, STRUCTURAL_CHECKS)),
        "Governing": ("IfcLabel", pr.governing or "none"),
        "Status": ("IfcLabel", pr.status),
        "Reason": ("IfcText", pr.reason or None)})
    pset = m.create("IfcPropertySet", f"{pn.panel}/design", Name=PSET, HasProperties=props)
    m.create("IfcRelDefinesByProperties", f"{pn.panel}/design/rel",
             RelatedObjects=list(elements), RelatingPropertyDefinition=pset)
