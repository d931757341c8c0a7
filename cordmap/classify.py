"""Classify one exam by the rules of the ISNCSCI 2019 revision (format ``cordmap-classification/1``).

Rules implemented (ISNCSCI 2019 revision, Rupp et al., Top Spinal Cord Inj Rehabil 2021;27(2):1-22, as summarized in
shared/reference/clinical-check-values.md section 1c; the finer points marked "from memory" below):

* Levels run C1, C2 .. S3, S4-5 (S4-5 is one level). C1 always counts as normal sensation.
* Sensory level per side: the most caudal dermatome with light touch and pinprick both normal (2), all above normal.
* Motor level per side: the most caudal level whose function is at least antigravity with every level above normal.
  A key muscle counts as antigravity at grade >= 3 and as normal at grade 5. Where there is no key muscle
  (C1-C4, T2-L1, S2-S5) the level's motor function is presumed normal exactly when the sensory level of that side
  reaches it, so in those regions the motor level follows the sensory level (e.g. sensation normal to C4 and C5
  graded 2 gives motor level C4; T1 graded 5 with sensory level T5 gives motor level T5).
* Neurological level of injury (NLI): the most rostral of the four levels.
* Complete: no light touch or pinprick at S4-5 on either side, no deep anal pressure (DAP) and no voluntary anal
  contraction (VAC).
* AIS: A complete. Motor incomplete: VAC present, or sensory incomplete with motor function (grade >= 1) more than
  three levels below the motor level of that side. B: incomplete but not motor incomplete. C or D: motor incomplete,
  D when at least half of the key muscles (both sides) below the single NLI are graded >= 3. E: everything normal
  (reported with a note: the standard grades E only in someone who had a deficit before).
* Non-key muscles: the findings format has no field for them. ``classify(findings, non_key={"left": "L3"})`` takes,
  per side, the most caudal segment with preserved non-key motor function. It is used only where the 2019 revision
  allows non-key muscles, namely for the "more than three levels below the motor level" test that tells B from C.
  It never changes motor levels, the C/D count or the zones of partial preservation.
* Zones of partial preservation (2019): motor ZPP on both sides whenever VAC is absent; sensory ZPP on a side when DAP
  is absent and that side has no light touch and no pinprick at S4-5; otherwise "NA". The zone's value is the most
  caudal segment with some function (key muscle grade >= 1; light touch or pinprick >= 1) below the motor or sensory
  level, or the level itself when there is none.
* Scores: upper and lower extremity motor scores (25 per limb), light touch and pinprick (56 per side, 112 in all).

A missing sensory or motor item was not examined and counts as NT; nothing here treats it as normal. Every value that
NT entries leave open is "ND", with the reason in ``Classification.reasons``. The computation keeps, for each quantity,
the set of values still possible under every way the NT entries could be filled in; a value is reported only when that
set has one member.
"""
from __future__ import annotations

import json
from collections.abc import Iterable, Mapping
from dataclasses import dataclass
from functools import cache
from itertools import product

from . import cautions
from .anatomy import SIDES, anatomy
from .errors import CordmapError, bad_value
from .findings import Findings, item_label, parse

FORMAT = "cordmap-classification/1"
ND = "ND"
NA = "NA"
AIS_GRADES = ("A", "B", "C", "D", "E")
MODALITIES = ("light_touch", "pinprick")
UPPER = ("C5", "C6", "C7", "C8", "T1")
LOWER = ("L2", "L3", "L4", "L5", "S1")
BOTH = frozenset((True, False))


@cache
def levels() -> tuple[str, ...]:
    """The levels the classification speaks of, rostral to caudal: C1, then the 28 dermatomes C2 .. S4-5."""
    return ("C1", *anatomy().dermatomes)


@cache
def _key_index() -> dict[str, int]:
    return {m: levels().index(m) for m in anatomy().key_myotomes}


@dataclass(frozen=True)
class Sided:
    """One value per side: a level name, "ND" or "NA"."""

    left: str
    right: str

    def to_dict(self) -> dict:
        return {"left": self.left, "right": self.right}


@dataclass(frozen=True)
class Score:
    """A score per side and in total; "ND" where an NT entry leaves it open."""

    left: int | str
    right: int | str
    total: int | str
    maximum_per_side: int

    def to_dict(self) -> dict:
        return {"left": self.left, "right": self.right, "total": self.total}


