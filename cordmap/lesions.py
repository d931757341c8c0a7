"""Lesions: a cross-sectional mask times a rostrocaudal extent.

Named patterns draw their mask in the normalised section coordinates of `cordmap.model` (unit-circle cord,
x > 0 the patient's right, y > 0 dorsal), so one pattern serves every level. ``side`` is the side of the damaged
half of the cord (or the root). Researchers can pass their own mask: `Lesion.custom`.
"""
from __future__ import annotations

from collections.abc import Callable
from dataclasses import dataclass, field

import numpy as np

from .anatomy import anatomy
from .errors import CordmapError, bad_value
from .model import S, Section, dorsal_horn_axis, stt_depth_order
from .nerves import SEVERITY_GRID, nerves

SIDE_VALUES = ("left", "right", "both")
NORMAL = "normal"


@dataclass(frozen=True)
class Param:
    name: str
    default: float
    grid: tuple[float, ...]  # values the ranker's atlas tries
    low: float
    high: float
    doc: str


@dataclass(frozen=True)
class Pattern:
    id: str
    summary: str
    sides: tuple[str, ...]
    draw: Callable[..., np.ndarray]  # (section, xs, params) -> bool mask; xs = x mirrored so the damaged side is > 0
    params: tuple[Param, ...] = ()
    tops: tuple[str, str] = ("C1", "S5")  # range of allowed rostral segments
    bottom_fixed: str | None = None  # the caudal segment when the pattern fixes it
    max_extent: int = 30  # segments
    single: bool = False  # exactly one segment
    # Rostral segments the ranker's atlas tries, when fewer than `tops` (a lesion given by hand may use all of
    # `tops`): a lesion of the sacral cord is the conus pattern's, so the other cord patterns stop above it.
    atlas_tops: tuple[str, str] | None = None
    # The clinical family the ranker groups it in: a compression from the front and one from behind give nearly the
    # same bedside exam at the same level (imaging tells the direction), so they make one hypothesis.
    family: str = ""
    # A diffuse degeneration (motor neuron disease, combined degeneration): the bedside cannot place its rostral
    # edge to a segment, so the ranker makes one hypothesis of it per region of the cord, not one per segment.
    diffuse: bool = False

    def __post_init__(self):
        if not self.family:
            object.__setattr__(self, "family", self.id)


_PER_SECTION: dict[tuple[str, int], tuple] = {}  # (what, id(section)) -> (section, array): pure, built once


def _memo(what: str, sec, make):
    """A per-section array computed once; the section is kept alongside so its id cannot be reused."""
    key = (what, id(sec))
    hit = _PER_SECTION.get(key)
    if hit is None or hit[0] is not sec:
        hit = _PER_SECTION[key] = (sec, make(sec))
    return hit[1]


def _cord(sec):
    return _memo("cord", sec, lambda s: _radius(s) <= 1.0)


# White-matter structures: the long tracts and the fasciculus proprius (gray matter, entry zone and roots excluded).
_WHITE = tuple(S[name] for name in (
    "gracilis", "cuneatus", "lateral_corticospinal", "anterior_corticospinal", "lateral_spinothalamic",
    "anterior_spinothalamic", "dorsal_spinocerebellar", "ventral_spinocerebellar", "descending_sympathetic",
    "other_white"))


def _white(sec):
    return _memo("white", sec, lambda s: np.isin(s.structure, _WHITE))


def _thin(sec, mask, severity):
    """`mask` with the share `severity` of each pixel destroyed: an even, partial loss of a territory (diffuse
    degeneration, an incomplete lesion). A thinned mask is a weight per pixel (float32): every region it reaches loses
    exactly that share, whatever its size, so a tract's layers lose the same share all along the body (a pixel dither
    rounded each layer's share to its own pixel count: a stripe where the share sat near a grade's bound). Thinning
    a thinned mask keeps the smaller share (`np.minimum`): nested shares of one territory, as a dither's were."""
    if severity >= 1:
        return mask
    return np.minimum(np.asarray(mask, dtype=np.float32), np.float32(max(severity, 0.0)))


def _union(a, b):
    """Pixels lost to either of two masks: `|` of two boolean masks, the larger share of two weighted ones."""
    if a.dtype == bool and b.dtype == bool:
        return a | b
    return np.maximum(np.asarray(a, dtype=np.float32), np.asarray(b, dtype=np.float32))


def _roots(sec):
    return _memo("roots", sec, lambda s: (s.structure == S["dorsal_root"]) | (s.structure == S["ventral_root"]))


def _radius(sec):
    return _memo("radius", sec, lambda s: np.hypot(s.x, s.y))


def _dorsal_columns(sec):
    return _cord(sec) & (sec.y > 0.04) & (np.abs(sec.x) < dorsal_horn_axis(sec.y))


def _half(xs, side):
    return np.ones_like(xs, dtype=bool) if side == "both" else xs >= 0


