"""Rank lesion hypotheses against bedside findings.

log-likelihood of a candidate = weighted sum over the *examined* items of log P(recorded value | candidate) from
the atlas (items not examined contribute nothing: not examined is never taken as normal; `evidence`); posterior =
softmax(loglik + log prior). The prior (`size_prior`) comes from the family table, replaceable by the caller.
The grouping into hypotheses is `cordmap.hypotheses`; the fit verdict is `cordmap.fit`.
"""
from __future__ import annotations

import json
from collections.abc import Callable
from dataclasses import dataclass, field

import numpy as np
import pandas as pd

from . import atlas as atlas_mod
from . import cautions as C
from . import observation
from .anatomy import MODALITIES, SIDES, anatomy, cord_region
from .findings import Findings, item_label, item_values, parse
from .fit import PAIR_FIRSTS, SECOND_LESION_GAIN, assess_fit, best_pair, separate  # noqa: F401 (re-exported)
from .hypotheses import (  # noqa: F401 (re-exported: tests and the CLI read them here)
    OUTSIDE_THE_CORD,
    SAME_EXAM_SHOWN,
    UNDETECTABLE,
    _abnormal,
    _Derived,
    _derived,
    _leading,
    agreement,
    exam_groups,
    leading_groups,
    leading_hypotheses,
    listed,
    same_exam,
    same_exam_groups,
)
from .lesions import NORMAL, PATTERNS, Lesion
from .simulate import simulate

FORMAT = "cordmap-ranking/1"
# Imaging window of a cord lesion, in cord segments around its rostral segment (see vertebral_levels): judgement
# from common clinical practice (image above the sensory level; an extrinsic mass may lie several segments higher).
WINDOW_ABOVE, WINDOW_ABOVE_COMPRESSION, WINDOW_BELOW_MIN, WINDOW_BELOW = 2, 3, 2, 4
NEXT_TEST_POOL = 200  # candidates considered for the next-test calculation


def size_prior(at: atlas_mod.Atlas) -> np.ndarray:
    """Log prior of every candidate, built from the clinical hypotheses down:

    * each family (pattern) has a prior weight (`data/priors.csv`: radiculopathy far more common than a
      hemisection, say), spread evenly over its hypotheses (side and rostral segment);
    * a hypothesis' share is split evenly over the distinct bedside exams its candidates predict, and each exam's
      share evenly among the candidates predicting it, with a mild preference for shorter and smaller lesions
      (at most ~1.5 nats apart).

    Split, not uniform per candidate: the atlas holds up to hundreds of variants (parameters, extents) for one
    hypothesis, and a uniform prior would weigh a hypothesis by how densely the grid samples it."""
    return _derived(at).prior


@dataclass(frozen=True)
class Hypothesis:
    """One clinical hypothesis of a ranking: a lesion family, side and rostral segment, told by its most probable
    lesion, with the vertebral levels to image and what it explains and conflicts with (in words)."""

    rank: int
    lesion: Lesion
    probability: float
    log_likelihood: float
    vertebral_levels: tuple[str, ...]
    explains: tuple[str, ...]
    conflicts: tuple[str, ...]
    summary: str
    # A hypothesis is one family, side and rostral segment (`lesion` is its most probable variant: parameters and
    # extent); `probability` is the mass of all its variants. `same_exam`: lesions of other hypotheses whose
    # predicted bedside exam is the same as `lesion`'s on every item the model knows (the most probable first, at
    # most SAME_EXAM_SHOWN), and how many there are in all. No bedside test separates them; imaging does.
    # `variants`: the best lesion of each other pattern of the same family in this hypothesis (a compression from
    # behind beside one from the front). `vertebral_levels` covers the lesion, its variants and the listed ones.
    same_exam: tuple[Lesion, ...] = ()
    same_exam_count: int = 0
    variants: tuple[Lesion, ...] = ()
    # every conflict as (item, entered, predicted), by `hypotheses.agreement`: what `conflicts` says in words and
    # what the body picture marks
    conflict_items: tuple[tuple, ...] = field(default=(), repr=False)

    def __repr__(self) -> str:
        from .views import hypothesis_repr

        return hypothesis_repr(self)

    def _repr_html_(self) -> str:
        """A compact table for notebooks, with the caution."""
        from .views import hypothesis_html

        return hypothesis_html(self)

    def predicted(self) -> Findings:
        """The bedside findings the hypothesis' lesion predicts."""
        return simulate(self.lesion)

    def same_exam_text(self) -> str:
        """'a; b and 3 more': the other lesions with this exam, for one line of text ('' when there are none)."""
        more = self.same_exam_count - len(self.same_exam)
        return "; ".join(o.describe() for o in self.same_exam) + (f" and {more} more" if more else "")

    def to_dict(self) -> dict:
        """The hypothesis as the ranking document carries it (JSON-ready)."""
        lz = self.lesion
        return {"rank": self.rank, "pattern": lz.pattern, "side": lz.side, "top": lz.top, "bottom": lz.bottom,
                "params": lz.all_params(), "probability": round(self.probability, 4),
                "log_likelihood": round(self.log_likelihood, 3), "vertebral_levels": list(self.vertebral_levels),
                "explains": list(self.explains), "conflicts": list(self.conflicts),
                "same_exam": [{"pattern": o.pattern, "side": o.side, "top": o.top, "bottom": o.bottom,
                               "params": o.all_params()} for o in self.same_exam],
                "same_exam_count": self.same_exam_count,
                "variants": [{"pattern": o.pattern, "side": o.side, "top": o.top, "bottom": o.bottom,
                              "params": o.all_params()} for o in self.variants]}


