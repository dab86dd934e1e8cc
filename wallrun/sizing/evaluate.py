"""Every check of many candidate sections, each at its own demand, in one call.

The candidates of one call share a ground (``Demand.ground_key``) and a basis; their
levels are per candidate (``conditions.Rows``), so the searches of many panels are
checked together. Each candidate's answer depends on its own row only: a call may be
cut or joined anywhere and gives the same numbers.

- :func:`screen` (the search): stability for every candidate, the structure designed
  only for those that pass stability (a candidate failing stability fails anyway);
  ok, cost per metre and utilization.
- :func:`evaluate` (a chosen section): every check in full, with the stem bars
  curtailed where the moment allows, as an :class:`Evaluation` from which
  :func:`sized` makes the :class:`SizedDesign` of a panel.
- :func:`priced` (a cost table): ok and cost as :func:`evaluate` gives them, the
  structure designed only for the candidates that pass stability.
- :func:`lower_bound` of the cost (with the least steel a passing design carries): the
  search never checks a candidate that cannot beat the best one found.

A candidate passes when every check's utilization is at most
``design.max_utilization`` and its dimensions close. Units: m, kN, kPa; cost in the
money units of the rate table, per metre run of wall.
"""

from __future__ import annotations

import functools
from collections.abc import Sequence
from dataclasses import dataclass

import numpy as np

from wallrun import stability, structure, takeoff
from wallrun.members import MemberActions
from wallrun.results import CheckArray, CheckEntry, CheckListing, Reinforcement, utilization
from wallrun.section import Section, SectionArrays
from wallrun.settings import Basis, Rate, Takeoff

from .conditions import Demand, Rows, conditions_of

#: Utilization tolerance: a candidate passes at max utilization <= limit + TOL.
TOL = 1e-9

#: Depths at which the stem moment is tabulated for the curtailment (see
#: :func:`_stem_moment_at`).
CURTAIL_DEPTHS = 41

#: Most candidates :func:`screen` designs the structure of in one call. The structure's
#: temporaries hold a row per bar size and face of each candidate; in pieces this small
#: they reuse the memory the process already holds, where whole batches of up to the
#: search's ``CHUNK`` had the system map fresh pages for them at every call (10 km in
#: one process, 2026-12-05: 0.84 M page faults became 0.30 M and the run took 8 % less
#: time; the same numbers, each row being its own).
STRUCTURE_ROWS = 16_384

JOINT_PRESSURE_CLAUSE = ("design-basis section 1 (b): edge pressure ratio at a joint "
                         "(differential settlement, common practice)")


@dataclass(frozen=True)
class Costing:
    """How a section is priced per metre run (``takeoff.cost_per_metre``): the rate table
    (None: the invented demo rates) and the take-off settings (drain pipe,
    waterproofing, working space ...)."""

    rates: tuple[Rate, ...] | None = None
    takeoff: Takeoff = Takeoff()

    @classmethod
    def of(cls, site) -> "Costing":
        return cls(None if site.rates is None else tuple(site.rates), site.takeoff)

    def per_metre(self, sec: SectionArrays, stem_height_m, founding_depth_m,
                  steel_kg_per_m) -> np.ndarray:
        """``takeoff.cost_per_metre`` of n candidates, money per metre run, (n,)."""
        return np.asarray(takeoff.cost_per_metre(sec, stem_height_m, founding_depth_m,
                                                 steel_kg_per_m, self.rates, self.takeoff),
                          dtype=float)


#: Detailing rules: limits in their own right, met at utilization 1.0 whatever the margin
#: asked for (``design.max_utilization`` applies to the checks of actions against
#: resistances: a margin on a minimum area or a bar spacing has no meaning).
DETAILING = frozenset({"min_steel", "crack_spacing", "restraint_steel"})


def limit(basis: Basis) -> float:
    """The utilization a candidate may reach in the checks of actions against
    resistances (``design.max_utilization``); detailing rules (:data:`DETAILING`) are
    met at 1.0."""
    return float(basis.design.max_utilization)


# --- geometry of the drawn wall ------------------------------------------------------------

def stem_heights(sec: SectionArrays, cond, rows: Rows):
    """Drawn stem height (top of base to the wall top) and founding depth D, m, (n,)."""
    zf = np.asarray(cond.z_found, dtype=float)
    hs = rows.wall_top - zf - np.asarray(sec.base_thickness_m, dtype=float)
    return hs, rows.z_front - zf


