"""The next bedside test: the one whose answer would most change what is done, in the words a clinician uses.

Each candidate lesion belongs to a *management class* (`management_class`): where the lesion is (a compression of
the cord, a lesion within the cord, a root, the cauda equina or conus, a nerve disease outside the spine, no
lesion), its side, and the region of the spine an MRI would cover (cervical, upper thoracic, lower thoracic,
lumbosacral). A test's value is its expected information gain about that class under the current posterior, not
about neighbouring levels of one pattern: an answer that only moves the lesion a segment changes no decision.

Only what a bedside examiner can test is suggested (`feasible`, from `data/bedside.csv`): pinprick, light touch
and temperature anywhere; vibration on bony landmarks; joint position at the toes, ankle, knee, fingers and wrist
(never on the trunk or the perineum); every key muscle, reflex and sign of the findings format. Each suggestion
says where to test ("pinprick on the left at the nipple line, T4") and what each likely answer would mean.
"""
from __future__ import annotations

from dataclasses import dataclass

import numpy as np

from .anatomy import anatomy
from .findings import Findings
from .hypotheses import any_abnormal
from .items import bedside as finding_words  # noqa: F401 (where and what to test, in words; re-exported)
from .items import feasible, item_values, sites, value_words  # noqa: F401 (re-exported)
from .nerves import nerve_ids

POOL = 200  # candidates the ranking hands over (its leading ones); the classes' own candidates are added here
ALTERNATIVES = 3  # management classes weighed besides the leading one
PER_CLASS = 300  # candidates standing for each class (its most probable)
ALIVE = 1e-6  # a class with less posterior mass counts as excluded by the exam
TEMPER = 8.0  # the classes weigh as their posterior mass to the power 1/TEMPER (see suggest)
MIN_GAIN = 1e-4  # nats: below this a test tells nothing worth an examiner's minute

COMPARTMENTS = ("cord compression", "within the cord", "root", "cauda equina or conus", "outside the spine",
                "no lesion")
_COMPARTMENT = {"lateral_compression": 0, "anterior_compression": 0, "posterior_compression": 0,
                "root": 2, "cauda_equina": 3, "conus": 3, "polyneuropathy": 4, "normal": 5,
                **{n: 4 for n in nerve_ids()}}  # others: 1
REGIONS = ("cervical spine", "upper thoracic spine", "lower thoracic spine", "lumbosacral spine")
SIDE_CODE = {"left": 0, "right": 1, "both": 2}


@dataclass(frozen=True)
class NextTest:
    """One suggested test. `item` is the findings key, `finding` where and what to test in words, `why` what it
    separates and what each likely answer would mean, `gain` the expected information gain in nats (about the
    management class), `answers` ((answer, meaning), ...) for the likeliest answers."""
    item: tuple
    finding: str
    why: str
    gain: float
    answers: tuple[tuple[str, str], ...] = ()
    # the most probable lesion of each of the two management classes the answers point to (when they differ)
    separates: tuple = ()


def answer_words(key: tuple, value) -> str:
    """An answer in words ('absent', 'grade 3', 'present'): the registry's words (`items.value_words`)."""
    return value_words(key, value)


# ------------------------------------------------------------------ management classes

def _region(vertebra: str) -> int:
    if vertebra.startswith("C"):
        return 0
    if vertebra.startswith("T"):
        return 1 if int(vertebra[1:]) <= 6 else 2
    return 3


_CLASSES: dict[int, tuple] = {}


def management_class(at) -> tuple[np.ndarray, list[tuple[int, int, int]]]:
    """(n,) class number of every atlas candidate and the classes as (compartment, side, region) triples: region -1
    where there is nothing to image. Built once per atlas."""
    hit = _CLASSES.get(id(at))
    if hit is not None and hit[0] is at:
        return hit[1], hit[2]
    a = anatomy()
    seg_region = np.array([_region(a.vertebra(s)) for s in a.segments])
    comp = np.array([_COMPARTMENT.get(str(p), 1) for p in at.pattern_of])
    side = np.array([_side_code(v.pattern, v.side, dict(v.params)) for v in at.variants])[at.variant]
    region = seg_region[at.top]
    roots = comp == 2  # a root is imaged where it leaves: C roots in the neck, T by their level, L and S low
    root_region = np.array([0 if s[0] == "C" else _region(s) if s[0] == "T" else 3 for s in a.segments])
    region = np.where(roots, root_region[at.top], region)
    region = np.where(comp == 3, 3, region)
    region = np.where(comp >= 4, -1, region)
    side = np.where((comp >= 4) & ~np.isin(at.pattern_of, nerve_ids()), 2, side)  # a nerve lesion keeps its side
    triples, code = np.unique(np.stack([comp, side, region]), axis=1, return_inverse=True)
    classes = [tuple(int(x) for x in triples[:, j]) for j in range(triples.shape[1])]
    code = code.ravel()
    _CLASSES[id(at)] = (at, code, classes)
    return code, classes


