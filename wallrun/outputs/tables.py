"""The tables of the output folder: CSV files and ``design.json`` (shared/interfaces.md).

Every table is a plain rendering of the result objects. Numbers are rounded to fixed
decimals so that the same site gives byte-identical files. CSV has no cell types, so a
text cell that a spreadsheet would read as a formula (leading ``= + - @``, tab or CR)
is neutralised with a leading apostrophe (common practice against formula injection);
the workbook keeps text as typed text instead (``workbook.py``). ``cost.csv`` starts
with its header; notices (demo rates, unpriced items) are in its ``note`` column.
"""

from __future__ import annotations

import csv
import dataclasses
import io
import json
import math

import numpy as np

from wallrun import __version__
from wallrun.cautions import CAUTION, NOTHING_DESIGNED, left_out, not_checked
from wallrun.results import DesignResult, PanelResult, largest
from wallrun.takeoff import DEMO_RATES_NOTE

SCHEMA = "wallrun-design/1"

PANEL_COLUMNS = (
    "panel", "run", "side", "ch_start_m", "ch_end_m", "length_m", "retained_top_m",
    "front_min_m", "founding_m", "wall_top_start_m", "wall_top_end_m", "retained_height_m",
    "total_height_m", "section", "stem_top_m", "stem_base_m", "base_width_m", "toe_m",
    "heel_m", "base_thickness_m", "key_depth_m", "key_width_m", "util_overturning",
    "util_sliding", "util_bearing", "util_structural", "util_overall", "util_seismic",
    "governing", "status", "reason",
    "concrete_m3", "steel_kg", "cost")
JOINT_COLUMNS = ("joint", "ch_m", "left", "right", "founding_step_m", "top_step_m",
                 "pressure_ratio", "status", "reason")
BAR_COLUMNS = ("member", "bar_mark", "type_size", "no_of_members", "no_in_each", "total_no",
               "length_mm", "shape_code", "a_mm", "b_mm", "c_mm", "d_mm", "e_mm", "r_mm", "mass_kg")
SECTION_COLUMNS = (
    "section", "stem_top_m", "stem_base_m", "base_width_m", "toe_m", "heel_m",
    "base_thickness_m", "key_depth_m", "key_width_m", "stem_bar_mm", "stem_spacing_mm",
    "stem_curtail_m", "stem_front_bar_mm", "stem_front_spacing_mm", "stem_horizontal_bar_mm",
    "stem_horizontal_spacing_mm", "heel_bar_mm", "heel_spacing_mm", "toe_bar_mm",
    "toe_spacing_mm", "dist_bar_mm", "dist_spacing_mm", "panels", "utilization", "governing")

#: The member checks of EN 1992-1-1 (``util_structural``); every other check is
#: geotechnical (EN 1997-1, or EN 1998-5 in the seismic combination).
STRUCTURAL_CHECKS = ("stem_bending", "stem_shear", "heel_bending", "heel_shear", "toe_bending",
                     "toe_shear", "crack_spacing", "min_steel", "restraint_steel", "bar_bend")
GEOTECHNICAL_CHECKS = ("overturning", "sliding", "bearing", "eccentricity", "eccentricity_sls",
                       "bearing_sls", "joint_pressure", "overall")
#: The seismic design situation's combination (EN 1998-5; ``util_seismic``).
SEISMIC = "SEIS"
DIMENSIONS = ("stem_top_m", "stem_base_m", "base_width_m", "toe_m", "heel_m",
              "base_thickness_m", "key_depth_m", "key_width_m")


def safe_text(s: str) -> str:
    """Neutralise spreadsheet formula injection: a cell starting with = + - @ (or a
    tab/CR) gets a leading apostrophe so a spreadsheet shows it as text."""
    s = str(s)
    if s and s[0] in "=+-@\t\r":
        return "'" + s
    return s


