"""The fast simulate path (per-variant cache, whole-table readout, counted masks) against the plain one, bit for bit.

The reference recomputes everything on every call: masks on all 31 segments, region losses with the masks as
float weights, `along_extent`, and the item-by-item `readout_by_item`. Exact equality, not closeness: the fast path
only drops repeated work and Python loops, every float32 operation is the same.
"""
from __future__ import annotations

import importlib

import numpy as np
import pytest

from cordmap import nerves
from cordmap.anatomy import anatomy
from cordmap.forward import (
    along_extent,
    feature_index,
    fibre_losses_per_segment,
    readout,
    readout_by_item,
    scale_fibres,
    with_neuropathy,
)
from cordmap.lesions import PATTERNS, Lesion, fibre_shares, lesion_masks
from cordmap.model import sections

sim = importlib.import_module("cordmap.simulate")  # the module (the package exports the function)
SEGS = anatomy().segments


def reference_predict(lesion: Lesion):
    masks = np.asarray(lesion_masks(lesion, sections()), dtype=np.float32)  # weights: the counting shortcut unused
    per_seg = scale_fibres(fibre_losses_per_segment(masks[None]), fibre_shares(lesion.pattern, lesion.all_params()))
    L = along_extent(per_seg, np.array([0]), np.array([lesion.top_index]), np.array([lesion.bottom_index]))
    L = with_neuropathy(L, np.array([lesion.all_params().get("neuropathy", 0.0)]))
    r = readout_by_item(L, lesion.phase == "acute")
    # a single nerve lesion (no mask) lays its losses over the readout: the same step as the fast path's
    return nerves.apply(r, *nerves.candidate_codes([lesion.pattern], [lesion.side],
                                                   [lesion.all_params().get("severity", 1.0)]))


def assert_same_readout(a, b, what):
    for name in ("sensory", "motor", "motor_umn", "motor_lmn", "muscles", "muscles_umn", "muscles_lmn"):
        x, y = getattr(a, name), getattr(b, name)
        assert x.dtype == y.dtype and x.shape == y.shape, (what, name)
        assert np.array_equal(x, y), (what, name, float(np.abs(x - y).max()))
    for name in ("reflexes", "signs"):
        x, y = getattr(a, name), getattr(b, name)
        assert list(x) == list(y), (what, name)
        for k in x:
            assert x[k].dtype == y[k].dtype and np.array_equal(x[k], y[k]), (what, name, k)


