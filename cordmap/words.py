"""Lesions in plain words: what a clinician reads in every output (CLI, JSON text fields, dashboard, report).

`describe(lesion)` says where the lesion is and what it takes, in the words of the trade, never a pattern's internal
parameter names or numbers ("compression from behind at C5, moderately deep, incomplete" rather than
"posterior compression C5 (depth 0.42, severity 0.5)"). A symmetric lesion (side "both") is given no side. A
parameter the words below do not know is left out rather than printed by name: `tests/test_words.py` greps every
text output for the parameter names.

The grades are bands over each parameter's range (`lesions.PATTERNS`), judgement chosen so that neighbouring grid
values read differently where the bedside picture differs.
"""
from __future__ import annotations

from .anatomy import anatomy
from .lesions import CUSTOM, NORMAL, PATTERNS, Lesion, sac_share
from .nerves import nerve_ids
from .nerves import words as nerve_words


def _band(value: float, bands: tuple[tuple[float, str], ...]) -> str:
    """The word of the first band whose upper bound is at least `value` (the last band otherwise)."""
    for upper, word in bands:
        if value <= upper + 1e-9:
            return word
    return bands[-1][1]


# share of the territory destroyed (focal patterns): 1 is complete for that shape, and says nothing
_INCOMPLETE = ((0.34, "mild, incomplete"), (0.6, "incomplete"), (0.99, "severe but incomplete"), (1.0, ""))
# share lost in a diffuse degeneration
_DEGENERATION = ((0.4, "mild"), (0.7, "moderate"), (1.0, "advanced"))
_NERVE = ((0.4, "mild, partial"), (0.8, "partial"), (0.99, "severe, partial"), (1.0, ""))
_ROOT = ((0.25, "mild, partial"), (0.5, "partial"), (0.8, "severe, partial"), (1.0, ""))
# how far an extrinsic compression reaches: a side one up to half the cord, a front or back one up to 0.7 of its depth
_SIDE_DEPTH = ((0.12, "shallow, the roots only"), (0.2, "shallow"), (0.36, "moderately deep"),
               (0.46, "deep"), (0.5, "deep, reaching the midline"))
_FRONT_BACK_DEPTH = ((0.2, "shallow"), (0.45, "moderately deep"), (0.55, "deep, to the middle of the cord"),
                     (0.75, "very deep, through most of the cord"))
_CENTRAL_SIZE = ((0.22, "small, around the central canal"), (0.35, "medium, the central gray matter"),
                 (0.55, "large, gray matter and inner white matter"), (0.9, "very large, most of the cross-section"))
_NEUROPATHY = ((0.0, ""), (0.4, "with a mild neuropathy of the feet"), (0.7, "with a neuropathy to the mid-shins"),
               (1.0, "with a neuropathy to the knees and hands"))


def segment_range(top: str, bottom: str) -> str:
    """'at C5' for one segment, 'C5-C7' for several."""
    return f"at {top}" if top == bottom else f"{top}-{bottom}"


def sac_level(root: str) -> str:
    """Where in the spinal canal `root` is the highest root still in the sac: the disc whose paracentral bulge
    takes it as it traverses (`data/foramina.csv`: L4-L5 for L5), or, below L5-S1, the sacral canal between the
    foramen above it and its own ('sacral canal at S1-S2' for S2)."""
    from .imaging import foramina

    disc = next((f.level for f in foramina() if f.paracentral == root and f.level != "sacrum"), None)
    if disc:
        return f"{disc} disc"
    segs = anatomy().segments
    return f"sacral canal at {segs[segs.index(root) - 1]}-{root}"


def _sac_roots(top: str) -> str:
    """The roots a lesion of the sac takes from `top` down, named to S5 (the coccygeal root has no bedside sign)."""
    return "S5 root" if top == "S5" else f"{top}-S5 roots"


