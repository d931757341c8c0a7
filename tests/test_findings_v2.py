"""Findings format 2 (non-key muscles, tenderness, band pain), the peripheral nerve lesions and the clues.

The exams here are hand-written textbook pictures (never made with `simulate`), each with its source beside it.
"""
from __future__ import annotations

import json

import jsonschema
import numpy as np
import pytest

from cordmap import clues, nerves, schemas
from cordmap.atlas import get as get_atlas
from cordmap.errors import CordmapError
from cordmap.findings import from_rows, from_tidy, parse
from cordmap.lesions import Lesion
from cordmap.rank import rank
from cordmap.simulate import simulate

V2 = {"format": "cordmap-findings/2", "label": "invented", "phase": "chronic",
      "motor": {"right": {"L4": 2, "L5": 2, "S1": 5}},
      "muscles": {"right": {"ankle_eversion": 2, "ankle_inversion": 5, "hip_abduction": "NT"},
                  "left": {"thumb_abduction": "4"}},
      "tenderness": ["T6", " T7 "],
      "band_pain": {"left": ["T6"], "right": ["T5-T6"]}}


# ------------------------------------------------------------------ the format

def test_v2_round_trips_through_the_document_and_the_tidy_table():
    f = parse(V2)
    assert f.get(("muscle", "right", "ankle_eversion")) == 2 and f.get(("muscle", "right", "hip_abduction")) == "NT"
    assert f.get(("muscle", "left", "thumb_abduction")) == 4
    assert f.get(("tenderness", "T7", "")) is True and f.get(("band_pain", "right", "T5")) is True
    assert f.get(("muscle", "right", "knee_flexion")) is None  # not examined is never normal
    doc = f.to_dict()
    assert doc["format"] == "cordmap-findings/2"
    assert doc["tenderness"] == ["T6", "T7"] and doc["band_pain"]["right"] == ["T5-T6"]
    assert parse(doc) == f and parse(json.loads(f.to_json())) == f
    assert from_tidy(f.tidy(), f.label) == f


def test_v1_documents_read_as_before_and_stay_v1():
    doc = {"format": "cordmap-findings/1", "motor": {"left": {"L3": 2}}}
    f = parse(doc)
    assert f.to_dict()["format"] == "cordmap-findings/1" and "muscles" not in f.to_dict()


@pytest.mark.parametrize("key", ["muscles", "tenderness", "band_pain"])
def test_a_v2_key_in_a_v1_document_is_one_line_naming_it(key):
    with pytest.raises(CordmapError) as e:
        parse({"format": "cordmap-findings/1", key: V2[key]})
    msg = str(e.value)
    assert "\n" not in msg and msg.startswith(key) and "cordmap-findings/2" in msg


@pytest.mark.parametrize("doc, needle", [
    ({"muscles": {"right": {"ankle_eversoin": 3}}}, "did you mean ankle_eversion"),
    ({"muscles": {"right": {"ankle_eversion": 6}}}, "MRC grade"),
    ({"tenderness": ["T13"]}, "did you mean T12"),
    ({"tenderness": "T6"}, "expected a list"),
    ({"band_pain": {"left": ["T9-T6"]}}, "caudal to rostral"),
    ({"band_pain": {"up": ["T6"]}}, "side"),
])
def test_bad_v2_values_name_the_value(doc, needle):
    with pytest.raises(CordmapError) as e:
        parse({"format": "cordmap-findings/2", **doc})
    assert needle in str(e.value)


def test_rows_read_v2_items_and_refuse_a_negative_clue():
    rows = [{"exam": "muscle", "name": "hip_abduction", "side": "left", "segment": "", "value": "3"},
            {"exam": "tenderness", "name": "", "side": "", "segment": "T6", "value": "true"},
            {"exam": "band_pain", "name": "", "side": "left", "segment": "T6", "value": "yes"}]
    f = from_rows(rows)
    assert f.get(("muscle", "left", "hip_abduction")) == 3 and f.get(("tenderness", "T6", "")) is True
    with pytest.raises(CordmapError, match="two values"):
        from_rows(rows + [{"exam": "muscle", "name": "hip_abduction", "side": "left", "segment": "", "value": "4"}])
    with pytest.raises(CordmapError, match="row 1.value"):
        from_rows([{"exam": "tenderness", "segment": "T6", "value": "false"}])


