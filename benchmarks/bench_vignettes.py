"""How the ranking does on textbook cases written outside the model (default: tests/vignettes).

    python benchmarks/bench_vignettes.py [FOLDER] [--misses]

Prints top-1 and top-3 hit rates, imaging-window agreement, two-lesion flags and single-lesion false alarms,
normal-exam verdicts, the Brier score of the leader's probability and a reliability table, overall and per
family; for the next tests (`cordmap.nexttests`), how many suggestions cannot be done at the bedside and in how
many cases the first one separates lesions managed differently (`separates_management`); with --misses, every
case the leader gets wrong. Point it at any folder of `cordmap-vignette/1` files (an outside corpus is measured
the same way).
"""
from __future__ import annotations

import sys
import time
from pathlib import Path

import pandas as pd

from cordmap.casebook import load_cases, per_family, reliability, results_table, score, summary
from cordmap.nexttests import feasible, separates_management
from cordmap.rank import rank

HERE = Path(__file__).resolve().parent


def main(argv: list[str]) -> int:
    args = [a for a in argv if not a.startswith("--")]
    folder = Path(args[0]) if args else HERE.parent / "tests" / "vignettes"
    cases = load_cases(folder)
    rank(cases[0].findings, next_tests=0, classify=False)  # load the atlases before timing
    rank(cases[0].findings.replace(phase="acute"), next_tests=0, classify=False)
    t0 = time.perf_counter()
    results = [score(c, rank(c.findings, top=5, next_tests=0, classify=False)) for c in cases]
    dt = (time.perf_counter() - t0) / len(cases)
    pd.set_option("display.width", 160)
    pd.set_option("display.max_colwidth", 60)
    if "--misses" in argv:
        t = results_table(results)
        bad = t[~t.top1 | (t.answer == "lesion") & (t.flagged | ~t.window.astype(bool))]
        print("cases the ranking gets wrong (leader, window or verdict):")
        print(bad[["case", "fit", "leader", "probability", "top1", "top3", "window"]].to_string(index=False))
        print()
    print(f"per family (single-lesion cases):\n{per_family(results).to_string()}\n")
    print(f"reliability (single-lesion cases; stated = mean leader probability, right = share correct):\n"
          f"{reliability(results).to_string()}\n")
    t0 = time.perf_counter()
    suggested, infeasible, separating, ranked = 0, 0, 0, 0
    for c in cases:
        r = rank(c.findings, top=5, next_tests=3, classify=False)
        suggested += len(r.next_tests)
        infeasible += sum(not feasible(t.item) for t in r.next_tests)
        if r.fit != "empty":
            ranked += 1
            separating += bool(r.next_tests) and separates_management(r.next_tests[0])
    dt_tests = (time.perf_counter() - t0) / len(cases)
    s = summary(results)
    print(f"{folder}: {s['cases']} cases ({s['single']} single lesions, {s['two_lesions']} two lesions, "
          f"{s['normal']} normal); rank() {dt * 1000:.0f} ms per case")
    print(f"top-1 {s.get('top1', 0):.1%}  top-3 {s.get('top3', 0):.1%}  imaging window {s.get('window', 0):.1%}  "
          f"Brier {s.get('brier', 0):.3f}")
    print(f"two-lesion flags {s.get('two_lesion_flags', 0):.1%}  single-lesion false alarms "
          f"{s.get('false_alarms', 0):.1%}  normal exams called normal {s.get('normal_called_normal', 0):.1%}")
    print(f"next tests (3 per case, rank() with them {dt_tests * 1000:.0f} ms per case): {suggested} suggested, "
          f"{infeasible} infeasible at the bedside; the first separates lesions managed differently in "
          f"{separating / max(ranked, 1):.1%} of {ranked} cases")
    return 0


if __name__ == "__main__":
    sys.exit(main(sys.argv[1:]))
