"""The issue date shown on the outputs (report front page, workbook properties, the
drawings' title blocks, ``model.ifc``'s header).

``SOURCE_DATE_EPOCH`` (the reproducible-builds convention, seconds since 1970 UTC) when
it is set, so that a rebuild gives the same files; else the present time (UTC).
"""

from __future__ import annotations

import datetime as dt
import os


def issue_time() -> dt.datetime:
    """The time of issue of the outputs, UTC to the second (see the module docstring;
    ``model.ifc``'s header)."""
    sde = os.environ.get("SOURCE_DATE_EPOCH", "")
    if sde.isdigit():
        return dt.datetime.fromtimestamp(int(sde), dt.timezone.utc)
    return dt.datetime.now(dt.timezone.utc).replace(microsecond=0)


def issue_date() -> dt.date:
    """The date of issue of the outputs (see the module docstring)."""
    return issue_time().date()