def lower_bound(sec: SectionArrays, rows: Rows, ground: Demand, costing: Costing,
                basis: Basis) -> np.ndarray:
    """A lower bound of the cost per metre of every passing design of each candidate,
    (n,), money per metre run: the cost with the least steel any passing design carries
    (``structure.steel_mass_floor``, the minimum areas over the checked stem height
    z_top - z_found - t_base, as the search's costs take it). Every rate is >= 0 and
    the cost grows with the steel mass, so no passing candidate costs less."""
    cond = conditions_of(sec.base_thickness_m, rows, ground)
    hs, D = stem_heights(sec, cond, rows)
    h_c = np.maximum(cond.z_top - np.asarray(cond.z_found, dtype=float)
                     - np.asarray(sec.base_thickness_m, dtype=float), 0.0)
    return costing.per_metre(sec, hs, D, structure.steel_mass_floor(sec, h_c, basis))


# --- utilization ---------------------------------------------------------------------------

def max_util(checks, n: int, lim: float = 1.0) -> np.ndarray:
    """Largest utilization of every candidate over ``checks`` (n,), with the conventions
    of ``results.utilization`` (E / R where R > 0, else inf where E > 0 and 0 where
    not); nan propagates. 0 for no checks. With ``lim`` < 1, each check of actions
    against a resistance counts as its utilization / lim (the candidate passes at <= 1),
    the detailing rules as they are."""
    best = np.full(n, -np.inf)
    with np.errstate(divide="ignore", invalid="ignore"):
        for c in checks:
            e, r = c.effect, c.resistance
            u = np.divide(e, r)
            pos = np.greater(r, 0.0)
            if not np.all(pos):
                u = np.where(pos, u, np.where(np.greater(e, 0.0), np.inf, 0.0))
            if lim != 1.0 and c.check not in DETAILING:
                u = u / lim
            np.maximum(best, u, out=best)
    if not checks:
        best[:] = 0.0
    return best


def _joint_pressure(allx, rows_cap: np.ndarray | None) -> list[CheckArray]:
    """``joint_pressure`` (SLS): the largest characteristic edge pressure against the
    cap a joint cure puts on it (design-basis section 1 (b)), kPa; none without caps."""
    if rows_cap is None or not np.isfinite(rows_cap).any():
        return []
    edge = np.asarray(allx.edge_pressure(), dtype=float)
    cap = np.where(np.isfinite(rows_cap), rows_cap, np.inf)
    # no cap: effect 0 against an infinite resistance (utilization 0)
    eff = np.where(np.isfinite(rows_cap), edge, 0.0)
    return [CheckArray("joint_pressure", "SLS", "characteristic, worse heel-load case",
                       "kPa", JOINT_PRESSURE_CLAUSE, eff, cap)]


def _full(x, n: int) -> np.ndarray:
    return np.broadcast_to(np.asarray(x, dtype=float), (n,))


class Situations:
    """The actions of n candidates in every design situation the basis asks for: the
    persistent one (``stability.evaluate_all``, design-basis section 4) and, where the
    site gives ``[seismic]``, the seismic one (``seismic.evaluate_seismic``, combination
    ``SEIS``, design-basis section 10), sharing one geometry."""

    def __init__(self, sec: SectionArrays, cond, basis: Basis, allx=None, sx=None):
        if allx is not None:  # a subset of both situations, made by :meth:`subset`
            self.allx, self.sx = allx, sx
            return
        self.allx = stability.evaluate_all(sec, cond, basis)
        if basis.seismic is not None:
            from wallrun import seismic
            sx = seismic.evaluate_seismic(sec, cond, basis, basis.seismic,
                                          geometry=self.allx.ctx.g)
        self.sx = sx

    @property
    def checks(self) -> list[CheckArray]:
        out = list(self.allx.checks)
        return out + list(self.sx.checks) if self.sx is not None else out

    def bad(self) -> np.ndarray:
        return self.allx.ctx.bad()

    def member_actions(self) -> list[MemberActions]:
        out = list(self.allx.member_actions())
        return out + list(self.sx.member_actions()) if self.sx is not None else out

    def qp(self) -> dict:
        return self.allx.qp()

    def edge_pressure(self) -> np.ndarray:
        return self.allx.edge_pressure()

    def stem_moment(self, y) -> np.ndarray:
        m = self.allx.stem_moment(y)
        return np.maximum(m, self.sx.stem_moment(y)) if self.sx is not None else m

    def stem_columns(self) -> tuple[np.ndarray, np.ndarray]:
        """The candidates whose stem moments are equal at every depth, those equal in
        ``stability.AllActions.stem_inputs``: (index of the first candidate of each
        distinct stem, (m,); the distinct stem of every candidate, (n,)), as
        ``structure.distinct_rows``; in the seismic situation every candidate is its
        own."""
        if self.sx is not None:
            n = self.allx.ctx.g.n
            return np.arange(n), np.arange(n)
        return structure.distinct_rows(*self.allx.stem_inputs())

    def subset(self, idx) -> "Situations":
        a = self.allx.subset(idx)
        return Situations(None, None, None, allx=a,
                          sx=self.sx.subset(idx) if self.sx is not None else None)