def test_reader_and_schema_agree_on_v2_documents():
    v = jsonschema.Draft202012Validator(schemas.load("findings"))
    good = [V2, {"format": "cordmap-findings/2"}, {"format": "cordmap-findings/2", "tenderness": []},
            {"format": "cordmap-findings/2", "muscles": {"left": {"finger_extension": 0}}}]
    bad = [{"format": "cordmap-findings/1", "tenderness": ["T6"]},
           {"format": "cordmap-findings/2", "tenderness": ["T13"]},
           {"format": "cordmap-findings/2", "tenderness": "T6"},
           {"format": "cordmap-findings/2", "muscles": {"left": {"elbow_flexion": 3}}},
           {"format": "cordmap-findings/2", "muscles": {"left": {"hip_abduction": 6}}},
           {"format": "cordmap-findings/2", "band_pain": {"left": "T6"}},
           {"format": "cordmap-findings/3"}]
    for doc in good:
        parse(doc)
        assert v.is_valid(doc), doc
    for doc in bad:
        with pytest.raises(CordmapError):
            parse(doc)
        assert not v.is_valid(doc), doc


# ------------------------------------------------------------------ the model

def _abnormal(f, kind):
    return {k[2] if kind != "sensory" else k[3] for k, v in f.items.items()
            if k[0] == kind and k[1 if kind != "sensory" else 2] == "right"
            and ((kind in ("motor", "muscle") and v < 5) or (kind == "sensory" and v < 2))}


def test_the_tables_are_sourced_and_consistent():
    assert nerves.muscle_names() == ("shoulder_abduction", "forearm_pronation", "finger_extension", "thumb_abduction",
                                     "index_finger_abduction", "hip_adduction", "hip_abduction", "knee_flexion",
                                     "ankle_inversion", "ankle_eversion")  # the names of findings-v2
    assert set(nerves.nerve_ids()) >= {"peroneal_fibular_head", "ulnar_elbow", "median_wrist",
                                       "radial_spiral_groove", "femoral"}


def test_peroneal_palsy_spares_inversion_hip_abduction_and_the_ankle_jerk():
    # a common peroneal palsy weakens dorsiflexion, toe extension and eversion and numbs the dorsum of the foot;
    # it spares ankle inversion (tibial) and hip abduction (superior gluteal) and the ankle jerk, which an L5 root
    # takes or weakens (from memory, standard neurology teaching; Aids to the Examination of the Peripheral
    # Nervous System, 2010)
    f = simulate(Lesion("peroneal_fibular_head", "right", "L5"))
    assert _abnormal(f, "motor") == {"L4", "L5"} and _abnormal(f, "muscle") == {"ankle_eversion"}
    assert f.get(("reflex", "right", "ankle")) == "normal" and f.get(("reflex", "right", "knee")) == "normal"
    assert "L5" in _abnormal(f, "sensory") and not {"L4", "S1"} & _abnormal(f, "sensory")
    root = simulate(Lesion("root", "right", "L5"))
    assert {"hip_abduction", "ankle_inversion"} <= _abnormal(root, "muscle")


def test_ulnar_lesion_at_the_elbow_spares_the_thenar_muscles_and_t1_skin():
    # ulnar neuropathy at the elbow: weak first dorsal interosseous and little-finger abductor, numb little finger,
    # thumb abduction (median) and the medial forearm (T1, medial antebrachial cutaneous) spared (from memory)
    f = simulate(Lesion("ulnar_elbow", "left", "C8"))
    left = {k[2] for k, v in f.items.items() if k[0] in ("motor", "muscle") and k[1] == "left" and v < 5}
    assert left == {"T1", "index_finger_abduction"}
    assert f.get(("sensory", "pinprick", "left", "C8")) < 2 and f.get(("sensory", "pinprick", "left", "T1")) == 2


