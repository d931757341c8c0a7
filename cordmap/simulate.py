"""`simulate(lesion) -> Findings`: the forward model for one lesion."""
from __future__ import annotations

import numpy as np

from .anatomy import MODALITIES, REFLEXES, SIDES, anatomy
from .findings import SIGNS, Findings, reflex_values
from .forward import SENSORY_THRESHOLDS, Readout, along_extent, fibre_losses_per_segment, readout
from .lesions import Lesion, lesion_masks
from .model import DEFAULT_RESOLUTION, sections

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
        for name in REFLEXES:
            items[("reflex", side, name)] = reflex_values(name)[int(r.reflexes[(side, name)][i])]
    for name, side in SIGN_KEYS:
        items[("sign", name, side)] = sign_values(name)[int(r.signs[(name, side)][i])]
    return Findings(items, label, phase)


def predict(lesion: Lesion, resolution: int = DEFAULT_RESOLUTION) -> Readout:
    """The raw readout (loss fractions, expected grades) of one lesion."""
    secs = sections(resolution)
    per_seg = fibre_losses_per_segment(lesion_masks(lesion, secs)[None], resolution)
    L = along_extent(per_seg, np.array([0]), np.array([lesion.top_index]), np.array([lesion.bottom_index]))
    return readout(L, lesion.phase == "acute")


def simulate(lesion: Lesion, label: str | None = None, resolution: int = DEFAULT_RESOLUTION) -> Findings:
    """Predicted bedside findings of a lesion, every item filled in."""
    label = f"simulated {lesion.describe()}" if label is None else label
    return readout_to_findings(predict(lesion, resolution), 0, label, lesion.phase)