@dataclass(frozen=True)
class Classification:
    """The ISNCSCI classification of one exam (2019 rules): levels per side, neurological level, completeness,
    impairment grade (AIS), zones of partial preservation and scores; "ND" where the exam leaves a value open
    (`reasons` says why) and "NA" where a zone does not apply. Evaluate it in a notebook for a table."""

    sensory_level: Sided
    motor_level: Sided
    neurological_level: str
    complete: bool | str
    ais: str
    zpp_sensory: Sided
    zpp_motor: Sided
    uems: Score
    lems: Score
    light_touch: Score
    pinprick: Score
    reasons: tuple[tuple[str, str], ...] = ()  # (field, why it is "ND")
    notes: tuple[str, ...] = ()

    def __repr__(self) -> str:
        from .views import classification_repr

        return classification_repr(self)

    def _repr_html_(self) -> str:
        """A compact table for notebooks, in words, with the caution."""
        from .views import classification_html

        return classification_html(self)

    def to_dict(self) -> dict:
        """The classification document (format cordmap-classification/1) as a dict, with its caution."""
        return {
            "format": FORMAT,
            "sensory_level": self.sensory_level.to_dict(),
            "motor_level": self.motor_level.to_dict(),
            "neurological_level": self.neurological_level,
            "complete": self.complete,
            "ais": self.ais,
            "zpp": {"sensory": self.zpp_sensory.to_dict(), "motor": self.zpp_motor.to_dict()},
            "scores": {"uems": self.uems.to_dict(), "lems": self.lems.to_dict(),
                       "light_touch": self.light_touch.to_dict(), "pinprick": self.pinprick.to_dict()},
            "not_determinable": dict(self.reasons),
            "notes": list(self.notes),
            "caution": cautions.BANNER,
        }

    def to_json(self, indent: int | None = 2) -> str:
        """The classification document as JSON text."""
        return json.dumps(self.to_dict(), indent=indent)


# ---------------------------------------------------------------- reading the exam

@dataclass(frozen=True)
class _Exam:
    findings: Findings

    def sens(self, mod: str, side: str, derm: str) -> int | None:
        return self.findings.get(("sensory", mod, side, derm))

    def motor(self, side: str, myo: str) -> int | None:
        g = self.findings.get(("motor", side, myo))
        return None if g == "NT" else g

    def sign(self, name: str) -> bool | None:
        return self.findings.get(("sign", name, ""))


def _motor_label(side: str, myo: str) -> str:
    return item_label(("motor", side, myo))


def _sens_label(mod: str, side: str, derm: str) -> str:
    return item_label(("sensory", mod, side, derm))


def _sign_label(name: str) -> str:
    return name.replace("_", " ")


def _present(value) -> frozenset[bool]:
    """Possible truth of 'this sacral item shows function': None (not examined) leaves both open."""
    if value is None:
        return BOTH
    return frozenset((bool(value),))


def _or(*sets: frozenset[bool]) -> frozenset[bool]:
    return frozenset(any(c) for c in product(*sets))


def _and(*sets: frozenset[bool]) -> frozenset[bool]:
    return frozenset(all(c) for c in product(*sets))


def _not(s: frozenset[bool]) -> frozenset[bool]:
    return frozenset(not v for v in s)


def _non_key(non_key: Mapping[str, str | None] | None) -> dict[str, int | None]:
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


# ---------------------------------------------------------------- levels

def _sensory_level(ex: _Exam, side: str) -> tuple[frozenset[int], list[str]]:
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
            unknown += [_sens_label(m, side, lv[i]) for m in missing]
    else:
        possible.add(len(lv) - 1)
    return frozenset(possible), unknown


def _motor_level(ex: _Exam, side: str, sensory: int) -> tuple[frozenset[int], list[str]]:
    """Possible motor levels of one side for a given sensory level of that side."""
    lv, key = levels(), _key_index()
    possible: set[int] = set()
    unknown: list[str] = []
    cand = 0  # C1: always normal
    for i in range(1, len(lv)):
        if lv[i] in key:
            g = ex.motor(side, lv[i])
            if g is None:  # could be < 3, 3-4 or 5
                possible.update((cand, i))
                unknown.append(_motor_label(side, lv[i]))
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


# ---------------------------------------------------------------- the classification

@dataclass(frozen=True)
class _Side:
    sensory: frozenset[int]
    motor: frozenset[int]
    lowest: frozenset[int]  # possible min(sensory level, motor level)
    sensory_unknown: tuple[str, ...]
    motor_unknown: tuple[str, ...]