def _complete(sec, xs, side, p):
    return _cord(sec)


def _hemisection(sec, xs, side, p):
    return _cord(sec) & (xs > 0)


def _central(sec, xs, side, p):
    r = p["size"]
    core = _cord(sec) & ((sec.x / (1.25 * r)) ** 2 + ((sec.y + 0.07) / (0.9 * r)) ** 2 <= 1)
    # The lateral columns beside a central lesion: the traumatic central cord syndrome damages the lateral
    # corticospinal tracts' white matter as well as the centre (Quencer et al., Neuroradiology 1992, MRI and
    # pathology of acute central cord syndrome; from memory), and an expanding syrinx or tumour stretches them: a
    # share `columns` of the lateral corticospinal tracts is lost evenly, so the legs are weak and spastic, less
    # than the arms.
    columns = p.get("columns", 0.0)
    if columns > 0:
        core = _union(core, _thin(sec, _structures(sec, ("lateral_corticospinal",)), columns))
    return core


def _anterior(sec, xs, side, p):
    # anterior spinal artery territory: the ventral two-thirds, sparing the dorsal columns (and the dorsal horns)
    return _cord(sec) & (sec.y < p["reach"]) & ~_dorsal_columns(sec)


def _posterior(sec, xs, side, p):
    m = _dorsal_columns(sec)
    if p["horns"] >= 0.5:
        m = m | (_cord(sec) & (sec.y > 0.1) & (np.abs(sec.x) < dorsal_horn_axis(sec.y) + 0.13))
    return m


def _posterolateral(sec, xs, side, p):
    # White matter only: both dorsal columns and the dorsolateral funiculi (lateral corticospinal tract, dorsal
    # spinocerebellar tract, fasciculus proprius). Gray matter, the dorsal horn, Lissauer's tract and the entry zone
    # are spared, and the lateral spinothalamic tract lies ventral to the sector, so pinprick is kept.
    # The degeneration begins in the dorsal columns and reaches the lateral columns later and less (from memory,
    # standard neurology teaching on combined degeneration): the dorsal columns lose twice the share `severity`
    # (all of it from severity 0.5), the dorsolateral funiculi the share `lateral` of it (LATERAL_SHARE when not
    # given): brisk knee jerks and extensor plantars with little weakness are the usual picture, Hoffmann signs and
    # brisk arm jerks in some, severe spastic weakness a late one (from memory).
    # The longest fibres go first (a length-dependent, dying-back degeneration: the legs before the arms, the toes
    # before the ankles; from memory, standard neurology teaching on B12 deficiency). In the dorsal columns a
    # dying-back front (`dying_back`) on each body segment's whole sensory axon (limb nerve plus dorsal column,
    # `data/axons.csv`); in the lateral columns a share growing with the body segment, from LENGTH_SHARE[0] x the
    # share at C1 to LENGTH_SHARE[1] x at S5 (`_thin_by_length`).
    # The dorsal columns are drawn whole: which of their fibres die back is a matter of each fibre's length, not of
    # where it lies, so `fibre_shares` gives each body segment's share lost (applied to the fibres, not the pixels).
    dc, lateral = _memo("posterolateral", sec, _posterolateral_sectors)
    lateral_share = 1.0 if p["severity"] >= 1 else p.get("lateral", LATERAL_SHARE) * p["severity"]
    return _union(dc, _thin_by_length(sec, lateral, lateral_share))


def _posterolateral_sectors(sec):
    """(dorsal columns, dorsolateral funiculi): the white matter of each sector (kept per section, read-only)."""
    white = _white(sec)
    dc = white & _dorsal_columns(sec)
    phi = np.degrees(np.arctan2(sec.y, np.abs(sec.x)))
    return dc, white & _cord(sec) & (phi >= -2) & (phi < 64) & ~dc


LENGTH_SHARE = (0.55, 1.45)
LATERAL_SHARE = 0.6


# The dorsal columns' dying-back front: at severity s the fibres whose whole axon (ganglion to skin plus dorsal
# column to the medulla) is longer than DC_FRONT[0] - DC_FRONT[1] x s cm are lost, over a graded edge of DC_RAMP cm
# (s = 0.35: the toes' fibres gone and the ankles' impaired; 0.65: the legs to the knee, the fingers impaired; 1:
# all). Judgement on the dying-back teaching above, set on the lengths of data/axons.csv.
DC_FRONT = (150.0, 120.0)
DC_RAMP = 30.0


def dying_back(severity: float) -> np.ndarray:
    """(31,) the share of each body segment's dorsal-column fibres lost to a length-dependent front of `severity`:
    grows with the length of the segment's whole sensory axon (ganglion to skin plus dorsal column to the medulla)."""
    a = anatomy()
    if severity >= 1:
        return np.ones(len(a.segments))
    length = np.array(a.axon_cm["sensory"]) + np.array(a.axon_cm["dorsal_column"])
    return np.clip((length - (DC_FRONT[0] - DC_FRONT[1] * severity)) / DC_RAMP, 0.0, 1.0)


