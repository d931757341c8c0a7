"""The laminated cross-section of every cord segment, as label rasters.

Coordinates are normalised: the cord outline is the unit circle, x < 0 is the patient's left, x > 0 the right,
y > 0 dorsal. One lesion pattern defined in these coordinates therefore serves every level; the physical
ellipse (transverse x anteroposterior diameter from ``segments.csv``) is used only for drawing.
Roots lie outside the circle (dorsal root entering dorsolaterally, ventral root leaving ventrolaterally).

Each pixel carries a *region* id. A region is one (structure, side, body segment) cell: for laminated tracts the
body segment whose fibres lie there, for gray matter and roots the segment itself. `Section.fraction_lost(mask)`
gives the destroyed fraction of every region; `cordmap.forward` turns region losses into fibre losses along the
lesion's extent and then into bedside findings.

A laminated tract's layers are thinner than a pixel (29 body segments across a dorsal column a few pixels wide), so
they are laid out over several points in each pixel, and a pixel of such a tract belongs to every layer its points
fall in, each with its share of the pixel (`Section.by_region` / `region_weights`): a mask that covers the pixel
destroys that share of each layer. Counting whole pixels by their centre gave layers made of scattered pixels, in
the wrong order along the tract's edge, and a loss that came and went down the body (stripes, issue 11).

Lamination (``lamination.csv``):
* dorsal columns: each entering segment adds its fibres laterally, so the lowest body segments lie medial;
  fasciculus cuneatus (T6 and above) lateral to gracilis (T7 and below);
* lateral spinothalamic tract: sacral fibres outermost and dorsal, cervical fibres deepest and ventral (`STT_BANDS`);
  its layers are laid out once, over the tract at C1, and lie at the same places at every level (`_stt_edges`): a
  swelling ventral horn clips the deepest layers a segment carries rather than pushing every layer outward;
* lateral corticospinal tract: leg fibres outermost, arm fibres deep. This is the classic teaching; Levi and
  Schwab (J Neurosurg Spine 2022;36:653) find no such somatotopy in primates, so nothing in the ranker leans on
  it alone (the central-cord picture also comes from the ventral horns and the crossing fibres).
"""
from __future__ import annotations

import hashlib
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
    region_pixels: np.ndarray  # (float32) area of each region in pixels: the sum of its memberships' weights
    by_region: np.ndarray  # flat pixel index of every (pixel, region) membership, region by region
    region_weights: np.ndarray  # (float32) the share of that pixel's area in that region (1 outside laminated tracts)
    region_starts: np.ndarray  # where each region begins in `by_region`

    def fraction_lost(self, mask: np.ndarray) -> np.ndarray:
        """Destroyed fraction of every region for one mask (n, n) or a stack of masks (k, n, n).

        A boolean mask counts a pixel whole; any other mask is a weight per pixel. A pixel of a laminated tract
        belongs to the layers its area overlaps (`region_weights`), so a layer narrower than a pixel is counted
        where it lies rather than where a pixel's centre falls.
        """
        m = np.asarray(mask)
        m = m.reshape(-1, self.region.size)
        gathered = np.take(m, self.by_region, axis=1)  # the same as m[:, by_region], in half the time
        weighted = gathered * self.region_weights if gathered.dtype == bool else \
            gathered.astype(np.float32) * self.region_weights
        out = np.add.reduceat(weighted, self.region_starts, axis=1, dtype=np.float32)
        out /= self.region_pixels
        return out if np.ndim(mask) == 3 else out[0]


def _laminate(sel: np.ndarray, coord: np.ndarray, bodies: list[int], body: np.ndarray,
              edges: np.ndarray | None = None) -> None:
    """Give the pixels in `sel` body segments by the quantile of `coord`: bodies[0] at the low end.

    Each body segment gets a share of the tract's area proportional to its fibre weight. With `edges` (the
    len(bodies) - 1 values of `coord` between layers, `_quantile_edges`), the layers lie at those fixed places.
    """
    if not bodies or not sel.any():
        return
    idx = np.flatnonzero(sel.ravel())
    if edges is not None:
        body.reshape(-1)[idx] = np.asarray(bodies)[np.searchsorted(edges, coord.ravel()[idx], side="right")]
        return
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
    out.ravel()[idx] = (1 - mix) * q + mix * _pixel_noise(rows, cols, n)
    return out


def _pixel_noise(rows: np.ndarray, cols: np.ndarray, n: int) -> np.ndarray:
    """A fixed pseudo-random number in [0, 1) per pixel, the same for a pixel and its mirror image."""
    mirror = np.abs(2 * cols - (n - 1)) // 2
    h = rows.astype(np.uint64) * np.uint64(0x9E3779B97F4A7C15)
    h += mirror.astype(np.uint64) * np.uint64(0xBF58476D1CE4E5B9)
    h ^= h >> np.uint64(31)
    h *= np.uint64(0x94D049BB133111EB)
    h ^= h >> np.uint64(29)
    return (h >> np.uint64(11)).astype(np.float64) / float(1 << 53)


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


