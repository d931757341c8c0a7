"""One verdict per exam item and value: every consumer of the item registry (`cordmap.items`) calls a value normal
or abnormal as the registry does, and "NT" (not testable) is neither anywhere.

Consumers walked: the reader (a document round trip), the atlas (`atlas.abnormality`), the ranker (what a
hypothesis explains: `hypotheses.agreement`; what it scores: `rank.observed_columns`), the cautions' weights (the
entered abnormal findings of `cautions.applicable`), the advice (`nexttests`: bedside words for every item and
answer), the case sheet (`report._entered_lines`), the notebook views, the course report (findings appeared) and
the widgets' options. Normal values, by common clinical practice, no source: sensation 2, MRC 5, tendon reflexes
normal, plantar flexor, superficial reflexes and bulbocavernosus present, Hoffmann and Horner signs absent,
anal contraction and pressure present, bladder and diaphragm normal.
"""
import numpy as np
import pytest

from cordmap import atlas as atlas_mod
from cordmap import items
from cordmap.course_report import _findings_words
from cordmap.findings import Findings, parse, to_document
from cordmap.hypotheses import agreement
from cordmap.nexttests import answer_words, finding_words
from cordmap.rank import observed_columns, sensory_summary
from cordmap.report import _entered_lines
from cordmap.views import findings_html

NORMAL = {items.SENSORY_SCALE: (2,), items.MRC_SCALE: (5,), items.TENDON_SCALE: ("normal",),
          items.PLANTAR_SCALE: ("flexor",), items.PRESENT_NORMAL: ("present",), items.PRESENT_ABNORMAL: ("absent",),
          items.TRUE_NORMAL: (True,), items.TRUE_ABNORMAL: (False,), items.BLADDER_SCALE: ("normal",),
          items.DIAPHRAGM_SCALE: ("normal",)}


def _cases():
    for key in items.all_items():
        for value in items.allowed(key):
            yield key, value


CASES = list(_cases())


@pytest.fixture(scope="module")
def atlas():
    return atlas_mod.get("chronic")


def test_the_registry_names_every_scale_and_its_normal_values():
    seen = {items.scale(k) for k in items.all_items()}
    assert seen == set(NORMAL)
    for s in seen:
        assert s.normal == NORMAL[s], s
    assert items.verdict(("reflex", "left", "hoffmann"), "absent") is False  # the old drift: absent is normal
    assert items.verdict(("motor", "left", "C5"), "NT") is None  # not testable: neither


def test_keys_are_named_and_equal_to_plain_tuples():
    f = Findings({("motor", "left", "C5"): 3, ("sensory", "pinprick", "right", "T4"): 0})
    k = next(iter(f.items))
    assert type(k).__name__ == "MotorKey" and k.myotome == "C5" and k == ("motor", "left", "C5")
    assert f.get(("sensory", "pinprick", "right", "T4")) == 0
    assert repr(k) == "('motor', 'left', 'C5')"


# the kinds with atlas rows; tenderness and band pain are clues read by `clues` (test_clues_are_abnormal_where_found)
@pytest.mark.parametrize("kind", [name for name, k in items.KINDS.items() if k.keys()])
def test_every_consumer_gives_one_verdict(kind, atlas):
    walked = 0
    for key, value in CASES:
        if key[0] != kind:
            continue
        walked += 1
        verdict = items.verdict(key, value)
        f = Findings({key: value})
        # the reader: the document round trip keeps the value
        assert parse(to_document(f)).get(key) == value, (key, value)
        # the atlas
        if verdict is None:
            assert value not in items.item_values(key) or isinstance(value, str)
            cols, used = observed_columns(f, atlas)
            assert used == [], (key, value)  # the ranker skips what was not tested
        else:
            j = items.item_values(key).index(value)
            assert (atlas_mod.abnormality(key)[j] > 0) == verdict, (key, value)
            # the ranker: a candidate predicting this very value explains it exactly when it is abnormal
            agree, conflict = agreement(f, [key], np.array([0.0]), np.array([j]))
            assert bool(agree) == verdict and not conflict, (key, value)
        # the case sheet lists it as abnormal, or as not testable
        lines = _entered_lines(f)
        assert bool(lines) == (verdict is not False), (key, value, lines)
        assert any(line.startswith("not testable") for line in lines) == (verdict is None), (key, value)
        # the course report: from a normal exam to this value, the finding appeared exactly when it is abnormal
        if verdict is not None:
            normal = Findings({key: items.scale(key).normal[0]})
            appeared, resolved, changed, _ = _findings_words(normal, f)
            assert bool(appeared) == verdict and not resolved, (key, value)
            back = _findings_words(f, normal)
            assert bool(back[1]) == verdict and not back[0], (key, value)
        else:
            normal = Findings({key: items.scale(key).normal[0]})
            assert _findings_words(normal, f)[:3] == ((), (), ()), (key, value)
        # the notebook views
        if kind == "sensory":
            assert bool(sensory_summary(f)) == verdict, (key, value)
        if kind == "motor":
            assert ("none entered" not in findings_html(f).split("motor below 5")[1].split("</tr>")[0]) == bool(verdict)
        # the advice: every item has its bedside words, every answer its words (the registry's)
        assert finding_words(key) and answer_words(key, value) == items.value_words(key, value)
    assert walked > 0


def test_the_cautions_weigh_only_abnormal_entries(atlas):
    """`cautions.applicable` weighs the candidates that explain the entered abnormal findings: an exam of normal
    and NT values has none, so no caution beyond the general line fits it from the ranking's weights."""
    from cordmap.cautions import DECISION_SUPPORT, applicable

    post = np.full(len(atlas), 1.0 / len(atlas))
    nothing = Findings({("motor", "left", "C5"): "NT", ("reflex", "left", "hoffmann"): "absent"})
    assert applicable(atlas, post, nothing) == (DECISION_SUPPORT,)


def test_the_widgets_offer_the_registry_values():
    pytest.importorskip("ipywidgets")
    from widgets.labels import from_option, options

    for key in items.all_items():
        texts = [t for _, t in options(key)][1:]
        assert [from_option(key, t) for t in texts] == list(items.allowed(key)), key


def test_clues_are_abnormal_where_found():
    """Spinal tenderness and band pain (findings format 2) are recorded only where found: present is abnormal, the
    document round trip keeps them, and they are no atlas rows (the model predicts no tenderness)."""
    for key in (("tenderness", "T6", ""), ("band_pain", "left", "T6")):
        f = Findings({key: True})
        assert parse(to_document(f)).get(key) is True, key
        assert items.verdict(key, True) is True and items.value_words(key, True) == "present"
        assert key not in items.all_items() and not items.feasible(key)
        assert items.item_label(key)
