"""What changed over a course: `follow(course) -> CourseReport`.

Per exam: the standard classification (`cordmap.classify`) and the ranking's leading hypothesis (`cordmap.rank`).
Between consecutive exams and from the first to the last: the change of every classification measure (grade
conversion, neurological, sensory and motor levels per side, motor and sensory scores, zones of partial
preservation), whether the leading hypothesis (family, side, rostral segment) stayed or moved, and the findings
that appeared, resolved or changed, in words. The alarms are `cordmap.course_alarms`.

Level changes are counted in segments on the classification's scale (C1, C2 .. S3, S4-5): "up" is rostral.
"""
from __future__ import annotations

import json
from dataclasses import dataclass

import numpy as np
import pandas as pd

from . import cautions as C
from .anatomy import anatomy
from .classify import AIS_GRADES, Classification
from .course import MEASURE_WORDS, UNIT_SHORT, Course, level_index, measures, parse_course
from .course_alarms import NOTE, Alarm, alarms
from .errors import CordmapError, bad_value
from .findings import Findings, item_label
from .hypotheses import _derived
from .items import SENSORY_SCALE, value_words, verdict
from .lesions import NORMAL, PATTERNS
from .rank import _ranges

FORMAT = "cordmap-course-report/1"
RANK_MODES = ("leader", "full", "none")
LEVEL_KINDS = ("nli", "sensory_level", "motor_level", "zpp_sensory", "zpp_motor")


@dataclass(frozen=True)
class Lead:
    """The leading hypothesis of one exam's ranking."""

    family: str
    pattern: str
    side: str
    top: str
    bottom: str
    probability: float
    words: str
    fit: str

    @property
    def key(self) -> tuple[str, str, str]:
        return (self.family, self.side, self.top)

    def to_dict(self) -> dict:
        return {"family": self.family, "pattern": self.pattern, "side": self.side, "top": self.top,
                "bottom": self.bottom, "probability": round(self.probability, 4), "describe": self.words,
                "fit": self.fit}


@dataclass(frozen=True)
class Change:
    measure: str
    side: str
    before: object
    after: object
    delta: float | None  # levels: segments (negative = rostral, "up"); grades: letters (positive = better); scores
    words: str

    def to_dict(self) -> dict:
        return {"measure": self.measure, "side": self.side, "before": self.before, "after": self.after,
                "delta": self.delta, "words": self.words}


@dataclass(frozen=True)
class Step:
    """From exam `first` to exam `last` (consecutive, or the whole course)."""

    first: int
    last: int
    changes: tuple[Change, ...]
    conversion: str  # "AIS B -> C (1 grade better)", "AIS C unchanged", or "" when a grade is ND
    lead: str  # "stayed: ...", "moved: ... -> ...", or "" when either exam has no ranking
    lead_moved: bool | None
    appeared: tuple[str, ...]
    resolved: tuple[str, ...]
    changed: tuple[str, ...]
    not_compared: int  # items recorded at only one of the two exams

    def to_dict(self) -> dict:
        return {"from_exam": self.first, "to_exam": self.last, "conversion": self.conversion,
                "changes": [c.to_dict() for c in self.changes], "lead": self.lead, "lead_moved": self.lead_moved,
                "appeared": list(self.appeared), "resolved": list(self.resolved), "changed": list(self.changed),
                "not_compared": self.not_compared}