def _raster(s: int, n: int):
    """The structure and side rasters of segment s before lamination: (x, y, st, side)."""
    a = anatomy()
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
    # The lateral spinothalamic tract lies lateral to the ventral horn; the white matter medial to the horn's centre,
    # beside the intermediate gray, is fasciculus proprius (from memory, standard neuroanatomy atlases). Without
    # this the tract's deepest layer reached the central gray at C1, where a small central lesion took it.
    lst = lateral & (phi < -2) & (st == S["other_white"]) & (ax >= 0.05 + 0.30 * gs)
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
    return x, y, st, side


def build_section(s: int, resolution: int = DEFAULT_RESOLUTION) -> Section:
    a = anatomy()
    n = resolution
    x, y, st, side = _raster(s, n)
    st, side = st.copy(), side.copy()
    ax = np.abs(x)
    r = np.hypot(x, y)
    body = np.full((n, n), -1, dtype=np.int16)
    stt_edges = _stt_edges(n)

    # Lamination of the long tracts. Layers are laid out for the full set of body segments, as at C1, so that a
    # layer sits at the same place at every level; layers a segment does not carry (fibres that have not yet
    # entered, or corticospinal fibres that have already ended) become fasciculus proprius. That is how white
    # matter shrinks caudally.
    bodies = list(range(1, 30))  # C2..S5
    u = ax / np.maximum(dorsal_horn_axis(y), 1e-3)
    soft = []  # (pixel indices, structure, body) of each laminated tract's sub-pixel points, before `gone`
    for sd in (0, 1):
        on = side == sd
        dc, lst = on & (st == S["gracilis"]), on & (st == S["lateral_spinothalamic"])
        lc = on & (st == S["lateral_corticospinal"])
        _laminate(dc, u, bodies[::-1], body)  # medial = lowest
        _laminate(lst, _stt_coord(x, y), bodies, body, stt_edges[0])  # lateral and dorsal = sacral
        _laminate(lc, _intermixed(lc, r, CST_INTERMIX), bodies, body)  # outer = leg, in part
        # The same layers laid out over several points in each pixel: a pixel's area is shared among the layers
        # it overlaps (a layer of the dorsal columns or the spinothalamic tract is narrower than a pixel).
        # The dorsal columns' layers are thin medial-to-lateral sheets (the sacral ones thinnest, at the septum):
        # many points across a pixel, few along it; the other tracts' layers are shells, points both ways.
        for sel, coord, order, name, points, edges in (
                (dc, lambda px, py: np.abs(px) / np.maximum(dorsal_horn_axis(py), 1e-3), bodies[::-1], "gracilis",
                 DC_POINTS, None),
                (lst, _stt_coord, bodies,
                 "lateral_spinothalamic", SHELL_POINTS, stt_edges[1]),
                (lc, None, bodies, "lateral_corticospinal", SHELL_POINTS, None)):
            soft.append((*_sub_laminate_cached(name, sel, x, y, coord, order, points, edges), S[name]))
    gone = (((st == S["gracilis"]) | (st == S["lateral_corticospinal"])) & (body < s)) | \
           ((st == S["lateral_spinothalamic"]) & (body <= s))
    st[gone] = S["other_white"]
    body[gone] = -1
    # fibres from T6 and above form fasciculus cuneatus, lateral to gracilis
    st[(st == S["gracilis"]) & (body >= 0) & (body <= a.index("T6"))] = S["cuneatus"]
    for name in ("dorsal_horn", "intermediate_gray", "ventral_horn", "intermediolateral", "sacral_parasympathetic",
                 "clarke", "entry_zone", "dorsal_root", "ventral_root", "anterior_commissure"):
        body[st == S[name]] = s

    # regions: unique (structure, side, body), of the pixels and of the laminated tracts' sub-pixel points
    def keys(structure, sd, b):
        return (structure.astype(np.int64) * 3 + (sd.astype(np.int64) + 1)) * 64 + (b.astype(np.int64) + 2)

    key = keys(st, side, body)
    key[st == 0] = -1
    flat_key = key.ravel()
    laminated = np.zeros(key.size, dtype=bool)
    pix, sub_keys = [np.flatnonzero(flat_key >= 0)], []
    t6 = a.index("T6")
    for idx, b, structure in soft:
        laminated[idx] = True
        b = b.astype(np.int64)
        sub_st = np.full(b.shape, structure, dtype=np.int64)
        gone_sub = (b <= s) if structure == S["lateral_spinothalamic"] else (b < s)
        sub_st[gone_sub] = S["other_white"]
        b = np.where(gone_sub, -1, b)
        if structure == S["gracilis"]:
            sub_st[(sub_st == S["gracilis"]) & (b <= t6)] = S["cuneatus"]
        sub_keys.append((np.repeat(idx, b.shape[1]), keys(sub_st, side.ravel()[idx][:, None] + 0 * b, b).ravel(),
                         1.0 / max(b.shape[1], 1)))
    plain = pix[0][~laminated[pix[0]]]
    member_px = np.concatenate([plain, *(p for p, _, _ in sub_keys)])
    member_key = np.concatenate([flat_key[plain], *(k for _, k, _ in sub_keys)])
    member_w = np.concatenate([np.ones(len(plain)), *(np.full(len(k), w) for _, k, w in sub_keys)])
    uniq = np.unique(np.concatenate([flat_key[flat_key >= 0], member_key]))
    region = np.full(key.size, -1, dtype=np.int32)
    region[flat_key >= 0] = np.searchsorted(uniq, flat_key[flat_key >= 0])
    region = region.reshape(key.shape)
    regions = tuple((int(k // 64 // 3), int(k // 64 % 3) - 1, int(k % 64) - 2) for k in uniq)
    # one membership per (pixel, region): its sub-pixel points summed, as a share of the pixel
    pair = np.searchsorted(uniq, member_key) * np.int64(key.size) + member_px
    pairs, where = np.unique(pair, return_inverse=True)
    weight = np.bincount(where, weights=member_w).astype(np.float32)
    member_region, by_region = np.divmod(pairs, np.int64(key.size))  # sorted by region, then pixel
    starts = np.searchsorted(member_region, np.arange(len(uniq)))  # every region has a member: strictly rising
    counts = np.add.reduceat(weight, starts, dtype=np.float32)
    return Section(a.segments[s], s, x, y, st, side, body, region, regions, counts, by_region, weight, starts)


# The lateral spinothalamic tract's layers: sacral fibres lateral and dorsal, cervical medial and ventral (the
# lamination table). Laid out by a blend of two coordinates: shells around the centre (distance from it, dorsal
# counting as outer), and straight bands across the tract (|x| + STT_TILT x y: further out and further back = lower
# in the body). Shells alone put a cervical layer beside the ventral horn's lateral tip, where a mass pressing from
# the side reached it before the thoracic layers outside it; bands alone cut across a central lesion's outline. The
# share STT_BANDS of the bands: judgement, the one of 0, 0.15, 0.25, 0.35, 0.5 and 0.75 with the fewest striped
# exams over the atlas (`cordmap.stripes`), when the layers were still laid out afresh over each segment's outline;
# they now keep their places at every level (`_stt_edges`) and no exam stripes.
STT_TILT = 0.3
STT_BANDS = 0.35


def _stt_coord(x, y):
    return STT_BANDS * (np.abs(x) + STT_TILT * y) + (1 - STT_BANDS) * (np.hypot(x, y) + 0.002 * np.degrees(
        np.arctan2(y, np.abs(x))))

# Points per pixel (across x, along y) where the laminated tracts' layers are laid out: judgement, fine enough that
# the thinnest layer (a sacral sheet of the dorsal columns, about a fifth of a pixel wide near the grey commissure)
# holds points in every row it crosses.
DC_POINTS = (16, 2)
SHELL_POINTS = (4, 4)


_SUB_LAMINATED: dict[tuple, tuple[np.ndarray, np.ndarray]] = {}  # pure: a tract's outline -> its layout


def stt_depth_order(sec: Section) -> np.ndarray:
    """(n, n) float: where each pixel lies among the lateral spinothalamic tract's layers, 0 at the deepest (C2)
    layer's inner edge to 1 at the outermost (sacral) layer's outer edge (the fixed layout of `_stt_edges`; the
    same at every level); outside the tract's layout the nearer end. A compression reaching the tract from outside
    meets the high values first."""
    edges = _stt_edges(sec.x.shape[0])[0]
    return np.interp(_stt_coord(sec.x, sec.y), edges, (np.arange(len(edges)) + 1.0) / (len(edges) + 1))


def _sub_laminate_cached(name, sel, x, y, coord, bodies, points, edges=None):
    """`_sub_laminate`, once per tract outline: segments whose tract has the same outline share its layout."""
    key = (name, sel.shape, hashlib.sha256(np.packbits(sel)).digest(), tuple(bodies), points,
           None if edges is None else edges.tobytes())
    hit = _SUB_LAMINATED.get(key)
    if hit is None:
        hit = _SUB_LAMINATED[key] = _sub_laminate(sel, x, y, coord, bodies, points, edges)
        for arr in hit:
            arr.flags.writeable = False
    return hit


def _sub_points(sel: np.ndarray, x: np.ndarray, y: np.ndarray, points: tuple[int, int]):
    """(pixel indices (P,), x (P, nx x ny), y (P, nx x ny)) of `points` points in every pixel of `sel`."""
    idx = np.flatnonzero(sel.ravel())
    n = x.shape[1]
    step = 2 * EXTENT / n
    nx, ny = points
    offx = (np.arange(nx) - (nx - 1) / 2) * step / nx
    offy = (np.arange(ny) - (ny - 1) / 2) * step / ny
    ox, oy = (a.ravel() for a in np.meshgrid(offx, offy))
    return idx, x.ravel()[idx][:, None] + ox[None, :], y.ravel()[idx][:, None] + oy[None, :]


def _quantile_edges(c: np.ndarray, bodies: list[int]) -> np.ndarray:
    """The len(bodies) - 1 values of `c` between layers laid out by quantile (each body segment's share in
    proportion to its fibre weight), as `_laminate` lays them out."""
    c = np.sort(np.asarray(c).ravel(), kind="stable")
    w = np.array([fibre_weight(j) for j in bodies])
    ends = np.clip(np.round(np.cumsum(w) / w.sum() * len(c)).astype(int)[:-1], 1, len(c) - 1)
    return 0.5 * (c[ends - 1] + c[ends])


@cache
def _stt_edges(resolution: int) -> tuple[np.ndarray, np.ndarray]:
    """Where the lateral spinothalamic tract's layers lie (values of `_stt_coord` between layers; pixel centres,
    sub-pixel points): laid out once, over the tract of C1, which carries every body segment, and kept at those
    places at every level. Laying them out afresh over each segment's own outline moved every layer outward where
    the ventral horns swell (the enlargements): a mass from the side took a larger share of the same layers there
    than above and below, and the loss along the body came and went (stripes, issue 11)."""
    x, y, st, side = _raster(0, resolution)
    lst = (st == S["lateral_spinothalamic"]) & (side == 0)
    bodies = list(range(1, 30))
    _, px, py = _sub_points(lst, x, y, SHELL_POINTS)
    out = (_quantile_edges(_stt_coord(x, y)[lst], bodies), _quantile_edges(_stt_coord(px, py), bodies))
    for e in out:
        e.flags.writeable = False
    return out


def _sub_laminate(sel: np.ndarray, x: np.ndarray, y: np.ndarray, coord, bodies: list[int],
                  points: tuple[int, int], edges: np.ndarray | None = None):
    """The body segment of each of `points` (nx x ny) points in every pixel of `sel`, layers by the quantile of
    `coord` (x, y) over all the points (each body segment's share in proportion to its fibre weight), as
    `_laminate` lays out whole pixels, or at the fixed `edges` of `coord` when given. `coord` None: the
    corticospinal blend of depth and a fixed field (`_intermixed`). Returns (pixel indices (P,), bodies
    (P, nx x ny))."""
    idx, px, py = _sub_points(sel, x, y, points)
    n = x.shape[1]
    if coord is None:
        r = np.hypot(px, py)
        q = np.empty(r.size)
        q[np.argsort(r.ravel(), kind="stable")] = (np.arange(r.size) + 0.5) / r.size
        rows, cols = np.divmod(idx, n)
        c = (1 - CST_INTERMIX) * q.reshape(r.shape) + CST_INTERMIX * _pixel_noise(rows, cols, n)[:, None]
    else:
        c = coord(px, py)
    out = np.full(c.shape, -1, dtype=np.int64)
    if not len(idx):
        return idx, out
    if edges is not None:
        out[:] = np.asarray(bodies)[np.searchsorted(edges, c, side="right")]
        return idx, out
    order = np.argsort(c.ravel(), kind="stable")
    w = np.array([fibre_weight(j) for j in bodies])
    ends = np.round(np.cumsum(w) / w.sum() * len(order)).astype(int)
    flat = out.reshape(-1)
    start = 0
    for j, end in zip(bodies, ends):
        flat[order[start:max(end, start + 1)]] = j
        start = max(end, start + 1)
    return idx, out


def sections(resolution: int = DEFAULT_RESOLUTION) -> tuple[Section, ...]:
    """The sections of all 31 segments (built once per resolution, however the resolution is passed)."""
    return _sections(int(resolution))


@cache
def _sections(resolution: int) -> tuple[Section, ...]:
    return tuple(build_section(s, resolution) for s in range(len(anatomy().segments)))


def section(seg: str, resolution: int = DEFAULT_RESOLUTION) -> Section:
    """The cross-section of one segment, e.g. ``section("C5")``."""
    return sections(resolution)[anatomy().index(seg)]
