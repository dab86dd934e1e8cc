"""BS 8666:2005 bar shapes: bend radii, end projections and the length of each shape.

Every length in mm; d is the nominal bar size (BS 8666 writes d for the bar diameter).

Sources, per value:

- :data:`TABLE_2`: BS 8666:2005 Table 2, "Minimum scheduling radius, former diameter and
  bend allowances" for grade B500 bars: minimum radius for scheduling r, minimum diameter
  of bending former M, minimum end projection P (general, at least 5 d straight after
  the bend) and P for links with a bend of 150 degrees or more. The r and M columns from
  memory; the P columns compared with a fabricator's reproduction of the table. The
  values for bar sizes the table does not list (7, 9, 14, 18, 22, 28 mm, ...) follow the
  rule of its columns (r = 2 d up to 16 mm, 3.5 d above; M = 2 r; P = r + 6 d, rounded up
  to 5 mm): computed, not tabulated, and said so by :func:`tabulated`.
- Shape codes and their total lengths (BS 8666:2005 Table 3, "Standard shapes", lengths
  measured along the centre line from the outside dimensions A, B, C; the dimension in
  brackets is the free one):

  ====  =================  ==================================  ===========================
  code  shape              length L                            rule on the dimensions
  ====  =================  ==================================  ===========================
  00    straight           A                                   -
  11    one 90 deg bend,   A + (B) - 0.5 r - d                 neither A nor B less than P
        standard radius
  12    one 90 deg bend,   A + (B) - 0.43 R - 1.2 d            neither A nor B less than P
        non-standard R                                         nor less than R + 6 d
  21    U, two 90 deg      A + B + (C) - r - 2 d               neither A nor C less than P
        bends
  ====  =================  ==================================  ===========================

  For a U-bar with a radius larger than the standard r the same formula is used with
  that radius, which is scheduled in the r column (from memory: BS 8666 puts a
  non-standard radius on the schedule; a detailer may prefer shape 99 with a sketch).
- Cutting lengths are rounded up to the next 25 mm (common practice, BS 8666 asks for
  lengths in whole 25 mm steps on the schedule: from memory).

Mass per metre: pi/4 d^2 x 7850 kg/m3 (BS 8666 Table 1 basis).
"""

from __future__ import annotations

import math

import numpy as np

#: BS 8666:2005 Table 2, bar size d -> (r, M, P general, P links), mm.
TABLE_2: dict[int, tuple[float, float, float, float]] = {
    6: (12.0, 24.0, 110.0, 110.0),
    8: (16.0, 32.0, 115.0, 115.0),
    10: (20.0, 40.0, 120.0, 130.0),
    12: (24.0, 48.0, 125.0, 160.0),
    16: (32.0, 64.0, 130.0, 210.0),
    20: (70.0, 140.0, 190.0, 290.0),
    25: (87.0, 175.0, 240.0, 365.0),
    32: (112.0, 224.0, 305.0, 465.0),
    40: (140.0, 280.0, 380.0, 580.0),
    50: (175.0, 350.0, 475.0, 725.0),
}

SHAPES = ("00", "11", "12", "21")
LENGTH_STEP_MM = 25.0  # cutting lengths rounded up to this (common practice)


def _ceil5(x):
    return np.ceil(np.round(np.asarray(x, dtype=float) / 5.0, 6)) * 5.0


def tabulated(d) -> bool:
    """True where BS 8666 Table 2 lists bar size d (mm)."""
    return int(round(float(d))) in TABLE_2 and float(d) == round(float(d))


def _rule(k: int, d):
    """The rule of Table 2's column k for a size it does not list (module docstring)."""
    r = np.where(d <= 16.0, 2.0, 3.5) * d
    return (r, 2.0 * r, _ceil5(r + 6.0 * d))[k] if k < 3 else _ceil5(r + 11.0 * d)


#: Table 2 by whole bar size 0..64 mm, one row per column (the rule where it lists none).
_BY_SIZE = np.array([[TABLE_2[i][k] if i in TABLE_2 else float(_rule(k, float(i)))
                      for i in range(65)] for k in range(4)])