@dataclass(frozen=True)
class CourseReport:
    course: Course
    classifications: tuple[Classification, ...]
    leads: tuple[Lead | None, ...]
    steps: tuple[Step, ...]
    overall: Step | None
    alarms: tuple[Alarm, ...]
    notes: tuple[str, ...]
    cautions: tuple[str, ...]

    def __repr__(self) -> str:
        n = sum(a.severity != NOTE for a in self.alarms)
        return f"CourseReport({len(self.course)} exams, {len(self.steps)} steps, {n} alarm{'s' * (n != 1)})"

    @property
    def urgent(self) -> tuple[Alarm, ...]:
        return tuple(a for a in self.alarms if a.severity != NOTE)

    @property
    def changes(self) -> pd.DataFrame:
        """One row per step and changed measure (consecutive steps, then first to last as step 'overall')."""
        rows = []
        for st in (*self.steps, *((self.overall,) if self.overall else ())):
            name = "overall" if st is self.overall else f"{st.first}->{st.last}"
            for c in st.changes:
                rows.append({"step": name, "from_exam": st.first, "to_exam": st.last,
                             "from_time": self.course.exams[st.first].time, "to_time": self.course.exams[st.last].time,
                             **c.to_dict()})
        return pd.DataFrame(rows, columns=["step", "from_exam", "to_exam", "from_time", "to_time", "measure", "side",
                                           "before", "after", "delta", "words"])

    def to_dict(self) -> dict:
        c = self.course
        return {"format": FORMAT, "label": c.label, "time_unit": c.time_unit, "since": c.since,
                "exams": [{"exam": i, "time": e.time, "phase": e.findings.phase, "label": e.findings.label,
                           "classification": k.to_dict(), "lead": lead.to_dict() if lead else None}
                          for i, (e, k, lead) in enumerate(zip(c.exams, self.classifications, self.leads))],
                "steps": [s.to_dict() for s in self.steps],
                "overall": self.overall.to_dict() if self.overall else None,
                "alarms": [a.to_dict() for a in self.alarms], "notes": list(self.notes),
                "cautions": list(self.cautions), "caution": C.BANNER}

    def to_json(self, indent: int | None = 2) -> str:
        return json.dumps(self.to_dict(), indent=indent)

    def text(self) -> str:
        from .course_text import report_text

        return report_text(self)


# ---------------------------------------------------------------- computing

def _lead(ranking) -> Lead | None:
    if ranking is None or ranking.fit == "empty" or not ranking.hypotheses:
        return None
    h = ranking.hypotheses[0]
    lz = h.lesion
    fam = PATTERNS[lz.pattern].family if lz.pattern in PATTERNS else lz.pattern
    return Lead(fam, lz.pattern, lz.side, lz.top, lz.bottom, h.probability, lz.describe(), ranking.fit)


def scored(exams: list[Findings]) -> list[tuple | None]:
    """(atlas, log posterior unnormalised) of every exam with something entered, None for an empty one. The exams
    of one phase share one gather of their recorded atlas rows and one matrix product."""
    from . import atlas as atlas_mod
    from . import clues, nerves
    from .rank import evidence, size_prior

    out: list[tuple | None] = [None] * len(exams)
    for phase in ("chronic", "acute"):
        sel = [k for k, f in enumerate(exams) if f.phase == phase and f.items]
        if not sel:
            continue
        at = atlas_mod.get(phase)
        ev = [evidence(exams[k], at) for k in sel]
        union, inverse = np.unique(np.concatenate([cols for cols, _, _ in ev]), return_inverse=True)
        weights = np.zeros((len(sel), len(union)), dtype=np.float32)
        start = 0
        for row, (cols, _, w) in enumerate(ev):
            np.add.at(weights[row], inverse[start:start + len(cols)], w)
            start += len(cols)
        scores = weights @ np.asarray(at.logp[union]) + size_prior(at)[None, :]
        for row, k in enumerate(sel):
            lp = scores[row]
            clue = clues.log_likelihood(exams[k], at)  # tenderness and band pain (findings format 2), as rank
            if clue is not None:
                lp = lp + clue
            hidden = nerves.unseen(at, [at.item_index[key] for key in ev[row][1]])  # nerve lesions unseen
            if hidden is not None:
                lp = lp + hidden
            out[k] = (at, lp)
    return out


def fast_leads(exams: list[Findings], scores: list[tuple | None] | None = None) -> list[Lead | None]:
    """Each exam's leading hypothesis as `rank` lists it, without the parts a course does not show (next tests,
    the two-lesion check, explanations), from `scored`. Fit is 'normal' when the normal cord leads, else 'lesion'
    (as `cordmap batch` says it)."""
    from .rank import _softmax, leading_hypotheses

    out: list[Lead | None] = [None] * len(exams)
    for k, hit in enumerate(scored(exams) if scores is None else scores):
        if hit is None:
            continue
        at, lp = hit
        members, prob = leading_hypotheses(lp, _softmax(lp.astype(np.float64)), _derived(at), 1)[0]
        lz = at.lesion(int(members[0]))
        out[k] = Lead(PATTERNS[lz.pattern].family, lz.pattern, lz.side, lz.top, lz.bottom, float(prob),
                      lz.describe(), "normal" if lz.pattern == NORMAL else "lesion")
    return out


