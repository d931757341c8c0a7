"""Localizing clues that are not deficits (findings format 2): spinal percussion tenderness and band-like pain.

Neither is predicted by the forward model (no fibre loss makes a vertebra tender), so they are not atlas items;
`log_likelihood` turns them into a modest log-likelihood term per candidate that `rank` adds to the evidence:

* **Tenderness** at a vertebra: an extrinsic compression (a metastasis, an abscess, a collapsed vertebra) is often
  tender over the vertebra that compresses the cord, and the cord segments at that vertebra (`data/segments.csv`:
  the cord segments lie above the vertebrae of their number) are where its rostral edge lies, not where the
  sensory loss begins (the outer, sacral fibres are caught first, so the level lies below the lesion: a false
  localizing level). A compression whose rostral segment lies at the tender vertebra gains TENDER_AT, one a
  vertebra above or below TENDER_NEAR.
* **Band-like or radicular pain** at a dermatome on one side: the root of that dermatome is irritated, by a root
  lesion or by a compression at that segment. A root lesion of that segment and side, or a compression whose
  rostral segment is that segment or the one above (one lying on that side, or in the midline), gains BAND_AT.

Every other candidate gains nothing, so the clue speaks only for the lesions it localizes, as a likelihood ratio:
P(clue | such a lesion at that level) / P(clue | any other lesion). Several tender vertebrae (or painful dermatomes)
count as one observation each kind: the best-matching one counts. An exam without clues is ranked exactly as
before (`log_likelihood` returns None).

The ratios are judgement (no source): a clue, not a deficit. They are kept well below what one charted sensory
dermatome or muscle grade weighs in the observation model (about 2-3 nats), so a clue breaks ties between
compressions the deficits cannot place (the level of a compression with a false sensory level) but never
outweighs the deficits themselves.
"""
from __future__ import annotations

import numpy as np

from .anatomy import SIDES, anatomy

TENDER_AT = float(np.log(3.0))  # likelihood ratio 3 at the tender vertebra (judgement)
TENDER_NEAR = float(np.log(1.5))  # 1.5 a vertebra above or below (the segment-to-vertebra rule's spread)
BAND_AT = float(np.log(3.0))  # likelihood ratio 3 for a root or compression at the band's segment (judgement)
COMPRESSIONS = ("lateral_compression", "anterior_compression", "posterior_compression")


def has_clues(f) -> bool:
    return any(k[0] in ("tenderness", "band_pain") for k in f.items)


def segments_at(vertebra: str) -> tuple[int, ...]:
    """The cord segments (indices) lying at a vertebra (`data/segments.csv`); () below the cord's end."""
    a = anatomy()
    return tuple(i for i, s in enumerate(a.segments) if a.vertebra(s) == vertebra)


def _vertebra_neighbours(vertebra: str) -> tuple[str, ...]:
    from .findings_v2 import VERTEBRAE

    i = VERTEBRAE.index(vertebra)
    return tuple(VERTEBRAE[j] for j in (i - 1, i + 1) if 0 <= j < len(VERTEBRAE))


def _sides(at) -> np.ndarray:
    return np.array([v.side for v in at.variants])[at.variant]


def log_likelihood(f, at) -> np.ndarray | None:
    """(candidates,) the clues' log-likelihood ratio for every atlas candidate, or None when `f` records none."""
    if not has_clues(f):
        return None
    a = anatomy()
    pat = at.pattern_of
    top = np.asarray(at.top)
    compression = np.isin(pat, COMPRESSIONS)
    out = np.zeros(len(top), dtype=np.float32)
    tender = [k[1] for k in f.items if k[0] == "tenderness"]
    if tender:
        best = np.zeros(len(top), dtype=np.float32)
        for v in tender:
            near = [i for w in _vertebra_neighbours(v) for i in segments_at(w)]
            gain = np.where(np.isin(top, segments_at(v)), TENDER_AT, np.where(np.isin(top, near), TENDER_NEAR, 0.0))
            best = np.maximum(best, np.where(compression, gain, 0.0))
        out += best
    band = [(k[1], k[2]) for k in f.items if k[0] == "band_pain"]
    if band:
        sides = _sides(at)
        best = np.zeros(len(top), dtype=np.float32)
        for side, derm in band:
            segs = a.dermatome_segments[derm]
            root = (pat == "root") & np.isin(top, segs) & (sides == side)
            above = [j - 1 for j in segs if j > 0]
            comp = compression & np.isin(top, [*segs, *above]) & np.isin(sides, (side, "both"))
            best = np.maximum(best, np.where(root | comp, BAND_AT, 0.0))
        out += best
    return out


def clue_words(f) -> list[str]:
    """The clues recorded, in words (for reports and the ranking's explanation)."""
    out = [f"tender to percussion at {k[1]}" for k in f.items if k[0] == "tenderness"]
    for side in SIDES:
        derms = [k[2] for k in f.items if k[0] == "band_pain" and k[1] == side]
        if derms:
            out.append(f"{side} band-like pain at {', '.join(derms)}")
    return out
