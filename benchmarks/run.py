"""Benchmark: a long synthetic wall designed end to end (a script, not a test).

    python benchmarks/run.py --km 10          # a table
    python benchmarks/run.py --km 1 10 100    # how the cost grows with length
    python benchmarks/run.py --km 10 --json   # one JSON object (a list for several km)

The run is invented: a straight fill wall along a road on a gentle grade, a survey
point every 0.5 m, and a retained height varying smoothly between 0.5 and 7 m (a sum
of three sines of incommensurate wavelengths, rescaled), levels to the millimetre.

Reported: the time of each stage (the pipeline's ``result.timings`` plus output
writing), the candidate sections per second through every check they need inside the
search and on one large batch, counted as candidates *decided*: stability is checked
for every candidate and the structure only for those that pass it (a candidate failing
stability fails anyway); the batch is also timed with every check on every candidate.
The batch goes through the evaluator of the long runs (``lockstep.evaluate_search``)
with half of it on the second core (``wallrun.workers``), as in the search; the figure
for one process is printed beside it. Batch timings are the least of three runs. Also the speed-up of the vectorised checks
over a plain per-candidate evaluation of the same checks (``plain.plain_stability_checks``
and the structural design of one candidate at a time) on a sample of 200 candidates.
The run tunes the allocator as the command line does (``wallrun.memory``).
"""

from __future__ import annotations

import argparse
import json
import os
import sys
import tempfile
import time

import numpy as np

sys.path.insert(0, os.path.join(os.path.dirname(os.path.abspath(__file__)), ".."))

from wallrun import memory, sizing  # noqa: E402
from wallrun.factors import resolve  # noqa: E402
from wallrun.section import Section, SectionArrays  # noqa: E402
from wallrun.settings import Design, ProfileData, Project, Site  # noqa: E402


def synthetic_site(km: float, spacing_m: float = 0.5) -> Site:
    """An invented straight run of ``km`` km: finished level on a 0.4 % grade, ground
    below it by a retained height between 0.5 and 7 m varying smoothly."""
    ch = np.round(np.arange(0.0, km * 1000.0 + 1e-9, spacing_m), 3)
    s = (np.sin(2 * np.pi * ch / 730.0) + 0.6 * np.sin(2 * np.pi * ch / 281.0 + 1.3)
         + 0.3 * np.sin(2 * np.pi * ch / 97.0 + 0.4))
    s = (s - s.min()) / (s.max() - s.min())  # 0..1
    h = 0.5 + 6.5 * s
    finished = np.round(60.0 + 0.004 * ch, 3)
    ground = np.round(finished - h, 3)
    lines = tuple(range(2, len(ch) + 2))
    return Site(root=tempfile.gettempdir(), project=Project(name=f"Synthetic {km:g} km run"),
                ground=ProfileData(chainage_m=ch, level_m=ground, source="ground.csv",
                                   lines=lines),
                finished=ProfileData(chainage_m=ch, level_m=finished, source="finished.csv",
                                     lines=lines),
                alignment=None, design=Design(), factors=resolve("DA1"))


def _sample_candidates(n: int, seed: int = 1) -> SectionArrays:
    """n invented candidate sections for a 3.5 m wall, on the 0.05 m grid."""
    rng = np.random.default_rng(seed)
    q = lambda lo, hi: np.round(rng.uniform(lo, hi, n) / 0.05) * 0.05  # noqa: E731
    ts = q(0.25, 0.45)
    tb = np.maximum(q(0.3, 0.6), ts)
    B = q(2.0, 3.6)
    toe = np.minimum(q(0.0, 1.2), B - ts - 0.3)
    return SectionArrays(stem_top_m=np.full(n, 0.2), stem_base_m=ts, base_width_m=B,
                         toe_m=toe, base_thickness_m=tb, key_depth_m=np.zeros(n),
                         key_width_m=np.zeros(n))


REPEAT = 3


def _least(f, repeat: int = REPEAT) -> float:
    """Least wall time of ``repeat`` calls of f, s."""
    best = float("inf")
    for _ in range(repeat):
        t0 = time.perf_counter()
        f()
        best = min(best, time.perf_counter() - t0)
    return best