def _structure_of(allx, sec: SectionArrays, h_c: np.ndarray, basis: Basis, idx,
                  given: Reinforcement | Sequence[Reinforcement] | None = None,
                  stem_moment_at=None, cage_of=None):
    # the bars of a design are chosen for the margin asked for (design.max_utilization)
    """The structural design (or check of ``given`` bars) of the candidates ``idx``
    (None: all). The member actions of a few survivors come from their own geometry
    (the same values as the rows idx of all, computed for fewer)."""
    n = len(sec)
    if idx is None:
        s_sec, s_hc, s_act, s_qp = sec, h_c, allx.member_actions(), allx.qp()
    else:
        s_sec, s_hc = sec.subset(idx), h_c[idx]
        if n >= 64 and 2 * len(idx) < n:
            src = allx.subset(idx)
            s_act, s_qp = src.member_actions(), src.qp()
        else:
            s_act = [MemberActions(a.member, a.combination, a.case, _full(a.M_Ed, n)[idx],
                                   _full(a.V_Ed, n)[idx]) for a in allx.member_actions()]
            s_qp = {k: _full(v, n)[idx] for k, v in allx.qp().items()}
    if given is None:
        return structure.design_reinforcement(s_sec, s_act, s_qp, basis,
                                              stem_moment_at=stem_moment_at,
                                              stem_height_m=s_hc, limit=limit(basis))
    return structure.check_reinforcement(s_sec, s_act, s_qp, basis, given,
                                         stem_moment_at=stem_moment_at, stem_height_m=s_hc,
                                         cage_of=cage_of)


def _stem_moment_at(allx, sec: SectionArrays, cond) -> structure.StemMomentTable:
    """The ULS stem moment envelope for the curtailment, tabulated at ``CURTAIL_DEPTHS``
    depths 0..h_c (m below z_top) of every candidate (``structure.StemMomentTable``:
    kNm/m, linear between the depths, never below the true moment), one column for the
    candidates whose stem moments are equal (``Situations.stem_columns``)."""
    n, k = len(sec), CURTAIL_DEPTHS
    zf = np.broadcast_to(np.asarray(cond.z_found, dtype=float), (n,))
    hc = np.maximum(cond.z_top - zf - np.asarray(sec.base_thickness_m, dtype=float), 0.0)
    first, column = allx.stem_columns()
    if len(first) == n:  # every stem its own: a column per candidate, in their order
        first = column = np.arange(n)
    src = allx if len(first) == n else allx.subset(first)
    frac = np.linspace(0.0, 1.0, k)
    M = np.asarray(src.stem_moment(frac[:, None] * hc[first][None, :]), dtype=float)
    return structure.StemMomentTable(M, frac, hc[first], column)


def _curtailed_structure(allx, sec: SectionArrays, rows: Rows, cond, ground: Demand,
                         basis: Basis, idx):
    """The structural design, stem bars curtailed, of the candidates ``idx`` (those
    that pass stability), from their own geometry (the same values as their rows of
    all): (``structure.StructureResult``, their sections, rows and conditions)."""
    if len(idx) == len(sec):
        s_allx, s_sec, s_rows, s_cond = allx, sec, rows, cond
    else:
        s_sec, s_rows = sec.subset(idx), rows.take(idx)
        s_cond = conditions_of(s_sec.base_thickness_m, s_rows, ground)
        s_allx = allx.subset(idx)
    zf = np.broadcast_to(np.asarray(s_cond.z_found, dtype=float), (len(idx),))
    h_c = s_cond.z_top - zf - np.asarray(s_sec.base_thickness_m, dtype=float)
    sr = _structure_of(s_allx, s_sec, h_c, basis, None,
                       stem_moment_at=_stem_moment_at(s_allx, s_sec, s_cond))
    return sr, s_sec, s_rows, s_cond


