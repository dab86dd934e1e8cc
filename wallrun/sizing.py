"""Section sizing: the cheapest passing section, a standard catalogue, a rationalised set.

Design-basis section 6. Three ways to give every panel a section:

- :func:`bespoke`: a vectorised search over base width, toe length, base thickness,
  stem thicknesses and shear key, in ``dimension_step_m`` increments, for the section of
  least cost per metre (``takeoff.cost_per_metre``) that passes every stability
  (``stability.stability_checks``) and structural (``structure.design_reinforcement``)
  check at the panel's conditions. :class:`Designer` reuses a design for equal
  :class:`Demand` s and starts each new search from the designs already found.
- :func:`catalogue_design`: every type of ``sections.csv`` checked in full with its own
  bars (``structure.check_reinforcement``); the cheapest passing type.
- :func:`rationalise`: at most ``max_types`` sections covering all panels at least total
  cost, every panel checked again with its assigned section and bars.

Units: m, kN, kPa; cost in the money units of the rate table, per metre run of wall.
"""

from __future__ import annotations

import dataclasses
import functools
import itertools
import math
from collections.abc import Sequence
from dataclasses import dataclass

import numpy as np

from wallrun import panels
from wallrun.conditions import Conditions
from wallrun.results import BarSet, CheckArray, CheckEntry, Reinforcement
from wallrun.section import Section, SectionArrays
from wallrun.settings import Backfill, Basis, CatalogueSection, Foundation, Water

#: Largest retained height h = z_top - z_front the search is offered for, m. Above it a
#: cantilever wall is rarely economic (counterforts, anchors or piles take over, common
#: practice) and the search bounds below were not laid out for it: flagged, not designed.
MAX_RETAINED_M = 8.0

#: Utilization tolerance: a candidate passes at max utilization <= 1 + _TOL.
_TOL = 1e-9


# --- demand and conditions ---------------------------------------------------------------

@dataclass(frozen=True)
class Demand:
    """The conditions of a panel that do not depend on its section (hashable).

    z_top: highest retained level of the panel (top of the checked section), m.
    z_front: lowest front level, m.
    backfill, foundation: the soils; surcharge_kpa: characteristic surcharge, kPa.
    water: water behind the wall or None (drained).
    wall_top_m: highest wall top of the panel, m (>= z_top; the stem above z_top is
        counted in the cost, never in the checks).
    min_founding_depth_m, founding_step_m: founding rules of design-basis section 1.
    """

    z_top: float
    z_front: float
    backfill: Backfill
    foundation: Foundation
    surcharge_kpa: float
    water: Water | None
    wall_top_m: float
    min_founding_depth_m: float = 0.6
    founding_step_m: float = 0.15

    @property
    def h(self) -> float:
        """Retained height z_top - z_front, m."""
        return self.z_top - self.z_front

    @property
    def height_free_key(self) -> tuple:
        """Front level and wall-top allowance: demands of one ground with equal keys have
        the same conditions but for the height (the taller-design passes compare them)."""
        return (self.z_front, round(self.wall_top_m - self.z_top, 6))

    @property
    def ground_key(self) -> tuple:
        """Everything but the levels: panels with equal keys differ only in height."""
        return (self.backfill, self.foundation, self.surcharge_kpa, self.water,
                self.min_founding_depth_m, self.founding_step_m)


def water_level(water: Water | None, z_found):
    """Absolute water level behind the wall before capping, m (design-basis 3):
    ``level_m``, or the underside of the base ``z_found`` (float or array) plus
    ``height_above_base_m``; None for a drained wall."""
    if water is None:
        return None
    if water.level_m is not None:
        return float(water.level_m)
    if water.height_above_base_m is not None:
        return z_found + float(water.height_above_base_m)
    return None


def conditions_for(demand: Demand, t_base) -> Conditions:
    """Conditions of ``demand`` for candidates of base thickness ``t_base`` (m, float or
    array (n,)): z_found = ``panels.founding_level`` (design-basis section 1), and the
    water level resolved to an absolute level (``level_m``, or z_found +
    ``height_above_base_m``) before capping (capping is the stability module's job)."""
    tb = np.asarray(t_base, dtype=float)
    z_found = panels.founding_level(demand.z_front, tb, demand.min_founding_depth_m,
                                    demand.founding_step_m)
    if tb.ndim == 0:
        z_found = float(z_found)
    level = water_level(demand.water, z_found)
    return Conditions(z_top=float(demand.z_top), z_front=float(demand.z_front), z_found=z_found,
                      backfill=demand.backfill, foundation=demand.foundation,
                      surcharge_kpa=float(demand.surcharge_kpa), water_level_m=level)


# --- results -------------------------------------------------------------------------

@dataclass(frozen=True)
class SizedDesign:
    """A section with its bars and its checks at one demand.

    checks: every stability and structural check (``results.entries``).
    cost_per_m: ``takeoff.cost_per_metre`` of the section, with the stem drawn up to the
        demand's wall top, money per metre run.
    z_found: underside of base, m; edge_pressure_sls_kpa: largest characteristic edge
        pressure (joint pressure ratio), kPa.
    status: ``ok`` or ``flagged`` (with ``reason``); utilization: largest of all checks;
    governing: that check as ``check combination``; section_type: a name when the
    section comes from the catalogue or a rationalised set, else "".
    """

    section: Section
    reinforcement: Reinforcement | None
    checks: tuple[CheckEntry, ...]
    cost_per_m: float
    z_found: float
    edge_pressure_sls_kpa: float
    status: str
    reason: str
    utilization: float
    governing: str
    section_type: str = ""


@dataclass(frozen=True)
class Evaluation:
    """Every check of n candidate sections at one demand (see :func:`evaluate`).

    checks: stability then structural checks, each for the n candidates.
    utilization: largest utilization of each candidate; ok: it passes every check and
    its dimensions close; cost: cost per metre (``takeoff.cost_per_metre``).
    """

    sec: SectionArrays
    cond: Conditions
    checks: list[CheckArray]
    structure: object  # structure.StructureResult
    utilization: np.ndarray
    ok: np.ndarray
    cost: np.ndarray
    steel_kg_per_m: np.ndarray
    actions: object = None  # stability.AllActions of the candidates (edge pressure)
    _cache: dict = dataclasses.field(default_factory=dict, repr=False, compare=False)

    def _matrices(self):
        m = self._cache.get("URE")
        if m is None:
            m = self._cache["URE"] = _util_matrix(self.checks, len(self.sec))
        return m

    @property
    def U(self) -> np.ndarray:
        """Utilization of every check (rows, in ``checks`` order) x candidate (computed
        on first use)."""
        return self._matrices()[0]

    @property
    def E(self) -> np.ndarray:
        """Effects of every check x candidate."""
        return self._matrices()[1]

    @property
    def R(self) -> np.ndarray:
        """Resistances of every check x candidate."""
        return self._matrices()[2]

    def __len__(self) -> int:
        return len(self.sec)

    def governing(self, i: int) -> tuple[str, str, float]:
        """(check, combination, utilization) of the worst check of candidate i."""
        if not len(self.checks):
            return ("", "", 0.0)
        k = int(np.argmax(self.U[:, i]))
        return (self.checks[k].check, self.checks[k].combination, float(self.U[k, i]))


def _stem_heights(sec: SectionArrays, demand: Demand, cond: Conditions):
    """Drawn stem height (top of base to the wall top) and founding depth D, m, (n,)."""
    zf = np.asarray(cond.z_found, dtype=float)
    top = max(demand.wall_top_m, demand.z_top)
    hs = top - zf - np.asarray(sec.base_thickness_m, dtype=float)
    return hs, demand.z_front - zf


def lower_bound_cost(sec: SectionArrays, demand: Demand, rates) -> np.ndarray:
    """Cost per metre without the steel, (n,): a lower bound of the full cost (every
    rate is >= 0), used to skip candidates that cannot beat the best one found."""
    from wallrun import takeoff

    cond = conditions_for(demand, sec.base_thickness_m)
    hs, D = _stem_heights(sec, demand, cond)
    return takeoff.cost_per_metre(sec, hs, D, 0.0, rates)


