"""Forward simulation: lesion masks -> fibre losses along the extent -> bedside findings.

Step 1 (`fibre_losses`): for each mask and segment, the destroyed fraction of every region of that segment's
section (`Section.fraction_lost`), mapped onto *fibre features*: one (pathway stage, side, body segment) each,
such as "crossed pain fibres of left T10 in the right lateral spinothalamic tract". A fibre is lost if it is cut
anywhere, so along the extent top..bottom the losses combine as 1 - prod(1 - f_s); cumulative sums of
log(1 - f) give every (top, bottom) pair at once.

Step 2 (`readout`): bedside findings from fibre losses, by following each modality's pathway:
pinprick/temperature: dorsal root -> entry zone -> Lissauer's tract (one to two segments up) -> dorsal horn ->
anterior white commissure -> contralateral lateral spinothalamic tract; vibration and joint position: root ->
entry zone -> ipsilateral dorsal column; light touch: either of the two; strength: corticospinal fibres (upper
motor neuron) and the ventral-horn pool and ventral root (lower motor neuron); reflexes: their arc's segments
plus the corticospinal fibres to them. Nothing here looks at a pattern's name.

`readout_by_item` states step 2 one dermatome, muscle and reflex at a time; `readout` computes the same numbers
with whole tables at once (gathered feature columns, padded segment slots), which is what makes one simulate()
cost about a millisecond.
"""
from __future__ import annotations

from dataclasses import dataclass
from functools import cache

import numpy as np

from .anatomy import SIDES, TENDON_REFLEXES, anatomy
from .model import DEFAULT_RESOLUTION, S, sections
from .nerves import limb_muscles

N_SEG = 31
STAGES = ("dorsal_root", "ventral_root", "entry", "lissauer", "dorsal_horn", "commissure", "spinothalamic",
          "anterior_spinothalamic", "dorsal_column", "corticospinal", "anterior_corticospinal", "ventral_horn",
          "intermediolateral", "sacral_parasympathetic", "sympathetic")


@cache
def feature_index() -> dict[tuple[str, int, int], int]:
    """(stage, side 0/1, body segment) -> column. The commissure uses side 0 only; sympathetic uses body 0."""
    keys = []
    for stage in STAGES:
        for side in (0, 1):
            if stage == "commissure" and side == 1:
                continue
            for j in range(N_SEG):
                if stage == "sympathetic" and j > 0:
                    continue
                keys.append((stage, side, j))
    return {k: i for i, k in enumerate(keys)}


def _region_lookup(sec):
    by: dict[tuple[int, int, int], list[int]] = {}
    for rid, (st, sd, body) in enumerate(sec.regions):
        by.setdefault((st, sd, body), []).append(rid)
    return by


@cache
def region_to_feature(resolution: int = DEFAULT_RESOLUTION) -> tuple[np.ndarray, ...]:
    """Per segment, a (regions x features) matrix: column k sums to the share of feature k's fibres present there."""
    a = anatomy()
    fidx = feature_index()
    t6, t1 = a.index("T6"), a.index("T1")
    out = []
    for sec in sections(resolution):
        s = sec.index
        W = np.zeros((len(sec.regions), len(fidx)), dtype=np.float32)
        by = _region_lookup(sec)

        def put(feature, regions, weight=1.0, W=W, by=by, sec=sec):
            rids = [r for key in regions for r in by.get(key, [])]
            if not rids:
                return
            px = sec.region_pixels[rids]
            W[rids, fidx[feature]] += weight * px / px.sum()

        def all_of(st, sd, by=by):
            return [k for k in by if k[0] == st and k[1] == sd]

        for sd in (0, 1):
            op = 1 - sd
            put(("dorsal_root", sd, s), [(S["dorsal_root"], sd, s)])
            put(("ventral_root", sd, s), [(S["ventral_root"], sd, s)])
            put(("entry", sd, s), [(S["entry_zone"], sd, s)])
            put(("ventral_horn", sd, s), [(S["ventral_horn"], sd, s)])
            put(("intermediolateral", sd, s), [(S["intermediolateral"], sd, s)])
            put(("sacral_parasympathetic", sd, s), [(S["sacral_parasympathetic"], sd, s)])
            if s + 1 < N_SEG:  # pain fibres of the segment below ascend through this entry zone (Lissauer)
                put(("lissauer", sd, s + 1), [(S["entry_zone"], sd, s)], 0.5)
            for j in (s + 1, s + 2):  # ...synapse in the dorsal horn one to two segments up
                if j < N_SEG:
                    put(("dorsal_horn", sd, j), [(S["dorsal_horn"], sd, s)], 0.5)
            if s <= t1:
                put(("sympathetic", sd, 0), all_of(S["descending_sympathetic"], sd))
            for j in range(s, 30):
                put(("dorsal_column", sd, j), [(S["gracilis"], sd, j), (S["cuneatus"], sd, j)])
                put(("corticospinal", sd, j), [(S["lateral_corticospinal"], sd, j)])
                if j <= t6:
                    put(("anterior_corticospinal", sd, j), all_of(S["anterior_corticospinal"], sd))
            for j in range(s + 1, 30):
                # crossed fibres of side `sd`'s dermatome j lie in the opposite tract; half have crossed by j-1
                w = 0.5 if j == s + 1 else 1.0
                put(("spinothalamic", sd, j), [(S["lateral_spinothalamic"], op, j)], w)
                put(("anterior_spinothalamic", sd, j), all_of(S["anterior_spinothalamic"], op), w)
        for j in (s + 1, s + 2):  # crossing in the anterior white commissure one to two segments up
            if j < N_SEG:
                put(("commissure", 0, j), [(S["anterior_commissure"], -1, s)], 0.5)
        out.append(W)
    return tuple(out)


