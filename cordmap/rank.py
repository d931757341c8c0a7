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
from . import observation
from .anatomy import MODALITIES, SIDES, anatomy, family_priors
from .findings import Findings, item_label, item_values, parse
from .lesions import NORMAL, PATTERNS, Lesion
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
PAIR_GAP, PAIR_GAP_CORD = 1, 4  # segments between two lesions for them to count as separate (see separate())
PAIR_FIRSTS = 8  # the best members of this many leading hypotheses are tried as the first lesion of a pair
# Imaging window of a cord lesion, in cord segments around its rostral segment (see vertebral_levels): judgement
# from common clinical practice (image above the sensory level; an extrinsic mass may lie several segments higher).
WINDOW_ABOVE, WINDOW_ABOVE_COMPRESSION, WINDOW_BELOW_MIN, WINDOW_BELOW = 2, 3, 2, 4
NEXT_TEST_POOL = 200  # candidates considered for the next-test calculation
SAME_EXAM_SHOWN = 5  # other lesions listed with a hypothesis whose predicted exam they share
UNDETECTABLE = -1e4  # log prior of a lesion whose predicted exam is wholly normal (effectively zero)


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
                "same_exam_count": self.same_exam_count,
                "variants": [{"pattern": o.pattern, "side": o.side, "top": o.top, "bottom": o.bottom,
                              "params": o.all_params()} for o in self.variants]}


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
        if self.advice:
            d["advice"] = self.advice
        if self.classification is not None:
            d["classification"] = self.classification.to_dict()
        return d

    def to_json(self, indent: int | None = 2) -> str:
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


def _self_fit(at: atlas_mod.Atlas, i: int, items: list[tuple], w: np.ndarray) -> tuple[float, float]:
    """Expected (weighted) log-likelihood of candidate i on its own simulated findings over `items`, and its
    variance."""
    lp = at.logp[:, i].astype(np.float64)
    p = np.exp(lp)
    starts = at.offsets[:-1]
    m = np.add.reduceat(p * lp, starts)  # expected log-probability per item
    m2 = np.add.reduceat(p * lp * lp, starts)
    sel = np.array([at.item_index[k] for k in items])
    return float(w @ m[sel]), float((w * w) @ (m2[sel] - m[sel] ** 2))


def best_pair(at, items: list[tuple], recorded_values: list, seen: np.ndarray, ll: np.ndarray, firsts: np.ndarray
              ) -> tuple[int, int, float]:
    """The pair of separate lesions (see `separate`) that best explains the exam: the first among `firsts`
    (candidate indices), the second any candidate. The pair predicts i's findings, and j's where i predicts a
    normal item (a second lesion adds its own findings; it is not used to deepen the first one's), so adding j to
    i changes the fit by the (weighted) log-probabilities `seen` of those items. Returns (i, j, log-likelihood of
    the pair)."""
    rows = np.array([at.item_index[k] for k in items])
    lead = int(firsts[0])
    best = (lead, lead, float(ll[lead]))  # no second lesion: the single best
    firsts = np.array([i for i in firsts if at.pattern_of[i] != NORMAL], dtype=np.int64)
    # A second lesion can only gain on findings recorded abnormal where the first predicts normal: when every
    # first lesion tried explains all the abnormal findings, there is nothing to search for.
    recorded = np.array([_abnormal(k, v) for k, v in zip(items, recorded_values)], dtype=bool)
    unexplained = recorded[:, None] & (at.abnormal[rows][:, firsts] == 0)
    if not len(firsts) or not unexplained.any():
        return best
    pos = (at.abnormal[rows] > 0).astype(np.float32)  # (examined, candidates): j predicts the item abnormal
    z = (pos[:, firsts] == 0).T.astype(np.float32)  # (firsts, examined): i predicts the item normal
    # gain[k, j]: the change in fit from adding j to firsts[k], over the items firsts[k] predicts normal and j not
    gain = z @ (seen * pos) - (z * seen[:, firsts].T) @ pos
    for k, i in enumerate(firsts):
        g = np.where(separate(at, int(i)), gain[k], -np.inf)
        j = int(g.argmax())
        if ll[i] + g[j] > best[2]:
            best = (int(i), j, float(ll[i] + g[j]))
    return best


