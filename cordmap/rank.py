"""Rank lesion hypotheses against bedside findings.

log-likelihood of a candidate = sum over the *examined* items of log P(recorded value | candidate) from the atlas
(items not examined contribute nothing: not examined is never taken as normal); posterior = softmax(loglik +
log prior). The prior is uniform up to a mild preference for smaller lesions (`size_prior`), replaceable by the
caller.
"""
from __future__ import annotations

import json
from collections.abc import Callable
from dataclasses import dataclass, field

import numpy as np
import pandas as pd

from . import atlas as atlas_mod
from . import cautions as C
from .anatomy import MODALITIES, SIDES, anatomy
from .findings import Findings, item_label, item_values, parse
from .lesions import Lesion
from .simulate import simulate

FORMAT = "cordmap-ranking/1"
# Poor fit: the best candidate scores this many standard deviations below what it scores on its own simulated
# findings over the same items (and at least POOR_FIT_NATS below). Chosen so that exams with 10% of items
# corrupted still fit (see tests/test_rank.py) while two-lesion pictures do not.
POOR_FIT_Z = 4.0
POOR_FIT_NATS = 8.0
# ...or when adding a second lesion to the best one improves the fit by more than this (nats): random exam errors
# rarely cluster the way one more lesion's findings do. Judgement, checked in tests/test_rank.py.
SECOND_LESION_GAIN = 10.0
NEXT_TEST_POOL = 200  # candidates considered for the next-test calculation
SAME_EXAM_SHOWN = 5  # other lesions listed with a hypothesis whose predicted exam they share


def size_prior(at: atlas_mod.Atlas) -> np.ndarray:
    """Log prior: every distinct predicted exam equally likely a priori, its share split evenly among the
    candidates that predict it, with a mild preference for shorter and smaller lesions (at most ~1.5 nats apart).

    Split, not uniform per candidate: the atlas holds up to hundreds of candidates with the same predicted exam
    (small thoracic lesions that no bedside test detects, say), and a uniform prior would give that exam hundreds
    of times the weight of a single root's, an artefact of how densely the grid samples it."""
    extent = (at.bottom - at.top + 1).astype(np.float32)
    return (-0.04 * extent - 0.5 * at.area - _derived(at).log_group_size).astype(np.float32)


@dataclass(frozen=True)
class Hypothesis:
    rank: int
    lesion: Lesion
    probability: float
    log_likelihood: float
    vertebral_levels: tuple[str, ...]
    explains: tuple[str, ...]
    conflicts: tuple[str, ...]
    summary: str
    # Other candidates whose predicted bedside exam is the same as `lesion`'s on every item the model knows (the
    # most probable first, at most SAME_EXAM_SHOWN), and how many there are in all. No bedside test separates
    # them; imaging does. `probability` is the mass of the whole group; `vertebral_levels` covers the listed ones.
    same_exam: tuple[Lesion, ...] = ()
    same_exam_count: int = 0

    def predicted(self) -> Findings:
        return simulate(self.lesion)

    def same_exam_text(self) -> str:
        """'a; b and 3 more': the other lesions with this exam, for one line of text ('' when there are none)."""
        more = self.same_exam_count - len(self.same_exam)
        return "; ".join(o.describe() for o in self.same_exam) + (f" and {more} more" if more else "")

    def to_dict(self) -> dict:
        lz = self.lesion
        return {"rank": self.rank, "pattern": lz.pattern, "side": lz.side, "top": lz.top, "bottom": lz.bottom,
                "params": lz.all_params(), "probability": round(self.probability, 4),
                "log_likelihood": round(self.log_likelihood, 3), "vertebral_levels": list(self.vertebral_levels),
                "explains": list(self.explains), "conflicts": list(self.conflicts),
                "same_exam": [{"pattern": o.pattern, "side": o.side, "top": o.top, "bottom": o.bottom,
                               "params": o.all_params()} for o in self.same_exam],
                "same_exam_count": self.same_exam_count}


@dataclass(frozen=True)
class NextTest:
    item: tuple
    finding: str
    why: str
    gain: float


