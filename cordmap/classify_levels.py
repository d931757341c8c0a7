"""Sensory, motor and neurological levels: per side the levels (indices into `levels()`) still possible under every
way the NT entries could be filled in, and the unexamined items that leave them open."""
from __future__ import annotations

from dataclasses import dataclass

from .classify_exam import MODALITIES, Exam, key_index, motor_label, sens_label
from .classify_result import levels


def sensory_level(ex: Exam, side: str) -> tuple[frozenset[int], list[str]]:
    """Possible sensory levels (indices into `levels()`) of one side, and the unexamined items that leave it open."""
    lv = levels()
    possible: set[int] = set()
    unknown: list[str] = []
    for i in range(1, len(lv)):
        vals = {m: ex.sens(m, side, lv[i]) for m in MODALITIES}
        if any(v is not None and v < 2 for v in vals.values()):
            possible.add(i - 1)
            break
        missing = [m for m, v in vals.items() if v is None]
        if missing:
            possible.add(i - 1)
            unknown += [sens_label(m, side, lv[i]) for m in missing]
    else:
        possible.add(len(lv) - 1)
    return frozenset(possible), unknown


def motor_level(ex: Exam, side: str, sensory: int) -> tuple[frozenset[int], list[str]]:
    """Possible motor levels of one side for a given sensory level of that side."""
    lv, key = levels(), key_index()
    possible: set[int] = set()
    unknown: list[str] = []
    cand = 0  # C1: always normal
    for i in range(1, len(lv)):
        if lv[i] in key:
            g = ex.motor(side, lv[i])
            if g is None:  # could be < 3, 3-4 or 5
                possible.update((cand, i))
                unknown.append(motor_label(side, lv[i]))
                cand = i
                continue
            if g < 3:
                possible.add(cand)
                break
            if g < 5:
                possible.add(i)
                break
            cand = i
        elif sensory >= i:  # no key muscle: presumed normal where the sensory level reaches
            cand = i
        else:
            possible.add(cand)
            break
    else:
        possible.add(cand)
    return frozenset(possible), unknown


@dataclass(frozen=True)
class SideLevels:
    """The possible levels of one side."""

    sensory: frozenset[int]
    motor: frozenset[int]
    lowest: frozenset[int]  # possible min(sensory level, motor level)
    sensory_unknown: tuple[str, ...]
    motor_unknown: tuple[str, ...]


def side_levels(ex: Exam, side: str) -> SideLevels:
    """Sensory and motor levels of one side, the motor level taken under each possible sensory level."""
    sens, s_unknown = sensory_level(ex, side)
    motor: set[int] = set()
    lowest: set[int] = set()
    m_unknown: list[str] = []
    for s in sorted(sens):
        m, unk = motor_level(ex, side, s)
        motor |= m
        lowest |= {min(s, x) for x in m}
        m_unknown += [u for u in unk if u not in m_unknown]
    # the motor level depends on the sensory level in regions without key muscles
    m_unknown += [u for u in s_unknown if u not in m_unknown] if len(sens) > 1 else []
    return SideLevels(sens, frozenset(motor), frozenset(lowest), tuple(s_unknown), tuple(m_unknown))


def neurological_levels(left: SideLevels, right: SideLevels) -> frozenset[int]:
    """Possible neurological levels of injury: the most rostral of the four levels."""
    return frozenset(min(a, b) for a in left.lowest for b in right.lowest)
