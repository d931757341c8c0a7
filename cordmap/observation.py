"""The observation model: P(what the examiner records | what a candidate lesion predicts).

All its parameters live here. None is fitted to patient data (we have none); each is a stated judgement, so a
researcher can replace them. They are chosen to tolerate the exam noise seen at the bedside: a sensory boundary
off by one dermatome, a muscle graded one step off, an equivocal plantar response.
"""
from __future__ import annotations

import itertools
from functools import cache

import numpy as np

from .anatomy import MODALITIES, SIDES, anatomy
from .findings import item_values
from .forward import SENSORY_THRESHOLDS, Readout
from .nerves import muscle_names

# P(recorded grade | true grade) for sensory items; rows true absent/impaired/normal, columns recorded 0/1/2.
# Judgement (no source): most disagreement is between adjacent grades.
SENSORY_CONFUSION = np.array([
    [0.86, 0.11, 0.03],
    [0.14, 0.72, 0.14],
    [0.02, 0.05, 0.93],
])
# Where the examiner puts a sensory boundary relative to where the lesion puts it, in dermatomes (positive: the
# recorded boundary lies caudal to the predicted one). Levels are often charted one or two dermatomes low (the
# boundary is found moving up from the numb zone, and an extrinsic compression's level lies below the lesion), less
# often one high (from memory: ISNCSCI training material stresses level errors of one segment; false-localizing
# levels below a compression, shared check values section 5). Judgement.
BOUNDARY_SHIFT = {-1: 0.08, 0: 0.72, 1: 0.12, 2: 0.08}
# Modalities that travel in one pathway: charted at the same dermatome they are one look at that pathway, not two
# (pinprick and temperature in the spinothalamic tract; vibration and joint position in the dorsal columns). Each
# such item weighs 1 / (number of its pathway's modalities charted there). Light touch, carried by both, stands alone.
PATHWAYS = {"pinprick": "spinothalamic", "temperature": "spinothalamic", "vibration": "dorsal_column",
            "joint_position": "dorsal_column", "light_touch": "touch"}
# MRC grade noise: recorded grade ~ predicted expected grade + Gaussian with this SD (grades), plus a floor.
# Judgement: inter-rater agreement within one grade is usual for manual muscle testing (from memory).
MOTOR_SD = 0.6
FLOOR = 0.01
# Incomplete lesions are the rule at the bedside: below a lesion predicted to paralyse a muscle, the recorded grade
# is often anywhere between the prediction and normal. This share of the probability is spread evenly over the
# grades from the predicted one up to 4 (judgement; common clinical practice, no source).
MOTOR_PARTIAL = 0.3
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
# Signs an examiner rarely records wrongly and that localize on their own: a weak diaphragm, a Horner sign, the
# sacral signs and the bladder (common clinical practice, no source).
DECISIVE_CORRECT = 0.96
DECISIVE_SIGNS = ("diaphragm", "horner", "voluntary_anal_contraction", "deep_anal_pressure", "bladder")


def _sensory_block(loss: np.ndarray) -> np.ndarray:
    """(c, 28) loss -> (c, 28, 3) P(recorded grade), the boundary moved by BOUNDARY_SHIFT (edges repeat)."""
    lo, hi = SENSORY_THRESHOLDS
    g = np.where(loss < lo, 2, np.where(loss < hi, 1, 0))
    p = SENSORY_CONFUSION[g]
    n = p.shape[1]
    out = np.zeros_like(p)
    for shift, w in BOUNDARY_SHIFT.items():  # recorded at d shows what is predicted at d - shift
        out += w * p[:, np.clip(np.arange(n) - shift, 0, n - 1)]
    return out


@cache
def _sensory_table() -> tuple[np.ndarray, np.ndarray]:
    """`_sensory_block` as a lookup: the recorded grade's log-probability at a dermatome depends only on the
    predicted grades at the dermatomes the boundary shifts reach. Returns (shifts, table): table[code] is the
    (3,) float32 log P of one combination of those grades, code = sum of grade x 3^k over the shifts in order.
    Every entry goes through the same float64 operations in the same order as `_sensory_block`, so the two agree
    bit for bit (tests/test_atlas_speed.py)."""
    shifts = np.array(list(BOUNDARY_SHIFT), dtype=np.intp)
    combos = np.array(list(itertools.product(range(3), repeat=len(shifts))))[:, ::-1]  # column k: shift k's grade
    table = np.zeros((len(combos), 3))
    for k, w in enumerate(BOUNDARY_SHIFT.values()):
        table += w * SENSORY_CONFUSION[combos[:, k]]
    code = (combos * 3 ** np.arange(len(shifts))).sum(axis=1)
    out = np.empty_like(table)
    out[code] = table
    return shifts, np.log(out).astype(np.float32)


