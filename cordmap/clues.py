"""Localizing clues that are not deficits (findings format 2): spinal percussion tenderness and band-like pain.

Neither is predicted by the forward model (no fibre loss makes a vertebra tender), so they are not atlas items;
`log_likelihood` turns them into a modest log-likelihood term per candidate that `rank` adds to the evidence:

* **Tenderness** at a vertebra: an extrinsic compression (a metastasis, an abscess, a collapsed vertebra) is often
  tender over the vertebra that compresses the cord, and the cord segments at that vertebra (`data/segments.csv`:
  the cord segments lie above the vertebrae of their number) are where its rostral edge lies, not where the
  sensory loss begins: the outer, sacral fibres of the spinothalamic tract are caught first, so the level may lie
  several segments below the lesion (a false localizing level). The model makes that false level itself for
  compressions from the front and the side (`lesions.OUTER_FIRST`), so a compression whose rostral segment lies
  at the tender vertebra gains TENDER_AT. One whose loss begins up to FALSE_LEVEL segments lower, or at the next
  vertebra, gains TENDER_NEAR: the model may not reach every false level (its depth grid is coarse, and a
  compression from behind takes the roots at its level first, so it keeps an even share). The ranking then adds
  the tender vertebra to that hypothesis' imaging window (`with_windows`).
* **Band-like or radicular pain** at a dermatome on one side: the root of that dermatome is irritated, by a root
  lesion or by a compression at that segment. A root lesion of that segment and side, or a compression (on that
  side or in the midline) at that segment, gains BAND_AT; a compression whose loss begins up to FALSE_LEVEL
  segments lower gains BAND_NEAR.

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
BAND_NEAR = float(np.log(1.5))  # 1.5 for a compression whose loss begins below the band (judgement)
COMPRESSIONS = ("lateral_compression", "anterior_compression", "posterior_compression")
# How far below an extrinsic compression its sensory level may lie, in cord segments: false localizing levels
# several segments below a thoracic compression are classic (from memory, standard neurology teaching on the
# lamination of the spinothalamic tract); four is judgement.
FALSE_LEVEL = 4


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
            at_v = segments_at(v)
            near = [i for w in _vertebra_neighbours(v) for i in segments_at(w)]
            gain = np.where(np.isin(top, at_v), TENDER_AT,
                            np.where(_below(top, at_v) | _below(top, near), TENDER_NEAR, 0.0))
            best = np.maximum(best, np.where(compression, gain, 0.0))
        out += best
    band = [(k[1], k[2]) for k in f.items if k[0] == "band_pain"]
    if band:
        sides = _sides(at)
        best = np.zeros(len(top), dtype=np.float32)
        for side, derm in band:
            segs = a.dermatome_segments[derm]
            root = (pat == "root") & np.isin(top, segs) & (sides == side)
            comp = compression & np.isin(sides, (side, "both"))
            gain = np.where(root | (comp & np.isin(top, segs)), BAND_AT,
                            np.where(comp & _below(top, segs), BAND_NEAR, 0.0))
            best = np.maximum(best, gain)
        out += best
    return out


def _below(top: np.ndarray, segs) -> np.ndarray:
    """Whether a loss beginning at `top` lies at one of `segs` or up to FALSE_LEVEL segments below it."""
    out = np.zeros(top.shape, dtype=bool)
    for s in segs:
        out |= (top >= s) & (top <= s + FALSE_LEVEL)
    return out


def with_windows(h, f):
    """Hypothesis `h` with the tender vertebrae its compression may lie at added to its imaging window."""
    from dataclasses import replace

    from .imaging import Window, merge_levels

    lz = h.lesion
    if lz.pattern not in COMPRESSIONS:
        return h
    top = np.array([lz.top_index])
    extra = []
    for v in (k[1] for k in f.items if k[0] == "tenderness"):
        near = [i for w in (v, *_vertebra_neighbours(v)) for i in segments_at(w)]
        if _below(top, near)[0]:
            extra.append(Window((v,), f"tender to percussion at {v}: an extrinsic compression may lie there, above "
                                      f"where the sensory loss begins (a false localizing level)"))
    if not extra:
        return h
    imaging = (*h.imaging, *extra)
    levels = merge_levels([h.vertebral_levels, *[w.levels for w in extra]])
    return replace(h, imaging=imaging, vertebral_levels=levels)


def clue_words(f) -> list[str]:
    """The clues recorded, in words (for reports and the ranking's explanation)."""
    out = [f"tender to percussion at {k[1]}" for k in f.items if k[0] == "tenderness"]
    for side in SIDES:
        derms = [k[2] for k in f.items if k[0] == "band_pain" and k[1] == side]
        if derms:
            out.append(f"{side} band-like pain at {', '.join(derms)}")
    return out
