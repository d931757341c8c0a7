"""Alarms over a course: the changes between exams that call for urgency.

Every rule is a function of two classified exams (and their findings); its thresholds are constants here, each with
where it comes from. An alarm says what changed, the rule, its source, what it means for urgency, and the cautions
(`cordmap.cautions`) that fit it.

Rules
-----
* ``level_ascent``: a sensory or motor level (either side) 2 or more segments more rostral than at the exam before;
  or, when no single step was that large, 2 or more segments above the first exam's (a slow climb).
* ``breathing``: any ascent of a level (sensory, motor or neurological) that ends at C5 or above.
* ``became_complete``: an incomplete exam followed by a complete one (sacral sparing lost).
* ``grade_fell``: the impairment grade (AIS) one or more letters worse, when the exam did not become complete.
* ``sacral_loss``: voluntary anal contraction or deep anal pressure present before and absent now, light touch or
  pinprick at S4-5 felt before and absent now (a side), or a bladder that was not in retention now in retention.
* ``motor_fall``: the total motor score (UEMS + LEMS) lower by more than `MOTOR_TOTAL_NOISE` points, or one key
  muscle lower by `MUSCLE_GRADE_NOISE` grades or more.
* ``spinal_shock`` (a note, not an alarm): for a course with acute-phase exams, what spinal shock explains (reflexes
  lost or returning, a silent bulbocavernosus reflex) and what it does not (every alarm above).
"""
from __future__ import annotations

from dataclasses import dataclass

from . import cautions as C
from .anatomy import SIDES, anatomy
from .classify import AIS_GRADES, Classification, levels
from .course import UNIT_SHORT, Course, level_index
from .findings import Findings, item_label

# Thresholds and their sources.
ASCENT_SEGMENTS = 2  # the rule; a one-segment shift is within the level's charting noise (from memory:
# dermatome boundaries overlap by about a segment, and examiners' levels differ by one level often)
ASCENT_SOURCE = ("a shift of 2 or more segments: common clinical practice, no source; a level rising from the feet "
                 "toward the lesion as the sign of an expanding extramedullary compression: Guttmann, Spinal Cord "
                 "Injuries: Comprehensive Management and Research (p. 263)")
BREATHING_LEVEL = "C5"  # the diaphragm is C3-C5 (clinical-check-values.md section 6: BR16 Breathe 2016; phrenic CP)
BREATHING_SOURCE = ("diaphragm C3-C5; C1-C3 usually ventilator-dependent, C3-C4 diaphragm impaired, C5 usually "
                    "independent: Breathe (ERS) 2016, Table 2")
COMPLETE_SOURCE = ("complete = no sacral sparing (no S4-5 light touch or pinprick, no deep anal pressure, no voluntary "
                   "anal contraction): ISNCSCI 2019 revision, Rupp et al., Top Spinal Cord Inj Rehabil 2021")
GRADE_SOURCE = "a worse AIS grade between exams: common clinical practice, no source"
SACRAL_SOURCE = ("sacral sparing items as ISNCSCI defines them (2019 revision, Rupp et al. 2021); new sphincter "
                 "failure as a red flag of conus or cauda equina compression: common clinical practice, no source")
MOTOR_TOTAL_NOISE = 5  # points of 100 (UEMS + LEMS)
MUSCLE_GRADE_NOISE = 2  # MRC grades in one key muscle
MOTOR_SOURCE = ("inter-rater noise assumed: 5 points of the total motor score (of 100) and 1 grade in one key "
                "muscle. From memory, not rechecked: reliability studies of the ISNCSCI motor exam (Savic et al., "
                "Spinal Cord 2007;45:444-51; Marino et al., J Spinal Cord Med 2008;31:166-70) found high agreement "
                "for total scores with differences of a few points between examiners, and one-grade differences in "
                "single muscles common")
