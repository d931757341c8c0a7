"""Course speed (issue 15: a course of 10 exams computed in under 0.5 s once the atlas is cached). Prints figures,
asserts nothing. Run: python benchmarks/bench_course.py

The course: 10 exams of a lesion that climbs and then recedes (simulated by the model at ten levels and three
patterns, so every exam is a full chart of about 300 items), plus two acute exams at the start (spinal shock), so
both atlases are used. Times `follow` (classify, leading hypothesis, changes, alarms) from a fresh `Course` value
each round (nothing cached on it), in its default mode and with a full ranking of each exam, and `Course.table`.
The machine is shared and noisy: medians and quartiles, each with its ratio to the target.
"""
from __future__ import annotations

import time

import numpy as np

from cordmap import atlas
from cordmap.course import Course
from cordmap.course_report import follow
from cordmap.lesions import Lesion
from cordmap.simulate import simulate

TARGET_S = 0.5
LEVELS = ("T11", "T10", "T9", "T8", "T7", "T6", "T7", "T8", "T9", "T10")
PATTERNS = ("anterior_compression", "lateral_compression", "hemisection")


def course_exams() -> list:
    exams = []
    for k, top in enumerate(LEVELS):
        phase = "acute" if k < 2 else "chronic"
        pattern = PATTERNS[k % len(PATTERNS)]
        side = "both" if pattern == "anterior_compression" else "left"
        exams.append((k * 12.0, simulate(Lesion(pattern, side, top, phase=phase))))
    return exams


def _times(fn, repeat: int) -> np.ndarray:
    out = []
    for _ in range(repeat):
        t0 = time.perf_counter()
        fn()
        out.append(time.perf_counter() - t0)
    return np.array(out)


def _line(name: str, s: np.ndarray) -> str:
    q1, med, q3 = np.percentile(s, [25, 50, 75])
    return (f"  {name:<46s} median {med:6.3f} s  (quartiles {q1:6.3f} .. {q3:6.3f}, n={len(s)})  "
            f"{med / TARGET_S:5.2f} x target")


def main():
    exams = course_exams()
    t0 = time.perf_counter()
    for phase in ("chronic", "acute"):
        atlas.get(phase)
    print(f"atlases loaded (built if not cached) in {time.perf_counter() - t0:.1f} s")
    follow(Course(exams))  # warm-up: first use of each atlas' derived arrays
    n_items = sum(len(f.items) for _, f in exams)
    print(f"course of {len(exams)} exams ({n_items} items in all)  [target < {TARGET_S:g} s]")
    print(_line("follow (classify, leader, changes, alarms)", _times(lambda: follow(Course(exams)), 15)))
    print(_line("follow, rank='full' (every exam fully ranked)", _times(lambda: follow(Course(exams), rank="full"),
                                                                      3)))
    print(_line("follow, rank='none' (classification only)", _times(lambda: follow(Course(exams), rank="none"),
                                                                   15)))
    print(_line("Course.table", _times(lambda: Course(exams).table, 15)))
    r = follow(Course(exams))
    print(f"alarms raised: {', '.join(a.rule for a in r.alarms)}")


if __name__ == "__main__":
    main()
