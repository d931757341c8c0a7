"""One error type for everything the user can get wrong."""
from __future__ import annotations

import difflib
import re
import reprlib
from collections.abc import Iterable

MAX_MESSAGE = 400  # characters; a longer message is cut in the middle
SHOWN = 60  # characters of a bad value shown in a message


class CordmapError(ValueError):
    """Bad input: the message is one line naming the value, where it is, and what is allowed.

    Whatever a caller passes, the message is made one line (runs of white space become one space) and at most
    `MAX_MESSAGE` characters (the middle is cut), so no input can make an error message long."""

    def __init__(self, message: object = ""):
        text = " ".join(str(message).split())
        if len(text) > MAX_MESSAGE:
            half = (MAX_MESSAGE - 5) // 2
            text = f"{text[:half]} ... {text[-half:]}"
        super().__init__(text)


class _Short(reprlib.Repr):
    """repr with bounded depth and length; integers too long for str() are described, not printed."""

    def __init__(self, limit: int):
        super().__init__()
        self.maxlevel, self.maxstring, self.maxother, self.maxlong = 3, limit, limit, limit
        self.maxdict = self.maxlist = self.maxtuple = self.maxset = 4

    def repr_int(self, x, level):
        try:
            return super().repr_int(x, level)
        except ValueError:  # past sys.get_int_max_str_digits()
            return f"<integer of about {int(x.bit_length() * 0.30103)} digits>"

    def repr_str(self, x, level):
        return super().repr_str(x[: self.maxstring + 1], level)


def shown(value: object, limit: int = SHOWN) -> str:
    """A bad value as it appears in a message: its repr, at most `limit` characters, never an error itself."""
    try:
        text = _Short(limit).repr(value)
    except Exception:  # noqa: BLE001 - a value whose repr fails is still named by its type
        text = f"<{type(value).__name__}>"
    return text if len(text) <= limit else text[: limit - 3] + "..."


def bad_value(where: str, value: object, allowed: Iterable[str], what: str = "value") -> CordmapError:
    """Build the standard one-line error, with a 'did you mean' hint when one fits."""
    allowed = [str(a) for a in allowed]
    hint: list[str] = []
    small = isinstance(value, str) and len(value) < SHOWN or isinstance(value, (int, float)) and abs(value) < 1e9
    if small and not isinstance(value, bool):
        text = str(value).strip()
        hint = _nearest_segment(text, allowed)
        hint = hint or difflib.get_close_matches(text, allowed, n=1, cutoff=0.5)
        hint = hint or [a for a in allowed if a.lower() == text.lower()]
    listed = ", ".join(allowed) if len(allowed) <= 16 else f"{allowed[0]}..{allowed[-1]}"
    msg = f"{where}: unknown {what} {shown(value)}; allowed {listed}"
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
