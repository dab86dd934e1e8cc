"""Read and validate a site folder into a frozen :class:`wallrun.settings.Site`.

The site folder (``shared/interfaces.md``) holds ``site.toml`` (read with ``tomllib``),
the two profile CSVs and the optional ``sections.csv`` and ``rates.csv`` (read with
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

Ranges that are a reading of this module (not written in the design basis):
friction angles 0 < phi' < 50 deg, unit weights 0 < gamma <= 30 kN/m3, covers
15..150 mm, alpha_cc 0.8..1.0 (EN 1992-1-1 3.1.6(1) Note), fyk 400..600 MPa
(EN 1992-1-1 Annex C), concrete classes C12/15..C50/60 (the eta = 1, lambda = 0.8
stress block of design-basis section 5 holds only up to C50/60), crack width one of
the Table 7.3N columns 0.2, 0.3, 0.4 mm, psi2 0..1, wall friction 0 <= delta <=
phi' of the backfill. A backfill slope steeper than the backfill's friction angle is
accepted here (the affected panels are flagged by the design, not refused).
"""

from __future__ import annotations

import csv
import difflib
import io
import math
import tomllib
from dataclasses import dataclass, fields
from pathlib import Path
from typing import Any

import numpy as np
import pandas as pd

from wallrun import factors as _factors
from wallrun.errors import InputError
from wallrun.settings import (AlignmentPoint, Backfill, CatalogueSection, Concrete, Design,
                              Drawings, Foundation, FoundationZone, Loads, ProfileData,
                              Project, Rate, Site, Steel, Takeoff, Wall, Water)

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

#: Concrete strength classes accepted (EN 1992-1-1 Table 3.1, up to C50/60).
STRENGTH_CLASSES = ("C12/15", "C16/20", "C20/25", "C25/30", "C30/37", "C32/40",
                    "C35/45", "C40/50", "C45/55", "C50/60")

#: Columns of ``sections.csv`` (interfaces.md), in order.
CATALOGUE_COLUMNS = tuple(f.name for f in fields(CatalogueSection))
RATE_COLUMNS = ("item", "unit", "rate")
FACTOR_SETS = ("EQU", "DA1-1", "DA1-2", "DA2", "DA3")


# --- value specifications ------------------------------------------------------------

@dataclass(frozen=True)
class _Spec:
    """How one key is checked: ``kind`` float|int|bool|str|choice|intlist."""

    kind: str
    lo: float | None = None
    hi: float | None = None
    lo_open: bool = False
    hi_open: bool = False
    choices: tuple = ()
    required: bool = False
    nonempty: bool = False


def _F(lo=None, hi=None, lo_open=False, hi_open=False, required=False):
    return _Spec("float", lo, hi, lo_open, hi_open, required=required)


def _I(lo=None, hi=None):
    return _Spec("int", lo, hi)


def _C(*choices):
    return _Spec("choice", choices=choices)


_B = _Spec("bool")
_S = _Spec("str")


def _range_text(s: _Spec) -> str:
    if s.lo is not None and s.hi is not None:
        if s.lo_open and s.hi_open:
            return f"between {_g(s.lo)} and {_g(s.hi)} (exclusive)"
        lo = f"> {_g(s.lo)}" if s.lo_open else f">= {_g(s.lo)}"
        hi = f"< {_g(s.hi)}" if s.hi_open else f"<= {_g(s.hi)}"
        return f"{lo} and {hi}"
    if s.lo is not None:
        return f"> {_g(s.lo)}" if s.lo_open else f">= {_g(s.lo)}"
    return f"< {_g(s.hi)}" if s.hi_open else f"<= {_g(s.hi)}"


def _g(v) -> str:
    return f"{v:g}" if isinstance(v, float) else str(v)


def _is_num(v) -> bool:
    return isinstance(v, (int, float)) and not isinstance(v, bool)


