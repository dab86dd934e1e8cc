"""Rendering ``report.html`` from the jinja2 templates of ``templates/``.

:func:`render_report` gathers what the templates show from the result (the view is
:func:`context`; the calculation of each section type is :mod:`.calc`, the figures
:mod:`.figures`) and renders ``report.html.j2`` with autoescaping: every text from the
result or the site is escaped by jinja2. The environment is made for each call (no
state is kept between calls, so that two reports can be written at once).
"""

from __future__ import annotations

import base64
import math
import os
import secrets
from dataclasses import fields
from numbers import Real
from pathlib import Path

import jinja2
import markupsafe

import wallrun
from wallrun import seismic
from wallrun.cautions import CAUTION, NOTHING_DESIGNED, left_out, not_checked
from wallrun.codes import ec2
from wallrun.factors import OVERRIDE_KEYS, RECOMMENDED
from wallrun.outputs.report import calc, figures
from wallrun.outputs.stamp import issue_date
from wallrun.outputs.tables import STRUCTURAL_CHECKS, cost_csv_rows
from wallrun.takeoff import DEMO_RATES_NOTE

COMBINATION_ORDER = ("EQU", "DA1-1", "DA1-2", "DA2", "DA3", "SEIS", "SLS")

CHECK_WORDS = {
    "overturning": "overturning about the toe edge",
    "sliding": "sliding along the underside of the base (with passive resistance in front)",
    "bearing": "bearing resistance of the foundation",
    "eccentricity": "eccentricity of the resultant, ULS (|e| <= B/3)",
    "eccentricity_sls": "resultant within the middle third, characteristic (|e| <= B/6)",
    "bearing_sls": "maximum edge pressure against the allowable pressure",
    "stem_bending": "stem bending at the top of the base",
    "stem_shear": "stem shear at the top of the base",
    "heel_bending": "heel bending at the back face of the stem",
    "heel_shear": "heel shear at the back face of the stem",
    "toe_bending": "toe bending at the front face of the stem",
    "toe_shear": "toe shear at the front face of the stem",
    "crack_spacing": "bar spacing or diameter for crack control",
    "min_steel": "minimum and maximum reinforcement",
    "joint_pressure": "edge pressure against the cap that keeps the joints' pressure ratio",
    "overall": "overall stability of the slope and wall together (critical slip circle)",
    "restraint_steel": "minimum reinforcement for restrained early-age and shrinkage strains",
    "bar_bend": "bearing stress inside bar bends",
}

FACTOR_WORDS = {
    "gG_unfav": "gamma_G, permanent, unfavourable",
    "gG_fav": "gamma_G, permanent, favourable",
    "gQ": "gamma_Q, variable, unfavourable (favourable: 0)",
    "g_phi": "gamma_phi' on tan phi'",
    "g_c": "gamma_c' on c'",
    "g_cu": "gamma_cu on cu",
    "gR_bearing": "gamma_R;v bearing",
    "gR_sliding": "gamma_R;h sliding",
    "gR_passive": "gamma_R;e passive resistance",
    "gG_unfav_ground": "gamma_G, unfavourable ground actions (DA3)",
    "gR_slope": "gamma_R;e slopes and overall stability",
}

MEMBERS = ("stem", "stem_front", "stem_horizontal", "heel", "toe", "base_distribution")


def num(x, nd: int = 2) -> str:
    """A number to ``nd`` decimals ("" for None, "-" for NaN, "inf" spelled out; never
    "-0.00")."""
    if x is None:
        return ""
    if isinstance(x, str):
        return x
    x = float(x)
    if math.isnan(x):
        return "-"
    if math.isinf(x):
        return "inf" if x > 0 else "-inf"
    s = f"{x:.{nd}f}"
    return s[1:] if s[0] == "-" and not any(ch in "123456789" for ch in s) else s