def beyond_the_bedside(ranking) -> str:
    """What tells the remaining hypotheses apart when no bedside test would: imaging, or for a leading lesion
    outside the spine (a peripheral nerve lesion, a polyneuropathy) nerve conduction studies and EMG."""
    hyps = getattr(ranking, "hypotheses", ())
    if hyps and _COMPARTMENT.get(hyps[0].lesion.pattern) == 4:
        return "nerve conduction studies and EMG tell the remaining hypotheses apart (nothing in the spine to image)"
    return "imaging tells the remaining hypotheses apart"


def lesion_class(lesion) -> tuple[int, int, int]:
    """The management class of one lesion, as `management_class` gives it for the atlas' candidates."""
    a = anatomy()
    comp = _COMPARTMENT.get(lesion.pattern, 1)
    if comp >= 4:
        return (comp, SIDE_CODE[lesion.side] if lesion.pattern in nerve_ids() else 2, -1)
    seg = lesion.top
    if comp == 3:
        region = 3
    elif comp == 2:
        region = 0 if seg[0] == "C" else _region(seg) if seg[0] == "T" else 3
    else:
        region = _region(a.vertebra(seg))
    return (comp, _side_code(lesion.pattern, lesion.side, lesion.all_params()), region)


def _side_code(pattern: str, side: str, params: dict) -> int:
    """0 left, 1 right, 2 both; a cauda equina lesion taking the other side's roots wholly counts as both."""
    if pattern == "cauda_equina" and params.get("contra", 0.0) >= 0.99:
        return 2
    return SIDE_CODE[side]


def class_words(c: tuple[int, int, int]) -> str:
    """'a cord compression on the left, upper thoracic spine' and the like."""
    comp, side, region = c
    head = {0: "a cord compression", 1: "a lesion within the cord", 2: "a root lesion",
            3: "a cauda equina or conus lesion", 4: "a nerve disease outside the spine", 5: "no lesion"}[comp]
    if comp >= 4:
        return head
    side_words = {0: " on the left", 1: " on the right", 2: ""}[side]
    where = f" ({REGIONS[region]})" if comp in (0, 1, 2) else ""
    return f"{head}{side_words}{where}"


# ------------------------------------------------------------------ the suggestion

def suggest(f: Findings, at, post: np.ndarray, order: np.ndarray, n: int = 5) -> tuple[NextTest, ...]:
    """The n feasible, unexamined items whose answer tells most about the management class, best first.

    The classes weighed are the leading one and up to ALTERNATIVES others that the exam has not excluded
    (posterior mass above ALIVE; a candidate predicting every examined item normal counts as no lesion), the most
    probable first, each through its PER_CLASS most probable candidates (weighed by their posterior within the
    class). The classes weigh as a tempered posterior (mass ** (1 / TEMPER): a hundredfold less probable
    alternative weighs about half as much, a millionfold less probable one a sixth): the question a next test
    answers is which of the management options holds, and a test worth doing checks the leader against the
    likeliest alternatives that would be managed differently, even when the exam already favours the leader
    strongly, while an alternative the exam has all but excluded weighs little (judgement)."""
    code, classes = management_class(at)
    # a candidate predicting every examined item normal is, for this exam, the normal cord: it counts as no lesion
    examined = [at.item_index[k] for k in f.items if k in at.item_index]
    if examined and (5, 2, -1) in classes:
        silent = ~any_abnormal(at, examined)
        code = np.where(silent, classes.index((5, 2, -1)), code)
    mass_all = np.bincount(code, weights=post, minlength=len(classes))
    score = np.log(np.maximum(post, 1e-300))
    ranked = [int(c) for c in np.argsort(-mass_all, kind="stable") if mass_all[c] > ALIVE][:1 + ALTERNATIVES]
    if len(ranked) < 2:
        return ()  # every candidate with any mass would be managed alike: no test changes what is done
    pools, inv = [], []
    for j, c in enumerate(ranked):
        members = np.flatnonzero(code == c)
        best = members[np.argsort(-score[members], kind="stable")[:PER_CLASS]]
        pools.append(best)
        inv.append(np.full(len(best), j))
    pool, inv = np.concatenate(pools), np.concatenate(inv)
    mass = mass_all[ranked] ** (1.0 / TEMPER)  # the options weigh nearly alike (see above)
    mass = mass / mass.sum()
    within = post[pool] / np.bincount(inv, weights=post[pool])[inv]  # each candidate's share of its class
    onehot = np.zeros((len(pool), len(ranked)))
    onehot[np.arange(len(pool)), inv] = within * mass[inv]  # (pool, classes): each candidate's weight in its class
    candidates = [k for k in at.items if k not in f.items and feasible(k)]
    if not candidates:
        return ()
    # every value row of every candidate item at once: P(value, class) = sum over the pool of P(value | lesion)
    # times the lesion's weight in its class
    idx = np.array([at.item_index[k] for k in candidates])
    starts, stops = at.offsets[idx], at.offsets[idx + 1]
    rows = np.concatenate([np.arange(a, b) for a, b in zip(starts, stops)])
    joint_all = np.exp(np.asarray(at.logp)[np.ix_(rows, pool)].astype(np.float64)) @ onehot  # (rows, classes)
    bounds = np.concatenate([[0], np.cumsum(stops - starts)])
    row_item = np.repeat(np.arange(len(candidates)), stops - starts)
    pv = joint_all.sum(axis=1)  # P(value)
    with np.errstate(divide="ignore", invalid="ignore"):
        terms = joint_all * (np.log(joint_all) - np.log(pv)[:, None] - np.log(mass)[None, :])
    gains = np.bincount(row_item, weights=np.nansum(terms, axis=1), minlength=len(candidates))
    tables = [joint_all[a:b] for a, b in zip(bounds[:-1], bounds[1:])]
    out = []
    for b in np.argsort(-gains, kind="stable")[:n]:
        if gains[b] <= MIN_GAIN:
            break
        key = candidates[b]
        answers, why, pair = _meaning(key, tables[b], [classes[c] for c in ranked])
        apart = tuple(at.lesion(int(pools[j][0])) for j in pair)
        out.append(NextTest(key, finding_words(key), why, round(float(gains[b]), 4), answers, apart))
    return tuple(out)