def _cauda(lesion: Lesion, q: dict) -> str:
    """'cauda equina at a central L4-L5 disc: L5-S5 roots, right > left': the level of the disc or canal where the
    highest root is caught, the roots, and how the two sides share them, in words."""
    side = lesion.side
    other = "right" if side == "left" else "left"
    contra, medial = q.get("contra", 0.0), q.get("medial", 0.0)
    central = medial > 0 or contra >= 0.99
    level = sac_level(lesion.top)
    if level.startswith("sacral canal"):
        place = f"in the {level}" + (", midline" if central else "")
    else:
        place = f"at {'a central' if central else 'the'} {level}"
    roots = _sac_roots(lesion.top)
    if contra >= 0.99:
        taken = f"{roots} on both sides alike"
    elif contra > 0.01:
        taken = f"{roots}, {side} > {other}"
    elif medial > 0:
        segs = anatomy().segments
        first = next((s for s in segs[segs.index(lesion.top):] if sac_share(segs.index(s), medial) > 0), None)
        if first == lesion.top:  # the other side's roots all reached from the midline: both sides, one worse
            taken = f"{roots}, {side} > {other}"
        else:
            across = f"and across the midline the {other} {_sac_roots(first)}" if first else "only"
            taken = f"{side} {roots} {across}"
    else:
        taken = f"{side} {roots} only"
    return f"cauda equina {place}: {taken}"


def _join(head: str, *parts: str) -> str:
    return ", ".join([head, *[p for p in parts if p]])


def describe(lesion: Lesion) -> str:
    """A lesion in plain words, e.g. 'left half of the cord (Brown-Séquard) at T6',
    'cauda equina at a central L4-L5 disc: L5-S5 roots, right > left', 'dorsal columns only at T1'."""
    p = lesion.pattern
    if p == NORMAL:
        return "no lesion (normal cord)"
    where = segment_range(lesion.top, lesion.bottom)
    if p == CUSTOM:
        return f"own mask {where}"
    q = lesion.all_params()
    side = lesion.side
    sev = _band(q.get("severity", 1.0), _INCOMPLETE)
    if p == "complete":
        return _join(f"whole cross-section of the cord {where}", sev if sev else "complete")
    if p == "hemisection":
        return _join(f"{side} half of the cord (Brown-Séquard) {where}", sev)
    if p == "central":
        return _join(f"central cord lesion {where}", _band(q["size"], _CENTRAL_SIZE), sev)
    if p == "anterior":
        territory = "ventral two-thirds" if q["reach"] >= 0.3 else "ventral half"
        return _join(f"anterior spinal artery territory {where} ({territory}, dorsal columns spared)", sev)
    if p == "posterior":
        what = "dorsal columns and dorsal horns" if q["horns"] >= 0.5 else "dorsal columns only"
        return f"{what} {where}"
    if p == "posterolateral":
        return _join(f"dorsal and lateral columns (combined degeneration) {where}",
                     _band(q["severity"], _DEGENERATION), _band(q.get("neuropathy", 0.0), _NEUROPATHY))
    if p == "lateral_compression":
        return _join(f"compression from the {side} {where}", _band(q["depth"], _SIDE_DEPTH), sev)
    if p in ("anterior_compression", "posterior_compression"):
        direction = "the front" if p == "anterior_compression" else "behind"
        return _join(f"compression from {direction} {where}", _band(q["depth"], _FRONT_BACK_DEPTH), sev)
    if p == "anterior_horn":
        who = "both sides" if side == "both" else f"{side} side"
        return f"anterior horn cells, {who}, {where} (lower motor neuron only)"
    if p == "motor_neuron":
        mix = "mostly lower motor neuron" if q.get("upper", 1.0) < 0.85 else "upper and lower"
        return _join(f"motor neurons, {mix}, {where} (no sensory loss)", _band(q["severity"], _DEGENERATION))
    if p == "conus":  # the cord itself, behind a vertebral body, not roots at a disc: said so, to tell it apart
        behind = anatomy().vertebra(lesion.top)
        return _join(f"conus medullaris behind {behind}: cord segments {lesion.top}-Co1 and their roots", sev)
    if p == "cauda_equina":
        return _join(_cauda(lesion, q), sev)
    if p == "root":
        return _join(f"{side} {lesion.top} root", _band(q.get("severity", 1.0), _ROOT))
    if p in nerve_ids():
        return _join(nerve_words(p, side), _band(q.get("severity", 1.0), _NERVE))
    if p == "polyneuropathy":
        return f"length-dependent polyneuropathy ({_band(q.get('neuropathy', 0.65), _DEGENERATION)})"
    side_word = "" if side == "both" else f"{side} "
    return f"{side_word}{PATTERNS[p].summary.split(':')[0].split(' (')[0]} {where}"
