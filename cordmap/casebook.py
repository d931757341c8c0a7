"""Textbook cases with known answers (format ``cordmap-vignette/1``) and how a ranking is scored against them.

A case file holds a findings document, the answer a neurologist would give (lesion family or families, side,
range of the rostral segment, vertebral levels to image; or a normal exam; or two separate lesions) and the
source of the picture. `tests/vignettes/README.md` describes the format; `benchmarks/bench_vignettes.py` prints
the figures over a folder of cases. Nothing here looks at the model: it compares what `rank` says with what the
case says.
"""
from __future__ import annotations

import json
from dataclasses import dataclass
from pathlib import Path

import numpy as np
import pandas as pd

from .anatomy import anatomy, cord_region
from .errors import CordmapError, bad_value
from .findings import Findings, parse
from .lesions import PATTERNS, Lesion
from .nerves import nerve_ids

FORMAT = "cordmap-vignette/1"
PERIPHERAL_NERVE = "peripheral_nerve"  # the answer family of a single limb nerve lesion (with a `nerve` field)
ANSWERS = ("lesion", "two_lesions", "normal")
SPINE = tuple([f"C{i}" for i in range(1, 8)] + [f"T{i}" for i in range(1, 13)] + [f"L{i}" for i in range(1, 6)]
              + ["S1"])


@dataclass(frozen=True)
class Expected:
    """One expected lesion: the families a neurologist accepts, its side, the range of its rostral segment and
    the vertebrae an MRI must include."""
    families: tuple[str, ...]
    side: str
    top: tuple[str, str] | None
    image: tuple[str, ...]
    nerve: str = ""  # the family `peripheral_nerve`: which nerve and site (`cordmap.nerves`; top is then None)

    def __repr__(self):
        if self.top is None:
            return f"Expected({'/'.join(self.families)} {self.nerve} {self.side})"
        return f"Expected({'/'.join(self.families)} {self.side} {self.top[0]}-{self.top[1]})"

    def matches(self, lesion: Lesion) -> bool:
        """Family, side and rostral segment all as the case expects (a symmetric answer accepts either side of a
        pattern that has no 'both', such as the worse side of a cauda equina lesion). A diffuse degeneration's
        hypothesis is a region of the cord, so it matches when its region holds a segment of the expected range.
        A peripheral nerve lesion (family `peripheral_nerve`) matches the lesion of its nerve on its side."""
        if PERIPHERAL_NERVE in self.families and self.nerve and lesion.pattern == self.nerve:
            return lesion.side == self.side
        if lesion.pattern not in self.families or self.top is None:
            return False
        if self.side != "both" and lesion.side != self.side:
            return False
        if self.side == "both" and lesion.side != "both" and "both" in PATTERNS[lesion.pattern].sides:
            return False
        a = anatomy()
        lo, hi = a.index(self.top[0]), a.index(self.top[1])
        if PATTERNS[lesion.pattern].diffuse:  # placed by region, not by segment (Pattern.diffuse)
            return cord_region(lesion.top_index) in {cord_region(i) for i in range(lo, hi + 1)}
        return lo <= lesion.top_index <= hi


@dataclass(frozen=True)
class Case:
    """A textbook case: its findings and the answer it expects."""
    id: str
    title: str
    source: str
    answer: str
    lesions: tuple[Expected, ...]
    findings: Findings

    def __repr__(self):
        return f"Case({self.id}: {self.answer} {list(self.lesions)})"


def _field(doc: dict, key: str, where: str, kind=str):
    if key not in doc:
        raise CordmapError(f"{where}: missing {key!r}")
    value = doc[key]
    if not isinstance(value, kind):
        raise CordmapError(f"{where}.{key}: expected {kind.__name__}, got {type(value).__name__}")
    return value