def num(x, nd: int = 3):
    """A float rounded to ``nd`` decimals for output (never -0.0); None for None, inf
    and NaN (JSON null)."""
    if x is None:
        return None
    x = float(x)
    if x - x == 0.0:  # finite
        return round(x, nd) + 0.0  # (-0.0 + 0.0 is 0.0)
    return None


def rounded(values, nd: int = 3) -> list:
    """``values`` (numbers, None as NaN) rounded to ``nd`` decimals in one numpy call
    (``numpy.round``: round half to even on the scaled value), -0.0 as 0.0, inf and NaN
    as None: for the many check values of ``design.json``, where one call a value of
    :func:`num` would be most of the file's time."""
    a = np.round(np.asarray(values, dtype=float), nd) + 0.0
    out = a.tolist()
    bad = ~np.isfinite(a)
    if bad.any():
        for i in np.flatnonzero(bad).tolist():
            out[i] = None
    return out


def _cell(v, nd=3) -> str:
    if v is None:
        return ""
    if isinstance(v, bool):
        return "true" if v else "false"
    if isinstance(v, int):
        return str(v)
    if isinstance(v, float):
        if math.isinf(v):
            return "inf"
        if math.isnan(v):
            return ""
        return f"{num(v, nd):.{nd}f}"
    return safe_text(v)


def to_csv(columns, rows, decimals: dict | None = None) -> str:
    """CSV text with a header row; ``decimals`` maps column -> decimals (default 3)."""
    decimals = decimals or {}
    buf = io.StringIO()
    w = csv.writer(buf, lineterminator="\n")
    w.writerow(columns)
    for row in rows:
        w.writerow([_cell(row.get(c), decimals.get(c, 3)) for c in columns])
    return buf.getvalue()


def panel_row(p: PanelResult) -> dict:
    """One ``panels.csv`` row (shared/interfaces.md). util_bearing is the bearing
    resistance check; the eccentricity checks count in ``governing``; util_overall and
    util_seismic are empty where the site does not check overall stability or seismic
    actions."""
    pa, s = p.panel, p.section
    worst = p.worst_by_check()
    overall = worst.get("overall")  # empty where not checked
    seismic = p.checks.largest_by(1).get(SEISMIC)
    designed = p.status == "ok"  # a flagged panel reports its reason, no utilization
    if not designed:
        overall = seismic = None
    row = {
        "panel": pa.panel, "run": pa.run, "side": pa.side, "ch_start_m": pa.ch_start_m,
        "ch_end_m": pa.ch_end_m, "length_m": pa.length_m, "retained_top_m": pa.retained_top_m,
        "front_min_m": pa.front_min_m, "founding_m": pa.founding_m,
        "wall_top_start_m": pa.wall_top_start_m, "wall_top_end_m": pa.wall_top_end_m,
        "retained_height_m": pa.retained_height_m, "total_height_m": pa.total_height_m,
        "section": p.section_type,
        "util_overturning": largest(worst, ("overturning",)) if designed else None,
        "util_sliding": largest(worst, ("sliding",)) if designed else None,
        "util_bearing": largest(worst, ("bearing",)) if designed else None,
        "util_structural": largest(worst, STRUCTURAL_CHECKS) if designed else None,
        "util_overall": overall, "util_seismic": seismic,
        "governing": p.governing if designed else "", "status": p.status, "reason": p.reason,
        "concrete_m3": p.concrete_m3, "steel_kg": p.steel_kg, "cost": p.cost,
    }
    for dim in DIMENSIONS:
        row[dim] = getattr(s, dim)
    return row


def panels_csv(result: DesignResult) -> str:
    return to_csv(PANEL_COLUMNS, [panel_row(p) for p in result.panels],
                  {"cost": 2, "steel_kg": 1})


def joints_csv(result: DesignResult) -> str:
    return to_csv(JOINT_COLUMNS, [dataclasses.asdict(j) for j in result.joints])


def _bars_of(r, member):
    b = getattr(r, member)
    return (b.bar_mm, b.spacing_mm) if b is not None else (None, None)


