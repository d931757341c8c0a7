"""Ranker quality bars (issue 3): prints figures, asserts nothing. Run: python benchmarks/bench_rank.py"""
# ruff: noqa: E402  (numpy is imported after the BLAS thread setting)
from __future__ import annotations

import os
import subprocess
import sys
import tempfile
import time

# One BLAS thread, as `import cordmap` sets when numpy is not loaded yet (cordmap/__init__.py): numpy loads
# here first, so without this the figures were of a multithreaded BLAS that users of cordmap never get.
os.environ.setdefault("OPENBLAS_NUM_THREADS", "1")
os.environ.setdefault("MKL_NUM_THREADS", "1")

import numpy as np

from cordmap import atlas as atlas_mod
from cordmap.demo import case
from cordmap.findings import Findings, item_values
from cordmap.rank import observed_columns, rank, size_prior


def median_ms(fn, n=50, warm=3):
    for _ in range(warm):
        fn()
    t = []
    for _ in range(n):
        t0 = time.perf_counter()
        fn()
        t.append(time.perf_counter() - t0)
    return 1000 * float(np.median(t))


def cold_and_cached_build() -> tuple[float, float]:
    code = ("import time; import cordmap.atlas as a; t = time.perf_counter(); a.get('chronic'); "
            "print(time.perf_counter() - t)")  # after importing cordmap (numpy, pandas), which is not the atlas
    with tempfile.TemporaryDirectory() as tmp:
        env = {**os.environ, "CORDMAP_CACHE": tmp}
        subprocess.run([sys.executable, "-c", "import cordmap.atlas"], env=env, check=True)  # warm imports/bytecode
        cold = float(subprocess.run([sys.executable, "-c", code], env=env, check=True, capture_output=True,
                                    text=True).stdout)
        cached = float(subprocess.run([sys.executable, "-c", code], env=env, check=True, capture_output=True,
                                      text=True).stdout)
    return cold, cached


def main():
    at = atlas_mod.get("chronic")
    f = case()
    cols, _ = observed_columns(f, at)
    prior = size_prior(at)
    x = np.zeros(at.logp.shape[0], dtype=np.float32)
    x[cols] = 1.0

    def score():
        ll = at.logp[cols].sum(axis=0, dtype=np.float32) + prior
        e = np.exp(ll - ll.max())
        p = e / e.sum()
        top = np.argpartition(-p, 10)[:10]
        return top[np.argsort(-p[top])]

    def matvec():
        return x @ at.logp

    s, m = median_ms(score, 200), median_ms(matvec, 200)
    print(f"atlas: {len(at)} candidates, logp {at.logp.shape} float32 ({at.logp.nbytes / 1e6:.0f} MB)")
    print(f"scoring (gather+sum+softmax+top-10): {s:.2f} ms median   [target < 20 ms]")
    print(f"mat-vec over logp (same run):        {m:.2f} ms median")
    print(f"ratio scoring / mat-vec:             {s / m:.2f}x   [target <= 3x]")
    print(f"full rank() on the demo case:        {median_ms(lambda: rank(f, top=10), 20):.1f} ms median")
    bare = median_ms(lambda: rank(f, top=10, classify=False), 20)
    print(f"rank() without classification:       {bare:.1f} ms median")
    cold, cached = cold_and_cached_build()
    print(f"atlas build, cold (empty cache, fresh process):  {cold:.2f} s   [target < 3 s]")
    print(f"atlas load, disk cache (fresh process):          {cached:.2f} s   [target < 0.3 s]")
    rng = np.random.default_rng(0)
    idx = rng.choice(len(at), 2000, replace=False)
    exams = []
    for i in idx:
        items = {}
        for k, key in enumerate(at.items):
            lp = at.logp[at.offsets[k]:at.offsets[k + 1], i]
            items[key] = item_values(key)[int(lp.argmax())]
        exams.append(Findings(items))
    from cordmap.rank import batch_scores
    batch_scores(exams[:50], at)
    t0 = time.perf_counter()
    batch_scores(exams, at)
    dt = time.perf_counter() - t0
    print(f"batch_scores, {len(exams)} full simulated exams: {dt:.2f} s = {len(exams) / dt:.0f} cases/s"
          "   [target >= 1000]")
    import json
    import re

    with tempfile.TemporaryDirectory() as tmp:
        src, out = os.path.join(tmp, "cohort.jsonl"), os.path.join(tmp, "out.csv")
        with open(src, "w") as fh:
            for n, f in enumerate(exams):
                fh.write(json.dumps({**f.to_dict(), "case_id": f"c{n}"}) + "\n")
        t0 = time.perf_counter()
        r = subprocess.run([sys.executable, "-m", "cordmap", "batch", src, "-o", out], capture_output=True, text=True)
        wall = time.perf_counter() - t0
        m = re.search(r"(\d+) cases: \d+ ranked, \d+ failed, in ([\d.]+) s", r.stderr)
        if m:
            inner = float(m.group(2))
            print(f"cordmap batch, {m.group(1)} cases: ranking {inner:.2f} s = {int(m.group(1)) / inner:.0f} cases/s; "
                  f"whole command with reading and start-up {wall:.2f} s")
        else:
            print("cordmap batch failed:", r.stderr[-300:])


if __name__ == "__main__":
    main()