def test_radial_lesion_at_the_spiral_groove_keeps_the_triceps():
    # wrist and finger drop, lost brachioradialis jerk, triceps and its jerk kept (from memory, standard teaching)
    f = simulate(Lesion("radial_spiral_groove", "right", "C7"))
    assert _abnormal(f, "motor") == {"C6"} and _abnormal(f, "muscle") == {"finger_extension"}
    assert f.get(("reflex", "right", "brachioradialis")) == "absent"
    assert f.get(("reflex", "right", "triceps")) == "normal" and f.get(("motor", "right", "C7")) == 5


def test_femoral_lesion_takes_the_knee_jerk_and_spares_hip_adduction():
    # femoral neuropathy: weak quadriceps, lost knee jerk, numb anterior thigh and medial leg; hip adduction
    # (obturator) spared, which an L3-L4 root weakens (from memory, standard neurology teaching)
    f = simulate(Lesion("femoral", "right", "L3"))
    assert "L3" in _abnormal(f, "motor") and "hip_adduction" not in _abnormal(f, "muscle")
    assert f.get(("reflex", "right", "knee")) == "absent"
    assert "hip_adduction" in _abnormal(simulate(Lesion("root", "right", "L3")), "muscle")


def test_cord_lesions_predict_the_non_key_muscles():
    # a right hemisection at T10 spares the arms and weakens every right leg muscle (upper motor neuron)
    f = simulate(Lesion("hemisection", "right", "T10"))
    assert f.get(("muscle", "right", "hip_abduction")) < 5 and f.get(("muscle", "left", "hip_abduction")) == 5
    assert f.get(("muscle", "right", "shoulder_abduction")) == 5


# ------------------------------------------------------------------ ranking: each nerve against its root mimic

def _exam(side, motor, muscles, skin, reflexes):
    """One limb's findings as charted, with every other key muscle normal (as an examiner records them)."""
    other = "left" if side == "right" else "right"
    normal = {m: 5 for m in ("C5", "C6", "C7", "C8", "T1", "L2", "L3", "L4", "L5", "S1")}
    return {"format": "cordmap-findings/2", "motor": {side: {**normal, **motor}, other: normal},
            "muscles": {side: muscles},
            "sensory": {"pinprick": {side: skin}}, "reflexes": {side: reflexes}}


# (exam, expected pattern, side, root mimic exam, its root); all hand-written from standard neurology teaching (a
# single root rarely weakens a muscle below grade 3-4, having neighbours; a nerve can paralyse its muscles)
PAIRS = [
    ("peroneal",
     _exam("right", {"L3": 5, "L4": 2, "L5": 2, "S1": 5},
           {"ankle_eversion": 2, "ankle_inversion": 5, "hip_abduction": 5},
           {"L4": "normal", "L5": "impaired", "S1": "normal"}, {"knee": "normal", "ankle": "normal"}),
     "peroneal_fibular_head",
     _exam("right", {"L3": 5, "L4": 4, "L5": 3, "S1": 5},
           {"ankle_eversion": 4, "ankle_inversion": 4, "hip_abduction": 4},
           {"L4": "normal", "L5": "impaired", "S1": "normal"}, {"knee": "normal", "ankle": "normal"}), "L5"),
    ("ulnar",
     _exam("left", {"C7": 5, "C8": 5, "T1": 2}, {"index_finger_abduction": 2, "thumb_abduction": 5},
           {"C7": "normal", "C8": "impaired", "T1": "normal"}, {"triceps": "normal"}),
     "ulnar_elbow",
     _exam("left", {"C7": 5, "C8": 3, "T1": 4}, {"index_finger_abduction": 4, "thumb_abduction": 4},
           {"C7": "normal", "C8": "impaired", "T1": "normal"}, {"triceps": "normal", "finger_flexors": "reduced"}),
     "C8"),
    ("median",
     _exam("right", {"C6": 5, "C7": 5, "C8": 5, "T1": 5},
           {"thumb_abduction": 2, "forearm_pronation": 5, "index_finger_abduction": 5},
           {"C6": "normal", "C7": "normal", "C8": "normal"}, {"biceps": "normal"}),
     "median_wrist",
     _exam("right", {"C6": 5, "C7": 5, "C8": 4, "T1": 3},
           {"thumb_abduction": 3, "forearm_pronation": 5, "index_finger_abduction": 3},
           {"C6": "normal", "C7": "normal", "C8": "normal", "T1": "impaired"}, {"biceps": "normal"}), "T1"),
    ("radial",
     _exam("right", {"C5": 5, "C6": 1, "C7": 5}, {"finger_extension": 1, "forearm_pronation": 5},
           {"C6": "impaired", "C7": "normal"}, {"brachioradialis": "absent", "triceps": "normal"}),
     "radial_spiral_groove",
     _exam("right", {"C5": 5, "C6": 4, "C7": 3}, {"finger_extension": 4, "forearm_pronation": 4},
           {"C6": "normal", "C7": "impaired"}, {"brachioradialis": "normal", "triceps": "absent"}), "C7"),
    ("femoral",
     _exam("left", {"L2": 4, "L3": 2, "L4": 5}, {"hip_adduction": 5},
           {"L2": "impaired", "L3": "impaired", "L4": "impaired"}, {"knee": "absent", "ankle": "normal"}),
     "femoral",
     # the L3 root: knee extension and hip adduction each draw on L2-L4, so one root lost leaves grade 3-4 (a
     # grade 2 there, with no sensory loss beyond L3, reads as a partial anterior horn lesion since those have a
     # severity); forward.LMN_EXPONENT, judgement
     _exam("left", {"L2": 4, "L3": 3, "L4": 4}, {"hip_adduction": 3},
           {"L2": "normal", "L3": "impaired", "L4": "normal"}, {"knee": "absent", "ankle": "normal"}), "L3"),
]


