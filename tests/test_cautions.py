"""Which cautions a ranking gives, case by case (cordmap.cautions.applicable), each with its source.

Every exam here is the one a lesion predicts (`simulate`), ranked as a clinician's entry would be; the caution must
follow the lesion the ranking finds, not the level of any candidate that happens to explain a finding.
"""
from __future__ import annotations

import pytest

from cordmap import cautions as C
from cordmap.lesions import Lesion
from cordmap.rank import rank
from cordmap.simulate import simulate

DYS, BREATH, CAUDA, MYELO = C.THIS_DYSREFLEXIA, C.THIS_BREATHING, C.THIS_CAUDA_EQUINA, C.THIS_MYELOPATHY


def _cautions(*args, phase="chronic", **params) -> tuple[str, ...]:
    lesion = Lesion(*args, params=params, phase=phase)
    return rank(simulate(lesion), top=2, next_tests=0).cautions


# Autonomic dysreflexia: cord lesions at or above T6 only (Consortium for Spinal Cord Medicine, autonomic
# dysreflexia guideline, 2nd ed., 2001; SCIRE project, autonomic dysreflexia introduction). Never a root or a
# peripheral nerve (same sources: the reflex needs the cord below the lesion cut off from supraspinal control).
@pytest.mark.parametrize("lesion", [
    ("root", "left", "C5"), ("root", "left", "C6"), ("root", "right", "C8"), ("root", "right", "T4"),
    ("root", "right", "L5"), ("polyneuropathy", "both", "S1"),
])
def test_no_dysreflexia_for_roots_or_nerves(lesion):
    c = _cautions(*lesion)
    assert DYS not in c and BREATH not in c, c


# Judgement (module doc of cordmap.cautions): motor neuron and anterior horn disease spare the descending
# sympathetic pathways, so no dysreflexia; cauda equina and conus lie below T6 and get their own emergency.
@pytest.mark.parametrize("lesion", [
    ("motor_neuron", "both", "C5", "S5"), ("anterior_horn", "left", "C5", "C8"), ("anterior_horn", "both", "C3", "C5"),
])
def test_no_dysreflexia_for_motor_neuron_disease(lesion):
    assert DYS not in _cautions(*lesion)


@pytest.mark.parametrize("lesion, dysreflexia", [
    (("complete", "both", "C3"), True), (("hemisection", "left", "T4"), True), (("complete", "both", "T6"), True),
    (("complete", "both", "T7"), False), (("complete", "both", "T11"), False),
    # a central cord syndrome with the lateral columns (legs weak and spastic) cuts the pathways below; a small central
    # lesion giving a cape of pinprick loss alone does not (the rule in cordmap.cautions' module doc)
    (("central", "both", "C4", "C5", {"columns": 0.35}), True),
])
def test_dysreflexia_at_or_above_t6(lesion, dysreflexia):
    """At or above T6 (CSCM 2001; SCIRE): a complete T6 lesion has it, a complete T7 one does not."""
    args = [a for a in lesion if not isinstance(a, dict)]
    params = next((a for a in lesion if isinstance(a, dict)), {})
    assert (DYS in _cautions(*args, **params)) == dysreflexia


# Breathing: the diaphragm is C3-C5; cord lesions at C5 and above and any acute complete cervical injury need
# vital capacity watched (check values section 8: common clinical practice, no source). The bar of issue 12:
# always for an acute complete lesion at C8 or above.
@pytest.mark.parametrize("top", ["C4", "C5", "C6", "C7", "C8"])
def test_breathing_for_every_acute_complete_cervical_lesion(top):
    assert BREATH in _cautions("complete", "both", top, phase="acute")


@pytest.mark.parametrize("lesion, breathing", [
    (("complete", "both", "C3"), True), (("complete", "both", "C5"), True), (("complete", "both", "T4"), False),
    (("root", "left", "C5"), False), (("root", "left", "C6"), False), (("hemisection", "right", "C6"), False),
])
def test_breathing_by_level_chronic(lesion, breathing):
    """A chronic C6 hemicord leaves both diaphragms working (a one-sided lesion counts from C4 up, judgement); a C5
    radiculopathy is not a breathing risk (one root, common clinical practice, no source)."""
    assert (BREATH in _cautions(*lesion)) == breathing


def test_breathing_when_a_weak_diaphragm_is_entered():
    c = rank({"format": "cordmap-findings/1", "signs": {"diaphragm": "weak"}}, top=1, next_tests=0).cautions
    assert BREATH in c


# Cauda equina and conus syndromes are surgical emergencies needing urgent lumbosacral imaging (check values
# section 8: common clinical practice, no source).
@pytest.mark.parametrize("lesion", [("cauda_equina", "left", "L4"), ("cauda_equina", "right", "S2"),
                                    ("conus", "both", "S2")])
def test_cauda_equina_and_conus_are_emergencies(lesion):
    c = _cautions(*lesion)
    assert CAUDA in c and "emergency" in CAUDA and "lumbosacral" in CAUDA
    assert DYS not in c and BREATH not in c


@pytest.mark.parametrize("lesion", [("complete", "both", "T4"), ("root", "left", "C6"), ("hemisection", "left", "T4")])
def test_no_cauda_equina_caution_above(lesion):
    assert CAUDA not in _cautions(*lesion)


def test_acute_myelopathy_as_before():
    """An acute cord picture, a sensory level with extensor plantars: the emergency line (common clinical practice,
    no source); a chronic radiculopathy or a motor neuron disease does not get it."""
    assert MYELO in _cautions("complete", "both", "T8", phase="acute")
    assert MYELO in _cautions("hemisection", "left", "T4")
    assert MYELO not in _cautions("root", "right", "L5")
    assert MYELO not in _cautions("anterior_horn", "left", "C5", "C8")


def test_decision_support_always_last_and_general_lines_complete():
    assert _cautions("root", "left", "C6")[-1] == C.DECISION_SUPPORT
    assert rank({"format": "cordmap-findings/1"}, next_tests=0).cautions == (C.DECISION_SUPPORT,)
    general = " ".join(C.GENERAL)
    for words in ("not a diagnosis", "Acute myelopathy", "Cauda equina", "breathing", "dysreflexia"):
        assert words in general and words.lower() in C.BANNER.lower()
    # the exam-specific texts differ from the general ones, so a surface can show them apart
    assert not set(C.GENERAL) & {DYS, BREATH, CAUDA, MYELO}
