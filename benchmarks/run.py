"""Benchmark: a long synthetic wall designed end to end (a script, not a test).

    python benchmarks/run.py --km 10          # a table
    python benchmarks/run.py --km 1 10 100    # how the cost grows with length
    python benchmarks/run.py --km 10 --json   # one JSON object (a list for several km)
    python benchmarks/run.py --km 1 --gap 4   # and the optimality gap of 4 panels
    python benchmarks/run.py --km 10 --jobs 1 # in one process, the command line's default
    python benchmarks/run.py --km 10 --repeat 5  # five runs and their median

By default the run uses the cores this process may use (``--jobs`` set to their
number, as one would give the command line's ``--jobs`` on the machine: the search in
parts on that many processes, the drawings written on a worker); ``--jobs 1`` measures
one process, as ``wallrun design`` runs without ``--jobs``. The table's first line says
which.

The run is invented: a straight fill wall along a road on a gentle grade, a survey
point every 0.5 m, and a retained height varying smoothly between 0.5 and 7 m (a sum
of three sines of incommensurate wavelengths, rescaled), levels to the millimetre.
It is designed in the default section mode of ``[design]``, each run in a new process
tuned as the command line tunes its own (``cli.tune_process``: the garbage collector),
as every ``wallrun design`` starts: a second run in the same process would find the
writers and the solver imported and the heap grown.

Reported: the time of each stage (the pipeline's ``result.timings`` plus output
writing), the peak memory of the process, the candidates checked by the search and
their rate; on one batch of 100,000 candidates in one process the candidates decided
per second (stability for all, the structure for those that pass it) and with every
check on every candidate, beside the plain per-candidate path (``tests/plain_reference``
and the structural design of one candidate at a time) and the speed-up; with
``--gap N``, the cost of N sampled panels against the exhaustive reference
(``wallrun.sizing.cheapest_on_grid``). Batch timings are the least of three runs.
"""

from __future__ import annotations

import time

T_START = time.perf_counter()  # before any import: a run's process time counts from here

import argparse
import json
import os
import resource
import subprocess
import sys
import tempfile

import numpy as np

HERE = os.path.dirname(os.path.abspath(__file__))
sys.path.insert(0, os.path.join(HERE, ".."))
sys.path.insert(0, os.path.join(HERE, "..", "tests"))  # the plain reference path

from wallrun.factors import resolve  # noqa: E402
from wallrun.section import Section, SectionArrays  # noqa: E402
from wallrun.settings import Design, ProfileData, Project, Site  # noqa: E402
from wallrun.sizing import Costing, Demand, bespoke, cheapest_on_grid  # noqa: E402
from wallrun.sizing import evaluate as ev_  # noqa: E402
from wallrun.sizing.conditions import Rows, conditions_of  # noqa: E402


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
    """Candidates per second through every check on one batch in one process, and the
    speed-up over a plain per-candidate evaluation of the same checks."""
    from plain_reference import plain_stability_checks

    from wallrun import stability, structure

    basis, costing = site.basis, Costing.of(site)
    d = Demand(z_top=63.5, z_front=60.0, backfill=site.backfill, foundation=site.foundation,
               surcharge_kpa=site.loads.surcharge_kpa, water=site.water, wall_top_m=63.5,
               min_founding_depth_m=site.wall.min_founding_depth_m,
               founding_step_m=site.wall.founding_step_m)
    bulk = _sample_candidates(n_bulk)
    rows = Rows.of([d], [n_bulk])
    seg, no = np.zeros(n_bulk, dtype=np.int64), np.array([False])
    ev_.screen(bulk.subset(slice(0, 100)), rows.take(slice(0, 100)), d, basis, costing,
               seg[:100], no)  # warm
    # as in the search: structure only for the candidates passing every stability check;
    # a candidate is counted when it is decided (passed, or failed a check it needed);
    # each timing is the least of REPEAT runs (the timeit convention)
    t_one = _least(lambda: ev_.screen(bulk, rows, d, basis, costing, seg, no))
    ok, cost, util = ev_.screen(bulk, rows, d, basis, costing, seg, no)
    structured = int(np.isfinite(cost).sum())
    t_full = _least(lambda: ev_.evaluate(bulk, rows, d, basis, costing))
    sample = _sample_candidates(n_plain, seed=2)
    t0 = time.perf_counter()
    for i in range(n_plain):
        sec: Section = sample.take(i)
        one = SectionArrays.of([sec])
        cond = conditions_of(one.base_thickness_m, Rows.of([d], [1]), d)
        cond1 = _scalar(cond)
        plain_stability_checks(sec, cond1, basis)
        actions = stability.member_actions(one, cond, basis)
        qp = stability.member_moments_qp(one, cond, basis)
        hc = cond1.z_top - cond1.z_found - sec.base_thickness_m
        structure.design_reinforcement(one, actions, qp, basis, stem_height_m=hc)
    t_plain = time.perf_counter() - t0
    return {"bulk_candidates": n_bulk, "bulk_seconds": t_one,
            "bulk_candidates_per_second": n_bulk / t_one, "bulk_structured": structured,
            "bulk_unscreened_candidates_per_second": n_bulk / t_full,
            "plain_sample": n_plain, "plain_seconds": t_plain,
            "plain_candidates_per_second": n_plain / t_plain,
            "speedup_vs_plain": (t_plain / n_plain) / (t_one / n_bulk)}


