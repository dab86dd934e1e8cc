"""A few section types for the whole wall, at least total cost (design-basis section 6).

Total cost = the panels' cost + the number of types x the rate of one type (item
``section_type``: the detailing, formwork set and cage jig each extra type costs).

1. Candidate types: the bespoke optimum of each distinct demand (at most
   ``MAX_CANDIDATES``, spread evenly over the demands ordered by their own cost, and the
   most severe of each ground always kept).
2. Cost matrix: every candidate type at every demand, bars chosen for that demand, cost
   per metre x the demand's length; inf where it fails a check.
3. The choice (:func:`choose`): the set of at most ``max_types`` columns (``"auto"``: at
   most one type per 0.5 m of each ground's range of retained heights,
   :func:`practical_count`) that serves every row at least matrix cost + number x type
   rate. Exact for
   the candidates considered: dynamic programming over contiguous groups of the rows
   ordered by severity when the types are nested (:func:`nested`, proof in
   :func:`dp_by_count`), else an integer program (``scipy.optimize.milp``) of the
   facility-location form, its rows that rank the types alike merged
   (:func:`merged_rows`, exact); :func:`enumerate_sets` is the reference for the tests.
4. One cage per type: per face the bars of largest area among the panels it serves;
   every panel is checked again with its type's section and cage, including the
   curtailment: the type's stem bars stop at the highest stop its panels need, which is
   checked at each panel (no panel may need its bars to run higher).

Types are named in order of size: S01 the smallest (base width, then base and stem
thickness, then toe and key).
"""

from __future__ import annotations

import itertools
import math
from dataclasses import dataclass, replace

import numpy as np

from wallrun.results import Reinforcement
from wallrun.section import Section, SectionArrays
from wallrun.settings import Basis

from . import evaluate as ev_
from .conditions import Demand, Rows
from .evaluate import Costing, SizedDesign

#: Largest number of candidate types in the cost matrix.
MAX_CANDIDATES = 40
#: Seconds the integer program may take before the choice falls back to the dynamic
#: programme (then reported as not proven least).
MILP_SECONDS = 30.0
#: Largest matrix (rows x columns, after rows that rank the types alike are merged)
#: given to the integer program.
MILP_MAX_CELLS = 200_000
#: Most candidates evaluated in one call when the cost matrix is made (memory: every
#: check is an array of this length).
CHUNK = 60_000


# --- the choice ---------------------------------------------------------------------------

@dataclass(frozen=True)
class Choice:
    """The chosen columns, the column of each row (-1: none serves it), the total (matrix
    cost + types x rate), whether it is proven least for the matrix, and how it was
    found (``dynamic programming``, ``integer program``, ``enumeration``)."""

    columns: tuple[int, ...]
    assign: tuple[int, ...]
    total: float
    exact: bool
    method: str


def nested(cost: np.ndarray, order: np.ndarray) -> bool:
    """Whether the columns of ``cost`` are nested in ``order`` (rows least severe first):
    each column serves (finite cost) a prefix of the ordered rows, and of two columns
    serving a row, the one with the shorter prefix is never dearer there."""
    fin = np.isfinite(cost[order])
    n, T = fin.shape
    reach = fin.sum(axis=0)  # prefix length of each column
    for t in range(T):
        if not fin[:reach[t], t].all():
            return False
    C = cost[order]
    by_reach = np.argsort(reach, kind="stable")
    for i in range(n):
        cols = [t for t in by_reach if fin[i, t]]
        vals = C[i, cols]
        if np.any(np.diff(vals) < -1e-9):  # a longer prefix cheaper at this row
            return False
    return True