def _check_value(v, s: _Spec) -> tuple[Any, str | None]:
    """Return (converted value, problem or None)."""
    if s.kind in ("float", "int"):
        if not _is_num(v):
            return None, f"must be a number, got {_show(v)}"
        if s.kind == "int" and not isinstance(v, int):
            if not (math.isfinite(v) and float(v).is_integer()):
                return None, f"must be a whole number, got {_show(v)}"
            v = int(v)
        if not math.isfinite(v):
            return None, f"must be a finite number, got {_show(v)}"
        bad = ((s.lo is not None and (v <= s.lo if s.lo_open else v < s.lo))
               or (s.hi is not None and (v >= s.hi if s.hi_open else v > s.hi)))
        if bad:
            return None, f"must be {_range_text(s)}, got {_show(v)}"
        return (float(v) if s.kind == "float" else int(v)), None
    if s.kind == "bool":
        if not isinstance(v, bool):
            return None, f"must be true or false, got {_show(v)}"
        return v, None
    if s.kind == "str":
        if not isinstance(v, str):
            return None, f"must be a text in quotes, got {_show(v)}"
        if s.nonempty and not v.strip():
            return None, "must not be empty"
        return v, None
    if s.kind == "choice":
        if not isinstance(v, str) or v not in s.choices:
            words = ", ".join(f'"{c}"' for c in s.choices)
            hint = _nearest(v, s.choices) if isinstance(v, str) else None
            extra = f" (did you mean \"{hint}\"?)" if hint else ""
            return None, f"must be one of {words}, got {_show(v)}{extra}"
        return v, None
    if s.kind == "intlist":
        if not isinstance(v, list) or not v:
            return None, f"must be a non-empty list of whole numbers, got {_show(v)}"
        if not all(isinstance(x, int) and not isinstance(x, bool) for x in v):
            return None, f"must be a list of whole numbers, got {_show(v)}"
        if any(x <= 0 for x in v):
            return None, f"must hold positive numbers only, got {_show(v)}"
        if s.hi is not None and any(x > s.hi for x in v):
            return None, f"values must be <= {_g(s.hi)}, got {_show(v)}"
        if s.lo is not None and any(x < s.lo for x in v):
            return None, f"values must be >= {_g(s.lo)}, got {_show(v)}"
        if any(b <= a for a, b in zip(v, v[1:])):
            return None, f"must be sorted smallest first without repeats, got {_show(v)}"
        return tuple(v), None
    raise AssertionError(s.kind)


def _show(v) -> str:
    if isinstance(v, str):
        return f'"{v}"'
    if isinstance(v, bool):
        return "true" if v else "false"
    if isinstance(v, dict):
        return "a table"
    return repr(v)


def _nearest(word: str, known) -> str | None:
    m = difflib.get_close_matches(word, list(known), n=1, cutoff=0.6)
    if not m:
        m = difflib.get_close_matches(word.lower(), [k.lower() for k in known], n=1, cutoff=0.6)
        if m:
            m = [k for k in known if k.lower() == m[0]]
    return m[0] if m else None


_FOUNDATION_SPEC = {
    "unit_weight_kn_m3": _F(0, 30, lo_open=True),
    "friction_angle_deg": _F(0, 50, True, True),
    "critical_state_angle_deg": _F(0, 50, True, True),
    "cohesion_kpa": _F(0, 500),
    "undrained_strength_kpa": _F(0, 1000),
    "allowable_bearing_kpa": _F(0, 5000),
}

#: Key specifications per table, in the order of interfaces.md.
SPEC: dict[str, dict[str, _Spec]] = {
    "project": {"name": _Spec("str", required=True, nonempty=True), "reference": _S},
    "profiles": {"ground": _Spec("str", required=True, nonempty=True),
                 "finished": _Spec("str", nonempty=True)},
    "wall": {
        "min_retained_height_m": _F(0, 10, lo_open=True),
        "merge_gap_m": _F(0, 1000),
        "max_panel_length_m": _F(0, 50, lo_open=True),
        "min_panel_length_m": _F(0, 50, lo_open=True),
        "min_founding_depth_m": _F(0, 10),
        "founding_step_m": _F(0, 2, lo_open=True),
        "max_founding_step_m": _F(0, 10),
        "top": _C("stepped", "sloped"),
        "top_step_m": _F(0, 2, lo_open=True),
        "max_top_step_m": _F(0, 10),
        "freeboard_m": _F(0, 5),
        "max_pressure_ratio": _F(1, 100),
    },
    "backfill": {
        "unit_weight_kn_m3": _F(0, 30, lo_open=True),
        "friction_angle_deg": _F(0, 50, True, True),
        "slope_deg": _F(0, 90, hi_open=True),
        "wall_friction_deg": _F(0, 50, hi_open=True),
    },
    "foundation": dict(_FOUNDATION_SPEC),
    "water": {"level_m": _F(-1000, 10000), "height_above_base_m": _F(0, 100)},
    "loads": {"surcharge_kpa": _F(0, 1000), "psi2": _F(0, 1)},
    "concrete": {
        "strength_class": _C(*STRENGTH_CLASSES),
        "cover_mm": _F(15, 150),
        "cover_ground_mm": _F(15, 150),
        "alpha_cc": _F(0.8, 1.0),
    },
    "steel": {
        "fyk_mpa": _F(400, 600),
        "bar_sizes_mm": _Spec("intlist", lo=6, hi=50),
        "spacings_mm": _Spec("intlist", lo=50, hi=500),
    },
    "design": {
        "approach": _C("DA1", "DA2", "DA3"),
        "earth_pressure": _C("rankine", "coulomb"),
        "passive": _C("none", "key", "full"),
        "base_friction_factor": _F(0, 1, lo_open=True),
        "undrained_interface_open": _B,
        "sls_middle_third": _B,
        "crack_width_mm": _Spec("float", 0.2, 0.4),
        "sections": _C("bespoke", "catalogue", "rationalised"),
        "max_types": _I(1, 100),
        "dimension_step_m": _F(0.01, 0.5),
    },
    "takeoff": {
        "working_space_m": _F(0, 5),
        "excavation_side_slope": _F(0, 10),
        "blinding_thickness_m": _F(0, 0.5),
        "drainage_layer_thickness_m": _F(0, 2),
        "drain_pipe": _B,
        "waterproofing": _B,
    },
    "drawings": {
        "vertical_exaggeration": _F(0, 20, lo_open=True),
        "chainage_tick_m": _F(0, 10000, lo_open=True),
        "sheet": _C("A1", "A3"),
    },
}
#: Sub-tables allowed beside the keys of a table.
SUBTABLES = {"profiles": ("finished_alignment",), "foundation": ("zones",),
             "factors": FACTOR_SETS}
