"""Command line: ``wallrun design | check | new SITE_DIR``.

Exit status (shared/interfaces.md): 0 every panel passes; 3 outputs written but some
panels or joints are flagged; 2 bad input (each problem on its own line on stderr,
nothing written); 1 internal error (one line and a hint; the traceback with --debug).
"""

from __future__ import annotations

import argparse
import contextlib
import json
import math
import os
import sys
import traceback
from concurrent.futures import ProcessPoolExecutor
from pathlib import Path

from wallrun import __version__
from wallrun.errors import InputError

EXIT_OK, EXIT_INTERNAL, EXIT_INPUT, EXIT_FLAGGED = 0, 1, 2, 3

#: Thresholds of Python's cyclic garbage collector set by :func:`tune_collector`: a
#: young collection after 50,000 net allocations of container objects (700 by default),
#: an older one after 20 of the generation below (10 by default).
GC_THRESHOLDS = (50_000, 20, 20)


def tune_collector() -> tuple[int, int, int]:
    """Let the cyclic garbage collector run less often (:data:`GC_THRESHOLDS`). A design
    makes and keeps hundreds of thousands of small result objects (check entries, bar
    rows) and almost no reference cycles; with the default thresholds every young
    collection rescans them, and a full one all of them: about 1.3 s of the 10 km
    benchmark (0.53 s designing, 0.75 s writing; timed by ``gc.callbacks``), 0.4 s
    with these. Memory is still freed by reference counting the
    moment an object is dropped. A process setting, so the command line's (and the
    benchmark's) only, never the library's. Returns the thresholds now in force."""
    import gc

    gc.set_threshold(*GC_THRESHOLDS)
    return gc.get_threshold()


@contextlib.contextmanager
def result_frozen():
    """Within it, the cyclic garbage collector leaves alone every object that exists
    when it is entered (``gc.freeze``; ``gc.unfreeze`` on leaving): the command line
    enters it once the design is made, so that the collections the writers cause do not
    traverse the result's hundreds of thousands of objects again, which stay alive
    until the outputs are written (a 10 km design, written by one process: 0.24 s of
    collection in writing, 0.11 s with it; timed by ``gc.callbacks``). Objects are still
    freed by reference counting the moment they are dropped. A process setting, the
    command line's (and the benchmark's) only."""
    import gc

    gc.freeze()
    try:
        yield
    finally:
        gc.unfreeze()


def tune_process() -> None:
    """The command line's process settings: :func:`tune_collector` (for this process
    and each ``--jobs`` worker). The C allocator is left as it is."""
    tune_collector()


def _parser() -> argparse.ArgumentParser:
    common = argparse.ArgumentParser(add_help=False)
    common.add_argument("--debug", action="store_true",
                        help="show the full traceback of an internal error")
    p = argparse.ArgumentParser(
        prog="wallrun",
        description="Preliminary design of a long reinforced-concrete cantilever retaining "
                    "wall along a run (EN 1997-1, EN 1992-1-1). Results are to be checked "
                    "and signed by a qualified engineer.",
        parents=[common])
    p.add_argument("--version", action="version", version=f"wallrun {__version__}")
    sub = p.add_subparsers(dest="command", required=True, metavar="COMMAND")
    d = sub.add_parser("design", parents=[common], help="design the wall and write every output")
    d.add_argument("site", metavar="SITE_DIR")
    d.add_argument("--out", metavar="DIR", help="output folder (default SITE_DIR/out)")
    d.add_argument("--quiet", action="store_true", help="no progress bar")
    d.add_argument("--jobs", type=_jobs, default=1, metavar="N",
                   help="processes for the section search, this one and N - 1 workers "
                        "(a worker also writes the drawings; default 1: no worker); the "
                        "results are the same for every N")
    c = sub.add_parser("check", parents=[common],
                       help="validate the site folder and print the wall runs; writes nothing")
    c.add_argument("site", metavar="SITE_DIR")
    c.add_argument("--json", action="store_true", help="print the runs as JSON")
    n = sub.add_parser("new", parents=[common], help="write a starter site folder to edit")
    n.add_argument("site", metavar="SITE_DIR")
    return p


def _jobs(text: str) -> int:
    try:
        n = int(text)
    except ValueError:
        raise argparse.ArgumentTypeError(f"must be a whole number, got {text!r}") from None
    if not 1 <= n <= 64:
        raise argparse.ArgumentTypeError(f"must be between 1 and 64, got {n}")
    return n


