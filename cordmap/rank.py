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
from . import clues, nerves, nexttests, observation
from .anatomy import MODALITIES, SIDES, anatomy
from .findings import Findings, parse
from .fit import PAIR_FIRSTS, SECOND_LESION_GAIN, assess_fit, best_pair, separate  # noqa: F401 (re-exported)
from .hypotheses import (  # noqa: F401 (re-exported: tests and the CLI read them here)
    OUTSIDE_THE_CORD,
    SAME_EXAM_SHOWN,
    UNDETECTABLE,
    _Derived,
    _derived,
    _leading,
    agreement,
    exam_groups,
    exam_values,
    leading_groups,
    leading_hypotheses,
    listed,
    same_exam,
    same_exam_groups,
)
from .imaging import Window, merge_levels, merge_windows, vertebral_levels, windows  # noqa: F401 (re-exported)
from .items import SENSORY_SCALE, abnormal, item_label, item_values, value_words
from .lesions import NORMAL, Lesion
from .nexttests import NextTest  # noqa: F401 (re-exported)
from .simulate import simulate

FORMAT = "cordmap-ranking/1"


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
    # the hypothesis in words after its name: how many findings it explains and conflicts with, the variants and
    # the lesions with the same exam (`summary` puts the name in front; every surface shows one or the other whole)
    reason: str
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
    # where to image and why (`cordmap.imaging`): the windows of the lesion, its variants and the listed lesions
    # with its exam; `vertebral_levels` merges those that hold without a condition
    imaging: tuple[Window, ...] = ()

    @property
    def description(self) -> str:
        """The leading lesion in plain words (`cordmap.words`)."""
        return self.lesion.describe()

    @property
    def summary(self) -> str:
        """One sentence: the lesion in words, then `reason`."""
        return f"{self.description}: {self.reason}"

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
                              "params": o.all_params(), "description": o.describe()} for o in self.variants],
                "description": self.description, "imaging": [w.to_dict() for w in self.imaging]}


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
             "next_tests": [{"finding": t.finding, "why": t.why,
                             "answers": [{"if": a, "means": m} for a, m in t.answers]} for t in self.next_tests],
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
    # ...weighted (observation.item_weights) and summed: the log-likelihood of each candidate
    ll = w.astype(np.float32) @ raw if len(cols) else np.zeros(len(at), np.float32)
    lp = ll + (prior or size_prior)(at)
    clue = clues.log_likelihood(f, at)  # tenderness and band pain (findings format 2); None without them
    if clue is not None:
        lp = lp + clue
    rows = np.array([at.item_index[k] for k in items], dtype=np.intp)  # the atlas' item of each recorded value
    hidden = nerves.unseen(at, rows)  # nerve lesions this exam cannot see
    if hidden is not None:
        lp = lp + hidden
    post = _softmax(lp.astype(np.float64))
    d = _derived(at)
    leading = leading_hypotheses(lp, post, d, max(top, PAIR_FIRSTS, 1))
    exam = exam_values(f, items)  # each recorded value's index and whether it is abnormal
    fit, advice = "good", ""
    if not items:
        fit, advice = "empty", "Nothing was entered: record at least one finding to rank lesions."
    elif at.pattern_of[leading[0][0][0]] == NORMAL:
        fit = "normal"
        advice = ("No lesion explains these findings better than a normal cord: nothing to image on these "
                  "findings alone; re-examine if the story suggests a cord or root lesion.")
    else:
        fit, second, gain = assess_fit(at, items, [f.items[k] for k in items], w, raw, ll,
                                       np.array([m[0] for m, _ in leading]), exam[1])
        if fit == "poor":
            advice = ("No single lesion explains these findings well: consider more than one lesion, or a cause "
                      "outside the cord (peripheral nerve, plexus, brain, functional), and re-examine.")
            if gain > SECOND_LESION_GAIN:
                advice += f" A second lesion ({at.lesion(second).describe()}) would explain much of the rest."
    hyps = () if fit == "empty" else tuple(
        _hypothesis(r + 1, at, members, float(gp), ll, lp, f, items, raw, d, rows, exam)
        for r, (members, gp) in enumerate(leading[:max(top, 1)]))
    if clue is not None:  # a compression may lie at a tender vertebra above its level: image it too
        hyps = tuple(clues.with_windows(h, f) for h in hyps)
    segs = anatomy().segments
    names = d.pattern_names
    sums = np.bincount(d.pattern_code, weights=post, minlength=len(names))
    pm = {name: float(sums[j]) for j, name in enumerate(names)}
    tops = np.bincount(at.top, weights=np.where(at.pattern_of == NORMAL, 0.0, post), minlength=30)
    lm = {segs[i]: float(tops[i]) for i in range(30) if tops[i] > 1e-4}
    pm = dict(sorted(pm.items(), key=lambda kv: -kv[1]))
    order = _leading(lp, max(top, nexttests.POOL, 1))
    tests = suggest_tests(f, at, post, order, next_tests) if next_tests else ()
    cls = None
    if classify:
        try:
            from .classify import classify as _classify

            cls = _classify(f)
        except ImportError:
            cls = None
    return Ranking(hyps, fit, advice, tests, ranking_cautions(at, post, f, hyps, cls), pm, lm, len(items), cls)