def throughput(site: Site, n_bulk: int = 100_000, n_plain: int = 200) -> dict:
    """Candidates per second through every check on one batch, and the speed-up over a
    plain per-candidate evaluation of the same checks."""
    from wallrun import lockstep, plain, stability, structure, workers

    basis = site.basis
    d = sizing.Demand(z_top=63.5, z_front=60.0, backfill=site.backfill,
                      foundation=site.foundation, surcharge_kpa=site.loads.surcharge_kpa,
                      water=site.water, wall_top_m=63.5,
                      min_founding_depth_m=site.wall.min_founding_depth_m,
                      founding_step_m=site.wall.founding_step_m)
    bulk = _sample_candidates(n_bulk)
    sizing.evaluate(bulk.subset(slice(0, 100)), d, basis, site.rates, curtail=False)  # warm
    # as in the search: structure only for the candidates passing every stability check;
    # a candidate is counted when it is decided (passed, or failed a check it needed)
    # each batch timing is the least of REPEAT runs (the timeit convention: the others
    # only add what the machine did meanwhile)
    one = lambda: sizing.evaluate(bulk, d, basis, site.rates, curtail=False,  # noqa: E731
                                  screen=True, complete_if_none=False)
    t_one = _least(one)
    structured = int(np.isfinite(one().steel_kg_per_m).sum())
    # the long runs' evaluator (wallrun.lockstep), half the batch on the second core
    lv = np.full(n_bulk, d.z_top), np.full(n_bulk, d.z_front), np.full(n_bulk, d.wall_top_m)
    seg, no = np.zeros(n_bulk, dtype=np.int64), np.array([False])
    with workers.twin():
        t_bulk = _least(lambda: lockstep.evaluate_search(bulk, *lv, seg, no, d, basis,
                                                         site.rates))
    t_full = _least(lambda: sizing.evaluate(bulk, d, basis, site.rates, curtail=False))
    sample = _sample_candidates(n_plain, seed=2)
    t_vec = _least(lambda: sizing.evaluate(sample, d, basis, site.rates, curtail=False))
    t0 = time.perf_counter()
    for i in range(n_plain):
        sec: Section = sample.take(i)
        one = SectionArrays.of([sec])
        cond = sizing.conditions_for(d, sec.base_thickness_m)
        plain.plain_stability_checks(sec, cond, basis)
        actions = stability.member_actions(one, cond, basis)
        qp = stability.member_moments_qp(one, cond, basis)
        hc = cond.z_top - cond.z_found - sec.base_thickness_m
        structure.design_reinforcement(one, actions, qp, basis, stem_height_m=hc)
    t_plain = time.perf_counter() - t0
    return {"bulk_candidates": n_bulk, "bulk_seconds": t_bulk,
            "bulk_candidates_per_second": n_bulk / t_bulk,
            "bulk_one_process_candidates_per_second": n_bulk / t_one,
            "bulk_structured": structured,
            "bulk_unscreened_candidates_per_second": n_bulk / t_full,
            "plain_sample": n_plain, "plain_seconds": t_plain,
            "plain_candidates_per_second": n_plain / t_plain,
            "speedup_vs_plain": (t_plain / n_plain) / (t_bulk / n_bulk),
            "speedup_same_sample": t_plain / t_vec}