def separate(at, i: int) -> np.ndarray:
    """(candidates,) which lesions count as a second, separate lesion beside candidate i: their segments lie more
    than PAIR_GAP segments from i's (PAIR_GAP_CORD for two cord lesions), or both lie outside the cord on opposite
    sides (two roots). Two overlapping or nearby cord lesions are one lesion of a shape the atlas lacks (a tapering
    compression, an intramedullary tumour with a cyst), not two lesions."""
    d = _derived(at)
    outside = d.outside
    gap = np.where(outside | outside[i], PAIR_GAP, PAIR_GAP_CORD)
    apart = (at.top > at.bottom[i] + gap) | (at.bottom < at.top[i] - gap)
    sides = d.side
    opposite = outside & outside[i] & (sides != sides[i]) & (sides != "both") & (sides[i] != "both")
    return (apart | opposite) & ~d.normal


def assess_fit(at, items: list[tuple], values: list, w: np.ndarray, seen: np.ndarray, ll: np.ndarray,
               leaders: np.ndarray) -> tuple[str, int, float]:
    """'good' or 'poor' for the best single candidate `leaders[0]`, with the second lesion of the best pair and
    what the pair gains in (weighted) nats over the best single lesion. `seen` holds the weighted log-probability
    of each recorded value (examined x candidates); `leaders` the best member of each leading hypothesis."""
    b = int(leaders[0])
    mean, var = _self_fit(at, b, items, w)
    gap = mean - float(ll[b])
    first, second, pair = best_pair(at, items, values, seen, ll, leaders[:PAIR_FIRSTS])
    gain = pair - float(ll[b])
    poor = (gap > POOR_FIT_NATS and gap > POOR_FIT_Z * np.sqrt(max(var, 1e-9))) or gain > SECOND_LESION_GAIN
    return ("poor" if poor else "good"), (second if first == b else first), gain


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
    if lesion.pattern == NORMAL:
        return ()
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
    _, hyp = np.unique(np.stack([np.unique(fam, return_inverse=True)[1].ravel(),
                                 np.unique(sides, return_inverse=True)[1].ravel(), at.top]), axis=1,
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
    return [out[k] for k in order]


def _leading(score: np.ndarray, n: int) -> np.ndarray:
    """Indices of the n highest scores, best first, ties in index order (as a stable full sort would give)."""
    if n >= len(score):
        return np.argsort(-score, kind="stable")
    kth = -np.partition(-score, n - 1)[n - 1]
    above = np.flatnonzero(score > kth)
    part = np.concatenate([above, np.flatnonzero(score == kth)[: n - len(above)]])
    return part[np.lexsort((part, -score[part]))]


def _hypothesis(rank_no, at, members: np.ndarray, prob: float, ll: np.ndarray, score: np.ndarray, f: Findings,
                items: list[tuple], raw: np.ndarray, d: _Derived) -> Hypothesis:
    """The hypothesis `members` (one pattern, side and rostral segment; best first) in words, told by its best
    member i; `raw[:, i]` holds i's log-probability of the recorded value of each of `items`, `ll[i]` its
    (weighted) log-likelihood, `score` every candidate's log posterior (unnormalised)."""
    i = int(members[0])
    lesion = at.lesion(i)
    same = same_exam(at, i, score)
    others = tuple(at.lesion(int(j)) for j in listed(at, same))
    agree, conflict = [], []
    index = at.item_index
    for key, c in zip(items, raw[:, i]):
        entered = f.items[key]
        pv = item_values(key)[int(d.likely[index[key], i])]
        if np.exp(c) < 0.2:
            conflict.append((key, entered, pv))
        elif pv == entered and _abnormal(key, entered):
            agree.append((key, entered, pv))
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
                      summary, others, len(same), variants)


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
# Lesions outside the cord raise no cord-level caution: a root or the cauda equina cannot cause autonomic
# dysreflexia or paralyse the diaphragm (check values section 8: dysreflexia with cord lesions at or above T6 only).
OUTSIDE_THE_CORD = ("root", "cauda_equina", NORMAL)


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
