"""Completeness and the impairment grade (AIS A to E): sacral sparing, motor function more than three levels below
the motor level (non-key muscles allowed there only), the at-least-half rule that tells C from D, and grade E."""
from __future__ import annotations

from collections.abc import Mapping
from dataclasses import dataclass
from itertools import product

from .anatomy import SIDES, anatomy
from .classify_exam import (
    BOTH,
    MODALITIES,
    Exam,
    either,
    key_index,
    motor_label,
    negated,
    present,
    sens_label,
    sign_label,
    why,
)
from .classify_levels import SideLevels
from .classify_result import ND, levels


@dataclass(frozen=True)
class Sacral:
    """The sacral findings (S4-5 light touch and pinprick, deep anal pressure, voluntary anal contraction) as the
    completeness, grade and zone rules read them."""

    dap: bool | None
    vac: bool | None
    sensory_incomplete: frozenset[bool]  # possible truth of 'some sacral sensation'
    vac_present: frozenset[bool]
    unknown: tuple[str, ...]  # the sacral items not examined


def sacral_sparing(ex: Exam) -> Sacral:
    sacral = {sens_label(m, s, "S4-5"): ex.sens(m, s, "S4-5") for m in MODALITIES for s in SIDES}
    dap, vac = ex.sign("deep_anal_pressure"), ex.sign("voluntary_anal_contraction")
    sensory_incomplete = either(*[present(v) for v in sacral.values()], present(dap))
    unknown = [k for k, v in {**sacral, sign_label("deep_anal_pressure"): dap,
                              sign_label("voluntary_anal_contraction"): vac}.items() if v is None]
    return Sacral(dap, vac, sensory_incomplete, present(vac), tuple(unknown))


def completeness(sacral: Sacral, reasons: list[tuple[str, str]]) -> bool | str:
    """Complete: no sacral sensation, no deep anal pressure and no voluntary anal contraction; "ND" when open."""
    complete_set = negated(either(sacral.sensory_incomplete, sacral.vac_present))
    complete: bool | str = next(iter(complete_set)) if len(complete_set) == 1 else ND
    if complete == ND:
        reasons.append(("complete", why(sacral.unknown)))
    return complete


def _beyond_three(ex: Exam, side: str, motor: frozenset[int], non_key: int | None) -> tuple[frozenset[bool], list]:
    """Is there motor function more than three levels below this side's motor level?"""
    key = key_index()
    possible: set[bool] = set()
    unknown: list[str] = []
    for m in motor:
        below = [k for k, i in key.items() if i > m + 3]
        grades = [ex.motor(side, k) for k in below]
        if (non_key is not None and non_key > m + 3) or any(g is not None and g > 0 for g in grades):
            possible.add(True)
        elif any(g is None for g in grades):
            possible |= BOTH
            unknown += [motor_label(side, k) for k, g in zip(below, grades) if g is None]
        else:
            possible.add(False)
    return frozenset(possible), unknown


def _half_rule(ex: Exam, nli: frozenset[int]) -> tuple[set[str], list[str], bool]:
    """C or D for motor-incomplete injuries: possible grades, NT items, and whether no key muscle lay below."""
    key = key_index()
    grades: set[str] = set()
    unknown: list[str] = []
    vacuous = False
    for n in nli:
        below = [(s, k) for s in SIDES for k, i in key.items() if i > n]
        vals = [ex.motor(s, k) for s, k in below]
        strong = sum(1 for g in vals if g is not None and g >= 3)
        open_ = sum(1 for g in vals if g is None)
        vacuous |= not below
        if 2 * strong >= len(below):
            grades.add("D")
        elif 2 * (strong + open_) < len(below):
            grades.add("C")
        else:
            grades |= {"C", "D"}
            unknown += [motor_label(s, k) for (s, k), g in zip(below, vals) if g is None]
    return grades, unknown, vacuous


def _all_normal(ex: Exam) -> tuple[frozenset[bool], list[str]]:
    a = anatomy()
    vals = [(sens_label(m, s, d), ex.sens(m, s, d), 2) for m in MODALITIES for s in SIDES for d in a.dermatomes]
    vals += [(motor_label(s, k), ex.motor(s, k), 5) for s in SIDES for k in a.key_myotomes]
    vals.append((sign_label("voluntary_anal_contraction"), ex.sign("voluntary_anal_contraction"), True))
    if any(v is not None and v != normal for _, v, normal in vals) or ex.sign("deep_anal_pressure") is False:
        return frozenset((False,)), []
    unknown = [label for label, v, _ in vals if v is None]
    return (BOTH if unknown else frozenset((True,))), unknown


def impairment_grade(ex: Exam, sides: Mapping[str, SideLevels], nli: frozenset[int], sacral: Sacral,
                     non_key: Mapping[str, int | None], reasons: list[tuple[str, str]]) -> tuple[str, list[str]]:
    """The AIS grade ("ND" with its reason appended to `reasons` when open) and the notes that go with it."""
    ais_unknown: list[str] = list(sacral.unknown)
    beyond = {}
    for s in SIDES:
        beyond[s], unk = _beyond_three(ex, s, sides[s].motor, non_key[s])
        ais_unknown += unk + (list(sides[s].motor_unknown) if len(sides[s].motor) > 1 else [])
    beyond_any = either(beyond["left"], beyond["right"])
    normal, normal_unknown = _all_normal(ex)
    half, half_unknown, vacuous = _half_rule(ex, nli)
    grades: set[str] = set()
    motor_incomplete: set[bool] = set()
    # keep the sacral findings consistent across the rules
    for si, v in product(sacral.sensory_incomplete, sacral.vac_present):
        if not (si or v):
            grades.add("A")
            continue
        if v and True in normal:
            grades.add("E")
            ais_unknown += normal_unknown
        if False in normal or not v:
            mi = {True} if v else {si and b for b in beyond_any}
            motor_incomplete |= mi
            if False in mi:
                grades.add("B")
            if True in mi:
                grades |= half
                ais_unknown += half_unknown
    if len(grades) == 1:
        ais = next(iter(grades))
    else:
        ais = ND
        if len(nli) > 1 and True in motor_incomplete:
            ais_unknown += [u for s in SIDES for u in (*sides[s].sensory_unknown, *sides[s].motor_unknown)]
        reasons.append(("ais", why(ais_unknown, f"could be {' or '.join(sorted(grades))}; ")))
    notes: list[str] = []
    if ais == "E":
        notes.append("AIS E: every tested function is normal. The standard gives grade E only to a person who had "
                     "a deficit from spinal cord injury before; someone never injured gets no grade. Levels read "
                     "S4-5 here because sensation and motor function are normal throughout.")
    if ais == "D" and vacuous:
        notes.append("AIS D: no key muscle lies below the neurological level, so the at-least-half rule holds "
                     "without any muscle to count.")
    for s in SIDES:
        if non_key[s] is not None and ais in ("C", "D") and sacral.vac is not True:
            notes.append(f"Non-key muscle function on the {s} at {levels()[non_key[s]]} entered the test for motor "
                         "incompleteness (B versus C), as the 2019 revision allows; it does not enter levels, scores "
                         "or zones.")
    return ais, notes
