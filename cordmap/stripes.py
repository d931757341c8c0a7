"""Stripes: a predicted sensory loss that comes and goes down the body where no lesion could make it do so.

A lesion that reaches a laminated tract takes a contiguous band of its layers, and the layers lie in the order of
the body segments, so along the dermatomes C2..S4-5 the loss of one modality on one side rises, stays and falls
(unimodal). Read as grades, every grade-or-worse set is then one run of dermatomes: at most one run of "impaired or
absent" and one of "absent". Each run beyond that is a stripe.

Which predictions the rule binds (decided per pattern, `lesions.PATTERNS`):

* convex masks, whose share of each layer changes once along the layers: the whole cord, one half (hemisection),
  the central ellipse, the anterior spinal artery territory (a half-plane of the cord; the dorsal columns it spares
  are a tract of their own), the dorsal columns with or without the horns, a compression from one side (a
  half-plane and the outer part of its roots), the conus (cord and roots);
* the even shares: an incomplete lesion (`severity` < 1) thins a convex shape evenly, and a compression from the
  front or behind takes an even share of each tract, so every layer of a tract loses the same share (flat), except
  a front compression's lateral spinothalamic tracts, whose share grows steadily from the deepest layer to the
  outermost (`lesions.OUTER_FIRST`: monotone along the layers, so still one run);
  a central lesion's lateral-column share (`columns`) reaches the corticospinal tracts only, which carry no
  sensation;
* the roots in the sac (cauda equina: the worse side's roots from the top down, the other side's lowest roots from
  the midline), one root, the motor patterns (no sensory loss at all) and the normal cord;
A length-dependent process is not unimodal along the body: the hands and feet are both far from the cell bodies,
so once it reaches the fingers it makes a glove and a stocking, two runs with the trunk spared between (from
memory, standard neurology teaching). It is unimodal along its own axis, the length of each dermatome's axons
(`data/axons.csv`), and is counted in that order:

* the polyneuropathy pattern, along the peripheral axons (ganglion to skin);
* combined degeneration (`posterolateral`), whose dorsal columns die back along each fibre's whole length (skin to
  the medulla), along that length, over the dermatomes whose fibres pass the lesion (those entering below its top);
* combined degeneration with a neuropathy is the union of two predictions the atlas holds apart (the same lesion
  with `neuropathy` 0, and the polyneuropathy of that severity), each counted in its own order; the union is not
  counted.
"""
from __future__ import annotations

from functools import cache

import numpy as np

from .anatomy import MODALITIES, SIDES, anatomy


def extra_runs(loss: np.ndarray) -> np.ndarray:
    """Stripes of loss profiles (..., dermatomes), loss 0 normal, 1 impaired, 2 absent: for each grade-or-worse
    set (impaired or absent; absent) the runs beyond the first, summed."""
    loss = np.asarray(loss)
    out = np.zeros(loss.shape[:-1], dtype=np.int64)
    for k in (1, 2):
        on = (loss >= k).astype(np.int8)
        starts = (np.diff(on, axis=-1, prepend=0) == 1).sum(axis=-1)
        out += np.maximum(starts - 1, 0)
    return out


@cache
def axon_order(central: bool = False) -> np.ndarray:
    """The dermatomes ordered by the length of their sensory axons (ganglion to farthest skin; with `central`, on
    to the medulla in the dorsal columns; mean over the dermatome's segments), shortest first: the axis of a
    length-dependent process."""
    a = anatomy()
    cm = np.array(a.axon_cm["sensory"]) + (np.array(a.axon_cm["dorsal_column"]) if central else 0.0)
    length = [float(np.mean([cm[j] for j in a.dermatome_segments[d]])) for d in a.dermatomes]
    out = np.argsort(length, kind="stable")
    out.flags.writeable = False
    return out


def exam_loss(likely: np.ndarray, items: tuple) -> np.ndarray:
    """(modalities, sides, candidates, dermatomes) predicted loss 0..2 from an atlas' crisp exam `likely`."""
    a = anatomy()
    index = {k: i for i, k in enumerate(items)}
    rows = np.array([[[index[("sensory", m, s, d)] for d in a.dermatomes] for s in SIDES] for m in MODALITIES])
    return 2 - np.moveaxis(np.asarray(likely)[rows], 2, -1).astype(np.int64)


def atlas_stripes(at) -> tuple[np.ndarray, np.ndarray]:
    """Per candidate of an atlas, modality and side, the stripes of its predicted exam ((modalities, sides,
    candidates) int) and which candidates the rule binds ((candidates,) bool; see the module doc)."""
    loss = exam_loss(at.likely, at.items)
    pattern = at.pattern_of
    neuropathy = np.array([dict(v.params).get("neuropathy", 0.0) for v in at.variants])[at.variant]
    polyneuropathy = pattern == "polyneuropathy"
    bound = ~((neuropathy > 0) & ~polyneuropathy)
    stripes = extra_runs(loss)
    stripes[..., polyneuropathy] = extra_runs(loss[..., polyneuropathy, :][..., axon_order()])
    a = anatomy()
    lowest = np.array([max(a.dermatome_segments[d]) for d in a.dermatomes])
    order = axon_order(central=True)
    for i in np.flatnonzero((pattern == "posterolateral") & bound):
        passing = order[lowest[order] >= at.top[i]]  # dermatomes whose fibres run in the cord at the lesion's top
        stripes[..., i] = extra_runs(loss[..., i, passing])
    return np.where(bound, stripes, 0), bound


def striped(at) -> np.ndarray:
    """Indices of the candidates whose predicted exam has a stripe where the rule binds."""
    stripes, _ = atlas_stripes(at)
    return np.flatnonzero(stripes.sum(axis=(0, 1)) > 0)
