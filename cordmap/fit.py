"""The fit verdict: does one lesion explain the exam, or would a second, separate one explain it much better?"""
from __future__ import annotations

from dataclasses import dataclass

import numpy as np

from . import atlas as atlas_mod
from .anatomy import anatomy
from .hypotheses import _derived
from .items import abnormal
from .lesions import NORMAL, PATTERNS
from .nerves import nerve_ids

# Poor fit: the best candidate scores this many standard deviations below what it scores on its own simulated
# findings over the same items (and at least POOR_FIT_NATS below). Chosen so that exams with 10% of items
# corrupted still fit (see tests/test_rank.py) while two-lesion pictures do not.
POOR_FIT_Z = 4.0
POOR_FIT_NATS = 8.0
# ...or when adding a second lesion to the best one improves the fit by more than this (nats): random exam errors
# rarely cluster the way one more lesion's findings do. 5 nats is "very strong" evidence on the scale of Kass and
# Raftery (Bayes factors, J Am Stat Assoc 1995: 2 ln B above 10); here it is the best pair's gain in likelihood, an
# upper bound of that Bayes factor, which the restriction to pairs that occur (PAIRABLE, ROOT_LEVEL) keeps honest.
# Measured on tests/vignettes (benchmarks/bench_vignettes.py) and in tests/test_rank.py.
SECOND_LESION_GAIN = 5.0
PAIR_GAP, PAIR_GAP_CORD = 1, 4  # segments between two lesions for them to count as separate (see separate())
PAIR_FIRSTS = 8  # the best members of this many leading hypotheses are tried as the first lesion of a pair


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


def best_pair(at, items: list[tuple], recorded_values: list, raw: np.ndarray, w: np.ndarray, ll: np.ndarray,
              firsts: np.ndarray, recorded: np.ndarray | None = None) -> tuple[int, int, float]:
    """The pair of separate lesions (see `separate`) that best explains the exam: the first among `firsts`
    (candidate indices), the second any candidate. The pair predicts i's findings, and j's where i predicts a
    normal item (a second lesion adds its own findings; it is not used to deepen the first one's), so adding j to
    i changes the fit by the log-probabilities `raw` (examined x candidates) of those items, weighted by `w`.
    `recorded`: whether each recorded value is abnormal (worked out here if not given).
    Returns (i, j, log-likelihood of the pair)."""
    rows = np.array([at.item_index[k] for k in items])
    lead = int(firsts[0])
    best = (lead, lead, float(ll[lead]))  # no second lesion: the single best
    firsts = np.asarray(firsts, dtype=np.int64)
    firsts = firsts[_masks(at).pairable[firsts]]
    # A second lesion can only gain on findings recorded abnormal where the first predicts normal: when every
    # first lesion tried explains all the abnormal findings, there is nothing to search for.
    if recorded is None:
        recorded = np.array([abnormal(k, v) for k, v in zip(items, recorded_values)], dtype=bool)
    unexplained = recorded[:, None] & (at.abnormal[np.ix_(rows, firsts)] == 0)
    if not len(firsts) or not unexplained.any():
        return best
    m = _masks(at)
    root_level = m.root_level[firsts]
    # a cord lesion pairs with a root-level lesion only (separate()), so only those columns are scored for it
    for group, cols in ((firsts[~root_level], m.root_level_index), (firsts[root_level], m.pairable_index)):
        if not len(group):
            continue
        pos = (at.abnormal[np.ix_(rows, cols)] > 0).astype(np.float32)  # (examined, cols): j predicts abnormal
        z = (at.abnormal[np.ix_(rows, group)] == 0).T.astype(np.float32)  # (group, examined): i predicts normal
        # gain[k, j]: the change in fit from adding cols[j] to group[k], over the items group[k] predicts normal
        # and cols[j] not
        seen = raw[:, cols] * w[:, None]  # weighted log-probability of each recorded value
        gain = z @ (seen * pos) - (z * (raw[:, group] * w[:, None]).T) @ pos
        for k, i in enumerate(group):
            g = np.where(separate(at, int(i), cols), gain[k], -np.inf)
            j = int(g.argmax())
            if ll[i] + g[j] > best[2]:
                best = (int(i), int(cols[j]), float(ll[i] + g[j]))
    return best


