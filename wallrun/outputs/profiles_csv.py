"""``profiles.csv``: the profiles the wall was designed against, at every breakpoint.

Columns ``chainage_m,ground_m,finished_m,x_m,y_m`` (interfaces, second wave): one row
per breakpoint of the profiles on their common range (``Profiles.breakpoints``: the
survey points or the edge crossings of a LandXML surface, the finished points, the ends
and high or low points of vertical curves), whatever the source (CSV or LandXML).
``x_m,y_m`` (east, north, m) are empty when the profiles carry no plan positions.
Levels and positions to 0.1 mm, so that the file can be checked against the survey.
"""

from __future__ import annotations

import numpy as np

from wallrun.outputs.tables import to_csv

COLUMNS = ("chainage_m", "ground_m", "finished_m", "x_m", "y_m")
DECIMALS = dict.fromkeys(COLUMNS, 4)


def profiles_csv(result) -> str:
    """The text of ``profiles.csv`` for a ``DesignResult``."""
    prof = result.profiles
    ch = np.asarray(prof.breakpoints, dtype=float)
    g = np.asarray(prof.ground(ch), dtype=float)
    f = np.asarray(prof.finished(ch), dtype=float)
    xy = prof.xy_at(ch)
    rows = []
    for i, c in enumerate(ch.tolist()):
        row = {"chainage_m": c, "ground_m": float(g[i]), "finished_m": float(f[i])}
        if xy is not None:
            row["x_m"], row["y_m"] = float(xy[0][i]), float(xy[1][i])
        rows.append(row)
    return to_csv(COLUMNS, rows, DECIMALS)


def write_profiles_csv(result, path) -> None:
    """Write ``profiles.csv`` of ``result`` to ``path``."""
    with open(path, "w", encoding="utf-8", newline="") as f:
        f.write(profiles_csv(result))