def section_row(t) -> dict:
    s, r = t.section, t.reinforcement
    row = {"section": t.section_type, "panels": " ".join(t.panels),
           "utilization": t.utilization, "governing": t.governing,
           "stem_curtail_m": r.stem_curtail_m}
    for dim in DIMENSIONS:
        row[dim] = getattr(s, dim)
    for col, member in (("stem", "stem"), ("stem_front", "stem_front"),
                        ("stem_horizontal", "stem_horizontal"), ("heel", "heel"),
                        ("toe", "toe"), ("dist", "base_distribution")):
        row[f"{col}_bar_mm"], row[f"{col}_spacing_mm"] = _bars_of(r, member)
    return row


def sections_csv(result: DesignResult) -> str:
    return to_csv(SECTION_COLUMNS, [section_row(t) for t in result.section_types])


def bar_schedule_row(b) -> dict:
    """One BS 8666 schedule row of a :class:`wallrun.results.BarMark` (:data:`BAR_COLUMNS`,
    shape dimensions A to E and the bend radius in mm, empty where the shape has none),
    plus ``section``, ``part`` and ``panels`` for ``design.json``."""
    row = {c: getattr(b, c) for c in BAR_COLUMNS}
    row["no_in_each"] = b.each
    row.update(section=b.section, part=b.part or b.member, panels=list(b.panels))
    return row


def bar_schedule_csv(result: DesignResult) -> str:
    """``bar_schedule.csv``: the BS 8666 columns of :data:`BAR_COLUMNS`, one row per bar
    mark and group of alike panels of each section type."""
    return to_csv(BAR_COLUMNS, [bar_schedule_row(b) for b in result.bar_schedule], {"mass_kg": 2})


def quantities_csv(result: DesignResult) -> str:
    return to_csv(("item", "unit", "quantity"), [dataclasses.asdict(q) for q in result.quantities])


COST_COLUMNS = ("item", "unit", "quantity", "rate", "amount", "note")
#: The note of a row priced at an invented demo rate.
DEMO_RATE = "invented demo rate, not a market price"
#: The note of an item with no rate.
UNPRICED = "unpriced: no rate, not in the total"


def cost_csv_rows(result: DesignResult) -> list[dict]:
    """The rows of ``cost.csv`` (and of the workbook's cost sheet) keyed by
    :data:`COST_COLUMNS`: one an item, then the total, whose ``unit`` is the money the
    amounts are in (``[takeoff] currency``, else ``cost units``). The ``note`` says
    which rates are invented demo rates (with ``takeoff.DEMO_RATES_NOTE`` on the total)
    and which items are unpriced: no rate and no amount (left out of an incomplete
    total), so that the rate and amount columns hold numbers only."""
    c = result.cost
    rows = []
    for r in c.rows:
        if r.rate is None:
            note = UNPRICED
        else:
            note = DEMO_RATE if c.demo_rates else ""
        rows.append({"item": r.item, "unit": r.unit, "quantity": r.quantity,
                     "rate": r.rate, "amount": r.amount, "note": note})
    notes = []
    if result.nothing_designed:
        notes.append(NOTHING_DESIGNED)
    elif result.not_designed:
        notes.append(left_out(result.not_designed))
    if not c.complete:
        notes.append("incomplete: unpriced items left out")
    if c.demo_rates:
        notes.append(DEMO_RATES_NOTE)
    rows.append({"item": "total", "unit": result.site.takeoff.money, "quantity": None,
                 "rate": None, "amount": c.total, "note": "; ".join(notes)})
    return rows


def cost_csv(result: DesignResult) -> str:
    """``cost.csv``: the header first, then :func:`cost_csv_rows`."""
    return to_csv(COST_COLUMNS, cost_csv_rows(result), {"rate": 2, "amount": 2})


# --- design.json ---------------------------------------------------------------------