def separate(at, i: int, cols: np.ndarray | None = None) -> np.ndarray:
    """(candidates,) which lesions count as a second, separate lesion beside candidate i: their segments lie more
    than PAIR_GAP segments from i's (PAIR_GAP_CORD for two cord lesions), or both lie outside the cord on opposite
    sides (two roots). Two overlapping or nearby cord lesions are one lesion of a shape the atlas lacks (a tapering
    compression, an intramedullary tumour with a cyst), not two lesions. With `cols` (candidate indices), the same
    for those candidates only: `separate(at, i)[cols]`."""
    m = _masks(at)

    def of(x):
        return x if cols is None else x[cols]

    outside = of(m.outside)
    gap = np.where(outside | m.outside[i], PAIR_GAP, PAIR_GAP_CORD)
    apart = (of(at.top) > at.bottom[i] + gap) | (of(at.bottom) < at.top[i] - gap)
    opposite = (outside & m.outside[i] & of(m.one_side) & m.one_side[i]) & (of(m.side_code) != m.side_code[i])
    ok = (apart | opposite) & of(m.pairable)
    if not m.root_level[i]:  # a cord lesion pairs with a root-level one only
        ok &= of(m.root_level)
    # One sac: a cauda equina lesion with another lesion in it is one lesion of the cauda equina (two lumbosacral
    # roots on opposite sides stay a pair: two discs).
    if m.cauda_equina[i]:
        ok &= ~of(m.in_the_sac)
    elif m.in_the_sac[i]:
        ok &= ~of(m.cauda_equina)
    return ok


# The lesions that come in separate pairs at the bedside: a cord lesion with a root or cauda equina lesion (a
# cervical myelopathy with a lumbar root or cauda equina lesion: tandem stenosis; a cord lesion with a
# radiculopathy), or two root-level lesions (two radiculopathies); common clinical practice, no source. Two cord
# lesions at two levels (multilevel metastases, multifocal inflammation) are left to imaging: on the corpus such
# pairs were one lesion's misfit patched (a meningioma's false level, motor neuron disease read as two
# compressions). Degenerations and a polyneuropathy are never half of a pair: they already span the cord or limbs.
PAIRABLE = tuple(p.id for p in PATTERNS.values()
                 if not p.diffuse and p.id not in ("polyneuropathy", NORMAL, *nerve_ids()))  # nerves: no level
ROOT_LEVEL = ("root", "cauda_equina")


@dataclass(frozen=True)
class _Masks:
    """Per-atlas (candidates,) arrays that `separate` and `best_pair` read for every first lesion."""
    outside: np.ndarray  # a lesion outside the cord
    one_side: np.ndarray  # a left or right lesion (not "both")
    side_code: np.ndarray
    pairable: np.ndarray  # PAIRABLE patterns
    root_level: np.ndarray  # ROOT_LEVEL patterns
    cauda_equina: np.ndarray
    in_the_sac: np.ndarray  # lumbosacral roots in the thecal sac: the cauda equina and roots from L1 down
    root_level_index: np.ndarray
    pairable_index: np.ndarray


_MASKS: dict[int, tuple] = {}


def _masks(at) -> _Masks:
    hit = _MASKS.get(id(at))
    if hit is None or hit[0] is not at:
        d = _derived(at)
        root_level = np.isin(at.pattern_of, ROOT_LEVEL)
        pairable = np.isin(at.pattern_of, PAIRABLE)
        cauda = at.pattern_of == "cauda_equina"
        sac = cauda | ((at.pattern_of == "root") & (at.top >= anatomy().index("L1")))
        m = _Masks(d.outside, d.side != "both", np.unique(d.side, return_inverse=True)[1].ravel(), pairable,
                   root_level, cauda, sac, np.flatnonzero(root_level), np.flatnonzero(pairable))
        hit = _MASKS[id(at)] = (at, m)
    return hit[1]


def assess_fit(at, items: list[tuple], values: list, w: np.ndarray, raw: np.ndarray, ll: np.ndarray,
               leaders: np.ndarray, recorded: np.ndarray | None = None) -> tuple[str, int, float]:
    """'good' or 'poor' for the best single candidate `leaders[0]`, with the second lesion of the best pair and
    what the pair gains in (weighted) nats over the best single lesion. `raw` holds the log-probability of each
    recorded value (examined x candidates), `w` the items' weights; `leaders` the best member of each leading
    hypothesis; `recorded` whether each recorded value is abnormal, if the caller has it."""
    b = int(leaders[0])
    mean, var = _self_fit(at, b, items, w)
    gap = mean - float(ll[b])
    first, second, pair = best_pair(at, items, values, raw, w, ll, leaders[:PAIR_FIRSTS], recorded)
    gain = pair - float(ll[b])
    poor = (gap > POOR_FIT_NATS and gap > POOR_FIT_Z * np.sqrt(max(var, 1e-9))) or gain > SECOND_LESION_GAIN
    return ("poor" if poor else "good"), (second if first == b else first), gain