def cells(values, *nd) -> markupsafe.Markup:
    """Adjacent table cells of numbers: ``values`` each to its ``nd`` decimals (:func:`num`)
    joined by ``<td>``, as markup (one output of the template for a run of numbers;
    anything but a number or None is refused, so no text goes out unescaped)."""
    out = []
    for v, d in zip(values, nd, strict=True):
        if v is not None and not isinstance(v, Real):
            raise TypeError(f"cells() takes numbers only, not {v!r}")
        out.append(num(v, d))
    return markupsafe.Markup("<td>".join(out))


def decimals(unit: str) -> int:
    """Decimals shown for a check's effect and resistance in ``unit``."""
    return {"m": 3, "mm2/m": 0, "mm": 0}.get(unit, 1)


def bar_sets(reinforcement):
    """(member, BarSet) of the members a section has, in the report's order."""
    return [(m, getattr(reinforcement, m)) for m in MEMBERS
            if getattr(reinforcement, m, None) is not None]


CODES = ("EN 1997-1", "EN 1992-1-1")


def by_code(checks):
    """[(code, entries)]: the check entries of EN 1997-1 (the geotechnical checks) and of
    EN 1992-1-1 (the members), in their order; groups without entries left out."""
    geo = [c for c in checks if c.check not in STRUCTURAL_CHECKS]
    struc = [c for c in checks if c.check in STRUCTURAL_CHECKS]
    return [(code, group) for code, group in zip(CODES, (geo, struc)) if group]


def clause(text: str, code: str) -> str:
    """A clause without what the head of its group names: the code (``EN 1997-1 6.5.3``
    under EN 1997-1 reads ``6.5.3``) and, for a seismic check, ``seismic.BASIS`` (the
    head names it once); other clauses as they are."""
    if text.startswith(seismic.BASIS + "; "):
        text = text[len(seismic.BASIS) + 2:]
    return text[len(code) + 1:] if text.startswith(code + " ") else text


def environment() -> jinja2.Environment:
    """The templates, autoescaped, with the report's filters."""
    env = jinja2.Environment(
        loader=jinja2.PackageLoader("wallrun.outputs.report", "templates"),
        autoescape=True, trim_blocks=True, lstrip_blocks=True,
        undefined=jinja2.StrictUndefined)
    env.filters.update(num=num, cells=cells, decimals=decimals, bar_sets=bar_sets,
                       by_code=by_code, clause=clause)
    return env


def _order(names, order):
    rank = {n: i for i, n in enumerate(order)}
    return sorted(names, key=lambda n: rank.get(n, len(rank)))


def _over_checks(panels) -> dict:
    """What the report reads from every check entry, in one pass: the highest
    utilization of each panel (``umax``; None for a panel without checks, one that could
    not be designed), the highest of all (``highest``: panel name and
    entry, the first on a tie), the combinations and each check's clauses."""
    umax, best, combinations, clauses = [], None, set(), {}
    seen: set[int] = set()  # the kinds of a listing are shared by those of one evaluation
    for p in panels:
        lst = p.checks  # read by its columns (results.CheckListing)
        if id(lst.kinds) not in seen:
            seen.add(id(lst.kinds))
            for c, comb, _case, _unit, clause in lst.kinds:
                combinations.add(comb)
                clauses.setdefault(c, set()).add(clause)
        top = lst.top()  # the first on a tie
        u = None if top is None else float(lst.values[2, top])
        umax.append(u)  # None (shown blank): a panel that could not be designed
        if u is not None and (best is None or u > best[2]):
            best = (p.panel.panel, lst, u, top)
    return {"umax": umax, "combinations": combinations, "clauses": clauses,
            "highest": None if best is None else {"panel": best[0], "entry": best[1][best[3]]}}


def _factors(site) -> dict:
    sets = dict(site.factors)
    names = _order(list(sets), COMBINATION_ORDER)
    keys = [k for k in OVERRIDE_KEYS if any(getattr(sets[n], k, None) is not None
                                            for n in names)]
    rows, changed = [], False
    for k in keys:
        values = []
        for n in names:
            v = getattr(sets[n], k, None)
            rec = getattr(RECOMMENDED[n], k, None) if n in RECOMMENDED else None
            text = "-" if v is None else f"{v:.2f}"
            if v is not None and rec is not None and abs(v - rec) > 1e-12:
                text += f" * (rec. {rec:.2f})"
                changed = True
            values.append(text)
        rows.append({"key": k, "words": FACTOR_WORDS.get(k, ""), "cells": values})
    return {"names": names, "rows": rows, "changed": changed}