def fibre_losses_per_segment(masks, resolution: int = DEFAULT_RESOLUTION) -> np.ndarray:
    """Fibre-feature losses at each segment: masks is (k, n, n) or (k, 31, n, n) -> (k, 31, features)."""
    masks = np.asarray(masks)
    secs = sections(resolution)
    return fibre_losses_from_fractions([sec.fraction_lost(masks[:, s] if masks.ndim == 4 else masks)
                                        for s, sec in enumerate(secs)], resolution)


def fibre_losses_from_fractions(fractions, resolution: int = DEFAULT_RESOLUTION) -> np.ndarray:
    """Per segment s, the (k, regions of s) destroyed fractions (`Section.fraction_lost`) -> (k, 31, features)."""
    W = region_to_feature(resolution)
    k = fractions[0].shape[0]
    out = np.zeros((k, N_SEG, len(feature_index())), dtype=np.float32)
    for s, frac in enumerate(fractions):
        out[:, s] = frac @ W[s]
    return np.clip(out, 0.0, 1.0, out=out)


def scale_fibres(per_segment: np.ndarray, shares: dict[str, np.ndarray] | None) -> np.ndarray:
    """(k, 31, features) losses with the features of each named stage multiplied by a share per body segment
    (`lesions.fibre_shares`: a loss that picks fibres by their length, not their place); `per_segment` if None."""
    if not shares:
        return per_segment
    out = per_segment.copy()
    for stage, share in shares.items():
        for (st, _side, j), col in feature_index().items():
            if st == stage:
                out[..., col] *= np.float32(share[j])
    return out


# Long tracts: the same fibres pass every segment of a lesion's extent, and a named pattern has the same shape at
# each segment, so a long lesion cuts the same fibres again rather than new ones. A long-tract feature's loss over
# the extent is therefore the mean over its segments of the share of the fibres there that are lost (a geometric
# mean of survival, each segment weighted by the share of the feature's fibres running there: half at the segment
# where pain fibres cross): a lesion of constant shape loses the same share whatever its length. Segmental features
# (roots, entry zones, gray matter, the crossing in the commissure) combine as 1 - prod(1 - f).
LONG_TRACTS = ("spinothalamic", "anterior_spinothalamic", "dorsal_column", "corticospinal", "anterior_corticospinal",
               "sympathetic")
_EPS = 1e-6


@cache
def _presence(resolution: int = DEFAULT_RESOLUTION) -> tuple[np.ndarray, np.ndarray, np.ndarray]:
    """(31, features) share of each feature's fibres running at each segment, its (32, features) cumulative sum
    (a zero row first), and the (features,) mask of long-tract features."""
    W = region_to_feature(resolution)
    present = np.stack([w.sum(axis=0) for w in W]).astype(np.float64)
    cum = np.concatenate([np.zeros((1, present.shape[1])), np.cumsum(present, axis=0)])
    long = np.array([k[0] in LONG_TRACTS for k in feature_index()])
    return present, cum, long


def extent_sums(per_segment: np.ndarray, resolution: int = DEFAULT_RESOLUTION) -> np.ndarray:
    """(k, 31, features) losses -> (k, 32, features) cumulative sums of log(1 - f) (for long tracts, of
    w log(1 - f / w), w the share of the feature's fibres at the segment), a zero row first."""
    present, _, long = _presence(resolution)
    w = np.where(long, present, 1.0)
    share = np.divide(per_segment, w, out=np.zeros(per_segment.shape), where=w > 0)
    logs = np.where(long, w, 1.0) * np.log1p(-np.minimum(share, 1 - _EPS))
    return np.concatenate([np.zeros_like(logs[:, :1]), np.cumsum(logs, axis=1)], axis=1)


