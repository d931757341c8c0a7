"""Imaging windows against the handbook rules (cordmap.imaging), each with its source."""
from __future__ import annotations

import pytest

from cordmap.casebook import window_covers
from cordmap.imaging import foramina, root_windows, span, vertebral_levels, windows
from cordmap.lesions import Lesion
from cordmap.rank import rank
from cordmap.simulate import simulate


def _why(lesion) -> str:
    return " | ".join(w.why for w in windows(lesion))


# Cervical roots C1-C7 leave above the vertebra of their number, C8 between C7 and T1; a posterolateral cervical
# disc compresses the root leaving at its level (C5-C6 disc: C6 root). Check values section 8 (from memory:
# standard neuroanatomy; common clinical practice, no source); tests/vignettes/README.md gives the same example.
@pytest.mark.parametrize("root, level", [("C3", "C2-C3"), ("C5", "C4-C5"), ("C6", "C5-C6"), ("C7", "C6-C7"),
                                         ("C8", "C7-T1")])
def test_cervical_root_is_imaged_at_its_foramen(root, level):
    lz = Lesion("root", "left", root)
    assert vertebral_levels(lz) == (level,)
    assert f"leaves by the {level} foramen" in _why(lz) and "disc" in _why(lz)


# Thoracic and lumbar roots leave below the vertebra of their number (T1 at T1-T2, L4 at L4-L5); a paracentral
# lumbar disc takes the traversing root of the level below (L4-L5: L5), a foraminal or far-lateral one the exiting
# root (L4-L5: L4). Check values section 8 (common clinical practice, no source).
@pytest.mark.parametrize("root, levels", [("T1", ("T1-T2",)), ("T7", ("T7-T8",)), ("L3", ("L2-L3", "L3-L4")),
                                          ("L4", ("L3-L4", "L4-L5")), ("L5", ("L4-L5", "L5-S1")),
                                          ("S1", ("L5-S1", "sacrum"))])
def test_thoracolumbar_roots(root, levels):
    assert vertebral_levels(Lesion("root", "right", root)) == levels


def test_lumbar_disc_reasons_name_traversing_and_exiting_roots():
    why = [w.why for w in root_windows("L5")]
    assert any("paracentral L4-L5 disc" in w and "L5 root" in w and "traverses" in w for w in why), why
    assert any("L5-S1 foramen" in w and "far-lateral" in w for w in why), why
    # the same L4-L5 disc: paracentral takes L5, far-lateral takes L4
    assert any("far-lateral L4-L5" in w for w in (w.why for w in root_windows("L4")))


def test_foramina_table_is_complete_and_checked():
    exits = [r for f in foramina() for r in f.exiting]
    assert len(exits) == len(set(exits)) and "C8" in exits and "S4" in exits
    assert next(f for f in foramina() if "C8" in f.exiting).level == "C7-T1"


# Cord segments lie above their vertebrae: cervical about one body, upper thoracic two, lower thoracic three;
# lumbar segments behind T10-T12, sacral at T12-L1 (segments.csv and its sources; tests/vignettes/README.md).
@pytest.mark.parametrize("lesion, must", [
    (("complete", "both", "C6"), ("C5", "C6")),  # the C6 segment behind C5; the C5-C6 level must be in
    (("hemisection", "left", "T6"), ("T4",)),
    (("complete", "both", "T10"), ("T7", "T8")),
    (("central", "both", "C5", "C8"), ("C4", "C7")),
])
def test_cord_window_covers_the_vertebrae_over_the_damaged_segments(lesion, must):
    lz = Lesion(*lesion)
    levels = vertebral_levels(lz)
    assert window_covers(levels, must), levels
    assert "behind" in _why(lz)


def test_cord_window_reaches_above_and_below():
    """Up: the lesion may start above its sensory level (common clinical practice, no source); down: one body more
    than the table gives (the segment-to-vertebra rule is uncertain by a body either way)."""
    levels = vertebral_levels(Lesion("complete", "both", "T8"))  # T8 segment behind T6
    assert "T5" in levels and "T7" in levels


def test_compression_reaches_further_up_and_carries_whole_spine_advice():
    """An extrinsic compression lies at or above its sensory level, sometimes well above; suspected metastatic
    compression: image the whole spine (check values section 8: common clinical practice, no source)."""
    intrinsic = vertebral_levels(Lesion("hemisection", "left", "T8"))
    extrinsic = vertebral_levels(Lesion("lateral_compression", "left", "T8", params={"depth": 0.5}))
    assert set(intrinsic) < set(extrinsic)
    ws = windows(Lesion("posterior_compression", "both", "T8"))
    assert any(w.advice and w.levels == ("whole spine",) and "metastatic" in w.why for w in ws)
    assert "whole spine" not in vertebral_levels(Lesion("posterior_compression", "both", "T8"))
    assert "at or above its sensory level" in _why(Lesion("anterior_compression", "both", "T8"))


def test_cauda_equina_window_is_the_lumbar_sac():
    """The cauda equina runs in the sac from the conus (about L1) down; a lesion taking L4 and the roots below lies
    between L1 and where L4 leaves (L4-L5); a central L4-L5 or L5-S1 disc is the common cause (check values
    section 8: common clinical practice, no source)."""
    levels = vertebral_levels(Lesion("cauda_equina", "left", "L4"))
    assert levels[0] == "L1" and window_covers(levels, ("L4", "L5"))
    assert vertebral_levels(Lesion("cauda_equina", "left", "S2"))[-1] == "S1"
    assert any(w.advice and "L4-L5" in w.levels for w in windows(Lesion("cauda_equina", "left", "L4")))


def test_conus_window():
    """The conus lies behind T12-L1 and ends between T12 and L2 in most adults (Saifuddin et al., Spine 1998)."""
    assert window_covers(vertebral_levels(Lesion("conus", "both", "S2")), ("T12", "L1", "L2"))


def test_nothing_to_image_for_a_normal_cord_or_a_polyneuropathy():
    assert windows(Lesion("normal", "both", "C1")) == () and windows(Lesion("polyneuropathy", "both", "S1")) == ()


def test_every_window_says_why_in_one_line():
    for lz in (Lesion("root", "left", "C6"), Lesion("cauda_equina", "right", "L3"), Lesion("conus", "both", "S3"),
               Lesion("complete", "both", "T4"), Lesion("anterior_compression", "both", "C5", "C6"),
               Lesion("posterolateral", "both", "C1", "T12")):
        for w in windows(lz):
            assert w.why and "\n" not in w.why and len(w.why) < 240 and w.levels


def test_ranking_carries_windows_with_reasons():
    r = rank(simulate(Lesion("root", "left", "C6")), top=2, next_tests=0)
    d = r.to_dict()["hypotheses"][0]
    assert d["vertebral_levels"] == ["C5-C6"]
    assert d["imaging"] and d["imaging"][0]["levels"] == ["C5-C6"] and "foramen" in d["imaging"][0]["why"]
    assert span(("T1", "T2", "T3")) == "T1-T3" and span(("L4-L5", "L5-S1")) == "L4-L5, L5-S1"