def _scalar(cond):
    from dataclasses import replace
    f = lambda v: None if v is None else float(np.asarray(v).reshape(-1)[0])  # noqa: E731
    return replace(cond, z_top=f(cond.z_top), z_front=f(cond.z_front),
                   z_found=f(cond.z_found), water_level_m=f(cond.water_level_m))


def optimality_gap(site: Site, result, n: int, h_max: float = 4.5) -> list[dict]:
    """The bespoke search's section (``wallrun.sizing.bespoke``) of ``n`` panels' demands
    (spread over the retained heights up to ``h_max`` m, to bound the time of the
    exhaustive reference) against the cheapest passing section of their grid
    (``cheapest_on_grid``), cost per metre: gap in per cent. In a rationalised or
    catalogue run the panel's own section is its type's, shared with other panels:
    its premium over the bespoke search is reported beside (``type_percent``), not as
    a gap of the search."""
    from wallrun.layout import demand_of
    from wallrun import panels as pn

    cand = [p for p in result.panels if p.status == "ok"
            and p.panel.retained_height_m <= h_max]
    if not cand or n <= 0:
        return []
    cand.sort(key=lambda p: p.panel.retained_height_m)
    picks = [cand[int(round(k))] for k in np.linspace(0, len(cand) - 1, n)]
    out = []
    for p in picks:
        ext = pn.extent(result.profiles, p.panel.run, p.panel.side, p.panel.ch_start_m,
                        p.panel.ch_end_m, site.wall)
        extra = round(pn.founding_level(p.panel.front_min_m, p.section.base_thickness_m,
                                        site.wall.min_founding_depth_m,
                                        site.wall.founding_step_m) - p.panel.founding_m, 6)
        d = demand_of(ext, site, extra_depth_m=max(float(extra), 0.0))
        t0 = time.perf_counter()
        ref, ref_cost = cheapest_on_grid(d, site.basis, Costing.of(site),
                                         site.design.dimension_step_m)
        length = p.panel.length_m
        own = _cost_per_m(site, p.section, d)
        sd = bespoke([d], site.basis, Costing.of(site), site.design.dimension_step_m)[0]
        got = _cost_per_m(site, sd.section, d)
        out.append({"panel": p.panel.panel, "h_m": round(d.h, 3), "search": got,
                    "exhaustive": ref_cost, "gap_percent": 100.0 * (got / ref_cost - 1.0),
                    "panel_section": own, "type_percent": 100.0 * (own / got - 1.0),
                    "seconds": time.perf_counter() - t0, "length_m": length})
    return out


def machine_cores() -> int:
    """The number of cores this process may run on (its CPU affinity where the system
    tells it, else the machine's count)."""
    if hasattr(os, "sched_getaffinity"):
        return len(os.sched_getaffinity(0))
    return os.cpu_count() or 1


def _cost_per_m(site: Site, section: Section, d: Demand) -> float:
    """``section`` with its bars at demand ``d``, priced per metre as the search prices
    them."""
    ev = ev_.evaluate_at([section], d, site.basis, Costing.of(site))
    return float(ev.cost[0])


def run_repeated(km: float, repeat: int = 1, write: bool = True, gap: int = 0,
                 jobs: int = 1) -> dict:
    """:func:`run_one` ``repeat`` times, each in a new process (:func:`run_fresh`), as
    every ``wallrun design`` runs: its figures (the batch figures and the gap measured
    once, with the last), with ``repeats`` (the total, sizing and writing seconds and
    the whole process's wall time of every run, in order) and ``seconds_total_median``.
    A run in a process that has designed before is quicker (the writers' and the
    solver's imports are done, the allocator's heap is grown: about 1 to 2 s at 10 km)
    and would flatter the figure. On a shared machine whose speed drifts, the median of
    a few runs is the figure to quote."""
    runs = [run_fresh(km, write=write, jobs=jobs, measure=False) for _ in range(repeat - 1)]
    last = run_fresh(km, write=write, gap=gap, jobs=jobs)
    runs.append(last)
    keep = ("seconds_total", "sizing", "write_outputs")
    last["repeats"] = [{**{k: (r["seconds_total"] if k == "seconds_total"
                               else r["seconds_by_stage"].get(k, 0.0)) for k in keep},
                        "process": r["seconds_process"]} for r in runs]
    last["seconds_total_median"] = float(np.median([r["seconds_total"] for r in runs]))
    last["seconds_process_median"] = float(np.median([r["seconds_process"] for r in runs]))
    return last