SHOCK_SOURCE = ("spinal shock takes reflexes and tone below the lesion, not sensation or voluntary power, and "
                "resolves over days to weeks, the bulbocavernosus reflex among the first to return: from memory "
                "(Ditunno et al., Spinal shock revisited: a four-phase model, Spinal Cord 2004;42:383-95); the "
                "exam at 72 hours predicts better than earlier ones (from memory: Brown et al., Arch Phys Med "
                "Rehabil 1991)")
NOT_SHOCK = ("Spinal shock does not explain this: it takes reflexes and tone, not sensation or voluntary power "
             "that were present before, and it does not make a level climb.")

URGENT, WATCH, NOTE = "urgent", "watch", "note"


@dataclass(frozen=True)
class Alarm:
    rule: str
    exam: int  # index of the exam where it is seen (the later of the two)
    time: float
    severity: str  # "urgent", "watch" or "note"
    what: str  # what changed, in words
    meaning: str  # what it means for urgency
    source: str
    cautions: tuple[str, ...] = ()
    since: int = -1  # index of the exam compared with (-1: none)

    def __repr__(self) -> str:
        return f"Alarm({self.rule}, exam {self.exam}, {self.severity})"

    def to_dict(self) -> dict:
        return {"rule": self.rule, "exam": self.exam, "since_exam": self.since, "time": self.time,
                "severity": self.severity, "what": self.what, "meaning": self.meaning, "source": self.source,
                "cautions": list(self.cautions)}


LEVEL_FIELDS = (("sensory_level", "sensory level"), ("motor_level", "motor level"))


def _levels(c: Classification) -> dict[tuple[str, str], int | None]:
    out = {}
    for name, _ in LEVEL_FIELDS:
        sided = getattr(c, name)
        for s in SIDES:
            out[(name, s)] = level_index(getattr(sided, s))
    out[("nli", "")] = level_index(c.neurological_level)
    return out


def _words(name: str, side: str) -> str:
    w = dict(LEVEL_FIELDS).get(name, "neurological level")
    return f"{w} {side}".strip()


def _shock_clause(course: Course, i: int, j: int) -> str:
    acute = course.exams[i].findings.phase == "acute" or course.exams[j].findings.phase == "acute"
    return f" {NOT_SHOCK}" if acute else ""


def _ascent(course: Course, cls, j: int, raised: set) -> list[Alarm]:
    lv = levels()
    i = j - 1
    before, now, first = _levels(cls[i]), _levels(cls[j]), _levels(cls[0])
    steps, creeps, breath = [], [], []
    for key in before:
        a, b, f0 = before[key], now[key], first[key]
        if b is None:
            continue
        if a is not None and a - b >= ASCENT_SEGMENTS and key[0] != "nli":
            steps.append(f"{_words(*key)} {lv[a]} -> {lv[b]} ({a - b} segments up)")
            raised.add(key)
        elif (f0 is not None and i > 0 and f0 - b >= ASCENT_SEGMENTS and key not in raised and key[0] != "nli"
              and (a is None or b < a)):
            creeps.append(f"{_words(*key)} {lv[f0]} at the first exam -> {lv[b]} ({f0 - b} segments up)")
            raised.add(key)
        if a is not None and b < a and b <= lv.index(BREATHING_LEVEL):
            breath.append(f"{_words(*key)} {lv[a]} -> {lv[b]}")
    out = []
    shock = _shock_clause(course, i, j)
    t = course.exams[j].time
    unit = UNIT_SHORT[course.time_unit]
    span = f"{course.exams[j].time - course.exams[i].time:g} {unit}"
    if steps:
        out.append(Alarm("level_ascent", j, t, URGENT, f"level climbed within {span}: " + "; ".join(steps),
                         "A level that climbs between exams means a lesion that is growing (an expanding "
                         "compression, bleeding, swelling or inflammation): urgent imaging and a surgical opinion "
                         "now, not at the next round." + shock, ASCENT_SOURCE, (C.EMERGENCY,), i))
    if creeps:
        out.append(Alarm("level_ascent", j, t, URGENT, "level climbed over several exams: " + "; ".join(creeps),
                         "Each step was small, but the level has climbed since the first exam: the lesion is "
                         "growing. Urgent imaging and a surgical opinion." + shock, ASCENT_SOURCE, (C.EMERGENCY,), 0))
    if breath:
        out.append(Alarm("breathing", j, t, URGENT,
                         f"level climbed to {BREATHING_LEVEL} or above: " + "; ".join(breath),
                         "The lesion now reaches the segments of the diaphragm: measure vital capacity and watch the "
                         "airway now; call for airway support early." + shock, BREATHING_SOURCE,
                         (C.BREATHING, C.EMERGENCY), i))
    return out


