"""The laminated cross-section of every cord segment, as label rasters.

Coordinates are normalised: the cord outline is the unit circle, x < 0 is the patient's left, x > 0 the right,
y > 0 dorsal. One lesion pattern defined in these coordinates therefore serves every level; the physical
ellipse (transverse x anteroposterior diameter from ``segments.csv``) is used only for drawing.
Roots lie outside the circle (dorsal root entering dorsolaterally, ventral root leaving ventrolaterally).

Each pixel carries a *region* id. A region is one (structure, side, body segment) cell: for laminated tracts the
body segment whose fibres lie there, for gray matter and roots the segment itself. `Section.fraction_lost(mask)`
gives the destroyed fraction of every region; `cordmap.forward` turns region losses into fibre losses along the
lesion's extent and then into bedside findings.

Lamination (``lamination.csv``):
* dorsal columns: each entering segment adds its fibres laterally, so the lowest body segments lie medial;
  fasciculus cuneatus (T6 and above) lateral to gracilis (T7 and below);
* lateral spinothalamic tract: sacral fibres outermost and dorsal, cervical fibres deepest and ventral;
* lateral corticospinal tract: leg fibres outermost, arm fibres deep. This is the classic teaching; Levi and
  Schwab (J Neurosurg Spine 2022;36:653) find no such somatotopy in primates, so nothing in the ranker leans on
  it alone (the central-cord picture also comes from the ventral horns and the crossing fibres).
"""
from __future__ import annotations

from dataclasses import dataclass
from functools import cache

import numpy as np

from .anatomy import anatomy

# structure ids (0 = outside the cord and roots)
STRUCTURES = (
    "outside", "gracilis", "cuneatus", "lateral_corticospinal", "anterior_corticospinal", "lateral_spinothalamic",
    "anterior_spinothalamic", "dorsal_spinocerebellar", "ventral_spinocerebellar", "descending_sympathetic",
    "other_white", "dorsal_horn", "intermediate_gray", "ventral_horn", "anterior_commissure", "entry_zone",
    "intermediolateral", "sacral_parasympathetic", "clarke", "central_canal", "dorsal_root", "ventral_root",
)
S = {name: i for i, name in enumerate(STRUCTURES)}
SIDE_NAMES = ("left", "right")
EXTENT = 1.45  # the raster spans [-EXTENT, EXTENT] in both axes
DEFAULT_RESOLUTION = 160

# relative fibre count contributed by each body segment (enlargements carry more fibres); from memory
_ENLARGED = {*range(4, 9), *range(21, 27)}  # C5-T1, L2-S2


def fibre_weight(j: int) -> float:
    return 2.0 if j in _ENLARGED else (0.5 if j >= 27 else 1.0)


def _gray_params(s: int) -> tuple[float, float, float]:
    """(overall gray scale, ventral horn scale, dorsal horn scale) at segment index s.

    Gray matter grows relative to the section caudally because white matter carries fewer fibres there;
    horns swell in the cervical (C5-T1) and lumbosacral (L2-S2) enlargements. Values from memory of atlas sections.
    """
    if s <= 3:
        gs, vh, dh = 0.78, 0.85, 0.9
    elif s <= 8:
        gs, vh, dh = 0.82, 1.2, 1.1
    elif s <= 19:
        gs, vh, dh = 0.74, 0.7, 0.8
    elif s <= 26:
        gs, vh, dh = 0.98, 1.2, 1.15
    else:
        gs, vh, dh = 1.1, 1.0, 1.0
    return gs, vh, dh