@dataclass(frozen=True)
class Ranking:
    hypotheses: tuple[Hypothesis, ...]
    fit: str
    advice: str
    next_tests: tuple[NextTest, ...]
    cautions: tuple[str, ...]
    pattern_marginals: dict = field(default_factory=dict)
    level_marginals: dict = field(default_factory=dict)
    examined: int = 0
    classification: object | None = None

    @property
    def best(self) -> Hypothesis:
        return self.hypotheses[0]

    @property
    def table(self) -> pd.DataFrame:
        rows = [{**h.to_dict(), "params": json.dumps(h.lesion.all_params()),
                 "vertebral_levels": " ".join(h.vertebral_levels), "explains": "; ".join(h.explains),
                 "conflicts": "; ".join(h.conflicts), "same_exam": "; ".join(o.describe() for o in h.same_exam)}
                for h in self.hypotheses]
        return pd.DataFrame(rows)

    def to_dict(self) -> dict:
        d = {"format": FORMAT, "hypotheses": [h.to_dict() for h in self.hypotheses], "fit": self.fit,
             "next_tests": [{"finding": t.finding, "why": t.why} for t in self.next_tests],
             "cautions": list(self.cautions),
             "marginals": {"pattern": {k: round(v, 4) for k, v in self.pattern_marginals.items()},
                           "top": {k: round(v, 4) for k, v in self.level_marginals.items()}}}
        if self.fit == "poor":
            d["advice"] = self.advice
        if self.classification is not None:
            d["classification"] = self.classification.to_dict()
        return d

    def to_json(self, indent: int | None = 2) -> str:
        return json.dumps(self.to_dict(), indent=indent)


# ------------------------------------------------------------------ scoring

def observed_columns(f: Findings, at: atlas_mod.Atlas) -> tuple[np.ndarray, list[tuple]]:
    """Atlas rows of the recorded values (NT and unknown items skipped) and the items they belong to."""
    cols, items = [], []
    index = at.item_index
    for key, value in f.items.items():
        if value == "NT" or key not in index:
            continue
        cols.append(int(at.offsets[index[key]]) + item_values(key).index(value))
        items.append(key)
    return np.array(cols, dtype=np.int64), items


def log_likelihood(f: Findings, at: atlas_mod.Atlas) -> np.ndarray:
    cols, _ = observed_columns(f, at)
    if len(cols) == 0:
        return np.zeros(len(at), dtype=np.float32)
    return at.logp[cols].sum(axis=0, dtype=np.float32)


def _softmax(x: np.ndarray) -> np.ndarray:
    e = np.exp(x - x.max())
    return e / e.sum()


def _self_fit(at: atlas_mod.Atlas, i: int, items: list[tuple]) -> tuple[float, float]:
    """Expected log-likelihood of candidate i on its own simulated findings over `items`, and its variance."""
    lp = at.logp[:, i].astype(np.float64)
    p = np.exp(lp)
    starts = at.offsets[:-1]
    m = np.add.reduceat(p * lp, starts)  # expected log-probability per item
    m2 = np.add.reduceat(p * lp * lp, starts)
    sel = np.array([at.item_index[k] for k in items])
    return float(m[sel].sum()), float((m2[sel] - m[sel] ** 2).sum())




def second_lesion(at, b: int, cols: np.ndarray, items: list[tuple], lp: np.ndarray | None = None
                  ) -> tuple[int, float]:
    """The candidate that, added to candidate b, best improves the fit, and the gain in nats.

    Two lesions together predict, item by item, the more abnormal of their two predictions. `lp` is
    ``at.logp[cols]`` when the caller already has it.
    """
    rows = np.array([at.item_index[k] for k in items])
    lp = at.logp[cols] if lp is None else lp  # (examined, candidates)
    abn = at.abnormal[rows]
    worse = (abn > abn[:, b:b + 1]).astype(np.float32)
    gain = np.einsum("ij,ij->j", lp, worse) - lp[:, b] @ worse
    c = int(gain.argmax())
    return c, float(gain[c])


