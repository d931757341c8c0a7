"""Hypotheses: how the ranker groups the atlas' candidates, per atlas and computed once.

A hypothesis is one clinical family (`Pattern.family`), side and rostral segment; its probability is the sum of
its variants'. Candidates predicting the same bedside exam share an exam group; a hypothesis whose best lesion
predicts the same exam as a more probable one's is folded into it (`leading_hypotheses`). The prior of every
candidate (`_Derived.prior`) comes from the family table `data/priors.csv` (see `rank.size_prior`).
"""
from __future__ import annotations

from dataclasses import dataclass

import numpy as np

from . import atlas as atlas_mod
from . import observation
from .anatomy import anatomy, cord_region, family_priors
from .items import abnormal, item_values
from .lesions import NORMAL, PATTERNS
from .nerves import nerve_ids

SAME_EXAM_SHOWN = 5  # other lesions listed with a hypothesis whose predicted exam they share
UNDETECTABLE = -1e4  # log prior of a lesion whose predicted exam is wholly normal (effectively zero)

# Lesions outside the cord raise no cord-level caution: a root or the cauda equina cannot cause autonomic
# dysreflexia or paralyse the diaphragm (check values section 8: dysreflexia with cord lesions at or above T6 only).
OUTSIDE_THE_CORD = ("root", "cauda_equina", "polyneuropathy", *nerve_ids(), NORMAL)



# An entered value the candidate gives less than this probability (its observation model, `observation.py`) is a
# conflict: what the ranking lists as conflicts and what the body picture marks are this one rule (`agreement`).
# Judgement, no source: 0.2 leaves the boundary shifts and grade noise the observation model expects unmarked.
CONFLICT_BELOW = 0.2


def exam_values(f, items) -> tuple[np.ndarray, np.ndarray]:
    """For the entered `items` of findings `f`: the index of each entered value among the item's values and
    whether it is abnormal ((len(items),) arrays). What `agreement` needs of the exam itself, so a ranking works
    it out once for all its hypotheses."""
    values = [f.items[key] for key in items]
    index = np.array([_value_index(key, v) for key, v in zip(items, values)], dtype=np.intp)
    return index, np.array([abnormal(key, v) for key, v in zip(items, values)], dtype=bool)


def _value_index(key, value) -> int:
    """The index of `value` among the item's values (-1 if it is not one of them)."""
    values = item_values(key)
    return values.index(value) if value in values else -1


def agreement(f, items, logp: np.ndarray, likely: np.ndarray, exam=None) -> tuple[list, list]:
    """(explained, conflicting) for one candidate: lists of (key, entered, predicted) triples over the entered
    `items`; `logp[j]` is the candidate's log-probability of the entered value of `items[j]`, `likely[j]` the
    index of its most likely value. Explained: the predicted value is the entered one and it is abnormal.
    `exam`: `exam_values(f, items)`, if the caller has it."""
    index, ab = exam_values(f, items) if exam is None else exam
    likely = np.asarray(likely, dtype=np.intp).reshape(-1)
    conflicts = np.exp(np.asarray(logp)) < CONFLICT_BELOW
    explained = ~conflicts & (likely == index) & ab
    agree, conflict = [], []
    for j in np.flatnonzero(conflicts | explained):
        key = items[j]
        triple = (key, f.items[key], item_values(key)[int(likely[j])])
        (conflict if conflicts[j] else agree).append(triple)
    return agree, conflict


_BITS: dict[int, tuple] = {}


