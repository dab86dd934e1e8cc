"""How a setting's value is checked: one :class:`Rule` per key, declared beside the key.

Every dataclass field of ``wallrun.settings`` that a site file can set is declared with
:func:`setting`, which carries its default, unit and :class:`Rule` (range, allowed
words, kind). The site reader (``wallrun.site``) checks every value against that rule
and nothing else does: the engine takes the checked numbers as they are. So ``wallrun
check`` and ``wallrun design`` accept and refuse exactly the same sites.
"""

from __future__ import annotations

import difflib
import math
from dataclasses import dataclass, field
from typing import Any


@dataclass(frozen=True)
class Rule:
    """How one key is checked.

    kind: ``float``, ``int``, ``bool``, ``str``, ``choice`` (one of ``choices``),
    ``intlist`` (sorted positive whole numbers), ``float_or_none``, ``int_or_auto``
    (a whole number or the word ``"auto"``). lo/hi: bounds, open where
    ``lo_open``/``hi_open``. unit: shown in messages and documentation. max_len: the
    most characters of a text (it is drawn in one line of a title block, and a
    spreadsheet cell holds at most 32,767).
    """

    kind: str
    lo: float | None = None
    hi: float | None = None
    lo_open: bool = False
    hi_open: bool = False
    choices: tuple = ()
    required: bool = False
    nonempty: bool = False
    unit: str = ""
    why: str = ""  # the source of the range, for messages and documentation
    max_len: int | None = None  # a text's most characters

    def check(self, v: Any) -> tuple[Any, str | None]:
        """(converted value, None) or (None, the problem in words)."""
        return check_value(v, self)


def setting(default, kind: str = "", *, unit: str = "", gt=None, ge=None, lt=None, le=None,
            choices: tuple = (), required: bool = False, nonempty: bool = False,
            why: str = "", max_len: int | None = None):
    """A dataclass field with its default and its :class:`Rule` (in the field metadata).

    ``kind`` defaults from the default's type (float, int, bool, str, tuple of ints);
    ``choices`` makes a ``choice``. Bounds: ``gt``/``ge`` below, ``lt``/``le`` above.
    """
    if not kind:
        if choices:
            kind = "choice"
        elif isinstance(default, bool):
            kind = "bool"
        elif isinstance(default, int):
            kind = "int"
        elif isinstance(default, float):
            kind = "float"
        elif isinstance(default, str):
            kind = "str"
        elif isinstance(default, tuple):
            kind = "intlist"
        else:
            raise TypeError(f"setting(): give the kind of a {type(default).__name__} default")
    rule = Rule(kind=kind, lo=gt if gt is not None else ge, hi=lt if lt is not None else le,
                lo_open=gt is not None, hi_open=lt is not None, choices=tuple(choices),
                required=required, nonempty=nonempty, unit=unit, why=why, max_len=max_len)
    return field(default=default, metadata={"rule": rule})


def rules_of(cls) -> dict[str, Rule]:
    """The rule of every field of a settings dataclass that carries one, in field order."""
    from dataclasses import fields
    return {f.name: f.metadata["rule"] for f in fields(cls) if "rule" in f.metadata}


# --- checking a value --------------------------------------------------------------------

def g(v) -> str:
    """A number as a user wrote it (no trailing zeros)."""
    return f"{v:g}" if isinstance(v, float) else str(v)


def show(v) -> str:
    """A TOML value as a user would write it, for messages."""
    if isinstance(v, str):
        return f'"{v}"'
    if isinstance(v, bool):
        return "true" if v else "false"
    if isinstance(v, dict):
        return "a table"
    return repr(v)


def nearest(word: str, known) -> str | None:
    """The known word closest to ``word`` (a typing slip), or None."""
    known = list(known)
    m = difflib.get_close_matches(word, known, n=1, cutoff=0.6)
    if not m:
        m = difflib.get_close_matches(word.lower(), [k.lower() for k in known], n=1, cutoff=0.6)
        if m:
            m = [k for k in known if k.lower() == m[0]]
    return m[0] if m else None


