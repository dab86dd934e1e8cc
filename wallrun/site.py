"""Read and validate a site folder into a frozen :class:`wallrun.settings.Site`.

The site folder (``shared/interfaces.md``) holds ``site.toml`` (read with ``tomllib``),
the two profile CSVs (columns ``chainage_m,level_m[,x_m,y_m]``, also the common
spellings of :data:`PROFILE_ALIASES`, noted in the warnings) or a LandXML file (read by
:mod:`wallrun.landxml`), and the optional ``sections.csv`` and ``rates.csv`` (read with
pandas). Everything is validated: types, physical ranges, allowed words, unknown keys
(with the nearest known one suggested), cross-checks between settings and between the
two profiles. Every problem is collected and raised together as one
:class:`wallrun.errors.InputError`, each message naming its place:

    site.toml: [backfill] friction_angle_deg: must be between 0 and 50 (exclusive), got 70
    ground.csv:12: level_m: 'abc' is not a number

Line numbers are physical line numbers of the file (1-based, comments and blank lines
counted). Inputs are only ever read. File names given in ``site.toml`` (and the fixed
``sections.csv`` / ``rates.csv``) must resolve inside the site folder: absolute paths,
``..`` that leaves it and symlinks that point out of it are refused.

The rule of every key (kind, range, allowed words, unit) is declared once, beside the
key, in ``wallrun.settings`` (``wallrun.rules.setting``), and the rules between keys in
each settings class's ``problems()``; this module applies exactly those and the rules
of the files themselves (columns, numbers, increasing chainage). The engine checks
nothing again, so ``wallrun check`` and ``wallrun design`` accept the same sites.
A backfill slope at or above the backfill's characteristic friction angle is refused
(no such slope stands); one between the design and the characteristic angle of a
factor set is accepted with a warning, and the design flags its panels.
"""

from __future__ import annotations

import csv
import io
import math
import tomllib
from dataclasses import fields
from pathlib import Path
from typing import Any

import numpy as np
import pandas as pd

from wallrun import factors as _factors
from wallrun.errors import InputError
from wallrun.landxml import read_landxml
from wallrun.rules import Rule, check_value, rules_of
from wallrun.rules import g as _g
from wallrun.rules import nearest as _nearest
from wallrun.rules import show as _show
from wallrun.settings import (AlignmentPoint, Backfill, CatalogueSection, Concrete, Design,
                              Drawings, Foundation, FoundationZone, GroundModel, Loads,
                              ProfileData, ProfileFiles, Project, Rate, SECTION_NAME_MAX,
                              Seismic, Site, Steel, Takeoff, Wall, Water)

SITE_FILE = "site.toml"
SECTIONS_FILE = "sections.csv"
RATES_FILE = "rates.csv"

#: Largest level change between neighbouring profile points, m (a larger one is
#: almost always levels in mm or a typing slip).
MAX_LEVEL_JUMP_M = 50.0
#: Plan positions of the two profiles further apart than this give a warning, m.
PLAN_TOLERANCE_M = 0.5
#: Plan length and chainage length differing by more than this give a warning.
PLAN_LENGTH_TOLERANCE = 0.01

#: Columns of ``sections.csv`` (interfaces.md), in order.
CATALOGUE_COLUMNS = tuple(f.name for f in fields(CatalogueSection))
RATE_COLUMNS = ("item", "unit", "rate")
FACTOR_SETS = ("EQU", "DA1-1", "DA1-2", "DA2", "DA3", _factors.SEISMIC_TABLE)


# --- the keys of each table: the rules declared beside each setting ------------------

#: The dataclass each ``site.toml`` table is read into; its fields carry the rule of each
#: key (``wallrun.rules.setting``) and its ``problems()`` the rules between keys.
CLASSES = {"project": Project, "profiles": ProfileFiles, "wall": Wall, "backfill": Backfill,
           "foundation": Foundation, "water": Water, "loads": Loads, "concrete": Concrete,
           "steel": Steel, "design": Design, "takeoff": Takeoff, "drawings": Drawings,
           "ground": GroundModel, "seismic": Seismic}
#: Key rules per table, taken from those dataclasses.
SPEC: dict[str, dict[str, Rule]] = {name: rules_of(cls) for name, cls in CLASSES.items()}
#: Sub-tables allowed beside the keys of a table.
SUBTABLES = {"profiles": ("finished_alignment",), "foundation": ("zones",),
             "factors": FACTOR_SETS}
TABLES = tuple(SPEC) + ("factors",)
_ALIGNMENT_SPEC = rules_of(AlignmentPoint)
_FOUNDATION_SPEC = rules_of(Foundation)
_ZONE_SPEC = {**rules_of(FoundationZone), **_FOUNDATION_SPEC}


class _Problems:
    def __init__(self):
        self.items: list[str] = []
        self.warnings: list[str] = []

    def add(self, msg: str):
        self.items.append(msg)

    def key(self, section: str, key: str, msg: str):
        self.items.append(f"{SITE_FILE}: [{section}] {key}: {msg}")

    def table(self, section: str, msg: str):
        self.items.append(f"{SITE_FILE}: [{section}]: {msg}")


