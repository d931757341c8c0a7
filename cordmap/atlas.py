"""The candidate atlas: every lesion the ranker considers, with its predicted findings as log-probabilities.

Candidates: every pattern, each side it allows, every parameter value of its grid, every allowed rostral
segment and every extent the pattern allows. Their fibre losses come from `cordmap.forward` for all candidates at
once (one set of masks per pattern variant; cumulative sums give every extent), and the observation model
(`cordmap.observation`) turns predictions into log P(recorded value | candidate) for every item of the exam.

Storage: ``logp`` is (columns x candidates) float32, one column per (item, value), so the log-likelihood of an exam
is the sum of the rows of the recorded values: a gather and a reduction. Built once per phase and cached in
memory, and on disk (``~/.cache/cordmap`` or ``$CORDMAP_CACHE``) keyed by the model's version.
"""
from __future__ import annotations

import hashlib
import itertools
from collections.abc import Callable
from dataclasses import dataclass
from functools import cache
from importlib import resources
from pathlib import Path

import numpy as np

from . import cachedir, items, nerves, observation
from .anatomy import anatomy
from .findings import all_items, item_values
from .forward import (
    extent_losses,
    extent_sums_of_columns,
    feature_index,
    fibre_losses_from_fractions,
    read_columns,
    readout,
    region_to_feature,
    scale_fibres,
    with_neuropathy,
)
from .lesions import PATTERNS, Lesion, draw_masks, fibre_shares
from .model import DEFAULT_RESOLUTION, sections


@dataclass(frozen=True)
class Variant:
    pattern: str
    side: str
    params: tuple[tuple[str, float], ...]


@dataclass(frozen=True)
class Atlas:
    phase: str
    variants: tuple[Variant, ...]
    variant: np.ndarray  # (n,) variant id of each candidate
    top: np.ndarray  # (n,) segment index
    bottom: np.ndarray  # (n,)
    area: np.ndarray  # (n,) share of the cord section inside the mask (mean over the extent)
    items: tuple[tuple, ...]
    offsets: np.ndarray  # (items + 1,) first column of each item
    logp: np.ndarray  # (columns, n) float32; read-only (a memory map when it comes from the disk cache)
    likely: np.ndarray | None = None  # (items, n) int8 index of each candidate's predicted value (its crisp exam,
    # as `simulate` reports it); the most likely recorded value if None
    abnormal: np.ndarray | None = None  # (items, n) int8: how abnormal each candidate's most likely value of each
    # item is (0 = normal); computed from `likely` if None (the disk cache memory-maps it: `_load_shared`)

    def __post_init__(self):
        object.__setattr__(self, "_index", {k: i for i, k in enumerate(self.items)})
        names = np.array([v.pattern for v in self.variants])
        object.__setattr__(self, "pattern_of", names[self.variant])  # (n,) pattern id of each candidate
        if self.likely is None:
            likely = np.empty((len(self.items), len(self.top)), dtype=np.int8)
            for k in range(len(self.items)):
                likely[k] = self.logp[self.offsets[k]:self.offsets[k + 1]].argmax(axis=0)
            object.__setattr__(self, "likely", likely)
        if self.abnormal is None:
            abn = np.empty((len(self.items), len(self.top)), dtype=np.int8)
            for k, key in enumerate(self.items):
                abn[k] = abnormality(key)[self.likely[k]]
            object.__setattr__(self, "abnormal", abn)

    def __len__(self):
        return len(self.top)

    def lesion(self, i: int) -> Lesion:
        v = self.variants[int(self.variant[i])]
        segs = anatomy().segments
        return Lesion(v.pattern, v.side, segs[int(self.top[i])], segs[int(self.bottom[i])], v.params, self.phase)

    @property
    def item_index(self) -> dict[tuple, int]:
        return self._index  # type: ignore[attr-defined]

    def column(self, item: tuple, value) -> int:
        i = self.item_index[item]
        return int(self.offsets[i]) + item_values(item).index(value)

    def probs(self, item: tuple, cand: np.ndarray) -> np.ndarray:
        """P(value | candidate) for one item: (len(cand), n_values)."""
        i = self.item_index[item]
        return np.exp(self.logp[self.offsets[i]:self.offsets[i + 1]][:, cand].T)


