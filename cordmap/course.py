"""A course: serial exams of one anonymous patient (format ``cordmap-course/1``).

A course is an ordered series of findings documents, each with a time relative to the onset or to the first exam,
in hours or in days. It holds no dates and no identifiers: only times since a reference point.

The document::

    {"format": "cordmap-course/1", "label": "free text, never an identifier",
     "time_unit": "hours",            # or "days"
     "since": "onset",                # or "first_exam" (then the first exam is at time 0)
     "exams": [{"time": 0, "findings": {...a cordmap-findings/1 document...}},
               {"time": 12, "file": "exam-12h.json"}]}

Rules (each broken rule is a one-line `CordmapError` naming where):

* at least one exam (one exam is a valid course: nothing to compare, and the report says so), at most `MAX_EXAMS`;
* times are numbers >= 0, strictly increasing in the order written (two exams at one time are refused: which one
  is the later?);
* an exam gives its findings inline (``findings``) or by a relative path (``file``), never both. The path is read
  relative to the course file's folder and may not leave it: absolute paths, ``..`` steps that climb out and links
  that point outside are refused (a course file handed on should not read other files of the machine). A course
  given as a mapping reads files only when the caller passes ``base``, the folder they are relative to;
* phases: exams run from the acute phase (spinal shock) to the chronic, never back: an acute exam after a chronic
  one is refused (a new injury starts a new course). Acute and chronic exams may be mixed in that order; each exam
  is ranked against the atlas of its own phase.

`Course.table` is the tidy view for researchers: one row per exam and measure of the standard classification.
"""
from __future__ import annotations

import json
import math
import os
from dataclasses import dataclass
from functools import cached_property
from pathlib import Path

import pandas as pd

from .classify import AIS_GRADES, NA, ND, Classification, classify, levels
from .errors import CordmapError, bad_value, shown
from .files import MAX_FINDINGS_BYTES, read_bounded
from .findings import Findings, loads, parse
from .findings import read as read_findings
from .findings_document import _known, _mapping

FORMAT = "cordmap-course/1"
TIME_UNITS = ("hours", "days")
SINCE = ("onset", "first_exam")
MAX_EXAMS = 100  # a course is a handful of exams; this bounds the work a file can ask for
MAX_COURSE_BYTES = MAX_FINDINGS_BYTES
UNIT_SHORT = {"hours": "h", "days": "d"}
HOURS_PER = {"hours": 1.0, "days": 24.0}


@dataclass(frozen=True)
class Exam:
    """One exam of a course: its time (in the course's unit) and its findings."""

    time: float
    findings: Findings

    def __repr__(self) -> str:
        return f"Exam(t={self.time:g}, {len(self.findings.items)} items, {self.findings.phase})"


def _time(value, where: str) -> float:
    if isinstance(value, bool) or not isinstance(value, (int, float)):
        raise CordmapError(f"{where}: expected a number of hours or days >= 0, got {shown(value, 40)}")
    t = float(value)
    if not math.isfinite(t) or t < 0:
        raise CordmapError(f"{where}: {shown(value, 40)} is not a time >= 0")
    return t