def run_fresh(km: float, write: bool = True, gap: int = 0, jobs: int = 1,
              measure: bool = True) -> dict:
    """:func:`run_one` in a new Python process (this script with ``--one``, tuned as the
    command line tunes its own), its figures with ``seconds_process``: the process's
    wall time from the start of this script (before its imports; the interpreter's own
    start, a few hundredths of a second, is not counted) to the end of the run (its
    files written and its workers stopped), the figure ``wallrun design`` would take."""
    cmd = [sys.executable, os.path.abspath(__file__), "--one", "--km", repr(km),
           "--jobs", str(jobs), "--gap", str(gap)] + (
        [] if write else ["--no-write"]) + ([] if measure else ["--no-measure"])
    done = subprocess.run(cmd, capture_output=True, text=True)
    if done.returncode != 0:  # the run's own error, not only its command line
        sys.stderr.write(done.stderr)
        raise SystemExit(f"benchmark: the run of {km:g} km failed (exit {done.returncode})")
    return json.loads(done.stdout)


def run_one(km: float, write: bool = True, gap: int = 0, jobs: int = 1,
            measure: bool = True) -> dict:
    """Design the synthetic run of ``km`` km end to end; figures as a dict (without
    ``measure``, the batch throughput and the gap are left out: only the run)."""
    from wallrun import pipeline

    site = synthetic_site(km)
    stages: dict[str, float] = {}
    pool = None
    t_all = time.perf_counter()  # from the pool's start, whose workers start at once
    cpu0 = time.process_time()
    if jobs > 1:
        from wallrun.cli import worker_pool
        pool = worker_pool(jobs)
    t0 = time.perf_counter()
    try:
        # as the command line: the writers are loaded while the workers search
        from wallrun.outputs.write import load_writers
        result = pipeline.design(site, executor=pool, parts=jobs,
                                 meanwhile=load_writers if write else None)
        t_design = time.perf_counter() - t0
        stages.update({k: float(v) for k, v in result.timings.items()})
        stages["design_other"] = max(t_design - sum(stages.values()), 0.0)
        if write:
            from wallrun.cli import result_frozen
            from wallrun.outputs.write import write_outputs
            with tempfile.TemporaryDirectory() as tmp:
                t0 = time.perf_counter()
                with result_frozen():  # as the command line writes
                    write_outputs(result, os.path.join(tmp, "out"), executor=pool)
                stages["write_outputs"] = time.perf_counter() - t0
    finally:
        if pool is not None:
            pool.shutdown()
    total = time.perf_counter() - t_all
    process = time.perf_counter() - T_START
    cpu = time.process_time() - cpu0
    peak_mb = resource.getrusage(resource.RUSAGE_SELF).ru_maxrss / 1024.0
    searched = int(result.search.get("candidates", 0))
    sizing_s = stages.get("sizing", 0.0)
    if not measure:
        return {"km": km, "seconds_total": total, "seconds_by_stage": stages,
                "seconds_process": process}
    tp = throughput(site)
    gaps = optimality_gap(site, result, gap)
    return {"km": km, "mode": site.design.sections, "jobs": jobs,
            "panels": len(result.panels),
            "section_types": len(result.section_types),
            "flagged_panels": sum(p.status != "ok" for p in result.panels),
            "seconds_total": total, "seconds_process": process, "cpu_seconds": cpu,
            "seconds_by_stage": stages,
            "peak_memory_mb": peak_mb,
            "candidates_checked": searched,
            "references": int(result.search.get("references", 0)),
            "candidates_per_second_in_search": searched / sizing_s if sizing_s else 0.0,
            "candidates_per_second": tp["bulk_candidates_per_second"],
            "speedup_vs_plain": tp["speedup_vs_plain"], "throughput": tp, "gap": gaps}


def _jobs_note(jobs: int) -> str:
    """What ``jobs`` means on this machine, for the table's first line."""
    if jobs == 1:
        return ": one process, as the command line without --jobs"
    return f" of {machine_cores()} cores: as the command line with --jobs {jobs}"