def _lead_words(a: Lead | None, b: Lead | None) -> tuple[str, bool | None]:
    if a is None or b is None:
        return "", None
    if a.key == b.key:
        return f"stayed: {_family_words(b)}", False
    segs = anatomy().segments
    how = ""
    if a.family == b.family and a.side == b.side and NORMAL not in (a.pattern, b.pattern):
        d = segs.index(b.top) - segs.index(a.top)
        how = f" ({abs(d)} segment{'s' * (abs(d) != 1)} {'up' if d < 0 else 'down'})"
    return f"moved: {_family_words(a)} -> {_family_words(b)}{how}", True


def _family_words(lead: Lead) -> str:
    if lead.pattern == NORMAL:
        return "no lesion (normal cord)"
    side = "" if lead.side == "both" else f"{lead.side} "
    return f"{side}{lead.family.replace('_', ' ')} from {lead.top}"


def _change(measure: str, side: str, a, b) -> Change | None:
    if a == b:
        return None
    name = f"{MEASURE_WORDS[measure]} {side}".strip() if side not in ("", "total") else MEASURE_WORDS[measure]
    if measure in LEVEL_KINDS:
        ia, ib = level_index(a), level_index(b)
        if ia is not None and ib is not None:
            d = ib - ia
            return Change(measure, side, a, b, float(d),
                          f"{name} {a} -> {b} ({abs(d)} segment{'s' * (abs(d) != 1)} {'up' if d < 0 else 'down'})")
        return Change(measure, side, a, b, None, f"{name} {a} -> {b}")
    if measure == "ais":
        if a in AIS_GRADES and b in AIS_GRADES:
            d = AIS_GRADES.index(b) - AIS_GRADES.index(a)
            return Change(measure, side, a, b, float(d), f"AIS {a} -> {b} ({abs(d)} grade{'s' * (abs(d) != 1)} "
                          f"{'better' if d > 0 else 'worse'})")
        return Change(measure, side, a, b, None, f"AIS {a} -> {b}")
    if measure == "complete":
        w = {True: "complete", False: "incomplete"}
        return Change(measure, side, a, b, None, f"{w.get(a, a)} -> {w.get(b, b)}")
    if isinstance(a, int) and isinstance(b, int):
        return Change(measure, side, a, b, float(b - a), f"{name} {a} -> {b} ({b - a:+d})")
    return Change(measure, side, a, b, None, f"{name} {a} -> {b}")


def _conversion(a: Classification, b: Classification) -> str:
    if a.ais not in AIS_GRADES or b.ais not in AIS_GRADES:
        return ""
    d = AIS_GRADES.index(b.ais) - AIS_GRADES.index(a.ais)
    if d == 0:
        return f"AIS {a.ais} unchanged"
    return f"AIS {a.ais} -> {b.ais} ({abs(d)} grade{'s' * (abs(d) != 1)} {'better' if d > 0 else 'worse'})"


def _findings_words(fa: Findings, fb: Findings) -> tuple[tuple[str, ...], tuple[str, ...], tuple[str, ...], int]:
    appeared, resolved, changed = [], [], []
    groups: dict[tuple, list[str]] = {}
    order: list[tuple] = []
    keys = set(fa.items) | set(fb.items)
    both = [k for k in fa.items if k in fb.items]
    for k in both:
        va, vb = fa.items[k], fb.items[k]
        ab_a, ab_b = verdict(k, va), verdict(k, vb)
        if va == vb or ab_a is None or ab_b is None:  # "NT": not tested is neither normal nor abnormal
            continue
        kind = "appeared" if ab_b and not ab_a else "resolved" if ab_a and not ab_b else "changed"
        if k[0] == "sensory":
            g = (kind, k[1], k[2], va, vb)
            if g not in groups:
                order.append(g)
            groups.setdefault(g, []).append(k[3])
            continue
        words = f"{item_label(k)}: {value_words(k, va)} -> {value_words(k, vb)}"
        {"appeared": appeared, "resolved": resolved, "changed": changed}[kind].append(words)
    sensory: dict[str, list[str]] = {"appeared": [], "resolved": [], "changed": []}
    for g in order:
        kind, mod, side, va, vb = g
        sensory[kind].append(f"{mod.replace('_', ' ')} {side} {_ranges(groups[g])}: {SENSORY_SCALE.word(va)}"
                             f" -> {SENSORY_SCALE.word(vb)}")
    return (tuple(sensory["appeared"] + appeared), tuple(sensory["resolved"] + resolved),
            tuple(sensory["changed"] + changed), len(keys) - len(both))