def _bar_json(b):
    if b is None:
        return None
    return {"bar_mm": b.bar_mm, "spacing_mm": b.spacing_mm,
            "as_prov_mm2_per_m": num(b.as_prov_mm2_per_m, 1),
            "as_req_mm2_per_m": num(b.as_req_mm2_per_m, 1), "d_mm": num(b.d_mm, 1)}


def _checks_json(checks, values) -> list[dict]:
    """The entries of ``panels[].checks`` (a ``results.CheckListing``, read by its
    columns): ``values`` the rounded effect, resistance and utilization of each in
    turn; an ``overall`` entry carries its critical ``circle``."""
    out = [{"check": c, "combination": comb, "case": case, "effect": values[3 * i],
            "resistance": values[3 * i + 1], "unit": unit, "utilization": values[3 * i + 2],
            "clause": clause, "governs": g}
           for i, ((c, comb, case, unit, clause), g) in enumerate(
               zip(checks.kinds, checks.governing_flags()))]
    for d, circle in zip(out, checks.circles or ()):
        if circle is not None:
            d["circle"] = {"x_m": num(circle.x_m), "z_m": num(circle.z_m),
                           "radius_m": num(circle.radius_m)}
    return out


def panels_json(panels) -> list[dict]:
    """The entries of ``design.json`` ``panels`` (shared/interfaces.md): numbers rounded
    by :func:`num`, the checks' effect, resistance and utilization of all panels by one
    call of :func:`rounded` (some 300,000 values on a 10 km job)."""
    values = rounded(np.concatenate([p.checks.values.T.ravel() for p in panels]
                                    or [np.zeros(0)]))
    out, k = [], 0
    for p in panels:
        n = 3 * len(p.checks)
        out.append(_panel_json(p, values[k:k + n]))
        k += n
    return out


def _panel_json(p: PanelResult, values: list) -> dict:
    """One entry of :func:`panels_json`; ``values`` its checks' rounded numbers. A panel
    that could not be designed has its levels, ground, status and reason only: no
    section, reinforcement, checks, quantities or cost."""
    pa, s, r = p.panel, p.section, p.reinforcement
    f = pa.foundation
    reinf = {m: _bar_json(getattr(r, m)) for m in
             ("stem", "heel", "toe", "stem_horizontal", "base_distribution", "stem_front")}
    reinf["stem_curtail_m"] = num(r.stem_curtail_m)
    return {
        "panel": pa.panel, "run": pa.run, "side": pa.side,
        "ch_start_m": num(pa.ch_start_m), "ch_end_m": num(pa.ch_end_m),
        "levels": {"retained_top_m": num(pa.retained_top_m), "front_min_m": num(pa.front_min_m),
                   "founding_m": num(pa.founding_m),
                   "wall_top_start_m": num(pa.wall_top_start_m),
                   "wall_top_end_m": num(pa.wall_top_end_m)},
        "section": ({"type": p.section_type, **{d: num(getattr(s, d)) for d in DIMENSIONS}}
                    if p.status == "ok" else None),
        "ground": {
            "backfill": {k: num(v) for k, v in dataclasses.asdict(pa.backfill).items()},
            "foundation": {"unit_weight_kn_m3": num(f.unit_weight_kn_m3),
                           "friction_angle_deg": num(f.friction_angle_deg),
                           "critical_state_angle_deg": num(f.phi_cv_deg),
                           "cohesion_kpa": num(f.cohesion_kpa),
                           "undrained_strength_kpa": num(f.undrained_strength_kpa),
                           "allowable_bearing_kpa": num(f.allowable_bearing_kpa)},
            "surcharge_kpa": num(pa.surcharge_kpa), "water_level_m": num(pa.water_level_m)},
        "reinforcement": reinf if p.status == "ok" else None,
        "checks": _checks_json(p.checks, values),
        "quantities": {k: num(v) for k, v in p.quantities.items()},
        "concrete_m3": num(p.concrete_m3), "steel_kg": num(p.steel_kg, 1),
        "cost": num(p.cost, 2),
        "status": p.status, "reason": p.reason,
    }