def assess_fit(at, cols: np.ndarray, items: list[tuple], ll: np.ndarray, b: int, lp: np.ndarray | None = None
               ) -> tuple[str, int, float]:
    """'good' or 'poor' for the best candidate b, with the best second lesion and its gain in nats."""
    mean, var = _self_fit(at, b, items)
    gap = mean - float(ll[b])
    second, gain = second_lesion(at, b, cols, items, lp)
    poor = (gap > POOR_FIT_NATS and gap > POOR_FIT_Z * np.sqrt(max(var, 1e-9))) or gain > SECOND_LESION_GAIN
    return ("poor" if poor else "good"), second, gain


def rank(findings, top: int = 10, prior: Callable[[atlas_mod.Atlas], np.ndarray] | None = None,
         next_tests: int = 5, classify: bool = True) -> Ranking:
    """Rank every candidate of the atlas against `findings` (a Findings, dict, JSON string or path)."""
    f = parse(findings)
    at = atlas_mod.get(f.phase)
    cols, items = observed_columns(f, at)
    seen = at.logp[cols]  # (examined, candidates): the log-probability of each recorded value
    ll = seen.sum(axis=0, dtype=np.float32) if len(cols) else np.zeros(len(at), np.float32)
    lp = ll + (prior or size_prior)(at)
    post = _softmax(lp.astype(np.float64))
    order = _leading(lp, max(top, NEXT_TEST_POOL, 1))
    fit, advice = "good", ""
    if items:
        fit, second, gain = assess_fit(at, cols, items, ll, int(order[0]), seen)
        if fit == "poor":
            advice = ("No single lesion explains these findings well: consider more than one lesion, or a cause "
                      "outside the cord (peripheral nerve, plexus, brain, functional), and re-examine.")
            if gain > SECOND_LESION_GAIN:
                advice += f" A second lesion ({at.lesion(second).describe()}) would explain much of the rest."
    d = _derived(at)
    hyps = tuple(_hypothesis(r + 1, at, members, float(gp), ll, f, items, seen, d)
                 for r, (members, gp) in enumerate(leading_groups(lp, post, d.group, max(top, 1))))
    segs = anatomy().segments
    names = d.pattern_names
    sums = np.bincount(d.pattern_code, weights=post, minlength=len(names))
    pm = {name: float(sums[j]) for j, name in enumerate(names)}
    tops = np.bincount(at.top, weights=post, minlength=30)
    lm = {segs[i]: float(tops[i]) for i in range(30) if tops[i] > 1e-4}
    pm = dict(sorted(pm.items(), key=lambda kv: -kv[1]))
    tests = suggest_tests(f, at, post, order, next_tests) if next_tests else ()
    cls = None
    if classify:
        try:
            from .classify import classify as _classify

            cls = _classify(f)
        except ImportError:
            cls = None
    return Ranking(hyps, fit, advice, tests, ranking_cautions(at, post, f, hyps), pm, lm, len(items), cls)


# ------------------------------------------------------------------ hypotheses in words

def vertebral_levels(lesion: Lesion) -> tuple[str, ...]:
    """Vertebral bodies to image for a lesion (adult segment-to-vertebra table)."""
    a = anatomy()
    t, b = lesion.top_index, lesion.bottom_index
    if lesion.pattern == "root":
        seg = lesion.top
        region, n = seg[0], int(seg[1:])
        if region == "C":  # cervical root n leaves above vertebra n (C8 between C7 and T1)
            return (f"C{n - 1}-C{n}",) if n <= 7 else ("C7-T1",)
        if region == "T":
            return (f"T{n}-T{n + 1}",) if n < 12 else ("T12-L1",)
        if region == "L":  # lumbar root n leaves below vertebra n; a disc one level higher can catch it in the canal
            below = f"L{n}-L{n + 1}" if n < 5 else "L5-S1"
            return (f"L{n - 1}-L{n}" if n > 1 else "T12-L1", below)
        return ("L5-S1", "sacrum")
    if lesion.pattern == "cauda_equina":
        return ("L1", "L2", "L3", "L4", "L5", "S1")
    if lesion.pattern in ("lateral_compression", "anterior_compression", "posterior_compression"):
        t = max(0, t - 3)  # an extrinsic lesion can sit several segments above the sensory level it produces
    out = []
    for s in range(t, b + 1):
        v = a.vertebra(a.segments[s])
        if v not in out:
            out.append(v)
    if lesion.pattern == "conus" and "L2" not in out:
        out.append("L2")
    return tuple(out)