def _expected(doc: dict, where: str) -> Expected:
    a = anatomy()
    fams = _field(doc, "families", where, list)
    for f in fams:
        if f not in PATTERNS and f != PERIPHERAL_NERVE:
            raise bad_value(f"{where}.families", f, [*PATTERNS, PERIPHERAL_NERVE], "family")
    side = _field(doc, "side", where)
    if side not in ("left", "right", "both"):
        raise bad_value(f"{where}.side", side, ("left", "right", "both"), "side")
    if PERIPHERAL_NERVE in fams:  # findings format 2: a named nerve and site, no rostral segment
        nerve = _field(doc, "nerve", where)
        if nerve not in nerve_ids():
            raise bad_value(f"{where}.nerve", nerve, nerve_ids(), "nerve")
        if doc.get("top") is not None or side == "both":
            raise CordmapError(f"{where}: a peripheral_nerve answer has \"top\": null and a side, left or right")
        image = _field(doc, "image", where, list)
        if image:
            raise CordmapError(f"{where}.image: a peripheral_nerve answer images nothing; give []")
        return Expected(tuple(fams), side, None, (), nerve)
    top = _field(doc, "top", where, list)
    if len(top) != 2:
        raise CordmapError(f"{where}.top: expected [earliest, latest], got {top!r}")
    for s in top:
        a.index(s, f"{where}.top")
    image = _field(doc, "image", where, list)
    for v in image:
        if v not in SPINE:
            raise bad_value(f"{where}.image", v, SPINE, "vertebra")
    return Expected(tuple(fams), side, (top[0], top[1]), tuple(image))


def load_case(path: str | Path) -> Case:
    """Read one case file; a bad file raises `CordmapError` naming the file and the bad value."""
    path = Path(path)
    try:
        doc = json.loads(path.read_text(encoding="utf-8"))
    except (OSError, ValueError) as e:
        raise CordmapError(f"{path}: cannot read a case: {e}") from None
    where = path.name
    if doc.get("format") != FORMAT:
        raise CordmapError(f"{where}: format must be {FORMAT!r}, got {doc.get('format')!r}")
    exp = _field(doc, "expected", where, dict)
    answer = _field(exp, "answer", f"{where}.expected")
    if answer not in ANSWERS:
        raise bad_value(f"{where}.expected.answer", answer, ANSWERS, "answer")
    lesions = tuple(_expected(d, f"{where}.expected.lesions[{i}]")
                    for i, d in enumerate(_field(exp, "lesions", f"{where}.expected", list)))
    need = {"lesion": 1, "two_lesions": 2, "normal": 0}[answer]
    if len(lesions) != need:
        raise CordmapError(f"{where}.expected.lesions: answer {answer!r} needs {need} lesions, got {len(lesions)}")
    try:
        findings = parse(_field(doc, "findings", where, dict))
    except CordmapError as e:
        raise CordmapError(f"{where}.findings: {e}") from None
    return Case(_field(doc, "id", where), doc.get("title", ""), _field(doc, "source", where), answer, lesions,
                findings)


def load_cases(folder: str | Path) -> list[Case]:
    """Every ``*.json`` case in a folder, in name order."""
    paths = sorted(Path(folder).glob("*.json"))
    if not paths:
        raise CordmapError(f"{folder}: no case files (*.json)")
    return [load_case(p) for p in paths]


# ------------------------------------------------------------------ scoring

def vertebra_span(levels) -> tuple[int, int] | None:
    """First and last vertebra (indices into SPINE) an imaging window names ('C5-C6' counts as C5 and C6;
    'sacrum' as S1); None for an empty window."""
    idx = []
    for lv in levels:
        for v in str(lv).replace("sacrum", "S1").split("-"):
            if v in SPINE:
                idx.append(SPINE.index(v))
    return (min(idx), max(idx)) if idx else None


def window_covers(levels, image) -> bool:
    """Whether an imaging window reaches every vertebra the case says must be imaged."""
    if not image:  # nothing to image (a polyneuropathy): right when the window is empty too
        return not levels
    span = vertebra_span(levels)
    return span is not None and all(span[0] <= SPINE.index(v) <= span[1] for v in image)