def _read_table(tab: dict, section: str, spec: dict[str, Rule], pr: _Problems,
                sub: tuple[str, ...] = ()) -> dict[str, Any]:
    """Check every key of ``tab`` against ``spec``; return the good values."""
    out: dict[str, Any] = {}
    for k, v in tab.items():
        if k in sub:
            continue
        if k not in spec:
            hint = _nearest(k, list(spec) + list(sub))
            pr.key(section, k, "unknown key" + (f"; did you mean '{hint}'?" if hint else
                                                 f"; known keys: {', '.join(spec)}"))
            continue
        val, err = check_value(v, spec[k])
        if err:
            pr.key(section, k, err)
        else:
            out[k] = val
    for k, s in spec.items():
        if s.required and k not in tab:
            pr.key(section, k, "required key is missing")
    return out


# --- profiles ------------------------------------------------------------------------

def _resolve_inside(root: Path, name: str) -> tuple[Path | None, str | None]:
    """Path of ``name`` inside ``root`` or (None, problem). Symlinks are followed."""
    p = Path(name)
    if p.is_absolute() or (len(name) > 1 and name[1] == ":"):
        return None, f"'{name}' is an absolute path; give a file name inside the site folder"
    full = root / p
    try:
        real = full.resolve(strict=False)
        real.relative_to(root.resolve())
    except (ValueError, OSError):
        return None, f"'{name}' resolves outside the site folder; profile and table files must be inside it"
    return full, None


def _read_lines(path: Path, label: str, pr: _Problems) -> list[tuple[int, str]] | None:
    """Physical lines (number, text) that carry data: not blank, not a '#' comment."""
    try:
        raw = path.read_bytes()
    except OSError as e:
        pr.add(f"{label}: cannot be read ({e.strerror or e})")
        return None
    try:
        text = raw.decode("utf-8-sig")
    except UnicodeDecodeError as e:
        pr.add(f"{label}: not a UTF-8 text file ({e.reason} at byte {e.start})")
        return None
    if "\x00" in text:
        pr.add(f"{label}: not a text file (contains NUL bytes)")
        return None
    lines = text.splitlines()
    if not any(t.strip() for t in lines):
        pr.add(f"{label}: empty file; expected a header row then one row per point")
        return None
    return [(i + 1, t) for i, t in enumerate(lines)
            if t.strip() and not t.lstrip().startswith("#")]


#: Other spellings of the profile columns, read case-insensitively (the canonical names
#: too): what survey and road-design exports commonly write.
PROFILE_ALIASES = {"chainage": "chainage_m", "station": "chainage_m", "level": "level_m",
                   "elevation": "level_m", "easting": "x_m", "northing": "y_m"}


def _canonical(header: list[str], known: tuple[str, ...], aliases: dict[str, str]
               ) -> list[str]:
    """Each header name as the column it gives: a known name in any case, or an alias
    (case-insensitive); other names unchanged."""
    if not aliases:
        return list(header)
    lower = {k.lower(): k for k in known} | {a.lower(): c for a, c in aliases.items()}
    return [lower.get(h.lower(), h) for h in header]


def _frame(rows: list[tuple[int, str]], label: str, pr: _Problems,
           required: tuple[str, ...], optional: tuple[str, ...],
           aliases: dict[str, str] | None = None
           ) -> tuple[pd.DataFrame, list[int]] | None:
    """Header check and field counts, then the data rows as a DataFrame of text.

    With ``aliases`` the header names are read case-insensitively and the aliases
    stand for their columns; a note of the mapping goes to the warnings."""
    if not rows:
        pr.add(f"{label}: no header row; expected columns {','.join(required)}")
        return None
    hline, htext = rows[0]
    raw = [h.strip() for h in next(csv.reader([htext]))]
    known = required + optional
    header = _canonical(raw, known, aliases or {})
    if not any(h in known for h in header):
        if all(_looks_numeric(h) for h in header if h):
            pr.add(f"{label}:{hline}: no header row; the first line holds numbers, "
                   f"expected column names {','.join(required)}")
        else:
            pr.add(f"{label}:{hline}: header {','.join(header)!s} names none of the columns "
                   f"{','.join(known)}" + _separator_hint(htext))
        return None
    bad = False
    for h in header:
        if h not in known:
            hint = _nearest(h, known)
            pr.add(f"{label}:{hline}: unknown column '{h}'"
                   + (f"; did you mean '{hint}'?" if hint else f"; known columns: {','.join(known)}"))
            bad = True
    for h in sorted(set(header), key=header.index):
        if header.count(h) > 1:
            given = [r for r, c in zip(raw, header) if c == h]
            if len(set(given)) > 1:
                pr.add(f"{label}:{hline}: columns {', '.join(repr(g) for g in given)} all "
                       f"give '{h}'; keep one")
            else:
                pr.add(f"{label}:{hline}: column '{h}' appears more than once")
            bad = True
    for c in required:
        if c not in header:
            pr.add(f"{label}:{hline}: missing column '{c}'")
            bad = True
    if bad:
        return None
    data = rows[1:]
    if not data:
        pr.add(f"{label}: no data rows below the header (line {hline})")
        return None
    ok = True
    for ln, t in data:
        n = len(next(csv.reader([t])))
        if n != len(header):
            pr.add(f"{label}:{ln}: {n} fields, the header has {len(header)}")
            ok = False
    if not ok:
        return None
    body = "\n".join([htext] + [t for _, t in data])
    try:
        df = pd.read_csv(io.StringIO(body), dtype=str, keep_default_na=False,
                         skipinitialspace=True, skip_blank_lines=False)
    except pd.errors.ParserError as e:  # e.g. a double quote left open across lines
        pr.add(f"{label}: the rows cannot be read as CSV ({str(e).strip()}); look for an "
               "unmatched double quote")
        return None
    df.columns = header
    mapped = [f"{r} -> {c}" for r, c in zip(raw, header) if r != c]
    if mapped:
        pr.warnings.append(f"{label}:{hline}: columns read as {', '.join(mapped)}")
    return df, [ln for ln, _ in data]