def _ranges(derms: list[str]) -> str:
    a = anatomy().dermatomes
    idx = sorted(a.index(d) for d in derms)
    parts, start = [], idx[0]
    for p, q in zip(idx, idx[1:] + [None]):
        if q is None or q != p + 1:
            parts.append(a[start] if start == p else f"{a[start]}-{a[p]}")
            start = q
    return ", ".join(parts)


def _grade_word(key, value) -> str:
    if key[0] == "sensory":
        return ("absent", "impaired", "normal")[value]
    if key[0] == "motor":
        return f"grade {value}"
    if key[0] == "sign" and isinstance(value, bool):
        return "present" if value else "absent"
    return str(value)


def _describe(items: list[tuple[tuple, object, object]], conflicts: bool) -> list[str]:
    """Plain-words lines for (key, entered, predicted) triples, sensory items grouped into dermatome ranges."""
    out = []
    groups: dict[tuple, list[str]] = {}
    for key, entered, pred in items:
        if key[0] == "sensory":
            groups.setdefault((key[1], key[2], entered, pred), []).append(key[3])
    for (mod, side, e, p), derms in groups.items():
        words = f"{side} {mod.replace('_', ' ')} {_grade_word(('sensory',), e)} {_ranges(derms)}"
        out.append(f"{words} (predicted {_grade_word(('sensory',), p)})" if conflicts else words)
    for key, entered, pred in items:
        if key[0] == "sensory":
            continue
        words = f"{item_label(key)}: {_grade_word(key, entered)}"
        out.append(f"{words} (predicted {_grade_word(key, pred)})" if conflicts else words)
    return out


@dataclass(frozen=True)
class _Derived:
    """Per-atlas arrays the ranking reuses: each candidate's most likely value of every item, pattern codes."""
    likely: np.ndarray  # (items, n) index of the most likely value
    pattern_names: tuple[str, ...]
    pattern_code: np.ndarray  # (n,) index into pattern_names
    group: np.ndarray  # (n,) candidates with the same `likely` column (the same predicted exam) share a number
    log_group_size: np.ndarray  # (n,) log of the number of candidates in each candidate's group


_DERIVED: dict[int, tuple[atlas_mod.Atlas, _Derived]] = {}


def _derived(at: atlas_mod.Atlas) -> _Derived:
    hit = _DERIVED.get(id(at))
    if hit is not None and hit[0] is at:
        return hit[1]
    names, code = np.unique(at.pattern_of, return_inverse=True)
    group = same_exam_groups(at.likely)
    d = _Derived(at.likely, tuple(str(n) for n in names), code, group, np.log(np.bincount(group)[group]))
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


def _leading(score: np.ndarray, n: int) -> np.ndarray:
    """Indices of the n highest scores, best first, ties in index order (as a stable full sort would give)."""
    if n >= len(score):
        return np.argsort(-score, kind="stable")
    kth = -np.partition(-score, n - 1)[n - 1]
    above = np.flatnonzero(score > kth)
    part = np.concatenate([above, np.flatnonzero(score == kth)[: n - len(above)]])
    return part[np.lexsort((part, -score[part]))]


def _hypothesis(rank_no, at, members: np.ndarray, prob: float, ll: np.ndarray, f: Findings, items: list[tuple],
                seen: np.ndarray, d: _Derived) -> Hypothesis:
    """The same-exam group `members` (best first) in words, told by its best member i; `seen[:, i]` holds i's
    log-probability of the recorded value of each of `items`, `ll[i]` its log-likelihood."""
    i = int(members[0])
    lesion = at.lesion(i)
    others = tuple(at.lesion(int(j)) for j in listed(at, members)[1:])  # the shown ones, as group_levels takes
    agree, conflict = [], []
    index = at.item_index
    for key, pe in zip(items, np.exp(seen[:, i])):
        entered = f.items[key]
        pv = item_values(key)[int(d.likely[index[key], i])]
        if pe < 0.2:
            conflict.append((key, entered, pv))
        elif pv == entered and _abnormal(key, entered):
            agree.append((key, entered, pv))
    explains = _describe(agree, conflicts=False)
    conflicts = _describe(conflict, conflicts=True)
    summary = f"{lesion.describe()}: explains {len(agree)} abnormal finding{'s' * (len(agree) != 1)}"
    summary += f", {len(conflict)} conflict{'s' * (len(conflict) != 1)}" if conflict else ", no conflicts"
    if others:
        summary += f"; the same exam as {', '.join(o.describe() for o in others[:2])}"
        summary += f" and {len(members) - 3} more" if len(members) > 3 else ""
    levels = _merge_levels([vertebral_levels(x) for x in (lesion, *others)])
    return Hypothesis(rank_no, lesion, prob, float(ll[i]), levels, tuple(explains[:12]), tuple(conflicts[:12]),
                      summary, others, len(members) - 1)