def _table(r: dict) -> str:
    lines = [f"run {r['km']:g} km ({r['mode']}, jobs {r['jobs']}{_jobs_note(r['jobs'])}): "
             f"{r['panels']} panels, "
             f"{r['section_types']} section types, {r['flagged_panels']} flagged, "
             f"total {r['seconds_total']:.2f} s ({r['cpu_seconds']:.2f} s of this process's "
             f"CPU), peak memory {r['peak_memory_mb']:.0f} MB"]
    for k, v in r["seconds_by_stage"].items():
        lines.append(f"  {k:<20s} {v:9.3f} s")
    tp = r["throughput"]
    lines += [f"  candidates checked in the search     {r['candidates_checked']:,} "
              f"({r['references']} reference demands)",
              f"  candidates/s in the search           {r['candidates_per_second_in_search']:,.0f}"
              " (the whole sizing stage)",
              f"  one batch of {tp['bulk_candidates']:,}, one process       "
              f"{r['candidates_per_second']:,.0f} decided/s ({tp['bulk_structured']:,} passed "
              f"stability and went through structure); every check on every candidate: "
              f"{tp['bulk_unscreened_candidates_per_second']:,.0f}/s",
              f"  plain per-candidate path             {tp['plain_candidates_per_second']:,.0f}/s"
              f"   speed-up {r['speedup_vs_plain']:,.0f} x"]
    if len(r.get("repeats", ())) > 1:
        rs = r["repeats"]
        lines.append(f"  {len(rs)} runs, end to end (sizing, writing): "
                     + ", ".join(f"{x['seconds_total']:.2f} ({x['sizing']:.2f}, "
                                 f"{x['write_outputs']:.2f})" for x in rs)
                     + f" s; median {r['seconds_total_median']:.2f} s")
    if "seconds_process" in r:
        rs = r.get("repeats") or [{"process": r["seconds_process"]}]
        lines.append("  the run's process from its start (imports and run): "
                     + ", ".join(f"{x['process']:.2f}" for x in rs)
                     + (f" s; median {r['seconds_process_median']:.2f} s" if len(rs) > 1
                        else " s"))
    for g in r["gap"]:
        lines.append(f"  gap {g['panel']} (h {g['h_m']:.2f} m): search {g['search']:.2f}, "
                     f"exhaustive {g['exhaustive']:.2f} per m: {g['gap_percent']:+.3f} % "
                     f"({g['seconds']:.0f} s); its type's section {g['panel_section']:.2f} "
                     f"({g['type_percent']:+.1f} %)")
    return "\n".join(lines)


def main(argv=None) -> int:
    ap = argparse.ArgumentParser(description=__doc__.splitlines()[0])
    ap.add_argument("--km", type=float, nargs="+", default=[10.0])
    ap.add_argument("--json", action="store_true", help="print JSON instead of a table")
    ap.add_argument("--no-write", action="store_true", help="skip writing the outputs")
    ap.add_argument("--gap", type=int, default=0, metavar="N",
                    help="compare N sampled panels with the exhaustive reference")
    ap.add_argument("--repeat", type=int, default=1, metavar="N",
                    help="run each length N times and print every run's total and the "
                         "median (the table's stages are the last run's)")
    ap.add_argument("--jobs", type=int, default=machine_cores(), metavar="N",
                    help="processes for the search (this one and N - 1 workers, a worker "
                         "writing the drawings), as the command line's --jobs; default: "
                         "the cores this process may use (here %(default)s); 1 for one "
                         "process, the command line's default")
    ap.add_argument("--one", action="store_true", help=argparse.SUPPRESS)
    ap.add_argument("--no-measure", action="store_true", help=argparse.SUPPRESS)
    a = ap.parse_args(argv)
    if a.jobs < 1:
        ap.error(f"--jobs {a.jobs}: give 1 or more")
    if a.repeat < 1:
        ap.error(f"--repeat {a.repeat}: give 1 or more")
    if any(not km > 0 for km in a.km):
        ap.error(f"--km {' '.join(f'{k:g}' for k in a.km)}: give lengths above 0")
    if a.one:  # one run, in this new process (run_fresh): its figures as JSON
        from wallrun.cli import tune_process
        tune_process()  # as the command line does (its process settings, not the library's)
        print(json.dumps(run_one(a.km[0], write=not a.no_write, gap=a.gap, jobs=a.jobs,
                                 measure=not a.no_measure)))
        return 0
    results = [run_repeated(km, a.repeat, write=not a.no_write, gap=a.gap, jobs=a.jobs)
               for km in a.km]
    if a.json:
        print(json.dumps(results[0] if len(results) == 1 else results, indent=2))
    else:
        for r in results:
            print(_table(r))
        if len(results) > 1:
            base = results[0]
            key = "seconds_total_median"  # the last run's where there is one run
            print("\n km   panels   seconds   s/km    x first"
                  + ("   (medians)" if a.repeat > 1 else ""))
            for r in results:
                print(f"{r['km']:4g} {r['panels']:8d} {r[key]:9.2f} "
                      f"{r[key] / r['km']:6.2f} "
                      f"{r[key] / base[key]:8.2f}")
    return 0


if __name__ == "__main__":
    raise SystemExit(main())