def _separator_hint(header_text: str) -> str:
    """A hint when the header is split by another character than a comma."""
    if "," in header_text:
        return ""
    for ch, what in ((";", "';'"), ("\t", "tabs"), ("|", "'|'")):
        if ch in header_text:
            return f"; the fields are separated by {what}: profile and table files are comma-separated"
    return ""


def _looks_numeric(s: str) -> bool:
    try:
        float(s)
        return True
    except ValueError:
        return False


def _numbers(df: pd.DataFrame, col: str, lines: list[int], label: str, pr: _Problems,
             partial: bool = False) -> np.ndarray | None:
    """Column as floats; blank, text, NaN and infinities are problems with line numbers.

    Returns None after a problem, or with ``partial`` the column with NaN where bad."""
    txt = df[col].astype(str).str.strip()
    vals = pd.to_numeric(txt, errors="coerce").to_numpy(dtype=float)
    ok = True
    for i, (t, v) in enumerate(zip(txt, vals)):
        if t == "":
            pr.add(f"{label}:{lines[i]}: {col}: blank value")
            ok = False
        elif not math.isfinite(v):
            pr.add(f"{label}:{lines[i]}: {col}: '{t}' is not a number")
            ok = False
    return vals if ok or partial else None


def read_profile(path: Path, label: str, pr: _Problems) -> ProfileData | None:
    """Read one profile CSV (``chainage_m,level_m`` and optional ``x_m,y_m``)."""
    rows = _read_lines(path, label, pr)
    if rows is None:
        return None
    got = _frame(rows, label, pr, ("chainage_m", "level_m"), ("x_m", "y_m"), PROFILE_ALIASES)
    if got is None:
        return None
    df, lines = got
    n0 = len(pr.items)
    ch = _numbers(df, "chainage_m", lines, label, pr)
    lv = _numbers(df, "level_m", lines, label, pr)
    has_xy = [c for c in ("x_m", "y_m") if c in df.columns]
    x = y = None
    if len(has_xy) == 1:
        other = "y_m" if has_xy[0] == "x_m" else "x_m"
        pr.add(f"{label}:{rows[0][0]}: column '{has_xy[0]}' given without '{other}'")
    elif has_xy:
        x = _numbers(df, "x_m", lines, label, pr)
        y = _numbers(df, "y_m", lines, label, pr)
    if len(pr.items) > n0:
        return None
    if len(ch) < 2:
        pr.add(f"{label}:{lines[0]}: a single point; a profile needs at least two")
        return None
    for i in range(1, len(ch)):
        if ch[i] == ch[i - 1]:
            pr.add(f"{label}:{lines[i]}: chainage_m {_g(ch[i])} repeats the previous point "
                   f"(line {lines[i - 1]}); chainage must be strictly increasing")
        elif ch[i] < ch[i - 1]:
            pr.add(f"{label}:{lines[i]}: chainage_m {_g(ch[i])} is less than the previous "
                   f"point's {_g(ch[i - 1])} (line {lines[i - 1]}); chainage must be strictly increasing")
        if abs(lv[i] - lv[i - 1]) > MAX_LEVEL_JUMP_M:
            pr.add(f"{label}:{lines[i]}: level_m jumps {abs(lv[i] - lv[i - 1]):g} m from the "
                   f"previous point (line {lines[i - 1]}), more than {MAX_LEVEL_JUMP_M:g} m; "
                   "levels must be in metres")
    if len(pr.items) > n0:
        return None
    return ProfileData(chainage_m=ch, level_m=lv, x_m=x, y_m=y, source=label,
                       lines=tuple(lines))


def _read_alignment(entries, pr: _Problems) -> tuple[AlignmentPoint, ...] | None:
    sec = "profiles.finished_alignment"
    if not isinstance(entries, list) or not entries or not all(isinstance(e, dict) for e in entries):
        pr.table(sec, "must be a list of tables: one [[profiles.finished_alignment]] per point")
        return None
    pts = []
    n0 = len(pr.items)
    for i, e in enumerate(entries, 1):
        vals = _read_table(e, f"{sec} #{i}", _ALIGNMENT_SPEC, pr)
        if "chainage_m" in vals and "level_m" in vals:
            pts.append(AlignmentPoint(vals["chainage_m"], vals["level_m"],
                                      vals.get("curve_length_m", 0.0)))
    if len(pr.items) > n0:
        return None
    if len(pts) < 2:
        pr.table(sec, f"needs at least two points, found {len(pts)}")
        return None
    for i, (a, b) in enumerate(zip(pts, pts[1:]), 2):
        if b.chainage_m <= a.chainage_m:
            pr.key(f"{sec} #{i}", "chainage_m",
                   f"{_g(b.chainage_m)} is not greater than the previous point's {_g(a.chainage_m)}")
    for i, p in ((1, pts[0]), (len(pts), pts[-1])):
        if p.curve_length_m != 0:
            pr.key(f"{sec} #{i}", "curve_length_m",
                   "the first and last points carry no curve: must be 0")
    if len(pr.items) > n0:
        return None
    last = len(pts)
    for i, (a, b) in enumerate(zip(pts, pts[1:]), 2):
        end_a = a.chainage_m + a.curve_length_m / 2
        start_b = b.chainage_m - b.curve_length_m / 2
        if start_b < end_a - 1e-9:
            if i - 1 == 1:
                msg = (f"curve from ch {_g(start_b)} reaches past the start of the alignment "
                       f"(ch {_g(a.chainage_m)})")
                at = i
            elif i == last:
                msg = (f"curve to ch {_g(end_a)} reaches past the end of the alignment "
                       f"(ch {_g(b.chainage_m)})")
                at = i - 1
            else:
                msg = (f"curve from ch {_g(start_b)} overlaps the curve of point #{i - 1}, "
                       f"which ends at ch {_g(end_a)}")
                at = i
            pr.key(f"{sec} #{at}", "curve_length_m", msg)
    if len(pr.items) > n0:
        return None
    return tuple(pts)