def extent_sums_of_columns(per_segment: np.ndarray, columns: np.ndarray,
                           resolution: int = DEFAULT_RESOLUTION) -> np.ndarray:
    """`extent_sums(per_segment)[:, :, columns]` where `per_segment` (k, 31, len(columns)) holds only those columns,
    computed only for the (variant, column) pairs with a loss at some segment: most variants lose few of the
    fibre features (about 7% of the losses are not zero), and a column without loss sums to -0.0 at every row after
    the zero row, as `extent_sums` gives it (log1p(-0.0) = -0.0). Every other number goes through the same float64
    operations in the same order as in `extent_sums` (the atlas' build; tests/test_atlas_speed.py holds the two
    equal bit for bit): change both together."""
    present, _, long = _presence(resolution)
    w = np.where(long, present, 1.0)[:, columns]  # (31, c); a short feature's weight is 1.0 (as `extent_sums`)
    k, n_seg, c = per_segment.shape
    # a pair is computed if any loss is not +0.0 (bits, so a -0.0 would be computed too)
    lost = per_segment.view(np.uint32 if per_segment.dtype == np.float32 else np.uint64).any(axis=1)
    vi, ci = np.nonzero(lost)
    x = per_segment.transpose(0, 2, 1)[vi, ci]  # (pairs, 31)
    wp = w.T[ci]
    share = np.divide(x, wp, out=np.zeros(x.shape), where=wp > 0)
    np.minimum(share, 1 - _EPS, out=share)
    np.negative(share, out=share)
    logs = np.log1p(share, out=share)
    logs *= wp
    np.cumsum(logs, axis=1, out=logs)
    out = np.full((k, n_seg + 1, c), -0.0)
    out[:, 0] = 0.0
    out[vi, 1:, ci] = logs  # (pairs, 31) into (k, 32, c)
    return out


def extent_losses(cum: np.ndarray, mask_id: np.ndarray, top: np.ndarray, bottom: np.ndarray,
                  resolution: int = DEFAULT_RESOLUTION, columns: np.ndarray | None = None) -> np.ndarray:
    """Losses over top..bottom from `extent_sums`, one row per candidate (see LONG_TRACTS). With `columns`, `cum`
    holds only those feature columns (in that order), and so does the result."""
    total = cum[mask_id, bottom + 1]
    total -= cum[mask_id, top]
    _, pres, long = _presence(resolution)
    if columns is not None:
        pres, long = pres[:, columns], long[columns]
    n = pres[bottom + 1]
    n -= pres[top]
    np.divide(total, np.maximum(n, _EPS, out=n), out=total, where=long)
    return np.negative(np.expm1(total, out=total), out=total).astype(np.float32)


def along_extent(per_segment: np.ndarray, mask_id: np.ndarray, top: np.ndarray, bottom: np.ndarray) -> np.ndarray:
    """Combine losses over top..bottom for many candidates at once (see LONG_TRACTS)."""
    return extent_losses(extent_sums(per_segment), mask_id, top, bottom)


# ------------------------------------------------------------------ outside the cord: a length-dependent neuropathy

# A length-dependent (dying-back) polyneuropathy loses the longest axons first: the feet (S1, L5), then the legs to
# the knee, then the fingers, with the ankle jerk lost early and the saddle spared (from memory, standard neurology
# teaching; e.g. Adams and Victor's Principles of Neurology, 11th ed., 2019, ch. 43). With severity s in 0..1 the
# dying-back front lies at NEUROPATHY_FRONT[0] - NEUROPATHY_FRONT[1] x s cm of axon (100 cm: none; 40 cm at s = 1:
# the legs to above the knee and the hands); a root's fibres whose longest axon reaches past the front by x cm are
# lost in the share x / NEUROPATHY_RAMP (a graded edge, not a cut). Motor axons go later and less
# (NEUROPATHY_MOTOR_SHARE of that share): weakness is mild and distal. The lengths are `data/axons.csv`.
# Judgement, calibrated so that s = 0.35 loses the ankle jerks and impairs the toes, s = 0.65 reaches the ankles
# and begins at the fingers, s = 1 reaches the knees.
NEUROPATHY_FRONT = (100.0, 60.0)
NEUROPATHY_RAMP = 40.0
NEUROPATHY_MOTOR_SHARE = 0.3