def abnormality(key: tuple) -> np.ndarray:
    """For each value of an item, how far from normal it is (0 = normal; `items.distance`): used to combine two
    lesions."""
    return np.array(items.distance(key), dtype=np.int8)


def variants() -> tuple[Variant, ...]:
    out = []
    for pat in PATTERNS.values():
        grids = [[(p.name, v) for v in p.grid] for p in pat.params]
        for side in pat.sides:
            for combo in itertools.product(*grids):
                out.append(Variant(pat.id, side, tuple(combo)))
    return tuple(out)


# Longest extent tried for a partial (severity < 1) variant of a thinned pattern. Along the extent the losses of
# the thinned masks combine (1 - prod(1 - f)), so a long tract crossing k segments of severity s loses
# 1 - (1 - s)^k: 0.92 after six segments at 0.35. Longer partial candidates are near twins of the severity-1 ones,
# whose crisp predictions differ by a grade where an expected grade sits near a half (the round-trip misses of
# tests/test_rank.py: 64 of them before this cap, 10 after). Judgement.
PARTIAL_MAX_EXTENT = 6


# Longest extent tried for a central lesion that also takes the lateral columns (`columns` > 0): the traumatic
# central cord syndrome and an expanding tumour reach the lateral columns over a few segments; a long syrinx is the
# plain central pattern. Judgement; it keeps the atlas (and batch scoring) about a fifth smaller.
COLUMNS_MAX_EXTENT = 8
# Longest extent tried for a central lesion that destroys most of the cross-section (size above
# WIDE_CENTRAL_SIZE): over more than a few segments such a lesion is a longitudinally extensive transverse myelitis
# (the complete pattern, which may be long); a syrinx that spans many segments is a slim cavity around the canal.
# From memory (standard neurology teaching on syringomyelia and transverse myelitis); the cap is judgement. Without
# it, a very large central lesion from C7 to the sacral cord, destroying each segment's gray matter, mimicked an
# acute incomplete cervical injury's absent pinprick below the level and its sacral sparing.
WIDE_CENTRAL_SIZE, WIDE_CENTRAL_MAX_EXTENT = 0.5, 8


def _max_extent(v: Variant) -> int:
    pat = PATTERNS[v.pattern]
    params = dict(v.params)
    partial = not pat.single and params.get("severity", 1.0) < 1.0
    longest = min(pat.max_extent, PARTIAL_MAX_EXTENT) if partial else pat.max_extent
    if params.get("size", 0.0) > WIDE_CENTRAL_SIZE:
        longest = min(longest, WIDE_CENTRAL_MAX_EXTENT)
    return min(longest, COLUMNS_MAX_EXTENT) if params.get("columns", 0.0) > 0 else longest


def enumerate_candidates(vs: tuple[Variant, ...]) -> tuple[np.ndarray, np.ndarray, np.ndarray]:
    """(variant, top, bottom) of every candidate: variant by variant, rostral segment by rostral segment, then the
    caudal segments in order."""
    a = anatomy()
    var, top, bottom = [], [], []
    for vi, v in enumerate(vs):
        pat = PATTERNS[v.pattern]
        first, last = pat.atlas_tops or pat.tops
        t = np.arange(a.index(first), a.index(last) + 1)
        if pat.bottom_fixed:
            t, b = t, np.full(len(t), a.index(pat.bottom_fixed))
        elif pat.single:
            b = t
        else:
            longest = _max_extent(v)
            counts = np.minimum(t + longest, 30) - t  # range(t, min(t + longest, 30)) for each t
            t = np.repeat(t, np.maximum(counts, 0))
            b = t + (np.arange(len(t)) - np.repeat(np.cumsum(counts) - counts, np.maximum(counts, 0)))
        var.append(np.full(len(t), vi))
        top.append(t)
        bottom.append(b)
    return (np.concatenate(var).astype(np.int32), np.concatenate(top).astype(np.int16),
            np.concatenate(bottom).astype(np.int16))


@cache
def model_version() -> str:
    """A hash of the anatomy tables and the model's code: the disk cache key (computed once per process, so it
    names the code this process runs even if the files change under it)."""
    h = hashlib.sha256()
    for name in sorted(p.name for p in resources.files("cordmap.data").iterdir() if p.name.endswith(".csv")):
        h.update(resources.files("cordmap.data").joinpath(name).read_bytes())
    here = Path(__file__).parent
    for mod in ("model.py", "forward.py", "lesions.py", "observation.py", "atlas.py", "findings.py", "items.py",
                "nerves.py", "findings_v2.py", "findings_value.py", "anatomy.py"):
        h.update((here / mod).read_bytes())
    return h.hexdigest()[:16]