def main(argv=None) -> int:
    """Run the command line; returns the exit status."""
    tune_process()
    parser = _parser()
    try:
        args = parser.parse_args(argv)
    except SystemExit as e:  # --help, --version or a usage error (argparse printed it)
        return int(e.code) if isinstance(e.code, int) else EXIT_INPUT
    try:
        if args.command == "check":
            return cmd_check(args.site, as_json=args.json)
        if args.command == "new":
            return cmd_new(args.site)
        return cmd_design(args.site, out=args.out, quiet=args.quiet, jobs=args.jobs)
    except InputError as e:
        for line in e.problems:
            print(line, file=sys.stderr)
        n = len(e.problems)
        print(f"wallrun: {n} input problem{'s' if n != 1 else ''}; nothing written",
              file=sys.stderr)
        return EXIT_INPUT
    except KeyboardInterrupt:
        print("wallrun: interrupted", file=sys.stderr)
        return EXIT_INTERNAL
    except Exception as e:  # noqa: BLE001 - the one place that turns faults into status 1
        msg = str(e).splitlines()[0] if str(e) else ""
        print(f"wallrun: internal error: {type(e).__name__}" + (f": {msg}" if msg else ""),
              file=sys.stderr)
        if args.debug:
            traceback.print_exc()
        else:
            print("wallrun: rerun with --debug for the traceback", file=sys.stderr)
        return EXIT_INTERNAL


# --- check ---------------------------------------------------------------------------

def run_summary(site):
    """(profiles, runs) of a loaded site."""
    from wallrun.profile import build_profiles, find_runs
    profiles = build_profiles(site)
    return profiles, find_runs(profiles, site.wall)


def panels_at_max(length_m: float, max_panel_length_m: float) -> int:
    """Panels of a run cut at the maximum panel length: ceil(L / max), at least 1."""
    return max(1, math.ceil(length_m / max_panel_length_m - 1e-9))


def _r3(x: float) -> float:
    return round(float(x), 3)


def cmd_check(site_dir: str, as_json: bool = False) -> int:
    from wallrun.site import load_site
    site = load_site(site_dir)
    profiles, runs = run_summary(site)
    if as_json:
        doc = {"runs": [{"run": r.run, "side": r.side, "ch_start_m": _r3(r.ch_start_m),
                         "ch_end_m": _r3(r.ch_end_m), "length_m": _r3(r.length_m),
                         "max_retained_height_m": _r3(r.max_retained_height_m),
                         "at_ch_m": _r3(r.at_ch_m)} for r in runs],
               "warnings": list(site.warnings)}
        print(json.dumps(doc, indent=2))
        return EXIT_OK
    w = site.wall
    title = site.project.name + (f" ({site.project.reference})" if site.project.reference else "")
    print(f"Site: {title}")
    fin = (f"{site.finished.source}" if site.finished is not None
           else f"vertical alignment of {len(site.alignment)} points")
    print(f"Profiles: ground {site.ground.source}, finished level {fin}; "
          f"common range ch {profiles.ch_start:.3f} to {profiles.ch_end:.3f}")
    print(f"A wall is needed where the retained height is at least {w.min_retained_height_m:g} m "
          f"(same-side gaps under {w.merge_gap_m:g} m are bridged).")
    if not runs:
        print("No wall needed on this site.")
    else:
        print()
        print(f"{'run':>3}  {'side':<4}  {'from ch':>10}  {'to ch':>10}  {'length m':>9}  "
              f"{'max h m':>7}  {'at ch':>10}  {'panels':>6}")
        for r in runs:
            print(f"{r.run:>3}  {r.side:<4}  {r.ch_start_m:>10.3f}  {r.ch_end_m:>10.3f}  "
                  f"{r.length_m:>9.3f}  {r.max_retained_height_m:>7.3f}  {r.at_ch_m:>10.3f}  "
                  f"{panels_at_max(r.length_m, w.max_panel_length_m):>6}")
        total = sum(r.length_m for r in runs)
        plural = "s" if len(runs) != 1 else ""
        print(f"\nTotal {total:.3f} m of wall (along the wall line) in {len(runs)} run{plural}; "
              f"panels counted at the maximum panel length of {w.max_panel_length_m:g} m "
              "(joint checks may add more).")
    if site.warnings:
        print("\nWarnings:")
        for m in site.warnings:
            print(f"  - {m}")
    return EXIT_OK


# --- new -----------------------------------------------------------------------------

