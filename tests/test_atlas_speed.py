"""The fast atlas build against the plain one, bit for bit, on the whole atlas of both phases.

The reference below is the build as it was written before it was made fast: every variant's masks drawn one by one
on every section (`draw_mask`) and stacked, region losses counted mask by mask, the cumulative sums recomputed
for every chunk over every feature, the candidates enumerated in Python loops, the observation model's sensory
block summed shift by shift and its log taken item by item, the predicted values read item by item. The fast
build (`atlas.build`) draws each incomplete shape once for its severities, counts the masks of a section a few
dozen at a time, takes each read feature column from its one region, sums once and only the feature columns the
readout reads and only where a variant loses anything, looks the sensory log-probabilities up in a table and the
muscles' per distinct grade. None of that may change one bit.
"""
from __future__ import annotations

import itertools

import numpy as np
import pytest

from cordmap import atlas as atlas_mod
from cordmap import nerves, observation
from cordmap.anatomy import MODALITIES, SIDES, anatomy
from cordmap.findings import all_items, item_values
from cordmap.forward import (
    SENSORY_THRESHOLDS,
    along_extent,
    feature_index,
    fibre_losses_from_fractions,
    read_columns,
    readout,
    scale_fibres,
    with_neuropathy,
)
from cordmap.lesions import PATTERNS, draw_mask, fibre_shares
from cordmap.model import sections


def _candidates(vs):
    a = anatomy()
    var, top, bottom = [], [], []
    for vi, v in enumerate(vs):
        pat = PATTERNS[v.pattern]
        first, last = pat.atlas_tops or pat.tops
        for t in range(a.index(first), a.index(last) + 1):
            if pat.bottom_fixed:
                bots = [a.index(pat.bottom_fixed)]
            elif pat.single:
                bots = [t]
            else:
                bots = range(t, min(t + atlas_mod._max_extent(v), 30))
            for b in bots:
                var.append(vi)
                top.append(t)
                bottom.append(b)
    return np.array(var, np.int32), np.array(top, np.int16), np.array(bottom, np.int16)


def _log_probabilities(r, items, offsets):
    a = anatomy()
    out = np.empty((r.sensory.shape[0], offsets[-1]), dtype=np.float32)
    sens = {(m, s): observation._sensory_block(r.sensory[:, mi, si]) for mi, m in enumerate(MODALITIES)
            for si, s in enumerate(SIDES)}
    motor = observation._motor_block(r.motor)
    muscles = observation._motor_block(r.muscles)
    names = nerves.muscle_names()
    for i, key in enumerate(items):
        o0, o1 = offsets[i], offsets[i + 1]
        nv = len(item_values(key))
        if key[0] == "sensory":
            p = sens[(key[1], key[2])][:, a.dermatomes.index(key[3])]
        elif key[0] == "motor":
            p = motor[:, SIDES.index(key[1]), a.key_myotomes.index(key[2])]
        elif key[0] == "muscle":
            p = muscles[:, SIDES.index(key[1]), names.index(key[2])]
        elif key[0] == "reflex":
            conf = observation._ordinal_confusion(4) if nv == 4 else (
                observation.PLANTAR_CONFUSION if nv == 3 else observation._binary_confusion())
            p = conf[r.reflexes[(key[1], key[2])]]
        else:
            c = observation.DECISIVE_CORRECT if key[1] in observation.DECISIVE_SIGNS else observation.BINARY_CORRECT
            conf = observation._binary_confusion(c) if nv == 2 else observation._three_way_confusion(c)
            p = conf[r.signs[(key[1], key[2])]]
        out[:, o0:o1] = np.log(p)
    return out


def _crisp_indices(r, items):
    a = anatomy()
    lo, hi = SENSORY_THRESHOLDS
    out = np.empty((r.sensory.shape[0], len(items)), dtype=np.int8)
    grade = np.where(r.sensory < lo, 2, np.where(r.sensory < hi, 1, 0))
    motor = np.clip(np.floor(r.motor + 0.5), 0, 5)
    muscles = np.clip(np.floor(r.muscles + 0.5), 0, 5)
    names = nerves.muscle_names()
    for i, key in enumerate(items):
        if key[0] == "sensory":
            out[:, i] = grade[:, MODALITIES.index(key[1]), SIDES.index(key[2]), a.dermatomes.index(key[3])]
        elif key[0] == "motor":
            out[:, i] = motor[:, SIDES.index(key[1]), a.key_myotomes.index(key[2])]
        elif key[0] == "muscle":
            out[:, i] = muscles[:, SIDES.index(key[1]), names.index(key[2])]
        elif key[0] == "reflex":
            out[:, i] = r.reflexes[(key[1], key[2])]
        else:
            out[:, i] = r.signs[(key[1], key[2])]
    return out


