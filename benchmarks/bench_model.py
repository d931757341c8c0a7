"""Model speed (issue 3 support): prints figures, asserts nothing. Run: python benchmarks/bench_model.py"""
from __future__ import annotations

import time

import numpy as np

from cordmap import model
from cordmap.lesions import Lesion
from cordmap.simulate import simulate


def main():
    lz = Lesion("hemisection", "left", "T6", "T7")
    for _ in range(3):
        simulate(lz)
    t = []
    for _ in range(50):
        t0 = time.perf_counter()
        simulate(lz)
        t.append(time.perf_counter() - t0)
    print(f"simulate() median after warm-up: {1000 * np.median(t):.2f} ms   [target < 5 ms]")
    t0 = time.perf_counter()
    for i in range(31):
        model.build_section(i)
    print(f"model.build_section for 31 segments: {time.perf_counter() - t0:.3f} s   [target < 1 s]")


if __name__ == "__main__":
    main()
