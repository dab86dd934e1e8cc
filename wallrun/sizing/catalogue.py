"""The cheapest passing type of a standard section catalogue (design-basis section 6).

Every type of ``sections.csv`` is checked in full at every demand with its own bars
(``structure.check_reinforcement`` through ``evaluate.evaluate``), one call per type
and ground; each demand takes the cheapest type that passes every check.
"""

from __future__ import annotations

import math

import numpy as np

from wallrun.results import BarSet, Reinforcement
from wallrun.section import Section, SectionArrays
from wallrun.settings import Basis, CatalogueSection

from . import evaluate as ev_
from .conditions import Demand, Rows
from .evaluate import Costing, SizedDesign
from .conditions import beyond_reason, steep_reason
from .search import flagged


def _barset(bar_mm: int, spacing_mm: int, d_mm: float) -> BarSet:
    """Bars of diameter bar_mm at spacing_mm: As,prov = pi/4 phi^2 x 1000/s, mm2/m."""
    return BarSet(bar_mm=int(bar_mm), spacing_mm=int(spacing_mm),
                  as_prov_mm2_per_m=math.pi / 4 * bar_mm ** 2 * 1000.0 / spacing_mm,
                  as_req_mm2_per_m=0.0, d_mm=float(d_mm))


def catalogue_bars(c: CatalogueSection, basis: Basis) -> Reinforcement:
    """The bars of a catalogue type. Main bars outermost (d = h - cover - phi/2; the
    underside of the base with ``cover_ground_mm``); the distribution bar gives the stem
    horizontal bars, the base distribution bars and the stem front vertical bars (inside
    the main bars where they cross them)."""
    cov, covg = basis.concrete.cover_mm, basis.concrete.cover_ground_mm
    ts, tb = c.stem_base_m * 1000.0, c.base_thickness_m * 1000.0
    dist = c.dist_bar_mm
    return Reinforcement(
        stem=_barset(c.stem_bar_mm, c.stem_spacing_mm, ts - cov - c.stem_bar_mm / 2),
        heel=_barset(c.heel_bar_mm, c.heel_spacing_mm, tb - cov - c.heel_bar_mm / 2),
        toe=_barset(c.toe_bar_mm, c.toe_spacing_mm, tb - covg - c.toe_bar_mm / 2),
        stem_horizontal=_barset(dist, c.dist_spacing_mm, ts - cov - c.stem_bar_mm - dist / 2),
        base_distribution=_barset(dist, c.dist_spacing_mm, tb - cov - c.heel_bar_mm - dist / 2),
        stem_front=_barset(dist, c.dist_spacing_mm, ts - cov - dist / 2))


def catalogue_section(c: CatalogueSection) -> Section:
    """The section of a catalogue type, m."""
    return Section(stem_top_m=c.stem_top_m, stem_base_m=c.stem_base_m,
                   base_width_m=c.base_width_m, toe_m=c.toe_m,
                   base_thickness_m=c.base_thickness_m, key_depth_m=c.key_depth_m,
                   key_width_m=c.key_width_m)


def catalogue_designs(demands, basis: Basis, costing: Costing,
                      catalogue: tuple[CatalogueSection, ...], step: float) -> list[SizedDesign]:
    """The design of each of ``demands`` from the catalogue: the cheapest type passing
    every check with its own bars (ties: lower utilization, then catalogue order).

    None passing: the type of least utilization, flagged with its governing check.
    Beyond the supported height: flagged. A backfill slope at or above phi'_d of EQU or
    a set in use: the first type with its own bars, flagged and not checked.
    """
    if not catalogue:
        raise ValueError("catalogue designs need at least one section type")
    uniq = list(dict.fromkeys(demands))
    out: dict[Demand, SizedDesign] = {}
    todo = []
    for d in uniq:
        steep = steep_reason(d, basis)
        if steep is not None:
            c = catalogue[0]
            out[d] = flagged(d, basis, costing, step, steep, section=catalogue_section(c),
                             bars=catalogue_bars(c, basis), section_type=c.section,
                             checked=False)
        else:
            todo.append(d)
    groups: dict[tuple, list[Demand]] = {}
    for d in todo:
        groups.setdefault(d.ground_key, []).append(d)
    for ds in groups.values():
        rows = Rows.of(ds, [1] * len(ds))
        caps = ev_.caps_of(ds, [1] * len(ds))
        evs = []
        for c in catalogue:
            sec = SectionArrays.of([catalogue_section(c)] * len(ds))
            evs.append(ev_.evaluate(sec, rows, ds[0], basis, costing,
                                    given=catalogue_bars(c, basis), caps=caps))
        for j, d in enumerate(ds):
            beyond = beyond_reason(d)
            cand = [(float(ev.cost[j]), float(ev.utilization[j]), k)
                    for k, ev in enumerate(evs) if bool(ev.ok[j])]
            if cand and beyond is None:
                _, _, k = min(cand)
                out[d] = ev_.sized(evs[k], j, section_type=catalogue[k].section)
                continue
            k = int(np.argmin([float(ev.utilization[j]) for ev in evs]))
            if beyond is not None:
                why = beyond
            else:
                chk, comb, u = evs[k].governing(j)
                why = (f"no catalogue type passes: best {catalogue[k].section} fails {chk} "
                       f"{comb} ({u:.2f})")
            out[d] = ev_.sized(evs[k], j, status="flagged", reason=why,
                               section_type=catalogue[k].section)
    return [out[d] for d in demands]