def _completeness(course: Course, cls, j: int) -> list[Alarm]:
    i = j - 1
    a, b = cls[i], cls[j]
    t = course.exams[j].time
    shock = _shock_clause(course, i, j)
    if a.complete is False and b.complete is True:
        return [Alarm("became_complete", j, t, URGENT, f"incomplete ({a.ais}) became complete ({b.ais}): sacral "
                      "sparing lost", "An incomplete lesion that becomes complete is a worsening that changes the "
                      "plan and the outlook: urgent imaging and a surgical opinion." + shock, COMPLETE_SOURCE,
                      (C.EMERGENCY,), i)]
    if a.ais in AIS_GRADES and b.ais in AIS_GRADES and AIS_GRADES.index(b.ais) < AIS_GRADES.index(a.ais):
        return [Alarm("grade_fell", j, t, URGENT, f"impairment grade fell from AIS {a.ais} to AIS {b.ais}",
                      "A worse grade between exams means the cord is losing function: re-examine now and seek "
                      "urgent imaging." + shock, GRADE_SOURCE, (C.EMERGENCY,), i)]
    return []


def _sacral(course: Course, cls, j: int) -> list[Alarm]:
    i = j - 1
    fa, fb = course.exams[i].findings, course.exams[j].findings
    lost = []
    for name in ("voluntary_anal_contraction", "deep_anal_pressure"):
        if fa.get(("sign", name, "")) is True and fb.get(("sign", name, "")) is False:
            lost.append(f"{name.replace('_', ' ')} lost")
    for s in SIDES:
        for mod in ("light_touch", "pinprick"):
            key = ("sensory", mod, s, "S4-5")
            if (fa.get(key) or 0) > 0 and fb.get(key) == 0:
                lost.append(f"{item_label(key)} lost")
    before, now = fa.get(("sign", "bladder", "")), fb.get(("sign", "bladder", ""))
    if before in ("normal", "urgency") and now == "retention":
        lost.append(f"bladder {before} -> retention")
    if not lost:
        return []
    # the cauda equina caution only where the sensory levels leave the lesion in the lumbosacral region
    low = [level_index(getattr(cls[j].sensory_level, s)) for s in SIDES]
    lumbosacral = all(x is None or x >= levels().index("T12") for x in low)
    return [Alarm("sacral_loss", j, course.exams[j].time, URGENT, "new sacral loss: " + "; ".join(lost),
                  "New loss of sacral function means the lesion is taking the sacral pathways (a cord lesion "
                  "growing toward complete, or the conus or cauda equina): an emergency, urgent imaging and a "
                  "surgical opinion." + _shock_clause(course, i, j), SACRAL_SOURCE,
                  (C.EMERGENCY, CAUDA_EQUINA) if lumbosacral else (C.EMERGENCY,), i)]


CAUDA_EQUINA = "Cauda equina syndrome is a surgical emergency: urgent imaging of the lumbosacral spine."