@cache
def neuropathy_losses(severity: float) -> np.ndarray:
    """(features,) fibre losses of a length-dependent polyneuropathy of `severity` (0: none), on both sides."""
    a = anatomy()
    fi = feature_index()
    out = np.zeros(len(fi), dtype=np.float32)
    if severity <= 0:
        return out
    front = NEUROPATHY_FRONT[0] - NEUROPATHY_FRONT[1] * severity
    for kind, stage, share in (("sensory", "dorsal_root", 1.0), ("motor", "ventral_root", NEUROPATHY_MOTOR_SHARE)):
        for j, length in enumerate(a.axon_cm[kind]):
            lost = share * float(np.clip((length - front) / NEUROPATHY_RAMP, 0.0, 1.0))
            for sd in (0, 1):
                out[fi[(stage, sd, j)]] = lost
    out.flags.writeable = False
    return out


def with_neuropathy(L: np.ndarray, severity: np.ndarray) -> np.ndarray:
    """Fibre losses L (cand x features) combined with each candidate's neuropathy of `severity` (cand,):
    a fibre is lost if the cord lesion or the neuropathy takes it (1 - (1 - a)(1 - b))."""
    severity = np.asarray(severity, dtype=np.float64)
    if not severity.any():
        return L
    out = L.copy()
    for s in np.unique(severity[severity > 0]):
        rows = severity == s
        out[rows] = _comb(L[rows], np.broadcast_to(neuropathy_losses(float(s)), L[rows].shape))
    return out


# ------------------------------------------------------------------ readout

SENSORY_THRESHOLDS = (0.2, 0.75)  # loss below 0.2: normal; 0.75 and above: absent (model convention)
# Corticospinal loss that releases reflexes: hyperreflexia and an extensor plantar come before weakness in an
# evolving myelopathy, so the release threshold lies below the weakness ramp (model convention; common clinical
# practice, no source).
UMN_THRESHOLD = 0.2
SHOCK_LOSS = 0.3  # share of the descending fibres to the legs whose sudden loss brings spinal shock (judgement)
ARC_ABSENT, ARC_REDUCED = 0.5, 0.2
# The plantar response is a cutaneous reflex over three segments (L5-S2): it stays (flexor, or extensor above a
# corticospinal lesion) until most of its arc is gone. Extensor plantars with absent ankle jerks are the classic
# pairing of a myelopathy with a neuropathy (combined degeneration; from memory, standard neurology teaching).
PLANTAR_ARC_ABSENT = 0.8
# Weakness from corticospinal loss is not in proportion to it: a small partial loss spares power (an early
# myelopathy is spastic with brisk reflexes and at most grade 4 weakness) and losing most of the tract paralyses.
# The weakness rises linearly from 0 at UMN_RAMP[0] of the lateral tract lost to 1 at UMN_RAMP[1] (a third of the
# tract -> grade 4, half -> 3, four fifths -> 0-1). Judgement, common clinical practice, no source.
UMN_RAMP = (0.25, 0.85)
# Lower motor neuron loss: strength follows the motor units left, but the MRC scale is far from linear in strength
# (grade 4 spans most of the range, grade 3, lifting against gravity alone, is a small fraction of normal force:
# from memory, Beasley, Arch Phys Med Rehabil 1961). A muscle keeping a share r of its motor neurons is graded
# 5 * r ** LMN_EXPONENT: half kept -> grade 4, a sixth -> 3, a twentieth -> 2 (so a muscle of two segments that
# loses the minor one keeps grade 4, as the standard's rule that grade 3 or more means the rostral segment is
# intact implies; ISNCSCI, revised 2019). The exponent is judgement.
LMN_EXPONENT = 0.32
LATERAL_CST_SHARE = 0.92  # share of a muscle's corticospinal drive in the lateral tract (as _umn weighs it)


def umn_weakness(umn_loss):
    """Weakness 0..1 from a muscle's corticospinal loss (see UMN_RAMP)."""
    lo, hi = UMN_RAMP
    return np.clip((np.asarray(umn_loss) / LATERAL_CST_SHARE - lo) / (hi - lo), 0.0, 1.0)


def motor_grade(umn_loss, lmn_loss):
    """Expected MRC grade from a muscle's corticospinal loss (UMN_RAMP) and motor-neuron loss (LMN_EXPONENT)."""
    kept = np.clip(1 - np.asarray(lmn_loss), 0.0, 1.0)
    return 5 * (1 - umn_weakness(umn_loss)) * kept ** LMN_EXPONENT


