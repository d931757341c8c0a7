"""The exam as the classification rules read it: item values (a missing item or "NT" is not examined), item names
for the reasons, the sets of possible answers that NT entries leave open, and the checked `non_key` argument.

Every rule module (`classify_levels`, `classify_grade`, `classify_zones`, `classify_scores`) reads the exam here.
"""
from __future__ import annotations

from collections.abc import Iterable, Mapping
from dataclasses import dataclass
from functools import cache
from itertools import product

from .anatomy import SIDES, anatomy
from .classify_result import ND, levels
from .errors import CordmapError, bad_value
from .findings import Findings, item_label

MODALITIES = ("light_touch", "pinprick")
BOTH = frozenset((True, False))


@cache
def key_index() -> dict[str, int]:
    """Each key myotome's index into `levels()`."""
    return {m: levels().index(m) for m in anatomy().key_myotomes}


@dataclass(frozen=True)
class Exam:
    """One exam's findings as the rules read them: None for an item not examined (a motor "NT" too)."""

    findings: Findings

    def sens(self, mod: str, side: str, derm: str) -> int | None:
        return self.findings.get(("sensory", mod, side, derm))

    def motor(self, side: str, myo: str) -> int | None:
        g = self.findings.get(("motor", side, myo))
        return None if g == "NT" else g

    def sign(self, name: str) -> bool | None:
        return self.findings.get(("sign", name, ""))


def motor_label(side: str, myo: str) -> str:
    return item_label(("motor", side, myo))


def sens_label(mod: str, side: str, derm: str) -> str:
    return item_label(("sensory", mod, side, derm))


def sign_label(name: str) -> str:
    return name.replace("_", " ")


def present(value) -> frozenset[bool]:
    """Possible truth of 'this sacral item shows function': None (not examined) leaves both open."""
    if value is None:
        return BOTH
    return frozenset((bool(value),))


def either(*sets: frozenset[bool]) -> frozenset[bool]:
    """Possible truth of 'any of these holds'."""
    return frozenset(any(c) for c in product(*sets))


def negated(s: frozenset[bool]) -> frozenset[bool]:
    return frozenset(not v for v in s)


def non_key_levels(non_key: Mapping[str, str | None] | None) -> dict[str, int | None]:
    """The `non_key` argument checked: per side the index into `levels()` of the most caudal non-key function."""
    out: dict[str, int | None] = {s: None for s in SIDES}
    if non_key is None:
        return out
    if not isinstance(non_key, Mapping):
        raise CordmapError(f"non_key: expected a mapping side -> segment, got {type(non_key).__name__}")
    for side, seg in non_key.items():
        if side not in SIDES:
            raise bad_value("non_key", side, SIDES, "side")
        if seg is None:
            continue
        name = "S4-5" if seg in ("S4", "S5") else seg
        if name not in levels():
            raise bad_value(f"non_key[{side!r}]", seg, levels(), "segment")
        out[side] = levels().index(name)
    return out


def why(unknown: Iterable[str], what: str = "") -> str:
    """The reason for an "ND": the items not examined (six named, the rest counted)."""
    items = list(dict.fromkeys(unknown))
    shown = ", ".join(items[:6]) + (f" and {len(items) - 6} more" if len(items) > 6 else "")
    return f"{what}not examined or NT: {shown}" if items else f"{what}left open by other not determinable values"


def named(field: str, possible: frozenset[int], unknown: Iterable[str], reasons: list[tuple[str, str]]) -> str:
    """A level's name when one level is possible; else "ND", with the reason appended to `reasons`."""
    lv = levels()
    value = lv[next(iter(possible))] if len(possible) == 1 else ND
    if value == ND:
        options = ", ".join(lv[i] for i in sorted(possible))
        reasons.append((field, why(unknown, f"could be {options}; ")))
    return value