def _motor(course: Course, cls, j: int) -> list[Alarm]:
    i = j - 1
    a, b = cls[i], cls[j]
    fa, fb = course.exams[i].findings, course.exams[j].findings
    parts = []
    ta = [s.total for s in (a.uems, a.lems)]
    tb = [s.total for s in (b.uems, b.lems)]
    if all(isinstance(x, int) for x in (*ta, *tb)) and sum(ta) - sum(tb) > MOTOR_TOTAL_NOISE:
        parts.append(f"total motor score {sum(ta)} -> {sum(tb)} (down {sum(ta) - sum(tb)}, more than the "
                     f"{MOTOR_TOTAL_NOISE} points assumed as examiner noise)")
    fell = []
    for s in SIDES:
        for m in anatomy().key_myotomes:
            ga, gb = fa.get(("motor", s, m)), fb.get(("motor", s, m))
            if isinstance(ga, int) and isinstance(gb, int) and ga - gb >= MUSCLE_GRADE_NOISE:
                fell.append(f"{s} {m} {ga} -> {gb}")
    if fell:
        more = f" and {len(fell) - 4} more" if len(fell) > 4 else ""
        parts.append(f"{len(fell)} key muscle{'s' * (len(fell) != 1)} down {MUSCLE_GRADE_NOISE} grades or more "
                     f"({', '.join(fell[:4])}{more})")
    if not parts:
        return []
    return [Alarm("motor_fall", j, course.exams[j].time, URGENT, "voluntary power fell: " + "; ".join(parts),
                  "Power falling beyond examiner noise means the lesion is worsening: re-examine now (one examiner "
                  "if possible) and seek urgent imaging." + _shock_clause(course, i, j), MOTOR_SOURCE,
                  (C.EMERGENCY,), i)]


def _reflex_changes(fa: Findings, fb: Findings) -> list[str]:
    out = []
    for key, vb in fb.items.items():
        if key[0] == "reflex" or key[:2] == ("sign", "bulbocavernosus"):
            va = fa.get(key)
            if va is not None and va != vb:
                out.append(f"{item_label(key)} {va} -> {vb}")
    return out


def _shock(course: Course, alarms: list[Alarm]) -> list[Alarm]:
    acute = [k for k, e in enumerate(course.exams) if e.findings.phase == "acute"]
    if not acute:
        return []
    explained = []
    for j in range(1, len(course)):
        if course.exams[j - 1].findings.phase == "acute":
            explained += [f"{c} ({course.when(j - 1)} -> {course.when(j)})"
                          for c in _reflex_changes(course.exams[j - 1].findings, course.exams[j].findings)]
    not_explained = sorted({a.rule.replace("_", " ") for a in alarms if any(
        course.exams[k].findings.phase == "acute" for k in (a.since, a.exam) if k >= 0)})
    when = ", ".join(course.when(k) for k in acute)
    what = (f"acute phase (spinal shock) at {when}: absent reflexes, flaccid tone and a silent bulbocavernosus reflex "
            "below the lesion are expected and are not a worsening")
    if explained:
        what += "; reflex changes shock accounts for (it ending or evolving): " + "; ".join(explained[:8])
        if len(explained) > 8:
            what += f" and {len(explained) - 8} more"
    meaning = ("Grade and levels of an exam in spinal shock may still change as it resolves; the exam at about 72 "
               "hours is the better baseline for the outlook.")
    meaning += (f" Not explained by shock, so still urgent: {', '.join(not_explained)}." if not_explained else
                " Shock does not explain a level that climbs, sensation or voluntary power lost after they were "
                "present, or new sacral loss; none of these was seen.")
    return [Alarm("spinal_shock", acute[-1], course.exams[acute[-1]].time, NOTE, what, meaning, SHOCK_SOURCE, ())]


def alarms(course: Course, cls: tuple[Classification, ...] | None = None) -> tuple[Alarm, ...]:
    """Every alarm of the course, in exam order (the spinal-shock note last)."""
    cls = cls if cls is not None else course.classifications
    out: list[Alarm] = []
    raised: set = set()
    for j in range(1, len(course)):
        out += _ascent(course, cls, j, raised)
        out += _completeness(course, cls, j)
        out += _sacral(course, cls, j)
        out += _motor(course, cls, j)
    return tuple(out + _shock(course, out))