@dataclass(frozen=True)
class Readout:
    """Predicted findings for a batch of candidates; every array has the candidates on axis 0.

    sensory: (cand, 5 modalities, 2 sides, 28 dermatomes) loss fraction 0..1
    motor: (cand, 2, 10) expected MRC grade (float), motor_umn / motor_lmn the two components of the weakness
    reflexes: {(side, reflex): int index into that reflex's values}
    signs: {(name, side): int index into that sign's values}
    muscles: (cand, 2, 10) expected MRC grade of the non-key limb muscles (`nerves.muscle_names`), muscles_umn /
    muscles_lmn their components
    """

    sensory: np.ndarray
    motor: np.ndarray
    motor_umn: np.ndarray
    motor_lmn: np.ndarray
    reflexes: dict
    signs: dict
    muscles: np.ndarray | None = None
    muscles_umn: np.ndarray | None = None
    muscles_lmn: np.ndarray | None = None


def _get(L, stage, side, j):
    return L[:, feature_index()[(stage, side, j)]]


def _comb(*losses):
    keep = np.ones_like(losses[0])
    for x in losses:
        keep = keep * (1 - x)
    return 1 - keep


def _umn(L, sd, weights):
    """Upper motor neuron loss of side sd's muscle with segment weights {j: w}."""
    out = 0.0
    for j, w in weights.items():
        cs = _get(L, "corticospinal", sd, j)
        acs = 0.5 * (_get(L, "anterior_corticospinal", sd, j) + _get(L, "anterior_corticospinal", 1 - sd, j))
        out = out + w * (0.92 * cs + 0.08 * acs)
    return out


def _lmn(L, sd, weights):
    """Lower motor neuron loss: the ventral-horn pools and ventral roots of the muscle's segments."""
    return sum(w * _comb(_get(L, "ventral_horn", sd, j), _get(L, "ventral_root", sd, j)) for j, w in weights.items())


def _arc_at(L, sd, j):
    return _comb(_get(L, "dorsal_root", sd, j), _get(L, "entry", sd, j), _get(L, "ventral_horn", sd, j),
                 _get(L, "ventral_root", sd, j))


def _arc(L, sd, segs):
    return sum(_arc_at(L, sd, j) for j in segs) / len(segs)


def _reflex_index(name, ar, released_loss, acute):
    """Index into the reflex's values from its arc loss and the corticospinal loss that releases it."""
    from .findings import PLANTAR, PRESENCE

    released = released_loss >= UMN_THRESHOLD
    broken = ar >= (PLANTAR_ARC_ABSENT if name == "plantar" else ARC_ABSENT)
    if name in TENDON_REFLEXES:
        idx = np.where(broken, 0, np.where(ar >= ARC_REDUCED, 1, np.where(released, np.where(acute, 0, 3), 2)))
    elif name == "plantar":
        idx = np.where(broken, PLANTAR.index("mute"),
                       np.where(released, np.where(acute, PLANTAR.index("mute"), PLANTAR.index("extensor")),
                                PLANTAR.index("flexor")))
    elif name == "hoffmann":
        idx = np.where(~broken & released & ~acute, PRESENCE.index("present"), PRESENCE.index("absent"))
    else:  # superficial reflexes vanish with the arc or with a corticospinal lesion above
        idx = np.where(broken | released, PRESENCE.index("absent"), PRESENCE.index("present"))
    return idx.astype(np.int8)