def dp_by_count(cost: np.ndarray, order: np.ndarray, k_max: int):
    """Least matrix cost of serving every row with exactly k contiguous groups of the
    rows in ``order``, each group served by the one column cheapest for it, for k = 1 ..
    ``k_max``. Returns (best (k_max + 1,), and a function k -> assignment per row).

    Optimality for nested columns (see :func:`nested`): take any optimal set S; serving
    each row by the member of S with the shortest prefix that covers it costs no more
    than any other assignment, and that rule assigns contiguous groups of rows to the
    members of S in order of their prefixes. So an optimal solution with k types is a
    partition of the ordered rows into at most k contiguous groups, one column per
    group, and the recursion minimises over exactly those partitions.
    """
    n, T = cost.shape
    C = cost[order]
    fin = np.isfinite(C)
    P = np.vstack([np.zeros(T), np.cumsum(np.where(fin, C, 0.0), axis=0)])
    F = np.vstack([np.zeros(T, dtype=np.int64), np.cumsum(~fin, axis=0)])
    G = np.full((n + 1, n + 1), math.inf)  # G[i, j]: best column for rows i..j-1
    Garg = np.full((n + 1, n + 1), -1, dtype=np.int64)
    for i in range(n):
        s = np.where((F[i + 1:] - F[i]) > 0, math.inf, P[i + 1:] - P[i])
        a = np.argmin(s, axis=1)
        G[i, i + 1:] = s[np.arange(len(a)), a]
        Garg[i, i + 1:] = a
    K = max(1, min(k_max, n))
    best = np.full((K + 1, n + 1), math.inf)
    arg = np.full((K + 1, n + 1), -1, dtype=np.int64)
    best[0, 0] = 0.0
    for k in range(1, K + 1):
        v = best[k - 1][:, None] + G  # v[i, j]: the last group is rows i..j-1
        arg[k] = np.argmin(v, axis=0)
        best[k] = v[arg[k], np.arange(n + 1)]
        best[k, 0] = math.inf
    # a group served by a column already used counts once: at most k distinct columns

    def assignment(k: int) -> np.ndarray:
        out = np.full(n, -1, dtype=np.int64)
        j = n
        while k > 0 and j > 0:
            i = int(arg[k, j])
            out[order[i:j]] = Garg[i, j]
            j, k = i, k - 1
        return out

    return best[:, n], assignment


def undominated(cost: np.ndarray) -> np.ndarray:
    """Mask of the columns no other column dominates (serves every row it serves at no
    more cost; of equal columns the first is kept): a dominated column is never needed
    in a least set, so leaving it out keeps the least total."""
    T = cost.shape[1]
    fin = np.isfinite(cost)
    keep = np.ones(T, dtype=bool)
    for t in range(T):
        for u in range(T):
            if u == t or not keep[u]:
                continue
            if (np.all(fin[fin[:, t], u]) and np.all(cost[fin[:, t], u] <= cost[fin[:, t], t] + 1e-9)
                    and (u < t or not np.array_equal(fin[:, u], fin[:, t])
                         or np.any(cost[fin[:, t], u] < cost[fin[:, t], t] - 1e-9))):
                keep[t] = False
                break
    return keep


def _total(cost: np.ndarray, cols, rate: float) -> float:
    if not cols:
        return math.inf
    return float(np.min(cost[:, list(cols)], axis=1).sum()) + rate * len(cols)


def enumerate_sets(cost: np.ndarray, rate: float, max_types: int) -> tuple[float, tuple[int, ...]]:
    """Least total over every set of at most ``max_types`` columns, by enumeration (the
    reference for the tests; exponential)."""
    n, T = cost.shape
    best, best_set = math.inf, ()
    for k in range(1, min(max_types, T) + 1):
        for combo in itertools.combinations(range(T), k):
            tot = _total(cost, combo, rate)
            if tot < best - 1e-9:
                best, best_set = tot, combo
    return best, best_set


def load_solver() -> None:
    """Import the integer program's solver (``scipy.optimize``, about 0.5 s on the
    benchmark machine) ahead of :func:`milp_sets`; nothing else. A caller with idle
    time before rationalising (``pipeline.Sizer`` waiting for its workers) calls it
    then."""
    import scipy.optimize  # noqa: F401