def evaluate(sec: SectionArrays, demand: Demand, basis: Basis, rates,
             given: Reinforcement | None = None, curtail: bool = True,
             screen: bool = False, complete_if_none: bool = True) -> Evaluation:
    """All stability and structural checks of n candidate sections at ``demand``.

    Stability: ``stability.evaluate_all`` (the checks of ``stability.stability_checks``,
    design-basis section 4, with the member actions, quasi-permanent moments and stem
    moment envelope from the same geometry and factored actions). Structure:
    ``structure.design_reinforcement`` chooses the cheapest bars per candidate, or with
    ``given`` bars ``structure.check_reinforcement`` checks them (design-basis section 5).
    Cost: ``takeoff.cost_per_metre`` with the structure's ``steel_kg_per_m``. A candidate
    whose dimensions do not close (``section.section_problems``) never passes.

    ``curtail=False`` (the search) leaves the stem moment envelope out: every stem bar
    then runs full height, which only overstates the steel mass (the bars and all checks
    at the critical sections are the same); the chosen section is evaluated again with
    curtailment.

    ``screen=True`` (the search only): the structure is designed only for the candidates
    that pass every stability check; a candidate failing stability fails anyway, and its
    structural checks are reported as not evaluated (effect and resistance nan,
    utilization 0), its utilization is its stability utilization and its steel and cost
    are nan. With ``complete_if_none`` and no candidate passing every check, the
    structure of the screened-out candidates is designed as well, so that their
    utilizations are complete (the search then descends on the least utilised).
    """
    from wallrun import stability, structure, takeoff
    from wallrun.members import MemberActions
    from wallrun.structure import _full

    n = len(sec)
    cond = conditions_for(demand, sec.base_thickness_m)
    allx = stability.evaluate_all(sec, cond, basis)
    stab = allx.checks
    bad = allx.ctx.bad()
    h_c = cond.z_top - np.asarray(cond.z_found, dtype=float) - np.asarray(sec.base_thickness_m, float)
    M_stem = _stem_moment_table(allx, sec, cond) if curtail else None

    def structure_of(idx):
        """StructureResult of the candidates idx (None: all); the member actions of a
        subset come from the subset's own geometry (the same values)."""
        if idx is None:
            s_sec, s_hc = sec, h_c
            s_act, s_qp = allx.member_actions(), allx.qp()
            at = M_stem(None) if curtail else None
        else:
            s_sec = sec.subset(idx)
            s_hc = _full(h_c, n)[idx]
            at = M_stem(idx) if curtail else None
            if n >= 64 and 2 * len(idx) < n:  # few survivors: their own geometry
                src = allx.subset(idx)
                s_act, s_qp = src.member_actions(), src.qp()
            else:  # the rows idx of every candidate's actions
                s_act = [MemberActions(a.member, a.combination, a.case, _full(a.M_Ed, n)[idx],
                                       _full(a.V_Ed, n)[idx]) for a in allx.member_actions()]
                s_qp = {k: _full(v, n)[idx] for k, v in allx.qp().items()}
        if given is None:
            return structure.design_reinforcement(s_sec, s_act, s_qp, basis, stem_moment_at=at,
                                                  stem_height_m=s_hc)
        return structure.check_reinforcement(s_sec, s_act, s_qp, basis, given, stem_moment_at=at,
                                             stem_height_m=s_hc)

    todo = None
    if screen:
        u_stab = _max_util(stab, n)
        todo = np.flatnonzero((u_stab <= 1.0 + _TOL) & ~bad)
        if len(todo) == n:
            todo = None
    if todo is None:
        sr = structure_of(None)
        util = _max_util(list(stab) + list(sr.checks), n)
    else:
        part = structure_of(todo) if len(todo) else None
        util = u_stab.copy()
        if part is not None:
            util[todo] = np.maximum(u_stab[todo], _max_util(part.checks, len(todo)))
        if complete_if_none and not ((util <= 1.0 + _TOL) & ~bad).any():
            sr = structure_of(None)  # nothing passes: every candidate in full
            util = _max_util(list(stab) + list(sr.checks), n)
        else:
            sr = _Screened(part, todo, n)
    checks = _Checks(stab, sr)
    ok = (util <= 1.0 + _TOL) & ~bad
    steel = np.broadcast_to(np.asarray(sr.steel_kg_per_m, dtype=float), util.shape)
    hs, D = _stem_heights(sec, demand, cond)
    cost = takeoff.cost_per_metre(sec, hs, D, steel, rates)
    return Evaluation(sec=sec, cond=cond, checks=checks, structure=sr, utilization=util,
                      ok=ok, cost=np.asarray(cost, dtype=float), steel_kg_per_m=steel,
                      actions=allx)


def _max_util(checks, n: int) -> np.ndarray:
    """Largest utilization of every candidate over ``checks`` (n,), row by row with the
    convention of ``results.utilization`` (the same values as the max of the matrix of
    :func:`_util_matrix`; nan propagates)."""
    best = np.full(n, -np.inf)
    with np.errstate(divide="ignore", invalid="ignore"):
        for c in checks:
            e, r = c.effect, c.resistance
            u = np.divide(e, r)
            pos = np.greater(r, 0.0)
            if not pos.all():
                u = np.where(pos, u, np.where(np.greater(e, 0.0), np.inf, 0.0))
            np.maximum(best, u, out=best)
    if not checks:
        best[:] = 0.0
    return best


def _util_matrix(checks, n: int):
    """(U, E, R): utilization, effect and resistance of every check (rows) x candidate,
    with the convention of ``results.utilization`` (E / R where R > 0, else inf where
    E > 0 and 0 where not), without its temporaries."""
    m = len(checks)
    E = np.empty((m, n))
    R = np.empty((m, n))
    for k, c in enumerate(checks):
        E[k] = c.effect
        R[k] = c.resistance
    with np.errstate(divide="ignore", invalid="ignore"):
        U = E / R
    mask = ~(R > 0)
    if mask.any():
        U[mask] = np.where(E[mask] > 0, np.inf, 0.0)
    return U, E, R


class _Screened:
    """A StructureResult-like view of n candidates of which only ``idx`` had their
    structure designed (``evaluate(screen=True)``): the structural checks of the others
    are not evaluated (effect and resistance nan), their steel mass nan."""

    def __init__(self, part, idx: np.ndarray, n: int):
        self.part, self.idx, self.n = part, idx, n
        self.steel_kg_per_m = np.full(n, np.nan)
        self.pos = np.full(n, -1, dtype=np.int64)
        self.pos[idx] = np.arange(len(idx))
        if part is not None:
            self.steel_kg_per_m[idx] = part.steel_kg_per_m

    @functools.cached_property
    def checks(self) -> list[CheckArray]:
        """The structural checks of all n candidates (nan where not designed), built on
        first use: the search reads only utilizations and costs."""
        part, idx, n = self.part, self.idx, self.n
        if part is None:
            return []
        m = len(part.checks)
        E = np.full((m, n), np.nan)
        R = np.full((m, n), np.nan)
        out = []
        for k, c in enumerate(part.checks):
            E[k, idx] = c.effect
            R[k, idx] = c.resistance
            out.append(CheckArray(c.check, c.combination, c.case, c.unit, c.clause, E[k], R[k]))
        return out


class _Checks(Sequence):
    """The stability checks then the structural checks of an evaluation, the structural
    ones taken from ``structure`` only when first read (see :class:`_Screened`)."""

    def __init__(self, stab, structure):
        self._stab, self._structure, self._all = list(stab), structure, None

    def _list(self) -> list[CheckArray]:
        if self._all is None:
            self._all = self._stab + list(self._structure.checks)
        return self._all

    def __getitem__(self, k):
        return self._list()[k]

    def __len__(self) -> int:
        return len(self._list())

    def reinforcement(self, i: int) -> Reinforcement | None:
        """The bars of candidate i, None where its structure was not designed."""
        j = int(self.pos[i])
        return None if j < 0 else self.part.reinforcement(j)


def _stem_moment_table(allx, sec: SectionArrays, cond: Conditions, k: int = 41):
    """A maker of ``stem_moment_at(y)`` for the curtailment: the stem moment envelope of
    ``allx.stem_moment`` tabulated once at k depths 0..h_c of every candidate, and
    ``make(idx)`` the interpolating function of the candidates idx (None: all),
    linear between the tabulated depths (kNm/m, y in m below z_top).

    Conservative: the stem moment is convex in the depth (its second derivative is the
    pressure on the stem, >= 0), so a chord lies on or above it and the interpolated
    moment is never below the true one (curtailment only ever stops bars later).
    """
    n = len(sec)
    zf = np.broadcast_to(np.asarray(cond.z_found, dtype=float), (n,))
    hc_all = np.maximum(cond.z_top - zf - np.asarray(sec.base_thickness_m, dtype=float), 0.0)
    frac = np.linspace(0.0, 1.0, k)
    M_all = np.asarray(allx.stem_moment(frac[:, None] * hc_all[None, :]), dtype=float)

    def make(idx):
        M = M_all if idx is None else M_all[:, idx]
        hc = hc_all if idx is None else hc_all[idx]
        m = M.shape[1]
        cols = np.arange(m)

        def at(y):
            y = np.broadcast_to(np.asarray(y, dtype=float), (m,))
            with np.errstate(divide="ignore", invalid="ignore"):
                t = np.where(hc > 0, np.clip(y / np.where(hc > 0, hc, 1.0), 0.0, 1.0), 0.0) * (k - 1)
            i = np.minimum(np.floor(t).astype(int), k - 2)
            a = t - i
            return (1.0 - a) * M[i, cols] + a * M[i + 1, cols]

        return at

    return make