STARTER_TOML = '''\
# wallrun site file: settings of one retaining wall along a run.
# Units: lengths m, pressures kPa, unit weights kN/m3, angles degrees, bars mm.
# Every key below [profiles] is optional; the values shown are the defaults or an
# example. The full list of keys is in the project's interfaces document.

[project]
name = "Starter wall"            # shown on every output
reference = "EXAMPLE-01"

[profiles]
ground = "ground.csv"            # existing ground along the wall line
finished = "finished.csv"        # finished level along the wall line
# Instead of finished.csv, a road vertical alignment (one table per intersection
# point; the first and last have curve_length_m = 0):
# [[profiles.finished_alignment]]
# chainage_m = 0.0
# level_m = 20.0

[wall]
min_retained_height_m = 0.5      # a wall is needed where |finished - ground| >= this
merge_gap_m = 5.0                # same-side stretches closer than this become one run
max_panel_length_m = 8.0         # movement joints at most this far apart
min_panel_length_m = 2.0         # at most half of max_panel_length_m
min_founding_depth_m = 0.6       # underside of base below the front level
top = "stepped"                  # stepped | sloped

[backfill]
unit_weight_kn_m3 = 19.0
friction_angle_deg = 32.0
slope_deg = 0.0                  # backfill surface rising away from the wall

[foundation]
unit_weight_kn_m3 = 19.0
friction_angle_deg = 30.0
# allowable_bearing_kpa = 150.0  # > 0 adds a characteristic edge-pressure check

# [water]                        # absent: a drained wall
# height_above_base_m = 1.0

[loads]
surcharge_kpa = 10.0             # variable surcharge on the retained surface

[design]
approach = "DA1"                 # DA1 | DA2 | DA3
sections = "bespoke"             # bespoke | catalogue (needs sections.csv) | rationalised
'''

STARTER_GROUND = """\
# Existing ground along the wall line (invented example levels).
chainage_m,level_m
0,20.00
10,19.80
20,19.40
30,18.90
40,18.60
50,18.70
60,19.10
70,19.70
80,20.10
"""

STARTER_FINISHED = """\
# Finished level along the wall line (invented example: a platform at 20.50).
chainage_m,level_m
0,20.10
15,20.50
65,20.50
80,20.20
"""


def cmd_new(site_dir: str) -> int:
    root = Path(site_dir)
    if root.exists():
        if not root.is_dir():
            raise InputError(f"{site_dir}: exists and is not a folder")
        if any(root.iterdir()):
            raise InputError(f"{site_dir}: folder exists and is not empty; "
                             "give a new or empty folder")
    root.mkdir(parents=True, exist_ok=True)
    for name, text in (("site.toml", STARTER_TOML), ("ground.csv", STARTER_GROUND),
                       ("finished.csv", STARTER_FINISHED)):
        with open(root / name, "x", encoding="utf-8", newline="\n") as f:
            f.write(text)
    print(f"Wrote a starter site in {root}: site.toml, ground.csv, finished.csv.")
    print(f"Edit them, then run: wallrun check {site_dir}")
    return EXIT_OK


# --- design --------------------------------------------------------------------------

class _Progress:
    """Progress callback ``cb(stage, done, total)`` drawing one tqdm bar per stage."""

    def __init__(self, enabled: bool):
        self.enabled = enabled
        self.bar = None
        self.stage = None

    def __call__(self, stage: str, done: int, total: int):
        if not self.enabled:
            return
        from tqdm import tqdm
        if stage != self.stage or self.bar is None:
            self.close()
            self.stage = stage
            self.bar = tqdm(total=total, desc=stage, file=sys.stderr, leave=False,
                            dynamic_ncols=True)
        if total != self.bar.total:
            self.bar.total = total
        self.bar.n = done
        self.bar.refresh()

    def close(self):
        if self.bar is not None:
            self.bar.close()
            self.bar = None


def _quantity(result, item: str):
    for q in result.quantities:
        if q.item == item:
            return q.quantity, q.unit
    return None, None


def _is_output_folder(folder: Path) -> bool:
    """A folder written by wallrun design: it holds a design.json of the wallrun schema."""
    try:
        with open(folder / "design.json", encoding="utf-8") as f:
            doc = json.load(f)
    except (OSError, ValueError):
        return False
    return isinstance(doc, dict) and str(doc.get("schema", "")).startswith("wallrun-design/")