def _side(ex: _Exam, side: str) -> _Side:
    sens, s_unknown = _sensory_level(ex, side)
    motor: set[int] = set()
    lowest: set[int] = set()
    m_unknown: list[str] = []
    for s in sorted(sens):
        m, unk = _motor_level(ex, side, s)
        motor |= m
        lowest |= {min(s, x) for x in m}
        m_unknown += [u for u in unk if u not in m_unknown]
    # the motor level depends on the sensory level in regions without key muscles
    m_unknown += [u for u in s_unknown if u not in m_unknown] if len(sens) > 1 else []
    return _Side(sens, frozenset(motor), frozenset(lowest), tuple(s_unknown), tuple(m_unknown))


def _level_name(possible: frozenset[int]) -> str:
    return levels()[next(iter(possible))] if len(possible) == 1 else ND


def _why(unknown: Iterable[str], what: str = "") -> str:
    items = list(dict.fromkeys(unknown))
    shown = ", ".join(items[:6]) + (f" and {len(items) - 6} more" if len(items) > 6 else "")
    return f"{what}not examined or NT: {shown}" if items else f"{what}left open by other not determinable values"


def _beyond_three(ex: _Exam, side: str, motor: frozenset[int], non_key: int | None) -> tuple[frozenset[bool], list]:
    """Is there motor function more than three levels below this side's motor level?"""
    key = _key_index()
    possible: set[bool] = set()
    unknown: list[str] = []
    for m in motor:
        below = [k for k, i in key.items() if i > m + 3]
        grades = [ex.motor(side, k) for k in below]
        if (non_key is not None and non_key > m + 3) or any(g is not None and g > 0 for g in grades):
            possible.add(True)
        elif any(g is None for g in grades):
            possible |= BOTH
            unknown += [_motor_label(side, k) for k, g in zip(below, grades) if g is None]
        else:
            possible.add(False)
    return frozenset(possible), unknown


def _half_rule(ex: _Exam, nli: frozenset[int]) -> tuple[set[str], list[str], bool]:
    """C or D for motor-incomplete injuries: possible grades, NT items, and whether no key muscle lay below."""
    key = _key_index()
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
            unknown += [_motor_label(s, k) for (s, k), g in zip(below, vals) if g is None]
    return grades, unknown, vacuous


def _all_normal(ex: _Exam) -> tuple[frozenset[bool], list[str]]:
    a = anatomy()
    vals = [(_sens_label(m, s, d), ex.sens(m, s, d), 2) for m in MODALITIES for s in SIDES for d in a.dermatomes]
    vals += [(_motor_label(s, k), ex.motor(s, k), 5) for s in SIDES for k in a.key_myotomes]
    vals.append((_sign_label("voluntary_anal_contraction"), ex.sign("voluntary_anal_contraction"), True))
    if any(v is not None and v != normal for _, v, normal in vals) or ex.sign("deep_anal_pressure") is False:
        return frozenset((False,)), []
    unknown = [label for label, v, _ in vals if v is None]
    return (BOTH if unknown else frozenset((True,))), unknown


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


def _zpp_motor(ex: _Exam, side: str, motor: frozenset[int]) -> tuple[frozenset[int], list[str]]:
    """Motor zone: the key muscles below the motor level (grade >= 1 is function)."""
    return _zpp(motor, [(i, ((_motor_label(side, k), ex.motor(side, k)),)) for k, i in _key_index().items()])


def _zpp_sensory(ex: _Exam, side: str, sensory: frozenset[int]) -> tuple[frozenset[int], list[str]]:
    """Sensory zone: the dermatomes below the sensory level (light touch or pinprick >= 1 is function)."""
    lv = levels()
    return _zpp(sensory, [(i, tuple((_sens_label(m, side, lv[i]), ex.sens(m, side, lv[i])) for m in MODALITIES))
                          for i in range(1, len(lv))])


def _score(ex: _Exam, items: dict[str, list[tuple]], maximum: int) -> tuple[Score, list[str]]:
    """Sum per side of the values of the given keys; "ND" for a side with a missing or NT item."""
    sums: dict[str, int | str] = {}
    unknown: list[str] = []
    for side, keys in items.items():
        vals = [ex.findings.get(k) for k in keys]
        missing = [item_label(k) for k, v in zip(keys, vals) if v is None or v == "NT"]
        sums[side] = ND if missing else sum(vals)
        unknown += missing
    total = ND if ND in sums.values() else sums["left"] + sums["right"]
    return Score(sums["left"], sums["right"], total, maximum), unknown