def range_text(s: Rule) -> str:
    """The range of a rule in words: ``between 0 and 50 (exclusive)``, ``>= 0``."""
    if s.lo is not None and s.hi is not None:
        if s.lo_open and s.hi_open:
            return f"between {g(s.lo)} and {g(s.hi)} (exclusive)"
        lo = f"> {g(s.lo)}" if s.lo_open else f">= {g(s.lo)}"
        hi = f"< {g(s.hi)}" if s.hi_open else f"<= {g(s.hi)}"
        return f"{lo} and {hi}"
    if s.lo is not None:
        return f"> {g(s.lo)}" if s.lo_open else f">= {g(s.lo)}"
    if s.hi is not None:
        return f"< {g(s.hi)}" if s.hi_open else f"<= {g(s.hi)}"
    return "any number"


def _is_num(v) -> bool:
    return isinstance(v, (int, float)) and not isinstance(v, bool)


def _number(v, s: Rule, whole: bool) -> tuple[Any, str | None]:
    if not _is_num(v):
        return None, f"must be a number, got {show(v)}"
    if whole and not isinstance(v, int):
        if not (math.isfinite(v) and float(v).is_integer()):
            return None, f"must be a whole number, got {show(v)}"
        v = int(v)
    if not math.isfinite(v):
        return None, f"must be a finite number, got {show(v)}"
    bad = ((s.lo is not None and (v <= s.lo if s.lo_open else v < s.lo))
           or (s.hi is not None and (v >= s.hi if s.hi_open else v > s.hi)))
    if bad:
        why = f" ({s.why})" if s.why else ""
        return None, f"must be {range_text(s)}{why}, got {show(v)}"
    return (int(v) if whole else float(v)), None


def check_value(v, s: Rule) -> tuple[Any, str | None]:
    """Return (converted value, problem or None) of a value ``v`` under rule ``s``."""
    if s.kind == "float" or s.kind == "float_or_none":
        return _number(v, s, whole=False)
    if s.kind == "int":
        return _number(v, s, whole=True)
    if s.kind == "int_or_auto":
        if isinstance(v, str):
            if v == "auto":
                return v, None
            return None, f'must be "auto" or a whole number, got {show(v)}'
        return _number(v, s, whole=True)
    if s.kind == "bool":
        if not isinstance(v, bool):
            return None, f"must be true or false, got {show(v)}"
        return v, None
    if s.kind == "str":
        if not isinstance(v, str):
            return None, f"must be a text in quotes, got {show(v)}"
        if s.nonempty and not v.strip():
            return None, "must not be empty"
        if s.max_len is not None and len(v) > s.max_len:
            return None, f"must be at most {s.max_len} characters, got {len(v)}"
        return v, None
    if s.kind == "choice":
        if _is_num(v) and all(_is_num(c) for c in s.choices):
            for c in s.choices:
                if abs(float(v) - float(c)) < 1e-9:
                    return c, None
        if v not in s.choices or isinstance(v, bool):
            words = ", ".join(show(c) for c in s.choices)
            hint = nearest(v, [str(c) for c in s.choices]) if isinstance(v, str) else None
            extra = f" (did you mean \"{hint}\"?)" if hint else ""
            why = f" ({s.why})" if s.why else ""
            return None, f"must be one of {words}{why}, got {show(v)}{extra}"
        return v, None
    if s.kind == "intlist":
        if not isinstance(v, list) or not v:
            return None, f"must be a non-empty list of whole numbers, got {show(v)}"
        if not all(isinstance(x, int) and not isinstance(x, bool) for x in v):
            return None, f"must be a list of whole numbers, got {show(v)}"
        if any(x <= 0 for x in v):
            return None, f"must hold positive numbers only, got {show(v)}"
        if s.hi is not None and any(x > s.hi for x in v):
            return None, f"values must be <= {g(s.hi)}, got {show(v)}"
        if s.lo is not None and any(x < s.lo for x in v):
            return None, f"values must be >= {g(s.lo)}, got {show(v)}"
        if any(b <= a for a, b in zip(v, v[1:])):
            return None, f"must be sorted smallest first without repeats, got {show(v)}"
        return tuple(v), None
    raise AssertionError(s.kind)