_FACTOR_WORDS = (
    ("a cord compression", "a lesion within the cord", "a root lesion", "a cauda equina or conus lesion",
     "a nerve disease outside the spine", "no lesion"),
    ("the left side", "the right side", "both sides"),
    tuple(f"the {r}" for r in REGIONS),
)


def _meaning(key, joint: np.ndarray, classes: list) -> tuple[tuple[tuple[str, str], ...], str, tuple[int, ...]]:
    """What the likeliest answers would mean, in the terms the answers move: for each answer, the class it makes
    most probable (among those weighed), said by the parts of the class (where, which side, which region) whose
    most probable value differs between the answers; and the two classes the first differing answers point to."""
    values = item_values(key)
    pv = joint.sum(axis=1)
    order = [int(v) for v in np.argsort(-pv) if pv[v] > 0.02][:3]
    if not order:
        return (), f"{finding_words(key)} narrows the hypotheses", ()
    triples = np.array(classes)  # (classes, 3)
    best, parts = [], []
    for v in order:
        post = joint[v] / pv[v]
        best.append(int(post.argmax()))
        part = []
        for f in range(3):
            vals = triples[:, f]
            marg = {x: float(post[vals == x].sum()) for x in set(vals.tolist())}
            part.append(max(marg, key=marg.get))
        parts.append(part)
    moved = [f for f in range(3) if len({p[f] for p in parts}) > 1 and all(p[f] >= 0 for p in parts)]
    for i, (v, p) in enumerate(zip(order, parts)):  # the class an answer points to: its parts as said
        fits = [c for c in range(len(classes)) if all(classes[c][f] == p[f] for f in moved)]
        if fits:
            post = joint[v] / pv[v]
            best[i] = max(fits, key=lambda c: post[c])

    def words(part, c) -> str:
        if not moved:
            return class_words(classes[c])
        return ", ".join(_FACTOR_WORDS[f][part[f]] for f in moved)

    answers = tuple((answer_words(key, values[v]), f"favours {words(p, c)}") for v, p, c in zip(order, parts, best))
    said = [words(p, c) for p, c in zip(parts, best)]
    pair: tuple[int, ...] = ()
    if len(set(said)) >= 2:
        j = next(i for i, x in enumerate(said) if x != said[0])
        head = f"separates {said[0]} from {said[j]}"
        if best[0] != best[j]:
            pair = (best[0], best[j])
    else:
        head = f"weighs {said[0]} against the rest"
    why = f"{finding_words(key)} {head}: " + "; ".join(f"{a} {m}" for a, m in answers)
    return answers, why, pair


def separates_management(test: NextTest) -> bool:
    """Whether a suggestion separates lesions managed differently: the two lesions it names belong to different
    management classes and their predicted exams (`simulate`, crisp) differ on the item. A check written apart
    from the information-gain calculation, for the benchmark and the tests."""
    if len(test.separates) != 2:
        return False
    from .simulate import simulate

    a, b = test.separates
    return lesion_class(a) != lesion_class(b) and simulate(a).items.get(test.item) != simulate(b).items.get(test.item)