# --- catalogue and rates -------------------------------------------------------------

def read_catalogue(path: Path, steel: Steel, pr: _Problems,
                   design: Design = Design()) -> tuple[CatalogueSection, ...] | None:
    """``sections.csv``: one standard section type a row (dimensions m, bars mm). A type
    thinner than ``[design] min_stem_m`` (stem top or base) or ``min_base_m`` is refused
    with its name: the least sizes hold in every section mode."""
    label = SECTIONS_FILE
    rows = _read_lines(path, label, pr)
    if rows is None:
        return None
    got = _frame(rows, label, pr, CATALOGUE_COLUMNS, ())
    if got is None:
        return None
    df, lines = got
    n0 = len(pr.items)
    num = {c: _numbers(df, c, lines, label, pr, partial=True) for c in CATALOGUE_COLUMNS[1:]}
    names = [s.strip() for s in df["section"].astype(str)]
    for i, s in enumerate(names):
        if not s:
            pr.add(f"{label}:{lines[i]}: section: blank name")
        elif len(s) > SECTION_NAME_MAX:
            pr.add(f"{label}:{lines[i]}: section: a name of {len(s)} characters, at most "
                   f"{SECTION_NAME_MAX} (it is drawn in titles and schedules)")
        elif names.index(s) != i:
            pr.add(f"{label}:{lines[i]}: section '{s}' repeats line {lines[names.index(s)]}")
    out = []
    for i in range(len(names)):
        ln = lines[i]
        r = {c: num[c][i] for c in num}
        if not all(math.isfinite(v) for v in r.values()):
            continue  # its bad numbers are reported already
        for c in ("stem_top_m", "stem_base_m", "base_width_m", "base_thickness_m"):
            if r[c] <= 0:
                pr.add(f"{label}:{ln}: {c}: must be > 0, got {_g(r[c])}")
        for c in ("toe_m", "key_depth_m", "key_width_m"):
            if r[c] < 0:
                pr.add(f"{label}:{ln}: {c}: must be >= 0, got {_g(r[c])}")
        for c in CATALOGUE_COLUMNS[1:]:
            if c.endswith("_m") and r[c] > 20:
                pr.add(f"{label}:{ln}: {c}: {_g(r[c])} m is beyond any cantilever wall; "
                       "dimensions are in metres")
        if (r["key_depth_m"] > 0) != (r["key_width_m"] > 0):
            pr.add(f"{label}:{ln}: key_depth_m and key_width_m: give both > 0 for a key, or both 0")
        for c in ("stem_top_m", "stem_base_m"):
            if 0 < r[c] < design.min_stem_m - 1e-9:
                pr.add(f"{label}:{ln}: {c}: type '{names[i]}' has a stem {_g(r[c])} m thick, "
                       f"thinner than [design] min_stem_m = {_g(design.min_stem_m)} m")
        if 0 < r["base_thickness_m"] < design.min_base_m - 1e-9:
            pr.add(f"{label}:{ln}: base_thickness_m: type '{names[i]}' has a base "
                   f"{_g(r['base_thickness_m'])} m thick, thinner than [design] min_base_m = "
                   f"{_g(design.min_base_m)} m")
        if r["stem_top_m"] > r["stem_base_m"]:
            pr.add(f"{label}:{ln}: stem_top_m {_g(r['stem_top_m'])} exceeds stem_base_m "
                   f"{_g(r['stem_base_m'])}; the stem tapers towards its top")
        # rounded to a micrometre: 0.90 - 0.60 - 0.30 is 1.1e-16 in floating point
        heel = round(r["base_width_m"] - r["toe_m"] - r["stem_base_m"], 6)
        if heel <= 0:
            pr.add(f"{label}:{ln}: heel = base_width_m - toe_m - stem_base_m = {heel:.3g} m; "
                   "must be > 0")
        if r["key_width_m"] > 0 and r["toe_m"] + r["key_width_m"] > r["base_width_m"]:
            pr.add(f"{label}:{ln}: key_width_m: the key (from the stem front face) runs past the heel edge")
        for c in CATALOGUE_COLUMNS[1:]:
            if c.endswith("_mm"):
                v = r[c]
                if not float(v).is_integer() or v <= 0:
                    pr.add(f"{label}:{ln}: {c}: must be a positive whole number, got {_g(v)}")
                elif c.endswith("bar_mm") and int(v) not in steel.bar_sizes_mm:
                    pr.add(f"{label}:{ln}: {c}: {int(v)} mm is not among [steel] bar_sizes_mm "
                           f"{list(steel.bar_sizes_mm)}")
                elif c.endswith("spacing_mm") and not 50 <= v <= 500:
                    pr.add(f"{label}:{ln}: {c}: must be between 50 and 500 mm, got {_g(v)}")
        out.append(CatalogueSection(
            section=names[i], **{c: (int(r[c]) if c.endswith("_mm") and float(r[c]).is_integer()
                                     else float(r[c])) for c in CATALOGUE_COLUMNS[1:]}))
    if len(pr.items) > n0:
        return None
    return tuple(out)