# --- the search's evaluation -----------------------------------------------------------------

def _pieces(idx: np.ndarray):
    """``idx`` in consecutive pieces of at most ``STRUCTURE_ROWS`` entries (none when
    empty)."""
    size = STRUCTURE_ROWS
    return (idx[a:a + size] for a in range(0, len(idx), size))


def screen(sec: SectionArrays, rows: Rows, ground: Demand, basis: Basis, costing: Costing,
           seg: np.ndarray, complete: np.ndarray, caps: np.ndarray | None = None):
    """(ok, cost, utilization) of candidates, (n,) each, for the search; the
    utilization relative to what the candidate may reach (:func:`max_util` with the
    margin of :func:`limit`: it passes at <= 1).

    Stability is checked for every candidate and the structure designed for those that
    pass it, stem bars curtailed as :func:`evaluate` curtails them (the search ranks by
    the cost a design is given, not by a full-height steel whose excess varies from one
    section to the next). A candidate failing stability has its stability utilization
    and cost nan. ``seg`` (n,) numbers the batch (demand) of each row; ``complete`` (per batch) asks, when no
    candidate of that batch passes, for the structure of all its candidates too (the
    descent then follows complete utilizations). ``caps`` (n,): an edge-pressure cap per
    row (``joint_pressure``), inf for none. The structure is designed in pieces of at
    most ``STRUCTURE_ROWS`` candidates.
    """
    n = len(sec)
    lim, one = limit(basis), 1.0 + TOL
    cond = conditions_of(sec.base_thickness_m, rows, ground)
    allx = Situations(sec, cond, basis)
    bad = allx.bad()
    h_c = cond.z_top - np.asarray(cond.z_found, dtype=float) - np.asarray(sec.base_thickness_m,
                                                                            dtype=float)
    stab = list(allx.checks) + _joint_pressure(allx, caps)
    util = max_util(stab, n, lim)  # scaled: passes at <= 1
    steel = np.full(n, np.nan)
    for idx in _pieces(np.flatnonzero((util <= one) & ~bad)):
        part = _curtailed_structure(allx, sec, rows, cond, ground, basis, idx)[0]
        util[idx] = np.maximum(util[idx], max_util(part.checks, len(idx), lim))
        steel[idx] = part.steel_kg_per_m
    ok = (util <= one) & ~bad
    if np.any(complete):
        passing = np.bincount(seg, weights=ok.astype(float), minlength=len(complete)) > 0
        need = np.asarray(complete, dtype=bool) & ~passing
        for rest in _pieces(np.flatnonzero(need[seg] & np.isnan(steel))):
            part = _structure_of(allx, sec, h_c, basis, rest)
            util[rest] = np.maximum(util[rest], max_util(part.checks, len(rest), lim))
            steel[rest] = part.steel_kg_per_m
        ok = (util <= one) & ~bad
    hs, D = stem_heights(sec, cond, rows)
    return ok, costing.per_metre(sec, hs, D, steel), util


# --- a chosen section in full --------------------------------------------------------------