def _abnormal_bits(at: atlas_mod.Atlas) -> np.ndarray:
    """(words, n) uint64: bit r % 64 of word r // 64 of candidate i is set when i predicts item r abnormal
    (`Atlas.abnormal` > 0). Built once per atlas."""
    hit = _BITS.get(id(at))
    if hit is None or hit[0] is not at:
        ab = np.asarray(at.abnormal) > 0  # (items, n)
        words = -(-ab.shape[0] // 64)
        padded = np.zeros((words * 64, ab.shape[1]), dtype=bool)
        padded[:ab.shape[0]] = ab
        bits = np.packbits(padded, axis=0, bitorder="little")  # (words * 8, n) bytes, item r in bit r % 8
        bits = np.ascontiguousarray(bits.T).view("<u8").T  # (words, n): little-endian words of 64 items
        hit = _BITS[id(at)] = (at, np.ascontiguousarray(bits))
    return hit[1]


def _row_words(at: atlas_mod.Atlas, rows) -> list[tuple[int, np.uint64]]:
    """The (word, mask) pairs with the bits of items `rows` set, words without any left out."""
    words = _abnormal_bits(at).shape[0]
    flags = np.zeros(words * 64, dtype=bool)
    flags[np.asarray(rows, dtype=np.intp)] = True
    masks = np.packbits(flags, bitorder="little").view("<u8")
    return [(w, m) for w, m in enumerate(masks) if m]


def any_abnormal(at: atlas_mod.Atlas, rows) -> np.ndarray:
    """(n,) bool: the candidate predicts at least one of the items `rows` abnormal, i.e.
    `(at.abnormal[rows] > 0).any(axis=0)`, from the per-atlas bit sets (a few words per candidate, not rows x n)."""
    bits = _abnormal_bits(at)
    hit = np.zeros(bits.shape[1], dtype=np.uint64)
    for w, m in _row_words(at, rows):
        hit |= bits[w] & m
    return hit != 0


def count_abnormal(at: atlas_mod.Atlas, rows) -> np.ndarray:
    """(n,) int: how many of the distinct items `rows` the candidate predicts abnormal, i.e.
    `(at.abnormal[rows] > 0).sum(axis=0)`."""
    bits = _abnormal_bits(at)
    out = np.zeros(bits.shape[1], dtype=np.int64)
    for w, m in _row_words(at, rows):
        out += np.bitwise_count(bits[w] & m)
    return out


@dataclass(frozen=True)
class _Derived:
    """Per-atlas arrays the ranking reuses: each candidate's most likely value of every item, pattern codes."""
    likely: np.ndarray  # (items, n) index of the most likely value
    pattern_names: tuple[str, ...]
    pattern_code: np.ndarray  # (n,) index into pattern_names
    group: np.ndarray  # (n,) candidates with the same `likely` column (the same predicted exam) share a number
    cell: np.ndarray  # (n,) candidates of one pattern, side and rostral segment share a number (the prior's unit)
    hyp: np.ndarray  # (n,) hypothesis number: one clinical family (Pattern.family), side and rostral segment
    side: np.ndarray  # (n,) side of each candidate ("left", "right", "both")
    outside: np.ndarray  # (n,) bool: a lesion outside the cord (OUTSIDE_THE_CORD)
    normal: np.ndarray  # (n,) bool: the normal cord
    pathway_group: np.ndarray  # (items,) observation.pathway_groups of the atlas' items
    prior: np.ndarray  # (n,) float32 log prior (see size_prior)


_DERIVED: dict[int, tuple[atlas_mod.Atlas, _Derived]] = {}


def _derived(at: atlas_mod.Atlas) -> _Derived:
    hit = _DERIVED.get(id(at))
    if hit is not None and hit[0] is at:
        return hit[1]
    names, code = np.unique(at.pattern_of, return_inverse=True)
    code = code.ravel()
    group = same_exam_groups(at.likely)
    sides = np.array([v.side for v in at.variants])[at.variant]
    _, cell = np.unique(np.stack([code, np.unique(sides, return_inverse=True)[1].ravel(), at.top]), axis=1,
                        return_inverse=True)
    cell = cell.ravel()
    priors = family_priors()
    segs = anatomy().segments
    cell_code = np.zeros(cell.max() + 1, dtype=np.int64)
    cell_code[cell] = code
    cell_top = np.zeros(cell.max() + 1, dtype=np.int64)
    cell_top[cell] = at.top
    # each family's weight spread over its hypotheses, the common levels weighing `factor` times more
    cell_w = np.array([priors[names[c]].factor if segs[t] in priors[names[c]].common else 1.0
                       for c, t in zip(cell_code, cell_top)])
    fam_w = np.array([priors[str(n)].weight for n in names])
    cell_share = cell_w / np.bincount(cell_code, weights=cell_w, minlength=len(names))[cell_code]
    _, sub = np.unique(np.stack([cell, group]), axis=1, return_inverse=True)  # (hypothesis, exam) pairs
    sub = sub.ravel()
    sub_cell = np.zeros(sub.max() + 1, dtype=np.int64)
    sub_cell[sub] = cell
    exams_per_cell = np.bincount(sub_cell)
    log_prior = (np.log(fam_w[code] / fam_w.sum()) + np.log(cell_share[cell]) - np.log(exams_per_cell[cell])
                 - np.log(np.bincount(sub)[sub]))
    # A lesion predicting a wholly normal exam cannot be found at the bedside: on any exam it is the normal cord's
    # twin, so it is left out (no prior mass) rather than listed as a lesion that explains nothing.
    normal = np.flatnonzero(at.pattern_of == NORMAL)
    if len(normal):
        log_prior[(group == group[normal[0]]) & (code != code[normal[0]])] = UNDETECTABLE
    fam = np.array([PATTERNS[str(n)].family for n in names])[code]
    # A diffuse degeneration (Pattern.diffuse) has no one level: its hypothesis is the family in a region of the
    # cord (where its rostral edge lies: cervical, thoracic, lumbosacral), not one per rostral segment.
    region = np.array([cord_region(i) for i in range(len(anatomy().segments))])
    diffuse = np.array([PATTERNS[str(n)].diffuse for n in names])[code]
    where = np.where(diffuse, -1 - region[at.top], at.top)
    _, hyp = np.unique(np.stack([np.unique(fam, return_inverse=True)[1].ravel(),
                                 np.unique(sides, return_inverse=True)[1].ravel(), where]), axis=1,
                       return_inverse=True)
    extent = (at.bottom - at.top + 1).astype(np.float32)
    prior = (log_prior - 0.04 * extent - 0.5 * at.area).astype(np.float32)
    prior.setflags(write=False)
    d = _Derived(at.likely, tuple(str(n) for n in names), code, group, cell, hyp.ravel(), sides,
                 np.isin(at.pattern_of, OUTSIDE_THE_CORD), at.pattern_of == NORMAL,
                 observation.pathway_groups(at.items), prior)
    _DERIVED[id(at)] = (at, d)
    return d


def exam_groups(at: atlas_mod.Atlas) -> np.ndarray:
    """The atlas' same-exam group number per candidate (cached with the atlas)."""
    return _derived(at).group


def same_exam_groups(likely: np.ndarray) -> np.ndarray:
    """(n,) group number per candidate: equal numbers for equal columns of `likely` (items, n), that is for
    candidates predicting the same bedside exam. Numbers are dense from 0."""
    rows = np.ascontiguousarray(likely.T)
    keys = rows.view(np.dtype((np.void, rows.shape[1] * rows.itemsize))).ravel()
    _, group = np.unique(keys, return_inverse=True)
    return group.ravel()


def leading_groups(score: np.ndarray, post: np.ndarray, group: np.ndarray, n: int
                   ) -> list[tuple[np.ndarray, float]]:
    """The n most probable same-exam groups: (members best first, group probability), most probable first.

    A group's probability is the sum of its members' posteriors `post`; groups too improbable to register in
    float64 come after, ordered by their best member's `score` (log posterior, unnormalised)."""
    mass = np.bincount(group, weights=post)
    live = np.flatnonzero(mass > 0)
    if len(live) > n:
        live = live[np.argpartition(-mass[live], n - 1)[:n]]
    order = live[np.lexsort((live, -mass[live]))].tolist()
    if len(order) < n:  # the rest by their best member, best first (a stable sort keeps ties in index order)
        for i in np.argsort(-score, kind="stable"):
            g = int(group[i])
            if mass[g] == 0 and g not in order:
                order.append(g)
                if len(order) == n:
                    break
    out = []
    for g in order:
        members = np.flatnonzero(group == g)
        members = members[np.lexsort((members, -score[members]))]
        out.append((members, float(mass[g])))
    return out


def leading_hypotheses(score: np.ndarray, post: np.ndarray, d: _Derived, n: int) -> list[tuple[np.ndarray, float]]:
    """The n most probable hypotheses (pattern, side, rostral segment): (members best first, probability), most
    probable first. A hypothesis whose best lesion predicts the same bedside exam as a more probable one's is folded
    into it (its probability added; the lesion is listed there as the same exam): no bedside test separates them."""
    out: list[tuple[np.ndarray, float]] = []
    shown: dict[int, int] = {}
    for members, mass in leading_groups(score, post, d.hyp, max(4 * n, n + 20)):
        g = int(d.group[members[0]])
        if g in shown:
            k = shown[g]
            out[k] = (out[k][0], out[k][1] + mass)
        elif len(out) < n:
            shown[g] = len(out)
            out.append((members, mass))
    order = sorted(range(len(out)), key=lambda k: -out[k][1])  # folding can reorder them (a stable sort)
    return [(out[k][0], min(float(out[k][1]), 1.0)) for k in order]  # a sum of float64 parts can pass 1 by ulps


def _leading(score: np.ndarray, n: int) -> np.ndarray:
    """Indices of the n highest scores, best first, ties in index order (as a stable full sort would give)."""
    if n >= len(score):
        return np.argsort(-score, kind="stable")
    kth = -np.partition(-score, n - 1)[n - 1]
    above = np.flatnonzero(score > kth)
    part = np.concatenate([above, np.flatnonzero(score == kth)[: n - len(above)]])
    return part[np.lexsort((part, -score[part]))]



def same_exam(at, i: int, score: np.ndarray) -> np.ndarray:
    """Candidates of other hypotheses predicting exactly candidate i's bedside exam, best first (none for the
    normal cord: the lesions too small to show at the bedside are not worth naming)."""
    d = _derived(at)
    if at.pattern_of[i] == NORMAL:
        return np.zeros(0, dtype=np.int64)
    m = np.flatnonzero((d.group == d.group[i]) & (d.hyp != d.hyp[i]))
    return m[np.lexsort((m, -score[m]))]


def listed(at, members: np.ndarray) -> np.ndarray:
    """Of `members` (best first), the ones a hypothesis names: the best of each pattern first (a conus lesion
    beside a cauda equina one matters more than a third cauda variant), then the next best; SAME_EXAM_SHOWN at
    most, one per hypothesis (pattern, side, rostral segment)."""
    d = _derived(at)
    _, one = np.unique(d.hyp[members], return_index=True)
    members = members[np.sort(one)]
    pats = at.pattern_of[members]
    _, first = np.unique(pats, return_index=True)
    firsts = set(first.tolist())
    order = sorted(range(len(members)), key=lambda k: (k not in firsts, k))
    return members[order[:SAME_EXAM_SHOWN]]