def _cache_root() -> Path:
    """The cache folder cordmap owns (`cordmap.cachedir`: marked; a subfolder when $CORDMAP_CACHE is shared)."""
    try:
        return cachedir.folder()
    except OSError:
        return cachedir.folder(create=False)


def _cache_path(phase: str) -> Path:
    """The cache folder of one phase: logp.npy (memory-mapped on load, so kernels share it) and meta.npz."""
    return _cache_root() / f"atlas-{model_version()}-{phase}"


def build(phase: str = "chronic", resolution: int = DEFAULT_RESOLUTION, chunk: int = 1024,
          logp_out: Callable[[tuple[int, int]], np.ndarray] | None = None) -> Atlas:
    """Compute the atlas from the model (no cache). `logp_out(shape)`, if given, returns the float32 array to
    fill with logp (the disk cache's memory map: `get`)."""
    vs = variants()
    per_seg, area_seg = _variant_losses(vs, resolution)
    var, top, bottom = enumerate_candidates(vs)
    cum = np.concatenate([np.zeros((len(vs), 1)), np.cumsum(area_seg, axis=1)], axis=1)
    area = ((cum[var, bottom + 1] - cum[var, top]) / (bottom - top + 1)).astype(np.float32)
    items = all_items()
    offsets = np.concatenate([[0], np.cumsum([len(item_values(k)) for k in items])]).astype(np.int32)
    shape = (int(offsets[-1]), len(var))
    logp = np.empty(shape, dtype=np.float32) if logp_out is None else logp_out(shape)
    likely = np.empty((len(items), len(var)), dtype=np.int8)
    neuropathy = np.array([dict(v.params).get("neuropathy", 0.0) for v in vs])
    nerve = nerves.candidate_codes([v.pattern for v in vs], [v.side for v in vs],  # single nerve lesions
                                   [dict(v.params).get("severity", 1.0) for v in vs])
    # once for every variant (each chunk only gathers from it), and only the feature columns the readout reads
    cols = read_columns()
    sums = extent_sums_of_columns(per_seg, cols, resolution)
    for start in range(0, len(var), chunk):
        sl = slice(start, start + chunk)
        L = np.zeros((len(var[sl]), len(feature_index())), dtype=np.float32)
        L[:, cols] = extent_losses(sums, var[sl], top[sl], bottom[sl], resolution, cols)
        L = with_neuropathy(L, neuropathy[var[sl]])
        r = nerves.apply(readout(L, phase == "acute"), *(x[var[sl]] for x in nerve))
        observation.log_probabilities_by_column(r, items, offsets, out=logp[:, sl])
        likely[:, sl] = observation.crisp_indices(r, items).T
    return Atlas(phase, vs, var, top, bottom, area, items, offsets, logp, likely)