def _materials(site) -> list:
    c, s = site.concrete, site.steel
    fck = c.fck_mpa
    return [
        ("concrete class", c.strength_class),
        ("fck", f"{fck:g} MPa"),
        ("fctm (EN 1992-1-1 Table 3.1)", f"{float(ec2.fctm(fck)):.2f} MPa"),
        ("alpha_cc", f"{c.alpha_cc:g}"),
        ("gamma_c, gamma_s", f"{ec2.GAMMA_C:g}, {ec2.GAMMA_S:g} (2.4.2.4, persistent and transient)"),
        ("reinforcement fyk", f"{s.fyk_mpa:g} MPa"),
        ("bar sizes allowed", ", ".join(f"{b:g}" for b in s.bar_sizes_mm) + " mm"),
        ("spacings allowed", ", ".join(f"{b:g}" for b in s.spacings_mm) + " mm"),
        ("cover, stem faces and top of base", f"{c.cover_mm:g} mm"),
        ("cover, underside of base (cast against ground, 4.4.1.3(4))", f"{c.cover_ground_mm:g} mm"),
        ("crack width limit wk", f"{site.design.crack_width_mm:g} mm (7.3.3, Table 7.3N)"),
    ]


def _ground(site) -> list:
    bf, lo, w = site.backfill, site.loads, site.water
    if w is None:
        water = "none behind the wall: a drained wall (drainage to be provided and maintained)"
    elif w.level_m is not None:
        water = (f"level {w.level_m:.2f} m behind the wall (capped at the backfill surface), "
                 "triangular uplift, free drainage in front; gamma_w 9.81 kN/m3; permanent")
    else:
        water = (f"{w.height_above_base_m:.2f} m above each panel's underside of base (capped "
                 "at the backfill surface), triangular uplift, free drainage in front; "
                 "gamma_w 9.81 kN/m3; permanent")
    return [
        ("backfill unit weight", f"{bf.unit_weight_kn_m3:g} kN/m3"),
        ("backfill friction angle phi'k", f"{bf.friction_angle_deg:g} deg"),
        ("backfill surface slope beta", f"{bf.slope_deg:g} deg"),
        ("wall friction delta_k", f"{bf.wall_friction_deg:g} deg (Coulomb stem pressure only)"),
        ("backfill cohesion", "ignored"),
        ("water", water),
        ("surcharge on the retained surface q (variable)", f"{lo.surcharge_kpa:g} kPa"),
        ("psi2 on the surcharge (quasi-permanent, crack control)", f"{lo.psi2:g}"),
    ]


_FOUNDATION_KEYS = (("unit_weight_kn_m3", "unit weight (kN/m3)"),
                    ("friction_angle_deg", "phi'k (deg)"),
                    ("phi_cv_deg", "phi'cv, base friction (deg)"),
                    ("cohesion_kpa", "c'k (kPa)"), ("undrained_strength_kpa", "cu,k (kPa)"),
                    ("allowable_bearing_kpa", "allowable bearing (kPa)"))


def _foundation(site) -> dict:
    rows = [{"label": "default", "start": "", "end": "",
             "cells": [getattr(site.foundation, k) for k, _ in _FOUNDATION_KEYS]}]
    for z in site.zones:
        rows.append({"label": "zone", "start": num(z.from_m, 2), "end": num(z.to_m, 2),
                     "cells": [getattr(z.foundation, k) for k, _ in _FOUNDATION_KEYS]})
    return {"columns": _FOUNDATION_KEYS, "rows": rows}


def _settings(site) -> list:
    out = [(f"[design] {f.name}", getattr(site.design, f.name)) for f in fields(site.design)]
    out += [(f"[wall] {f.name}", getattr(site.wall, f.name)) for f in fields(site.wall)]
    return out