@dataclass(frozen=True)
class NextTest:
    """An unexamined item worth examining next: its key, its name, why (in words) and its expected information gain
    (nats)."""

    item: tuple
    finding: str
    why: str
    gain: float


@dataclass(frozen=True)
class Ranking:
    """What `rank` returns: the leading hypotheses, the fit verdict (`good`, `poor`, `normal`, `empty`) and its
    advice, the next tests, the cautions that apply, marginal probabilities by pattern and by rostral segment, the
    number of findings examined and the ISNCSCI classification. Evaluate it in a notebook for a table; `.table`
    gives the hypotheses as a DataFrame, `.to_json()` the document (format cordmap-ranking/1)."""

    hypotheses: tuple[Hypothesis, ...]
    fit: str
    advice: str
    next_tests: tuple[NextTest, ...]
    cautions: tuple[str, ...]
    pattern_marginals: dict = field(default_factory=dict)
    level_marginals: dict = field(default_factory=dict)
    examined: int = 0
    classification: object | None = None

    def __repr__(self) -> str:
        from .views import ranking_repr

        return ranking_repr(self)

    def _repr_html_(self) -> str:
        """A compact table for notebooks: the cautions, the hypotheses, the next tests, the classification."""
        from .views import ranking_html

        return ranking_html(self)

    @property
    def best(self) -> Hypothesis:
        """The leading hypothesis (an IndexError when nothing was entered: `fit` is then 'empty')."""
        return self.hypotheses[0]

    @property
    def table(self) -> pd.DataFrame:
        """The hypotheses as a DataFrame, one row each (lists joined into text)."""
        rows = [{**h.to_dict(), "params": json.dumps(h.lesion.all_params()),
                 "vertebral_levels": " ".join(h.vertebral_levels), "explains": "; ".join(h.explains),
                 "conflicts": "; ".join(h.conflicts), "same_exam": "; ".join(o.describe() for o in h.same_exam)}
                for h in self.hypotheses]
        return pd.DataFrame(rows)

    def to_dict(self) -> dict:
        """The ranking document (format cordmap-ranking/1) as a dict."""
        d = {"format": FORMAT, "hypotheses": [h.to_dict() for h in self.hypotheses], "fit": self.fit,
             "next_tests": [{"finding": t.finding, "why": t.why} for t in self.next_tests],
             "cautions": list(self.cautions),
             "marginals": {"pattern": {k: round(v, 4) for k, v in self.pattern_marginals.items()},
                           "top": {k: round(v, 4) for k, v in self.level_marginals.items()}}}
        if self.advice:
            d["advice"] = self.advice
        if self.classification is not None:
            d["classification"] = self.classification.to_dict()
        return d

    def to_json(self, indent: int | None = 2) -> str:
        """The ranking document as JSON text."""
        return json.dumps(self.to_dict(), indent=indent)


# ------------------------------------------------------------------ scoring