def milp_sets(cost: np.ndarray, rate: float, max_types: int):
    """The least total by an integer program (facility location, ``scipy.optimize.milp``
    with HiGHS): x_t in {0, 1} (type t used), y_rt in [0, 1] (row r served by t), minimise
    sum c_rt y_rt + rate sum x_t subject to sum_t y_rt = 1, y_rt <= x_t, sum x_t <=
    max_types, y_rt = 0 where t fails at r. Returns (total, columns) or None when the
    solver gives no proven optimum, or when the program, after the rows are merged
    (:func:`merged_rows`), has more than ``MILP_MAX_CELLS`` cells."""
    from scipy.optimize import Bounds, LinearConstraint, milp
    from scipy.sparse import coo_matrix

    full = cost
    cost = merged_rows(cost)
    if cost.size > MILP_MAX_CELLS:
        return None
    n, T = cost.shape
    rr, tt = np.nonzero(np.isfinite(cost))
    m = len(rr)
    if m == 0:
        return None
    nv = T + m  # x (T), then y for each finite cell
    c = np.concatenate([np.full(T, rate), cost[rr, tt]])
    rows, cols, vals = [], [], []
    # sum_t y_rt = 1
    rows += list(rr)
    cols += list(T + np.arange(m))
    vals += [1.0] * m
    lo, hi = [1.0] * n, [1.0] * n
    # y_rt - x_t <= 0
    base = n
    rows += list(base + np.arange(m)) * 2
    cols += list(T + np.arange(m)) + list(tt)
    vals += [1.0] * m + [-1.0] * m
    lo += [-np.inf] * m
    hi += [0.0] * m
    # sum x_t <= max_types
    rows += [base + m] * T
    cols += list(range(T))
    vals += [1.0] * T
    lo += [0.0]
    hi += [float(max_types)]
    A = coo_matrix((vals, (rows, cols)), shape=(n + m + 1, nv)).tocsr()
    integrality = np.concatenate([np.ones(T), np.zeros(m)])
    res = milp(c, constraints=LinearConstraint(A, lo, hi), integrality=integrality,
               bounds=Bounds(0, 1), options={"time_limit": MILP_SECONDS})
    if res.status != 0 or res.x is None:
        return None
    chosen = tuple(int(t) for t in np.flatnonzero(res.x[:T] > 0.5))
    return _total(full, chosen, rate), chosen


def ranking(row: np.ndarray) -> tuple[int, ...]:
    """The finite columns of a cost row in increasing cost, ties to the lower column."""
    fin = np.flatnonzero(np.isfinite(row))
    return tuple(fin[np.lexsort((fin, row[fin]))].tolist())


def dp_by_runs(cost: np.ndarray, order: np.ndarray, k_max: int):
    """:func:`dp_by_count` over the runs of consecutive rows (in ``order``) that rank the
    columns alike, each run one row (their sum); the assignment is given back per row.

    Exact where :func:`dp_by_count` is: with nested columns a row is served by the
    member of the set with the shortest prefix covering it, and the rows of a run have
    the same finite columns, so an optimal partition never splits a run. The table of
    :func:`dp_by_count` is (rows + 1)^2: over runs it stays small on a long wall."""
    order = np.asarray(order)
    runs: list[list[int]] = []
    last = None
    for r in order.tolist():
        key = ranking(cost[r])
        if runs and key == last:
            runs[-1].append(r)
        else:
            runs.append([r])
            last = key
    merged = np.array([cost[rs].sum(axis=0) for rs in runs]).reshape(-1, cost.shape[1])
    best, assign_runs = dp_by_count(merged, np.arange(len(runs)), k_max)
    K = max(1, min(k_max, cost.shape[0]))  # the length dp_by_count gives over the rows
    best = np.concatenate([best, np.full(K + 1 - len(best), math.inf)])

    def assignment(k: int) -> np.ndarray:
        a = assign_runs(min(k, len(runs)))
        out = np.full(cost.shape[0], -1, dtype=np.int64)
        for rs, col in zip(runs, a.tolist()):
            out[rs] = col
        return out

    return best, assignment


def merged_rows(cost: np.ndarray) -> np.ndarray:
    """``cost`` with the rows that rank their columns alike made one row, their sum.

    A row's ranking: its finite columns in increasing cost, ties to the lower column.
    Given any set of columns, a row is served by the first column of the set in its
    ranking (a least-cost one), so rows of one ranking are always served by the same
    column: for every set, the total of the merged matrix equals the total of
    ``cost``, and the least-total sets of the two are the same. Rows keep the order of
    their rankings' first appearance. (Adjacent panels of a wall mostly rank the types
    alike: 1,250 rows of the 10 km benchmark are 104.)"""
    groups: dict[tuple, list[int]] = {}
    for r in range(cost.shape[0]):
        groups.setdefault(ranking(cost[r]), []).append(r)
    if len(groups) == cost.shape[0]:
        return cost
    return np.array([cost[rs].sum(axis=0) for rs in groups.values()]).reshape(-1, cost.shape[1])