def _step(course: Course, cls, leads, i: int, j: int) -> Step:
    ma, mb = measures(cls[i]), measures(cls[j])
    changes = tuple(c for (m, s, a), (_, _, b) in zip(ma, mb) if (c := _change(m, s, a, b)) is not None)
    lead, moved = _lead_words(leads[i], leads[j])
    app, res, chg, nc = _findings_words(course.exams[i].findings, course.exams[j].findings)
    return Step(i, j, changes, _conversion(cls[i], cls[j]), lead, moved, app, res, chg, nc)


def follow(course, rank: str = "leader", rankings: list | None = None) -> CourseReport:
    """Classify every exam of `course` (a `Course`, a course document, or a `pathlib.Path`), find its leading
    hypothesis, compare the exams and raise the alarms.

    ``rank``: "leader" (default) finds each exam's leading hypothesis as `cordmap.rank` lists it, without next
    tests or the two-lesion check (fit 'lesion' or 'normal'); "full" runs `cordmap.rank` on every exam (fit 'good',
    'poor', 'normal'; several times slower); "none" skips it. ``rankings``: rankings already made, one per exam
    (None where missing), used as they are."""
    course = parse_course(course)
    cls = course.classifications
    if rank not in RANK_MODES:
        raise bad_value("rank", rank, RANK_MODES, "ranking mode")
    exams = list(course.findings)
    scores = scored(exams)  # every exam's posterior: the cautions fit each exam, whatever `rank` says
    if rankings is not None:
        if len(rankings) != len(course):
            raise CordmapError(f"rankings: {len(rankings)} given for {len(course)} exams; give one per exam")
        leads = tuple(_lead(r) for r in rankings)
    elif rank == "full":
        from .rank import rank as full_rank

        leads = tuple(_lead(full_rank(e.findings, top=3, next_tests=0, classify=False)) for e in course.exams)
    elif rank == "leader":
        leads = tuple(fast_leads(exams, scores))
    else:
        leads = (None,) * len(course)
    steps = tuple(_step(course, cls, leads, j - 1, j) for j in range(1, len(course)))
    overall = _step(course, cls, leads, 0, len(course) - 1) if len(course) > 2 else None
    al = alarms(course, cls)
    notes = []
    if len(course) == 1:
        notes.append("One exam: nothing to compare yet; add a later exam to follow the course.")
    unit = UNIT_SHORT[course.time_unit]
    for k, c in enumerate(cls):
        if "ND" in (c.ais, c.neurological_level):
            notes.append(f"Exam at {course.exams[k].time:g} {unit}: grade or neurological level not determinable "
                         "(items not examined); changes involving it are not computed.")
    return CourseReport(course, cls, leads, steps, overall, al, tuple(notes),
                        course_cautions(course, cls, al, scores))


def course_cautions(course: Course, cls, al, scores=None) -> tuple[str, ...]:
    """The cautions that fit this course: those `cautions.applicable` fits to each exam (its posterior from
    `scored`, its classification), then those of the alarms; the decision-support line first (`cautions.combined`)."""
    from .rank import _softmax

    exams = list(course.findings)
    scores = scored(exams) if scores is None else scores
    fitted = [() if hit is None else C.applicable(hit[0], _softmax(hit[1].astype(np.float64)), f, c)
              for hit, f, c in zip(scores, exams, cls)]
    return C.combined(*fitted, *(a.cautions for a in al))