TABLES = tuple(SPEC) + ("factors",)
_ALIGNMENT_SPEC = {"chainage_m": _F(-1e6, 1e7, required=True),
                   "level_m": _F(-1000, 10000, required=True),
                   "curve_length_m": _F(0, 10000)}
_ZONE_SPEC = {"from_m": _F(-1e6, 1e7, required=True), "to_m": _F(-1e6, 1e7, required=True),
              **_FOUNDATION_SPEC}
_CRACK_WIDTHS = (0.2, 0.3, 0.4)


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


def _read_table(tab: dict, section: str, spec: dict[str, _Spec], pr: _Problems,
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
        val, err = _check_value(v, spec[k])
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


def _frame(rows: list[tuple[int, str]], label: str, pr: _Problems,
           required: tuple[str, ...], optional: tuple[str, ...]
           ) -> tuple[pd.DataFrame, list[int]] | None:
    """Header check and field counts, then the data rows as a DataFrame of text."""
    if not rows:
        pr.add(f"{label}: no header row; expected columns {','.join(required)}")
        return None
    hline, htext = rows[0]
    header = [h.strip() for h in next(csv.reader([htext]))]
    known = required + optional
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
    for h in set(header):
        if header.count(h) > 1:
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
    df = pd.read_csv(io.StringIO(body), dtype=str, keep_default_na=False,
                     skipinitialspace=True, skip_blank_lines=False)
    df.columns = header
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
    got = _frame(rows, label, pr, ("chainage_m", "level_m"), ("x_m", "y_m"))
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

def read_catalogue(path: Path, steel: Steel, pr: _Problems) -> tuple[CatalogueSection, ...] | None:
    """``sections.csv``: one standard section type a row (dimensions m, bars mm)."""
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

    # cross-checks between settings
    w = vals.get("wall", {})
    mx = w.get("max_panel_length_m", Wall.max_panel_length_m)
    mn = w.get("min_panel_length_m", Wall.min_panel_length_m)
    if mn > mx / 2 and "wall" in doc:
        pr.key("wall", "min_panel_length_m",
               f"must be at most half of max_panel_length_m ({_g(mx)} / 2 = {_g(mx / 2)}), got {_g(mn)}")
    b = vals.get("backfill", {})
    if b.get("wall_friction_deg", 0.0) > b.get("friction_angle_deg", Backfill.friction_angle_deg):
        pr.key("backfill", "wall_friction_deg",
               f"must not exceed the backfill friction_angle_deg "
               f"({_g(b.get('friction_angle_deg', Backfill.friction_angle_deg))}), got {_g(b['wall_friction_deg'])}")
    d = vals.get("design", {})
    if "crack_width_mm" in d and not any(abs(d["crack_width_mm"] - c) < 1e-9 for c in _CRACK_WIDTHS):
        pr.key("design", "crack_width_mm",
               f"must be one of 0.2, 0.3, 0.4 (the columns of EN 1992-1-1 Table 7.3N), got {_g(d['crack_width_mm'])}")
        d.pop("crack_width_mm")

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
            keys = _factors.OVERRIDE_KEYS if setname == "DA3" else tuple(
                k for k in _factors.OVERRIDE_KEYS if k != "gG_unfav_ground")
            spec = {k: _F(0, 10, lo_open=True) for k in keys}
            fvals = _read_table(t, f"factors.{setname}", spec, pr)
            overrides[setname] = fvals
            if setname not in _factors.SETS_OF_APPROACH[approach]:
                warn.append(f"{SITE_FILE}: [factors.{setname}] is not used by approach {approach}")

    # profiles
    root_r = root.resolve()
    pv = vals.get("profiles", {})
    ptab = doc.get("profiles", {}) if isinstance(doc.get("profiles"), dict) else {}
    ground = finished = None
    alignment = None
    if "ground" in pv:
        gp = _profile_file(root_r, pv["ground"], "ground", pr)
        if gp is not None:
            ground = read_profile(gp, pv["ground"], pr)
    has_f, has_a = "finished" in ptab, "finished_alignment" in ptab
    if has_f and has_a:
        pr.table("profiles", "give either finished or [[profiles.finished_alignment]], not both")
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
        catalogue = read_catalogue(cp, steel, pr)
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
    resolved = _factors.resolve(approach, overrides) if not pr.items else {}
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
        catalogue=catalogue,
        rates=rates,
        warnings=tuple(warn),
    )