def reference_build(phase, chunk=4096):
    vs = atlas_mod.variants()
    secs = sections()
    masks = np.stack([np.stack([draw_mask(v.pattern, v.side, dict(v.params), sec) for sec in secs]) for v in vs])
    fractions = [np.stack([sec.fraction_lost(m) for m in masks[:, s]]) for s, sec in enumerate(secs)]
    per_seg = np.stack([scale_fibres(p[None], fibre_shares(v.pattern, dict(v.params)))[0]
                        for p, v in zip(fibre_losses_from_fractions(fractions), vs)])
    cord = np.hypot(secs[0].x, secs[0].y) <= 1.0
    area_seg = (masks * cord).sum(axis=(2, 3)) / cord.sum()
    var, top, bottom = _candidates(vs)
    cum = np.concatenate([np.zeros((len(vs), 1)), np.cumsum(area_seg, axis=1)], axis=1)
    area = ((cum[var, bottom + 1] - cum[var, top]) / (bottom - top + 1)).astype(np.float32)
    items = all_items()
    offsets = np.concatenate([[0], np.cumsum([len(item_values(k)) for k in items])]).astype(np.int32)
    logp = np.empty((offsets[-1], len(var)), dtype=np.float32)
    likely = np.empty((len(items), len(var)), dtype=np.int8)
    neuropathy = np.array([dict(v.params).get("neuropathy", 0.0) for v in vs])
    nerve = nerves.candidate_codes([v.pattern for v in vs], [v.side for v in vs],
                                   [dict(v.params).get("severity", 1.0) for v in vs])
    for start in range(0, len(var), chunk):
        sl = slice(start, start + chunk)
        L = with_neuropathy(along_extent(per_seg, var[sl], top[sl], bottom[sl]), neuropathy[var[sl]])
        r = nerves.apply(readout(L, phase == "acute"), *(x[var[sl]] for x in nerve))
        logp[:, sl] = _log_probabilities(r, items, offsets).T
        likely[:, sl] = _crisp_indices(r, items).T
    return var, top, bottom, area, logp, likely


@pytest.mark.parametrize("phase", ["chronic", "acute"])
def test_fast_build_equals_reference_bit_for_bit(phase):
    fast = atlas_mod.build(phase)
    var, top, bottom, area, logp, likely = reference_build(phase)
    for name, ref in (("variant", var), ("top", top), ("bottom", bottom), ("area", area), ("likely", likely),
                      ("logp", logp)):
        got = getattr(fast, name)
        assert got.dtype == ref.dtype and got.shape == ref.shape, name
        assert np.array_equal(got, ref), (name, int((got != ref).sum()))


def test_readout_ignores_the_columns_it_does_not_read():
    rng = np.random.default_rng(5)
    n = len(feature_index())
    L = rng.uniform(0, 1, (64, n)).astype(np.float32)
    other = L.copy()
    unread = np.setdiff1d(np.arange(n), read_columns())
    assert len(unread) and len(read_columns()) + len(unread) == n
    other[:, unread] = rng.uniform(0, 1, (64, len(unread))).astype(np.float32)
    for acute in (False, True):
        a, b = readout(L, acute), readout(other, acute)
        for name in ("sensory", "motor", "motor_umn", "motor_lmn"):
            assert np.array_equal(getattr(a, name), getattr(b, name)), name
        for name in ("reflexes", "signs"):
            x, y = getattr(a, name), getattr(b, name)
            assert all(np.array_equal(x[k], y[k]) for k in x), name


def test_sensory_table_matches_the_block_sum():
    rng = np.random.default_rng(2)
    loss = rng.choice([0.0, 0.1, 0.2, 0.5, 0.74, 0.75, 0.9], size=(300, len(anatomy().dermatomes)))
    out = np.empty((3 * loss.shape[1], loss.shape[0]), dtype=np.float32)
    observation._sensory_log_block(loss, out)
    ref = np.log(observation._sensory_block(loss)).astype(np.float32)  # (c, 28, 3)
    assert np.array_equal(out, ref.transpose(1, 2, 0).reshape(-1, loss.shape[0]))
    codes = list(itertools.product(range(3), repeat=len(observation.BOUNDARY_SHIFT)))
    assert observation._sensory_table()[1].shape == (len(codes), 3)