def choose(cost: np.ndarray, rate: float, max_types: int | str,
           order: np.ndarray | None = None) -> Choice:
    """The columns of ``cost`` (rows: demands, entries: cost of the row with that type,
    inf where it fails) serving every row at least total = matrix cost + number of
    columns x ``rate``, with at most ``max_types`` columns (``"auto"``: no cap).

    Rows no column serves are left out (assignment -1). Nested columns: dynamic
    programming by the number of types (exact); otherwise the integer program of
    :func:`milp_sets` (exact) where the matrix is small enough, else the dynamic
    programme on the rows ordered by severity followed by reassignment (a good set,
    not proven least: ``exact`` False).
    """
    n, T = cost.shape
    served = np.isfinite(cost).any(axis=1)
    k_cap = T if max_types == "auto" else int(max_types)
    sub = cost[served]
    if not len(sub):
        return Choice((), tuple([-1] * n), math.inf, True, "none")
    if order is None:
        order = np.lexsort((np.min(sub, axis=1), -np.isfinite(sub).sum(axis=1)))
    else:  # the given order of all rows, restricted to the rows some column serves
        pos = np.cumsum(served) - 1
        order = pos[[i for i in np.asarray(order) if served[i]]]
    method, exact = "dynamic programming", nested(sub, order)
    if exact:
        best, assignment = dp_by_runs(sub, order, k_cap)
        ks = np.arange(len(best))
        tot = best + rate * ks
        tot[0] = math.inf
        k = int(np.argmin(tot))
        a = assignment(k)
        cols = tuple(sorted(set(int(x) for x in a if x >= 0)))
    else:
        live = undominated(sub)
        got = milp_sets(sub[:, live], rate, k_cap)
        if got is not None:
            method, exact = "integer program", True
            cols = tuple(int(np.flatnonzero(live)[c]) for c in got[1])
        else:
            method = "dynamic programming (types not nested: not proven least)"
            best, assignment = dp_by_runs(sub, order, k_cap)
            tot = best + rate * np.arange(len(best))
            tot[0] = math.inf
            cols = tuple(sorted(set(int(x) for x in assignment(int(np.argmin(tot))) if x >= 0)))
    assign = np.full(n, -1, dtype=np.int64)
    if cols:
        pick = np.asarray(cols)[np.argmin(cost[:, list(cols)], axis=1)]
        ok = np.isfinite(np.min(cost[:, list(cols)], axis=1))
        assign[ok] = pick[ok]
    return Choice(tuple(cols), tuple(int(x) for x in assign), _total(sub, cols, rate),
                  exact, method)


# --- the set ------------------------------------------------------------------------------

def envelope_bars(rs: list[Reinforcement]) -> Reinforcement:
    """Per face the bars of largest As,prov among ``rs`` (ties: the larger bar), one cage
    for every panel of a type; the curtailment stop is set by :func:`type_designs`."""
    def pick(name):
        sets = [getattr(r, name) for r in rs if getattr(r, name) is not None]
        return max(sets, key=lambda b: (b.as_prov_mm2_per_m, b.bar_mm)) if sets else None
    return Reinforcement(stem=pick("stem"), heel=pick("heel"), toe=pick("toe"),
                         stem_horizontal=pick("stem_horizontal"),
                         base_distribution=pick("base_distribution"),
                         stem_front=pick("stem_front"), stem_curtail_m=None)


def size_key(s: Section) -> tuple:
    """Order of size of a type: base width, base thickness, stem base and top, toe, key."""
    return (s.base_width_m, s.base_thickness_m, s.stem_base_m, s.stem_top_m, s.toe_m,
            s.key_depth_m, s.key_width_m)