def _entries(ev: Evaluation, i: int) -> tuple[CheckEntry, ...]:
    """``results.entries(ev.checks, i)`` from the evaluation's own effect, resistance and
    utilization matrices (the same values: U is E / R with the same conventions)."""
    E, R, U = ev.E[:, i].tolist(), ev.R[:, i].tolist(), ev.U[:, i].tolist()
    worst: dict[tuple[str, str], int] = {}
    for k, c in enumerate(ev.checks):
        key = (c.check, c.combination)
        if key not in worst or U[k] > U[worst[key]]:
            worst[key] = k
    gov = set(worst.values())
    return tuple(CheckEntry(c.check, c.combination, c.case, E[k], R[k], c.unit, U[k], c.clause,
                            k in gov) for k, c in enumerate(ev.checks))


def _sized(ev: Evaluation, i: int, demand: Demand, basis: Basis, status: str | None = None,
           reason: str = "", section_type: str = "") -> SizedDesign:
    """The SizedDesign of candidate ``i`` of an evaluation."""
    from wallrun import stability

    section = ev.sec.take(i)
    if ev.actions is not None:  # the same conditions and actions as the evaluation
        edge = float(np.asarray(ev.actions.edge_pressure()).reshape(-1)[i])
    else:
        one = SectionArrays.of([section])
        cond1 = conditions_for(demand, one.base_thickness_m)
        edge = float(np.asarray(stability.edge_pressure_sls(one, cond1, basis)).reshape(-1)[0])
    chk, comb, u = ev.governing(i)
    if status is None:
        status = "ok" if bool(ev.ok[i]) else "flagged"
        if status == "flagged" and not reason:
            reason = f"fails {chk} {comb} ({u:.2f})"
    return SizedDesign(section=section, reinforcement=ev.structure.reinforcement(i),
                       checks=_entries(ev, i), cost_per_m=float(ev.cost[i]),
                       z_found=float(np.asarray(ev.cond.z_found).reshape(-1)[i]
                                     if np.ndim(ev.cond.z_found) else ev.cond.z_found),
                       edge_pressure_sls_kpa=edge, status=status, reason=reason,
                       utilization=float(ev.utilization[i]), governing=f"{chk} {comb}".strip(),
                       section_type=section_type)


# --- the search space ------------------------------------------------------------------

#: Candidate vector (integers): B, toe, t_base, t_stem_base, t_stem_top in steps of the
#: dimension step; key depth index (0 = no key, k = the k-th key depth) and key width
#: index.
_NDIM = 7