@pytest.mark.parametrize("name, nerve_exam, nerve, root_exam, root", PAIRS, ids=[p[0] for p in PAIRS])
def test_each_nerve_and_its_root_mimic_are_told_apart(name, nerve_exam, nerve, root_exam, root):
    side = next(iter(nerve_exam["muscles"]))
    r = rank(nerve_exam, next_tests=0, classify=False)
    lead = r.best.lesion
    assert (lead.pattern, lead.side) == (nerve, side), r.best.description
    assert r.best.vertebral_levels == ()  # nothing in the spine to image ...
    assert any("nerve conduction" in w.why for w in r.best.imaging)  # ... the test that places it
    words = " ".join(r.cautions)
    assert "dysreflexia" not in words and "breathing" not in words
    assert r.best.description.startswith(f"{side} ") and "nerve" in r.best.description
    m = rank(root_exam, next_tests=0, classify=False)
    assert (m.best.lesion.pattern, m.best.lesion.side, m.best.lesion.top) == ("root", side, root), \
        m.best.description


@pytest.mark.parametrize("grade", [3, 4])
def test_the_same_foot_drop_is_peroneal_or_l5_by_inversion_and_hip_abduction(grade):
    # weak ankle dorsiflexion, toe extension and eversion, a numb dorsum of the foot, normal ankle jerk: with
    # normal inversion and hip abduction a peroneal palsy, with them weak an L5 root (from memory, standard
    # neurology teaching: tibialis posterior and gluteus medius are L5 muscles outside the peroneal nerve)
    def exam(other):
        return _exam("right", {"L4": grade, "L5": grade},
                     {"ankle_eversion": grade, "ankle_inversion": other, "hip_abduction": other},
                     {"L4": "normal", "L5": "impaired", "S1": "normal"}, {"knee": "normal", "ankle": "normal"})

    nerve = rank(exam(5), next_tests=0, classify=False).best.lesion
    root = rank(exam(grade), next_tests=0, classify=False).best.lesion
    assert (nerve.pattern, nerve.side) == ("peroneal_fibular_head", "right")
    assert (root.pattern, root.side, root.top) == ("root", "right", "L5")


def test_the_next_tests_ask_for_the_muscle_that_separates_root_and_nerve():
    # weak dorsiflexion and toe extension with a numb dorsum of the foot: a peroneal palsy or an L5 root; ankle
    # inversion and hip abduction tell them apart (from memory, standard neurology teaching)
    exam = _exam("right", {"L4": 2, "L5": 2, "S1": 5}, {}, {"L4": "normal", "L5": "impaired", "S1": "normal"},
                 {"ankle": "normal"})
    r = rank(exam, next_tests=3, classify=False)
    assert {t.item for t in r.next_tests} & {("muscle", "right", "ankle_inversion"), ("muscle", "right",
                                                                                       "hip_abduction"),
                                              ("muscle", "right", "ankle_eversion")}