def check_out_is_safe(site_dir, out_dir, shown: str | None = None) -> None:
    """Refuse an output folder whose replacement would destroy other files.

    The output folder is replaced as a whole (written beside it, then swapped in), so it
    may not be the site folder or one that contains it, nor an existing folder with
    files that is not a previous wallrun output."""
    shown = shown or str(out_dir)
    site = Path(site_dir).resolve()
    if site.is_file():
        site = site.parent
    out = Path(out_dir).resolve()
    if out == site or out in site.parents:
        raise InputError(f"--out {shown}: is the site folder or a folder containing it; the "
                         "output folder is replaced as a whole: give a folder outside the "
                         "inputs (default SITE_DIR/out)")
    if out.is_dir() and any(out.iterdir()) and not _is_output_folder(out):
        raise InputError(f"--out {shown}: an existing folder that is not a wallrun output "
                         "(no design.json); it would be replaced as a whole: give a new or "
                         "empty folder, or a previous wallrun output folder")


def worker_pool(jobs: int):
    """For ``jobs`` processes in all: a pool of ``jobs - 1`` workers started by
    ``forkserver`` (or ``spawn`` where there is none) beside this process, which works
    too (it searches a part of the sections itself and writes the outputs that are not
    drawings); None for one process. The command line owns it; the library only hands
    it work (``pipeline.design(executor=..., parts=jobs)``, ``write_outputs(executor=...)``).
    The workers start at once (:class:`WorkerPool`): each tunes its
    collector as this process does and imports the search (:func:`start_worker`), and,
    once it has been handed its first task, imports the drawing writers."""
    if jobs <= 1:
        return None
    import multiprocessing as mp
    method = "forkserver" if "forkserver" in mp.get_all_start_methods() else "spawn"
    return WorkerPool(max_workers=jobs - 1, mp_context=mp.get_context(method),
                      initializer=start_worker, initargs=(dict(os.environ),))


def start_worker(environ: dict | None = None) -> None:
    """A worker's start: this process's environment as it was when the pool was made
    (``environ``; a ``forkserver`` worker would otherwise have the environment of the
    moment the process's fork server started, which in a process that makes several
    pools may be older: ReportLab, for one, dates the drawings' PDF by
    ``SOURCE_DATE_EPOCH``), :func:`tune_process`, then the modules its part of a search
    runs (``wallrun.pipeline`` and what it imports: numpy and the search, about 0.25 s
    of CPU), which the first task would otherwise import on the critical path."""
    if environ is not None:
        os.environ.clear()
        os.environ.update(environ)
    tune_process()
    import wallrun.pipeline  # noqa: F401


def import_drawing_writers() -> None:
    """Import the modules a worker needs to write the drawings (ezdxf, ReportLab and
    wallrun's drawing writers: about 0.5 to 0.8 s of CPU) and load their fonts
    (``wallrun.outputs.dxf.load_fonts``, about 0.1 s)."""
    import wallrun.outputs.dxf.elevation  # noqa: F401
    import wallrun.outputs.dxf.plan  # noqa: F401
    import wallrun.outputs.dxf.sections  # noqa: F401
    import wallrun.outputs.previews  # noqa: F401
    import wallrun.outputs.sheets_pdf  # noqa: F401
    from wallrun.outputs.dxf import load_fonts

    load_fonts()


class WorkerPool(ProcessPoolExecutor):
    """The command line's process pool. Its workers start when it is made (one empty
    task each starts them: a pool otherwise starts a worker at its first task), so a
    worker's process and imports (about 0.3 s) pass while this process reads the site
    and lays out the wall, not after the search is handed out. Behind the first task
    it is handed (a part of the search, in a large run) it queues
    :func:`import_drawing_writers` once per worker: a worker that has finished its part
    would otherwise wait idle while this process rationalises the sections and details
    the bars, and then import the writers on the critical path of writing. Tasks start
    in the order given, so the imports never delay a part of the search."""

    def __init__(self, max_workers: int, **kwargs):
        super().__init__(max_workers=max_workers, **kwargs)
        self.workers = max_workers
        self.warmed = False
        for _ in range(max_workers):
            super().submit(os.getpid)

    def submit(self, fn, /, *args, **kwargs):
        future = super().submit(fn, *args, **kwargs)
        if not self.warmed:
            self.warmed = True
            for _ in range(self.workers):
                super().submit(import_drawing_writers)
        return future


def cmd_design(site_dir: str, out: str | None = None, quiet: bool = False,
               jobs: int = 1) -> int:
    from wallrun.site import load_site
    out_dir = Path(out) if out else Path(site_dir) / "out"
    # the workers start (and import the search) while this process reads the site
    pool = worker_pool(jobs)
    try:
        site = load_site(site_dir)
        from wallrun import pipeline
        from wallrun.outputs import write
        check_out_is_safe(site_dir, out_dir, shown=out or str(out_dir))
        write.check_writable(out_dir)
        cb = _Progress(enabled=(not quiet) and sys.stderr.isatty())
        try:
            # while the workers finish their parts of the search, this process loads
            # the writers it runs after the design
            result = pipeline.design(site, progress=cb, executor=pool, parts=jobs,
                                     meanwhile=write.load_writers)
        finally:
            cb.close()
        with result_frozen():
            write.write_outputs(result, out_dir, executor=pool)
    finally:
        if pool is not None:
            pool.shutdown(cancel_futures=True)
    print_design_summary(result, out_dir)
    return EXIT_OK if result.ok else EXIT_FLAGGED