@dataclass(frozen=True)
class SearchBounds:
    """Bounds of the bespoke search for one demand, m (design-basis section 6).

    Each bound is a common-practice proportion (the ``bespoke`` docstring says why):
    base width ``B`` in [b_lo, b_hi]; toe in [0, B/2]; base thickness in [tb_lo, tb_hi]
    and never thinner than the stem base; stem base in [ts_lo, ts_hi]; stem top in
    [tt_lo, min(tt_hi, stem base)]; key none or depth in ``key_depths`` with width in
    ``key_widths``.
    """

    step: float
    b_lo: float
    b_hi: float
    tb_lo: float
    tb_hi: float
    ts_lo: float
    ts_hi: float
    tt_lo: float
    tt_hi: float
    key_depths: tuple[float, ...]
    key_widths: tuple[float, ...]

    def n(self, lo: float, hi: float) -> tuple[int, int]:
        """Integer range of multiples of ``step`` in [lo, hi]."""
        return (int(math.ceil(lo / self.step - 1e-6)), int(math.floor(hi / self.step + 1e-6)))

    def axes(self) -> list[np.ndarray]:
        """Integer axes of the candidate vector (the toe axis is 0..B_hi/2)."""
        b = self.n(self.b_lo, self.b_hi)
        tb = self.n(self.tb_lo, self.tb_hi)
        ts = self.n(self.ts_lo, self.ts_hi)
        tt = self.n(self.tt_lo, self.tt_hi)
        return [np.arange(b[0], b[1] + 1), np.arange(0, b[1] // 2 + 1),
                np.arange(tb[0], tb[1] + 1), np.arange(ts[0], ts[1] + 1),
                np.arange(tt[0], tt[1] + 1), np.arange(0, len(self.key_depths) + 1),
                np.arange(0, max(len(self.key_widths), 1))]

    @functools.cached_property
    def _box(self) -> tuple[np.ndarray, np.ndarray]:
        """Least and greatest value of each integer axis, (7,) each."""
        axes = self.axes()
        return (np.array([a[0] for a in axes], dtype=np.int64),
                np.array([a[-1] for a in axes], dtype=np.int64))

    def valid(self, v: np.ndarray) -> np.ndarray:
        """Mask of integer candidates (m, 7) inside the bounds and closing."""
        lo, hi = self._box
        ok = ((v >= lo) & (v <= hi)).all(axis=1)
        B, toe, tb, ts, tt, kd, kw = v.T
        ok &= 2 * toe <= B  # toe <= B / 2
        ok &= tb >= ts  # base not thinner than the stem it anchors
        ok &= tt <= ts
        ok &= B - toe - ts >= 1  # a heel of at least one step
        ok &= (kd > 0) | (kw == 0)  # no key: one representative width index
        if self.key_widths:
            w = np.asarray(self.key_widths)[np.clip(kw, 0, len(self.key_widths) - 1)]
            ok &= (kd == 0) | (toe * self.step + w <= B * self.step + 1e-9)
        return ok

    def sections(self, v: np.ndarray) -> SectionArrays:
        """SectionArrays of integer candidates (m, 7)."""
        s = self.step
        v = np.asarray(v)
        kd = v[:, 5]
        depths = np.concatenate([[0.0], np.asarray(self.key_depths, dtype=float)])
        widths = np.asarray(self.key_widths, dtype=float) if self.key_widths else np.zeros(1)
        d = depths[kd]
        w = np.where(kd > 0, widths[np.clip(v[:, 6], 0, len(widths) - 1)], 0.0)
        return SectionArrays(stem_top_m=np.round(v[:, 4] * s, 6), stem_base_m=np.round(v[:, 3] * s, 6),
                             base_width_m=np.round(v[:, 0] * s, 6), toe_m=np.round(v[:, 1] * s, 6),
                             base_thickness_m=np.round(v[:, 2] * s, 6), key_depth_m=d,
                             key_width_m=w)

    def vector_of(self, s: Section) -> np.ndarray | None:
        """Integer vector of a section snapped to this grid (None for a key off the list)."""
        st = self.step
        kd = 0
        kw = 0
        if s.key_depth_m > 0:
            dd = np.abs(np.asarray(self.key_depths) - s.key_depth_m)
            ww = np.abs(np.asarray(self.key_widths) - s.key_width_m)
            if not len(dd) or dd.min() > 1e-6 or ww.min() > 1e-6:
                return None
            kd, kw = int(dd.argmin()) + 1, int(ww.argmin())
        return np.array([round(s.base_width_m / st), round(s.toe_m / st),
                         round(s.base_thickness_m / st), round(s.stem_base_m / st),
                         round(s.stem_top_m / st), kd, kw])


def bounds_for(demand: Demand, step: float) -> SearchBounds:
    """Search bounds for ``demand`` (the reasons are in :func:`bespoke`), m.

    H is the total height with the founding depth at its least, max(min founding depth,
    0.3 m) below the front level.
    """
    h = max(demand.h, 0.0)
    H = h + max(demand.min_founding_depth_m, 0.3)
    up = lambda x: math.ceil(x / step - 1e-9) * step  # noqa: E731
    ts_hi = up(max(0.30, min(1.0, 0.15 * H)))
    tb_hi = up(max(0.40, min(1.2, 0.15 * H + 0.20)))
    return SearchBounds(
        step=step, b_lo=up(max(0.3 * H, 0.6)), b_hi=up(max(1.2 * H, 1.0)),
        tb_lo=up(0.25), tb_hi=tb_hi, ts_lo=up(0.20), ts_hi=ts_hi, tt_lo=up(0.20),
        tt_hi=up(0.30),
        key_depths=tuple(np.round(np.arange(up(0.30), 0.60 + 1e-9, 2 * step), 6)),
        key_widths=tuple(np.round(np.arange(up(0.30), 0.50 + 1e-9, 2 * step), 6)))


def _codes(v: np.ndarray) -> np.ndarray:
    """One int64 code per integer candidate (for set membership)."""
    v = np.asarray(v, dtype=np.int64)
    code = np.zeros(len(v), dtype=np.int64)
    for k in range(_NDIM):
        code = code * 512 + v[:, k]
    return code


def grid(bounds: SearchBounds, stride: int = 1) -> np.ndarray:
    """Every valid integer candidate of ``bounds`` taking each ``stride``-th value of each
    dimension axis (the last value of each axis always included), shape (m, 7)."""
    axes = []
    for k, a in enumerate(bounds.axes()):
        if k >= 5 or stride == 1:  # key indices: all
            axes.append(a)
        else:
            sel = a[::stride]
            if sel[-1] != a[-1]:
                sel = np.append(sel, a[-1])
            axes.append(sel)
    mesh = np.stack(np.meshgrid(*axes, indexing="ij", copy=False), axis=-1).reshape(-1, _NDIM)
    return mesh[bounds.valid(mesh)]


def _offsets(radius: int) -> np.ndarray:
    """Every integer offset vector with entries in -radius..radius, shape (m, 7)
    (read-only, built once per radius)."""
    return _offsets_cached(int(radius))


@functools.lru_cache(maxsize=8)
def _offsets_cached(radius: int) -> np.ndarray:
    a = np.array(list(itertools.product(range(-radius, radius + 1), repeat=_NDIM)),
                 dtype=np.int64)
    a.flags.writeable = False
    return a


class _Search:
    """The cheapest passing candidate of one demand over the integer grid of ``bounds``.

    ``f(v) -> (ok, cost, util)`` evaluates integer candidates; ``lb(v)`` is a lower bound
    of their cost. Evaluated candidates are remembered and never evaluated twice.
    """

    def __init__(self, bounds: SearchBounds, f, lb, chunk: int = 20000):
        self.bounds, self.f, self.lb, self.chunk = bounds, f, lb, chunk
        self.codes = np.zeros(0, dtype=np.int64)  # codes of the evaluated candidates
        self.V = np.zeros((0, _NDIM), dtype=np.int64)
        self.ok = np.zeros(0, dtype=bool)
        self.cost = np.zeros(0)
        self.util = np.zeros(0)
        self._best, self._best_n = None, 0
        self.evaluated = 0

    def best(self) -> int | None:
        """Index of the cheapest passing candidate seen (ties: lower utilization);
        recomputed only after new candidates were evaluated."""
        if self._best_n == len(self.ok):
            return self._best
        b = None
        if self.ok.any():
            idx = np.flatnonzero(self.ok)
            order = np.lexsort((self.util[idx], self.cost[idx]))
            b = int(idx[order[0]])
        self._best, self._best_n = b, len(self.ok)
        return b

    def best_cost(self) -> float:
        b = self.best()
        return math.inf if b is None else float(self.cost[b])

    def run(self, v: np.ndarray, prune: bool = True) -> None:
        """Evaluate the new valid candidates of ``v`` whose lower bound beats the best."""
        v, codes = self.fresh(v)
        if not len(v):
            return
        if prune and np.isfinite(self.best_cost()):
            keep = self.lb(v) < self.best_cost() - 1e-9
            v, codes = v[keep], codes[keep]
        for a in range(0, len(v), self.chunk):
            part = slice(a, a + self.chunk)
            self.commit(v[part], codes[part], *self.f(v[part], bool(self.ok.any())))

    def commit(self, v, codes, ok, cost, util) -> None:
        """Remember evaluated candidates ``v`` (m, 7) with their codes and results."""
        self.evaluated += len(v)
        self.V = np.vstack([self.V, v])
        self.ok = np.concatenate([self.ok, ok])
        self.cost = np.concatenate([self.cost, cost])
        self.util = np.concatenate([self.util, util])
        self.codes = np.concatenate([self.codes, codes])

    def fresh(self, v: np.ndarray) -> tuple[np.ndarray, np.ndarray]:
        """The valid candidates of ``v`` not evaluated yet, once each (sorted by code),
        and their codes."""
        v = np.asarray(v, dtype=np.int64).reshape(-1, _NDIM)
        if not len(v):
            return v, np.zeros(0, dtype=np.int64)
        v = v[self.bounds.valid(v)]
        codes, first = np.unique(_codes(v), return_index=True)
        v = v[first]
        if len(self.codes):
            new = ~np.isin(codes, self.codes, assume_unique=True)
            v, codes = v[new], codes[new]
        return v, codes

    def nth_passing_cost(self, m: int) -> float:
        """Cost of the m-th cheapest passing candidate seen (inf: fewer pass)."""
        c = self.cost[self.ok]
        if len(c) < m:
            return math.inf
        return float(np.partition(c, m - 1)[m - 1])

    def run_best_first(self, v: np.ndarray, m: int) -> None:
        """Evaluate ``v`` (the coarse grid of a cold start) in increasing lower bound of
        the cost until the ``m`` cheapest passing candidates of ``v`` are known (see
        :func:`best_first`); the seeds and the best are those of evaluating all of ``v``."""
        v, _ = self.fresh(v)
        if len(v):
            for part in best_first(self, v, self.lb(v), m):
                self.run(part, prune=False)

    def seeds(self, m: int) -> list[np.ndarray]:
        """Starting points for the local search: the ``m`` cheapest passing candidates,
        else the ``m`` least utilised."""
        if self.ok.any():
            idx = np.flatnonzero(self.ok)
            idx = idx[np.argsort(self.cost[idx], kind="stable")[:m]]
        else:
            idx = np.argsort(self.util, kind="stable")[:m]
        return [self.V[i] for i in idx]

    def local(self, start: np.ndarray, radius: int = 1, max_iter: int = 60,
              extra: np.ndarray | None = None, polish: bool = True) -> None:
        """Descent from ``start`` (see :func:`descent`, which gives the moves): each
        neighbourhood is evaluated here as it comes."""
        for cand in descent(self, start, radius, max_iter, extra, polish):
            self.run(cand)


#: Candidates per batch of :func:`best_first`.
BEST_FIRST_BATCH = 8192


def best_first(store, v: np.ndarray, lb: np.ndarray, m: int, batch: int = BEST_FIRST_BATCH):
    """Batches of the candidates ``v`` in increasing lower bound ``lb`` of their cost, as
    a generator; the caller evaluates each batch into ``store`` (``nth_passing_cost``)
    before resuming. It stops once the m-th cheapest passing cost seen is below the
    lower bound of every candidate left: none of them can be among the m cheapest
    passing, so the m cheapest (the seeds of a cold start, the first of them the best)
    are those of evaluating every candidate. A cold start's coarse grid is mostly
    sections far dearer than the optimum; this skips them."""
    order = np.argsort(lb, kind="stable")
    v, lb = v[order], np.asarray(lb, dtype=float)[order]
    a = 0
    while a < len(v):
        b = min(a + batch, len(v))
        yield v[a:b]
        a = b
        if a < len(v) and store.nth_passing_cost(m) < lb[a] - 1e-9:
            return


def descent(store, start, radius: int = 1, max_iter: int = 60, extra=None,
            polish: bool = True, first_full: bool | None = None):
    """The moves of the local search, as a generator of neighbourhoods.

    Yields arrays of integer grid vectors to evaluate; the caller evaluates each into
    ``store`` (which has ``bounds``, ``best()``, ``V`` and ``util``) before resuming, so
    the same moves serve the one-panel search here and the many-panel search of
    ``wallrun.lockstep``. A step evaluates a neighbourhood and moves to the cheapest
    passing candidate (or, while nothing passes, the least utilised).

    Neighbourhoods: first the offsets -radius..radius in every combination of base
    width, toe, base thickness and stem base thickness, with (because feasibility in
    the toe length is not convex: a toe a little longer or shorter can fail while a
    longer one passes) the whole toe range 0..B/2 at base widths one step narrower or
    the same; once that settles, the joint neighbourhood of all seven integers (stem
    top and key too), after which the small neighbourhood runs again; until nothing
    improves. ``extra`` candidates are evaluated with the first neighbourhood.
    ``polish=False`` (a warm start near a known optimum) takes the joint neighbourhood
    at the first step instead, then the small one until it settles; ``first_full``
    overrides which neighbourhood comes first.
    """
    small = np.zeros(((2 * radius + 1) ** 4, _NDIM), dtype=np.int64)
    small[:, :4] = np.array(list(itertools.product(range(-radius, radius + 1), repeat=4)))
    full = _offsets(radius)
    toes = store.bounds.axes()[1]
    line = np.array([(db, dt) for db in (-1, 0) for dt in (0,)], dtype=np.int64)
    cur = np.asarray(start, dtype=np.int64)
    use_full = (not polish) if first_full is None else first_full
    for _ in range(max_iter):
        if use_full:
            cand = cur[None, :] + full
        else:
            tl = np.repeat(cur[None, :], len(line) * len(toes), axis=0)
            tl[:, 0] += np.repeat(line[:, 0], len(toes))
            tl[:, 2] += np.repeat(line[:, 1], len(toes))
            tl[:, 1] = np.tile(toes, len(line))
            cand = np.vstack([cur[None, :] + small, tl])
        if extra is not None:
            cand, extra = np.vstack([np.asarray(extra, dtype=np.int64), cand]), None
        yield cand
        b = store.best()
        if b is not None:
            nxt = store.V[b]
        else:
            nxt = store.V[int(np.argmin(store.util))] if len(store.util) else cur
        if np.array_equal(nxt, cur):
            if use_full or not polish:
                return
            use_full = True
        else:
            use_full = False
            cur = nxt


# --- bespoke -------------------------------------------------------------------------

def _flag_beyond(demand: Demand, basis: Basis, rates, step: float) -> SizedDesign:
    """A nominal section, checked but not searched, flagged beyond the supported range."""
    H = max(demand.h, 0.0) + demand.min_founding_depth_m
    r = lambda x: max(round(x / step) * step, step)  # noqa: E731
    t = r(max(0.25, H / 10))
    B = r(0.7 * H)
    sec = Section(stem_top_m=r(0.25), stem_base_m=t, base_width_m=B, toe_m=r(0.25 * B),
                  base_thickness_m=t)
    ev = evaluate(SectionArrays.of([sec]), demand, basis, rates)
    why = (f"retained height {demand.h:.2f} m is beyond the supported range of a "
           f"cantilever section (<= {MAX_RETAINED_M:g} m): not designed; the section "
           f"shown is nominal only") if demand.h > MAX_RETAINED_M else (
           f"retained height {demand.h:.2f} m: nothing to retain; not designed")
    return _sized(ev, 0, demand, basis, status="flagged", reason=why)


def _steep(demand: Demand, basis: Basis):
    """(set, phi'_d, reason) when the backfill slope reaches phi'_d of EQU or of a set in
    use (``stability.steep_backfill``), else None."""
    from wallrun import stability

    cond = conditions_for(demand, 0.3)
    return stability.steep_backfill(cond, basis)


def _nominal_bars(basis: Basis, section: Section) -> Reinforcement:
    """A minimal nominal set (smallest listed bar at the widest listed spacing on every
    face) for a section that is not designed: drawn and measured, never checked."""
    phi = int(min(basis.steel.bar_sizes_mm))
    sp = int(max(basis.steel.spacings_mm))
    cov, covg = basis.concrete.cover_mm, basis.concrete.cover_ground_mm
    ts, tb = section.stem_base_m * 1000.0, section.base_thickness_m * 1000.0
    return Reinforcement(stem=_barset(phi, sp, ts - cov - phi / 2),
                         heel=_barset(phi, sp, tb - cov - phi / 2),
                         toe=_barset(phi, sp, tb - covg - phi / 2),
                         stem_horizontal=_barset(phi, sp, ts - cov - 1.5 * phi),
                         base_distribution=_barset(phi, sp, tb - cov - 1.5 * phi),
                         stem_front=_barset(phi, sp, ts - cov - phi / 2))


def _flag_steep(demand: Demand, basis: Basis, rates, reason: str, step: float,
                section: Section | None = None, bars: Reinforcement | None = None,
                section_type: str = "") -> SizedDesign:
    """A flagged, undesigned nominal design where the backfill slope leaves no active
    limit state: the section from the middle of the search bounds (or the one given),
    nominal bars, no checks, edge pressure nan, utilization nan; cost per metre of the
    concrete, formwork and earthworks with no steel (the steel is not designed)."""
    from wallrun import takeoff

    if section is None:
        b = bounds_for(demand, step)
        mid = lambda lo, hi: round(0.5 * (lo + hi) / step) * step  # noqa: E731
        B = round(mid(b.b_lo, b.b_hi), 6)
        ts = round(mid(b.ts_lo, b.ts_hi), 6)
        tt = round(min(mid(b.tt_lo, b.tt_hi), ts), 6)
        tb = round(max(mid(b.tb_lo, b.tb_hi), ts), 6)
        toe = round(min(round(0.25 * B / step) * step, B - ts - step), 6)
        section = Section(stem_top_m=tt, stem_base_m=ts, base_width_m=B, toe_m=max(toe, 0.0),
                          base_thickness_m=tb)
    if bars is None:
        bars = _nominal_bars(basis, section)
    one = SectionArrays.of([section])
    cond = conditions_for(demand, section.base_thickness_m)
    hs, D = _stem_heights(one, demand, cond)
    cost = float(np.asarray(takeoff.cost_per_metre(one, hs, D, 0.0, rates)).reshape(-1)[0])
    return SizedDesign(section=section, reinforcement=bars, checks=(), cost_per_m=cost,
                       z_found=float(cond.z_found), edge_pressure_sls_kpa=float("nan"),
                       status="flagged", reason=reason, utilization=float("nan"),
                       governing="", section_type=section_type)


def bespoke(demand: Demand, basis: Basis, rates, step: float | None = None,
            designer: "Designer | None" = None) -> SizedDesign:
    """The cheapest section passing every check at ``demand`` (design-basis section 6).

    Searched over the grid of ``step`` (``basis.design.dimension_step_m`` when None)
    within these bounds, H being the total height with the least founding depth:

    - base width B: 0.3 H to 1.2 H (and >= 0.6 m). Common practice puts the optimum
      near 0.5 to 0.7 H; 0.3 H is below anything that stands on ordinary soils and
      1.2 H beyond what any cantilever needs before a key or a different wall type.
    - toe: 0 to B/2. A toe beyond half the base moves the stem ahead of the base centre
      and throws the soil block's weight behind the resultant, never an economy.
    - stem base thickness: 0.20 m to max(0.30, 0.15 H) (at most 1.0 m): 0.20 m is the
      least that takes two layers of bars with 50 mm covers and lets concrete be placed
      and vibrated (common practice), and the stem moment rarely needs more than
      H/10 to H/12 (common practice: 0.15 H leaves margin).
    - stem top thickness: 0.20 m (same reason) to 0.30 m and never thicker than the stem
      base: the top carries no moment, so extra thickness there is the least efficient
      way to add weight.
    - base thickness: 0.25 m (two mats with 50 and 75 mm covers) to 0.15 H + 0.20 m (at
      most 1.2 m), and never thinner than the stem base: the base must anchor the stem
      bars and its heel moment at the stem face is of the order of the stem moment.
    - key: none, or depth 0.30 to 0.60 m and width 0.30 to 0.50 m in steps of two
      dimension steps: a key shallower than 0.3 m mobilises little passive resistance
      and one deeper than 0.6 m is hard to dig and cast against ground (common practice).

    Search (:class:`Designer`): with no design yet for the same ground, the grid taken
    at every 4th value of each dimension (coarse), then a descent (``_Search.local``)
    from the three cheapest coarse passes; with designs already made for the same
    ground (a warm start), the nearest of them by retained height as they are and the
    descent from the nearest. Candidates whose cost without steel (a lower bound of the
    cost) cannot beat the best found are not evaluated. The search ranks by the steel
    mass with every stem bar full height (``evaluate(curtail=False)``); the winner and
    the nearest designs' sections as they are (a taller panel's section may serve more
    cheaply) are then evaluated in full, with curtailment, and the cheapest passing is
    chosen. The search is a heuristic, not a proof of optimality:
    ``tests/test_sizing.py`` compares it with brute force on small grids, and on the
    benchmark run the warm-started designs cost within 0.1 % of cold searches. Beyond
    ``MAX_RETAINED_M`` the demand is flagged without searching (a nominal section is
    checked and shown); when nothing passes, the least utilised candidate is returned
    flagged with its governing check. A backfill slope at or above phi'_d of EQU or of a
    set in use leaves no active limit state: flagged without searching, a nominal
    section from the middle of the bounds with nominal bars, no checks, edge pressure
    nan (:func:`_flag_steep`).
    """
    if designer is None:
        designer = _designer_for(basis, rates, step)
    return designer.bespoke(demand)


class Designer:
    """Bespoke designs for one basis and rate table, each distinct :class:`Demand` once.

    A new demand's search also starts from the sections already designed for demands of
    the same ground (nearest retained heights), and tries those sections as they are, so
    that a long run of slowly varying height costs little per panel.
    ``design_many`` designs the tallest first, so that every shorter panel can reuse a
    taller one's section when that is cheaper.
    """

    def __init__(self, basis: Basis, rates=None, step: float | None = None,
                 stride: int = 4, seeds: int = 3, warm: bool = True, warm_polish: bool = False):
        self.basis, self.rates = basis, rates
        self.step = float(step if step is not None else basis.design.dimension_step_m)
        self.stride, self.n_seeds, self.warm = stride, seeds, warm
        self.warm_polish = warm_polish
        self.cache: dict[Demand, SizedDesign] = {}
        self.by_ground: dict[tuple, list[tuple[float, Section]]] = {}
        self.designs_by_ground: dict[tuple, list[tuple[float, SizedDesign, tuple]]] = {}
        self.evaluated = 0  # candidates evaluated in searches
        self.decided = 0  # candidates decided (passed, or failed a check they needed)
        self.structured = 0  # of them, candidates whose structure was designed
        self.seconds_in_evaluate = 0.0

    # the evaluator of one demand, in integer candidates
    def _f(self, demand: Demand, bounds: SearchBounds):
        import time

        def f(v, have_best=False):
            # screened: structure only for the candidates passing stability; when the
            # search has no passing candidate yet and none of these passes, every
            # candidate in full (the descent then follows the least utilised)
            t0 = time.perf_counter()
            ev = evaluate(bounds.sections(v), demand, self.basis, self.rates, curtail=False,
                          screen=True, complete_if_none=not have_best)
            self.decided += len(v)
            self.structured += int(np.isfinite(ev.steel_kg_per_m).sum())
            self.seconds_in_evaluate += time.perf_counter() - t0
            return ev.ok, ev.cost, ev.utilization

        def lb(v):
            return lower_bound_cost(bounds.sections(v), demand, self.rates)

        return f, lb

    def _neighbours(self, demand: Demand, k: int = 4) -> list[Section]:
        lst = self.by_ground.get(demand.ground_key, [])
        lst = sorted(lst, key=lambda t: abs(t[0] - demand.h))
        return [s for _, s in lst[:k]]

    def bespoke(self, demand: Demand) -> SizedDesign:
        d = self.cache.get(demand)
        if d is not None:
            return d
        d = self._design(demand)
        if d.status == "ok":
            d = self._taller_bars(demand, d)
        self.cache[demand] = d
        if d.status == "ok":
            self.by_ground.setdefault(demand.ground_key, []).append((demand.h, d.section))
            self.designs_by_ground.setdefault(demand.ground_key, []).append(
                (demand.h, d, demand.height_free_key))
        return d

    def _taller_bars(self, demand: Demand, d: SizedDesign) -> SizedDesign:
        """The nearest taller design of the ground under the same conditions but for the
        height (front level, wall-top allowance) that costs less than ``d``, section and
        bars as they are, when it passes here and costs less still. The bars of a
        design are chosen by least area per face, which is not always the least mass
        (laps and anchorages grow with the diameter), so a section's cost need not fall
        with the height; a taller panel's own bars can make a shorter one cheaper."""
        same = demand.height_free_key
        taller = [(h, t) for h, t, c in self.designs_by_ground.get(demand.ground_key, [])
                  if c == same and h > demand.h + 1e-9 and t.cost_per_m < d.cost_per_m - 1e-9]
        if not taller:
            return d
        _, t = min(taller, key=lambda ht: ht[0])
        ev = evaluate(SectionArrays.of([t.section]), demand, self.basis, self.rates,
                      given=t.reinforcement)
        if ev.ok[0] and ev.cost[0] < d.cost_per_m - 1e-9:
            return _sized(ev, 0, demand, self.basis)
        return d

    def design_many(self, demands) -> list[SizedDesign]:
        """Designs of ``demands`` in their order, each distinct one designed once, the
        tallest of each ground first."""
        todo = sorted(set(demands), key=lambda d: (-d.h, d.z_front))
        for dm in todo:
            self.bespoke(dm)
        return [self.cache[dm] for dm in demands]

    def _design(self, demand: Demand) -> SizedDesign:
        steep = _steep(demand, self.basis)
        if steep is not None:
            return _flag_steep(demand, self.basis, self.rates, steep[2], self.step)
        if not (0.0 < demand.h <= MAX_RETAINED_M):
            return _flag_beyond(demand, self.basis, self.rates, self.step)
        bounds = bounds_for(demand, self.step)
        f, lb = self._f(demand, bounds)
        s = _Search(bounds, f, lb)
        near = self._neighbours(demand) if self.warm else []
        starts = [v for v in (bounds.vector_of(sec) for sec in near) if v is not None]
        if starts:
            # warm start: the nearest designs as they are, then the descent from the
            # best of them (pruned by the best cost found)
            s.local(starts[0], extra=np.array(starts), polish=self.warm_polish)
        if s.best() is None:  # cold start (or the warm start found nothing passing)
            s.run_best_first(grid(bounds, self.stride), self.n_seeds)
            for v in s.seeds(self.n_seeds):
                s.local(v)
        self.evaluated += s.evaluated
        b = s.best()
        cands = []
        if b is not None:
            cands.append(bounds.sections(s.V[b:b + 1]).take(0))
        elif len(s.util):
            i = int(np.argmin(s.util))
            cands.append(bounds.sections(s.V[i:i + 1]).take(0))
        # the neighbours' sections as they are (maybe outside this demand's bounds):
        # a taller panel's section serves when it is cheaper
        cands.extend(sec for sec in near if sec not in cands)
        ev = evaluate(SectionArrays.of(cands), demand, self.basis, self.rates)
        if ev.ok.any():
            idx = np.flatnonzero(ev.ok)
            i = int(idx[np.lexsort((ev.utilization[idx], ev.cost[idx]))[0]])
            return _sized(ev, i, demand, self.basis)
        i = int(np.argmin(ev.utilization))
        chk, comb, u = ev.governing(i)
        return _sized(ev, i, demand, self.basis, status="flagged",
                      reason=f"no section within the search bounds passes: best fails "
                             f"{chk} {comb} ({u:.2f})")


def brute_force(demand: Demand, basis: Basis, rates, bounds: SearchBounds,
                chunk: int = 20000) -> tuple[Section | None, float]:
    """The cheapest passing section of the whole grid of ``bounds`` by evaluating every
    candidate (reference for the tests; no pruning). Returns (section, cost) or
    (None, inf)."""
    v = grid(bounds, 1)
    best, best_cost = None, math.inf
    for a in range(0, len(v), chunk):
        sec = bounds.sections(v[a:a + chunk])
        ev = evaluate(sec, demand, basis, rates, curtail=False)
        if ev.ok.any():
            idx = np.flatnonzero(ev.ok)
            i = int(idx[np.lexsort((ev.utilization[idx], ev.cost[idx]))[0]])
            if ev.cost[i] < best_cost - 1e-9:
                best, best_cost = sec.take(i), float(ev.cost[i])
    return best, best_cost


def search(demand: Demand, basis: Basis, rates, bounds: SearchBounds, stride: int = 2,
           seeds: int = 3) -> tuple[Section | None, float, int]:
    """The coarse-to-fine search of :func:`bespoke` on explicit ``bounds`` (no cache, no
    warm start). Returns (section, cost, candidates evaluated); (None, inf, n) when
    nothing passes."""
    d = Designer(basis, rates, bounds.step, stride=stride, seeds=seeds, warm=False)
    f, lb = d._f(demand, bounds)
    s = _Search(bounds, f, lb)
    s.run_best_first(grid(bounds, stride), seeds)
    for v in s.seeds(seeds):
        s.local(v)
    b = s.best()
    if b is None:
        return None, math.inf, s.evaluated
    return bounds.sections(s.V[b:b + 1]).take(0), float(s.cost[b]), s.evaluated


def _basis_key(basis: Basis, rates, step) -> tuple:
    return (tuple(sorted(basis.factors.items())), basis.design, basis.loads, basis.concrete,
            basis.steel, None if rates is None else tuple(rates), step)


_DESIGNERS: dict[tuple, Designer] = {}


def _designer_for(basis: Basis, rates, step) -> Designer:
    """The shared :class:`Designer` of a basis, rate table and step (kept for reuse)."""
    step = float(step if step is not None else basis.design.dimension_step_m)
    key = _basis_key(basis, rates, step)
    d = _DESIGNERS.get(key)
    if d is None:
        if len(_DESIGNERS) > 16:
            _DESIGNERS.clear()
        d = _DESIGNERS[key] = Designer(basis, rates, step)
    return d


# --- catalogue -----------------------------------------------------------------------

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
    return Section(stem_top_m=c.stem_top_m, stem_base_m=c.stem_base_m,
                   base_width_m=c.base_width_m, toe_m=c.toe_m,
                   base_thickness_m=c.base_thickness_m, key_depth_m=c.key_depth_m,
                   key_width_m=c.key_width_m)


def catalogue_design(demand: Demand, basis: Basis, rates,
                     catalogue: tuple[CatalogueSection, ...]) -> SizedDesign:
    """The cheapest catalogue type passing every check at ``demand`` with its own bars.

    Each type is checked in full (stability, and ``structure.check_reinforcement`` with
    the bars of :func:`catalogue_bars`). None passing: the type of least utilization,
    flagged with its governing check. Beyond ``MAX_RETAINED_M``: flagged. A backfill
    slope at or above phi'_d of EQU or a set in use: the first type with its own bars,
    flagged and not checked (:func:`_flag_steep`).
    """
    if not catalogue:
        raise ValueError("catalogue design needs a sections.csv with at least one type")
    steep = _steep(demand, basis)
    if steep is not None:
        c = catalogue[0]
        return _flag_steep(demand, basis, rates, steep[2], basis.design.dimension_step_m,
                           section=catalogue_section(c), bars=catalogue_bars(c, basis),
                           section_type=c.section)
    evs = []
    for c in catalogue:
        ev = evaluate(SectionArrays.of([catalogue_section(c)]), demand, basis, rates,
                      given=catalogue_bars(c, basis))
        evs.append((c, ev))
    beyond = not (0.0 < demand.h <= MAX_RETAINED_M)
    passing = [(c, ev) for c, ev in evs if bool(ev.ok[0])]
    if passing and not beyond:
        c, ev = min(passing, key=lambda t: (float(t[1].cost[0]), float(t[1].utilization[0])))
        return _sized(ev, 0, demand, basis, section_type=c.section)
    c, ev = min(evs, key=lambda t: float(t[1].utilization[0]))
    if beyond:
        why = (f"retained height {demand.h:.2f} m is beyond the supported range "
               f"(<= {MAX_RETAINED_M:g} m)")
    else:
        chk, comb, u = ev.governing(0)
        why = (f"no catalogue type passes: best {c.section} fails {chk} {comb} ({u:.2f})")
    return _sized(ev, 0, demand, basis, status="flagged", reason=why, section_type=c.section)


# --- rationalised set ------------------------------------------------------------------

def exhaustive_types(cost: np.ndarray, max_types: int) -> tuple[float, tuple[int, ...]]:
    """Least total cost of serving every row of ``cost`` (rows: demands, columns:
    candidate types, entries: total cost of the row with that type or inf) with at most
    ``max_types`` columns, by enumerating every set of min(max_types, T) columns (a
    larger set never costs more). Returns (total, columns)."""
    n, T = cost.shape
    k = min(max_types, T)
    best, best_set = math.inf, ()
    for combo in itertools.combinations(range(T), k):
        tot = float(np.min(cost[:, list(combo)], axis=1).sum())
        if tot < best - 1e-9:
            best, best_set = tot, combo
    return best, best_set


def dp_types(cost: np.ndarray, max_types: int, order: np.ndarray | None = None):
    """At most ``max_types`` columns serving every row of ``cost``, by dynamic
    programming over contiguous groups of rows in ``order`` (default: rows by severity,
    i.e. by the number of columns serving them, most first, then by cheapest entry), each group served by the single column that serves it at least
    total cost.

    Optimality (claim and proof): suppose the types are *nested* in ``order``: each
    column t serves a prefix of the ordered rows (rows 0..r_t), and of two columns
    serving the same row the one with the shorter prefix is never dearer there. Take any
    optimal set S; serving each row by the member of S with the shortest prefix that
    covers it costs no more than any other assignment, and that rule assigns contiguous
    groups of rows to the members of S in order of r_t. So an optimal solution is a
    partition of the ordered rows into at most ``max_types`` contiguous groups, one
    column per group; the DP below minimises over exactly those partitions (with the
    best column per group), so its total is optimal. (A column used by two groups counts
    once, which only helps.) Without nesting the result is a good feasible set, not
    proven optimal. Returns (total, columns, assignment per row).
    """
    n, T = cost.shape
    if order is None:
        order = np.lexsort((np.min(cost, axis=1), -np.isfinite(cost).sum(axis=1)))
    C = cost[order]  # (n, T)
    fin = np.isfinite(C)
    Cz = np.where(fin, C, 0.0)
    P = np.vstack([np.zeros(T), np.cumsum(Cz, axis=0)])  # prefix sums (n+1, T)
    F = np.vstack([np.zeros(T, dtype=np.int64), np.cumsum(~fin, axis=0)])
    # G[i, j]: best single column for rows i..j-1 (i < j)
    G = np.full((n + 1, n + 1), math.inf)
    Garg = np.full((n + 1, n + 1), -1, dtype=np.int64)
    for i in range(n):
        s = P[i + 1:] - P[i]  # (n - i, T) rows i..j-1 for j = i+1..n
        bad = (F[i + 1:] - F[i]) > 0
        s = np.where(bad, math.inf, s)
        a = np.argmin(s, axis=1)
        G[i, i + 1:] = s[np.arange(len(a)), a]
        Garg[i, i + 1:] = a
    K = max(1, min(max_types, n))
    best = np.full((K + 1, n + 1), math.inf)
    arg = np.full((K + 1, n + 1), -1, dtype=np.int64)
    best[0, 0] = 0.0
    for k in range(1, K + 1):
        for j in range(1, n + 1):
            v = best[k - 1, :j] + G[:j, j]
            i = int(np.argmin(v))
            best[k, j], arg[k, j] = v[i], i
    k = int(np.argmin(best[:, n]))
    total = float(best[k, n])
    assign = np.full(n, -1, dtype=np.int64)
    j = n
    while k > 0 and j > 0 and np.isfinite(total):
        i = int(arg[k, j])
        assign[order[i:j]] = Garg[i, j]
        j, k = i, k - 1
    cols = tuple(sorted(set(int(a) for a in assign if a >= 0)))
    return total, cols, assign


def choose_types(cost: np.ndarray, max_types: int, order: np.ndarray | None = None,
                 exhaustive_limit: int = 20000):
    """At most ``max_types`` columns of ``cost`` serving every row at least total cost.

    Exact by enumeration (:func:`exhaustive_types`) when the number of column sets is at
    most ``exhaustive_limit``; otherwise :func:`dp_types` (exact for nested types, see
    there) followed by alternating improvement (each row to its cheapest chosen column,
    each group's column re-chosen), which never makes the total worse. Rows that no
    column serves make the total inf. Returns (total, columns, assignment per row).
    """
    n, T = cost.shape
    k = min(max_types, T)
    if math.comb(T, k) <= exhaustive_limit:
        total, cols = exhaustive_types(cost, max_types)
        cols = tuple(cols)
    else:
        total, cols, _ = dp_types(cost, max_types, order)
        cols = list(cols)
        for _ in range(20):  # alternating improvement
            assign = np.asarray(cols)[np.argmin(cost[:, cols], axis=1)]
            new = []
            for c in cols:
                rows = assign == c
                if rows.any():
                    new.append(int(np.argmin(cost[rows].sum(axis=0))))
            new = sorted(set(new))
            tot_new = float(np.min(cost[:, new], axis=1).sum())
            if tot_new < total - 1e-9:
                total, cols = tot_new, new
            else:
                break
        cols = tuple(cols)
    if not cols:
        return math.inf, (), np.full(n, -1)
    sub = cost[:, list(cols)]
    assign = np.asarray(cols)[np.argmin(sub, axis=1)]
    assign = np.where(np.isfinite(np.min(sub, axis=1)), assign, -1)
    return total, cols, assign


@dataclass(frozen=True)
class Rationalised:
    """A rationalised set: ``types`` (SectionType-like designs, one per type, with the
    bars every panel of the type is built with), ``type_of`` per demand given (index into
    ``types``, -1 where no type serves), ``designs`` per demand given (each checked again
    at that demand with its type's section and bars), and the total cost."""

    types: tuple[SizedDesign, ...]
    type_of: tuple[int, ...]
    designs: tuple[SizedDesign, ...]
    total_cost: float


def _envelope_bars(rs: list[Reinforcement]) -> Reinforcement:
    """Per member the bars of largest As,prov among ``rs`` (a type's cage serves all its
    panels); curtailment: the highest stop (None, full height, beats any)."""
    def pick(name):
        sets = [getattr(r, name) for r in rs if getattr(r, name) is not None]
        if not sets:
            return None
        return max(sets, key=lambda b: (b.as_prov_mm2_per_m, b.bar_mm))
    cur = [r.stem_curtail_m for r in rs]
    curtail = None if any(c is None for c in cur) else max(cur)
    return Reinforcement(stem=pick("stem"), heel=pick("heel"), toe=pick("toe"),
                         stem_horizontal=pick("stem_horizontal"),
                         base_distribution=pick("base_distribution"),
                         stem_front=pick("stem_front"), stem_curtail_m=curtail)


def _steel_rank(r: Reinforcement) -> float:
    return sum(b.as_prov_mm2_per_m for b in (r.stem, r.heel, r.toe, r.stem_horizontal,
                                             r.base_distribution, r.stem_front) if b is not None)


def rationalise_detail(demands: list[Demand], lengths: list[float], basis: Basis, rates,
                       max_types: int, designer: Designer | None = None,
                       max_candidates: int = 120) -> Rationalised:
    """At most ``max_types`` sections covering all panels at least total cost.

    1. The bespoke optimum of each distinct demand (:class:`Designer`); its section is a
       candidate type (passing designs only; a demand flagged in bespoke stays flagged).
       More than ``max_candidates`` distinct optima: that many, spread evenly over the
       demands ordered by their bespoke cost, plus the most severe of each ground.
    2. Cost matrix: every candidate type at every distinct demand, bars re-chosen for
       that demand (``structure.design_reinforcement``), cost per metre x the demand's
       total length; inf where it fails.
    3. :func:`choose_types` (exact by enumeration for small sets, else dynamic
       programming over demands ordered by their bespoke cost, exact for nested types).
    4. Each chosen type gets one cage: the envelope of the bars its demands chose
       (:func:`_envelope_bars`), or the first demand's bars that pass everywhere; every
       demand is then checked again with ``structure.check_reinforcement`` and that
       section and cage. A demand that fails the recheck or that no type serves is
       flagged with the reason. The curtailment stop of a type is the highest of its
       panels' (longer bars are conservative for every panel; none when any panel
       cannot curtail), so that the type has one cage.
    """
    if len(demands) != len(lengths):
        raise ValueError("rationalise: one length per demand")
    designer = designer or _designer_for(basis, rates, None)
    uniq = list(dict.fromkeys(demands))
    idx = {d: k for k, d in enumerate(uniq)}
    L = np.zeros(len(uniq))
    for d, l in zip(demands, lengths):
        L[idx[d]] += float(l)
    own = designer.design_many(uniq)
    ok_rows = [k for k, d in enumerate(own) if d.status == "ok"]
    types: list[Section] = list(dict.fromkeys(own[k].section for k in ok_rows))
    if len(types) > max_candidates:  # keep the matrix small: types spread over severity
        first = {}
        for k in sorted(ok_rows, key=lambda k: own[k].cost_per_m):
            first.setdefault(own[k].section, k)
        by_sev = sorted(types, key=lambda t: own[first[t]].cost_per_m)
        keep = set(np.unique(np.round(np.linspace(0, len(by_sev) - 1, max_candidates))
                             .astype(int)).tolist())
        worst = {}  # the most severe type of each ground is always kept
        for t in by_sev:
            worst[uniq[first[t]].ground_key] = t
        types = [t for i, t in enumerate(by_sev) if i in keep or t in worst.values()]
    designs: list[SizedDesign | None] = [None] * len(uniq)
    type_of = np.full(len(uniq), -1, dtype=np.int64)
    chosen_designs: list[SizedDesign] = []
    total = 0.0
    if types and ok_rows:
        S = SectionArrays.of(types)
        cost = np.full((len(ok_rows), len(types)), math.inf)
        bars: dict[tuple[int, int], Reinforcement] = {}
        for r, k in enumerate(ok_rows):
            ev = evaluate(S, uniq[k], basis, rates)
            cost[r] = np.where(ev.ok, ev.cost * L[k], math.inf)
            for t in np.flatnonzero(ev.ok):
                bars[(r, int(t))] = ev.structure.reinforcement(int(t))
        order = np.argsort([own[k].cost_per_m for k in ok_rows], kind="stable")
        _, cols, assign = choose_types(cost, max_types, order)
        # order the types by cost per metre at their own demand (small to large)
        cols = sorted(cols, key=lambda t: min((cost[r, t] / L[ok_rows[r]]
                                               for r in range(len(ok_rows))
                                               if assign[r] == t), default=math.inf))
        for j, t in enumerate(cols):
            rows = [r for r in range(len(ok_rows)) if assign[r] == t]
            if not rows:
                continue
            name = f"S{j + 1:02d}"
            options = [_envelope_bars([bars[(r, t)] for r in rows])]
            options += sorted((bars[(r, t)] for r in rows), key=_steel_rank)
            sec1 = SectionArrays.of([types[t]])
            chosen = None
            for opt in options:
                evs = [evaluate(sec1, uniq[ok_rows[r]], basis, rates, given=opt) for r in rows]
                if all(bool(e.ok[0]) for e in evs):
                    chosen = (opt, evs)
                    break
            if chosen is None:  # keep the envelope, flag the failures
                opt = options[0]
                chosen = (opt, [evaluate(sec1, uniq[ok_rows[r]], basis, rates, given=opt)
                                for r in rows])
            opt, evs = chosen
            # one stop height of the curtailed stem bars for the whole type: the highest
            # of its panels (None, every bar full height, when any panel cannot curtail)
            stops = [e.structure.reinforcement(0).stem_curtail_m for e in evs]
            stop = None if any(c is None for c in stops) else max(stops)
            worst = None
            for r, e in zip(rows, evs):
                k = ok_rows[r]
                if bool(e.ok[0]):
                    sd = _sized(e, 0, uniq[k], basis, section_type=name)
                else:
                    chk, comb, u = e.governing(0)
                    sd = _sized(e, 0, uniq[k], basis, status="flagged", section_type=name,
                                reason=f"rationalised type {name} with its common bars fails "
                                       f"{chk} {comb} ({u:.2f}) on recheck")
                sd = SizedDesign(**{**sd.__dict__, "reinforcement": dataclasses.replace(
                    sd.reinforcement, stem_curtail_m=stop)})
                designs[k] = sd
                type_of[k] = len(chosen_designs)
                total += sd.cost_per_m * L[k]
                if worst is None or sd.utilization > worst.utilization:
                    worst = sd
            chosen_designs.append(worst)
    for k, d in enumerate(own):
        if designs[k] is None:
            if d.status == "ok":  # served by no chosen type (only when max_types too few)
                designs[k] = SizedDesign(**{**d.__dict__, "status": "flagged",
                                            "reason": f"no type of the rationalised set of "
                                                      f"{max_types} serves this panel; its "
                                                      f"own design is shown"})
            else:
                designs[k] = d
            total += designs[k].cost_per_m * L[k]
    return Rationalised(types=tuple(chosen_designs),
                        type_of=tuple(int(type_of[idx[d]]) for d in demands),
                        designs=tuple(designs[idx[d]] for d in demands), total_cost=total)


def rationalise(demands: list[Demand], lengths: list[float], basis: Basis, rates,
                max_types: int) -> list[SizedDesign]:
    """The design of each panel from a rationalised set of at most ``max_types``
    sections (see :func:`rationalise_detail`, which also gives the type per panel)."""
    return list(rationalise_detail(demands, lengths, basis, rates, max_types).designs)