# ------------------------------------------------------------------ clues

def test_no_clues_no_change():
    f = parse({"format": "cordmap-findings/2", "motor": {"left": {"L3": 2}}})
    assert clues.log_likelihood(f, get_atlas("chronic")) is None


def test_tenderness_speaks_for_a_compression_at_the_tender_vertebra():
    # judgement (clues.py): a tender vertebra over a compression localizes its rostral edge; the cord segments at
    # the T6 vertebra are T8-T9 (segments.csv: about two bodies above in the mid-thoracic cord, common practice)
    at = get_atlas("chronic")
    f = parse({"format": "cordmap-findings/2", "tenderness": ["T6"]})
    ll = clues.log_likelihood(f, at)
    segs = clues.segments_at("T6")
    comp = np.isin(at.pattern_of, clues.COMPRESSIONS)
    assert np.allclose(ll[comp & np.isin(at.top, segs)], clues.TENDER_AT)
    assert (ll[~comp] == 0).all() and ll.max() <= np.log(3.0) + 1e-6  # modest: a clue, not a deficit


def test_band_pain_speaks_for_the_root_of_its_dermatome():
    at = get_atlas("chronic")
    f = parse({"format": "cordmap-findings/2", "band_pain": {"left": ["C7"]}})
    ll = clues.log_likelihood(f, at)
    i = [k for k in range(len(at)) if at.pattern_of[k] == "root" and at.lesion(k).top == "C7"]
    assert {round(float(ll[k]), 4) for k in i if at.lesion(k).side == "left"} == {round(clues.BAND_AT, 4)}
    assert {float(ll[k]) for k in i if at.lesion(k).side == "right"} == {0.0}


def test_a_clue_moves_a_thoracic_compression_toward_the_tender_vertebra():
    # spastic legs, a T10 pinprick level, vibration lost at the ankles: an intrinsic lesion and a compression
    # compete; percussion tenderness at the T6 vertebra favours the compression (judgement, clues.py)
    base = {"format": "cordmap-findings/2",
            "sensory": {"pinprick": {s: {"C2-T9": "normal", "T10-S4-5": "impaired"} for s in ("left", "right")},
                        "vibration": {s: {"L4-L5": "impaired"} for s in ("left", "right")}},
            "motor": {s: {m: 4 for m in ("L2", "L3", "L4", "L5", "S1")} for s in ("left", "right")},
            "reflexes": {s: {"knee": "brisk", "ankle": "brisk", "plantar": "extensor"} for s in ("left", "right")}}
    plain = rank(base, next_tests=0, classify=False)
    tender = rank({**base, "tenderness": ["T6"]}, next_tests=0, classify=False)
    mass = lambda r: sum(h.probability for h in r.hypotheses if "compression" in h.lesion.pattern)  # noqa: E731
    assert mass(tender) > mass(plain)
    assert "compression" in tender.best.lesion.pattern
    # tender well above the level (the T3 vertebra: cord segment T5): the compression may lie there, above where
    # its loss begins (a false localizing level, clues.FALSE_LEVEL), so its window reaches the tender vertebra
    high = rank({**base, "tenderness": ["T3"]}, next_tests=0, classify=False)
    assert "compression" in high.best.lesion.pattern and "T3" in high.best.vertebral_levels
    assert any("false localizing level" in w.why for w in high.best.imaging)
    low = rank({**base, "tenderness": ["T11"]}, next_tests=0, classify=False)  # below the level: no clue to it
    assert [round(h.probability, 6) for h in low.hypotheses] == [round(h.probability, 6) for h in plain.hypotheses]


def test_beyond_the_bedside_a_nerve_lesion_is_told_by_nerve_studies():
    from cordmap.nexttests import beyond_the_bedside

    nerve = rank(PAIRS[0][1], next_tests=0, classify=False)
    root = rank(PAIRS[0][3], next_tests=0, classify=False)
    assert "nerve conduction studies and EMG" in beyond_the_bedside(nerve)
    assert beyond_the_bedside(root).startswith("imaging")