def _sensory_log_block(loss: np.ndarray, out: np.ndarray) -> None:
    """(c, 28) loss -> `out` (28 x 3, c) float32 log P(recorded grade), dermatome-major:
    `np.log(_sensory_block(loss))`, transposed."""
    lo, hi = SENSORY_THRESHOLDS
    g = (loss.T < lo).astype(np.uint8)  # (28, c): 2 normal, 1 impaired, 0 absent
    g += loss.T < hi
    shifts, table = _sensory_table()
    n = g.shape[0]
    code = np.zeros(g.shape, dtype=np.intp)  # < 3 ** len(shifts)
    for k, shift in enumerate(shifts):
        code += np.take(g, np.clip(np.arange(n) - shift, 0, n - 1), axis=0) * np.uint8(3 ** k)
    for v in range(3):  # row 3 d + v: dermatome d, recorded grade v (basic slices: views, written in place)
        out[v::3] = np.take(table[:, v], code)


def _motor_log_table(grade: np.ndarray) -> tuple[np.ndarray, np.ndarray]:
    """float32 log `_motor_block` of each distinct grade: (table (6, distinct), index of each grade's column, in
    grade's shape). Many candidates share a grade (5 for every muscle a lesion spares), and each grade's six
    probabilities depend on that grade alone, so `np.log(_motor_block(grade))` is table.T[index], bit for bit."""
    distinct, index = np.unique(grade, return_inverse=True)
    table = np.log(_motor_block(distinct)).astype(np.float32)
    return np.ascontiguousarray(table.T), index.reshape(grade.shape)


def _motor_block(grade: np.ndarray) -> np.ndarray:
    k = np.arange(6)
    p = np.exp(-0.5 * ((k - grade[..., None]) / MOTOR_SD) ** 2) + FLOOR
    p = p / p.sum(-1, keepdims=True)
    spared = (k >= np.floor(grade[..., None] + 0.5)) & (k <= 4)  # from the predicted grade up to 4
    share = spared / np.maximum(spared.sum(-1, keepdims=True), 1)
    return (1 - MOTOR_PARTIAL) * p + MOTOR_PARTIAL * np.where(spared.any(-1, keepdims=True), share, p)


def _categorical(idx: np.ndarray, confusion: np.ndarray) -> np.ndarray:
    return confusion[idx]


def _ordinal_confusion(n: int) -> np.ndarray:
    d = np.abs(np.arange(n)[:, None] - np.arange(n)[None, :])
    m = REFLEX_ORDINAL[d]
    return m / m.sum(1, keepdims=True)


def _binary_confusion(c: float = BINARY_CORRECT) -> np.ndarray:
    return np.array([[c, 1 - c], [1 - c, c]])


def _three_way_confusion(c: float) -> np.ndarray:
    return np.full((3, 3), (1 - c) / 2) + np.eye(3) * (c - (1 - c) / 2)


def pathway_groups(items) -> np.ndarray:
    """(len(items),) the group of each item for `item_weights`: sensory items of one pathway, side and dermatome
    share a number (>= 0); every other item gets -1."""
    groups: dict[tuple, int] = {}
    return np.array([groups.setdefault((PATHWAYS[k[1]], k[2], k[3]), len(groups)) if k[0] == "sensory" else -1
                     for k in items], dtype=np.int64)


def item_weights(keys, groups: np.ndarray | None = None) -> np.ndarray:
    """How much each recorded item counts (1 = one independent observation): sensory items of one pathway charted
    at the same side and dermatome share one observation (PATHWAYS); every other item counts once. `groups`, if
    given, is `pathway_groups` of `keys` (computed once for a fixed item list)."""
    g = pathway_groups(keys) if groups is None else np.asarray(groups)
    if not len(g):
        return np.zeros(0, dtype=np.float32)
    sens = g >= 0
    counts = np.bincount(g[sens], minlength=1)
    w = np.ones(len(g), dtype=np.float32)
    w[sens] = 1.0 / counts[g[sens]]
    return w


@cache
def _item_places(items: tuple) -> tuple[tuple[np.ndarray, np.ndarray], ...]:
    """Per table of a readout (sensory grades, key muscles, non-key muscles: flattened per candidate), the positions
    in `items` of its items and the flat index of each in that table."""
    a = anatomy()
    names = muscle_names()
    places: tuple[list, list, list] = ([], [], [])
    for i, key in enumerate(items):
        if key[0] == "sensory":
            m, sd, d = MODALITIES.index(key[1]), SIDES.index(key[2]), a.dermatomes.index(key[3])
            places[0].append((i, (m * len(SIDES) + sd) * len(a.dermatomes) + d))
        elif key[0] == "motor":
            places[1].append((i, SIDES.index(key[1]) * len(a.key_myotomes) + a.key_myotomes.index(key[2])))
        elif key[0] == "muscle":
            places[2].append((i, SIDES.index(key[1]) * len(names) + names.index(key[2])))
    return tuple((np.array([i for i, _ in p], dtype=np.intp), np.array([j for _, j in p], dtype=np.intp))
                 for p in places)


