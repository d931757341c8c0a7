"""The ranking against the textbook corpus (tests/vignettes, written and reviewed blind: see its README).

The corpus, not the model's own simulations, is the yardstick. `benchmarks/bench_vignettes.py` prints the full
figures; this test keeps them from falling back and states, as a strict expected failure, the bars of the issue
"Rank like a neurologist" that are not met yet.
"""
from __future__ import annotations

import json
from pathlib import Path

import pytest

from cordmap import casebook
from cordmap.errors import CordmapError
from cordmap.findings import all_items
from cordmap.lesions import Lesion
from cordmap.rank import rank

FOLDER = Path(__file__).parent / "vignettes"


@pytest.fixture(scope="module")
def results():
    cases = casebook.load_cases(FOLDER)
    return [casebook.score(c, rank(c.findings, top=5, next_tests=0, classify=False)) for c in cases]


def test_corpus_is_complete_and_sourced():
    """At least 60 cases; every answer kind; each names its source and was reviewed; ids are the file names."""
    cases = casebook.load_cases(FOLDER)
    assert len(cases) >= 60
    kinds = {c.answer for c in cases}
    assert kinds == {"lesion", "two_lesions", "normal"}
    assert sum(c.answer == "two_lesions" for c in cases) >= 6
    for path in sorted(FOLDER.glob("*.json")):
        doc = json.loads(path.read_text(encoding="utf-8"))
        assert doc["id"] == path.stem and doc["source"].strip() and doc.get("review"), path.name
    families = {f for c in cases for e in c.lesions for f in e.families}
    assert families >= {"complete", "hemisection", "central", "anterior", "posterior", "posterolateral",
                        "lateral_compression", "anterior_compression", "posterior_compression", "anterior_horn",
                        "motor_neuron", "conus", "cauda_equina", "root"}


def test_partial_exams_are_the_rule():
    """Charted as clinicians chart: most cases record well under half of the items an exam can hold."""
    cases = casebook.load_cases(FOLDER)
    n = len(all_items())
    assert sum(len(c.findings.items) < n / 2 for c in cases) >= 0.75 * len(cases)


def test_bad_case_names_the_value(tmp_path):
    doc = json.loads(next(FOLDER.glob("a01-*.json")).read_text(encoding="utf-8"))
    doc["expected"]["lesions"][0]["families"] = ["hemicord"]
    (tmp_path / "x.json").write_text(json.dumps(doc), encoding="utf-8")
    with pytest.raises(CordmapError, match="hemicord.*did you mean hemisection"):
        casebook.load_case(tmp_path / "x.json")


def test_corpus_figures_hold(results):
    """Floors at the figures measured when the corpus came in and the model and ranker were reworked against it
    (python benchmarks/bench_vignettes.py, 132 cases with the 30 blind f-cases added unseen: top-1 83.2%, top-3
    91.6%, windows 95.8%, two-lesion flags 75%, false alarms 1.7%, normal 100%): a change that makes the ranking
    worse on textbook cases fails here."""
    s = casebook.summary(results)
    print("\ncorpus:", {k: round(v, 3) if isinstance(v, float) else v for k, v in s.items()})
    assert s["normal_called_normal"] == 1.0
    assert s["top1"] >= 0.83 and s["top3"] >= 0.91 and s["window"] >= 0.95
    assert s["two_lesion_flags"] >= 0.6 and s["false_alarms"] <= 0.03


@pytest.mark.xfail(strict=True, reason="the bars of 'Rank like a neurologist' are not met yet: measured top-1 "
                                       "83.2%, top-3 91.6%, two-lesion flags 75% (issue notes)")
def test_corpus_meets_the_bars(results):
    s = casebook.summary(results)
    assert s["top1"] >= 0.90 and s["top3"] == 1.0 and s["window"] >= 0.90
    assert s["two_lesion_flags"] >= 0.90 and s["false_alarms"] <= 0.05