#: The same, as plain floats (a look-up for one bar size).
_BY_SIZE_ROWS = tuple(tuple(float(v) for v in row) for row in _BY_SIZE)


def _column(d, k: int):
    if isinstance(d, (float, int)) and not isinstance(d, bool):  # one size: a look-up
        i = int(d)
        if i == d and 0 <= i < len(_BY_SIZE_ROWS[k]):
            return _BY_SIZE_ROWS[k][i]
    d = np.asarray(d, dtype=float)
    di = np.rint(d).astype(np.int64)
    whole = (di == d) & (di >= 0) & (di < _BY_SIZE.shape[1])
    if np.all(whole):
        return _BY_SIZE[k][di]
    return np.where(whole, _BY_SIZE[k][np.clip(di, 0, _BY_SIZE.shape[1] - 1)], _rule(k, d))


def min_radius(d):
    """Minimum radius for scheduling r, mm (BS 8666:2005 Table 2; sizes it does not list:
    2 d up to 16 mm, 3.5 d above)."""
    return _column(d, 0)


def min_former(d):
    """Minimum diameter of the bending former M, mm (BS 8666:2005 Table 2; sizes it does
    not list: 2 r). For grade B500 it equals the minimum mandrel of EN 1992-1-1
    Table 8.1N (4 d up to 16 mm, 7 d above)."""
    return _column(d, 1)


def min_end_projection(d):
    """Minimum end projection P of a bend (general, at least 5 d straight), mm
    (BS 8666:2005 Table 2; sizes it does not list: r + 6 d rounded up to 5 mm)."""
    return _column(d, 2)


def min_leg(d, radius):
    """Least straight-plus-bend dimension beside a bend of ``radius`` (mm): P of Table 2
    for the standard radius, R + 6 d for a larger one (the rule of shape 12), mm."""
    d = np.asarray(d, dtype=float)
    return np.maximum(min_end_projection(d), np.asarray(radius, dtype=float) + 6.0 * d)


def standard_radius(d, radius) -> np.ndarray:
    """True where ``radius`` is the standard (minimum) scheduling radius of bar d."""
    return np.asarray(radius, dtype=float) <= min_radius(d) + 1e-9


def shape_length(code: str, d, dims: dict, r=None):
    """Total length of a bar of shape ``code`` along its centre line, mm, unrounded
    (BS 8666:2005 Table 3, see the module docstring). dims: the outside dimensions
    ``A``, ``B``, ``C`` (mm); r: the bend radius (mm; default the minimum of Table 2;
    for shape 12 the non-standard R). Works on arrays."""
    d = np.asarray(d, dtype=float)
    if r is None:
        r = min_radius(d)
    r = np.asarray(r, dtype=float)
    A = np.asarray(dims["A"], dtype=float)
    if code == "00":
        return A
    if code == "11":
        return A + dims["B"] - 0.5 * r - d
    if code == "12":
        return A + dims["B"] - 0.43 * r - 1.2 * d
    if code == "21":
        return A + dims["B"] + dims["C"] - r - 2.0 * d
    raise ValueError(f"shape code {code} not used by wallrun")


def dimension_problems(code: str, d: float, dims: dict, r: float | None = None) -> list[str]:
    """The rules of BS 8666:2005 Table 3 on the dimensions of one bar that it breaks
    (empty when it keeps them)."""
    if code == "00":
        return []
    r = float(min_radius(d)) if r is None else float(r)
    P = float(min_end_projection(d))
    need = {"11": (("A", "B"), P), "12": (("A", "B"), max(P, r + 6.0 * d)),
            "21": (("A", "C"), P)}[code]
    names, least = need
    return [f"{n} = {dims[n]:g} mm is less than {least:g} mm" for n in names if dims[n] < least - 1e-9]


def round_length(L) -> int:
    """A cutting length rounded up to the next 25 mm (common practice)."""
    return int(math.ceil(round(float(L) / LENGTH_STEP_MM, 6)) * LENGTH_STEP_MM)
