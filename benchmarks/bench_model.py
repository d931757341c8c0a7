"""Model speed and shape (issues 2 and 11): prints figures, asserts nothing. Run: python benchmarks/bench_model.py

simulate() of one lesion, three ways:
  warm       the same lesion again
  new level  a lesion of a pattern variant already simulated at another level (new top/bottom, same masks)
  cold       a variant never seen (fresh parameter value): masks and fibre losses on all 31 segments
and the build of the cross-sections of all 31 segments; the atlas built cold (fresh process, empty cache: wall and
CPU time, median of three) and rank() on the demo case; the stripes of the whole atlas (`cordmap.stripes`: exams
whose sensory loss comes and goes down the body) and a figure of loss profiles along the body for a few lesions,
written to benchmarks/out/loss_profiles.png (--no-figure skips it). The machine is shared and noisy: medians and
quartiles over many calls, each figure with its ratio to the target.
"""
# ruff: noqa: E402  (numpy is imported after the BLAS thread setting)
from __future__ import annotations

import os
import subprocess
import sys
import tempfile
import time
from pathlib import Path

# One BLAS thread, as `import cordmap` sets when numpy is not loaded yet (cordmap/__init__.py): numpy loads
# here first, so without this the figures were of a multithreaded BLAS that users of cordmap never get.
os.environ.setdefault("OPENBLAS_NUM_THREADS", "1")
os.environ.setdefault("MKL_NUM_THREADS", "1")

import numpy as np

from cordmap import model
from cordmap.anatomy import anatomy
from cordmap.lesions import Lesion
from cordmap.simulate import simulate

SIMULATE_TARGET_MS = 5.0
BUILD_TARGET_S = 1.0
ATLAS_TARGET_S = 3.0
RANK_TARGET_MS = 20.0
OUT = Path(__file__).parent / "out"
# lesions whose loss profiles the figure draws: (pattern, side, top, bottom, params)
PROFILES = (
    ("central", "both", "C5", "T1", {"size": 0.5}),
    ("central", "both", "C3", "L5", {"size": 0.5}),
    ("posterior_compression", "both", "C5", "T1", {"depth": 0.25}),
    ("lateral_compression", "left", "C5", "C5", {"depth": 0.25, "severity": 0.25}),
    ("hemisection", "left", "T6", "T6", {}),
    ("anterior_compression", "both", "T6", "T6", {"depth": 0.42}),  # outer layers first: a level below the lesion
    ("posterolateral", "both", "T1", "T3", {"severity": 1.0, "neuropathy": 0.65}),
)

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


def atlas_cold(repeat: int = 3) -> tuple[np.ndarray, np.ndarray]:
    """Wall and CPU seconds of atlas.get("chronic") in a fresh process with an empty cache (imports not counted)."""
    code = ("import time; import cordmap.atlas as a; t = time.perf_counter(); c = time.process_time(); "
            "a.get('chronic'); print(time.perf_counter() - t, time.process_time() - c)")
    wall, cpu = [], []
    for _ in range(repeat):
        with tempfile.TemporaryDirectory() as tmp:
            env = {**os.environ, "CORDMAP_CACHE": tmp}
            out = subprocess.run([sys.executable, "-c", code], env=env, check=True, capture_output=True, text=True)
            w, c = map(float, out.stdout.split())
            wall.append(w)
            cpu.append(c)
    return np.array(wall), np.array(cpu)


def rank_ms(n: int = 30) -> np.ndarray:
    from cordmap.demo import case
    from cordmap.rank import rank

    f = case()
    for _ in range(3):
        rank(f, top=10)
    return _times([lambda: rank(f, top=10)], n)


def stripe_report() -> None:
    from cordmap import atlas, stripes
    from cordmap.anatomy import MODALITIES

    at = atlas.get("chronic")
    s, bound = stripes.atlas_stripes(at)
    bad = s.sum(axis=(0, 1)) > 0
    print(f"stripes: {int(bad.sum())} striped exams of {int(bound.sum())} the rule binds ({len(at)} candidates; "
          f"{int((~bound).sum())} neuropathy unions counted by their parts)  [target 0]")
    for m, name in enumerate(MODALITIES):
        print(f"  {name:<15s} {int((s[m].sum(axis=0) > 0).sum()):6d} exams striped")
    pats, counts = np.unique(at.pattern_of[bad], return_counts=True)
    print("  by pattern: " + ", ".join(f"{p} {c}" for p, c in sorted(zip(pats, counts), key=lambda x: -x[1])))


def profile_figure(path: Path) -> None:
    """Loss fraction (pinprick, vibration; left and right) along the dermatomes for PROFILES, grades' bounds drawn."""
    from matplotlib.backends.backend_agg import FigureCanvasAgg
    from matplotlib.figure import Figure

    from cordmap.forward import SENSORY_THRESHOLDS
    from cordmap.simulate import predict

    derm = anatomy().dermatomes
    fig = Figure(figsize=(11, 2.1 * len(PROFILES)), layout="constrained")
    FigureCanvasAgg(fig)
    axes = fig.subplots(len(PROFILES), 1, sharex=True)
    for ax, (pattern, side, top, bottom, params) in zip(axes, PROFILES):
        lz = Lesion(pattern, side, top, bottom, params)
        r = predict(lz)
        for mi, name, colour in ((0, "pinprick", "tab:red"), (3, "vibration", "tab:blue")):
            for sd, style in ((0, "-"), (1, "--")):
                ax.plot(r.sensory[0, mi, sd], style, color=colour, marker=".", lw=1.2,
                        label=f"{name} {'left' if sd == 0 else 'right'}")
        for t in SENSORY_THRESHOLDS:
            ax.axhline(t, color="grey", lw=0.7, ls=":")
        ax.set_ylim(-0.03, 1.03)
        ax.set_ylabel("share lost")
        ax.set_title(lz.describe(), fontsize=9, loc="left")
    axes[0].legend(fontsize=7, ncol=4, loc="upper right")
    axes[-1].set_xticks(range(len(derm)), derm, rotation=90, fontsize=7)
    fig.suptitle("Predicted sensory loss along the body (dotted: grade bounds impaired / absent)", fontsize=10)
    path.parent.mkdir(parents=True, exist_ok=True)
    fig.savefig(path, dpi=90)
    print(f"figure: {path}")


def timing_report() -> None:
    wall, cpu = atlas_cold()
    print(f"atlas cold build (fresh process, empty cache): median {np.median(wall):.2f} s wall "
          f"(CPU {np.median(cpu):.2f} s; {len(wall)} runs)  {np.median(wall) / ATLAS_TARGET_S:.2f} x target "
          f"[target < {ATLAS_TARGET_S:g} s]")
    print(_line("rank() of the demo case", rank_ms(), RANK_TARGET_MS) + f"  [target < {RANK_TARGET_MS:g} ms]")


if __name__ == "__main__":
    main()
    timing_report()
    stripe_report()
    if "--no-figure" not in sys.argv:
        profile_figure(OUT / "loss_profiles.png")