def design_dict(result: DesignResult) -> dict:
    site = result.site
    factors = {name: {k: v for k, v in dataclasses.asdict(fs).items() if k != "name" and v is not None}
               for name, fs in site.factors.items()}
    mats = {"strength_class": site.concrete.strength_class,
            "fck_mpa": num(site.concrete.fck_mpa),
            "fyk_mpa": num(site.steel.fyk_mpa), "alpha_cc": num(site.concrete.alpha_cc),
            "cover_mm": num(site.concrete.cover_mm),
            "cover_ground_mm": num(site.concrete.cover_ground_mm)}
    c = result.cost
    return {
        "schema": SCHEMA,
        "wallrun_version": __version__,
        "project": {"name": site.project.name, "reference": site.project.reference},
        "caution": CAUTION,
        "not_checked": list(not_checked(site)),
        "basis": {"approach": site.design.approach, "factors": factors, "materials": mats,
                  "earth_pressure": site.design.earth_pressure, "passive": site.design.passive,
                  "sections": site.design.sections},
        "runs": [{"run": r.run, "side": r.side, "ch_start_m": num(r.ch_start_m),
                  "ch_end_m": num(r.ch_end_m), "length_m": num(r.length_m),
                  "max_retained_height_m": num(r.max_retained_height_m),
                  "at_ch_m": num(r.at_ch_m)} for r in result.runs],
        "panels": panels_json(result.panels),
        "joints": [{"joint": j.joint, "ch_m": num(j.ch_m), "left": j.left, "right": j.right,
                    "founding_step_m": num(j.founding_step_m), "top_step_m": num(j.top_step_m),
                    "pressure_ratio": num(j.pressure_ratio), "status": j.status,
                    "reason": j.reason} for j in result.joints],
        "sections": [section_row(t) | {"utilization": num(t.utilization)}
                     for t in result.section_types],
        "bar_schedule": [{k: (num(v, 2) if isinstance(v, float) else v)
                          for k, v in bar_schedule_row(b).items()} for b in result.bar_schedule],
        "quantities": {q.item: {"unit": q.unit, "quantity": num(q.quantity)}
                       for q in result.quantities},
        "cost": {"rows": [{"item": r.item, "unit": r.unit, "quantity": num(r.quantity),
                           "rate": num(r.rate, 2), "amount": num(r.amount, 2)}
                          for r in c.rows],
                 "total": num(c.total, 2), "currency": site.takeoff.money,
                 "complete": c.complete,
                 "demo_rates": c.demo_rates},
        "warnings": list(result.warnings),
    }


def design_json(result: DesignResult) -> str:
    """``design.json``: the top-level keys one per line, and each entry of a long list
    (panels, joints, sections, bar schedule) as one compact line, so that the file
    stays readable and diffable. The entries are encoded by orjson (a 10 km job's
    27 MB in about 0.05 s instead of 0.5 s with the standard library's encoder); every
    number in them has passed :func:`num` or :func:`rounded`, so none is NaN or
    infinite (which orjson would write as null)."""
    import orjson

    d = design_dict(result)

    def enc(v, **kw):
        return json.dumps(v, ensure_ascii=False, allow_nan=False, **kw)

    parts = []
    for k, v in d.items():
        if isinstance(v, list) and v and isinstance(v[0], dict):
            body = b",\n  ".join(orjson.dumps(x, option=orjson.OPT_SERIALIZE_NUMPY)
                                  for x in v).decode("utf-8")
            parts.append(f" {enc(k)}: [\n  {body}\n ]")
        else:
            parts.append(f" {enc(k)}: " + enc(v, indent=1).replace("\n", "\n "))
    return "{\n" + ",\n".join(parts) + "\n}\n"


TABLES = {
    "panels.csv": panels_csv,
    "joints.csv": joints_csv,
    "sections.csv": sections_csv,
    "bar_schedule.csv": bar_schedule_csv,
    "quantities.csv": quantities_csv,
    "cost.csv": cost_csv,
    "design.json": design_json,
}