@dataclass(frozen=True)
class Course:
    """Serial exams of one anonymous patient; see the module doc for the rules checked on construction.

    ``Course([(0, f0), (12, f1)], time_unit="hours")``: exams as (time, findings) pairs or `Exam` values; findings
    as anything `cordmap.findings.parse` takes (a `Findings`, a mapping, JSON text, a `pathlib.Path`)."""

    exams: tuple[Exam, ...]
    time_unit: str = "hours"
    since: str = "onset"
    label: str = ""

    def __post_init__(self):
        if self.time_unit not in TIME_UNITS:
            raise bad_value("time_unit", self.time_unit, TIME_UNITS, "time unit")
        if self.since not in SINCE:
            raise bad_value("since", self.since, SINCE, "reference point")
        if not isinstance(self.label, str):
            raise CordmapError(f"label: expected text, got {shown(self.label, 40)}")
        try:
            raw = list(self.exams)
        except TypeError:
            raise CordmapError(f"exams: expected a list of (time, findings), got {shown(self.exams, 40)}") from None
        if not raw:
            raise CordmapError("exams: a course needs at least one exam")
        if len(raw) > MAX_EXAMS:
            raise CordmapError(f"exams: {len(raw)} exams is over the limit of {MAX_EXAMS} for one course")
        exams = []
        for i, e in enumerate(raw):
            if isinstance(e, Exam):
                exams.append(Exam(_time(e.time, f"exams[{i}].time"), parse(e.findings)))
                continue
            if not isinstance(e, (tuple, list)) or len(e) != 2:
                raise CordmapError(f"exams[{i}]: expected an Exam or a (time, findings) pair, got {shown(e, 40)}")
            exams.append(Exam(_time(e[0], f"exams[{i}].time"), parse(e[1])))
        _check_order(exams, self.time_unit, self.since)
        object.__setattr__(self, "exams", tuple(exams))

    def __repr__(self) -> str:
        u = UNIT_SHORT[self.time_unit]
        span = f"t={self.exams[0].time:g}{u}" if len(self.exams) == 1 else \
            f"t={self.exams[0].time:g}-{self.exams[-1].time:g}{u}"
        lab = f", {self.label[:37] + '...' if len(self.label) > 40 else self.label!r}" if self.label else ""
        return f"Course({len(self.exams)} exam{'s' * (len(self.exams) != 1)}, {span} since {self.since}{lab})"

    def __len__(self) -> int:
        return len(self.exams)

    @property
    def times(self) -> tuple[float, ...]:
        """The exams' times, in `time_unit`, first to last."""
        return tuple(e.time for e in self.exams)

    @property
    def findings(self) -> tuple[Findings, ...]:
        """The exams' findings, first to last."""
        return tuple(e.findings for e in self.exams)

    def when(self, i: int) -> str:
        """The time of exam `i` in words, e.g. '12 h'."""
        return f"{self.exams[i].time:g} {UNIT_SHORT[self.time_unit]}"

    def add(self, time: float, findings) -> Course:
        """A new course with one more exam at the end (its time must be later than the last)."""
        return Course((*self.exams, (time, findings)), self.time_unit, self.since, self.label)

    @cached_property
    def classifications(self) -> tuple[Classification, ...]:
        """The ISNCSCI classification of each exam."""
        return tuple(classify(e.findings) for e in self.exams)

    @cached_property
    def table(self) -> pd.DataFrame:
        """One row per exam and measure: exam (0-based), time, time_unit, phase, measure, side, value (as the
        classification gives it: a level name, a grade letter, a score, "ND"/"NA") and numeric (levels as their
        index C1 = 0 .. S4-5 = 28, so a smaller number is more rostral; grades A = 0 .. E = 4; scores as they are;
        NaN where the value is not a number)."""
        rows = []
        for i, (e, c) in enumerate(zip(self.exams, self.classifications)):
            for measure, side, value in measures(c):
                rows.append((i, e.time, self.time_unit, e.findings.phase, measure, side, value,
                             numeric(measure, value)))
        return pd.DataFrame(rows, columns=["exam", "time", "time_unit", "phase", "measure", "side", "value",
                                           "numeric"])

    def to_document(self) -> dict:
        """The course document, every exam inline."""
        return {"format": FORMAT, "label": self.label, "time_unit": self.time_unit, "since": self.since,
                "exams": [{"time": e.time if e.time != int(e.time) else int(e.time),
                           "findings": e.findings.to_dict()} for e in self.exams]}

    def to_json(self, indent: int | None = 2) -> str:
        """The course document (`to_document`) as JSON text."""
        return json.dumps(self.to_document(), indent=indent)

    def report(self, **kw):
        """What changed over the course and the alarms (`cordmap.course_report.follow`)."""
        from .course_report import follow

        return follow(self, **kw)


def _check_order(exams: list[Exam], unit: str, since: str) -> None:
    u = UNIT_SHORT[unit]
    if since == "first_exam" and exams[0].time != 0:
        raise CordmapError(f"exams[0].time: {exams[0].time:g} {unit}; a course timed since the first exam starts "
                           "at 0 (or time it since onset)")
    for i in range(1, len(exams)):
        a, b = exams[i - 1], exams[i]
        if b.time <= a.time:
            raise CordmapError(f"exams[{i}].time: {b.time:g} {u} is not later than exams[{i - 1}] at {a.time:g} {u}; "
                               "exams must be in time order, one exam per time")
        if a.findings.phase == "chronic" and b.findings.phase == "acute":
            raise CordmapError(f"exams[{i}].phase: 'acute' after a 'chronic' exam (exams[{i - 1}] at {a.time:g} {u});"
                               " a course runs from the acute phase to the chronic, not back: start a new course "
                               "for a new injury")


# ---------------------------------------------------------------- measures of one classification

LEVEL_MEASURES = ("sensory_level", "motor_level", "zpp_sensory", "zpp_motor")
SCORE_MEASURES = ("uems", "lems", "light_touch", "pinprick")
MEASURE_WORDS = {"ais": "impairment grade (AIS)", "complete": "completeness", "nli": "neurological level",
                 "sensory_level": "sensory level", "motor_level": "motor level",
                 "zpp_sensory": "sensory zone of partial preservation",
                 "zpp_motor": "motor zone of partial preservation",
                 "uems": "upper-extremity motor score", "lems": "lower-extremity motor score",
                 "light_touch": "light-touch score", "pinprick": "pinprick score"}


def measures(c: Classification) -> list[tuple[str, str, object]]:
    """(measure, side, value) of one classification; side "" for whole-body measures, "total" for score totals."""
    out: list[tuple[str, str, object]] = [("ais", "", c.ais), ("complete", "", c.complete),
                                          ("nli", "", c.neurological_level)]
    for name, sided in (("sensory_level", c.sensory_level), ("motor_level", c.motor_level),
                        ("zpp_sensory", c.zpp_sensory), ("zpp_motor", c.zpp_motor)):
        out += [(name, "left", sided.left), (name, "right", sided.right)]
    for name, score in (("uems", c.uems), ("lems", c.lems), ("light_touch", c.light_touch),
                        ("pinprick", c.pinprick)):
        out += [(name, "left", score.left), (name, "right", score.right), (name, "total", score.total)]
    return out