def fibre_shares(pattern: str, params: dict) -> dict[str, np.ndarray] | None:
    """Shares of fibres lost that depend on the fibre, not on where it lies: {pathway stage: (31,) share per body
    segment}, multiplying the losses the pattern's masks give those fibres; None when there are none. Combined
    degeneration's dorsal columns die back by length (`dying_back`)."""
    if pattern == "posterolateral" and params.get("severity", 1.0) < 1:
        return {"dorsal_column": dying_back(params["severity"])}
    return None


def _thin_by_length(sec, mask, severity):
    """`_thin` with a share that grows with the body segment of each laminated pixel (others: `severity`)."""
    if severity >= 1:
        return mask
    body = np.where(sec.body >= 0, sec.body, 15) / 30.0
    share = np.clip(severity * (LENGTH_SHARE[0] + (LENGTH_SHARE[1] - LENGTH_SHARE[0]) * body), 0.0, 1.0)
    return np.minimum(np.asarray(mask, dtype=np.float32), share.astype(np.float32))


def _lateral_compression(sec, xs, side, p):
    # The roots on the compressed side are caught from their outer end in the share 3 x depth (all of them from
    # depth 1/3 on): a shallow mass gives a partial root sign (a numb rather than a dead dermatome, a weakened key
    # muscle, a reduced jerk), a deep one a complete root lesion. Judgement: the root is squeezed before the cord,
    # so it goes faster than the cord's half (depth 0.5).
    d = p["depth"]
    return (_cord(sec) & (xs >= 1 - 2 * d)) | _root_part(sec, xs > 0, min(1.0, 3 * d))


# A mass in front of or behind the cord flattens it rather than biting off the near side: the damage of compressive
# myelopathy lies in the gray matter at the level (the segmental lower motor neuron sign: a weak myotome, a lost or
# inverted reflex), the lateral corticospinal tracts and the dorsal columns, while the spinothalamic tracts are
# caught late (from memory: pathology of spondylotic myelopathy, e.g. Ono et al., Spine 1977; standard neurology
# teaching: spastic paraparesis, dorsal column loss and a patchy sensory level). Each tract loses an even share
# (`_thin`) that grows with depth from its own threshold; a front mass takes the ventral gray and roots of the
# level, a back one the dorsal roots, entry zones and dorsal horns. Judgement: the thresholds order the tracts as
# that teaching does (front: corticospinal, then dorsal columns, then spinothalamic; back: dorsal columns, then
# corticospinal, then spinothalamic), spread over the depth grid.
_CST = ("lateral_corticospinal", "anterior_corticospinal")
_DC = ("gracilis", "cuneatus")
_STT = ("lateral_spinothalamic", "anterior_spinothalamic")
_FRONT_ORDER = {_CST: (0.05, 0.6), _DC: (0.25, 0.7), _STT: (0.4, 0.75)}  # share 0 at the first depth, 1 at the second
_BACK_ORDER = {_DC: (0.0, 0.35), _CST: (0.15, 0.55), _STT: (0.4, 0.7)}
LEVEL_FULL_DEPTH = 0.35  # the gray matter and roots at the level are squeezed in proportion, wholly from this depth


def _structures(sec, names):
    """Pixels holding any fibres or cells of the named structures (kept per section: read-only, never changed in
    place): a pixel of a laminated tract's edge may be labelled fasciculus proprius by its centre yet hold some of
    a layer the segment still carries (`Section.by_region`), and an even share of the tract must reach that too (a
    compression that spared it lost less of the outermost layers carried at each segment: a stripe)."""
    return _memo(("structures", names), sec, lambda s: _holding(s, {S[n] for n in names}))


def _holding(sec, structures: set[int]) -> np.ndarray:
    """Pixels with a membership in any region of the given structure ids."""
    out = np.isin(sec.structure, list(structures)).ravel()
    ends = np.append(sec.region_starts[1:], len(sec.by_region))
    for rid, (st, _side, _body) in enumerate(sec.regions):
        if st in structures:
            out[sec.by_region[sec.region_starts[rid]:ends[rid]]] = True
    return out.reshape(sec.structure.shape)


# A mass in front of the cord catches the lateral spinothalamic tract from outside in: its outer layers, which
# carry the sacral and lumbar fibres, go first, so a partial compression gives a sensory level several segments
# below itself (a false localizing level; from memory, standard neurology teaching on extramedullary compression,
# e.g. Brazis, Masdeu and Biller, Localization in Clinical Neurology, ch. 5). The tract's outermost layer reaches
# each share OUTER_FIRST of the depth before its deepest one (the share growing along `model.stt_depth_order`;
# judgement). The anterior spinothalamic tract, not laminated in the model, loses an even share. A mass behind the
# cord keeps the even share: it takes the dorsal roots and horns of its level first, and a spinothalamic loss
# beginning segments lower would leave a band of loss at the level, normal skin, then a level below (two runs down
# the body, which the stripe rule of issue 11 forbids for a convex lesion); the model does not make that picture.
OUTER_FIRST = 0.3