def read_rates(path: Path, pr: _Problems) -> tuple[Rate, ...] | None:
    """``rates.csv``: ``item,unit,rate`` (rate >= 0, each item once)."""
    label = RATES_FILE
    rows = _read_lines(path, label, pr)
    if rows is None:
        return None
    got = _frame(rows, label, pr, RATE_COLUMNS, ())
    if got is None:
        return None
    df, lines = got
    n0 = len(pr.items)
    rate = _numbers(df, "rate", lines, label, pr, partial=True)
    items = [s.strip() for s in df["item"].astype(str)]
    units = [s.strip() for s in df["unit"].astype(str)]
    for i, it in enumerate(items):
        if not it:
            pr.add(f"{label}:{lines[i]}: item: blank")
        elif items.index(it) != i:
            pr.add(f"{label}:{lines[i]}: item '{it}' repeats line {lines[items.index(it)]}")
        if not units[i]:
            pr.add(f"{label}:{lines[i]}: unit: blank")
        if rate[i] < 0:
            pr.add(f"{label}:{lines[i]}: rate: must be >= 0, got {_g(rate[i])}")
        if it and units[i]:
            want = _item_unit(it)
            if want is None:
                pr.warnings.append(f"{label}:{lines[i]}: item '{it}' is not a take-off item; "
                                   "its rate is ignored")
            elif _unit_key(units[i]) != _unit_key(want):
                pr.add(f"{label}:{lines[i]}: unit '{units[i]}' does not match the unit of "
                       f"'{it}', which is {want}")
    if len(pr.items) > n0:
        return None
    return tuple(Rate(items[i], units[i], float(rate[i])) for i in range(len(items)))


def _item_unit(item: str) -> str | None:
    """Unit of a take-off item (m3, m2, m or kg), None for an item wallrun does not know."""
    from wallrun import takeoff
    try:
        return takeoff.unit_of(item)
    except (ValueError, KeyError):
        return None


def _unit_key(u: str) -> str:
    return (u.strip().lower().replace("\u00b3", "3").replace("\u00b2", "2")
            .replace("^", "").replace(" ", ""))


def _level_gap_problem(ground: ProfileData, finished: ProfileData | None,
                       alignment, lo: float, hi: float) -> str | None:
    """A units slip between the two profiles: finished level and ground more than
    ``MAX_LEVEL_JUMP_M`` apart somewhere on their common range (levels in mm in one
    file, chainage in km, a wrong datum). No cantilever wall retains that much."""
    from wallrun.profile import alignment_curves, alignment_level
    pts = [np.linspace(lo, hi, 201), ground.chainage_m]
    if finished is not None:
        pts.append(finished.chainage_m)
    else:
        pts.append(np.array([p.chainage_m for p in alignment]))
    ch = np.unique(np.concatenate(pts))
    ch = ch[(ch >= lo) & (ch <= hi)]
    g = np.interp(ch, ground.chainage_m, ground.level_m)
    if finished is not None:
        f, fsrc = np.interp(ch, finished.chainage_m, finished.level_m), finished.source
    else:
        a_ch = np.array([p.chainage_m for p in alignment])
        a_lv = np.array([p.level_m for p in alignment])
        a_L = np.array([p.curve_length_m for p in alignment])
        f = alignment_level(a_ch, a_lv, alignment_curves(a_ch, a_lv, a_L), ch)
        fsrc = "the finished alignment"
    d = np.abs(f - g)
    k = int(np.argmax(d))
    if d[k] <= MAX_LEVEL_JUMP_M:
        return None
    return (f"{ground.source} and {fsrc}: the finished level and the ground differ by "
            f"{d[k]:.6g} m at ch {ch[k]:.6g} (ground {g[k]:.6g}, finished {f[k]:.6g}), more "
            f"than {MAX_LEVEL_JUMP_M:g} m: levels must be in metres and chainages in metres "
            "on the same datum in both")


# --- the site ------------------------------------------------------------------------

def _profile_file(root: Path, name: str, key: str, pr: _Problems) -> Path | None:
    p, err = _resolve_inside(root, name)
    if err:
        pr.key("profiles", key, err)
        return None
    if not p.exists():
        pr.key("profiles", key, f"file '{name}' not found in the site folder")
        return None
    if not p.is_file():
        pr.key("profiles", key, f"'{name}' is not a file")
        return None
    return p


def _fixed_file(root: Path, name: str, pr: _Problems) -> Path | None:
    """A fixed-name table file if present (refused when it leads out of the folder)."""
    p = root / name
    if not (p.exists() or p.is_symlink()):
        return None
    _, err = _resolve_inside(root, name)
    if err:
        pr.add(f"{name}: refused: a symlink that leads outside the site folder")
        return None
    if not p.is_file():
        pr.add(f"{name}: not a file")
        return None
    return p