#: Flagged panels and joints listed by name on the console; the rest are counted.
SHOWN_FLAGS = 6


def _types_line(panels) -> str:
    """``n types: S01 x12, S02 x7, ...`` (at most 12 named, the rest counted)."""
    types: dict[str, int] = {}
    for p in panels:
        if p.section_type:  # a panel that could not be designed has none
            types[p.section_type] = types.get(p.section_type, 0) + 1
    names = sorted(types)
    if not names:
        return "types: none (no panel could be designed)"
    shown = ", ".join(f"{t} x{types[t]}" for t in names[:12])
    more = f", and {len(names) - 12} more" if len(names) > 12 else ""
    return f"{len(names)} type{'s' if len(names) != 1 else ''}: {shown}{more}"


def print_design_summary(result, out_dir) -> None:
    """What a practitioner reads first, in at most about 25 lines whatever the job: the
    runs, panels, types with their panel counts, concrete, steel (and kg per m3), cost
    and cost per metre in the site's currency, the governing panel, what is flagged."""
    from wallrun.cautions import CAUTION, NOTHING_DESIGNED, not_checked_line
    from wallrun.takeoff import DEMO_RATES_NOTE

    site = result.site
    panels = result.panels
    # along the wall line (on a curved LandXML wall line longer or shorter than the
    # stations say)
    length = (sum(p.panel.length_m for p in panels) if panels
              else sum(r.length_m for r in result.runs))
    money = site.takeoff.money
    print(f"Site: {site.project.name}")
    print(f"Wall: {length:.2f} m in {len(result.runs)} run{'s' if len(result.runs) != 1 else ''}, "
          f"{len(panels)} panels, {site.design.sections} sections")
    if panels:
        print("Section " + _types_line(panels))
    conc, cu = _quantity(result, "concrete_total")
    steel, su = _quantity(result, "reinforcement_total")
    if conc is not None and steel is not None and conc > 0:
        print(f"Concrete {conc:.1f} {cu}, reinforcement {steel:,.0f} {su} "
              f"({steel / conc:.0f} kg/m3)")
    cost = result.cost
    if panels and result.nothing_designed:
        print(f"Cost: none; {NOTHING_DESIGNED}")
    elif length > 0:
        note = "" if cost.complete else " (incomplete: some items have no rate)"
        print(f"Cost {cost.total:,.0f} {money}, {cost.total / length:,.0f} {money} per metre{note}")
    if cost.demo_rates:
        print(DEMO_RATES_NOTE)
    designed = [p for p in panels if p.checks and p.status == "ok"]
    if designed:
        u, p = max(((p.checks.max_utilization(), p) for p in designed),
                   key=lambda t: t[0])
        print(f"Governing: {p.panel.panel} (ch {p.panel.ch_start_m:.2f} to "
              f"{p.panel.ch_end_m:.2f}), {p.governing} at {u:.3f}")
    flagged = [p for p in panels if p.status != "ok"]
    fj = [j for j in result.joints if j.status != "ok"]
    if flagged or fj:
        print(f"Flagged: {len(flagged)} panel{'s' if len(flagged) != 1 else ''}, "
              f"{len(fj)} joint{'s' if len(fj) != 1 else ''} (reasons in panels.csv and "
              "joints.csv)" + ("; the flagged panels are not designed and not in the "
                               "quantities or cost" if flagged else ""))
        lines = [f"  {p.panel.panel}: {p.reason}" for p in flagged]
        lines += [f"  {j.joint} at ch {j.ch_m:.2f}: {j.reason}" for j in fj]
        for line in lines[:SHOWN_FLAGS]:
            print(line[:160])
        if len(lines) > SHOWN_FLAGS:
            print(f"  ... and {len(lines) - SHOWN_FLAGS} more")
    else:
        print("Every panel and joint passes.")
    for m in result.warnings[:3]:
        print(f"warning: {m}"[:200])
    if len(result.warnings) > 3:
        print(f"  ... and {len(result.warnings) - 3} more warnings (see report.html)")
    print(f"Outputs in {out_dir}")
    print(not_checked_line(site))
    print(CAUTION)