def varied_lesions(per_pattern: int = 8, seed: int = 3):
    """Every pattern, each side it allows, grid and off-grid parameters, random extents, both phases."""
    rng = np.random.default_rng(seed)
    out = []
    for pid, pat in PATTERNS.items():
        lo, hi = SEGS.index(pat.tops[0]), SEGS.index(pat.tops[1])
        for k in range(per_pattern):
            params = {p.name: float(rng.choice(p.grid)) if k % 2 else float(rng.uniform(p.low, p.high))
                      for p in pat.params}
            top = int(rng.integers(lo, hi + 1))
            bottom = None if pat.single else pat.bottom_fixed or SEGS[int(rng.integers(top, min(top + 6, 31)))]
            out.append(Lesion(pid, pat.sides[k % len(pat.sides)], SEGS[top], bottom, params,
                              ("chronic", "acute")[(k // 2) % 2]))
    return out


def custom_lesions():
    secs = sections()
    flat = np.hypot(secs[0].x - 0.3, secs[0].y + 0.2) < 0.45
    per_seg = np.stack([np.hypot(s.x + 0.01 * i, s.y) < 0.2 + 0.01 * i for i, s in enumerate(secs)])
    return [Lesion.custom(flat, "C4", "C6"), Lesion.custom(per_seg, "T2", "T2", "acute"),
            Lesion.custom(per_seg, "L1", "S3")]


@pytest.fixture(autouse=True)
def empty_cache():
    sim._VARIANTS.clear()
    yield
    sim._VARIANTS.clear()


def test_predict_and_simulate_match_the_uncached_reference():
    lesions = varied_lesions() + custom_lesions()
    for lz in lesions:
        ref = reference_predict(lz)
        for attempt in ("cold", "warm"):
            assert_same_readout(sim.predict(lz), ref, (lz.describe(), lz.phase, attempt))
        expected = sim.readout_to_findings(ref, 0, f"simulated {lz.describe()}", lz.phase)
        assert sim.simulate(lz) == expected, lz.describe()
    assert 0 < len(sim._VARIANTS) <= len(lesions) - len(custom_lesions())


def test_a_new_level_of_a_cached_variant_matches_the_reference():
    first = Lesion("lateral_compression", "left", "T4", "T5", {"depth": 0.3})
    sim.predict(first)
    for top, bottom, phase in (("C2", "C2", "chronic"), ("T4", "T12", "acute"), ("L3", "S5", "chronic"),
                               ("C8", "T3", "acute")):
        lz = Lesion("lateral_compression", "left", top, bottom, {"depth": 0.3}, phase)
        assert sim.variant_key(lz) == sim.variant_key(first)
        assert_same_readout(sim.predict(lz), reference_predict(lz), lz.describe())
    assert len(sim._VARIANTS) == 1


def test_variant_key_ignores_extent_and_phase_only():
    base = Lesion("central", "both", "C5", "C6", {"size": 0.4})
    assert sim.variant_key(base) == sim.variant_key(Lesion("central", "both", "T3", "T9", {"size": 0.4}, "acute"))
    assert sim.variant_key(base) != sim.variant_key(Lesion("central", "both", "C5", "C6", {"size": 0.41}))
    assert sim.variant_key(Lesion("central", "both", "C5")) == sim.variant_key(
        Lesion("central", "both", "C5", params={"size": PATTERNS["central"].params[0].default}))
    left, right = Lesion("hemisection", "left", "T6"), Lesion("hemisection", "right", "T6")
    assert sim.variant_key(left) != sim.variant_key(right)
    assert all(sim.variant_key(lz) is None for lz in custom_lesions())


def test_custom_masks_are_never_cached_by_lesion_equality():
    secs = sections()
    a = Lesion.custom(np.hypot(secs[0].x - 0.5, secs[0].y) < 0.3, "T6")
    b = Lesion.custom(np.hypot(secs[0].x + 0.5, secs[0].y) < 0.3, "T6")
    assert a == b  # a Lesion's equality ignores its mask, which is why the mask cannot key a cache
    ra, rb = sim.predict(a), sim.predict(b)
    assert not np.array_equal(ra.sensory, rb.sensory)
    np.testing.assert_allclose(ra.sensory[:, :, 0], rb.sensory[:, :, 1], atol=1e-5)  # mirror images
    assert len(sim._VARIANTS) == 0


def test_cache_stays_bounded_and_read_only(monkeypatch):
    monkeypatch.setattr(sim, "VARIANT_CACHE_SIZE", 3)
    sizes = (0.2, 0.3, 0.4, 0.5, 0.6)
    for s in sizes:
        sim.predict(Lesion("central", "both", "C5", params={"size": s}))
    assert len(sim._VARIANTS) == 3
    kept = [dict(key[0][2][1])["size"] for key, _ in sim._VARIANTS.items()]
    assert kept == list(sizes[-3:])  # least recently used dropped first
    cum = next(iter(sim._VARIANTS.values()))
    with pytest.raises(ValueError):
        cum[0, 0, 0] = 1.0


def test_whole_table_readout_equals_item_by_item_on_random_losses():
    rng = np.random.default_rng(11)
    n, f = 400, len(feature_index())
    L = rng.random((n, f), dtype=np.float32)
    L[rng.random((n, f)) < 0.3] = 0.0  # intact and wholly lost fibres are common in real candidates
    L[rng.random((n, f)) < 0.1] = 1.0
    L[:5] = 0.0
    acute = rng.random(n) < 0.5
    assert_same_readout(readout(L, acute), readout_by_item(L, acute), "random losses")
    assert_same_readout(readout(L[:1], True), readout_by_item(L[:1], True), "one candidate, acute")


def test_counted_mask_equals_weighted_mask():
    rng = np.random.default_rng(5)
    for sec in sections()[::5]:
        m = rng.random(sec.region.shape) < 0.4
        assert np.array_equal(sec.fraction_lost(m), sec.fraction_lost(m.astype(np.float32)))
        stack = rng.random((3, *sec.region.shape)) < 0.6
        assert np.array_equal(sec.fraction_lost(stack), sec.fraction_lost(stack.astype(np.float64)))