def classify(findings, non_key: Mapping[str, str | None] | None = None) -> Classification:
    """Classify one exam by the ISNCSCI 2019 rules (see the module doc).

    `findings` is a `Findings` or anything `cordmap.findings.parse` reads. `non_key` optionally gives, per side, the
    most caudal segment with preserved non-key muscle function; it only helps tell AIS B from C.
    """
    ex = _Exam(parse(findings))
    nk = _non_key(non_key)
    lv = levels()
    reasons: list[tuple[str, str]] = []
    notes: list[str] = []

    def named(field: str, possible: frozenset[int], unknown: Iterable[str]) -> str:
        value = _level_name(possible)
        if value == ND:
            options = ", ".join(lv[i] for i in sorted(possible))
            reasons.append((field, _why(unknown, f"could be {options}; ")))
        return value

    sides = {s: _side(ex, s) for s in SIDES}
    sensory = Sided(*(named(f"sensory_level.{s}", sides[s].sensory, sides[s].sensory_unknown) for s in SIDES))
    motor = Sided(*(named(f"motor_level.{s}", sides[s].motor, sides[s].motor_unknown) for s in SIDES))
    nli_set = frozenset(min(a, b) for a in sides["left"].lowest for b in sides["right"].lowest)
    nli = named("neurological_level", nli_set, [*sides["left"].sensory_unknown, *sides["left"].motor_unknown,
                                                 *sides["right"].sensory_unknown, *sides["right"].motor_unknown])

    # sacral sparing
    sacral = {_sens_label(m, s, "S4-5"): ex.sens(m, s, "S4-5") for m in MODALITIES for s in SIDES}
    dap, vac = ex.sign("deep_anal_pressure"), ex.sign("voluntary_anal_contraction")
    sacral_sets = [_present(v) for v in sacral.values()]
    sensory_incomplete = _or(*sacral_sets, _present(dap))
    vac_set = _present(vac)
    complete_set = _not(_or(sensory_incomplete, vac_set))
    sacral_unknown = [k for k, v in {**sacral, _sign_label("deep_anal_pressure"): dap,
                                     _sign_label("voluntary_anal_contraction"): vac}.items() if v is None]
    complete: bool | str = next(iter(complete_set)) if len(complete_set) == 1 else ND
    if complete == ND:
        reasons.append(("complete", _why(sacral_unknown)))

    # impairment grade
    ais_unknown: list[str] = list(sacral_unknown)
    beyond = {}
    for s in SIDES:
        beyond[s], unk = _beyond_three(ex, s, sides[s].motor, nk[s])
        ais_unknown += unk + (list(sides[s].motor_unknown) if len(sides[s].motor) > 1 else [])
    beyond_any = _or(beyond["left"], beyond["right"])
    normal, normal_unknown = _all_normal(ex)
    half, half_unknown, vacuous = _half_rule(ex, nli_set)
    grades: set[str] = set()
    motor_incomplete: set[bool] = set()
    for si, v in product(sensory_incomplete, vac_set):  # keep the sacral findings consistent across the rules
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
        if len(nli_set) > 1 and True in motor_incomplete:
            ais_unknown += [u for s in SIDES for u in (*sides[s].sensory_unknown, *sides[s].motor_unknown)]
        reasons.append(("ais", _why(ais_unknown, f"could be {' or '.join(sorted(grades))}; ")))
    if ais == "E":
        notes.append("AIS E: every tested function is normal. The standard gives grade E only to a person who had "
                     "a deficit from spinal cord injury before; someone never injured gets no grade. Levels read "
                     "S4-5 here because sensation and motor function are normal throughout.")
    if ais == "D" and vacuous:
        notes.append("AIS D: no key muscle lies below the neurological level, so the at-least-half rule holds "
                     "without any muscle to count.")
    for s in SIDES:
        if nk[s] is not None and ais in ("C", "D") and vac is not True:
            notes.append(f"Non-key muscle function on the {s} at {lv[nk[s]]} entered the test for motor incompleteness "
                         "(B versus C), as the 2019 revision allows; it does not enter levels, scores or zones.")

    # zones of partial preservation
    def zone(field: str, applies: frozenset[bool] | None, possible, unknown, why_open: str) -> str:
        if applies == frozenset((False,)):
            return NA
        if applies != frozenset((True,)):
            reasons.append((field, why_open))
            return ND
        return named(field, possible, unknown)

    vac_open = f"{_sign_label('voluntary_anal_contraction')} not recorded, so it is open whether the zone applies"
    zpp_motor = Sided(*(zone(f"zpp.motor.{s}", _not(vac_set), *_zpp_motor(ex, s, sides[s].motor), vac_open)
                        for s in SIDES))
    zs = []
    for s in SIDES:
        side_sacral = [_present(ex.sens(m, s, "S4-5")) for m in MODALITIES]
        applies = _not(_or(_present(dap), *side_sacral))
        open_items = [k for k in (_sign_label("deep_anal_pressure"), *(_sens_label(m, s, "S4-5") for m in MODALITIES))
                      if k in sacral_unknown]
        zs.append(zone(f"zpp.sensory.{s}", applies, *_zpp_sensory(ex, s, sides[s].sensory),
                       _why(open_items, "open whether the zone applies; ")))
    zpp_sensory = Sided(*zs)

    # scores
    a = anatomy()
    uems, u1 = _score(ex, {s: [("motor", s, k) for k in UPPER] for s in SIDES}, 25)
    lems, u2 = _score(ex, {s: [("motor", s, k) for k in LOWER] for s in SIDES}, 25)
    lt, u3 = _score(ex, {s: [("sensory", "light_touch", s, d) for d in a.dermatomes] for s in SIDES}, 56)
    pp, u4 = _score(ex, {s: [("sensory", "pinprick", s, d) for d in a.dermatomes] for s in SIDES}, 56)
    for name, unk in (("uems", u1), ("lems", u2), ("light_touch", u3), ("pinprick", u4)):
        if unk:
            reasons.append((f"scores.{name}", _why(unk)))

    return Classification(sensory, motor, nli, complete, ais, zpp_sensory, zpp_motor, uems, lems, lt, pp,
                          tuple(reasons), tuple(notes))


