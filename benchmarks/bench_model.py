"""Model speed (issue 2 quality bars): prints figures, asserts nothing. Run: python benchmarks/bench_model.py

simulate() of one lesion, three ways:
  warm       the same lesion again
  new level  a lesion of a pattern variant already simulated at another level (new top/bottom, same masks)
  cold       a variant never seen (fresh parameter value): masks and fibre losses on all 31 segments
and the build of the cross-sections of all 31 segments. The machine is shared and noisy: medians and quartiles
over many calls, each figure with its ratio to the target.
"""
from __future__ import annotations

import time

import numpy as np

from cordmap import model
from cordmap.anatomy import anatomy
from cordmap.lesions import Lesion
from cordmap.simulate import simulate

SIMULATE_TARGET_MS = 5.0
BUILD_TARGET_S = 1.0

VARIANTS = (  # (pattern, side, params, levels as (top, bottom))
    ("hemisection", "left", {}, (("T6", "T6"), ("T6", "T7"), ("C5", "C6"), ("T10", "T12"), ("L1", "L1"))),
    ("central", "both", {"size": 0.4}, (("C5", "C5"), ("C4", "C7"), ("T2", "T4"), ("C6", "T1"), ("T8", "T8"))),
    ("lateral_compression", "right", {"depth": 0.33}, (("T4", "T5"), ("C6", "C6"), ("T9", "T10"), ("C3", "C5"),
                                                       ("T1", "T2"))),
    ("root", "left", {}, (("C6", "C6"), ("C7", "C7"), ("L5", "L5"), ("S1", "S1"), ("T4", "T4"))),
    ("cauda_equina", "right", {"contra": 0.5}, (("L2", "Co1"), ("L3", "Co1"), ("L4", "Co1"), ("S1", "Co1"),
                                                ("L1", "Co1"))),
)


def _times(calls, repeat: int) -> np.ndarray:
    """Wall time in ms of each call, `repeat` rounds over the list."""
    t = []
    for _ in range(repeat):
        for fn in calls:
            t0 = time.perf_counter()
            fn()
            t.append(time.perf_counter() - t0)
    return 1000 * np.array(t)


def _line(name: str, ms: np.ndarray, target: float = SIMULATE_TARGET_MS) -> str:
    q1, med, q3 = np.percentile(ms, [25, 50, 75])
    return (f"  {name:<44s} median {med:6.2f} ms  (quartiles {q1:6.2f} .. {q3:6.2f}, n={len(ms)})  "
            f"{med / target:5.2f} x target")


def main():
    sec0 = model.sections()[0]
    custom = np.hypot(sec0.x - 0.3, sec0.y + 0.1) < 0.45
    print(f"simulate() of one lesion  [target < {SIMULATE_TARGET_MS:g} ms]")

    # warm: the same lesion again (after three warm-up calls)
    warm = {}
    for pattern, side, params, levels in VARIANTS:
        lz = Lesion(pattern, side, *levels[0], params)
        for _ in range(3):
            simulate(lz)
        warm[lz.describe()] = _times([lambda lz=lz: simulate(lz)], 60)
    lz = Lesion.custom(custom, "T2", "T4")
    simulate(lz)
    warm["custom mask T2-T4 (never cached)"] = _times([lambda lz=lz: simulate(lz)], 20)
    for name, ms in warm.items():
        print(_line(f"warm, {name}", ms))
    named = np.concatenate([ms for name, ms in warm.items() if not name.startswith("custom")])
    print(_line("warm, all named patterns", named))

    # new level: variant seen at levels[0], each call a lesion at a level not simulated before
    fresh = []
    for pattern, side, params, levels in VARIANTS:
        simulate(Lesion(pattern, side, *levels[0], params))
        for phase in ("chronic", "acute"):
            fresh += [Lesion(pattern, side, top, bottom, params, phase) for top, bottom in levels[1:]]
    print(_line("new level of a pattern already seen", _times([lambda lz=lz: simulate(lz) for lz in fresh], 1)))

    # cold: a parameter value never seen, so masks and fibre losses are computed for all segments
    rng = np.random.default_rng()
    cold = [Lesion("lateral_compression", "left", "T4", "T5", {"depth": float(rng.uniform(0.05, 0.5))})
            for _ in range(15)]
    cold += [Lesion("central", "both", "C5", "C6", {"size": float(rng.uniform(0.1, 0.8))}) for _ in range(15)]
    print(_line("cold, a pattern variant never seen", _times([lambda lz=lz: simulate(lz) for lz in cold], 1)))

    builds = []
    for _ in range(3):
        t0 = time.perf_counter()
        for i in range(len(anatomy().segments)):
            model.build_section(i)
        builds.append(time.perf_counter() - t0)
    b = float(np.median(builds))
    print(f"model.build_section for all 31 segments: median {b:.3f} s of 3 (min {min(builds):.3f})  "
          f"{b / BUILD_TARGET_S:.2f} x target [target < {BUILD_TARGET_S:g} s]")


if __name__ == "__main__":
    main()