def run_one(km: float, write: bool = True) -> dict:
    """Design the synthetic run of ``km`` km end to end; figures as a dict."""
    site = synthetic_site(km)
    sizing._DESIGNERS.clear()
    stages: dict[str, float] = {}
    t_all = time.perf_counter()
    try:
        from wallrun import pipeline
    except ImportError as e:  # the pipeline's modules are not all there yet
        pipeline = None
        stages["pipeline_missing"] = 0.0
        print(f"note: pipeline not importable ({e}); timing demand building and sizing only",
              file=sys.stderr)
    n_panels = 0
    if pipeline is not None:
        t0 = time.perf_counter()
        result = pipeline.design(site)
        t_design = time.perf_counter() - t0
        stages.update({k: float(v) for k, v in getattr(result, "timings", {}).items()})
        stages["design_other"] = max(t_design - sum(stages.values()), 0.0)
        n_panels = len(result.panels)
        if write:
            with tempfile.TemporaryDirectory() as tmp:
                t0 = time.perf_counter()
                try:
                    from wallrun.outputs.write import write_outputs
                    write_outputs(result, os.path.join(tmp, "out"))
                    stages["write_outputs"] = time.perf_counter() - t0
                except ImportError as e:  # an output module not written yet
                    print(f"note: outputs not written ({e})", file=sys.stderr)
        flagged = sum(p.status != "ok" for p in result.panels)
    else:
        from wallrun import panels as pn
        from wallrun.profile import build_profiles, find_runs
        t0 = time.perf_counter()
        prof = build_profiles(site)
        runs = find_runs(prof, site.wall)
        demands = []
        for run in runs:
            pts = pn.cut_points(run.ch_start_m, run.ch_end_m, [], site.wall)
            for a, b in zip(pts[:-1], pts[1:]):
                e = pn.extent(prof, run.run, run.side, a, b, site.wall)
                demands.append(sizing.Demand(
                    z_top=round(e.z_top, 6), z_front=round(e.z_front, 6),
                    backfill=site.backfill, foundation=site.foundation,
                    surcharge_kpa=site.loads.surcharge_kpa, water=site.water,
                    wall_top_m=round(max(e.wall_top_start, e.wall_top_end), 6),
                    min_founding_depth_m=site.wall.min_founding_depth_m,
                    founding_step_m=site.wall.founding_step_m))
        stages["demands"] = time.perf_counter() - t0
        t0 = time.perf_counter()
        des = sizing._designer_for(site.basis, site.rates, site.design.dimension_step_m)
        designs = [des.bespoke(d) for d in demands]
        stages["sizing"] = time.perf_counter() - t0
        n_panels = len(demands)
        flagged = sum(d.status != "ok" for d in designs)
    total = time.perf_counter() - t_all
    des = sizing._designer_for(site.basis, site.rates, site.design.dimension_step_m)
    in_search = des.decided / des.seconds_in_evaluate if des.seconds_in_evaluate else 0.0
    searched, structured, distinct = des.decided, des.structured, len(des.cache)
    batch = getattr(result, "search", {}) if pipeline is not None else {}
    if batch:  # a large job, sized many panels per call (wallrun.lockstep)
        searched = int(batch["candidates"]) + des.decided
        structured = None  # the batch search keeps no such count
        seconds = stages.get("sizing", 0.0)
        in_search = searched / seconds if seconds else 0.0  # whole sizing stage: conservative
        distinct = len({(p.panel.retained_top_m, p.panel.front_min_m) for p in result.panels})
    tp = throughput(site)
    return {"km": km, "panels": n_panels, "distinct_demands": distinct,
            "flagged_panels": flagged, "seconds_total": total,
            "seconds_by_stage": stages,
            "candidates_evaluated": searched,
            "candidates_structured_in_search": structured,
            "candidates_per_second": tp["bulk_candidates_per_second"],
            "candidates_per_second_in_search": in_search,
            "speedup_vs_plain": tp["speedup_vs_plain"],
            "throughput": tp}


def _table(r: dict) -> str:
    lines = [f"run {r['km']:g} km: {r['panels']} panels ({r['distinct_demands']} distinct "
             f"demands, {r['flagged_panels']} flagged), total {r['seconds_total']:.2f} s"]
    for k, v in r["seconds_by_stage"].items():
        lines.append(f"  {k:<20s} {v:9.3f} s")
    tp = r["throughput"]
    st = r["candidates_structured_in_search"]
    lines += [f"  candidates decided in the search     {r['candidates_evaluated']:,}"
              + (f" ({st:,} passed stability and had their structure designed)"
                 if st is not None else " (searched many panels per call)"),
              f"  candidates/s in the search           {r['candidates_per_second_in_search']:,.0f}",
              f"  candidates/s on one batch of {tp['bulk_candidates']:,}  "
              f"{r['candidates_per_second']:,.0f} decided, two processes "
              f"({tp['bulk_one_process_candidates_per_second']:,.0f} in one; "
              f"{tp['bulk_structured']:,} passed stability and went through structure; "
              f"every check on every candidate, one process: "
              f"{tp['bulk_unscreened_candidates_per_second']:,.0f}/s)",
              f"  plain per-candidate path             {tp['plain_candidates_per_second']:,.0f} /s",
              f"  speed-up vs plain (per candidate)    {r['speedup_vs_plain']:,.0f} x"
              f"  (same {tp['plain_sample']} sample in one batch: "
              f"{tp['speedup_same_sample']:,.0f} x)"]
    return "\n".join(lines)


def main(argv=None) -> int:
    ap = argparse.ArgumentParser(description=__doc__.splitlines()[0])
    ap.add_argument("--km", type=float, nargs="+", default=[10.0])
    ap.add_argument("--json", action="store_true", help="print JSON instead of a table")
    ap.add_argument("--no-write", action="store_true", help="skip writing the outputs")
    a = ap.parse_args(argv)
    memory.tune_allocator()  # as the command line does
    results = [run_one(km, write=not a.no_write) for km in a.km]
    if a.json:
        print(json.dumps(results[0] if len(results) == 1 else results, indent=2))
    else:
        for r in results:
            print(_table(r))
        if len(results) > 1:
            base = results[0]
            print("\n km   panels   seconds   s/km    x first")
            for r in results:
                print(f"{r['km']:4g} {r['panels']:8d} {r['seconds_total']:9.2f} "
                      f"{r['seconds_total'] / r['km']:6.2f} "
                      f"{r['seconds_total'] / base['seconds_total']:8.2f}")
    return 0


if __name__ == "__main__":
    raise SystemExit(main())