# ------------------------------------------------------------------ hypotheses in words

def _ranges(derms: list[str]) -> str:
    a = anatomy().dermatomes
    idx = sorted(a.index(d) for d in derms)
    parts, start = [], idx[0]
    for p, q in zip(idx, idx[1:] + [None]):
        if q is None or q != p + 1:
            parts.append(a[start] if start == p else f"{a[start]}-{a[p]}")
            start = q
    return ", ".join(parts)


def _describe(items: list[tuple[tuple, object, object]], conflicts: bool) -> list[str]:
    """Plain-words lines for (key, entered, predicted) triples, sensory items grouped into dermatome ranges."""
    out = []
    groups: dict[tuple, list[str]] = {}
    for key, entered, pred in items:
        if key[0] == "sensory":
            groups.setdefault((key[1], key[2], entered, pred), []).append(key[3])
    for (mod, side, e, p), derms in groups.items():
        words = f"{side} {mod.replace('_', ' ')} {SENSORY_SCALE.word(e)} {_ranges(derms)}"
        out.append(f"{words} (predicted {SENSORY_SCALE.word(p)})" if conflicts else words)
    for key, entered, pred in items:
        if key[0] == "sensory":
            continue
        words = f"{item_label(key)}: {value_words(key, entered)}"
        out.append(f"{words} (predicted {value_words(key, pred)})" if conflicts else words)
    return out



def _hypothesis(rank_no, at, members: np.ndarray, prob: float, ll: np.ndarray, score: np.ndarray, f: Findings,
                items: list[tuple], raw: np.ndarray, d: _Derived, rows: np.ndarray | None = None,
                exam=None) -> Hypothesis:
    """The hypothesis `members` (one pattern, side and rostral segment; best first) in words, told by its best
    member i; `raw[:, i]` holds i's log-probability of the recorded value of each of `items`, `ll[i]` its
    (weighted) log-likelihood, `score` every candidate's log posterior (unnormalised); `rows` the atlas' item of
    each of `items`, `exam` `hypotheses.exam_values(f, items)` (worked out here if not given)."""
    i = int(members[0])
    lesion = at.lesion(i)
    same = same_exam(at, i, score)
    others = tuple(at.lesion(int(j)) for j in listed(at, same))
    if rows is None:
        rows = np.array([at.item_index[key] for key in items], dtype=np.intp)
    agree, conflict = agreement(f, items, raw[:, i], d.likely[rows, i], exam)
    explains = _describe(agree, conflicts=False)
    conflicts = _describe(conflict, conflicts=True)
    reason = f"explains {len(agree)} abnormal finding{'s' * (len(agree) != 1)}"
    reason += f", {len(conflict)} conflict{'s' * (len(conflict) != 1)}" if conflict else ", no conflicts"
    pats = at.pattern_of[members]
    _, first = np.unique(pats, return_index=True)
    variants = tuple(at.lesion(int(members[k])) for k in sorted(first) if pats[k] != lesion.pattern)
    if variants:
        reason += f"; or {', '.join(v.describe() for v in variants)} (imaging tells which)"
    if others:
        reason += f"; the same exam as {', '.join(o.describe() for o in others[:2])}"
        reason += f" and {len(same) - 2} more" if len(same) > 2 else ""
    wins = merge_windows(windows(x) for x in (lesion, *variants, *others))
    levels = merge_levels([w.levels for w in wins if not w.advice])
    return Hypothesis(rank_no, lesion, prob, float(ll[i]), levels, tuple(explains[:12]), tuple(conflicts[:12]),
                      reason, others, len(same), variants, conflict_items=tuple(conflict), imaging=wins)