@dataclass(frozen=True)
class Section:
    """The label rasters of one segment. ``region`` is an int raster; ``regions`` describes each region id."""

    segment: str
    index: int
    x: np.ndarray  # normalised pixel centres, shape (n, n)
    y: np.ndarray
    structure: np.ndarray  # structure id per pixel
    side: np.ndarray  # 0 left, 1 right, -1 midline / none
    body: np.ndarray  # body segment index for laminated tracts, own segment for gray and roots, -1 otherwise
    region: np.ndarray  # region id per pixel, -1 outside
    regions: tuple[tuple[int, int, int], ...]  # region id -> (structure, side, body)
    region_pixels: np.ndarray  # pixel count per region
    by_region: np.ndarray  # flat pixel indices inside the section, region by region (each region's in raster order)
    region_starts: np.ndarray  # where each region begins in `by_region`

    def fraction_lost(self, mask: np.ndarray) -> np.ndarray:
        """Destroyed fraction of every region for one mask (n, n) or a stack of masks (k, n, n).

        A boolean mask is counted (the same numbers as summing its pixels as weights, about ten times faster);
        any other mask is a weight per pixel.
        """
        flat = self.region.ravel()
        inside = flat >= 0
        counted = np.asarray(mask).dtype == bool
        m = np.asarray(mask, dtype=bool if counted else np.float32).reshape(-1, self.region.size)
        nr = len(self.regions)
        out = np.zeros((m.shape[0], nr), dtype=np.float32)
        if counted:  # the pixels of every mask gathered region by region and summed per region, all masks at once
            out[:] = np.add.reduceat(m[:, self.by_region].view(np.uint8), self.region_starts, axis=1, dtype=np.int32)
        else:
            ids = flat[inside]
            for k in range(m.shape[0]):
                out[k] = np.bincount(ids, weights=m[k, inside], minlength=nr)
        out /= self.region_pixels
        return out if np.ndim(mask) == 3 else out[0]


def _laminate(sel: np.ndarray, coord: np.ndarray, bodies: list[int], body: np.ndarray) -> None:
    """Give the pixels in `sel` body segments by the quantile of `coord`: bodies[0] at the low end.

    Each body segment gets a share of the tract's area proportional to its fibre weight.
    """
    if not bodies or not sel.any():
        return
    idx = np.flatnonzero(sel.ravel())
    order = idx[np.argsort(coord.ravel()[idx], kind="stable")]
    w = np.array([fibre_weight(j) for j in bodies])
    edges = np.round(np.cumsum(w) / w.sum() * len(order)).astype(int)
    start = 0
    flat = body.reshape(-1)
    for j, end in zip(bodies, edges):
        flat[order[start:max(end, start + 1)]] = j
        start = max(end, start + 1)


# Corticospinal lamination (leg fibres outer, arm inner) is the classic teaching and is disputed: no somatotopy in
# primates (Levi and Schwab, J Neurosurg Spine 2022;36:653). The tract is laid out by a blend of the classic depth
# order and a fixed pseudo-random order, this share pseudo-random: a lesion reaching the inner part of the tract
# takes mostly arm fibres and some leg fibres (judgement; the model should not lean hard on a disputed fact).
CST_INTERMIX = 0.5


def _intermixed(sel: np.ndarray, coord: np.ndarray, mix: float) -> np.ndarray:
    """`coord` turned into quantiles over `sel` and blended with a fixed pseudo-random field (mirror-symmetric)."""
    out = np.zeros(coord.shape)
    idx = np.flatnonzero(sel.ravel())
    if not len(idx):
        return out
    q = np.empty(len(idx))
    q[np.argsort(coord.ravel()[idx], kind="stable")] = (np.arange(len(idx)) + 0.5) / len(idx)
    n = coord.shape[1]
    rows, cols = np.divmod(idx, n)
    mirror = np.abs(2 * cols - (n - 1)) // 2
    h = rows.astype(np.uint64) * np.uint64(0x9E3779B97F4A7C15)
    h += mirror.astype(np.uint64) * np.uint64(0xBF58476D1CE4E5B9)
    h ^= h >> np.uint64(31)
    h *= np.uint64(0x94D049BB133111EB)
    h ^= h >> np.uint64(29)
    noise = (h >> np.uint64(11)).astype(np.float64) / float(1 << 53)
    out.ravel()[idx] = (1 - mix) * q + mix * noise
    return out


def _disk(x, y, cx, cy, rx, ry=None):
    ry = rx if ry is None else ry
    return ((x - cx) / rx) ** 2 + ((y - cy) / ry) ** 2 <= 1.0