def _signs(L, acute) -> dict:
    """Anal signs, bulbocavernosus, bladder, diaphragm and Horner sign: {(name, side): value index}."""
    from .findings import SIGNS

    a = anatomy()
    sacral = a.reflex_segments["bulbocavernosus"]
    signs = {}
    s4 = {a.index("S4"): 0.5, a.index("S5"): 0.5}
    anal_lmn = a.muscle_weights["external anal sphincter"]
    vac_kept = np.maximum(*[(1 - _umn(L, sd, s4)) * (1 - _lmn(L, sd, anal_lmn)) for sd in (0, 1)])
    signs[("voluntary_anal_contraction", "")] = np.where(vac_kept >= 0.5, 0, 1).astype(np.int8)  # (True, False)
    dap = []
    for sd in (0, 1):
        j = a.index("S4")
        seg = _comb(_get(L, "dorsal_root", sd, j), _get(L, "entry", sd, j))
        central = _get(L, "dorsal_column", sd, j) * _comb(_get(L, "spinothalamic", sd, j),
                                                          _get(L, "commissure", 0, j))
        dap.append(_comb(seg, central))
    dap_loss = np.minimum(dap[0], dap[1])
    signs[("deep_anal_pressure", "")] = np.where(dap_loss < 0.5, 0, 1).astype(np.int8)
    bc_arc = 0.5 * (_arc(L, 0, sacral) + _arc(L, 1, sacral))
    bc_umn = np.minimum(_umn(L, 0, {j: 1 / 3 for j in sacral}), _umn(L, 1, {j: 1 / 3 for j in sacral}))
    # Spinal shock: in the first days after a sudden lesion that cuts a good part (SHOCK_LOSS) of the descending
    # fibres to the lumbosacral cord, the sacral reflexes and the detrusor fall silent (bulbocavernosus absent,
    # retention), whichever of those fibres the lesion's shape spares: an acute central cord injury keeps sacral
    # sensation and walks yet retains urine (from memory; Ditunno et al., Spinal shock revisited: a four-phase
    # model, Spinal Cord 2004; Schneider et al., J Neurosurg 1954, on the acute central cord syndrome).
    legs = {j: 1 / 6 for j in range(a.index("L2"), a.index("S3") + 1)}
    shock = acute & (0.5 * (_umn(L, 0, legs) + _umn(L, 1, legs)) >= SHOCK_LOSS)
    bc_absent = (bc_arc >= ARC_ABSENT) | (acute & (bc_umn >= 0.5)) | shock
    signs[("bulbocavernosus", "")] = np.where(bc_absent, 1, 0).astype(np.int8)
    spn = sum(0.5 * _comb(_get(L, "sacral_parasympathetic", sd, j), _get(L, "ventral_root", sd, j))
              for sd in (0, 1) for j in range(a.index("S2"), a.index("S4") + 1)) / 3
    bl_umn = np.minimum(_umn(L, 0, {a.index("S3"): 1}), _umn(L, 1, {a.index("S3"): 1}))
    bladder = SIGNS["bladder"]
    signs[("bladder", "")] = np.where(spn >= 0.5, bladder.index("retention"),
                                      np.where(bl_umn >= 0.5, np.where(acute, bladder.index("retention"),
                                                                       bladder.index("urgency")),
                                               np.where(shock, bladder.index("retention"),
                                                        bladder.index("normal")))).astype(np.int8)
    dia = a.muscle_weights["diaphragm"]
    dia_loss = np.maximum(*[_comb(_umn(L, sd, dia), _lmn(L, sd, dia)) for sd in (0, 1)])
    signs[("diaphragm", "")] = np.where(dia_loss >= 0.4, 1, 0).astype(np.int8)
    t1, t2 = a.index("T1"), a.index("T2")
    for sd, side in enumerate(SIDES):
        h = _comb(_get(L, "sympathetic", sd, 0),
                  0.5 * (_get(L, "intermediolateral", sd, t1) + _get(L, "intermediolateral", sd, t2)),
                  _get(L, "ventral_root", sd, t1))
        signs[("horner", side)] = np.where(h >= 0.5, 0, 1).astype(np.int8)  # (True, False)
    return signs


