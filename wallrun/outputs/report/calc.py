"""What the report shows of each section type: its calculation at its governing panel.

The governing panel of a type is the panel of that type with the highest utilization
over all its checks (the first in chainage order on a tie): the panel the pipeline
gives ``result.actions`` for. Its calculation holds the characteristic actions, the
worst entry of every check, the terms of the governing bearing resistance and the
passive resistance in front (the persistent design situation: the seismic one has its
own terms, in design.json's entries). The terms are not on the result: they are computed here
by the engine's own functions (``stability.bearing_terms``, ``stability.passive_terms``)
at the panel's conditions, many panels of the same ground per call.
"""

from __future__ import annotations

from dataclasses import dataclass, fields

import numpy as np

from wallrun import stability
from wallrun.conditions import Conditions
from wallrun.results import ActionRow, CheckEntry, DesignResult, PanelResult, SectionType
from wallrun.outputs.tables import GEOTECHNICAL_CHECKS, STRUCTURAL_CHECKS
from wallrun.section import SectionArrays

CHECK_ORDER = GEOTECHNICAL_CHECKS + STRUCTURAL_CHECKS


@dataclass(frozen=True)
class TypeCalc:
    """The calculation of one section type.

    number: the type's place in the report (1, 2, ...); panel: its governing panel
    (None when no panel uses it); actions: ``result.actions`` of the type; checks: the
    worst entry of each check of the panel, in :data:`CHECK_ORDER` (unknown checks
    last); entries: how many check entries the panel has; bearing: the terms of the
    panel's worst bearing entry (the fields of ``stability.BearingTerms`` as floats,
    with ``entry``), None without a bearing check; passive: the fields of
    ``stability.PassiveTerms`` as floats, one a ULS set.
    """

    number: int
    st: SectionType
    panel: PanelResult | None
    actions: tuple[ActionRow, ...]
    checks: tuple[CheckEntry, ...]
    entries: int
    bearing: dict | None
    passive: tuple[dict, ...]
    seismic: dict | None = None


def seismic_calc(result: DesignResult, p: PanelResult) -> dict | None:
    """The seismic situation of a type at its governing panel (EN 1998-5 7.3.2 and Annex
    E, design-basis section 10): kh, kv, the design angles and, per sign of kv, theta
    and the Mononobe-Okabe coefficients (``seismic.seismic_set``), and the actions of
    each sign (``seismic.seismic_action_table``); None without ``[seismic]`` or for a
    panel that could not be designed."""
    site = result.site
    if site.seismic is None or p is None or p.status != "ok":
        return None
    from dataclasses import replace

    from wallrun import seismic
    pa = p.panel
    cond = Conditions(z_top=pa.retained_top_m, z_front=pa.front_min_m, z_found=pa.founding_m,
                      backfill=pa.backfill, foundation=pa.foundation,
                      surcharge_kpa=pa.surcharge_kpa, water_level_m=pa.water_level_m)
    basis = replace(site.basis, seismic=site.seismic)
    ss = seismic.seismic_set(cond, basis, site.seismic)
    tables = seismic.seismic_action_table(p.section, cond, basis, site.seismic)
    labels, rows = seismic_rows(tables)
    return {"kh": ss.kh, "kv": ss.kv, "phi_b": ss.phi_b, "delta": ss.delta_back,
            "K0": ss.K0_back, "cases": [(c.label, c.theta, c.K_back, c.theta_w, c.K_back_w)
                                         for c in ss.cases],
            "labels": labels, "rows": rows,
            "sums": [(sum(a.vertical_kn_m for a in t), sum(a.horizontal_kn_m for a in t),
                      sum(a.moment_kn_m_m for a in t)) for t in tables.values()]}


def seismic_rows(tables: dict) -> tuple[list[str], list[dict]]:
    """The seismic actions of every sign of kv side by side, one row an action: its
    name, kind (G, Q, E), point of application x, z (m, the same for every sign: the
    same weight or thrust at the same place, only its size changes with kv) and per
    sign V, H (kN/m) and M (kNm/m). An action whose name differs between the signs (the
    dynamic increment names its own K and theta) is named by its part before the
    brackets, the K and theta being the table's above it."""
    labels = list(tables)
    per_sign = list(tables.values())
    rows = []
    for same in zip(*per_sign, strict=True):
        a = same[0]
        names = {b.name for b in same}
        name = a.name if len(names) == 1 else a.name.split(" (")[0] + " (K, θ of its kv above)"
        kind = {"permanent": "G", "variable": "Q"}.get(a.kind, "E")
        rows.append({"name": name, "kind": kind, "xz": (a.x_m, a.z_m),
                     "values": [(b.vertical_kn_m, b.horizontal_kn_m, b.moment_kn_m_m)
                                for b in same]})
    return labels, rows