def _outer_first(sec, depth, lo, hi):
    """The lateral spinothalamic tracts' share lost to a compression of `depth` whose even share would be
    (depth - lo) / (hi - lo): a weight per pixel, larger for the outer layers (OUTER_FIRST)."""
    tract = _structures(sec, ("lateral_spinothalamic",))
    order = _memo("stt_order", sec, stt_depth_order)
    share = np.clip((depth - lo + OUTER_FIRST * (order - 0.5)) / (hi - lo), 0.0, 1.0).astype(np.float32)
    return np.where(tract, share, np.float32(0.0))


def _flattened(sec, depth, order, level, outer_first=False):
    m = _thin(sec, level, float(np.clip(depth / LEVEL_FULL_DEPTH, 0.0, 1.0)))
    for names, (lo, hi) in order.items():
        if names == _STT and outer_first:
            m = _union(m, _thin(sec, _structures(sec, ("anterior_spinothalamic",)),
                                float(np.clip((depth - lo) / (hi - lo), 0.0, 1.0))))
            m = _union(m, _outer_first(sec, depth, lo, hi))
            continue
        m = _union(m, _thin(sec, _structures(sec, names), float(np.clip((depth - lo) / (hi - lo), 0.0, 1.0))))
    return m


def _anterior_compression(sec, xs, side, p):
    level = _structures(sec, ("ventral_horn", "ventral_root"))
    return _flattened(sec, p["depth"], _FRONT_ORDER, level, outer_first=True)


def _posterior_compression(sec, xs, side, p):
    level = _structures(sec, ("dorsal_root", "entry_zone", "dorsal_horn"))
    return _flattened(sec, p["depth"], _BACK_ORDER, level)


def _anterior_horn(sec, xs, side, p):
    return _thin(sec, (sec.structure == S["ventral_horn"]) & _half(xs, side), p.get("severity", 1.0))


# Motor neuron disease spares the sphincters: Onuf's nucleus (the anal and urethral sphincters' motor neurons in
# the ventral horn of S2-S4) survives, and continence is kept to the end (from memory; Mannen et al., J Neurol
# Neurosurg Psychiatry 1977, on the preserved sacral motor neurons in ALS). The pattern keeps the sacral ventral
# horns (S2-S5) and the corticospinal fibres bound for the sphincters' segments (S3-S5; those for S2 take part in
# the plantar response, which is extensor in the disease).
_ONUF = ("S2", "S5")
_SPHINCTER_CST = ("S3", "S5")


def _motor_neuron(sec, xs, side, p):
    st = sec.structure
    a = anatomy()
    lo, hi = a.index(_ONUF[0]), a.index(_ONUF[1])
    horn = (st == S["ventral_horn"]) & (not lo <= sec.index <= hi)
    lo, hi = a.index(_SPHINCTER_CST[0]), a.index(_SPHINCTER_CST[1])
    cst = ((st == S["lateral_corticospinal"]) | (st == S["anterior_corticospinal"])) & ~((sec.body >= lo)
                                                                                          & (sec.body <= hi))
    return _union(_thin(sec, horn, p["severity"]), _thin(sec, cst, p["severity"] * p.get("upper", 1.0)))


def _conus(sec, xs, side, p):
    return _cord(sec) | _roots(sec)


def _root_part(sec, sel, fraction):
    """The outer `fraction` of the roots in `sel` (by distance from the cord), so a partial lesion spares the rest."""
    r = _radius(sec)
    roots = _roots(sec) & sel
    if fraction >= 1:
        return roots
    if fraction <= 0:
        return np.zeros_like(roots)
    cut = np.quantile(r[roots], 1 - fraction)
    return roots & (r >= cut)


# Below the conus the roots lie in the thecal sac in order of segment: the lowest (sacral and coccygeal) roots
# medially, each higher root further out as it nears its exit (from memory, standard neuroanatomy teaching). In that
# medial-to-lateral order each root gets a place one root-spacing wide, L1 outermost and Co1 innermost, and is
# drawn three spacings wide so that neighbours overlap (the roots are not in neat columns; judgement): a mass that
# reaches a given share of the way out from the midline catches the innermost roots whole, the next ones in part.
_SAC_FIRST, _SAC_LAST = "L1", "Co1"
_SAC_WIDTH = 3.0  # a root's width in root spacings