def readout_by_item(L: np.ndarray, acute: bool | np.ndarray = False) -> Readout:
    """Bedside findings from fibre losses L (cand x features), one dermatome, muscle and reflex at a time.

    The plain statement of the readout; `readout` computes the same numbers, bit for bit, with whole tables at
    once (tests/test_simulate_speedup.py holds the two together). Change both, or neither.
    """
    a = anatomy()
    n = L.shape[0]
    acute = np.broadcast_to(np.asarray(acute, dtype=bool), (n,))
    g = lambda st, sd, j: _get(L, st, sd, j)  # noqa: E731
    sens = np.zeros((n, 5, 2, len(a.dermatomes)), dtype=np.float32)
    for di, d in enumerate(a.dermatomes):
        segs = a.dermatome_segments[d]
        for sd in (0, 1):
            pp = vib = lt = 0.0
            for j in segs:
                seg = _comb(g("dorsal_root", sd, j), g("entry", sd, j))
                dc = g("dorsal_column", sd, j)
                stt = _comb(g("lissauer", sd, j), g("dorsal_horn", sd, j), g("commissure", 0, j),
                            g("spinothalamic", sd, j))
                pp = pp + _comb(seg, stt) / len(segs)
                vib = vib + _comb(seg, dc) / len(segs)
                lt = lt + _comb(seg, dc * (0.5 + 0.5 * g("anterior_spinothalamic", sd, j))) / len(segs)
            sens[:, 0, sd, di] = pp
            sens[:, 1, sd, di] = pp
            sens[:, 2, sd, di] = lt
            sens[:, 3, sd, di] = vib
            sens[:, 4, sd, di] = vib

    motor = np.zeros((n, 2, len(a.key_myotomes)), dtype=np.float32)
    mu, ml = np.zeros_like(motor), np.zeros_like(motor)
    for mi, myo in enumerate(a.key_myotomes):
        w = a.muscle_weights[myo]
        for sd in (0, 1):
            u, lo = _umn(L, sd, w), _lmn(L, sd, w)
            mu[:, sd, mi], ml[:, sd, mi] = u, lo
            motor[:, sd, mi] = motor_grade(u, lo)
    limb = limb_muscles()
    muscles = np.zeros((n, 2, len(limb)), dtype=np.float32)
    gu, gl = np.zeros_like(muscles), np.zeros_like(muscles)
    for mi, (_, w, _) in enumerate(limb.values()):
        for sd in (0, 1):
            u, lo = _umn(L, sd, w), _lmn(L, sd, w)
            gu[:, sd, mi], gl[:, sd, mi] = u, lo
            muscles[:, sd, mi] = motor_grade(u, lo)

    def released_by(sd, segs):
        """Corticospinal loss to the arc's segments, counted only where the arc itself still works."""
        return sum(_umn(L, sd, {j: 1.0}) * (1 - _arc_at(L, sd, j)) for j in segs) / len(segs)

    reflexes = {}
    for sd, side in enumerate(SIDES):
        for name, segs in a.reflex_segments.items():
            if name == "bulbocavernosus":
                continue
            reflexes[(side, name)] = _reflex_index(name, _arc(L, sd, segs), released_by(sd, segs), acute)
    return Readout(sens, motor, mu, ml, reflexes, _signs(L, acute), muscles, gu, gl)


# ------------------------------------------------------------------ readout, whole tables at once

@dataclass(frozen=True)
class _Slots:
    """Groups of segments (a dermatome's, a muscle's, a reflex arc's) padded to one width K.

    seg (G, K) segment index (padding repeats the first), weight (G, K) float32 (0 in padding), valid (G, K),
    count (G, 1) float32 the number of segments of each group.
    """

    seg: np.ndarray
    weight: np.ndarray
    valid: np.ndarray
    count: np.ndarray

    @classmethod
    def of(cls, groups) -> _Slots:
        groups = [g if isinstance(g, dict) else {j: 1.0 for j in g} for g in groups]
        k = max(len(g) for g in groups)
        seg = np.array([[*g, *[next(iter(g))] * (k - len(g))] for g in groups], dtype=np.intp)
        weight = np.array([[*g.values(), *[0.0] * (k - len(g))] for g in groups], dtype=np.float32)
        valid = np.array([[True] * len(g) + [False] * (k - len(g)) for g in groups])
        count = np.array([[len(g)] for g in groups], dtype=np.float32)
        return cls(seg, weight, valid, count)

    def columns(self, *stages: tuple[str, str]) -> np.ndarray:
        """Feature columns (len(stages), 2, G, K) of (stage, "same" | "other" | "left") per side and slot."""
        fidx = feature_index()
        out = np.empty((len(stages), 2, *self.seg.shape), dtype=np.intp)
        for q, (stage, which) in enumerate(stages):
            for sd in (0, 1):
                side = {"same": sd, "other": 1 - sd, "left": 0}[which]
                out[q, sd] = [[fidx[(stage, side, int(j))] for j in row] for row in self.seg]
        return out

    def total(self, t: np.ndarray) -> np.ndarray:
        """0 + t[..., 0] + t[..., 1] + ... over each group's own slots, in slot order (as a Python sum would)."""
        out = 0.0 + t[..., 0]
        for k in range(1, t.shape[-1]):
            out = out + np.where(self.valid[:, k], t[..., k], 0.0)
        return out


_SENSORY_STAGES = (("dorsal_root", "same"), ("entry", "same"), ("dorsal_column", "same"), ("lissauer", "same"),
                   ("dorsal_horn", "same"), ("commissure", "left"), ("spinothalamic", "same"),
                   ("anterior_spinothalamic", "same"))
_UMN_STAGES = (("corticospinal", "same"), ("anterior_corticospinal", "same"), ("anterior_corticospinal", "other"))
_ARC_STAGES = (("dorsal_root", "same"), ("entry", "same"), ("ventral_horn", "same"), ("ventral_root", "same"))


