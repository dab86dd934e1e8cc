"""Errors a user can act on."""

from __future__ import annotations


class InputError(Exception):
    """Bad input: every problem found, each naming its file and line or key.

    Problems read like ``site.toml: [backfill] friction_angle_deg: must be ...`` or
    ``ground.csv:12: level_m: not a number``. The command line prints them all and
    exits with status 2.
    """

    def __init__(self, problems: list[str] | str):
        self.problems = [problems] if isinstance(problems, str) else list(problems)
        super().__init__("\n".join(self.problems))
