"""Zones of partial preservation (2019 rules): whether each zone applies (motor: voluntary anal contraction absent;
sensory: no deep anal pressure and no S4-5 sensation on that side), and the most caudal segment with some function
below the motor or sensory level."""
from __future__ import annotations

from collections.abc import Mapping

from .anatomy import SIDES
from .classify_exam import (
    MODALITIES,
    Exam,
    either,
    key_index,
    motor_label,
    named,
    negated,
    present,
    sens_label,
    sign_label,
    why,
)
from .classify_grade import Sacral
from .classify_levels import SideLevels
from .classify_result import NA, ND, Sided, levels


def _zpp(levels_: frozenset[int], rows) -> tuple[frozenset[int], list[str]]:
    """The zone-of-partial-preservation walk, one for both kinds. For each possible level m, the zone is the most
    caudal row below m with some function (a value >= 1), or m itself; a row further down with a value not
    examined (None: missing or NT) leaves that row possible too. `rows`: (level index, ((label, value), ...)),
    rostral to caudal. Returns the possible zones and the items that leave them open."""
    possible: set[int] = set()
    unknown: list[str] = []
    for m in levels_:
        below = [(i, cells) for i, cells in rows if i > m]
        lowest = max([i for i, cells in below if any(v is not None and v > 0 for _, v in cells)], default=m)
        possible.add(lowest)
        for i, cells in below:
            missing = [label for label, v in cells if v is None]
            if i > lowest and missing:
                possible.add(i)
                unknown += missing
    return frozenset(possible), unknown


def _zpp_motor(ex: Exam, side: str, motor: frozenset[int]) -> tuple[frozenset[int], list[str]]:
    """Motor zone: the key muscles below the motor level (grade >= 1 is function)."""
    return _zpp(motor, [(i, ((motor_label(side, k), ex.motor(side, k)),)) for k, i in key_index().items()])


def _zpp_sensory(ex: Exam, side: str, sensory: frozenset[int]) -> tuple[frozenset[int], list[str]]:
    """Sensory zone: the dermatomes below the sensory level (light touch or pinprick >= 1 is function)."""
    lv = levels()
    return _zpp(sensory, [(i, tuple((sens_label(m, side, lv[i]), ex.sens(m, side, lv[i])) for m in MODALITIES))
                          for i in range(1, len(lv))])


def zones(ex: Exam, sides: Mapping[str, SideLevels], sacral: Sacral,
          reasons: list[tuple[str, str]]) -> tuple[Sided, Sided]:
    """The sensory and the motor zone per side: a level, "NA" where the zone does not apply, or "ND" (its reason
    appended to `reasons`, motor before sensory)."""

    def zone(field: str, applies: frozenset[bool], possible, unknown, why_open: str) -> str:
        if applies == frozenset((False,)):
            return NA
        if applies != frozenset((True,)):
            reasons.append((field, why_open))
            return ND
        return named(field, possible, unknown, reasons)

    vac_open = f"{sign_label('voluntary_anal_contraction')} not recorded, so it is open whether the zone applies"
    zpp_motor = Sided(*(zone(f"zpp.motor.{s}", negated(sacral.vac_present), *_zpp_motor(ex, s, sides[s].motor),
                             vac_open) for s in SIDES))
    zs = []
    for s in SIDES:
        side_sacral = [present(ex.sens(m, s, "S4-5")) for m in MODALITIES]
        applies = negated(either(present(sacral.dap), *side_sacral))
        open_items = [k for k in (sign_label("deep_anal_pressure"), *(sens_label(m, s, "S4-5") for m in MODALITIES))
                      if k in sacral.unknown]
        zs.append(zone(f"zpp.sensory.{s}", applies, *_zpp_sensory(ex, s, sides[s].sensory),
                       why(open_items, "open whether the zone applies; ")))
    return Sided(*zs), zpp_motor