@dataclass(frozen=True)
class Result:
    """How one ranking did on one case."""
    case: str
    answer: str
    family: str  # the first expected family, for per-family tables ("normal" for a normal exam)
    fit: str
    leader: str
    probability: float
    top1: bool
    top3: bool
    window: bool | None  # None where there is nothing to image
    flagged: bool  # the ranking said "poor" (more than one lesion or outside the cord)

    def __repr__(self):
        return f"Result({self.case}: top1={self.top1} fit={self.fit})"


def _names(h) -> list[Lesion]:
    """The lesions a hypothesis names: its own, its variants of the same family, those with the same exam."""
    return [h.lesion, *h.variants, *h.same_exam]


def score(case: Case, ranking) -> Result:
    """Compare one ranking with one case. A hypothesis names the answer when its lesion, one of its variants (a
    compression from behind beside one from the front) or one of the lesions it lists as giving the same bedside
    exam matches. Two-lesion cases count as top-1 when the leader names
    either lesion; normal exams when the verdict is normal."""
    hyps = ranking.hypotheses
    leader = hyps[0].lesion.describe() if hyps else ""
    prob = hyps[0].probability if hyps else 0.0
    flagged = ranking.fit == "poor"
    if case.answer == "normal":
        ok = ranking.fit == "normal"
        return Result(case.id, case.answer, "normal", ranking.fit, leader, prob, ok, ok, None, flagged)

    def hit(h) -> bool:
        return any(e.matches(x) for e in case.lesions for x in _names(h))

    top1 = bool(hyps) and ranking.fit != "normal" and hit(hyps[0])
    top3 = ranking.fit != "normal" and any(hit(h) for h in hyps[:3])
    window = bool(hyps) and ranking.fit != "normal" and any(window_covers(hyps[0].vertebral_levels, e.image)
                                                            for e in case.lesions)
    return Result(case.id, case.answer, case.lesions[0].families[0], ranking.fit, leader, prob, top1, top3,
                  window, flagged)


def results_table(results: list[Result]) -> pd.DataFrame:
    return pd.DataFrame([r.__dict__ for r in results])


def summary(results: list[Result]) -> dict:
    """The corpus figures: hit rates, imaging windows, flags, false alarms, normal verdicts, Brier score."""
    t = results_table(results)
    one = t[t.answer == "lesion"]
    two = t[t.answer == "two_lesions"]
    norm = t[t.answer == "normal"]
    out = {"cases": len(t), "single": len(one), "two_lesions": len(two), "normal": len(norm)}
    if len(one):
        out["top1"] = float(one.top1.mean())
        out["top3"] = float(one.top3.mean())
        out["window"] = float(one.window.astype(bool).mean())
        out["false_alarms"] = float(one.flagged.mean())
        out["brier"] = float(((one.probability - one.top1.astype(float)) ** 2).mean())
    if len(two):
        out["two_lesion_flags"] = float(two.flagged.mean())
    if len(norm):
        out["normal_called_normal"] = float(norm.top1.mean())
    return out


def reliability(results: list[Result], bins=(0.0, 0.5, 0.7, 0.9, 1.0)) -> pd.DataFrame:
    """Stated probability of the leader, binned, against how often the leader was right (single lesions)."""
    t = results_table(results)
    t = t[t.answer == "lesion"]
    cut = pd.cut(t.probability, list(bins), include_lowest=True)
    g = t.groupby(cut, observed=False)
    return pd.DataFrame({"cases": g.size(), "stated": g.probability.mean(), "right": g.top1.mean()}).round(3)


def per_family(results: list[Result]) -> pd.DataFrame:
    t = results_table(results)
    t = t[t.answer == "lesion"]
    g = t.groupby("family")
    return pd.DataFrame({"cases": g.size(), "top1": g.top1.mean(), "top3": g.top3.mean(),
                         "window": g.window.apply(lambda s: float(np.mean(s.astype(bool)))),
                         "false_alarm": g.flagged.mean()}).round(2)