def listed(at, members: np.ndarray) -> np.ndarray:
    """The members of a same-exam group (best first) that a hypothesis names: the best, then the best of each
    other pattern (a conus lesion beside a cauda equina one matters more than a third cauda variant), then the
    next best, SAME_EXAM_SHOWN besides the best at most."""
    pats = at.pattern_of[members]
    _, first = np.unique(pats, return_index=True)
    firsts = set(first.tolist()) | {0}
    order = sorted(range(len(members)), key=lambda k: (k not in firsts, k))
    return members[order[:1 + SAME_EXAM_SHOWN]]


def group_levels(at, members: np.ndarray) -> tuple[str, ...]:
    """Vertebral levels to image for a same-exam group: those of its best member and the others listed with it."""
    return _merge_levels([vertebral_levels(at.lesion(int(j))) for j in listed(at, members)])


_SPINE = [f"C{i}" for i in range(1, 8)] + [f"T{i}" for i in range(1, 13)] + [f"L{i}" for i in range(1, 6)] + \
    ["S1", "sacrum"]


def _merge_levels(lists: list[tuple[str, ...]]) -> tuple[str, ...]:
    """The union of several lesions' vertebral levels, head to tail (a disc level 'L4-L5' after 'L4')."""
    seen = list(dict.fromkeys(v for levels in lists for v in levels))
    if len(lists) == 1:
        return tuple(seen)
    return tuple(sorted(seen, key=lambda v: (_SPINE.index(v.split("-")[0]) if v.split("-")[0] in _SPINE
                                             else len(_SPINE), "-" in v)))


def _abnormal(key, value) -> bool:
    if key[0] == "sensory":
        return value != 2
    if key[0] == "motor":
        return value != 5
    if key[0] == "reflex":
        return value not in ("normal", "present", "flexor") or (key[2] == "hoffmann" and value == "present")
    if key[1] == "horner":
        return bool(value)
    return value not in (True, "present", "normal")


# ------------------------------------------------------------------ next best test

def suggest_tests(f: Findings, at, post, order, n: int = 5) -> tuple[NextTest, ...]:
    """The unexamined items whose result would most reduce uncertainty among the leading candidates."""
    pool = order[:NEXT_TEST_POOL]
    w = post[pool] / post[pool].sum()
    candidates = [k for k in at.items if k not in f.items]
    if not candidates:
        return ()
    gains = []
    for key in candidates:
        k = at.item_index[key]
        p = np.exp(at.logp[at.offsets[k]:at.offsets[k + 1]][:, pool].astype(np.float64))  # (values, pool)
        pv = p @ w
        mi = float((w * (p * (np.log(p) - np.log(pv)[:, None]))).sum())
        gains.append(mi)
    gains = np.array(gains)
    best = np.argsort(-gains)[:n]
    out = []
    for b in best:
        if gains[b] <= 1e-4:
            break
        key = candidates[b]
        out.append(NextTest(key, item_label(key), _why(key, at, pool, w), round(float(gains[b]), 4)))
    return tuple(out)


def _why(key, at, pool, w) -> str:
    """One line: which two leading hypotheses this test separates, and what each expects."""
    k = at.item_index[key]
    p = np.exp(at.logp[at.offsets[k]:at.offsets[k + 1]][:, pool])
    expect = p.argmax(axis=0)
    first = 0
    for j in range(1, len(pool)):
        if expect[j] != expect[first] and w[j] > 1e-6:
            vals = item_values(key)
            a_ = at.lesion(int(pool[first])).describe()
            b_ = at.lesion(int(pool[j])).describe()
            return (f"{item_label(key)} separates {a_} (expects {_grade_word(key, vals[expect[first]])}) "
                    f"from {b_} (expects {_grade_word(key, vals[expect[j]])})")
    return f"{item_label(key)} narrows the leading hypotheses"


