"""One error type for everything the user can get wrong."""
from __future__ import annotations

import difflib
import re
from collections.abc import Iterable


class CordmapError(ValueError):
    """Bad input: the message is one line naming the value, where it is, and what is allowed."""


def bad_value(where: str, value: object, allowed: Iterable[str], what: str = "value") -> CordmapError:
    """Build the standard one-line error, with a 'did you mean' hint when one fits."""
    allowed = [str(a) for a in allowed]
    hint = _nearest_segment(str(value).strip(), allowed)
    hint = hint or difflib.get_close_matches(str(value).strip(), allowed, n=1, cutoff=0.5)
    if not hint:
        hint = [a for a in allowed if a.lower() == str(value).strip().lower()]
    shown = ", ".join(allowed) if len(allowed) <= 16 else f"{allowed[0]}..{allowed[-1]}"
    msg = f"{where}: unknown {what} {value!r}; allowed {shown}"
    if hint:
        msg += f" (did you mean {hint[0]}?)"
    return CordmapError(msg)


def _nearest_segment(value: str, allowed: list[str]) -> list[str]:
    """For segment-like names ('T13'), the allowed name of the same region with the nearest number."""
    m = re.fullmatch(r"([A-Za-z]+)(\d+)", value)
    if not m:
        return []
    region, num = m.group(1).upper(), int(m.group(2))
    same = [(abs(int(n.group(2)) - num), a) for a in allowed
            if (n := re.match(r"([A-Za-z]+)(\d+)", a)) and n.group(1).upper() == region]
    return [min(same)[1]] if same else []