def crisp_indices(r: Readout, items: tuple) -> np.ndarray:
    """(candidates, items) index of each candidate's predicted value of every item (what `simulate` reports):
    the exam a candidate predicts, before any examiner noise."""
    lo, hi = SENSORY_THRESHOLDS
    n = r.sensory.shape[0]
    out = np.empty((n, len(items)), dtype=np.int8)
    grade = (r.sensory < lo).astype(np.int8)  # 2 normal, 1 impaired, 0 absent
    grade += r.sensory < hi
    motor = np.clip(np.floor(r.motor + 0.5), 0, 5).astype(np.int8)
    muscles = np.clip(np.floor(r.muscles + 0.5), 0, 5).astype(np.int8)
    for (pos, flat), table in zip(_item_places(tuple(items)), (grade, motor, muscles)):
        out[:, pos] = np.take(table.reshape(n, -1), flat, axis=1)
    for i, key in enumerate(items):
        if key[0] == "reflex":
            out[:, i] = r.reflexes[(key[1], key[2])]
        elif key[0] not in ("sensory", "motor", "muscle"):
            out[:, i] = r.signs[(key[1], key[2])]
    return out


def log_probabilities(r: Readout, items: tuple, offsets: np.ndarray) -> np.ndarray:
    """(candidates, columns) log P(value | candidate) for every item in `items`, laid out by `offsets`."""
    return log_probabilities_by_column(r, items, offsets).T


def log_probabilities_by_column(r: Readout, items: tuple, offsets: np.ndarray, out: np.ndarray | None = None):
    """(columns, candidates) log P(value | candidate), the atlas' own layout (written into `out` if given)."""
    a = anatomy()
    n = r.sensory.shape[0]
    if out is None:
        out = np.empty((offsets[-1], n), dtype=np.float32)
    first = {}  # (modality, side) -> the item index of its first dermatome, when the dermatomes follow in order
    for i, key in enumerate(items):
        if key[0] == "sensory" and key[3] == a.dermatomes[0]:
            first[(key[1], key[2])] = i
    sens = {}
    for (m, s), i in first.items():
        block = [("sensory", m, s, d) for d in a.dermatomes]
        if tuple(items[i:i + len(block)]) == tuple(block) and offsets[i + len(block)] - offsets[i] == 3 * len(block):
            _sensory_log_block(r.sensory[:, MODALITIES.index(m), SIDES.index(s)],
                               out[offsets[i]:offsets[i + len(block)]])
            sens[(m, s)] = True
    motor, motor_at = _motor_log_table(r.motor)
    muscles, muscles_at = _motor_log_table(r.muscles)  # non-key muscles: graded as the key ones
    names = {m: i for i, m in enumerate(muscle_names())}
    ordinal4 = _ordinal_confusion(4)
    binary = _binary_confusion()
    derm = {d: i for i, d in enumerate(a.dermatomes)}
    myo = {m: i for i, m in enumerate(a.key_myotomes)}
    for i, key in enumerate(items):
        o0, o1 = offsets[i], offsets[i + 1]
        kind = key[0]
        if kind == "sensory":
            if (key[1], key[2]) not in sens:  # not laid out as one block: compute this side's block apart
                tmp = np.empty((3 * len(a.dermatomes), n), dtype=np.float32)
                _sensory_log_block(r.sensory[:, MODALITIES.index(key[1]), SIDES.index(key[2])], tmp)
                sens[(key[1], key[2])] = tmp
            block = sens[(key[1], key[2])]
            if block is not True:
                out[o0:o1] = block.reshape(len(a.dermatomes), 3, n)[derm[key[3]]]
            continue
        if kind == "motor":
            out[o0:o1] = motor[:, motor_at[:, SIDES.index(key[1]), myo[key[2]]]]
            continue
        if kind == "muscle":
            out[o0:o1] = muscles[:, muscles_at[:, SIDES.index(key[1]), names[key[2]]]]
            continue
        if kind == "reflex":
            idx = r.reflexes[(key[1], key[2])]
            nv = len(item_values(key))
            conf = ordinal4 if nv == 4 else PLANTAR_CONFUSION if nv == 3 else binary
        else:
            idx = r.signs[(key[1], key[2])]
            nv = len(item_values(key))
            c = DECISIVE_CORRECT if key[1] in DECISIVE_SIGNS else BINARY_CORRECT
            conf = _binary_confusion(c) if nv == 2 else _three_way_confusion(c)
        out[o0:o1] = np.log(conf).astype(np.float32).T[:, idx]
    return out