# ------------------------------------------------------------------ cautions

COMPRESSIVE = ("lateral_compression", "anterior_compression", "posterior_compression", "cauda_equina", "conus")
# A candidate counts toward a caution only if it predicts nearly as large a share of the entered abnormal findings
# as the best-explaining candidate does (at least this fraction of that share): thousands of candidates that
# predict a near-normal exam (a thoracic anterior-horn lesion, say) must not raise a breathing caution for a
# lumbar radiculopathy. Judgement, checked in tests/test_rank.py.
CAUTION_EXPLAINS = 0.9
CAUTION_MASS = 0.05  # share of the explaining posterior that raises a level-dependent caution


def _myelopathy_signs(f: Findings) -> bool:
    """Entered signs of a cord lesion that may be acute compression: extensor plantar, retention, a sensory level
    (an abnormal run on one side reaching S4-5 from at least three dermatomes higher, normal above it)."""
    items = f.items
    if any(k[0] == "reflex" and k[2] == "plantar" and v == "extensor" for k, v in items.items()):
        return True
    if items.get(("sign", "bladder", "")) == "retention":
        return True
    derms = anatomy().dermatomes
    for mod in MODALITIES:
        for side in SIDES:
            vals = [items.get(("sensory", mod, side, d)) for d in derms]
            run = 0
            for v in reversed(vals):
                if v is None or v == 2:
                    break
                run += 1
            if run >= 3 and any(v == 2 for v in vals[: len(vals) - run]):
                return True
    return False


def ranking_cautions(at, post, f: Findings, hyps) -> tuple[str, ...]:
    """The cautions that apply: emergency, breathing, dysreflexia (weighted by the candidates that explain the
    entered abnormal findings), and always the decision-support line."""
    abn = [at.item_index[k] for k, v in f.items.items() if k in at.item_index and _abnormal(k, v)]
    if abn:
        share = at.abnormal[np.array(abn)].mean(axis=0)
        w = np.where(share >= CAUTION_EXPLAINS * share.max(), post, 0.0)
        w = w / w.sum() if w.sum() > 0 else w
    else:
        w = np.zeros_like(post)
    out = []
    weak = any(v != "NT" and v < 4 for k, v in f.items.items() if k[0] == "motor")
    if (w[np.isin(at.pattern_of, COMPRESSIVE)].sum() > 0.1 or f.phase == "acute" or weak
            or _myelopathy_signs(f)):
        out.append(C.EMERGENCY)
    a = anatomy()
    if w[at.top <= a.index("C5")].sum() > CAUTION_MASS or f.items.get(("sign", "diaphragm", "")) == "weak":
        out.append(C.BREATHING)
    if w[at.top <= a.index("T6")].sum() > CAUTION_MASS:
        out.append(C.DYSREFLEXIA)
    out.append(C.DECISION_SUPPORT)
    return tuple(out)


# ------------------------------------------------------------------ batch (many exams at once)

def batch_scores(exams: list[Findings], at: atlas_mod.Atlas) -> np.ndarray:
    """(exams, candidates) log posterior (unnormalised) for many exams with one matrix product."""
    onehot = np.zeros((len(exams), at.logp.shape[0]), dtype=np.float32)
    for e, f in enumerate(exams):
        cols, _ = observed_columns(f, at)
        onehot[e, cols] = 1.0
    return onehot @ at.logp + size_prior(at)[None, :]


def sensory_summary(f: Findings) -> str:
    """'left pinprick absent T10-S4-5' style line of the abnormal sensory entries (for reports)."""
    parts = []
    for mod in MODALITIES:
        for side in SIDES:
            ab = [k[3] for k, v in f.items.items() if k[:3] == ("sensory", mod, side) and v != 2]
            if ab:
                parts.append(f"{side} {mod.replace('_', ' ')} {_ranges(ab)}")
    return "; ".join(parts)
