"""Next tests (cordmap.nexttests): only what a bedside examiner can do, said in a clinician's words, chosen for
what would change management."""
from __future__ import annotations

import pytest

import cordmap.demo
from cordmap.findings import Findings, all_items
from cordmap.lesions import Lesion
from cordmap.nexttests import feasible, finding_words, lesion_class, separates_management, sites
from cordmap.rank import rank
from cordmap.simulate import simulate


# Joint position is tested at the great toe, ankle, knee, finger joints and wrist, never on the trunk or the
# perineum; vibration on bony landmarks; pinprick and light touch anywhere (check values section 8: common
# clinical practice, no source).
@pytest.mark.parametrize("derm, ok", [("L5", True), ("L4", True), ("L3", True), ("C7", True), ("C6", True),
                                      ("T6", False), ("T10", False), ("S4-5", False), ("S3", False), ("C3", False)])
def test_joint_position_only_at_limb_joints(derm, ok):
    assert feasible(("sensory", "joint_position", "left", derm)) == ok


@pytest.mark.parametrize("derm, ok", [("L5", True), ("L4", True), ("S1", True), ("C8", True), ("T4", True),
                                      ("S4-5", False), ("S3", False), ("L2", False), ("C2", False)])
def test_vibration_only_on_bony_landmarks(derm, ok):
    assert feasible(("sensory", "vibration", "right", derm)) == ok


def test_pinprick_light_touch_muscles_reflexes_and_signs_anywhere():
    for key in all_items():
        if key[0] != "sensory" or key[1] in ("pinprick", "light_touch", "temperature"):
            assert feasible(key), key


def test_said_in_words_a_clinician_uses():
    assert finding_words(("sensory", "pinprick", "left", "T4")) == "pinprick on the left at the nipple line (T4)"
    assert finding_words(("sensory", "joint_position", "right", "L5")) == \
        "joint position on the right at the great toe (L5)"
    assert finding_words(("sensory", "vibration", "left", "L4")).startswith("vibration on the left at the medial")
    assert finding_words(("reflex", "left", "ankle")) == "left ankle jerk"
    assert "rectal" in finding_words(("sign", "voluntary_anal_contraction", ""))
    assert all(s and "_" not in s for s in sites().values())


def _partial(lesion, keep):
    f = simulate(lesion)
    return Findings({k: v for k, v in f.items.items() if keep(k)})


@pytest.mark.parametrize("lesion, keep", [
    (Lesion("hemisection", "left", "T6"), lambda k: k[0] == "motor"),
    (Lesion("root", "right", "L5"), lambda k: k[0] == "motor" and k[1] == "right"),
    (Lesion("cauda_equina", "left", "L4"), lambda k: k[0] == "motor" or k[0] == "reflex"),
    (Lesion("complete", "both", "C6"), lambda k: k[0] == "sensory" and k[1] == "pinprick"),
])
def test_suggestions_are_feasible_new_and_separate_management(lesion, keep):
    f = _partial(lesion, keep)
    r = rank(f, top=5, next_tests=5)
    assert r.next_tests
    for t in r.next_tests:
        assert feasible(t.item) and t.item not in f.items
        assert t.answers and all(a and m for a, m in t.answers)
        assert "_" not in t.why and t.finding in t.why
    # the first names two management options its answers point to (for the right L5 root, testing the left leg:
    # the best lesion of the cord option found is one-sided too, so the crisp check cannot show it)
    assert " separates " in r.next_tests[0].why
    if lesion.pattern != "root":
        assert separates_management(r.next_tests[0]), r.next_tests[0].why
    gains = [t.gain for t in r.next_tests]
    assert gains == sorted(gains, reverse=True)


def test_no_test_when_only_imaging_can_tell():
    """The demo's full exam: a left hemicord at T6 or a left side compression there predict the same exam; no
    bedside test would change management, so none is suggested and the command line says imaging decides."""
    r = rank(cordmap.demo.case(), top=5)
    assert r.next_tests == ()


def test_management_classes():
    assert lesion_class(Lesion("root", "left", "C6")) == (2, 0, 0)
    assert lesion_class(Lesion("lateral_compression", "right", "T10")) == (0, 1, 2)  # the T10 segment behind T7
    assert lesion_class(Lesion("cauda_equina", "left", "S3", params={"contra": 1.0})) == (3, 2, 3)
    assert lesion_class(Lesion("hemisection", "left", "T3"))[0] == 1