@cache
def _tables():
    """Slots and feature columns of the dermatomes, key muscles and reflexes (built once)."""
    a = anatomy()
    derm = _Slots.of([a.dermatome_segments[d] for d in a.dermatomes])
    muscle = _Slots.of([a.muscle_weights[m] for m in a.key_myotomes])
    limb = _Slots.of([w for _, w, _ in limb_muscles().values()])
    names = tuple(name for name in a.reflex_segments if name != "bulbocavernosus")
    arc = _Slots.of([a.reflex_segments[name] for name in names])
    return {"derm": derm, "derm_cols": derm.columns(*_SENSORY_STAGES),
            "muscle": muscle, "muscle_cols": muscle.columns(*_UMN_STAGES, ("ventral_horn", "same"),
                                                            ("ventral_root", "same")),
            "limb": limb, "limb_cols": limb.columns(*_UMN_STAGES, ("ventral_horn", "same"), ("ventral_root", "same")),
            "reflex_names": names, "arc": arc, "arc_cols": arc.columns(*_ARC_STAGES, *_UMN_STAGES)}


@cache
def read_columns() -> np.ndarray:
    """The feature columns `readout` reads, in order: found by running it once on an array that records every
    column it is indexed by. The others cannot change a finding, so the atlas' build leaves them at 0
    (tests/test_atlas_speed.py checks that readout ignores them, bit for bit)."""
    seen: set[int] = set()

    class _Recording(np.ndarray):
        def __getitem__(self, key):
            if isinstance(key, tuple) and len(key) == 2:
                seen.update(np.asarray(key[1]).ravel().tolist())
            else:
                raise AssertionError("readout reads L only as L[:, columns]")
            return np.asarray(self)[key]

    readout(np.zeros((1, len(feature_index())), dtype=np.float32).view(_Recording))
    out = np.array(sorted(seen), dtype=np.intp)
    out.flags.writeable = False
    return out


def _muscle_losses(L, cols, table):
    """(upper, lower) motor neuron loss of every muscle of `table` on both sides, as `_umn` and `_lmn` weigh them."""
    cs, acs_same, acs_other, vh, vr = np.moveaxis(L[:, cols], 1, 0)
    acs = 0.5 * (acs_same + acs_other)
    return table.total(table.weight * (0.92 * cs + 0.08 * acs)), table.total(table.weight * _comb(vh, vr))


def readout(L: np.ndarray, acute: bool | np.ndarray = False) -> Readout:
    """Bedside findings from fibre losses L (cand x features): `readout_by_item`, whole tables at once.

    Every number goes through the same float32 operations in the same order as in `readout_by_item`, so the two
    agree bit for bit; only the Python loops over dermatomes, muscles and reflexes are gone.
    """
    t = _tables()
    n = L.shape[0]
    acute = np.broadcast_to(np.asarray(acute, dtype=bool), (n,))

    # sensory: (n, 2 sides, dermatomes, slots)
    dr, en, dc, li, dh, co, sp, ast = np.moveaxis(L[:, t["derm_cols"]], 1, 0)
    derm = t["derm"]
    seg = _comb(dr, en)
    stt = _comb(li, dh, co, sp)
    pp = derm.total(_comb(seg, stt) / derm.count)
    vib = derm.total(_comb(seg, dc) / derm.count)
    lt = derm.total(_comb(seg, dc * (0.5 + 0.5 * ast)) / derm.count)
    sens = np.stack([pp, pp, lt, vib, vib], axis=1)

    # key muscles and the non-key limb muscles: (n, 2, muscles, slots)
    mu, ml = _muscle_losses(L, t["muscle_cols"], t["muscle"])
    motor = motor_grade(mu, ml)
    gu, gl = _muscle_losses(L, t["limb_cols"], t["limb"])
    muscles = motor_grade(gu, gl)

    # reflexes: (n, 2, reflexes, slots)
    dr, en, vh, vr, cs, acs_same, acs_other = np.moveaxis(L[:, t["arc_cols"]], 1, 0)
    arc = t["arc"]
    arc_at = _comb(dr, en, vh, vr)
    ar = arc.total(arc_at) / arc.count[:, 0]
    umn_at = 0.0 + 1.0 * (0.92 * cs + 0.08 * (0.5 * (acs_same + acs_other)))
    released = arc.total(umn_at * (1 - arc_at)) / arc.count[:, 0]
    per_name = {name: _reflex_index(name, ar[:, :, r], released[:, :, r], acute[:, None])
                for r, name in enumerate(t["reflex_names"])}
    reflexes = {(side, name): np.ascontiguousarray(per_name[name][:, sd])
                for sd, side in enumerate(SIDES) for name in t["reflex_names"]}
    return Readout(sens, motor, mu, ml, reflexes, _signs(L, acute), muscles, gu, gl)
