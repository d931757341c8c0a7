"""Limb muscles beyond the key ones, and single peripheral nerve lesions of the limbs.

Two tables (package data, each row with its source):

* ``data/limb_muscles.csv``: the non-key muscles of findings format 2 (`muscles`), each with its root supply
  (segment weights summing to 1, read like ``muscles.csv``) and its nerve. The forward model predicts them from
  the cord and roots as it predicts the key muscles (`forward.readout`).
* ``data/nerves.csv`` and ``data/nerve_territory.csv``: the nerve lesions the ranker tries (a pattern each, outside
  the cord and roots, `lesions.PATTERNS`), with the root each mimics, and per nerve the key muscles (by myotome),
  limb muscles, ISNCSCI key sensory points (by dermatome) and tendon reflexes it takes, each with the share of the
  item it supplies (1 = all of it; less where neighbouring nerves overlap).

A nerve lesion has no mask: its candidates' cord is whole, and `apply` lays the nerve's losses over their readout
(`severity` x share of each item: lower motor neuron weakness, loss of the skin modalities at the key point, a
reduced or lost reflex). The key points are skin points: vibration and joint position at the bony points of a
dermatome keep their supply from neighbouring nerves and the joint capsules, so a single nerve lesion takes only
DEEP_SHARE of its share from them (judgement, common clinical practice, no source).
"""
from __future__ import annotations

from dataclasses import dataclass
from functools import cache

import numpy as np

from .anatomy import REFLEXES, SIDES, _table, _weights, anatomy
from .errors import CordmapError

DEEP_SHARE = 0.15
KINDS = ("motor", "muscle", "sensory", "reflex")
# The severities the ranker's atlas tries (judgement), on forward.motor_grade's scale: 0.3 a mild palsy (grade 4,
# impaired skin), 0.7 a moderate one (grade 3), 0.9 a severe one (grade 2, numb), 1 complete.
SEVERITY_GRID = (0.3, 0.7, 0.9, 1.0)


@dataclass(frozen=True)
class Nerve:
    """One nerve lesion: id (a findings-v2 name), clinical words, the root it mimics (its placeholder segment), and
    its territory {kind: {item: share}}."""
    id: str
    words: str
    mimics: str
    territory: dict

    def __repr__(self):
        return f"Nerve({self.id})"


@cache
def limb_muscles() -> dict[str, tuple[str, dict[int, float], str]]:
    """{name: (muscle, {segment index: weight}, nerve)} in table order (the findings-v2 names)."""
    t = _table("limb_muscles.csv", ("name", "muscle", "segments", "nerve"))
    segs = anatomy().segments
    out = {}
    for r in t.itertuples():
        try:
            out[r.name] = (r.muscle, _weights(r.segments, segs), r.nerve)
        except (ValueError, IndexError):
            raise CordmapError(f"cordmap/data/limb_muscles.csv: bad segments {r.segments!r} for {r.name!r}") from None
    return out


def muscle_names() -> tuple[str, ...]:
    """The non-key muscles of findings format 2, in table order."""
    return tuple(limb_muscles())


@cache
def nerves() -> dict[str, Nerve]:
    """The nerve lesions, {id: Nerve} in table order; every territory item is checked against the anatomy."""
    a = anatomy()
    t = _table("nerves.csv", ("nerve", "words", "mimics"))
    terr = _table("nerve_territory.csv", ("nerve", "kind", "item", "share"))
    allowed = {"motor": a.key_myotomes, "muscle": muscle_names(), "sensory": a.dermatomes, "reflex": REFLEXES}
    out = {}
    for r in t.itertuples():
        a.index(r.mimics, f"cordmap/data/nerves.csv mimics of {r.nerve}")
        out[r.nerve] = Nerve(r.nerve, r.words, r.mimics, {k: {} for k in KINDS})
    for i, r in enumerate(terr.itertuples()):
        where = f"cordmap/data/nerve_territory.csv row {i + 2}"
        if r.nerve not in out:
            raise CordmapError(f"{where}: unknown nerve {r.nerve!r}; nerves.csv has {', '.join(out)}")
        if r.kind not in KINDS or r.item not in allowed[r.kind]:
            raise CordmapError(f"{where}: unknown {r.kind} item {r.item!r}")
        try:
            share = float(r.share)
        except ValueError:
            share = -1.0
        if not 0 < share <= 1:
            raise CordmapError(f"{where}: share must lie in (0, 1], got {r.share!r}")
        out[r.nerve].territory[r.kind][r.item] = share
    return out


def nerve_ids() -> tuple[str, ...]:
    return tuple(nerves())


def words(nerve: str, side: str) -> str:
    """'right common peroneal nerve at the fibular head'."""
    return f"{side} {nerves()[nerve].words}"


def nerve_study(nerve: str, side: str) -> str:
    """The test that places a nerve lesion, in one line (the ranking's window for it: no spine to image)."""
    n = nerves()[nerve]
    return (f"not the spine: nerve conduction studies and EMG of the {side} {n.words} and of the muscles of the "
            f"{n.mimics} root beside it tell the nerve from the root it mimics (image the spine only if they point "
            f"to the root)")


# ------------------------------------------------------------------ unseen nerve lesions