def sac_share(index: int, medial: float) -> float:
    """The share of segment `index`'s roots lying within `medial` (a share of one side of the sac) of the midline."""
    a = anatomy()
    first, last = a.index(_SAC_FIRST), a.index(_SAC_LAST)
    if medial <= 0 or index < first:
        return 0.0
    spacing = 1.0 / (last - first + 1)
    centre = (last - index + 0.5) * spacing
    inner = centre - 0.5 * _SAC_WIDTH * spacing
    return float(np.clip((medial - inner) / (_SAC_WIDTH * spacing), 0.0, 1.0))


def _cauda_equina(sec, xs, side, p):
    # The worse side loses all its roots; the other side its roots' outer share `contra` (a mass pressing from the
    # side) and, with `medial` > 0 (a central disc reaching across the midline), its innermost, lowest roots.
    contra = max(p["contra"], sac_share(sec.index, p.get("medial", 0.0)))
    return _root_part(sec, xs > 0, 1.0) | _root_part(sec, xs < 0, contra)


def _root(sec, xs, side, p):
    return _root_part(sec, xs > 0, p["severity"])


def _normal(sec, xs, side, p):
    return np.zeros(sec.structure.shape, dtype=bool)


# Incomplete lesions are the rule at the bedside (grade 2-4 weakness, impaired rather than absent sensation): a
# focal pattern can destroy only a share of its territory, thinned evenly (`_thin`), so every tract it reaches
# keeps some fibres (judgement; common clinical practice, no source). Along the extent the thinned losses combine,
# so partial variants are enumerated over short extents only (atlas.PARTIAL_MAX_EXTENT).
_INCOMPLETE = Param("severity", 1.0, (0.25, 0.5, 1.0), 0.05, 1.0,
                    "share of the territory's fibres destroyed, evenly (1 = all: a complete lesion of that shape)")
_DEGENERATION = Param("severity", 1.0, (0.35, 0.65, 1.0), 0.05, 1.0,
                      "share of the territory's fibres lost, evenly over every body segment (diffuse degeneration)")
# A length-dependent polyneuropathy beside a cord lesion (`forward.neuropathy_losses`: distal loss in a stocking,
# ankle jerks lost first): combined degeneration from B12, copper or nitrous oxide is a myelopathy with a
# neuropathy, and the absent ankle jerks with brisk knee jerks are its usual bedside sign (from memory; Adams and
# Victor's Principles of Neurology, 11th ed., 2019, on subacute combined degeneration).
_NEUROPATHY = Param("neuropathy", 0.0, (0.0, 0.35, 0.65), 0.0, 1.0,
                    "severity of a length-dependent polyneuropathy beside it (0 none; 1 reaches the knees)")
_DEPTH = Param("depth", 0.25, (0.1, 0.17, 0.25, 0.33, 0.42, 0.5), 0.02, 0.5,
               "how far the compression reaches, as a fraction of the cord's width (0.5 = half the cord)")
# A mass in front of or behind the cord flattens it: the lateral corticospinal tracts (in the back half of the
# lateral funiculi) go early in compressive myelopathy, before the dorsal columns in an anterior compression (from
# memory, standard neurology teaching: spastic paraparesis with a sensory level is the common picture). A front or
# back compression therefore reaches further than a side one: a front one up to 0.7 of the cord's depth, a back one
# up to 0.6 (one of 0.7 leaves little more than the ventral horns' tips and predicts a complete lesion's exam
# except in a few items: measured in the round trip of tests/test_rank.py, 92 of its candidates ranked second).
_FRONT_DEPTH = Param("depth", 0.25, (0.1, 0.17, 0.25, 0.33, 0.42, 0.5, 0.6, 0.7), 0.02, 0.75,
                     "how far the compression reaches, as a fraction of the cord's depth (0.5 = half the cord)")
_BACK_DEPTH = Param("depth", 0.25, (0.1, 0.17, 0.25, 0.33, 0.42, 0.5, 0.6), 0.02, 0.75,
                    "how far the compression reaches, as a fraction of the cord's depth (0.5 = half the cord)")

# Longest extrinsic compression the ranker's atlas tries, in cord segments. A disc, a collapsed vertebra or a
# tumour spans one to a few vertebral levels (from memory, standard neurology and spine surgery teaching); eight
# cord segments cover four to six vertebrae, a long epidural abscess or haematoma included. Since long tracts lose
# the same share whatever the length (forward.LONG_TRACTS), a longer compression adds only root and gray-matter
# signs all along its length, which at twenty segments faked a sensory level by destroying every segment's roots.
# A lesion given by hand may be longer.
COMPRESSION_MAX_EXTENT = 8
# Rostral segments the atlas tries for the cord patterns other than the conus: down to L4 (from L5 down the cord is
# the conus medullaris and its epiconus; a lesion there is the conus pattern's, so two names do not split one
# picture).
CORD_TOPS = ("C1", "L4")
# Combined degeneration is a disease of the cervical and thoracic cord (its dorsal columns carry every fibre from
# below there); one starting in the lumbosacral cord would reach few fibres and predict the exam of its neuropathy
# alone (from memory, standard neurology teaching: the lesions are most marked in the cervical and upper thoracic
# cord).
DEGENERATION_TOPS = ("C1", "T12")