def governing_panels(result: DesignResult) -> dict[str, PanelResult]:
    """{section type: its governing panel} (see the module docstring)."""
    best: dict = {}
    for p in result.panels:
        u = p.checks.max_utilization()
        cur = best.get(p.section_type)
        if cur is None or u > cur[0]:
            best[p.section_type] = (u, p)
    return {k: v[1] for k, v in best.items()}


def worst_of_each_check(checks) -> tuple[CheckEntry, ...]:
    """The entry of highest utilization of each check name (the first on a tie), in
    :data:`CHECK_ORDER`, unknown check names after them in order of appearance."""
    worst: dict = {}
    for c in checks:
        w = worst.get(c.check)
        if w is None or c.utilization > w.utilization:
            worst[c.check] = c
    rank = {n: i for i, n in enumerate(CHECK_ORDER)}
    return tuple(sorted(worst.values(), key=lambda c: rank.get(c.check, len(rank))))


def _floats(terms, i: int) -> dict:
    """The fields of a terms dataclass at candidate ``i``, numbers as floats."""
    out = {}
    for f in fields(terms):
        v = getattr(terms, f.name)
        out[f.name] = v if isinstance(v, str) else float(np.asarray(v).reshape(-1)[
            i if np.ndim(v) else 0])
    return out


def _conditions(panels: list[PanelResult]) -> Conditions:
    """The conditions of panels of one ground, as arrays (one entry a panel): the levels
    the panels were checked for and the water level as used (capping it again leaves
    it unchanged)."""
    pa = [p.panel for p in panels]
    first = pa[0]
    arr = lambda xs: np.array(xs, dtype=float)  # noqa: E731
    water = None if first.water_level_m is None else arr([x.water_level_m for x in pa])
    return Conditions(z_top=arr([x.retained_top_m for x in pa]),
                      z_front=arr([x.front_min_m for x in pa]),
                      z_found=arr([x.founding_m for x in pa]), backfill=first.backfill,
                      foundation=first.foundation, surcharge_kpa=first.surcharge_kpa,
                      water_level_m=water)


def resistance_terms(result: DesignResult, panels: list[PanelResult]) -> dict[str, tuple]:
    """{panel name: (bearing terms dict or None, passive terms dicts)} of ``panels``,
    computed per group of panels of the same ground in one call of the engine."""
    basis = result.site.basis
    groups: dict = {}
    for p in panels:
        if not any(c.check == "bearing" and c.combination in basis.uls_sets
                   for c in p.checks):
            continue  # a panel that could not be designed: nothing to show
        pa = p.panel
        key = (pa.backfill, pa.foundation, pa.surcharge_kpa, pa.water_level_m is None)
        groups.setdefault(key, []).append(p)
    out = {}
    for members in groups.values():
        sec = SectionArrays.of([p.section for p in members])
        cond = _conditions(members)
        bearing = stability.bearing_terms(sec, cond, basis)
        passive = stability.passive_terms(sec, cond, basis)
        by_case = {(t.combination, t.case): t for t in bearing}
        for i, p in enumerate(members):
            worst = max((c for c in p.checks if c.check == "bearing"
                         and c.combination in basis.uls_sets), key=lambda c: c.utilization)
            t = by_case.get((worst.combination, worst.case))
            b = None if t is None else {**_floats(t, i), "entry": worst}
            out[p.panel.panel] = (b, tuple(_floats(t, i) for t in passive))
    return out


def type_calcs(result: DesignResult) -> list[TypeCalc]:
    """The calculation of every section type, in the order of ``result.section_types``."""
    gov = governing_panels(result)
    terms = resistance_terms(result, [gov[st.section_type] for st in result.section_types
                                      if st.section_type in gov])
    out = []
    for k, st in enumerate(result.section_types, start=1):
        p = gov.get(st.section_type)
        checks = p.checks if p is not None else ()
        bearing, passive = terms.get(p.panel.panel, (None, ())) if p is not None else (None, ())
        out.append(TypeCalc(k, st, p, tuple(result.actions.get(st.section_type, ()) or ()),
                            worst_of_each_check(checks), len(checks), bearing, passive,
                            seismic_calc(result, p)))
    return out