def _coverage_warnings(g: ProfileData, f_start: float, f_end: float, what: str,
                       warn: list[str]):
    g0, g1 = float(g.chainage_m[0]), float(g.chainage_m[-1])
    parts = []
    if f_start > g0:
        parts.append(f"ch {g0:.3f} to {f_start:.3f}")
    if f_end < g1:
        parts.append(f"ch {f_end:.3f} to {g1:.3f}")
    if parts:
        warn.append(f"{what} covers only part of the survey ({g.source}): "
                    f"{' and '.join(parts)} not covered, the run is clipped to "
                    f"ch {max(g0, f_start):.3f} to {min(g1, f_end):.3f}")
    parts = []
    if f_start < g0:
        parts.append(f"ch {f_start:.3f} to {g0:.3f}")
    if f_end > g1:
        parts.append(f"ch {g1:.3f} to {f_end:.3f}")
    if parts:
        warn.append(f"the survey ({g.source}) does not reach all of the {what}: "
                    f"{' and '.join(parts)} left out")


def _plan_warnings(g: ProfileData, f: ProfileData | None, lo: float, hi: float,
                   warn: list[str]):
    if f is not None and g.x_m is not None and f.x_m is not None:
        pts = np.unique(np.concatenate([g.chainage_m, f.chainage_m]))
        pts = pts[(pts >= lo) & (pts <= hi)]
        dx = np.interp(pts, g.chainage_m, g.x_m) - np.interp(pts, f.chainage_m, f.x_m)
        dy = np.interp(pts, g.chainage_m, g.y_m) - np.interp(pts, f.chainage_m, f.y_m)
        d = np.hypot(dx, dy)
        if d.size and d.max() > PLAN_TOLERANCE_M:
            k = int(np.argmax(d))
            warn.append(f"plan positions of {g.source} and {f.source} disagree by up to "
                        f"{d[k]:.2f} m (at ch {pts[k]:.3f}), more than {PLAN_TOLERANCE_M} m; "
                        f"the plan line is taken from {g.source}")
    src = g if g.x_m is not None else (f if f is not None and f.x_m is not None else None)
    if src is not None:
        plan = float(np.sum(np.hypot(np.diff(src.x_m), np.diff(src.y_m))))
        chl = float(src.chainage_m[-1] - src.chainage_m[0])
        if chl > 0 and abs(plan - chl) > PLAN_LENGTH_TOLERANCE * chl:
            warn.append(f"{src.source}: plan length {plan:.2f} m and chainage length "
                        f"{chl:.2f} m differ by {100 * abs(plan - chl) / chl:.1f} %, more than "
                        f"{100 * PLAN_LENGTH_TOLERANCE:g} %: check the chainages or the coordinates")