# A single peripheral nerve lesion of a limb (`cordmap.nerves`: its muscles, key sensory points and reflexes, each
# with the share it supplies): outside the cord and roots, no mask. One pattern per nerve and site, named by its id
# (`peroneal_fibular_head` ...); `top` is a placeholder, the root it mimics. `severity`: the share of the nerve's
# fibres lost (judgement: 0.3 a mild palsy, 1 a complete one).
_NERVE_SEVERITY = Param("severity", 1.0, SEVERITY_GRID, 0.05, 1.0, "share of the nerve's fibres lost (1 = all)")


def _nerve_patterns() -> tuple[Pattern, ...]:
    return tuple(Pattern(n.id, f"the {n.words}: a single peripheral nerve lesion, outside the cord and roots",
                         ("left", "right"), _normal, (_NERVE_SEVERITY,), tops=(n.mimics, n.mimics), single=True)
                 for n in nerves().values())


PATTERNS: dict[str, Pattern] = {p.id: p for p in (
    Pattern("complete", "the whole cross-section at every segment of the extent (transection, complete myelitis)",
            ("both",), _complete, (_INCOMPLETE,), atlas_tops=CORD_TOPS),
    Pattern("hemisection", "one half of the cord (Brown-Sequard syndrome)", ("left", "right"), _hemisection,
            (_INCOMPLETE,), atlas_tops=CORD_TOPS),
    Pattern("central", "around the central canal, growing outward with size (syrinx, central cord injury)",
            ("both",), _central,
            (Param("size", 0.3, (0.15, 0.22, 0.3, 0.4, 0.5, 0.6, 0.7), 0.05, 0.9,
                   "radius of the damaged zone as a fraction of the cord's radius"), _INCOMPLETE,
             Param("columns", 0.0, (0.0, 0.35), 0.0, 1.0,
                   "share of the lateral corticospinal tracts lost beside the centre (legs weak and spastic)")),
            atlas_tops=CORD_TOPS),
    Pattern("anterior", "the anterior spinal artery territory: ventral two-thirds, dorsal columns spared",
            ("both",), _anterior,
            (Param("reach", 0.45, (0.2, 0.45, 0.6), -0.3, 0.6, "dorsal edge of the infarct (normalised height)"),
             _INCOMPLETE), atlas_tops=CORD_TOPS),
    Pattern("posterior", "both dorsal columns, optionally the dorsal horns and entry zones (tabes, posterior infarct)",
            ("both",), _posterior, (Param("horns", 0.0, (0.0, 1.0), 0.0, 1.0, "1 = dorsal horns included"),),
            diffuse=True),
    Pattern("posterolateral", "both dorsal columns and both dorsolateral funiculi (combined degeneration)",
            ("both",), _posterolateral,
            (_DEGENERATION, _NEUROPATHY,
             Param("lateral", LATERAL_SHARE, (LATERAL_SHARE,), 0.1, 1.0,
                   "the dorsolateral columns' share of `severity` (below 1: they lag behind the dorsal columns)")),
            diffuse=True, atlas_tops=DEGENERATION_TOPS),
    Pattern("lateral_compression", "extrinsic pressure from one side, reaching inward with depth",
            ("left", "right"), _lateral_compression, (_DEPTH, _INCOMPLETE),
            max_extent=COMPRESSION_MAX_EXTENT, atlas_tops=CORD_TOPS),
    Pattern("anterior_compression", "extrinsic pressure from the front (disc, vertebral body), with depth",
            ("both",), _anterior_compression, (_FRONT_DEPTH, _INCOMPLETE),
            max_extent=COMPRESSION_MAX_EXTENT, atlas_tops=CORD_TOPS, family="compression"),
    Pattern("posterior_compression", "extrinsic pressure from behind (ligament, lamina, epidural mass), with depth",
            ("both",), _posterior_compression, (_BACK_DEPTH, _INCOMPLETE),
            max_extent=COMPRESSION_MAX_EXTENT, atlas_tops=CORD_TOPS, family="compression"),
    Pattern("anterior_horn", "the ventral horn motor neurons alone (pure lower motor neuron)",
            ("left", "right", "both"), _anterior_horn,
            # Partial loss of the pools (grade 3-4 muscles) is the usual picture of a focal amyotrophy; poliomyelitis
            # may leave a limb flail (from memory, standard neurology teaching).
            (Param("severity", 1.0, (0.65, 0.9, 1.0), 0.05, 1.0,
                   "share of the ventral horn motor neurons lost, evenly over every segment of the region"),)),
    Pattern("motor_neuron", "corticospinal tracts and ventral horns, no sensory structure (mixed motor neuron)",
            ("both",), _motor_neuron,
            # The ventral horns' loss reaches 0.9 (grade 2-3 on the MRC scale, forward.LMN_EXPONENT): wasted hands
            # of grade 2-3 are the usual picture at diagnosis (from memory, standard neurology teaching on ALS).
            (Param("severity", 1.0, (0.35, 0.65, 0.9, 1.0), 0.05, 1.0,
                   "share of the ventral horn motor neurons lost, evenly over every segment of the region"),
             # Upper and lower motor neuron loss need not keep pace: brisk jerks and a Hoffmann sign over wasted,
             # weak arms with legs of normal power are common (from memory, standard neurology teaching on ALS).
             Param("upper", 1.0, (0.4, 0.7, 1.0), 0.1, 1.0,
                   "the corticospinal tracts' share of `severity` (0.7: upper motor neuron signs with little "
                   "corticospinal weakness)")), diffuse=True),
    Pattern("conus", "the conus medullaris with its roots (the sacral cord behind T12-L1): symmetric, the sphincters "
            "early", ("both",), _conus, (_INCOMPLETE,),
            tops=("L5", "S4"),
            bottom_fixed="Co1"),
    Pattern("cauda_equina", "the lumbosacral roots in the sac below the conus, from the highest caught down (named "
            "by the disc or canal level where it is caught), worse on one side or central", ("left", "right"),
            _cauda_equina,
            (Param("contra", 0.5, (0.0, 0.5, 1.0), 0.0, 1.0, "share of the other side's roots involved"),
             Param("medial", 0.0, (0.0, 0.33), 0.0, 1.0,
                   "share of the other side's half of the sac reached from the midline: its lowest roots, which "
                   "lie medially (central disc)"), _INCOMPLETE),
            tops=("L1", "S3"), bottom_fixed="Co1"),
    Pattern("root", "one dorsal and ventral root (radiculopathy)", ("left", "right"), _root,
            (Param("severity", 1.0, (0.2, 0.4, 0.7, 1.0), 0.1, 1.0, "share of the root's fibres lost"),),
            tops=("C2", "S5"), single=True),
    # Outside the cord and roots: a length-dependent polyneuropathy alone (a common mimic of a cord or root lesion).
    # It has no mask and no level; `top` is a placeholder at S1 (the feet go first).
    Pattern("polyneuropathy", "a length-dependent peripheral polyneuropathy: distal loss, ankle jerks first",
            ("both",), _normal,
            (Param("neuropathy", 0.65, (0.2, 0.35, 0.65, 1.0), 0.05, 1.0,
                   "severity (0.2 reduces the ankle jerks; 0.35 loses them and numbs the toes; 1 reaches the knees "
                   "and the hands)"),),
            tops=("S1", "S1"), single=True),
    *_nerve_patterns(),
    # No lesion: the ranker's "normal cord" hypothesis, against which every lesion must earn its place.
    Pattern(NORMAL, "no lesion: a normal cord (the ranker's baseline hypothesis)", ("both",), _normal,
            tops=("C1", "C1"), single=True),
)}