def observed_columns(f: Findings, at: atlas_mod.Atlas) -> tuple[np.ndarray, list[tuple]]:
    """Atlas rows of the recorded values (NT and unknown items skipped) and the items they belong to."""
    column = _columns(at)
    cols, items = [], []
    for key, value in f.items.items():
        c = column.get((key, value))
        if c is not None:  # NT and items the atlas does not know are skipped
            cols.append(c)
            items.append(key)
    return np.array(cols, dtype=np.int64), items


_COLUMNS: dict[int, tuple] = {}


def _columns(at: atlas_mod.Atlas) -> dict:
    """{(item, value): atlas row} for every value of every item (built once per atlas)."""
    hit = _COLUMNS.get(id(at))
    if hit is None or hit[0] is not at:
        cols = {(k, v): int(at.offsets[i]) + j for i, k in enumerate(at.items) for j, v in enumerate(item_values(k))}
        hit = _COLUMNS[id(at)] = (at, cols)
    return hit[1]


def evidence(f: Findings, at: atlas_mod.Atlas) -> tuple[np.ndarray, list[tuple], np.ndarray]:
    """`observed_columns` with how much each recorded item counts (`observation.item_weights`)."""
    cols, items = observed_columns(f, at)
    rows = np.searchsorted(at.offsets, cols, side="right") - 1
    return cols, items, observation.item_weights(items, _derived(at).pathway_group[rows])


def log_likelihood(f: Findings, at: atlas_mod.Atlas) -> np.ndarray:
    cols, _, w = evidence(f, at)
    if len(cols) == 0:
        return np.zeros(len(at), dtype=np.float32)
    return w @ at.logp[cols]


def _softmax(x: np.ndarray) -> np.ndarray:
    e = np.exp(x - x.max())
    return e / e.sum()



def rank(findings, top: int = 10, prior: Callable[[atlas_mod.Atlas], np.ndarray] | None = None,
         next_tests: int = 5, classify: bool = True) -> Ranking:
    """Rank every candidate of the atlas against `findings` (a Findings, dict, JSON string or path).

    `fit` is 'empty' when nothing was examined (no hypotheses then), 'normal' when no lesion explains the
    findings better than a normal cord, 'poor' when no single lesion explains them well (`advice` says why), and
    'good' otherwise."""
    f = parse(findings)
    at = atlas_mod.get(f.phase)
    cols, items, w = evidence(f, at)
    raw = np.asarray(at.logp)[cols]  # (examined, candidates): log-probability of each recorded value
    seen = raw * w[:, None]  # ...weighted (observation.item_weights)
    ll = seen.sum(axis=0, dtype=np.float32) if len(cols) else np.zeros(len(at), np.float32)
    lp = ll + (prior or size_prior)(at)
    post = _softmax(lp.astype(np.float64))
    d = _derived(at)
    leading = leading_hypotheses(lp, post, d, max(top, PAIR_FIRSTS, 1))
    fit, advice = "good", ""
    if not items:
        fit, advice = "empty", "Nothing was entered: record at least one finding to rank lesions."
    elif at.pattern_of[leading[0][0][0]] == NORMAL:
        fit = "normal"
        advice = ("No lesion explains these findings better than a normal cord: nothing to image on these "
                  "findings alone; re-examine if the story suggests a cord or root lesion.")
    else:
        fit, second, gain = assess_fit(at, items, [f.items[k] for k in items], w, seen, ll,
                                       np.array([m[0] for m, _ in leading]))
        if fit == "poor":
            advice = ("No single lesion explains these findings well: consider more than one lesion, or a cause "
                      "outside the cord (peripheral nerve, plexus, brain, functional), and re-examine.")
            if gain > SECOND_LESION_GAIN:
                advice += f" A second lesion ({at.lesion(second).describe()}) would explain much of the rest."
    hyps = () if fit == "empty" else tuple(
        _hypothesis(r + 1, at, members, float(gp), ll, lp, f, items, raw, d)
        for r, (members, gp) in enumerate(leading[:max(top, 1)]))
    segs = anatomy().segments
    names = d.pattern_names
    sums = np.bincount(d.pattern_code, weights=post, minlength=len(names))
    pm = {name: float(sums[j]) for j, name in enumerate(names)}
    tops = np.bincount(at.top, weights=np.where(at.pattern_of == NORMAL, 0.0, post), minlength=30)
    lm = {segs[i]: float(tops[i]) for i in range(30) if tops[i] > 1e-4}
    pm = dict(sorted(pm.items(), key=lambda kv: -kv[1]))
    order = _leading(lp, max(top, NEXT_TEST_POOL, 1))
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
    if lesion.pattern in (NORMAL, "polyneuropathy"):  # nothing in the spine to image
        return ()
    if lesion.pattern in PATTERNS and PATTERNS[lesion.pattern].diffuse:
        return _diffuse_window(lesion)
    # A cord lesion's rostral edge is uncertain by a segment or two (a sensory level lies at or below its lesion),
    # and an extrinsic one can sit several segments above the level it produces: the window starts WINDOW_ABOVE
    # segments above the rostral segment and ends at the caudal one, or WINDOW_BELOW segments below the rostral
    # one for a long lesion (what the MRI must show is where the lesion starts), and at least WINDOW_BELOW_MIN
    # segments below the rostral one (the lesion's own segments are uncertain too).
    above = WINDOW_ABOVE_COMPRESSION if lesion.pattern in COMPRESSIVE else WINDOW_ABOVE
    t, b = max(0, t - above), min(max(b, t + WINDOW_BELOW_MIN), t + WINDOW_BELOW, len(a.segments) - 1)
    out = []
    for s in range(t, b + 1):
        v = a.vertebra(a.segments[s])
        if v not in out:
            out.append(v)
    if lesion.pattern == "conus" and "L2" not in out:
        out.append("L2")
    return tuple(out)