@cache
def _variant_losses(vs: tuple[Variant, ...], resolution: int) -> tuple[np.ndarray, np.ndarray]:
    """Per variant and segment, the fibre losses (`forward.fibre_losses_from_fractions` of its masks' region losses,
    `forward.scale_fibres` for a loss that picks fibres by their length) of the feature columns the readout reads
    (`forward.read_columns`, in that order), and the share of the cord's section inside the mask:
    (variants, 31, columns), (variants, 31). Both phases share them.

    Masks are drawn, counted and dropped section by section, a few dozen at a time (never all masks at once, so the
    temporaries stay small): the same numbers as stacking them, in a fraction of the time and memory.
    """
    secs = sections(resolution)
    cols = read_columns()
    cord = np.hypot(secs[0].x, secs[0].y) <= 1.0
    area_seg = np.empty((len(vs), len(secs)))
    per_seg = np.empty((len(vs), len(secs), len(cols)), dtype=np.float32)
    gather = _feature_gather(resolution)
    fractions = []
    for s, sec in enumerate(secs):
        masks = draw_masks([(v.pattern, v.side, dict(v.params)) for v in vs], sec)
        frac = np.empty((len(vs), len(sec.regions)), dtype=np.float32)
        for start in range(0, len(vs), _MASKS_AT_ONCE):
            chunk = np.stack(list(itertools.islice(masks, _MASKS_AT_ONCE)))
            stop = start + len(chunk)
            area_seg[start:stop, s] = (chunk * cord).sum(axis=(1, 2))  # a thinned mask counts its share of a pixel
            frac[start:stop] = sec.fraction_lost(chunk)
        if gather is None:
            fractions.append(frac)
        else:  # each read column takes one region's loss times its weight: what the matrix product gives
            rows, weights = gather[s]
            np.multiply(np.take(frac, rows, axis=1), weights, out=per_seg[:, s])
    if gather is None:
        per_seg[:] = fibre_losses_from_fractions(fractions, resolution)[:, :, cols]
    else:
        np.clip(per_seg, 0.0, 1.0, out=per_seg)
    full = np.zeros((len(secs), len(feature_index())), dtype=np.float32)
    for i, v in enumerate(vs):
        shares = fibre_shares(v.pattern, dict(v.params))
        if shares:
            full[:, cols] = per_seg[i]
            per_seg[i] = scale_fibres(full, shares)[:, cols]
    per_seg.flags.writeable = False
    area_seg = area_seg / cord.sum()
    area_seg.flags.writeable = False
    return per_seg, area_seg


_MASKS_AT_ONCE = 32  # masks stacked at once in `_variant_losses`


@cache
def _feature_gather(resolution: int) -> tuple[tuple[np.ndarray, np.ndarray], ...] | None:
    """Per segment, for each read feature column, the one region whose loss it takes and the weight
    (`forward.region_to_feature`): (regions (columns,), weights (columns,) float32). A product of a region loss and
    a weight is what the float32 matrix product `fibre_losses_from_fractions` gives when a column has a single
    non-zero weight (the other terms add exact zeros). None when a column draws on two regions or more: then the
    build takes the matrix product itself."""
    cols = read_columns()
    out = []
    for W in region_to_feature(resolution):
        Wc = W[:, cols]
        if ((Wc != 0).sum(axis=0) > 1).any():
            return None
        rows = np.argmax(Wc != 0, axis=0)
        out.append((rows, np.ascontiguousarray(Wc[rows, np.arange(len(cols))])))
    return tuple(out)


_MEMORY: dict[str, Atlas] = {}


def get(phase: str = "chronic", disk: bool = True) -> Atlas:
    """The atlas for one phase: from memory, else from the disk cache, else built (and saved)."""
    if phase in _MEMORY:
        return _MEMORY[phase]
    path = _cache_path(phase)
    atlas = None
    if disk and path.is_dir():
        try:
            atlas = _load(path, phase)
        except (OSError, ValueError, KeyError):
            atlas = None
    if atlas is None and disk:
        atlas = _build_saved(phase, path)
    if atlas is None:
        atlas = build(phase)
    _MEMORY[phase] = atlas
    return atlas


def _build_saved(phase: str, path: Path) -> Atlas | None:
    """Build the atlas straight into a new cache folder: logp is filled in place in the memory-mapped logp.npy
    (one copy of the matrix in memory, in the page cache other processes map, not a second one written out after;
    about 150 MB that a fresh process pays to touch), the folder renamed into place when complete, then the caches
    of older versions removed. None if the folder cannot be made or written (the caller builds in memory)."""
    import os
    import shutil
    import tempfile

    try:
        path.parent.mkdir(parents=True, exist_ok=True)
        tmp = Path(tempfile.mkdtemp(prefix=f".{path.name}-", dir=path.parent))
    except OSError:
        return None

    def logp_file(shape):
        mm = np.lib.format.open_memmap(tmp / "logp.npy", mode="w+", dtype=np.float32, shape=shape)
        with open(tmp / "logp.npy", "r+b") as fh:  # the disk space now, so a full disk is an OSError, not a
            os.posix_fallocate(fh.fileno(), 0, os.fstat(fh.fileno()).st_size)  # fault while the pages fill
        return mm

    try:
        atlas = build(phase, logp_out=logp_file)
        atlas.logp.flags.writeable = False
        _save_rest(atlas, tmp)
    except OSError:
        shutil.rmtree(tmp, ignore_errors=True)
        return None
    try:
        tmp.rename(path)
    except OSError:  # another process wrote it first (the pages stay mapped after the removal)
        shutil.rmtree(tmp, ignore_errors=True)
    try:
        cachedir.prune(keep_prefix=f"atlas-{model_version()}-")  # only folders this cache wrote
    except OSError:
        pass
    return atlas