CUSTOM = "custom"


@dataclass(frozen=True)
class Lesion:
    """A lesion: pattern, side, most rostral (`top`) and most caudal (`bottom`) cord segment, parameters, phase.

    ``Lesion("hemisection", "left", "T6")`` is one segment; give ``bottom`` for a longer one.
    """

    pattern: str
    side: str = "both"
    top: str = "T6"
    bottom: str | None = None
    params: tuple[tuple[str, float], ...] = ()
    phase: str = "chronic"
    mask: np.ndarray | None = field(default=None, compare=False, repr=False)

    def __post_init__(self):
        a = anatomy()
        if isinstance(self.params, dict):
            object.__setattr__(self, "params", tuple(sorted(self.params.items())))
        if self.pattern == CUSTOM:
            if self.mask is None:
                raise CordmapError("pattern 'custom' needs a mask (see Lesion.custom)")
        elif self.pattern not in PATTERNS:
            raise bad_value("pattern", self.pattern, [*PATTERNS], "pattern")
        pat = PATTERNS.get(self.pattern)
        sides = pat.sides if pat else SIDE_VALUES
        if self.side not in sides:
            if self.side not in SIDE_VALUES:
                raise bad_value("side", self.side, sides, "side")
            raise CordmapError(f"side: {self.side!r} does not apply to pattern {self.pattern!r}; "
                               f"allowed {', '.join(sides)}")
        top = a.index(self.top, "top")
        bottom_name = self.bottom or (pat.bottom_fixed if pat and pat.bottom_fixed else self.top)
        object.__setattr__(self, "bottom", bottom_name)
        bottom = a.index(bottom_name, "bottom")
        if bottom < top:
            raise CordmapError(f"bottom: {bottom_name} lies rostral to top {self.top}; top is the most rostral segment")
        if pat:
            lo, hi = a.index(pat.tops[0]), a.index(pat.tops[1])
            if not lo <= top <= hi:
                raise CordmapError(f"top: {self.top} is outside {pat.tops[0]}..{pat.tops[1]} for pattern "
                                   f"{self.pattern!r}")
            if pat.single and bottom != top:
                raise CordmapError(f"bottom: pattern {self.pattern!r} covers one segment; give bottom = top")
            if pat.bottom_fixed and bottom_name != pat.bottom_fixed:
                raise CordmapError(f"bottom: pattern {self.pattern!r} always ends at {pat.bottom_fixed}")
            names = [p.name for p in pat.params]
            for name, value in self.params:
                if name not in names:
                    raise bad_value("param", name, names or ["(none)"], f"parameter of {self.pattern!r}")
                spec = pat.params[names.index(name)]
                if not isinstance(value, (int, float)) or not spec.low <= value <= spec.high:
                    raise CordmapError(f"param {name}: {value!r} is outside {spec.low}..{spec.high}")
        if self.phase not in ("chronic", "acute"):
            raise bad_value("phase", self.phase, ("chronic", "acute"), "phase")

    @classmethod
    def custom(cls, mask: np.ndarray, top: str, bottom: str | None = None, phase: str = "chronic") -> Lesion:
        """A researcher's own mask: a boolean (n, n) raster on the section grid, or (31, n, n) per segment."""
        mask = np.asarray(mask, dtype=bool)
        if mask.ndim not in (2, 3):
            raise CordmapError(f"mask: expected a 2-D (n, n) or 3-D (31, n, n) array, got shape {mask.shape}")
        return cls(CUSTOM, "both", top, bottom, (), phase, mask)

    def param(self, name: str) -> float:
        """The value of one parameter (its default when not given)."""
        for k, v in self.params:
            if k == name:
                return v
        return next(p.default for p in PATTERNS[self.pattern].params if p.name == name)

    def all_params(self) -> dict[str, float]:
        """Every parameter of the pattern with its value, defaults filled in."""
        if self.pattern == CUSTOM:
            return {}
        return {p.name: self.param(p.name) for p in PATTERNS[self.pattern].params}

    @property
    def top_index(self) -> int:
        """The rostral segment's position, 0 for C1."""
        return anatomy().index(self.top)

    @property
    def bottom_index(self) -> int:
        """The caudal segment's position, 0 for C1."""
        return anatomy().index(self.bottom)

    def describe(self) -> str:
        """The lesion in plain words (`cordmap.words.describe`)."""
        from .words import describe

        return describe(self)


