"""The issue date shown on the outputs (report front page, workbook properties).

``SOURCE_DATE_EPOCH`` (the reproducible-builds convention, seconds since 1970 UTC) when
it is set, so that a rebuild gives the same files; else today's date (UTC).
"""

from __future__ import annotations

import datetime as dt
import os


def issue_date() -> dt.date:
    """The date of issue of the outputs (see the module docstring)."""
    sde = os.environ.get("SOURCE_DATE_EPOCH", "")
    if sde.isdigit():
        return dt.datetime.fromtimestamp(int(sde), dt.timezone.utc).date()
    return dt.datetime.now(dt.timezone.utc).date()