# ------------------------------------------------------------------ next best test

def suggest_tests(f: Findings, at, post, order, n: int = 5) -> tuple[NextTest, ...]:
    """The feasible, unexamined bedside tests whose answer would most change management (`cordmap.nexttests`)."""
    return nexttests.suggest(f, at, post, order, n)


# ------------------------------------------------------------------ cautions

def ranking_cautions(at, post, f: Findings, hyps=(), classification=None) -> tuple[str, ...]:
    """The cautions that fit this exam (`cautions.applicable`), always ending with the decision-support line."""
    return C.applicable(at, post, f, classification)


# ------------------------------------------------------------------ batch (many exams at once)

def batch_scores(exams: list[Findings], at: atlas_mod.Atlas) -> np.ndarray:
    """(exams, candidates) log posterior (unnormalised) for many exams with one matrix product."""
    onehot = np.zeros((len(exams), at.logp.shape[0]), dtype=np.float32)
    rows = []
    for e, f in enumerate(exams):
        cols, _, w = evidence(f, at)
        onehot[e, cols] = w
        rows.append(np.searchsorted(at.offsets, cols, side="right") - 1)  # the examined items
    out = onehot @ at.logp + size_prior(at)[None, :]
    for e, f in enumerate(exams):  # the clues of findings format 2 and the unseen nerve lesions, as rank adds them
        clue = clues.log_likelihood(f, at)
        if clue is not None:
            out[e] += clue
        hidden = nerves.unseen(at, rows[e])
        if hidden is not None:
            out[e] += hidden
    return out


def batch_leaders(at: atlas_mod.Atlas, score: np.ndarray, n: int = 2) -> list[tuple[Lesion, float, tuple, tuple]]:
    """For one row of `batch_scores`, the n leading hypotheses as rank() lists them: (lesion, probability,
    vertebral levels, lesions with the same predicted exam)."""
    post = _softmax(score.astype(np.float64))
    out = []
    for members, prob in leading_hypotheses(score, post, _derived(at), n):
        i = int(members[0])
        others = tuple(at.lesion(int(j)) for j in listed(at, same_exam(at, i, score)))
        lesion = at.lesion(i)
        out.append((lesion, prob, merge_levels([vertebral_levels(x) for x in (lesion, *others)]), others))
    return out


def sensory_summary(f: Findings) -> str:
    """'left pinprick absent T10-S4-5' style line of the abnormal sensory entries (for reports)."""
    parts = []
    for mod in MODALITIES:
        for side in SIDES:
            ab = [k[3] for k, v in f.items.items() if k[:3] == ("sensory", mod, side) and abnormal(k, v)]
            if ab:
                parts.append(f"{side} {mod.replace('_', ' ')} {_ranges(ab)}")
    return "; ".join(parts)