# A nerve lesion none of whose items was examined predicts, on that exam, exactly what the normal cord predicts: for
# that exam it is the normal cord's twin (as a lesion predicting a wholly normal exam is on every exam, hypotheses.py),
# and it is left out rather than sharing the normal cord's probability by its prior alone (a carpal tunnel is
# invisible on a chart of the key muscles and key sensory points). Judgement, the same rule as hypotheses.py's.
UNSEEN = -1e4


def unseen(at, examined_rows) -> np.ndarray | None:
    """(candidates,) UNSEEN for the nerve lesions that predict every examined item (atlas item rows) as the normal
    cord does, 0 elsewhere; None when no nerve lesion is unseen (the common case costs nothing)."""
    hit = _NERVE_COLUMNS.get(id(at))
    if hit is None or hit[0] is not at:
        cols = np.flatnonzero(np.isin(at.pattern_of, nerve_ids()))
        hit = _NERVE_COLUMNS[id(at)] = (at, cols, np.asarray(at.abnormal)[:, cols] > 0)  # (items, nerve lesions)
    _, cols, abnormal = hit
    if not len(cols):
        return None
    rows = np.asarray(examined_rows, dtype=np.int64)
    seen = abnormal[rows].any(axis=0) if len(rows) else np.zeros(len(cols), bool)
    if seen.all():
        return None
    out = np.zeros(len(at), dtype=np.float32)
    out[cols[~seen]] = UNSEEN
    return out


_NERVE_COLUMNS: dict[int, tuple] = {}


# ------------------------------------------------------------------ the readout of nerve candidates

@dataclass(frozen=True)
class _Maps:
    """Per nerve (rows, in `nerve_ids` order) the share of every item of the readout's arrays."""
    sensory: np.ndarray  # (nerves, dermatomes)
    motor: np.ndarray  # (nerves, key muscles)
    muscles: np.ndarray  # (nerves, limb muscles)
    reflexes: dict  # reflex -> (nerves,)


@cache
def _maps() -> _Maps:
    a = anatomy()
    ns = list(nerves().values())
    names = muscle_names()
    sens = np.array([[n.territory["sensory"].get(d, 0.0) for d in a.dermatomes] for n in ns], dtype=np.float32)
    mot = np.array([[n.territory["motor"].get(m, 0.0) for m in a.key_myotomes] for n in ns], dtype=np.float32)
    mus = np.array([[n.territory["muscle"].get(m, 0.0) for m in names] for n in ns], dtype=np.float32)
    refl = {r: np.array([n.territory["reflex"].get(r, 0.0) for n in ns], dtype=np.float32) for r in REFLEXES}
    return _Maps(sens, mot, mus, refl)


def candidate_codes(patterns, sides, severities) -> tuple[np.ndarray, np.ndarray, np.ndarray]:
    """Per candidate: its nerve's row in `nerve_ids` (-1: not a nerve lesion), side index, severity."""
    ids = nerve_ids()
    code = np.array([ids.index(p) if p in ids else -1 for p in patterns], dtype=np.int64)
    side = np.array([SIDES.index(s) if s in SIDES else 0 for s in sides], dtype=np.int64)
    return code, side, np.asarray(severities, dtype=np.float32)


def apply(r, code: np.ndarray, side: np.ndarray, severity: np.ndarray):
    """The readout `r` with each nerve candidate's losses laid over it (others unchanged); a new Readout."""
    from dataclasses import replace

    from .findings import TENDON_GRADES
    from .forward import ARC_ABSENT, ARC_REDUCED, motor_grade

    rows = np.flatnonzero(code >= 0)
    if not len(rows):
        return r
    m = _maps()
    c, sd, sev = code[rows], side[rows], severity[rows][:, None]
    sens = r.sensory.copy()
    skin = sev * m.sensory[c]  # (k, dermatomes)
    for mod, factor in ((0, 1.0), (1, 1.0), (2, 1.0), (3, DEEP_SHARE), (4, DEEP_SHARE)):
        now = sens[rows, mod, sd]
        sens[rows, mod, sd] = 1 - (1 - now) * (1 - factor * skin)

    def weaken(grade, umn, lmn, share):
        lmn = lmn.copy()
        lmn[rows, sd] = 1 - (1 - lmn[rows, sd]) * (1 - sev * share)
        out = grade.copy()
        out[rows, sd] = motor_grade(umn[rows, sd], lmn[rows, sd])
        return out.astype(grade.dtype), lmn

    motor, ml = weaken(r.motor, r.motor_umn, r.motor_lmn, m.motor[c])
    muscles, mul = weaken(r.muscles, r.muscles_umn, r.muscles_lmn, m.muscles[c])
    reflexes = dict(r.reflexes)
    for name, share in m.reflexes.items():
        arc = sev[:, 0] * share[c]
        if not arc.any():
            continue
        for s, side_name in enumerate(SIDES):
            mine = sd == s
            key = (side_name, name)
            idx = reflexes[key].copy()
            ar = np.where(mine, arc, 0.0)
            cur = idx[rows]
            if len(idx) and name in ("biceps", "brachioradialis", "triceps", "finger_flexors", "knee", "ankle"):
                reduced = TENDON_GRADES.index("reduced")
                new = np.where(ar >= ARC_ABSENT, 0, np.where(ar >= ARC_REDUCED, np.minimum(cur, reduced), cur))
            else:
                new = cur
            idx[rows] = new.astype(idx.dtype)
            reflexes[key] = idx
    return replace(r, sensory=sens, motor=motor, motor_lmn=ml, muscles=muscles, muscles_lmn=mul,
                   reflexes=reflexes)