def _shape_params(pat: Pattern, params: dict) -> dict:
    """What a pattern's draw function sees: an incomplete pattern draws its shape without `severity` (the share
    destroyed thins that shape afterwards), so one shape serves every severity."""
    return {k: v for k, v in params.items() if k != "severity"} if _INCOMPLETE in pat.params else params


def draw_mask(pattern: str, side: str, params: dict, sec: Section) -> np.ndarray:
    """The boolean mask of a named pattern on one section."""
    xs = sec.x if side != "left" else -sec.x
    pat = PATTERNS[pattern]
    mask = pat.draw(sec, xs, side, _shape_params(pat, params))
    if _INCOMPLETE in pat.params:
        mask = _thin(sec, mask, params.get("severity", 1.0))
    return mask


def draw_masks(variants, sec: Section):
    """`draw_mask` of many (pattern, side, params) on one section, in order: an incomplete pattern's shape is drawn
    once for all its severities (the atlas' build)."""
    shapes: dict[tuple, np.ndarray] = {}
    for pattern, side, params in variants:
        pat = PATTERNS[pattern]
        if _INCOMPLETE not in pat.params:
            yield draw_mask(pattern, side, params, sec)
            continue
        shape = _shape_params(pat, params)
        key = (pattern, side, tuple(sorted(shape.items())))
        if key not in shapes:
            drawn = pat.draw(sec, sec.x if side != "left" else -sec.x, side, shape)
            shapes[key] = (drawn, np.asarray(drawn, dtype=np.float32))  # converted once for all its severities
        drawn, weights = shapes[key]
        severity = params.get("severity", 1.0)
        yield drawn if severity >= 1 else _thin(sec, weights, severity)


def lesion_masks(lesion: Lesion, secs) -> np.ndarray:
    """(31, n, n) masks of a lesion on every section (zero outside its extent does not matter: extent selects)."""
    if lesion.pattern == CUSTOM:
        m = lesion.mask
        n = secs[0].x.shape[0]
        if m.shape[-2:] != (n, n):
            raise CordmapError(f"mask: shape {m.shape} does not match the section grid ({n}, {n})")
        return np.broadcast_to(m, (len(secs), n, n)) if m.ndim == 2 else m
    params = lesion.all_params()
    return np.stack([draw_mask(lesion.pattern, lesion.side, params, sec) for sec in secs])