def load_site(path) -> Site:
    """Read and validate the site folder ``path`` (or its ``site.toml``).

    Returns a frozen :class:`Site`; raises :class:`InputError` listing every problem.
    Warnings (partial coverage, plan disagreements) go in ``Site.warnings``.
    """
    root = Path(path)
    if root.is_file() and root.name == SITE_FILE:
        root = root.parent
    if not root.exists():
        raise InputError(f"{path}: no such site folder")
    if not root.is_dir():
        raise InputError(f"{path}: not a site folder")
    toml_path = root / SITE_FILE
    if toml_path.is_dir():
        raise InputError(f"{SITE_FILE}: is a folder in {root}, not a file")
    if not toml_path.is_file():
        raise InputError(f"{SITE_FILE}: not found in {root} (run 'wallrun new' for a starter site)")
    try:
        doc = tomllib.loads(toml_path.read_bytes().decode("utf-8-sig"))
    except UnicodeDecodeError as e:
        raise InputError(f"{SITE_FILE}: not a UTF-8 text file ({e.reason})") from None
    except tomllib.TOMLDecodeError as e:
        raise InputError(f"{SITE_FILE}: not valid TOML: {e}") from None
    except OSError as e:
        raise InputError(f"{SITE_FILE}: cannot be read ({e.strerror or e})") from None

    pr = _Problems()
    warn = pr.warnings
    vals: dict[str, dict] = {}
    for name, tab in doc.items():
        if name not in TABLES:
            hint = _nearest(name, TABLES)
            what = "unknown table" if isinstance(tab, dict) else "unknown key at the top level"
            pr.add(f"{SITE_FILE}: [{name}]: {what}"
                   + (f"; did you mean [{hint}]?" if hint else f"; known tables: {', '.join(TABLES)}"))
            continue
        if not isinstance(tab, dict):
            pr.add(f"{SITE_FILE}: [{name}]: must be a table, got {_show(tab)}")
            continue
        if name == "factors":
            continue
        vals[name] = _read_table(tab, name, SPEC[name], pr, SUBTABLES.get(name, ()))
    for name in ("project", "profiles"):
        if name not in doc:
            pr.table(name, "required table is missing")

    # rules between keys, declared with each table's dataclass (a key already refused
    # for its value is not refused again)
    for name, cls in CLASSES.items():
        if name in vals and hasattr(cls, "problems"):
            try:
                obj = cls(**vals[name])
            except TypeError:
                continue
            for key, msg in obj.problems():
                refused = f"{SITE_FILE}: [{name}] {key}: "
                if not any(p.startswith(refused) for p in pr.items):
                    pr.key(name, key, msg)
                vals[name].pop(key, None)
    w = vals.get("wall", {})
    b = vals.get("backfill", {})
    d = vals.get("design", {})

    wat = None
    if "water" in doc and isinstance(doc["water"], dict):
        wv = vals.get("water", {})
        if len([k for k in ("level_m", "height_above_base_m") if k in doc["water"]]) > 1:
            pr.table("water", "give at most one of level_m and height_above_base_m")
        elif not doc["water"]:
            pr.table("water", "give level_m or height_above_base_m, or remove the table for a drained wall")
        elif wv:
            wat = Water(**wv)

    # foundation and zones
    fv = vals.get("foundation", {})
    foundation = Foundation(**fv)
    zones: list[FoundationZone] = []
    ztab = doc.get("foundation", {}).get("zones") if isinstance(doc.get("foundation"), dict) else None
    if ztab is not None:
        if not isinstance(ztab, list) or not all(isinstance(z, dict) for z in ztab):
            pr.table("foundation.zones", "must be a list of tables: one [[foundation.zones]] per zone")
        else:
            for i, z in enumerate(ztab, 1):
                zsec = f"foundation.zones #{i}"
                zv = _read_table(z, zsec, _ZONE_SPEC, pr)
                if "from_m" in zv and "to_m" in zv:
                    if zv["to_m"] <= zv["from_m"]:
                        pr.key(zsec, "to_m", f"must be greater than from_m ({_g(zv['from_m'])}), got {_g(zv['to_m'])}")
                        continue
                    merged = {**fv, **{k: v for k, v in zv.items() if k in _FOUNDATION_SPEC}}
                    zones.append(FoundationZone(zv["from_m"], zv["to_m"], Foundation(**merged)))
            zones.sort(key=lambda z: z.from_m)
            for a, bz in zip(zones, zones[1:]):
                if bz.from_m < a.to_m:
                    pr.table("foundation.zones", f"zone ch {_g(bz.from_m)}-{_g(bz.to_m)} overlaps "
                             f"zone ch {_g(a.from_m)}-{_g(a.to_m)}")
    for label, fd in [("foundation", foundation)] + [
            (f"foundation zone ch {_g(z.from_m)}-{_g(z.to_m)}", z.foundation) for z in zones]:
        if fd.critical_state_angle_deg is not None and fd.critical_state_angle_deg > fd.friction_angle_deg:
            warn.append(f"{label}: critical_state_angle_deg {_g(fd.critical_state_angle_deg)} exceeds "
                        f"friction_angle_deg {_g(fd.friction_angle_deg)}; the critical-state angle is "
                        "normally the smaller")

    # factors
    overrides: dict[str, dict[str, float]] = {}
    ftab = doc.get("factors")
    approach = d.get("approach", Design.approach)
    if isinstance(ftab, dict):
        for setname, t in ftab.items():
            if setname not in FACTOR_SETS:
                hint = _nearest(setname, FACTOR_SETS)
                pr.add(f"{SITE_FILE}: [factors.{setname}]: unknown factor set"
                       + (f"; did you mean [factors.\"{hint}\"]?" if hint else
                          f"; known sets: {', '.join(FACTOR_SETS)}"))
                continue
            if not isinstance(t, dict):
                pr.add(f"{SITE_FILE}: [factors.{setname}]: must be a table, got {_show(t)}")
                continue
            if setname == _factors.SEISMIC_TABLE:
                keys = _factors.SEISMIC_KEYS
            elif setname == "DA3":
                keys = _factors.OVERRIDE_KEYS
            else:
                keys = tuple(k for k in _factors.OVERRIDE_KEYS if k != "gG_unfav_ground")
            spec = {k: _factors.OVERRIDE_RULE for k in keys}
            fvals = _read_table(t, f"factors.{setname}", spec, pr)
            overrides[setname] = fvals
            if setname == _factors.SEISMIC_TABLE:
                if "seismic" not in doc:
                    warn.append(f"{SITE_FILE}: [factors.seismic] is not used: the site gives no "
                                "[seismic] table")
            elif setname not in _factors.SETS_OF_APPROACH[approach]:
                warn.append(f"{SITE_FILE}: [factors.{setname}] is not used by approach {approach}")

    # profiles
    root_r = root.resolve()
    pv = vals.get("profiles", {})
    ptab = doc.get("profiles", {}) if isinstance(doc.get("profiles"), dict) else {}
    ground = finished = None
    alignment = None
    crs = ""
    has_f, has_a = "finished" in ptab, "finished_alignment" in ptab
    if "landxml" in ptab:
        if has_a:
            pr.table("profiles", "give either landxml or [[profiles.finished_alignment]], "
                                 "not both")
        elif "landxml" in pv and all(k in pv for k in ("alignment", "ground_surface")) and (
                "finished_surface" in pv or "finished_profile" in pv) and not (
                "ground" in ptab or has_f):
            lp = _profile_file(root_r, pv["landxml"], "landxml", pr)
            if lp is not None:
                try:
                    got = read_landxml(lp, pv["landxml"], ProfileFiles(**pv))
                except InputError as e:
                    pr.items.extend(e.problems)
                else:
                    ground, finished, alignment = got.ground, got.finished, got.alignment
                    crs = got.crs
                    warn.extend(got.warnings)
    else:
        if "ground" in pv:
            gp = _profile_file(root_r, pv["ground"], "ground", pr)
            if gp is not None:
                ground = read_profile(gp, pv["ground"], pr)
        if has_f and has_a:
            pr.table("profiles", "give either finished or [[profiles.finished_alignment]], "
                                 "not both")
        elif not has_f and not has_a and "profiles" in doc:
            pr.table("profiles", "give finished (a CSV file) or [[profiles.finished_alignment]]")
        elif has_f and "finished" in pv:
            fp = _profile_file(root_r, pv["finished"], "finished", pr)
            if fp is not None:
                finished = read_profile(fp, pv["finished"], pr)
        elif has_a:
            alignment = _read_alignment(ptab["finished_alignment"], pr)

    if ground is not None and (finished is not None or alignment is not None):
        if finished is not None:
            f0, f1, what = float(finished.chainage_m[0]), float(finished.chainage_m[-1]), \
                f"finished level ({finished.source})"
        else:
            f0, f1, what = alignment[0].chainage_m, alignment[-1].chainage_m, "finished alignment"
        g0, g1 = float(ground.chainage_m[0]), float(ground.chainage_m[-1])
        lo, hi = max(g0, f0), min(g1, f1)
        if lo >= hi:
            pr.add(f"{ground.source} (ch {_g(g0)} to {_g(g1)}) and the {what} (ch {_g(f0)} to "
                   f"{_g(f1)}): the profiles do not overlap; they need a common chainage range")
        else:
            gap = _level_gap_problem(ground, finished, alignment, lo, hi)
            if gap:
                pr.add(gap)
            _coverage_warnings(ground, f0, f1, what, warn)
            if "landxml" not in pv:  # one wall line: its stations are not its length
                _plan_warnings(ground, finished, lo, hi, warn)
            for z in zones:
                if z.to_m <= lo or z.from_m >= hi:
                    warn.append(f"foundation zone ch {_g(z.from_m)}-{_g(z.to_m)} lies outside the "
                                f"run's chainage range {lo:.3f} to {hi:.3f}")

    # steel before catalogue (bar sizes checked against it)
    steel = Steel(**vals.get("steel", {}))
    catalogue = None
    cp = _fixed_file(root, SECTIONS_FILE, pr)
    if cp is not None:
        try:
            dsg = Design(**d)
        except TypeError:
            dsg = Design()
        catalogue = read_catalogue(cp, steel, pr, dsg)
    elif d.get("sections") == "catalogue":
        pr.key("design", "sections", f"\"catalogue\" needs {SECTIONS_FILE} in the site folder")
    rates = None
    rp = _fixed_file(root, RATES_FILE, pr)
    if rp is not None:
        rates = read_rates(rp, pr)

    if wat is not None:
        # effective unit weight gamma - gamma_w must stay positive (design-basis 3)
        gw = 9.81
        for label, gam in ([("backfill", b.get("unit_weight_kn_m3", Backfill.unit_weight_kn_m3)),
                            ("foundation", foundation.unit_weight_kn_m3)]
                           + [(f"foundation.zones ch {_g(z.from_m)}-{_g(z.to_m)}",
                               z.foundation.unit_weight_kn_m3) for z in zones]):
            if gam <= gw:
                pr.key(label, "unit_weight_kn_m3",
                       f"must exceed the unit weight of water ({gw}) when [water] is given, "
                       f"got {_g(gam)}")
    seismic = None
    if isinstance(doc.get("seismic"), dict) and not pr.items:
        seismic = Seismic(**vals.get("seismic", {}))
        if wat is not None and seismic.r > 1.0:
            warn.append(f"{SITE_FILE}: [seismic] r = {_g(seismic.r)} with [water]: EN 1998-5 "
                        "7.3.2.2(3) allows r above 1 only where the backfill is not a saturated "
                        "cohesionless soil susceptible to high pore pressure")
    resolved = (_factors.resolve(approach, overrides, seismic=seismic is not None)
                if not pr.items else {})
    slope = b.get("slope_deg", Backfill.slope_deg)
    phik = b.get("friction_angle_deg", Backfill.friction_angle_deg)
    for name, fs in resolved.items():
        phid = math.degrees(math.atan(math.tan(math.radians(phik)) / fs.g_phi))
        if slope >= phid:
            warn.append(f"{SITE_FILE}: [backfill] slope_deg {_g(slope)} is at or above the design "
                        f"friction angle {phid:.2f} of the backfill in {name} "
                        f"(friction_angle_deg {_g(phik)} / g_phi {_g(fs.g_phi)}): no active "
                        "limit state exists; every panel is beyond the method")

    if pr.items:
        raise InputError(pr.items)

    return Site(
        root=str(root_r),
        project=Project(**vals["project"]),
        ground=ground,
        finished=finished,
        alignment=alignment,
        wall=Wall(**w),
        backfill=Backfill(**b),
        foundation=foundation,
        zones=tuple(zones),
        water=wat,
        loads=Loads(**vals.get("loads", {})),
        concrete=Concrete(**vals.get("concrete", {})),
        steel=steel,
        design=Design(**d),
        factors=resolved,
        takeoff=Takeoff(**vals.get("takeoff", {})),
        drawings=Drawings(**vals.get("drawings", {})),
        ground_model=GroundModel(**vals.get("ground", {})),
        catalogue=catalogue,
        rates=rates,
        warnings=tuple(warn),
        seismic=seismic,
        profile_files=ProfileFiles(**pv),
        crs=crs,
    )