@dataclass(frozen=True)
class Evaluation:
    """Every check of n candidates, each at its own demand (see :func:`evaluate`).

    checks: stability then structural checks (and ``joint_pressure`` where capped),
    each for the n candidates; utilization: the largest of each candidate; ok: it
    passes every check at ``design.max_utilization`` and its dimensions close; cost:
    cost per metre with curtailed steel; edge: the largest characteristic edge pressure
    (joint pressure ratio), kPa; z_found: underside of base, m.
    """

    sec: SectionArrays
    checks: tuple[CheckArray, ...]
    structure: object  # structure.StructureResult
    utilization: np.ndarray
    ok: np.ndarray
    cost: np.ndarray
    steel_kg_per_m: np.ndarray
    edge: np.ndarray
    z_found: np.ndarray

    def __len__(self) -> int:
        return len(self.sec)

    @functools.cached_property
    def _matrices(self) -> tuple[np.ndarray, np.ndarray, np.ndarray]:
        """Effect, resistance and utilization of every check (rows) x candidate, with
        the conventions of ``results.utilization``."""
        n = len(self.sec)
        E = np.empty((len(self.checks), n))
        R = np.empty((len(self.checks), n))
        for k, c in enumerate(self.checks):
            E[k], R[k] = _full(c.effect, n), _full(c.resistance, n)
        return E, R, utilization(E, R)

    @functools.cached_property
    def _kinds(self) -> tuple[tuple[str, str, str, str, str], ...]:
        """(check, combination, case, unit, clause) of every check, shared by the
        listings of the evaluation."""
        return tuple((c.check, c.combination, c.case, c.unit, c.clause) for c in self.checks)

    def listing(self, i: int) -> CheckListing:
        """The checks of candidate i as ``design.json`` entries (``results.CheckListing``:
        ``governs`` on the worst entry of each check and combination)."""
        E, R, U = self._matrices
        return CheckListing(self._kinds, np.stack((E[:, i], R[:, i], U[:, i])))

    def stem_stop(self, i: int) -> float | None:
        """Height above the top of the base where half the stem main bars of candidate i
        stop, m (None: every bar full height): ``structure``'s curtailment."""
        c = self.structure.stem_curtail_m
        if c is None or not np.isfinite(c[i]):
            return None
        return float(c[i])

    def governing(self, i: int) -> tuple[str, str, float]:
        """(check, combination, utilization) of the worst check of candidate i."""
        if not len(self.checks):
            return ("", "", 0.0)
        U = self._matrices[2]
        k = int(np.argmax(U[:, i]))
        return (self.checks[k].check, self.checks[k].combination, float(U[k, i]))


def evaluate(sec: SectionArrays, rows: Rows, ground: Demand, basis: Basis, costing: Costing,
             given: Reinforcement | Sequence[Reinforcement] | None = None,
             caps: np.ndarray | None = None,
             cage_of: np.ndarray | None = None) -> Evaluation:
    """Every stability and structural check of n candidates at their own levels, in full.

    Stability: ``stability.evaluate_all`` (design-basis section 4). Structure:
    ``structure.design_reinforcement`` chooses the bars of each candidate, or
    ``structure.check_reinforcement`` checks ``given`` bars (design-basis section 5),
    with the stem bars curtailed where the moment allows; with ``cage_of`` (row ->
    index), ``given`` is a sequence of cages, one per row by that index. Cost:
    ``takeoff.cost_per_metre`` with the resulting steel. ``caps``: edge-pressure caps
    per row (``joint_pressure``), inf or None for none.
    """
    n = len(sec)
    cond = conditions_of(sec.base_thickness_m, rows, ground)
    allx = Situations(sec, cond, basis)
    bad = allx.bad()
    zf = np.broadcast_to(np.asarray(cond.z_found, dtype=float), (n,))
    h_c = cond.z_top - zf - np.asarray(sec.base_thickness_m, dtype=float)
    sr = _structure_of(allx, sec, h_c, basis, None, given=given,
                       stem_moment_at=_stem_moment_at(allx, sec, cond), cage_of=cage_of)
    checks = tuple(allx.checks) + tuple(_joint_pressure(allx, caps)) + tuple(sr.checks)
    util = max_util(checks, n)
    ok = (max_util(checks, n, limit(basis)) <= 1.0 + TOL) & ~bad
    steel = _full(sr.steel_kg_per_m, n)
    hs, D = stem_heights(sec, cond, rows)
    cost = costing.per_metre(sec, hs, D, steel)
    return Evaluation(sec=sec, checks=checks, structure=sr, utilization=util, ok=ok,
                      cost=cost, steel_kg_per_m=np.array(steel),
                      edge=np.asarray(allx.edge_pressure(), dtype=float).reshape(n),
                      z_found=np.array(zf))


@dataclass(frozen=True)
class Priced:
    """ok and cost per metre of n candidates as :func:`evaluate` gives them, with the
    structure designed only for the candidates that pass stability (``rows``, indices
    into the n; ``structure`` their ``structure.StructureResult``, row k of it the
    candidate ``rows[k]``)."""

    ok: np.ndarray
    cost: np.ndarray
    structure: object
    rows: np.ndarray

    def reinforcement(self, i: int) -> Reinforcement:
        """The bars of candidate i (one that passes stability), curtailment included."""
        k = int(np.searchsorted(self.rows, i))
        if k >= len(self.rows) or self.rows[k] != i:
            raise ValueError(f"candidate {i} fails stability: it has no bars")
        return self.structure.reinforcement(k)