# A diffuse degeneration has no one level to image: the MRI looks for what it shows (the dorsal columns' signal in
# combined degeneration, usually cervical and upper thoracic) and for the compression or inflammation that mimics
# it, over the region of the cord where the signs begin and the region below (cervical and thoracic spine for a
# cervical picture; thoracic spine and conus for a thoracic one). Common clinical practice, no source.
_REGIONS = (("C1", "T12"), ("T1", "Co1"), ("L1", "Co1"))


def _diffuse_window(lesion: Lesion) -> tuple[str, ...]:
    a = anatomy()
    first, last = (a.index(s) for s in _REGIONS[cord_region(lesion.top_index)])
    return tuple(dict.fromkeys(a.vertebra(a.segments[s]) for s in range(first, last + 1)))


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



def _hypothesis(rank_no, at, members: np.ndarray, prob: float, ll: np.ndarray, score: np.ndarray, f: Findings,
                items: list[tuple], raw: np.ndarray, d: _Derived) -> Hypothesis:
    """The hypothesis `members` (one pattern, side and rostral segment; best first) in words, told by its best
    member i; `raw[:, i]` holds i's log-probability of the recorded value of each of `items`, `ll[i]` its
    (weighted) log-likelihood, `score` every candidate's log posterior (unnormalised)."""
    i = int(members[0])
    lesion = at.lesion(i)
    same = same_exam(at, i, score)
    others = tuple(at.lesion(int(j)) for j in listed(at, same))
    index = at.item_index
    agree, conflict = agreement(f, items, raw[:, i], [d.likely[index[key], i] for key in items])
    explains = _describe(agree, conflicts=False)
    conflicts = _describe(conflict, conflicts=True)
    summary = f"{lesion.describe()}: explains {len(agree)} abnormal finding{'s' * (len(agree) != 1)}"
    summary += f", {len(conflict)} conflict{'s' * (len(conflict) != 1)}" if conflict else ", no conflicts"
    pats = at.pattern_of[members]
    _, first = np.unique(pats, return_index=True)
    variants = tuple(at.lesion(int(members[k])) for k in sorted(first) if pats[k] != lesion.pattern)
    if variants:
        summary += f"; or {', '.join(v.describe() for v in variants)} (imaging tells which)"
    if others:
        summary += f"; the same exam as {', '.join(o.describe() for o in others[:2])}"
        summary += f" and {len(same) - 2} more" if len(same) > 2 else ""
    levels = _merge_levels([vertebral_levels(x) for x in (lesion, *variants, *others)])
    return Hypothesis(rank_no, lesion, prob, float(ll[i]), levels, tuple(explains[:12]), tuple(conflicts[:12]),
                      summary, others, len(same), variants, tuple(conflict))



_SPINE = [f"C{i}" for i in range(1, 8)] + [f"T{i}" for i in range(1, 13)] + [f"L{i}" for i in range(1, 6)] + \
    ["S1", "sacrum"]