# ------------------------------------------------------------------ normal and empty exams

def test_empty_exam_says_nothing_was_entered():
    r = rank({"format": "cordmap-findings/1"}, classify=False)
    assert r.fit == "empty" and not r.hypotheses
    assert "Nothing was entered" in r.advice and r.to_dict()["advice"] == r.advice
    assert any("Decision support" in c for c in r.cautions)


def test_normal_exam_is_called_normal_with_nothing_to_image():
    """A full normal exam: no lesion explains it better than a normal cord (common clinical practice)."""
    normal = {"format": "cordmap-findings/1",
              "sensory": {m: {s: {"C2-S4-5": "normal"} for s in ("left", "right")}
                          for m in ("pinprick", "light_touch", "vibration")},
              "motor": {s: {m: 5 for m in ("C5", "C6", "C7", "C8", "T1", "L2", "L3", "L4", "L5", "S1")}
                        for s in ("left", "right")},
              "reflexes": {s: {"biceps": "normal", "knee": "normal", "ankle": "normal", "plantar": "flexor"}
                           for s in ("left", "right")},
              "signs": {"voluntary_anal_contraction": True, "bladder": "normal"}}
    r = rank(normal, classify=False)
    assert r.fit == "normal" and r.best.lesion.pattern == "normal" and r.best.vertebral_levels == ()
    assert r.best.probability > 0.9
    text = " ".join(r.cautions)
    assert "dysreflexia" not in text and "breathing" not in text and "Decision support" in text


# ------------------------------------------------------------------ the answer family peripheral_nerve (format 2)

# an invented exam for the scoring test (not a corpus case): a right foot drop with normal inversion and hip
# abduction, the peronei weak, the dorsum of the foot numb, the ankle jerk kept
PERONEAL = {"format": "cordmap-findings/2",
            "motor": {"right": {"L2": 5, "L3": 5, "L4": 2, "L5": 2, "S1": 5},
                      "left": {"L2": 5, "L3": 5, "L4": 5, "L5": 5, "S1": 5}},
            "muscles": {"right": {"ankle_eversion": 2, "ankle_inversion": 5, "hip_abduction": 5}},
            "sensory": {"pinprick": {"right": {"L4": "normal", "L5": "impaired", "S1": "normal"}}},
            "reflexes": {"right": {"knee": "normal", "ankle": "normal"}}}


def test_a_peripheral_nerve_answer_needs_family_side_and_nerve(tmp_path):
    doc = {"format": "cordmap-vignette/1", "id": "t1", "title": "invented", "source": "invented for a test",
           "findings": PERONEAL,
           "expected": {"answer": "lesion", "lesions": [{"families": ["peripheral_nerve"], "nerve":
                                                         "peroneal_fibular_head", "side": "right", "top": None,
                                                         "image": []}]}}
    path = tmp_path / "t1.json"
    path.write_text(json.dumps(doc))
    case = casebook.load_case(path)
    assert case.lesions[0].nerve == "peroneal_fibular_head"
    res = casebook.score(case, rank(case.findings, top=5, next_tests=0, classify=False))
    assert res.top1 and res.window and res.family == "peripheral_nerve"
    e = case.lesions[0]
    assert e.matches(Lesion("peroneal_fibular_head", "right", "L5"))
    assert not e.matches(Lesion("peroneal_fibular_head", "left", "L5"))
    assert not e.matches(Lesion("root", "right", "L5"))
    ulnar = casebook.Expected(("peripheral_nerve",), "right", None, (), "ulnar_elbow")
    wrong = casebook.Case("t2", "", "", "lesion", (ulnar,),
                 case.findings)
    assert not casebook.score(wrong, rank(case.findings, top=5, next_tests=0, classify=False)).top1
    doc["expected"]["lesions"][0]["nerve"] = "sciatic"
    path.write_text(json.dumps(doc))
    with pytest.raises(CordmapError, match="nerve"):
        casebook.load_case(path)