@dataclass(frozen=True)
class SectionSet:
    """Section types with one cage each: ``names`` (S01 ...), ``sections``, ``cages``
    (their ``stem_curtail_m`` the type's stop height above the top of the base, m, or
    None: every stem bar full height)."""

    names: tuple[str, ...]
    sections: tuple[Section, ...]
    cages: tuple[Reinforcement, ...]

    def __len__(self) -> int:
        return len(self.names)


def curtail_check(ev: ev_.Evaluation, i: int, cage: Reinforcement) -> str:
    """'' when the type's stop height of the curtailed stem bars serves candidate i of an
    evaluation made with its cage, else the reason: a panel whose own least stop
    (``structure``'s curtailment of the same bars, EN 1992-1-1 9.2.1.3 shift rule and
    8.4 anchorage) is higher than the type's cannot share its cage."""
    own = ev.stem_stop(i)
    stop = cage.stem_curtail_m
    if stop is None:
        return ""  # the type runs every stem bar full height
    if own is None or own > stop + 1e-6:
        need = "full height" if own is None else f"{own:.2f} m"
        return (f"the type's curtailed stem bars stop {stop:.2f} m above the base; this "
                f"panel needs them to {need}")
    return ""


@dataclass(frozen=True)
class Option:
    """A type at one demand: the evaluation with the type's cage, the row of the
    demand in it, whether it passes (the shared curtailment included) and why not."""

    name: str
    cage: Reinforcement
    ev: ev_.Evaluation
    row: int
    ok: bool
    why: str

    @property
    def cost(self) -> float:
        return float(self.ev.cost[self.row])

    @property
    def utilization(self) -> float:
        return float(self.ev.utilization[self.row])

    def design(self) -> SizedDesign:
        """The panel's design with this type (flagged with the reason where it fails)."""
        sd = ev_.sized(self.ev, self.row, section_type=self.name)
        sd = replace(sd, reinforcement=replace(sd.reinforcement,
                                               stem_curtail_m=self.cage.stem_curtail_m))
        if not self.ok:
            chk, comb, u = self.ev.governing(self.row)
            reason = self.why or f"type {self.name} with its cage fails {chk} {comb} ({u:.2f})"
            sd = replace(sd, status="flagged", reason=reason)
        return sd