def _save(atlas: Atlas, path: Path) -> None:
    """Write the cache folder atomically (a temporary folder renamed), then remove caches of older model versions."""
    import shutil
    import tempfile

    try:
        path.parent.mkdir(parents=True, exist_ok=True)
        tmp = Path(tempfile.mkdtemp(prefix=f".{path.name}-", dir=path.parent))
        np.save(tmp / "logp.npy", atlas.logp)
        _save_rest(atlas, tmp)
        try:
            tmp.rename(path)
        except OSError:  # another process wrote it first
            shutil.rmtree(tmp, ignore_errors=True)
        cachedir.prune(keep_prefix=f"atlas-{model_version()}-")  # only folders this cache wrote
    except OSError:
        pass


def _save_rest(atlas: Atlas, folder: Path) -> None:
    """Everything of a cache folder but logp.npy: meta.npz and the shared per-candidate arrays."""
    np.savez(folder / "meta.npz", variant=atlas.variant, top=atlas.top, bottom=atlas.bottom, area=atlas.area,
             offsets=atlas.offsets)
    _save_shared(atlas, folder)


def _load(path: Path, phase: str) -> Atlas:
    logp = np.load(path / "logp.npy", mmap_mode="r")
    with np.load(path / "meta.npz") as z:
        return Atlas(phase, variants(), z["variant"], z["top"], z["bottom"], z["area"], all_items(), z["offsets"],
                     logp, **_load_shared(path))


# ---- the per-candidate arrays every process derives alike, saved once beside logp.npy and memory-mapped, so the
# dashboard's kernels share their pages instead of each holding a copy (issue 16: about 22 MB per kernel)

SHARED = ("likely", "abnormal")  # Atlas fields, each (items, n) int8, saved as <name>.npy


def _save_shared(atlas: Atlas, folder: Path) -> None:
    for name in SHARED:
        np.save(folder / f"{name}.npy", getattr(atlas, name))


def _load_shared(folder: Path) -> dict[str, np.ndarray]:
    """The shared arrays of a cache folder, memory-mapped read-only (OSError if one is missing: rebuilt)."""
    return {name: np.load(folder / f"{name}.npy", mmap_mode="r") for name in SHARED}


# ---- an atlas candidate's predicted exam read from `likely` (what `simulate` reports), so a dashboard kernel shows
# the body picture of a ranked lesion without building the 31 section rasters `simulate` needs (about 1.1 s of CPU
# and 30 MB per kernel, issue 16)

PREDICTED_KINDS = ("sensory", "motor", "muscle", "reflex", "sign")  # the kinds `simulate` fills in
_VARIANT_INDEX: dict[int, tuple[Atlas, dict]] = {}


def predicted_exam(lesion: Lesion):
    """The exam `lesion` predicts (as `simulate(lesion)` returns it) when it is a candidate of an atlas already in
    memory, else None (the caller simulates)."""
    from .findings import Findings

    at = _MEMORY.get(lesion.phase)
    if at is None:
        return None
    hit = _VARIANT_INDEX.get(id(at))
    if hit is None or hit[0] is not at:
        hit = _VARIANT_INDEX[id(at)] = (at, {(v.pattern, v.side, v.params): k for k, v in enumerate(at.variants)})
    vid = hit[1].get((lesion.pattern, lesion.side, lesion.params))
    segs = anatomy().segments
    if vid is None or lesion.top not in segs or lesion.bottom not in segs:
        return None
    found = np.flatnonzero((at.variant == vid) & (at.top == segs.index(lesion.top))
                           & (at.bottom == segs.index(lesion.bottom)))
    if len(found) != 1 or at.lesion(int(found[0])) != lesion:
        return None
    i = int(found[0])
    values = {key: item_values(key)[int(at.likely[k, i])] for k, key in enumerate(at.items)
              if key[0] in PREDICTED_KINDS}
    return Findings(values, f"simulated {lesion.describe()}", lesion.phase)