def _merge_levels(lists: list[tuple[str, ...]]) -> tuple[str, ...]:
    """The union of several lesions' vertebral levels, head to tail (a disc level 'L4-L5' after 'L4')."""
    seen = list(dict.fromkeys(v for levels in lists for v in levels))
    if len(lists) == 1:
        return tuple(seen)
    return tuple(sorted(seen, key=lambda v: (_SPINE.index(v.split("-")[0]) if v.split("-")[0] in _SPINE
                                             else len(_SPINE), "-" in v)))



# ------------------------------------------------------------------ next best test

def suggest_tests(f: Findings, at, post, order, n: int = 5) -> tuple[NextTest, ...]:
    """The unexamined items whose result would most reduce uncertainty among the leading candidates."""
    pool = order[:NEXT_TEST_POOL]
    w = post[pool] / post[pool].sum()
    candidates = [k for k in at.items if k not in f.items]
    if not candidates:
        return ()
    logp = np.asarray(at.logp)
    gains = []
    for key in candidates:
        k = at.item_index[key]
        p = np.exp(logp[at.offsets[k]:at.offsets[k + 1], pool].astype(np.float64))  # (values, pool)
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
    p = np.exp(np.asarray(at.logp)[at.offsets[k]:at.offsets[k + 1], pool])
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
    entered abnormal findings), and always the decision-support line. Breathing: bilateral cord lesions predicted
    to weaken the diaphragm (C3-C5; one paralysed hemidiaphragm is usually tolerated at rest, from memory), a weak
    diaphragm entered, or an acute cervical cord lesion (common clinical practice: any acute complete cervical
    injury needs vital capacity watched; check values section 8)."""
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
    cord = ~np.isin(at.pattern_of, OUTSIDE_THE_CORD)
    k = at.item_index[("sign", "diaphragm", "")]
    bilateral = np.array([v.side == "both" for v in at.variants])[at.variant]
    weak_diaphragm = cord & bilateral & (at.likely[k] == item_values(("sign", "diaphragm", "")).index("weak"))
    acute_cervical = cord & (at.top <= a.index("C8")) & (f.phase == "acute")
    if (w[weak_diaphragm | acute_cervical].sum() > CAUTION_MASS
            or f.items.get(("sign", "diaphragm", "")) == "weak"):
        out.append(C.BREATHING)
    if w[cord & (at.top <= a.index("T6"))].sum() > CAUTION_MASS:
        out.append(C.DYSREFLEXIA)
    out.append(C.DECISION_SUPPORT)
    return tuple(out)


# ------------------------------------------------------------------ batch (many exams at once)

def batch_scores(exams: list[Findings], at: atlas_mod.Atlas) -> np.ndarray:
    """(exams, candidates) log posterior (unnormalised) for many exams with one matrix product."""
    onehot = np.zeros((len(exams), at.logp.shape[0]), dtype=np.float32)
    for e, f in enumerate(exams):
        cols, _, w = evidence(f, at)
        onehot[e, cols] = w
    return onehot @ at.logp + size_prior(at)[None, :]


def batch_leaders(at: atlas_mod.Atlas, score: np.ndarray, n: int = 2) -> list[tuple[Lesion, float, tuple, tuple]]:
    """For one row of `batch_scores`, the n leading hypotheses as rank() lists them: (lesion, probability,
    vertebral levels, lesions with the same predicted exam)."""
    post = _softmax(score.astype(np.float64))
    out = []
    for members, prob in leading_hypotheses(score, post, _derived(at), n):
        i = int(members[0])
        others = tuple(at.lesion(int(j)) for j in listed(at, same_exam(at, i, score)))
        lesion = at.lesion(i)
        out.append((lesion, prob, _merge_levels([vertebral_levels(x) for x in (lesion, *others)]), others))
    return out


def sensory_summary(f: Findings) -> str:
    """'left pinprick absent T10-S4-5' style line of the abnormal sensory entries (for reports)."""
    parts = []
    for mod in MODALITIES:
        for side in SIDES:
            ab = [k[3] for k, v in f.items.items() if k[:3] == ("sensory", mod, side) and v != 2]
            if ab:
                parts.append(f"{side} {mod.replace('_', ' ')} {_ranges(ab)}")
    return "; ".join(parts)