# ---------------------------------------------------------------- text

def rows(c: Classification) -> list[tuple[str, str]]:
    """The classification in words, (what, value) pairs in reading order: what the text, the report and the
    notebook views show (no raw field names, no raw True/False)."""
    complete = {True: "yes (no sacral sparing)", False: "no (sacral sparing present)"}.get(
        c.complete, "not determinable (ND)")

    def sided(v: Sided) -> str:
        return f"left {_value_words(v.left)}, right {_value_words(v.right)}"

    return [
        ("Impairment grade (AIS)", _value_words(c.ais)),
        ("Neurological level of injury", _value_words(c.neurological_level)),
        ("Complete", complete),
        ("Sensory level", sided(c.sensory_level)),
        ("Motor level", sided(c.motor_level)),
        ("Zone of partial preservation, sensory", sided(c.zpp_sensory)),
        ("Zone of partial preservation, motor", sided(c.zpp_motor)),
        *((title, _score_words(s)) for title, s in (
            ("Upper-extremity motor score", c.uems), ("Lower-extremity motor score", c.lems),
            ("Light touch score", c.light_touch), ("Pinprick score", c.pinprick))),
    ]


def classification_line(c: Classification) -> str:
    """The classification on one line, in words: what the command line, the app, the report and the notebook views
    show of it (the one formatter)."""
    complete = {True: "complete", False: "incomplete"}.get(c.complete, "completeness not determinable")
    return (f"AIS {c.ais}, neurological level {c.neurological_level}, {complete}; sensory level "
            f"left {c.sensory_level.left} / right {c.sensory_level.right}; motor level left {c.motor_level.left} / "
            f"right {c.motor_level.right}; upper-extremity motor score {c.uems.total}, lower-extremity motor score "
            f"{c.lems.total}")


def _value_words(v) -> str:
    return {ND: "not determinable (ND)", NA: "does not apply (NA)"}.get(v, str(v))


def _score_words(s: Score) -> str:
    return f"left {s.left}, right {s.right}, total {s.total} (of {2 * s.maximum_per_side})"


def main_text(c: Classification) -> str:
    """Readable plain text of one classification, ending with the clinical caution."""
    lines = ["Classification by the ISNCSCI 2019 rules", *(f"{what}: {value}" for what, value in rows(c))]
    if c.reasons:
        lines.append("Not determinable (ND):")
        from .views import field_words

        lines += [f"  {field_words(field)}: {why}" for field, why in c.reasons]
    if c.notes:
        lines.append("Notes:")
        lines += [f"  {n}" for n in c.notes]
    lines.append(cautions.BANNER)
    return "\n".join(lines)
