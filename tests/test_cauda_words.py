"""The cauda equina named as roots in the sac (issue 11, item 4): by the vertebral level of the disc or canal where
its highest root is caught and the roots it takes, asymmetry and midline in words; the conus named apart, as cord
behind a vertebral body."""
from __future__ import annotations

import re

from cordmap import atlas as atlas_mod
from cordmap.imaging import foramina
from cordmap.lesions import PATTERNS, Lesion
from cordmap.words import describe, sac_level

PARAMS = sorted({p.name for pat in PATTERNS.values() for p in pat.params})


def cauda(top, side="right", **params):
    return Lesion("cauda_equina", side, top, params=params).describe()


def test_the_issue_example():
    # a central L4-L5 disc takes the traversing L5 root and every root below it in the sac, worse on one side
    # (foramina.csv: a paracentral L4-L5 disc takes L5; common clinical practice, no source)
    assert cauda("L5", contra=0.5, medial=0.33) == "cauda equina at a central L4-L5 disc: L5-S5 roots, right > left"


def test_levels_follow_the_foramina_table():
    for f in foramina():
        if f.paracentral and f.level != "sacrum" and f.paracentral[0] in "LS":
            assert sac_level(f.paracentral) == f"{f.level} disc"
    assert sac_level("L1") == "T12-L1 disc" and sac_level("S1") == "L5-S1 disc"
    assert sac_level("S2") == "sacral canal at S1-S2" and sac_level("S3") == "sacral canal at S2-S3"


def test_sides_and_midline_in_words():
    assert cauda("L4", contra=1.0) == "cauda equina at a central L3-L4 disc: L4-S5 roots on both sides alike"
    assert cauda("L4", side="left", contra=0.5) == "cauda equina at the L3-L4 disc: L4-S5 roots, left > right"
    assert cauda("S1", contra=0.0) == "cauda equina at the L5-S1 disc: right S1-S5 roots only"
    across = cauda("L3", contra=0.0, medial=0.33)
    assert across.startswith("cauda equina at a central L2-L3 disc: right L3-S5 roots and across the midline the "
                             "left ") and across.endswith("-S5 roots")
    assert cauda("S2", contra=1.0) == "cauda equina in the sacral canal at S1-S2, midline: S2-S5 roots on both " \
                                      "sides alike"
    assert cauda("L5", contra=0.5, severity=0.5).endswith("right > left, incomplete")


def test_every_cauda_variant_of_the_atlas_reads_as_roots_at_a_level():
    at = atlas_mod.get("chronic")
    lo, hi = (PATTERNS["cauda_equina"].tops[k] for k in (0, 1))
    seen = set()
    for i in range(len(at)):
        if at.pattern_of[i] != "cauda_equina":
            continue
        text = describe(at.lesion(i))
        seen.add(text)
        assert re.match(r"cauda equina (at (a central|the) [LT]\d+-[LS]\d disc|in the sacral canal at S\d-S\d(, "
                        r"midline)?): ", text), text
        assert re.search(r"\b(L\d|S\d)-S5 roots\b", text), text
        assert "Co" not in text and not any(re.search(rf"\b{p}\b", text) for p in PARAMS), text
        assert ">" in text or "both sides alike" in text or "only" in text or "across the midline" in text, text
    assert len(seen) > 50 and lo == "L1" and hi == "S3"


def test_the_conus_is_named_apart():
    for top in PATTERNS["conus"].tops:
        text = Lesion("conus", "both", top).describe()
        assert text.startswith("conus medullaris behind ") and "cord segments" in text, text
        assert not re.search(r"\b(left|right|both|disc|roots in the sac)\b", text.replace("their roots", "")), text
    assert Lesion("conus", "both", "S3").describe() == "conus medullaris behind L1: cord segments S3-Co1 and their " \
                                                       "roots"