def _check_words(clauses: dict) -> list:
    return [{"check": k, "words": CHECK_WORDS.get(k, ""), "clauses": "; ".join(sorted(clauses[k]))}
            for k in _order(list(clauses), calc.CHECK_ORDER)]


def context(result, date: str | None = None) -> dict:
    """Everything the template shows, from ``result`` (a DesignResult)."""
    site = result.site
    panels = result.panels
    calcs = calc.type_calcs(result)
    drawings = figures.section_drawings([c.st.section for c in calcs],
                                        [c.panel for c in calcs])
    calcs = [{"number": c.number, "st": c.st, "panel": c.panel, "actions": c.actions,
              "checks": c.checks, "entries": c.entries, "bearing": c.bearing,
              "passive": c.passive, "seismic": c.seismic, "drawing": d}
             for c, d in zip(calcs, drawings)]
    png = figures.run_png(result)
    n_bad = sum(p.status != "ok" for p in panels)
    j_bad = [j for j in result.joints if j.status != "ok"]
    type_length: dict = {}
    for p in panels:
        type_length[p.section_type] = type_length.get(p.section_type, 0.0) + p.panel.length_m
    seen = _over_checks(panels)
    warnings = list(result.warnings)
    warnings += [w for w in getattr(site, "warnings", ()) if w not in warnings]
    return {
        "r": result, "site": site,
        "name": site.project.name or "(unnamed project)",
        "reference": site.project.reference,
        "date": date or issue_date().isoformat(),
        "version": wallrun.__version__,
        "status": ("ok: every panel and joint passes" if result.ok else
                   f"FLAGGED: {n_bad} panel(s) and {len(j_bad)} joint(s)"),
        "totals": {"length": sum(p.panel.length_m for p in panels),
                   "concrete": sum(p.concrete_m3 or 0.0 for p in panels),
                   "steel": sum(p.steel_kg or 0.0 for p in panels)},
        "highest": seen["highest"],
        "caution": CAUTION, "not_checked": not_checked(site), "demo_note": DEMO_RATES_NOTE,
        "warnings": warnings,
        "flagged_panels": [p for p in panels if p.status != "ok"],
        "flagged_joints": j_bad,
        "joints": {"founding": max((j.founding_step_m for j in result.joints), default=0.0),
                   "top": max((j.top_step_m for j in result.joints), default=0.0),
                   "ratio": max((j.pressure_ratio for j in result.joints), default=0.0)},
        "combinations": _order(seen["combinations"], COMBINATION_ORDER),
        "factors": _factors(site), "materials": _materials(site), "ground": _ground(site),
        "foundation": _foundation(site), "settings": _settings(site),
        "check_words": _check_words(seen["clauses"]),
        "run_png": None if png is None else
        "data:image/png;base64," + base64.b64encode(png).decode("ascii"),
        "umax": seen["umax"],
        "type_length": type_length, "calcs": calcs,
        "cost_rows": cost_csv_rows(result), "money": site.takeoff.money,
        "seismic_basis": seismic.BASIS,
        "nothing_designed": NOTHING_DESIGNED,
        "left_out": left_out(result.not_designed) if result.not_designed else "",
    }


def render_report(result, date: str | None = None) -> str:
    """The whole report of ``result`` (a DesignResult) as HTML text; ``date``: the
    date of issue shown (default :func:`wallrun.outputs.stamp.issue_date`)."""
    return environment().get_template("report.html.j2").render(context(result, date))


def write_report(result, path, date: str | None = None) -> Path:
    """Write the calculation report of ``result`` to ``path`` (UTF-8); returns the path.
    The file appears complete or not at all (written beside it, then renamed)."""
    path = Path(path)
    data = render_report(result, date).encode("utf-8")
    tmp = path.with_name(f".{path.name}.{secrets.token_hex(6)}.part")
    try:
        with open(tmp, "xb") as f:  # a new file, with the umask's permissions
            f.write(data)
        os.replace(tmp, path)
    except BaseException:
        tmp.unlink(missing_ok=True)
        raise
    return path