def type_evaluations(types: SectionSet, demands: list[Demand], basis: Basis,
                     costing: Costing) -> list[tuple[list[int], ev_.Evaluation]]:
    """Every type of the set at every demand with its own cage, one evaluation per
    ground and at most ``CHUNK`` rows (``evaluate`` with a cage per row): (the indices
    ks of the demands in it, the evaluation), the row of type t at demand ks[j] being
    t len(ks) + j. A cage's stop height does not enter an evaluation
    (``structure.check_reinforcement``)."""
    out = []
    groups: dict[tuple, list[int]] = {}
    for k, d in enumerate(demands):
        groups.setdefault(d.ground_key, []).append(k)
    m = len(types)
    per_call = max(1, CHUNK // max(m, 1))  # demands per evaluation: bounded memory
    for ks in (g[a:a + per_call] for g in groups.values() for a in range(0, len(g), per_call)):
        ds = [demands[k] for k in ks]
        rows = Rows.of(ds * m, [1] * (len(ds) * m))
        caps = ev_.caps_of(ds * m, [1] * (len(ds) * m))
        sec = SectionArrays.of([s for s in types.sections for _ in ds])
        ev = ev_.evaluate(sec, rows, ds[0], basis, costing, given=types.cages, caps=caps,
                          cage_of=np.repeat(np.arange(m), len(ds)))
        out.append((ks, ev))
    return out


def designs_with(types: SectionSet, demands: list[Demand], basis: Basis,
                 costing: Costing, evaluations=None) -> list[list[Option]]:
    """Every type at every demand with its own cage: per demand, per type, an
    :class:`Option` whose ``ok`` includes the shared curtailment (:func:`curtail_check`).
    ``evaluations``: :func:`type_evaluations` of these types and demands when made
    already (the cages' stop heights aside)."""
    out = [[None] * len(types) for _ in demands]
    if evaluations is None:
        evaluations = type_evaluations(types, demands, basis, costing)
    for ks, ev in evaluations:
        for t, (name, cage) in enumerate(zip(types.names, types.cages)):
            for j, k in enumerate(ks):
                row = t * len(ks) + j
                why = curtail_check(ev, row, cage)
                out[k][t] = Option(name, cage, ev, row, bool(ev.ok[row]) and not why, why)
    return out


def best_type(options: list[Option]) -> SizedDesign | None:
    """The cheapest passing type among a demand's options (ties: lower utilization, then
    the smaller type), or None when none passes."""
    ok = [(o.cost, o.utilization, t) for t, o in enumerate(options) if o.ok]
    if not ok:
        return None
    return options[min(ok)[2]].design()


def least_failing(options: list[Option]) -> SizedDesign:
    """The least utilised type of a demand no type serves, flagged with the reason."""
    o = min(options, key=lambda o: o.utilization)
    sd = o.design()
    return replace(sd, reason=f"no type of the set passes: {sd.reason}")


@dataclass(frozen=True)
class Rationalised:
    """A rationalised set and what it was chosen from: ``types``; ``designs`` per demand
    given; the matrix cost and the type rate of the choice; whether the choice is proven
    least for the candidates considered, and by which method; the candidates counted."""

    types: SectionSet
    designs: tuple[SizedDesign, ...]
    total_cost: float
    type_rate: float
    exact: bool
    method: str
    candidates: int


#: Retained-height range per type of a practical set, m: ``max_types = "auto"`` uses at
#: most one type per this much of each ground's range of retained heights.
HEIGHT_PER_TYPE_M = 0.5


def practical_count(demands: list[Demand]) -> int:
    """The most types ``max_types = "auto"`` may use: per ground, one per
    ``HEIGHT_PER_TYPE_M`` of its range of retained heights (at least one), summed. A set
    a contractor can build stays small on a long wall, where each extra type would
    still pay for itself (common practice: a handful of wall types per job)."""
    by: dict[tuple, list[float]] = {}
    for d in demands:
        by.setdefault(d.ground_key, []).append(d.h)
    return sum(max(1, math.ceil((max(hs) - min(hs)) / HEIGHT_PER_TYPE_M - 1e-9))
               for hs in by.values())


def rationalise(demands: list[Demand], lengths: list[float], own: list[SizedDesign],
                basis: Basis, costing: Costing, max_types: int | str,
                type_rate: float) -> Rationalised:
    """The rationalised set of ``demands`` (their lengths, m, and their own bespoke
    designs ``own``) at least total cost (see the module docstring)."""
    uniq = list(dict.fromkeys(demands))
    idx = {d: k for k, d in enumerate(uniq)}
    L = np.zeros(len(uniq))
    own_of: dict[Demand, SizedDesign] = {}
    for d, length, sd in zip(demands, lengths, own):
        L[idx[d]] += float(length)
        own_of[d] = sd
    ok_rows = [k for k, d in enumerate(uniq) if own_of[d].status == "ok"]
    cands = _candidates([uniq[k] for k in ok_rows], [own_of[uniq[k]] for k in ok_rows])
    designs: list[SizedDesign | None] = [None] * len(uniq)
    if not cands or not ok_rows:
        for k, d in enumerate(uniq):
            designs[k] = own_of[d]
        return Rationalised(SectionSet((), (), ()), tuple(designs[idx[d]] for d in demands),
                            math.inf, type_rate, True, "none", 0)
    # 2. the cost matrix, bars chosen per demand
    rows_d = [uniq[k] for k in ok_rows]
    cost = np.full((len(rows_d), len(cands)), math.inf)
    bars: dict[tuple[int, int], tuple] = {}  # (row, type) -> (its bars, its row)
    groups: dict[tuple, list[int]] = {}
    for r, d in enumerate(rows_d):
        groups.setdefault(d.ground_key, []).append(r)
    S = SectionArrays.of(cands)
    per_call = max(1, CHUNK // len(cands))  # rows per evaluation: bounded memory
    for group in groups.values():
        for a in range(0, len(group), per_call):
            rs = group[a:a + per_call]
            ds = [rows_d[r] for r in rs]
            counts = [len(cands)] * len(ds)
            sec = SectionArrays(**{f: np.tile(np.asarray(getattr(S, f), dtype=float), len(ds))
                                   for f in ("stem_top_m", "stem_base_m", "base_width_m",
                                             "toe_m", "base_thickness_m", "key_depth_m",
                                             "key_width_m")})
            pr = ev_.priced(sec, Rows.of(ds, counts), ds[0], basis, costing,
                            caps=ev_.caps_of(ds, counts))
            # the bars only: the checks are freed
            cage = (pr if pr.structure is None
                    else replace(pr, structure=replace(pr.structure, checks=[])))
            for j, r in enumerate(rs):
                sl = slice(j * len(cands), (j + 1) * len(cands))
                okj = pr.ok[sl]
                cost[r] = np.where(okj, pr.cost[sl] * L[ok_rows[r]], math.inf)
                for t in np.flatnonzero(okj):
                    bars[(r, int(t))] = (cage, j * len(cands) + int(t))
            del pr
    order = np.argsort([own_of[d].cost_per_m for d in rows_d], kind="stable")
    cap = max_types if max_types != "auto" else practical_count(rows_d)
    ch = choose(cost, type_rate, cap, order=order)
    # 4. one cage per type, named by size
    chosen = sorted(ch.columns, key=lambda t: size_key(cands[t]))
    names, sections, cages, served_by = [], [], [], []
    for j, t in enumerate(chosen):
        served = [r for r in range(len(rows_d)) if ch.assign[r] == t]
        if not served:
            continue
        served_by.append([ok_rows[r] for r in served])  # as indices into uniq
        names.append(f"S{len(names) + 1:02d}")
        sections.append(cands[t])
        cages.append(envelope_bars([bars[(r, t)][0].reinforcement(bars[(r, t)][1])
                                    for r in served]))
    types = SectionSet(tuple(names), tuple(sections), tuple(cages))
    # every type at every demand, then the types' stop heights, then every demand with
    # its best type (a demand no type serves keeps its own, flagged)
    evs = type_evaluations(types, uniq, basis, costing) if len(types) else []
    types = with_stops(types, served_by, evs)
    opts = designs_with(types, uniq, basis, costing, evs) if len(types) else None
    total = type_rate * len(types)
    for k, d in enumerate(uniq):
        if own_of[d].status != "ok":
            designs[k] = own_of[d]
        else:
            designs[k] = best_type(opts[k]) or least_failing(opts[k])
        total += designs[k].cost_per_m * L[k]
    return Rationalised(types, tuple(designs[idx[d]] for d in demands), total, type_rate,
                        ch.exact, ch.method, len(cands))


def with_stops(types: SectionSet, served: list[list[int]],
               evaluations: list[tuple[list[int], ev_.Evaluation]]) -> SectionSet:
    """The stop height of each type's curtailed stem bars: the highest its panels need
    with the type's cage (None, full height, when any of them cannot curtail).
    ``served[t]``: the indices of the demands type t serves, in the demands of
    ``evaluations`` (:func:`type_evaluations`)."""
    where = {k: (ev, j, len(ks)) for ks, ev in evaluations for j, k in enumerate(ks)}
    cages = list(types.cages)
    for t, cage in enumerate(types.cages):
        stops = []
        for k in served[t]:
            ev, j, m = where[k]
            stops.append(ev.stem_stop(t * m + j))
        stop = None if (not stops or any(s is None for s in stops)) else max(stops)
        cages[t] = replace(cage, stem_curtail_m=stop)
    return SectionSet(types.names, types.sections, tuple(cages))


def _candidates(ds: list[Demand], own: list[SizedDesign]) -> list[Section]:
    """The candidate types: the distinct bespoke sections, at most ``MAX_CANDIDATES``
    spread evenly over the demands ordered by their own cost, the most severe of each
    ground always kept."""
    by_cost = sorted(range(len(ds)), key=lambda k: own[k].cost_per_m)
    secs = list(dict.fromkeys(own[k].section for k in by_cost))
    if len(secs) <= MAX_CANDIDATES:
        return secs
    keep = set(np.unique(np.round(np.linspace(0, len(secs) - 1, MAX_CANDIDATES)).astype(int)))
    worst: dict[tuple, Section] = {}
    for k in by_cost:
        worst[ds[k].ground_key] = own[k].section
    return [s for i, s in enumerate(secs) if i in keep or s in worst.values()]
