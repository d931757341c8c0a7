"""`simulate(lesion) -> Findings`: the forward model for one lesion.

The masks of a lesion do not depend on its extent (top and bottom only select segments), so the per-segment fibre
losses of a pattern variant (pattern, side, parameters) are computed once, for all 31 segments, and kept as the
cumulative sums `forward.extent_sums` (`variant_sums`); any extent of that variant then costs one subtraction and
the readout. Custom masks are not cached (a `Lesion`'s equality ignores its mask).
"""
from __future__ import annotations

import threading
from collections import OrderedDict
from dataclasses import fields

import numpy as np

from . import nerves
from .anatomy import MODALITIES, REFLEXES, SIDES, anatomy
from .findings import SIGNS, Findings, reflex_values
from .forward import (
    SENSORY_THRESHOLDS,
    Readout,
    extent_losses,
    extent_sums,
    fibre_losses_per_segment,
    readout,
    scale_fibres,
    with_neuropathy,
)
from .lesions import CUSTOM, Lesion, fibre_shares, lesion_masks
from .model import DEFAULT_RESOLUTION, sections
from .nerves import muscle_names

SIGN_KEYS = (("horner", "left"), ("horner", "right"), *((name, "") for name in SIGNS))


def sensory_grade(loss):
    """Loss fraction -> 2 normal, 1 impaired, 0 absent."""
    lo, hi = SENSORY_THRESHOLDS
    return np.where(loss < lo, 2, np.where(loss < hi, 1, 0))


def sign_values(name: str) -> tuple:
    return (True, False) if name == "horner" else SIGNS[name]


def readout_to_findings(r: Readout, i: int, label: str = "", phase: str = "chronic") -> Findings:
    """The i-th candidate of a readout as a complete Findings value (every item examined)."""
    a = anatomy()
    items: dict[tuple, object] = {}
    grades = sensory_grade(r.sensory[i])
    for mi, mod in enumerate(MODALITIES):
        for sd, side in enumerate(SIDES):
            for di, d in enumerate(a.dermatomes):
                items[("sensory", mod, side, d)] = int(grades[mi, sd, di])
    for sd, side in enumerate(SIDES):
        for k, myo in enumerate(a.key_myotomes):
            items[("motor", side, myo)] = int(np.clip(np.floor(r.motor[i, sd, k] + 0.5), 0, 5))
        for k, name in enumerate(muscle_names()):
            items[("muscle", side, name)] = int(np.clip(np.floor(r.muscles[i, sd, k] + 0.5), 0, 5))
        for name in REFLEXES:
            items[("reflex", side, name)] = reflex_values(name)[int(r.reflexes[(side, name)][i])]
    for name, side in SIGN_KEYS:
        items[("sign", name, side)] = sign_values(name)[int(r.signs[(name, side)][i])]
    return Findings(items, label, phase)


EXTENT_FIELDS = ("top", "bottom", "phase")  # what a lesion's masks do not depend on
VARIANT_CACHE_SIZE = 128  # pattern variants kept (about 110 kB each)
_VARIANTS: OrderedDict[tuple, np.ndarray] = OrderedDict()
_LOCK = threading.Lock()


def variant_key(lesion: Lesion) -> tuple | None:
    """What a lesion's masks depend on: every compared field but the extent and phase, parameters with defaults
    filled in. None for a custom mask (never cached)."""
    if lesion.pattern == CUSTOM:
        return None
    key = []
    for f in fields(lesion):
        if f.compare and f.name not in EXTENT_FIELDS:
            value = tuple(sorted(lesion.all_params().items())) if f.name == "params" else getattr(lesion, f.name)
            key.append((f.name, value))
    return tuple(key)


def _sums(lesion: Lesion, resolution: int) -> np.ndarray:
    """(1, 32, features) `extent_sums` of the lesion's masks on all segments, computed afresh."""
    per_seg = fibre_losses_per_segment(lesion_masks(lesion, sections(resolution))[None], resolution)
    if lesion.pattern != CUSTOM:
        per_seg = scale_fibres(per_seg, fibre_shares(lesion.pattern, lesion.all_params()))
    return extent_sums(per_seg)


def variant_sums(lesion: Lesion, resolution: int = DEFAULT_RESOLUTION) -> np.ndarray:
    """`_sums` of the lesion, kept per pattern variant (least recently used dropped first); read-only."""
    key = variant_key(lesion)
    if key is None:
        return _sums(lesion, resolution)
    key = (key, resolution)
    with _LOCK:
        cum = _VARIANTS.get(key)
        if cum is not None:
            _VARIANTS.move_to_end(key)
            return cum
    cum = _sums(lesion, resolution)
    cum.flags.writeable = False
    with _LOCK:
        _VARIANTS[key] = cum
        while len(_VARIANTS) > VARIANT_CACHE_SIZE:
            _VARIANTS.popitem(last=False)
    return cum


def predict(lesion: Lesion, resolution: int = DEFAULT_RESOLUTION) -> Readout:
    """The raw readout (loss fractions, expected grades) of one lesion."""
    cum = variant_sums(lesion, resolution)
    L = extent_losses(cum, np.array([0]), np.array([lesion.top_index]), np.array([lesion.bottom_index]))
    L = with_neuropathy(L, np.array([lesion.all_params().get("neuropathy", 0.0)]))
    r = readout(L, lesion.phase == "acute")
    return nerves.apply(r, *nerves.candidate_codes([lesion.pattern], [lesion.side],
                                                   [lesion.all_params().get("severity", 1.0)]))


def simulate(lesion: Lesion, label: str | None = None, resolution: int = DEFAULT_RESOLUTION) -> Findings:
    """Predicted bedside findings of a lesion, every item filled in."""
    label = f"simulated {lesion.describe()}" if label is None else label
    return readout_to_findings(predict(lesion, resolution), 0, label, lesion.phase)