def level_index(value) -> int | None:
    """C1 = 0 .. S4-5 = 28; None for "ND", "NA" or anything else."""
    lv = levels()
    return lv.index(value) if isinstance(value, str) and value in lv else None


def numeric(measure: str, value) -> float:
    if measure == "ais":
        return float(AIS_GRADES.index(value)) if value in AIS_GRADES else math.nan
    if measure == "complete":
        return float(value) if isinstance(value, bool) else math.nan
    if measure == "nli" or measure in LEVEL_MEASURES:
        i = level_index(value)
        return math.nan if i is None else float(i)
    return float(value) if isinstance(value, (int, float)) and not isinstance(value, bool) else math.nan


def is_open(value) -> bool:
    return value in (ND, NA)


# ---------------------------------------------------------------- reading

def read(path: str | os.PathLike) -> Course:
    """Read a course file; exams given by path are read relative to its folder (and may not leave it)."""
    path = Path(path)
    doc = loads(read_bounded(path, "course file", MAX_COURSE_BYTES), shown(str(path), 80))
    return parse_course(doc, base=path.parent)


def parse_course(doc, base: str | os.PathLike | None = None) -> Course:
    """A course from a mapping (the document), JSON text, a `pathlib.Path` (a file: `read`) or a `Course`."""
    if isinstance(doc, Course):
        return doc
    if isinstance(doc, os.PathLike):
        return read(doc)
    if isinstance(doc, (str, bytes, bytearray, memoryview)):
        doc = loads(doc, "course", path_hint=isinstance(doc, str))
    doc = _mapping(doc, "course")
    fmt = doc.get("format")
    if fmt != FORMAT:
        raise CordmapError(f"format: {shown(fmt)} is not a course format this version reads; expected {FORMAT!r}")
    _known(doc, ("format", "label", "time_unit", "since", "exams"), "", "key")
    label = doc.get("label", "")
    unit = doc.get("time_unit", "hours")
    since = doc.get("since", "onset")
    if unit not in TIME_UNITS:
        raise bad_value("time_unit", unit, TIME_UNITS, "time unit")
    if since not in SINCE:
        raise bad_value("since", since, SINCE, "reference point")
    exams = doc.get("exams")
    if not isinstance(exams, list):
        raise CordmapError(f"exams: expected a list of exams, got {shown(exams, 40)}")
    if len(exams) > MAX_EXAMS:
        raise CordmapError(f"exams: {len(exams)} exams is over the limit of {MAX_EXAMS} for one course")
    pairs = []
    for i, e in enumerate(exams):
        where = f"exams[{i}]"
        e = _mapping(e, where)
        _known(e, ("time", "findings", "file"), where, "key")
        if "time" not in e:
            raise CordmapError(f"{where}.time: missing; give the hours or days since {since.replace('_', ' ')}")
        t = _time(e["time"], f"{where}.time")
        if ("findings" in e) == ("file" in e):
            raise CordmapError(f"{where}: give the findings inline ('findings') or by a relative path ('file'), "
                               "exactly one of them")
        if "findings" in e:
            try:
                f = parse(_mapping(e["findings"], f"{where}.findings"))
            except CordmapError as err:
                raise CordmapError(f"{where}.findings.{err}") from None
        else:
            f = _read_exam(e["file"], base, f"{where}.file")
        pairs.append((t, f))
    return Course(tuple(pairs), unit, since, label)


def _read_exam(rel, base, where: str) -> Findings:
    if not isinstance(rel, str) or not rel.strip():
        raise CordmapError(f"{where}: expected a relative path (text), got {shown(rel, 40)}")
    if base is None:
        raise CordmapError(f"{where}: {shown(rel, 60)} is a path, but this course has no folder to read it from "
                           "(read the course from a file, or pass base=)")
    if "\x00" in rel:
        raise CordmapError(f"{where}: not a file name (it holds a null character)")
    if os.path.isabs(rel) or rel.startswith("~"):
        raise CordmapError(f"{where}: {shown(rel, 60)} is absolute; give a path relative to the course file's folder")
    folder = Path(os.path.realpath(base))
    target = Path(os.path.realpath(folder / rel))
    if target != folder and folder not in target.parents:
        raise CordmapError(f"{where}: {shown(rel, 60)} leads outside the course file's folder; exam files must lie "
                           "in that folder or below it")
    try:
        return read_findings(target)
    except CordmapError as err:
        raise CordmapError(f"{where} {shown(rel, 60)}: {err}") from None


def demo_path() -> Path:
    """The invented demo course shipped with the package (a course file and its exam files)."""
    return Path(__file__).resolve().parent / "data" / "courses" / "demo-compression.json"


def demo() -> Course:
    """The invented demo course: a compression whose level climbs over half a day, then recovers after it is
    relieved. No real patient."""
    return read(demo_path())