def _capsule(x, y, p0, p1, half_width):
    p0, p1 = np.asarray(p0), np.asarray(p1)
    d = p1 - p0
    t = np.clip(((x - p0[0]) * d[0] + (y - p0[1]) * d[1]) / (d @ d), 0, 1)
    return (x - p0[0] - t * d[0]) ** 2 + (y - p0[1] - t * d[1]) ** 2 <= half_width ** 2


def dorsal_horn_axis(y):
    """x of the dorsal horn's axis at height y (the horn runs from near the centre to the dorsolateral surface)."""
    return 0.08 + (y - 0.05) * 0.24 / 0.78


def build_section(s: int, resolution: int = DEFAULT_RESOLUTION) -> Section:
    a = anatomy()
    n = resolution
    half = (np.arange(n - n // 2) + (0.5 if n % 2 == 0 else 0.0)) / n * 2 * EXTENT
    c = np.concatenate([-half[::-1][: n // 2], half])  # exactly mirror-symmetric pixel centres
    x, y = np.meshgrid(c, -c)  # row 0 is dorsal (top of the picture)
    ax = np.abs(x)
    r = np.hypot(x, y)
    phi = np.degrees(np.arctan2(y, ax))
    gs, gvh, gdh = _gray_params(s)
    present = {name: s in a.column_range(name) for name in a.column_table["column"]}

    st = np.zeros((n, n), dtype=np.int16)
    side = np.where(x < 0, 0, 1).astype(np.int8)
    body = np.full((n, n), -1, dtype=np.int16)
    cord = (r <= 1.0) & ~((ax < 0.035) & (y < -0.72))  # ventral median fissure

    # white matter by funiculus
    dc = cord & (y > 0.04) & (ax < dorsal_horn_axis(y))
    st[cord] = S["other_white"]
    lateral = cord & ~dc & (phi >= -50)
    anterior = cord & ~dc & (phi < -50)
    depth = 1.0 - r
    if present["dorsal_spinocerebellar"]:
        st[lateral & (phi > -2) & (depth < 0.12)] = S["dorsal_spinocerebellar"]
    lcst = lateral & (phi >= -2) & (phi < 64) & (st == S["other_white"])
    st[lcst] = S["lateral_corticospinal"]
    if s <= 24:  # rises from the lumbosacral cord (from memory)
        st[lateral & (phi < -2) & (depth < 0.1)] = S["ventral_spinocerebellar"]
    symp = lateral & (phi >= -13) & (phi < -2) & (depth >= 0.1) & (depth < 0.5)
    if s <= a.index("L2"):
        st[symp] = S["descending_sympathetic"]
    lst = lateral & (phi < -2) & (st == S["other_white"])
    st[lst] = S["lateral_spinothalamic"]
    if present["anterior_corticospinal"]:
        st[anterior & (ax < 0.16)] = S["anterior_corticospinal"]
    st[anterior & (ax >= 0.16) & (depth >= 0.08)] = S["anterior_spinothalamic"]
    st[dc] = S["gracilis"]

    # gray matter
    ig = _disk(x, y, 0, 0, 0.30 * gs, 0.13 * gs)
    vh = _disk(ax, y, 0.05 + 0.30 * gs, -0.33 * gs - 0.04, 0.21 * gs * gvh, 0.23 * gs * gvh)
    dh = _capsule(ax, y, (0.09, 0.05), (dorsal_horn_axis(0.8), 0.8), 0.075 * gs * gdh)
    st[cord & dh] = S["dorsal_horn"]
    st[cord & ig] = S["intermediate_gray"]
    st[cord & vh] = S["ventral_horn"]
    if present["intermediolateral"]:
        st[cord & _disk(ax, y, 0.30 * gs + 0.03, 0.0, 0.06)] = S["intermediolateral"]
    if present["sacral_parasympathetic"]:
        st[cord & _disk(ax, y, 0.24 * gs, -0.05, 0.06)] = S["sacral_parasympathetic"]
    if present["clarke"]:
        st[cord & _disk(ax, y, 0.11, 0.13 * gs, 0.05)] = S["clarke"]
    awc = cord & (ax < 0.17) & (y < -0.13 * gs) & (y > -0.13 * gs - 0.09) & ~vh
    st[awc] = S["anterior_commissure"]
    canal = _disk(x, y, 0, 0, 0.035)
    st[canal] = S["central_canal"]
    tip = dorsal_horn_axis(0.9)
    entry = cord & (r > 0.8) & (y > 0.45) & (ax > dorsal_horn_axis(y) - 0.07) & (ax < dorsal_horn_axis(y) + 0.13)
    st[entry] = S["entry_zone"]
    # roots outside the cord
    st[_disk(ax, y, tip + 0.12, 1.12, 0.15, 0.13) & (r > 1.02)] = S["dorsal_root"]
    st[_disk(ax, y, 0.72, -0.95, 0.15, 0.12) & (r > 1.02)] = S["ventral_root"]
    side[(st == S["anterior_commissure"]) | (st == S["central_canal"])] = -1
    side[st == 0] = -1

    # Lamination of the long tracts. Layers are laid out for the full set of body segments, as at C1, so that a
    # layer sits at the same place at every level; layers a segment does not carry (fibres that have not yet
    # entered, or corticospinal fibres that have already ended) become fasciculus proprius. That is how white
    # matter shrinks caudally.
    bodies = list(range(1, 30))  # C2..S5
    u = ax / np.maximum(dorsal_horn_axis(y), 1e-3)
    for sd in (0, 1):
        on = side == sd
        _laminate(on & (st == S["gracilis"]), u, bodies[::-1], body)  # medial = lowest
        _laminate(on & (st == S["lateral_spinothalamic"]), r + 0.002 * phi, bodies, body)  # outer/dorsal = sacral
        lc = on & (st == S["lateral_corticospinal"])
        _laminate(lc, _intermixed(lc, r, CST_INTERMIX), bodies, body)  # outer = leg, in part
    gone = (((st == S["gracilis"]) | (st == S["lateral_corticospinal"])) & (body < s)) | \
           ((st == S["lateral_spinothalamic"]) & (body <= s))
    st[gone] = S["other_white"]
    body[gone] = -1
    # fibres from T6 and above form fasciculus cuneatus, lateral to gracilis
    st[(st == S["gracilis"]) & (body >= 0) & (body <= a.index("T6"))] = S["cuneatus"]
    for name in ("dorsal_horn", "intermediate_gray", "ventral_horn", "intermediolateral", "sacral_parasympathetic",
                 "clarke", "entry_zone", "dorsal_root", "ventral_root", "anterior_commissure"):
        body[st == S[name]] = s

    # regions: unique (structure, side, body)
    key = (st.astype(np.int64) * 3 + (side.astype(np.int64) + 1)) * 64 + (body.astype(np.int64) + 2)
    key[st == 0] = -1
    uniq, inv = np.unique(key[key >= 0], return_inverse=True)
    region = np.full(key.shape, -1, dtype=np.int32)
    region[key >= 0] = inv
    regions = tuple((int(k // 64 // 3), int(k // 64 % 3) - 1, int(k % 64) - 2) for k in uniq)
    counts = np.bincount(inv, minlength=len(uniq)).astype(np.float32)
    flat = region.ravel()
    inside = np.flatnonzero(flat >= 0)
    by_region = inside[np.argsort(flat[inside], kind="stable")]
    starts = np.searchsorted(flat[by_region], np.arange(len(uniq)))  # every region has a pixel: strictly rising
    return Section(a.segments[s], s, x, y, st, side, body, region, regions, counts, by_region, starts)


def sections(resolution: int = DEFAULT_RESOLUTION) -> tuple[Section, ...]:
    """The sections of all 31 segments (built once per resolution, however the resolution is passed)."""
    return _sections(int(resolution))


@cache
def _sections(resolution: int) -> tuple[Section, ...]:
    return tuple(build_section(s, resolution) for s in range(len(anatomy().segments)))


def section(seg: str, resolution: int = DEFAULT_RESOLUTION) -> Section:
    """The cross-section of one segment, e.g. ``section("C5")``."""
    return sections(resolution)[anatomy().index(seg)]