def priced(sec: SectionArrays, rows: Rows, ground: Demand, basis: Basis, costing: Costing,
           caps: np.ndarray | None = None) -> Priced:
    """ok and cost per metre (stem bars curtailed) of n candidates, the same as
    :func:`evaluate` gives, for a cost table: a candidate failing a stability check
    fails whatever its bars, so the structure (and its curtailment) is designed only
    for those that pass stability; each candidate's numbers depend on its own row only.
    The cost of a candidate that fails is inf."""
    n = len(sec)
    cond = conditions_of(sec.base_thickness_m, rows, ground)
    allx = Situations(sec, cond, basis)
    bad = allx.bad()
    lim, one = limit(basis), 1.0 + TOL
    util = max_util(list(allx.checks) + _joint_pressure(allx, caps), n, lim)
    idx = np.flatnonzero((util <= one) & ~bad)
    ok = np.zeros(n, dtype=bool)
    cost = np.full(n, np.inf)
    sr = None
    if len(idx):
        sr, sub, s_rows, s_cond = _curtailed_structure(allx, sec, rows, cond, ground, basis,
                                                       idx)
        passed = max_util(sr.checks, len(idx), lim) <= one
        hs, D = stem_heights(sub, s_cond, s_rows)
        c = costing.per_metre(sub, hs, D, _full(sr.steel_kg_per_m, len(idx)))
        ok[idx] = passed
        cost[idx] = np.where(passed, c, np.inf)
    return Priced(ok=ok, cost=cost, structure=sr, rows=idx)


# --- a panel's design ------------------------------------------------------------------------

@dataclass(frozen=True)
class SizedDesign:
    """A section with its bars and its checks at one demand.

    checks: every check (``Evaluation.listing``); cost_per_m: ``takeoff.cost_per_metre``
    with the stem drawn up to the demand's wall top, money per metre run; z_found:
    underside of base, m; edge_pressure_sls_kpa: largest characteristic edge pressure
    (joint pressure ratio), kPa; status ``ok`` or ``flagged`` (with ``reason``);
    utilization: largest of all checks; governing: that check as ``check combination``;
    section_type: a name when the section comes from the catalogue or a rationalised
    set, else "".
    """

    section: Section
    reinforcement: Reinforcement | None
    checks: Sequence[CheckEntry]  # a tuple or a results.CheckListing
    cost_per_m: float
    z_found: float
    edge_pressure_sls_kpa: float
    status: str
    reason: str
    utilization: float
    governing: str
    section_type: str = ""


def sized(ev: Evaluation, i: int, status: str | None = None, reason: str = "",
          section_type: str = "") -> SizedDesign:
    """The :class:`SizedDesign` of candidate ``i`` of an evaluation; flagged with its
    governing check when it does not pass (unless a status is given)."""
    chk, comb, u = ev.governing(i)
    if status is None:
        status = "ok" if bool(ev.ok[i]) else "flagged"
        if status == "flagged" and not reason:
            reason = f"fails {chk} {comb} ({u:.2f})"
    return SizedDesign(section=ev.sec.take(i), reinforcement=ev.structure.reinforcement(i),
                       checks=ev.listing(i), cost_per_m=float(ev.cost[i]),
                       z_found=float(ev.z_found[i]), edge_pressure_sls_kpa=float(ev.edge[i]),
                       status=status, reason=reason, utilization=float(ev.utilization[i]),
                       governing=f"{chk} {comb}".strip(), section_type=section_type)


def evaluate_at(sections: list[Section], demand: Demand, basis: Basis, costing: Costing,
                given: Reinforcement | None = None) -> Evaluation:
    """:func:`evaluate` of a few sections at one demand (its edge-pressure cap too)."""
    sec = SectionArrays.of(list(sections))
    rows = Rows.of([demand], [len(sec)])
    return evaluate(sec, rows, demand, basis, costing, given=given,
                    caps=caps_of([demand], [len(sec)]))


def caps_of(demands, counts) -> np.ndarray | None:
    """Edge-pressure caps (``Demand.max_edge_pressure_kpa``) of the rows of ``counts[k]``
    candidates at ``demands[k]``, or None when no demand has one."""
    if all(d.max_edge_pressure_kpa is None for d in demands):
        return None
    return np.repeat(np.array([np.inf if d.max_edge_pressure_kpa is None
                               else d.max_edge_pressure_kpa for d in demands], dtype=float),
                     counts)
